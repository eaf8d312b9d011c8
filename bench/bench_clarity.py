"""Timing of the clarity check (prints numbers; not a test).

    python bench/bench_clarity.py [--quick]

A 10-component citrus flavour (ethanol, water and eight oil-soluble components, given as a formula CSV with
CAS numbers) dosed through a syrup into a drink: the whole ``clarity`` job (formula read, levels along the
chain, co-solvent fractions, the log-linear solubility, verdicts, largest clear dose and the ways out).
Goal: under 50 ms a check, the tables loaded (issue "will the drink stay clear", performance).  The first
call, which loads the reference library's log P data, is shown apart.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from solvsel.data.catalog import load_catalog  # noqa: E402
from solvsel.jobs.clarity import clarity  # noqa: E402

GOAL_S = 0.050

FLAVOUR = """name,cas,mass_percent
ethanol,64-17-5,55
water,7732-18-5,30
d-limonene,5989-27-5,8
alpha-pinene,80-56-8,1
beta-pinene,127-91-3,1
myrcene,123-35-3,1
gamma-terpinene,99-85-4,1
citral,5392-40-5,1.5
linalool,78-70-6,1
decanal,112-31-2,0.5
"""


def timed(fn, repeat: int) -> float:
    best = float("inf")
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="fewer repeats")
    args = ap.parse_args()
    rep = 5 if args.quick else 30
    cat = load_catalog()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "citrus_flavour.csv"
        path.write_text(FLAVOUR, encoding="utf-8")

        def run():
            return clarity(catalog=cat, formula=str(path), dose="0.5%", chain="syrup d=1.28; drink 1+5v d=1.04",
                           brix=11.0, temp_C=4.0)

        t0 = time.perf_counter()
        first = run()
        cold = time.perf_counter() - t0
        warm = timed(run, rep)
    n = len(first.formula.components)
    print(f"flavour of {n} components, {len(first.components)} judged, verdict: {first.verdict}")
    print(f"first call (loads the log P data): {cold * 1e3:.1f} ms")
    print(f"clarity check, tables loaded: {warm * 1e3:.2f} ms (goal {GOAL_S * 1e3:.0f} ms: "
          f"{warm / GOAL_S:.2f} of the goal) {'OK' if warm < GOAL_S else 'OVER'}")


if __name__ == "__main__":
    main()
