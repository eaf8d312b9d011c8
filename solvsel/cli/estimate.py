"""``solvsel estimate``: Hansen parameters and molar volume from a SMILES string.

Also refits the own group-contribution model (``--refit OUT.csv``) so anyone can
hold compounds out and test on them, and saves an estimate as a row of the
user's own solutes table (``--save-to``).
"""

from __future__ import annotations

import sys

from ._common import add_json_flag, emit_json, print_cautions, print_table

METHOD_CHOICES = ("solvsel-gc", "hoftyzer-van-krevelen", "properties")

CAUTION = (
    "Group-contribution HSP are screening estimates (see the error by class above): confirm solubility at "
    "the bench before relying on them; measured values win."
)


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
    p.add_argument("smiles", nargs="*", metavar="SMILES", help="one or more SMILES strings (quote them)")
    p.add_argument("--file", metavar="FILE", help="read SMILES from FILE, one a line (text after a space is a label)")
    p.add_argument("--method", choices=METHOD_CHOICES, default=None,
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
                   help="append the estimate as a row of your own solutes table (created if missing; use it with "
                   "--own-solutes CSV)")
    p.add_argument("--name", metavar="NAME", help="with --save-to: the solute's name")
    p.add_argument("--category", default="other",
                   choices=("flavour", "active", "lipid", "pigment", "sugar", "wax", "other"),
                   help="with --save-to: the solute's category (default other)")
    add_json_flag(p)
    return p


def _read_lines(path: str, what: str) -> list[str]:
    from ..errors import InputError

    try:
        with open(path, encoding="utf-8") as fh:
            lines = [ln.strip() for ln in fh]
    except OSError as exc:
        raise InputError(f"{what}: cannot read '{path}': {exc.strerror}") from None
    return [ln for ln in lines if ln and not ln.startswith("#")]


def _refit(args) -> int:
    from ..science import structure
    from ..errors import InputError

    if args.smiles or args.file:
        raise InputError("--refit fits the model; give SMILES to estimate in a separate call with --params")
    exclude = _read_lines(args.exclude, "--exclude") if args.exclude else []
    say = None if args.json else (lambda msg: print(f"... {msg}", file=sys.stderr))
    res = structure.refit(args.refit, exclude=exclude, force=args.force, progress=say)
    if args.json:
        emit_json({k: v for k, v in res.items()})
        return 0
    print(f"Fitted on {res['fitted']} of {res['compounds']} compounds ({len(exclude)} CAS numbers excluded).")
    print("Written: " + ", ".join(res["paths"]))
    print()
    rows = [r for r in res["table"] if r["class"] == "all"]
    print_table(rows, [("method", "method"), ("n", "n"), ("mae_dD", "MAE dD", ".2f"), ("mae_dP", "MAE dP", ".2f"),
                       ("mae_dH", "MAE dH", ".2f"), ("mae_ra", "mean Ra", ".2f")])
    print("\nMean absolute errors in MPa^0.5 against the data sets (the fitted model out of fold, nested grouped "
          "10-fold CV: settings chosen on inner folds of each training part): solvsel-gc on every compound it covers; 'same compounds', 'groups only' and Hoftyzer-Van Krevelen "
          "on the compounds both group methods cover; properties where the library has the data.")
    print(f"Use it with: solvsel estimate --params {args.refit} SMILES")
    return 0


