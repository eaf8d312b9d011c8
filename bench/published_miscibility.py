"""Miscibility verdicts against a published chart the project did not produce.

The yardstick: a 32 x 32 chart of common liquids in pairs, 1 miscible and 0 not, transcribed
from a solvent supplier's published chart into the public repository sustainable-processes/KG4DT
(app/data/solvent_miscibility_table.csv, commit ccac3b63; CC BY-NC 4.0), read from
``../shared/data/external/miscibility_chart/`` (never copied into the project; see its
PROVENANCE.md).  The six cells PROVENANCE.md calls doubtful are left out: 490 pairs, 41 of
them immiscible.  The chart has no "partial" class, so a "partial" answer counts as not
miscible.

Liquids, by CAS (:data:`CHART_CAS`): the catalog's record, else the reference library
``chemicals`` (HSP from MANUEL_RUBEN_2022, then WDR_SCHRIER, then ALSHERI_HANSEN, molar volume
by COSTALD), as the tool resolves a CAS number; "Xylene" (the isomer mixture) is taken as
p-xylene (the isomers share their HSP in the data sets).

Three answers are scored: the prediction alone (:func:`solvsel.science.miscibility.predict_pair`,
never looking at the measured table: UNIFAC from the two structures where a parameter set covers
both, UNIFAC-LLE of Magnussen et al. first, else Flory-Huggins from HSP), the tool's final verdict
(:func:`solvsel.science.miscibility.pair`, measured pairs first), and, as a baseline, Flory-Huggins
from HSP alone (``predict_pair(..., models=())``, the prediction before UNIFAC).  Every setting was
chosen without the chart, on tables/miscibility.csv (``bench/bench_miscibility.py``): the order of
the UNIFAC parameter sets (``choose_model_order``) and the decisive-"no" level
(``choose_immiscible_level``); the chart's cells are not in the tables.

For the record, :func:`threshold_scan` shows what a looser "miscible" rule for Flory-Huggins (chi up
to r times the critical chi) would give, with Hansen's dH and with dH split into donor and acceptor
parts, r chosen on the measured table beside the chart's own figures: no setting of either rule
reaches both goals, not even one chosen on the chart itself.

Usage: python bench/published_miscibility.py
"""

from __future__ import annotations

import csv
import sys
from itertools import combinations
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from solvsel.data.catalog import load_catalog  # noqa: E402
from solvsel.science import miscibility as M  # noqa: E402

CHART_DIR = ROOT.parent / "shared" / "data" / "external" / "miscibility_chart"
CHART_FILE = "solvent_miscibility_table.csv"
#: The cells PROVENANCE.md of the chart calls doubtful (left out of every figure).
DOUBTFUL = frozenset(frozenset(p) for p in [
    ("Xylene", "Trichloroethylene"), ("Xylene", "Dimethyl Sulfoxide"), ("Xylene", "Dimethylformamide"),
    ("Acetic Acid", "Hexane"), ("Acetic Acid", "Pentane"), ("Diethyl Ether", "Dimethyl Sulfoxide"),
])
#: CAS of each liquid of the chart (the chart names them loosely; "Xylene" is the isomer mixture,
#: taken here as p-xylene, whose HSP the catalog holds; "Butanol" is 1-butanol).
CHART_CAS = {
    "Acetic Acid": "64-19-7", "Acetone": "67-64-1", "Acetonitrile": "75-05-8", "Benzene": "71-43-2",
    "Butanol": "71-36-3", "Butyl Acetate": "123-86-4", "Carbon Tetrachloride": "56-23-5", "Chloroform": "67-66-3",
    "Cyclohexane": "110-82-7", "Dichloroethane": "107-06-2", "Dichloromethane": "75-09-2",
    "Diethyl Ether": "60-29-7", "Diisopropyl Ether": "108-20-3", "Dimethylformamide": "68-12-2",
    "Dimethyl Sulfoxide": "67-68-5", "Dioxane": "123-91-1", "Ethanol": "64-17-5", "Ethyl Acetate": "141-78-6",
    "Heptane": "142-82-5", "Hexane": "110-54-3", "Isooctane": "540-84-1", "Isopropanol": "67-63-0",
    "Methanol": "67-56-1", "Methyl Ethyl Ketone": "78-93-3", "Methyl Tert-Butyl Ether": "1634-04-4",
    "Pentane": "109-66-0", "1-Propanol": "71-23-8", "Tetrahydrofuran": "109-99-9", "Toluene": "108-88-3",
    "Trichloroethylene": "79-01-6", "Water": "7732-18-5", "Xylene": "106-42-3",
}
#: Goals of the published-data issue for the prediction alone.
GOALS = {"accuracy": 0.95, "immiscible_found": 0.85}
#: Ratios chi / chi_critical tried by :func:`threshold_scan`.
RATIOS = (1.0, 1.2, 1.4, 1.5, 1.6, 1.8, 2.0, 2.2, 2.5)


