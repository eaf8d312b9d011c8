"""Timing of the dose checks that rank and blend call per candidate.

Prints the time of one carrier check (warm catalog) over every carrier of the
bundled table, of a full chain check with residues and claims, and of the whole
``dose`` job for the same request (parsing, the check and the cautions).
Usage: python bench/bench_dose.py [--quick]
"""

from __future__ import annotations

import sys
import time

from solvsel.data.catalog import load_catalog
from solvsel.jobs.dose import dose
from solvsel.jobs.parse import parse_chain
from solvsel.rules.regulations import carrier_dose_check, check_dose
from solvsel.science.formulation import formula_from_amounts


def main(quick: bool = False) -> None:
    cat = load_catalog()
    carriers = cat.solvents_with_role("carrier")
    at_dose = parse_chain(None, "0.15%")
    t0 = time.perf_counter()
    carrier_dose_check(cat, carriers[0], at_dose, "EU", "flavoured drinks")
    cold = time.perf_counter() - t0
    reps = 1 if quick else 5
    t0 = time.perf_counter()
    for _ in range(reps):
        for s in carriers:
            carrier_dose_check(cat, s, at_dose, "EU", "flavoured drinks")
    warm = (time.perf_counter() - t0) / (reps * len(carriers))
    f = formula_from_amounts(cat, [("propylene glycol", 60), ("triacetin", 20), ("ethanol", 10), ("vanillin", 10)])
    chain = parse_chain("syrup 0.5% d=1.28; drink 1+5v d=1.04")
    t0 = time.perf_counter()
    for _ in range(reps * 10):
        check_dose(cat, f, chain, "US", "flavoured drinks",
                   already={"propylene glycol": 100}, residues={"n-hexane": 20}, claims=["halal"])
    full = (time.perf_counter() - t0) / (reps * 10)
    t0 = time.perf_counter()
    for _ in range(reps * 10):
        dose(catalog=cat, formula="propylene glycol=60,triacetin=20,ethanol=10,vanillin=10",
             chain="syrup 0.5% d=1.28; drink 1+5v d=1.04", jurisdiction="US", category="flavoured drinks",
             already="propylene glycol=100", residues="n-hexane=20", claims="halal")
    job = (time.perf_counter() - t0) / (reps * 10)
    print(f"first carrier check (loads tables): {cold * 1e3:.1f} ms")
    print(f"carrier check, warm: {warm * 1e3:.2f} ms per carrier over {len(carriers)} carriers")
    print(f"full chain check (4 components, residues, claims): {full * 1e3:.2f} ms")
    print(f"dose job, same request from text (parsing, check, cautions): {job * 1e3:.2f} ms")
    print(f"ratio full / carrier: {full / warm:.1f}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
