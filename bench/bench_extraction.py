"""Timing of the extraction plan: 13 strengths x 17 temperatures of ethanol in water, 3 rejects.

Goal (issue "the users' own questions"): the whole grid under 0.5 s.  Prints the job on a warm
catalog (best of several runs), the first run in the process (tables, food law and the Antoine
set loaded), and a baseline: the same 221 points with the library's scalar solubility solver
(:func:`solvsel.science.hansen.solid_solubility`, a scan then a 60-step bisection per point) in
place of the plan's vectorised scans.
Usage: python bench/bench_extraction.py [--quick]
"""

from __future__ import annotations

import sys
import time

GOAL_S = 0.5


def _baseline(cat, req) -> float:
    """The grid's solubilities with the scalar solver, timed."""
    from solvsel.science import extraction as ex
    from solvsel.science.hansen import solid_solubility

    p = ex.pair_of(cat.solvent("ethanol"), cat.solvent("water"))
    solutes = [cat.solute(req.solute)] + [cat.solute(n) for n in req.rejects]
    t0 = time.perf_counter()
    for s in req.strengths:
        for t in req.temps_C:
            h, vm, mw = ex.mixture_at(p, s / 100.0, t)
            for sol in solutes:
                f = ex.fusion_of(sol)
                if f is None or sol.vm_cm3_mol is None or sol.mw_g_mol is None or t >= f[0]:
                    continue
                solid_solubility([sol.dD, sol.dP, sol.dH], sol.vm_cm3_mol, sol.mw_g_mol, f[0], f[1], h, vm, mw, t)
    return time.perf_counter() - t0


def main(quick: bool = False) -> int:
    t0 = time.perf_counter()
    from solvsel.data.catalog import load_catalog
    from solvsel.jobs.extraction import ExtractionRequest, extraction

    cat = load_catalog()
    req = ExtractionRequest(solute="cannabidiol", purpose="food_ingredient")
    extraction(req, catalog=cat)
    cold = time.perf_counter() - t0
    runs = []
    for _ in range(2 if quick else 5):
        t0 = time.perf_counter()
        r = extraction(req, catalog=cat)
        runs.append(time.perf_counter() - t0)
    warm = min(runs)
    base = _baseline(cat, req)
    n = len(r.strengths) * len(r.temps_C)
    print(f"extraction plan, {len(r.strengths)} strengths x {len(r.temps_C)} temperatures = {n} points, "
          f"{len(r.rejects)} rejects")
    print(f"  warm catalog: {warm:.3f} s (goal {GOAL_S} s: {'met' if warm < GOAL_S else 'NOT met'}, "
          f"{warm / GOAL_S:.2f} of it)")
    print(f"  first run in the process (imports, tables, food law): {cold:.2f} s")
    print(f"  baseline, the same solubilities by the scalar solver: {base:.3f} s (solubilities alone)")
    return 0 if warm < GOAL_S else 1


if __name__ == "__main__":
    sys.exit(main(quick="--quick" in sys.argv))
