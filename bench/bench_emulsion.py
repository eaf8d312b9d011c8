"""Timings of the HLB and emulsion engines (prints numbers; not a test).

    python bench/bench_emulsion.py [--quick]

Pairs and triples over the whole default emulsifier pool, Griffin's HLB from
structure for every SMILES of the table, and one full beverage-emulsion design
(the ``emulsion`` job: physics, weighting options and legal checks), and one with a hydrocolloid
emulsifier, the drink's viscosity from the sucrose table and the concentrate judged at its own viscosity.
"""

from __future__ import annotations

import argparse
import time

from solvsel.data.catalog import load_catalog
from solvsel.jobs.emulsion import emulsion
from solvsel.science import hlb as H


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
    rep = 2 if args.quick else 7
    cat = load_catalog()
    pool = H.all_emulsifiers(cat)
    n = len(pool)
    t2 = timed(lambda: H.emulsifier_systems(pool, 12.0, 2), rep)
    t3 = timed(lambda: H.emulsifier_systems(pool, 12.0, 3), rep)
    n2, n3 = n * (n - 1) // 2, n * (n - 1) * (n - 2) // 6
    print(f"pool of {n} emulsifiers")
    print(f"pairs   : {n2:5d} combinations in {t2 * 1e3:7.2f} ms ({t2 / n2 * 1e6:6.2f} us each)")
    print(f"triples : {n3:5d} combinations in {t3 * 1e3:7.2f} ms ({t3 / n3 * 1e6:6.2f} us each); "
          f"ratio triples/pairs per combination {t3 / n3 / (t2 / n2):.1f}")
    smiles = [s for s, t in zip(cat.table("emulsifiers")["smiles"], cat.table("emulsifiers")["ionic_type"])
              if s and t == "nonionic"]
    tg = timed(lambda: [H.griffin_hlb_from_smiles(s) for s in smiles], rep)
    print(f"Griffin from structure: {len(smiles)} structures in {tg * 1e3:.1f} ms ({tg / len(smiles) * 1e3:.2f} ms each)")
    td = timed(lambda: emulsion(catalog=cat, oil=[("d-limonene", 70), ("sucrose acetate isobutyrate", 30)],
                                brix=11, dilution=500, droplet_um=0.4), rep)
    print(f"beverage emulsion design (2 jurisdictions, 4 agents): {td * 1e3:.1f} ms")
    tg = timed(lambda: emulsion(catalog=cat, oil=[("orange oil", 100)], brix=10.5, temp_C=4, dilution=250,
                                droplet_um=0.4, emulsifier="gum arabic", concentrate_viscosity_mPa_s=60), rep)
    print(f"the same with gum arabic, the drink's viscosity at 4 C and the concentrate judged: {tg * 1e3:.1f} ms")


if __name__ == "__main__":
    main()
