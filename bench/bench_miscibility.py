"""How well does the prediction do without the table?

For every measured pair of tables/miscibility.csv, the model's verdict
(:func:`solvsel.science.miscibility.predict_pair`, which never looks at the table:
UNIFAC from the structures, else Flory-Huggins from HSP; and Flory-Huggins alone
as the baseline) is compared with the measurement: the share predicted right as miscible in all
proportions vs not, by group (pairs with water, other pairs), the confusion
counts, and for partial pairs with tabulated solubilities the log10 error of
the predicted mutual solubilities.  Then the speed of the pair matrix and of
the array screen of 490,000 candidate blends.  Prints numbers; not a test.

:func:`choose_model_order` is the procedure that set
``solvsel.science.miscibility.UNIFAC_ORDER`` (which UNIFAC parameter sets, in
which order) and :func:`choose_immiscible_level` the one that set
``solvsel.science.miscibility.IMMISCIBLE_BELOW_WT`` (the level under which
both predicted mutual solubilities make a decisive "no"): it uses the
measured table only, never the published chart that
``bench/published_miscibility.py`` scores against.
"""

from __future__ import annotations

import argparse
import math
import os
import sys
import tempfile
import time
from itertools import permutations
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from solvsel.science import miscibility as M  # noqa: E402
from solvsel.data.catalog import load_catalog  # noqa: E402


#: Levels tried for the decisive "no" [wt %], and the rule: the share of the table's pairs
#: measured "none" or "partial" whose predicted verdict ("no" when both predicted mutual
#: solubilities are below the level) matches, no pair measured "full" answered "no", ties to
#: the lowest level.
LEVELS_WT = (0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 3.5, 4.0, 5.0)


def choose_immiscible_level(cat=None, levels=LEVELS_WT) -> tuple[float, list[tuple[float, float, int]]]:
    """The decisive-"no" level chosen on tables/miscibility.csv, and ``(level, share right, full answered no)``
    for every level tried.

    Each measured pair is predicted by :func:`solvsel.science.miscibility.predict_pair` at the
    row's temperature (no table look-up); a pair predicted to split with a window has
    ``max(b_in_a, a_in_b)`` as its larger predicted solubility [mass fraction].
    """
    cat = cat or load_catalog()
    larger = []
    for row in cat.table("miscibility").to_dict("records"):
        a, b = cat.solvent(row["liquid_a"]), cat.solvent(row["liquid_b"])
        w = M.predict_pair(a, b, float(row["temp_C"])).window or {}
        top = max(w["b_in_a_max"], w["a_in_b_max"]) if w.get("b_in_a_max") is not None else math.inf
        larger.append((row["one_phase"], top))
    scores = []
    split = [(m, top) for m, top in larger if m != "full"]
    for level in levels:
        right = sum((m == "none") == (top * 100.0 < level) for m, top in split) / len(split)
        full_no = sum(top * 100.0 < level for m, top in larger if m == "full")
        scores.append((level, right, full_no))
    allowed = [s for s in scores if s[2] == 0]
    best = max(allowed, key=lambda s: (s[1], -s[0]))
    return best[0], scores


#: Orders of the UNIFAC parameter sets tried by :func:`choose_model_order` (each set alone, then every
#: order of the three).
MODEL_ORDERS = (("lle",), ("original",), ("dortmund",)) + tuple(permutations(("lle", "original", "dortmund")))


def _table_pairs(cat):
    """(measured one_phase, liquid a, liquid b, temperature [C]) of every row of tables/miscibility.csv."""
    return [(row["one_phase"], cat.solvent(row["liquid_a"]), cat.solvent(row["liquid_b"]), float(row["temp_C"]))
            for row in cat.table("miscibility").to_dict("records")]


def table_agreement(cat, models: tuple[str, ...]) -> tuple[float, int]:
    """Share of the measured pairs whose prediction alone (:func:`predict_pair` with ``models``, no
    table look-up) says "miscible in all proportions" exactly when the table does, and how many
    pairs UNIFAC answered."""
    rows = _table_pairs(cat)
    said = [M.predict_pair(a, b, t, models=models) for _, a, b, t in rows]
    right = sum((m == "full") == (v.one_phase == "yes") for (m, *_), v in zip(rows, said))
    return right / len(rows), sum(v.model != M.FLORY_HUGGINS for v in said)


def choose_model_order(cat=None, orders=MODEL_ORDERS) -> tuple[tuple[str, ...], list]:
    """The order of UNIFAC parameter sets chosen on tables/miscibility.csv, and ``(order, share right,
    pairs by UNIFAC)`` for every order tried, with Flory-Huggins from HSP alone (order ``()``) as the
    baseline.

    The rule: the best :func:`table_agreement`; between equals, the order that answers more pairs by
    UNIFAC (fewer left to Flory-Huggins from HSP, which knows no hydrogen bonds); then the first of
    ``orders``.  The published chart is never looked at."""
    cat = cat or load_catalog()
    scores = [(order, *table_agreement(cat, order)) for order in ((),) + tuple(orders)]
    best = max(scores[1:], key=lambda s: (s[1], s[2]))  # max keeps the first of equals
    return best[0], scores


def _measured(v) -> float | None:
    return None if v is None or (isinstance(v, float) and math.isnan(v)) else float(v)