def _save(args, est) -> str:
    """Append the estimate to the user's solutes CSV (never rewriting what is there)."""
    import csv
    import os

    from ..errors import InputError

    if not args.name:
        raise InputError("--save-to needs --name NAME for the solute")
    columns = ["name", "synonyms", "cas", "category", "dD_MPa05", "dP_MPa05", "dH_MPa05", "r0_MPa05", "hsp_basis",
               "hsp_method", "hsp_source", "mw_g_mol", "mp_C", "dHfus_kJ_mol", "vm_cm3_mol", "smiles",
               "props_source", "note"]
    path = args.save_to
    exists = os.path.exists(path) and os.path.getsize(path) > 0
    if exists:
        with open(path, newline="", encoding="utf-8") as fh:
            rows = list(csv.reader(fh))
        header = rows[0] if rows else []
        missing = [c for c in ("name", "dD_MPa05", "dP_MPa05", "dH_MPa05") if c not in header]
        if missing:
            raise InputError(f"--save-to: '{path}' is not a solutes table (no column {', '.join(missing)}); "
                             "nothing was written")
        names = {r[header.index("name")].strip().lower() for r in rows[1:] if r}
        if args.name.strip().lower() in names and not args.force:
            raise InputError(f"--save-to: '{path}' already has a solute named '{args.name}'; choose another name "
                             "(or --force to add a second row)")
        columns = header
    u = est.uncertainty
    values = {
        "name": args.name.strip(), "category": args.category,
        "dD_MPa05": f"{est.dD:.2f}", "dP_MPa05": f"{est.dP:.2f}", "dH_MPa05": f"{est.dH:.2f}",
        "hsp_basis": "estimated", "hsp_method": est.method, "hsp_source": "derived_gc_fit" if est.method == "solvsel-gc" else est.method,
        "mw_g_mol": f"{est.mw_g_mol:.3f}" if est.mw_g_mol else "",
        "vm_cm3_mol": f"{est.vm_cm3_mol:.1f}" if est.vm_cm3_mol else "", "smiles": est.smiles,
        "props_source": "derived_gc_fit",
        "note": f"estimated from structure by solvsel estimate ({est.method}); expected error for "
                f"{u.get('basis')}: dD {u.get('dD') or 0:.2f}, dP {u.get('dP') or 0:.2f}, dH {u.get('dH') or 0:.2f} MPa^0.5",
    }
    mode = "a" if exists else "w"
    with open(path, mode, newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        if not exists:
            w.writerow(columns)
        w.writerow([values.get(c, "") for c in columns])
    return path


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


def run(args) -> int:
    from ..science import structure
    from ..errors import InputError, SolvselError

    if args.refit:
        return _refit(args)
    if args.exclude:
        raise InputError("--exclude goes with --refit")
    items = list(args.smiles)
    if args.file:
        items += [ln.split()[0] for ln in _read_lines(args.file, "--file")]
    if not items:
        raise InputError("estimate: give a SMILES string (e.g. solvsel estimate \"CC(C)=CCCC(C)=CC=O\") or --file FILE")
    if args.save_to and len(items) != 1:
        raise InputError("--save-to saves one estimate: give exactly one SMILES")
    lookup = not args.no_lookup
    if args.lookup_all and args.no_lookup:
        raise InputError("--lookup-all and --no-lookup contradict each other: give one")
    full = bool(args.lookup_all)
    if len(items) == 1:
        est = structure.estimate(items[0], method=args.method, params=args.params, properties=lookup,
                                 full_lookup=full)
        saved = _save(args, est) if args.save_to else None
        if args.json:
            d = est.to_dict()
            if saved:
                d["saved_to"] = saved
            emit_json(d)
            return 0
        _print_one(est, args.groups)
        if saved:
            print(f"\nSaved as '{args.name}' to {saved} (use it with --own-solutes {saved}).")
        print_cautions([CAUTION])
        return 0
    results = []
    for s in items:
        try:
            results.append(structure.estimate(s, method=args.method, params=args.params, properties=lookup,
                                              full_lookup=full))
        except SolvselError as exc:
            results.append({"smiles": s, "error": str(exc)})
    if args.json:
        emit_json(results)
        return 0 if all(not isinstance(r, dict) for r in results) else 2
    rows = []
    for r in results:
        if isinstance(r, dict):
            rows.append({"smiles": r["smiles"], "note": r["error"]})
            continue
        u = r.uncertainty
        rows.append({"smiles": r.smiles, "dD": r.dD, "dP": r.dP, "dH": r.dH, "vm": r.vm_cm3_mol,
                     "class": r.chem_class, "err": u.get("ra"), "note": "; ".join(r.notes)})
    print_table(rows, [("smiles", "SMILES"), ("dD", "dD", ".1f"), ("dP", "dP", ".1f"), ("dH", "dH", ".1f"),
                       ("vm", "Vm", ".0f"), ("class", "class"), ("err", "CV Ra", ".1f"), ("note", "note")])
    print_cautions([CAUTION])
    return 0 if all(not isinstance(r, dict) for r in results) else 2
