"""``solvsel estimate``: Hansen parameters and molar volume from a SMILES string.

Also refits the own group-contribution model (``--refit OUT.csv``) so anyone can
hold compounds out and test on them, and saves an estimate as a row of the
user's own solutes table (``--save-to``).
"""

from __future__ import annotations

from ..jobs.estimate import METHODS
from ..jobs.fit import SOLUTE_CATEGORIES
from ._common import add_json_flag, emit_json, print_cautions, print_table
from ._progress import ProgressBar

#: Request fields given by another option than ``--`` + the field.
OPTION_NAMES = {"smiles": "SMILES", "lookup": "--no-lookup"}


def register(sub):
    p = sub.add_parser(
        "estimate",
        help="estimate HSP and molar volume from a SMILES string, with the groups used",
        description="Estimate dD, dP, dH and the molar volume of one neutral organic molecule from its SMILES, "
        "by the project's own group-contribution model (fitted on published HSP data sets, cross-validated), "
        "the published Hoftyzer-Van Krevelen method with Fedors' volume, and, where the reference library has "
        "the compound, from its physical properties. Shows the groups found, the error to expect for the "
        "molecule's class, and the spread between the methods.",
    )
    p.add_argument("smiles", nargs="*", metavar="SMILES",
                   help="one or more SMILES strings (quote them); - reads them from stdin, one a line")
    p.add_argument("--file", metavar="FILE",
                   help="read SMILES from FILE, one a line (text after a space is a label); - for stdin")
    p.add_argument("--method", choices=METHODS, default=None,
                   help="method whose numbers are reported (default solvsel-gc)")
    p.add_argument("--params", metavar="CSV", help="parameter table of the own model from --refit (default: bundled)")
    p.add_argument("--no-lookup", action="store_true",
                   help="do not look the compound up in the reference library (faster; no property-based estimate)")
    p.add_argument("--lookup-all", action="store_true",
                   help="search the whole reference library, not only the part loaded by default (about 1.3 s more; "
                   "finds more compounds for the property-based estimate)")
    p.add_argument("--groups", action="store_true", help="list the atoms of every group")
    p.add_argument("--refit", metavar="OUT.csv",
                   help="refit the own model on the library's HSP data sets and write its parameters to OUT.csv "
                   "(with OUT_training.csv and OUT_cv.csv beside it)")
    p.add_argument("--exclude", metavar="CAS_FILE", help="with --refit: CAS numbers (one a line) to hold out")
    p.add_argument("--force", action="store_true", help="with --refit or --save-to: allow overwriting / adding to files")
    p.add_argument("--save-to", metavar="CSV",
                   help="append the estimate as a row of your own solutes table (created if missing; adding to a "
                   "file that exists needs --force, its rows are kept; text starting with = + - @ is written "
                   "with a leading ' so a spreadsheet shows it as text; use it with --own-solutes CSV)")
    p.add_argument("--name", metavar="NAME", help="with --save-to: the solute's name")
    p.add_argument("--category", default="other",
                   choices=SOLUTE_CATEGORIES,
                   help="with --save-to: the solute's category (default other)")
    add_json_flag(p)
    return p


def _refit_text(result) -> None:
    res, out = result.refit, result.request.refit
    print(f"Fitted on {res['fitted']} of {res['compounds']} compounds ({len(result.excluded)} CAS numbers excluded).")
    print("Written: " + ", ".join(res["paths"]))
    print()
    rows = [r for r in res["table"] if r["class"] == "all"]
    print_table(rows, [("method", "method"), ("n", "n"), ("mae_dD", "MAE dD", ".2f"), ("mae_dP", "MAE dP", ".2f"),
                       ("mae_dH", "MAE dH", ".2f"), ("mae_ra", "mean Ra", ".2f")])
    print("\nMean absolute errors in MPa^0.5 against the data sets (the fitted model out of fold, grouped 10-fold "
          "CV with each fold's settings as the nested CV chose them on inner folds of its training part, recorded "
          "in the bundled parameters): solvsel-gc on every compound it covers; 'same compounds', 'groups only' and "
          "Hoftyzer-Van Krevelen "
          "on the compounds both group methods cover; properties where the library has the data.")
    print(f"Use it with: solvsel estimate --params {out} SMILES")