def chart_pairs(folder: Path | None = None) -> list[tuple[str, str, bool]]:
    """``(liquid a, liquid b, miscible)`` for every pair of the chart but the doubtful cells."""
    path = Path(folder or CHART_DIR) / CHART_FILE
    with open(path, encoding="utf-8-sig", newline="") as fh:
        rows = list(csv.reader(fh))
    names = rows[0][1:]
    out = []
    for i, j in combinations(range(len(names)), 2):
        if frozenset((names[i], names[j])) in DOUBTFUL:
            continue
        out.append((names[i], names[j], rows[i + 1][j + 1].strip() == "1"))
    return out


def _scores(truth: list[bool], said: list[str]) -> dict:
    """Accuracy ("yes" = miscible; "partial" and "no" = not), immiscible pairs found, decisive "no"s."""
    n = len(truth)
    imm = [s for t, s in zip(truth, said) if not t]
    mis = [s for t, s in zip(truth, said) if t]
    return {
        "accuracy": sum((s == "yes") == t for t, s in zip(truth, said)) / n,
        "immiscible_found": sum(s != "yes" for s in imm) / len(imm),
        "immiscible_answered_no": sum(s == "no" for s in imm) / len(imm),
        "miscible_answered_no": sum(s == "no" for s in mis),
        "answered_no": sum(s == "no" for s in said),
    }


def _verdicts(folder: Path | None = None):
    """The catalog and ``(liquid a, liquid b, miscible, prediction alone, final verdict, Flory-Huggins
    from HSP alone)`` for every pair of the chart."""
    cat = load_catalog()
    pairs = chart_pairs(folder)
    recs = {n: cat.solvent(CHART_CAS[n]) for n in {p for a, b, _ in pairs for p in (a, b)}}
    rows = []
    for a, b, miscible in pairs:
        pred = M.predict_pair(recs[a], recs[b])
        final = M.pair(cat, recs[a], recs[b])
        rows.append((a, b, miscible, pred, final, M.predict_pair(recs[a], recs[b], models=())))
    return cat, rows


def miscibility_figures(folder: Path | None = None) -> dict:
    """The figures of the prediction alone and of the final verdict on the chart.

    Returns
    -------
    dict
        ``pairs``, ``immiscible``, ``always_miscible`` (accuracy of answering "yes" to all),
        ``level_wt`` (the decisive-"no" level in use), ``models`` (pairs the prediction answered
        by each model), and ``prediction`` / ``final`` / ``hansen`` (Flory-Huggins from HSP
        alone), each with ``accuracy``, ``immiscible_found`` (share of immiscible pairs answered
        "partial" or "no"), ``immiscible_answered_no``, ``miscible_answered_no`` (count) and
        ``answered_no`` (count)
    """
    _, rows = _verdicts(folder)
    truth = [r[2] for r in rows]
    models: dict[str, int] = {}
    for r in rows:
        models[r[3].model] = models.get(r[3].model, 0) + 1
    return {
        "pairs": len(rows),
        "immiscible": truth.count(False),
        "always_miscible": truth.count(True) / len(truth),
        "level_wt": M.IMMISCIBLE_BELOW_WT,
        "models": models,
        "prediction": _scores(truth, [r[3].one_phase for r in rows]),
        "final": _scores(truth, [r[4].one_phase for r in rows]),
        "hansen": _scores(truth, [r[5].one_phase for r in rows]),
    }


def _ratio_verdicts(rows, ratio: float) -> list[str]:
    return ["yes" if p.chi <= ratio * p.chi_critical else "partial" for p in rows]


def _sites(cas: str) -> tuple[int, int] | None:
    """(N-H and O-H count, N and O count) of a liquid from the reference library's SMILES (RDKit's
    Lipinski counts, as :func:`solvsel.science.solubility.hbond_difference` takes them), or None."""
    from chemicals.identifiers import search_chemical
    from rdkit import Chem
    from rdkit.Chem import Lipinski

    try:
        mol = Chem.MolFromSmiles(search_chemical(cas).smiles or "")
    except ValueError:  # a mixture (a vegetable oil) or a name the library does not know
        return None
    return None if mol is None else (Lipinski.NHOHCount(mol), Lipinski.NOCount(mol))


def _split_ratio(a, b, temp_C: float = 25.0) -> float | None:
    """chi / chi_critical with the donor-acceptor split of dH of :mod:`solvsel.science.solubility`
    (Karger, Snyder and Eon's acid-base form, site counts from the structure), or None without SMILES."""
    from solvsel.science.hansen import R_J_MOL_K, chi_critical
    from solvsel.science.solubility import hbond_difference

    sa, sb = _sites(a.cas or ""), _sites(b.cas or "")
    if sa is None or sb is None:
        return None
    h = float(hbond_difference(a.dH, [b.dH], sa, [sb])[0])
    d2 = 4.0 * (a.dD - b.dD) ** 2 + (a.dP - b.dP) ** 2 + h
    v1, v2 = sorted((a.vm_cm3_mol, b.vm_cm3_mol))
    return v1 * d2 / (4.0 * R_J_MOL_K * (temp_C + 273.15)) / float(chi_critical(v1, v2))