def table_report(cat, models: tuple[str, ...], title: str) -> dict:
    """Print how the prediction alone (:func:`predict_pair` with ``models``) does on the measured
    table: "miscible in all proportions or not" by group, the confusion counts, and the log10 error
    of the predicted mutual solubilities of partial pairs with tabulated values.  Returns the
    chart's scores (accuracy, immiscible found, decisive "no" counts) on the table, "partial" and
    "none" both counted immiscible."""
    groups = {"with water": [], "without water": []}
    sol_err, confusion, truth, said = [], {}, [], []
    for row in cat.table("miscibility").to_dict("records"):
        a, b = cat.solvent(row["liquid_a"]), cat.solvent(row["liquid_b"])
        pred = M.predict_pair(a, b, float(row["temp_C"]), models=models)
        truth.append(row["one_phase"] == "full")
        said.append(pred.one_phase)
        key = "with water" if "water" in (a.name, b.name) else "without water"
        groups[key].append(truth[-1] == (pred.one_phase == "yes"))
        confusion[(row["one_phase"], pred.one_phase)] = confusion.get((row["one_phase"], pred.one_phase), 0) + 1
        if row["one_phase"] == "partial" and pred.window:
            for col, k in (("b_in_a_wt", "b_in_a_max"), ("a_in_b_wt", "a_in_b_max")):
                v = _measured(row.get(col))
                if v and pred.window.get(k):
                    sol_err.append(math.log10(pred.window[k] * 100.0 / v))
    total = groups["with water"] + groups["without water"]
    print(f"{title} against {len(total)} measured pairs (miscible in all proportions vs not)")
    for k, v in groups.items():
        print(f"  {k:14s}: {sum(v):3d} / {len(v):3d} right = {100 * sum(v) / len(v):5.1f} %")
    print(f"  {'all':14s}: {sum(total):3d} / {len(total):3d} right = {100 * sum(total) / len(total):5.1f} %")
    print("  confusion (measured -> predicted): " + ", ".join(f"{m} -> {p}: {n}" for (m, p), n in sorted(confusion.items())))
    if sol_err:
        e = np.array(sol_err)
        print(f"  partial pairs, predicted mutual solubility: {len(e)} values, mean log10 error {e.mean():+.2f}, "
              f"RMS {math.sqrt(np.mean(e ** 2)):.2f} decades")
    imm = [x for t, x in zip(truth, said) if not t]
    return {"accuracy": sum(t == (x == "yes") for t, x in zip(truth, said)) / len(truth),
            "always_miscible": sum(truth) / len(truth), "immiscible_found": sum(x != "yes" for x in imm) / len(imm),
            "answered_no": said.count("no"), "miscible_answered_no": sum(x == "no" for t, x in zip(truth, said) if t)}


def _time_matrices(cat, names, quick: bool) -> None:
    """Time a pair matrix computed with nothing kept (UNIFAC solved for every pair) and with the
    UNIFAC answers kept in the cache folder (a new process whose matrix file is not there yet)."""
    if quick:
        return
    recs = [cat.solvent(n) for n in names]
    pairs = len(names) * (len(names) - 1) // 2
    with tempfile.TemporaryDirectory() as folder:
        os.environ["SOLVSEL_CACHE_DIR"] = folder
        for label in ("nothing kept (every UNIFAC pair solved)", "UNIFAC answers kept in the cache folder"):
            M._DISK_PAIRS.clear()
            t = time.perf_counter()
            M._compute_matrix(cat, recs, 25.0)
            print(f"pair matrix of all {len(names)} liquids ({pairs} pairs), {label}: {time.perf_counter() - t:.2f} s")
    del os.environ["SOLVSEL_CACHE_DIR"]
    M._DISK_PAIRS.clear()


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="skip the full 74-liquid matrix timing")
    args = ap.parse_args()
    cat = load_catalog()
    order, orders = choose_model_order(cat)
    print("Order of the UNIFAC parameter sets, chosen on the measured table (miscible in all proportions or not):")
    for o, right, n in orders:
        print(f"  {' > '.join(o) or 'none (Flory-Huggins from HSP alone)':28s}: {100 * right:5.1f} % right, "
              f"{n} pairs by UNIFAC")
    print(f"  chosen: {' > '.join(order)} (in use: {' > '.join(M.UNIFAC_ORDER)})")
    level, scores = choose_immiscible_level(cat)
    print("Decisive 'no' level, chosen on the measured table (pairs measured none or partial):")
    for lv, right, full_no in scores:
        print(f"  both predicted solubilities below {lv:3.1f} wt %: {100 * right:5.1f} % right, "
              f"{full_no} miscible pairs answered 'no'")
    print(f"  chosen: {level:g} wt % (in use: {M.IMMISCIBLE_BELOW_WT:g} wt %)")
    for models, title in ((M.UNIFAC_ORDER, "The prediction (UNIFAC, else Flory-Huggins from HSP)"),
                          ((), "Baseline: Flory-Huggins from HSP alone")):
        f = table_report(cat, models, title)
        print(f"  as scored on the chart: accuracy {f['accuracy']:.3f} (always miscible {f['always_miscible']:.3f}), "
              f"immiscible found {f['immiscible_found']:.3f}, decisive 'no' {f['answered_no']} "
              f"({f['miscible_answered_no']} of them measured miscible)")

    names = [s.name for s in cat.solvent_records()]
    pool = names[:20]
    t = time.perf_counter()
    m20 = M.pair_matrix(cat, pool)
    print(f"pair matrix of 20 liquids (190 pairs): {time.perf_counter() - t:.3f} s")
    _time_matrices(cat, names, args.quick)
    rng = np.random.default_rng(0)
    idx = np.stack([rng.choice(20, 3, replace=False) for _ in range(490_000)])
    frac = rng.dirichlet([1, 1, 1], size=490_000)
    best = 1e9
    for _ in range(3):
        t = time.perf_counter()
        ok = m20.screen(idx, frac)
        best = min(best, time.perf_counter() - t)
    print(f"screen of 490,000 three-liquid blends: {1e3 * best:.0f} ms ({100 * ok.mean():.1f} % pass the pairwise test)")


if __name__ == "__main__":
    main()
