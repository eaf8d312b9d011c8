"""Run every benchmark of bench/ one after the other and print their figures.

    .venv/bin/python bench/run_all.py           # full runs (several minutes)
    .venv/bin/python bench/run_all.py --quick   # smaller runs

Each benchmark prints its numbers and the ratios to the project's goals; the
README quotes them.  Benchmarks are never part of the test suite.
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent


def main(argv: list[str]) -> int:
    quick = "--quick" in argv
    status = 0
    for script in sorted(HERE.glob("bench_*.py")):
        print(f"\n{'=' * 78}\n{script.name}{' --quick' if quick else ''}\n{'=' * 78}", flush=True)
        t0 = time.perf_counter()
        rc = subprocess.call([sys.executable, str(script)] + (["--quick"] if quick else []))
        print(f"[{script.name}: exit {rc}, {time.perf_counter() - t0:.1f} s]", flush=True)
        status = status or rc
    return status


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
