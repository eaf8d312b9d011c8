"""``solvsel dose``: levels of every component along a dilution chain, the limits that bind, the maximum dose.

Examples::

    solvsel dose --formula "propylene glycol=90,vanillin=10" --dose 0.15% --category beverages --jurisdiction EU
    solvsel dose --formula examples/formula_cola.csv --chain "syrup 0.5% d=1.28; drink 1+5v d=1.04" \\
        --category "flavoured drinks" --jurisdiction US --already "propylene glycol=150" --claim halal --json
    solvsel dose --formula "medium-chain triglycerides=100" --dose 0.2% --residue "n-hexane=15" \\
        --category "flavoured drinks" --jurisdiction EU

Chain syntax: steps separated by ``;``, each ``NAME [AMOUNT] [d=DENSITY] [dil=DENSITY]``;
AMOUNT is ``0.15%`` (w/w), ``0.15%v`` (v/v), ``1500ppm``, ``1.5g/kg``, ``1.5g/L``,
``1+5`` (parts by mass) or ``1+5v`` (parts by volume, diluent water unless ``dil=``);
``d=`` is the density of the new stage in g/cm3.  ``--dose`` fills the first step's amount.
"""

from __future__ import annotations

import math

from ..rules.regulations import FOOD_JURISDICTIONS, bundled_purposes, describe_purposes
from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table

#: Request fields given otherwise than as --field.
OPTION_NAMES = {"residues": "--residue", "claims": "--claim"}


def register(subparsers):
    p = subparsers.add_parser(
        "dose",
        help="levels along a dilution chain, limits that bind, maximum dose",
        description=(
            "Levels of every component of a flavour, extract or concentrate at every stage of a dilution chain "
            "(mg/kg and mg/L), checked against the limits of the jurisdiction for the food as consumed (summed "
            "from all sources), with the maximum dose, residual solvents and claim flags. "
            "Chain: steps separated by ';', each 'NAME [AMOUNT] [d=DENSITY] [dil=DENSITY]', AMOUNT one of 0.15% "
            "(w/w), 0.15%v (v/v), 1500ppm, 1.5g/kg, 1.5g/L, 1+5 (parts by mass), 1+5v (parts by volume); "
            "d= is the density of the new stage in g/cm3; e.g. \"syrup 0.5% d=1.28; drink 1+5v d=1.04\"."
        ),
    )
    p.add_argument("--formula", required=True, metavar="A=90,B=10|FILE.csv",
                   help="components in percent (NAME=PERCENT,...), or a CSV with columns name, mass_percent "
                        "(or volume_percent), optional cas and density_g_cm3")
    p.add_argument("--by", choices=("mass", "volume"), default="mass",
                   help="whether the --formula percentages are by mass (default) or by volume")
    p.add_argument("--dose", metavar="AMOUNT", help="dose of the formula in the first stage, e.g. 0.15%%, 1500ppm, 1.5g/L")
    p.add_argument("--chain", metavar="STEPS", help="dilution chain (see above); without it the dose goes into the food as consumed")
    p.add_argument("--category", default=None, help="food category of the food as consumed (default: food, i.e. all foods); "
                   "see 'solvsel table food_categories'")
    p.add_argument("--jurisdiction", required=True, type=str.upper, choices=FOOD_JURISDICTIONS, help="whose limits to apply")
    p.add_argument("--purpose", choices=tuple(bundled_purposes()), metavar="PURPOSE",
                   help="what the formula is; its residues are judged by the rules for that purpose only (without it "
                   "every residue rule is shown with the purposes it applies to): " + describe_purposes())
    p.add_argument("--already", metavar="NAME=MG_PER_KG,...",
                   help="what other ingredients already bring to the food as consumed [mg/kg]")
    p.add_argument("--residue", metavar="SOLVENT=PPM,...",
                   help="measured solvent residues in the formula (extract) [mg/kg]")
    p.add_argument("--claim", action="append", default=[], metavar="CLAIM",
                   help="check a claim rule of tables/claims.csv (e.g. halal, organic, kosher); repeatable")
    p.add_argument("--formula-density", type=float, metavar="G_CM3", help="density of the formula [g/cm3] (default: from its components)")
    add_json_flag(p)
    return p


def _fmt(x, spec=".4g"):
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "-"
    return format(x, spec)


def _purposes(ids) -> str:
    """The purposes a rule allows, as the tables show them ("-" for a rule that names none)."""
    return "any purpose" if "all" in ids else (", ".join(ids) or "-")


def request(args):
    """The :class:`~solvsel.jobs.dose.DoseRequest` the options ask for."""
    from ..jobs.dose import DoseRequest
    from ..jobs.parse import parse_names

    return DoseRequest(
        formula=args.formula, by=args.by, dose=args.dose, chain=args.chain, category=args.category,
        jurisdiction=args.jurisdiction, already=args.already, residues=args.residue,
        claims=tuple(c for item in args.claim for c in parse_names(item, "claims")),
        formula_density=args.formula_density, purpose=args.purpose,
    )


def run(args) -> int:
    from ..jobs.dose import dose

    result = dose(request(args), catalog=get_catalog(args))
    if args.json:
        emit_json(result.to_dict())
        return 0
    if args.category is None:
        print("(no --category given: the limits for all foods are used; a specific category may have other limits)\n")
    _print(result.check)
    print_cautions(result.cautions)
    return 0


