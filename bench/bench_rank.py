"""Ranking speed: many targets against many solvents, and the cold starts of `solvsel rank`, `blend`
and `fit`.

Prints numbers and ratios; not a test.  ``--quick`` runs fewer repeats.
Targets: 10,000 random HSP points in dD 14-21, dP 0-20, dH 0-25; solvents: 200
points drawn the same way (the bundled table has fewer liquids).

Cold starts: each command in a new interpreter, process start to answer, best and median wall time
and processor time (user + system: on a shared machine the wall time also counts the waiting), with
the goal and the figures of the version before (measured on this machine, quoted).  The bytecode of
the package is kept in a temporary folder (as an installed copy keeps it), and the cache folder
(pair matrix, the reference library's exposure limits) is filled by a first run, as any first run
does; the blend and the fit are also timed in an empty cache folder.  The import time of the heavy
libraries each command loads (``python -X importtime``) shows what is left on its path.

``--before DIR`` also times a checkout of an earlier version (``git worktree add DIR <commit>``, or an
unpacked ``git archive <commit>``) in the same run, each of its cold starts right after this
version's (a cache folder of its own), so that the two are measured at the same load.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from _cold import cold_env, import_ms  # noqa: E402

from solvsel.science import hansen  # noqa: E402

BENCH = str(ROOT / "tests" / "data" / "bench_c60_memory.csv")

#: (label, argv, goal [s], the version before: wall best-median [s] on this machine, 2 cores)
COLD = [
    ("rank --help", ["rank", "--help"], 1.0, "0.31-0.35 s"),
    ("rank --hsp 17,3,8,8 --top 5", ["rank", "--hsp", "17,3,8,8", "--top", "5"], 0.5, "0.63-0.75 s (README 0.89 s)"),
    ("rank --solute vanillin --food", ["rank", "--solute", "vanillin", "--food"], 1.0, "0.87-1.00 s"),
    ("blend --max-components 4 (all liquids)", ["blend", "--hsp", "17.8,3.9,9.9", "--max-components", "4", "--json"],
     0.5, "0.61-0.62 s (1.32-1.35 s two versions back)"),
    ("fit (40 liquids, bench file)", ["fit", BENCH, "--good-at-most", "2", "--json"], 0.5,
     "0.52-0.53 s (0.92-1.02 s two versions back)"),
]
#: Libraries whose import time is shown.
HEAVY = ("numpy", "pandas", "scipy.optimize", "chemicals")


def best_of(fn, repeats):
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times), statistics.median(times)


def run_cold(argv, env, root: Path = ROOT) -> tuple[float, float]:
    """Wall and processor time [s] of ``solvsel ARGV`` in a new interpreter (the package of the checkout
    ``root``)."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t = time.perf_counter()
    subprocess.run([sys.executable, "-m", "solvsel", *argv], cwd=root, check=True, capture_output=True, env=env)
    wall = time.perf_counter() - t
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def cold_starts(repeat: int, earlier: Path | None = None) -> None:
    with tempfile.TemporaryDirectory() as pyc, tempfile.TemporaryDirectory() as cache, \
            tempfile.TemporaryDirectory() as cache_before:
        env = cold_env(pyc, SOLVSEL_CACHE_DIR=cache)
        env_before = {**env, "SOLVSEL_CACHE_DIR": cache_before}
        print(f"cold starts (new interpreter, best / median of {repeat}; load average "
              f"{', '.join(f'{x:.1f}' for x in os.getloadavg())})")
        for label, argv, goal, before in COLD:
            run_cold(argv, env)  # writes the bytecode and fills the cache folder, as a first run does
            if earlier is not None:
                run_cold(argv, env_before, earlier)
            runs, runs_before = [], []
            for _ in range(repeat):
                runs.append(run_cold(argv, env))
                if earlier is not None:
                    runs_before.append(run_cold(argv, env_before, earlier))
            wall, cpu = [r[0] for r in runs], [r[1] for r in runs]
            met = "met" if min(wall) < goal else "not met"
            imports = ", ".join(f"{k} {v:.0f} ms" for k, v in import_ms(argv, HEAVY, env).items())
            print(f"  {label:40s}: wall {min(wall):5.2f} s / {statistics.median(wall):5.2f} s, processor "
                  f"{min(cpu):5.2f} s / {statistics.median(cpu):5.2f} s   (goal < {goal:g} s: {met}; before: {before})")
            if runs_before:
                wall_b = [r[0] for r in runs_before]
                print(f"  {'':40s}  the earlier checkout, same run: wall {min(wall_b):5.2f} s / "
                      f"{statistics.median(wall_b):5.2f} s")
            print(f"  {'':40s}  imports: {imports or 'none of ' + ', '.join(HEAVY)}")
        for label, argv, _, _ in COLD[3:]:
            walls = []
            for _ in range(max(1, repeat // 2)):
                with tempfile.TemporaryDirectory() as empty:
                    walls.append(run_cold(argv, {**env, "SOLVSEL_CACHE_DIR": empty})[0])
            print(f"  {label:40s}: {min(walls):5.2f} s in an empty cache folder (its first run)")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="fewer repeats")
    ap.add_argument("--before", type=Path, metavar="DIR",
                    help="a checkout of an earlier version whose cold starts are timed in the same run")
    args = ap.parse_args()
    if args.before is not None and not (args.before / "solvsel" / "__main__.py").is_file():
        ap.error(f"--before: {args.before} is not a checkout of solvsel")
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
    cold_starts(2 if args.quick else 5, args.before)


if __name__ == "__main__":
    main()
