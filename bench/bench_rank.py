"""Ranking speed: many targets against many solvents, and the cold start of `solvsel rank`.

Prints numbers and ratios; not a test.  ``--quick`` runs fewer repeats.
Targets: 10,000 random HSP points in dD 14-21, dP 0-20, dH 0-25; solvents: 200
points drawn the same way (the bundled table has fewer liquids).
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from solvsel.science import hansen  # noqa: E402


def best_of(fn, repeats):
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times), statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="fewer repeats")
    args = ap.parse_args()
    rep = 3 if args.quick else 15
    rng = np.random.default_rng(0)
    lo, hi = [14, 0, 0], [21, 20, 25]
    targets = rng.uniform(lo, hi, size=(10_000, 3))
    solvents = rng.uniform(lo, hi, size=(200, 3))
    r0 = rng.uniform(4, 12, size=10_000)

    # correctness against the plain broadcast formula before timing
    ref = hansen.ra(targets[:, None, :], solvents[None, :, :])
    assert np.allclose(hansen.ra_matrix(targets, solvents), ref, atol=1e-9)

    t_full, m_full = best_of(lambda: hansen.rank_order(targets, solvents, r0), rep)
    t_k, m_k = best_of(lambda: hansen.rank_order(targets, solvents, r0, k=10), rep)
    t_b, m_b = best_of(lambda: np.argsort(hansen.ra(targets[:, None, :], solvents[None, :, :]), axis=1), rep)
    print("ranking 10,000 targets x 200 solvents (best / median of %d)" % rep)
    print(f"  full order, RED        : {1e3 * t_full:7.1f} ms / {1e3 * m_full:7.1f} ms   (goal < 50 ms)")
    print(f"  best 10 per target     : {1e3 * t_k:7.1f} ms / {1e3 * m_k:7.1f} ms")
    print(f"  naive broadcast+argsort: {1e3 * t_b:7.1f} ms / {1e3 * m_b:7.1f} ms   (ratio {t_b / t_full:.2f}x)")

    # cold start of the command, in a fresh interpreter each time
    cmds = {
        "solvsel rank --help": [sys.executable, "-m", "solvsel", "rank", "--help"],
        "solvsel rank --hsp 17,3,8,8 --top 5": [sys.executable, "-m", "solvsel", "rank", "--hsp", "17,3,8,8", "--top", "5"],
        "solvsel rank --solute vanillin --food": [sys.executable, "-m", "solvsel", "rank", "--solute", "vanillin", "--food"],
    }
    print("cold start (fresh process, best / median of %d)" % (2 if args.quick else 5))
    for label, cmd in cmds.items():
        def once():
            subprocess.run(cmd, cwd=ROOT, check=True, capture_output=True)
        t, m = best_of(once, 2 if args.quick else 5)
        print(f"  {label:40s}: {t:5.2f} s / {m:5.2f} s   (goal < 1 s)")


if __name__ == "__main__":
    main()