def _print(r) -> None:
    comps = ", ".join(f"{c.name} {c.mass_fraction * 100:.4g} %" for c in r.formula.components)
    print(f"Formula '{r.formula.name}' (by mass): {comps}")
    print(f"Limits of: {r.jurisdiction}; food as consumed: {r.category}"
          + (f"; the formula is for: {r.purpose}" if r.purpose else ""))
    for i, st in enumerate(r.stages):
        head = f"\nStage {i}: {st.name}"
        if st.step is not None:
            head += f"  ({st.step.describe()} of the previous stage; {st.fraction_of_formula * 100:.4g} % formula by mass)"
        dens = "unknown" if st.density_g_cm3 is None else f"{st.density_g_cm3:.4g} g/cm3 ({st.density_basis})"
        print(head + f"  density {dens}")
        rows = r.stage_table(i)
        print_table(rows, [("substance", "substance"), ("cas", "CAS"), ("mg_per_kg", "mg/kg", ".6g"), ("mg_per_L", "mg/L", ".6g")])
    if r.other_sources_mg_per_kg:
        print("  (last stage includes other ingredients: "
              + ", ".join(f"{r.names[k][0]} {v:g} mg/kg" for k, v in r.other_sources_mg_per_kg.items()) + ")")
    print("\nLimits in the food as consumed (from all sources):")
    if r.checks:
        rows = []
        for c in r.checks:
            rows.append({
                "rule": c.rule, "substance": c.substance, "level": _fmt(c.level), "limit": _fmt(c.limit) if c.limit is not None else c.status,
                "unit": c.unit, "use": "-" if not c.limit or c.level is None else f"{100 * c.level / c.limit:.0f} %",
                "ok": "ok" if c.ok else "OVER", "binds": "binds" if c.binds else "",
                "max_dose": _fmt(None if c.max_dose is None else c.max_dose * (100 if r.max_dose_unit.endswith("fraction") else 1)),
                "confidence": c.confidence, "checked": c.checked_on or "not recorded", "source": ";".join(c.source),
                "for": _purposes(c.purposes),
            })
        unit = "%" if r.max_dose_unit.endswith("fraction") else r.max_dose_unit
        print_table(rows, [("rule", "rule"), ("substance", "substance"), ("level", "level"), ("limit", "limit"), ("unit", "unit"),
                           ("use", "of limit"), ("ok", "ok"), ("binds", "binds"), ("max_dose", f"max dose [{unit}]"),
                           ("confidence", "confidence"), ("checked", "checked on"), ("source", "source"),
                           ("for", "rule allows it for")])
    else:
        print("  no limit of the table applies")
    for d in r.no_data:
        print(f"  no data: {d['message']}")
    if r.residues:
        print("\nResidual solvents:")
        rows = [{
            "substance": x.substance, "measured": x.measured_ppm, "rule": x.rule + (" (reference)" if x.reference_only else ""),
            "in": x.measured_in or "-", "level": _fmt(x.level),
            "limit": _fmt(x.limit) if x.limit is not None else x.status,
            "unit": x.unit, "ok": {True: "ok", False: "OVER" if x.limit is not None else "NO", None: "?"}[x.ok],
            "tolerated": _fmt(x.tolerated_ppm), "confidence": x.confidence, "for": _purposes(x.purposes),
        } for x in r.residues]
        print_table(rows, [("substance", "solvent"), ("measured", "ppm in formula", ".4g"), ("rule", "rule"), ("in", "measured in"),
                           ("level", "level"), ("limit", "limit"), ("unit", "unit"), ("ok", "ok"),
                           ("tolerated", "tolerated ppm in formula"), ("confidence", "confidence"),
                           ("for", "rule allows it for")])
        for x in r.residues:
            if x.status in ("not allowed for this purpose", "no data") and x.note:
                print(f"  {x.note}")
    if r.claims:
        print("\nClaim rules (examples: verify with your certifier):")
        rows = [{
            "claim": c.claim, "substance": c.substance, "stage": c.stage, "level": _fmt(c.level_percent),
            "max": _fmt(c.max_percent), "ok": {True: "ok", False: "NO", None: "check"}[c.ok], "requirement": c.requirement,
        } for c in r.claims]
        print_table(rows, [("claim", "claim"), ("substance", "substance"), ("stage", "in"), ("level", "level %"),
                           ("max", "max %"), ("ok", "ok"), ("requirement", "requirement")])
    print()
    if r.max_dose is not None:
        unit = r.max_dose_unit
        shown = f"{r.max_dose * 100:.4g} %" if unit.endswith("fraction") else f"{r.max_dose:.4g} {unit}"
        b = r.binding
        print(f"Maximum dose: {shown} ({unit}) in '{r.stages[1].name}'"
              + (f" = {r.max_fraction_in_food * 100:.4g} % of the food as consumed" if r.max_fraction_in_food is not None else "")
              + f"; bound by {b.jurisdiction} {b.rule} on {b.substance} ({b.limit:g} {b.unit})")
        for p in r.per_ingredient:
            if p["max_dose"] is not None:
                v = f"{p['max_dose'] * 100:.4g} %" if unit.endswith("fraction") else f"{p['max_dose']:.4g} {unit}"
                print(f"  {p['name']}: {v} ({p['binding_rule']})")
    else:
        print("Maximum dose: no numeric limit of the table applies" + (" (or the first step is in parts)" if not r.steps[0].scalable else ""))
    broken = []
    n = sum(not c.ok for c in r.checks)
    if n:
        broken.append(f"{n} limit{'s' if n > 1 else ''} in the food exceeded")
    n = sum(x.ok is False and not x.reference_only for x in r.residues)
    if n:
        broken.append(f"{n} residue rule{'s' if n > 1 else ''} broken")
    n = sum(c.ok is False for c in r.claims)
    if n:
        broken.append(f"{n} claim ceiling{'s' if n > 1 else ''} exceeded")
    print("Result: " + ("; ".join(broken) if broken else "every limit with data is kept")
          + ("" if r.complete else "; some substances have no data (not a permission)"))
    if r.assumptions:
        print("\nAssumptions:")
        for a in r.assumptions:
            print(f"  - {a}")
