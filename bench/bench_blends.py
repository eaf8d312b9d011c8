"""Benchmark of the blend optimiser's exact search (solvsel.science.blends.search_blends).

Prints:
1. all blends of up to 3 and up to 4 liquids from a 60-liquid pool (goals:
   under 0.5 s and under 5 s);
2. the same search side by side with scipy SLSQP per combination (several
   starts), with the per-combination speed ratio (goal: at least 50x) and the
   largest difference in Ra between the two optima;
3. a table of time against pool size (20, 40, 80, 120) and blend size (2, 3, 4);
4. the whole ``blend`` job (solvsel.jobs.blend) on the bundled table.

The pools are random liquids spread over the range of food and bench solvents
(dD 14-20, dP 0-20, dH 0-42 MPa^0.5) with a fixed seed, so runs compare.

Usage: python bench/bench_blends.py [--quick]
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from math import comb

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))

from solvsel.science.blends import best_fractions, combinations_array, search_blends  # noqa: E402

TARGET = np.array([17.0, 6.0, 10.0])


def pool(m, seed=2026):
    rng = np.random.default_rng(seed)
    return np.column_stack([rng.uniform(14, 20, m), rng.uniform(0, 20, m), rng.uniform(0, 42, m)])


def timed(fn, repeat=3):
    best = np.inf
    out = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def run_search(H, k_max, sizes=None):
    n = 0
    best = np.inf
    for _, combos, res in search_blends(H, TARGET, k_max, sizes=sizes):
        n += combos.shape[0]
        best = min(best, float(res.ra.min()))
    return n, best


def slsqp_one(P, t, starts, rng):
    from scipy.optimize import minimize

    k = len(P)
    S = P * [2.0, 1.0, 1.0]
    ts = t * [2.0, 1.0, 1.0]

    def f(x):
        d = x @ S - ts
        return d @ d

    def jac(x):
        return 2 * S @ (x @ S - ts)

    best = np.inf
    for _ in range(starts):
        r = minimize(f, rng.dirichlet(np.ones(k)), jac=jac, method="SLSQP", bounds=[(0, 1)] * k,
                     constraints=[{"type": "eq", "fun": lambda x: x.sum() - 1, "jac": lambda x: np.ones(k)}],
                     options={"ftol": 1e-15, "maxiter": 500})
        x = np.clip(r.x, 0, 1)
        x /= x.sum()
        best = min(best, float(np.sqrt(max(f(x), 0.0))))
    return best


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="smaller SLSQP sample and no 120-liquid 4-blends")
    args = ap.parse_args(argv)
    repeat = 1 if args.quick else 3

    print("1. Exact search, 60-liquid pool")
    H = pool(60)
    for k_max, goal in ((3, 0.5), (4, 5.0)):
        t, (n, best) = timed(lambda: run_search(H, k_max), repeat)
        print(f"   up to {k_max} liquids: {n:>7} combinations in {t:6.3f} s "
              f"({1e6 * t / n:5.2f} us each; goal {goal} s: {'met' if t < goal else 'NOT met'})")

    print("\n2. Side by side with scipy SLSQP (3 starts per combination), 60-liquid pool")
    rng = np.random.default_rng(1)
    sample = 300 if args.quick else 2000
    for k in (2, 3, 4):
        combos = combinations_array(60, k)
        pick = combos[rng.choice(len(combos), size=min(sample, len(combos)), replace=False)]
        P = H[pick]
        t_ours, res = timed(lambda: best_fractions(P, TARGET), repeat)
        t0 = time.perf_counter()
        ref = np.array([slsqp_one(p, TARGET, 3, rng) for p in P])
        t_ref = time.perf_counter() - t0
        # per-combination cost of the full vectorised search (what a user runs)
        t_full, _ = timed(lambda: run_search(H, k, sizes=[k]), 1)
        per_full = t_full / comb(60, k)
        per_ref = t_ref / len(P)
        diff = float(np.max(np.abs(res.ra - ref)))
        print(f"   {k} liquids: SLSQP {1e3 * per_ref:7.3f} ms/combination, ours {1e6 * per_full:6.2f} us "
              f"(full search of {comb(60, k)}): {per_ref / per_full:8.0f}x faster; "
              f"largest |Ra difference| over {len(P)} combinations {diff:.1e} MPa^0.5")
        est = per_ref * comb(60, k)
        print(f"      the whole {k}-liquid search with SLSQP would take about {est:,.0f} s, ours {t_full:.3f} s")

    print("\n3. Time [s] of all blends of exactly k liquids, by pool size")
    sizes = (20, 40, 80, 120)
    print("   pool   k=2 (n)            k=3 (n)               k=4 (n)")
    for m in sizes:
        Hm = pool(m, seed=m)
        cells = []
        for k in (2, 3, 4):
            if args.quick and m == 120 and k == 4:
                cells.append(f"{'skipped':>9} ({comb(m, k):>9})")
                continue
            t, _ = timed(lambda: run_search(Hm, k, sizes=[k]), 1 if comb(m, k) > 1e6 else repeat)
            cells.append(f"{t:9.4f} ({comb(m, k):>9})")
        print(f"   {m:>4}  " + "  ".join(cells))

    print("\n4. Whole blend search on the bundled table (every check: one-phase screen, hazard, food law)")
    from solvsel.data.catalog import load_catalog
    from solvsel.jobs.blend import blend

    cat = load_catalog()
    blend(hsp=(17.8, 3.9, 9.9), max_components=2, catalog=cat)  # warm the pair-matrix cache
    for k_max in (3, 4):
        t, res = timed(lambda: blend(hsp=(17.8, 3.9, 9.9), max_components=k_max, catalog=cat), 1 if args.quick else 3)
        print(f"   {res.counts['liquids']} liquids, up to {k_max}: {res.counts['combinations']:>8} combinations "
              f"in {t:.3f} s")


if __name__ == "__main__":
    main()