def _print_one(est, show_atoms: bool) -> None:
    u = est.uncertainty
    print(f"{est.smiles}   {est.formula}   M {est.mw_g_mol:.1f} g/mol   class: {est.chem_class}")
    rows = [{"method": est.method + " (reported)", "dD": est.dD, "dP": est.dP, "dH": est.dH, "vm": est.vm_cm3_mol,
             "note": f"vm: {est.vm_method}" if est.vm_method else ""}]
    for o in est.others:
        rows.append({"method": o.method, "dD": o.dD, "dP": o.dP, "dH": o.dH, "vm": o.vm_cm3_mol,
                     "note": o.note if o.covered else f"not estimated: {o.note}"})
    print_table(rows, [("method", "method"), ("dD", "dD", ".1f"), ("dP", "dP", ".1f"), ("dH", "dH", ".1f"),
                       ("vm", "Vm cm3/mol", ".1f"), ("note", "note")])
    if u.get("dD") is not None:
        print(f"expected error (cross-validated MAE, {u['basis']}, n={u['n']}): dD +/-{u['dD']:.2f}  "
              f"dP +/-{u['dP']:.2f}  dH +/-{u['dH']:.2f}  (Ra {u['ra']:.1f}); 90 % of errors below "
              f"dD {u['q90_dD']:.1f}, dP {u['q90_dP']:.1f}, dH {u['q90_dH']:.1f} MPa^0.5")
    if est.spread:
        print("spread between methods: " + ", ".join(f"{k} {v:.1f}" for k, v in est.spread.items()) + " MPa^0.5")
    parts = []
    for g in est.groups:
        atoms = " [" + " ".join(",".join(str(i) for i in o) for o in g.atoms) + "]" if show_atoms and g.atoms else ""
        parts.append(f"{g.name} x{g.count}{atoms}")
    print("groups: " + "; ".join(parts))
    near = est.neighbours
    if near:
        print("nearest training compounds: " + "; ".join(
            f"{n['smiles']} (sim {n['similarity']:.2f}: {n['dD']:.1f}, {n['dP']:.1f}, {n['dH']:.1f})" for n in near))
    for n in est.notes:
        print(f"note: {n}")


def _print_many(result) -> None:
    rows = []
    for s, r, d in zip(result.items, result.estimates, result.to_dict()):
        if "error" in d:
            rows.append({"smiles": s, "note": d["error"]})
            continue
        u = r.uncertainty
        rows.append({"smiles": r.smiles, "dD": r.dD, "dP": r.dP, "dH": r.dH, "vm": r.vm_cm3_mol,
                     "class": r.chem_class, "err": u.get("ra"), "note": "; ".join(r.notes)})
    print_table(rows, [("smiles", "SMILES"), ("dD", "dD", ".1f"), ("dP", "dP", ".1f"), ("dH", "dH", ".1f"),
                       ("vm", "Vm", ".0f"), ("class", "class"), ("err", "CV Ra", ".1f"), ("note", "note")])


def run(args) -> int:
    from ..jobs.estimate import estimate

    say = None if args.json else ProgressBar(every=0.0)
    smiles, file = tuple(args.smiles), args.file
    if smiles == ("-",) and file is None:  # the SMILES come on stdin
        smiles, file = (), "-"
    result = estimate(
        smiles=smiles, file=file, method=args.method, params=args.params,
        lookup=not args.no_lookup, lookup_all=args.lookup_all, refit=args.refit, exclude=args.exclude,
        force=args.force, save_to=args.save_to, name=args.name, category=args.category, progress=say,
    )
    if args.json:
        emit_json(result.to_dict())
        return 0 if result.ok else 2
    if result.refit is not None:
        _refit_text(result)
        return 0
    if len(result.items) == 1:
        _print_one(result.estimates[0], args.groups)
        if result.saved_to:
            print(f"\nSaved as '{args.name}' to {result.saved_to} (use it with --own-solutes {result.saved_to}).")
    else:
        _print_many(result)
    print_cautions(result.cautions)
    return 0 if result.ok else 2