def _scan(truth: list[bool], ratios: list[float]) -> dict:
    return {r: tuple(_scores(truth, ["yes" if x <= r else "partial" for x in ratios])[k]
                     for k in ("accuracy", "immiscible_found")) for r in RATIOS}


def threshold_scan(folder: Path | None = None) -> dict:
    """What "miscible when chi <= r chi_critical" gives on the measured table and on the chart, with
    Hansen's lumped dH ("lumped") and with the donor-acceptor split of dH ("split"; pairs whose two
    liquids have a structure in the reference library).

    Returns ``{family: {"table": {r: (accuracy, immiscible found)}, "chart": {...}, "table_choice": r,
    "table_pairs": n}}``, ``table_choice`` the r of the best accuracy on tables/miscibility.csv (ties:
    smallest r).
    """
    cat, rows = _verdicts(folder)
    chart = {"lumped": ([], []), "split": ([], [])}
    table = {"lumped": ([], []), "split": ([], [])}
    for a, b, miscible, _, _, pred in rows:
        ra, rb = cat.solvent(CHART_CAS[a]), cat.solvent(CHART_CAS[b])
        for family, x in (("lumped", pred.chi / pred.chi_critical), ("split", _split_ratio(ra, rb))):
            chart[family][0].append(miscible)
            chart[family][1].append(x)
    for row in cat.table("miscibility").to_dict("records"):
        a, b = cat.solvent(row["liquid_a"]), cat.solvent(row["liquid_b"])
        p = M.predict_pair(a, b, float(row["temp_C"]), models=())
        for family, x in (("lumped", p.chi / p.chi_critical), ("split", _split_ratio(a, b, float(row["temp_C"])))):
            if x is not None:
                table[family][0].append(row["one_phase"] == "full")
                table[family][1].append(x)
    out = {}
    for family in ("lumped", "split"):
        t = _scan(*table[family])
        out[family] = {"table": t, "chart": _scan(*chart[family]), "table_pairs": len(table[family][0]),
                       "table_choice": max(RATIOS, key=lambda r: (t[r][0], -r))}
    return out


def _print_block(title: str, s: dict, always: float) -> None:
    print(f"  {title}")
    print(f"    accuracy                 {s['accuracy']:.3f}   goal >= {GOALS['accuracy']} and above "
          f"always-miscible {always:.3f} ({'met' if s['accuracy'] >= GOALS['accuracy'] else 'NOT met'})")
    print(f"    immiscible pairs found   {s['immiscible_found']:.3f}   goal >= {GOALS['immiscible_found']} "
          f"({'met' if s['immiscible_found'] >= GOALS['immiscible_found'] else 'NOT met'})")
    print(f"    answered a decisive no   {s['answered_no']} pairs: {s['immiscible_answered_no']:.3f} of the "
          f"immiscible ones, {s['miscible_answered_no']} miscible ones")


def main() -> None:
    if not (CHART_DIR / CHART_FILE).is_file():
        print(f"the chart is not at {CHART_DIR}; nothing to score")
        return
    f = miscibility_figures()
    print(f"Miscibility against the published chart (KG4DT copy): {f['pairs']} pairs, {f['immiscible']} immiscible, "
          f"doubtful cells out; 'partial' scored as not miscible; decisive 'no' below {f['level_wt']:g} wt %")
    by = ", ".join(f"{n} {k}" for k, n in sorted(f["models"].items(), key=lambda kv: -kv[1]))
    _print_block(f"prediction alone (no measured table; pairs by model: {by})", f["prediction"], f["always_miscible"])
    _print_block("final verdict (measured table first)", f["final"], f["always_miscible"])
    _print_block("baseline: Flory-Huggins from HSP alone (the prediction before UNIFAC)", f["hansen"],
                 f["always_miscible"])
    scan = threshold_scan()
    names = {"lumped": "Hansen's dH", "split": "dH split into donor and acceptor parts (science.solubility)"}
    for family, res in scan.items():
        print(f"  a looser 'miscible' rule, chi <= r chi_critical, {names[family]} "
              f"(accuracy / immiscible found; measured table: {res['table_pairs']} pairs):")
        for r in RATIOS:
            t, c = res["table"][r], res["chart"][r]
            mark = "  <- chosen on the measured table" if r == res["table_choice"] else ""
            print(f"    r = {r:3.1f}: measured table {t[0]:.3f} / {t[1]:.3f}   chart {c[0]:.3f} / {c[1]:.3f}{mark}")

if __name__ == "__main__":
    main()
