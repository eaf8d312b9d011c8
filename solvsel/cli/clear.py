"""``solvsel clear``: will the drink stay clear with this flavour at this dose?

Examples::

    solvsel clear --formula "ethanol=60,d-limonene=2,water=38" --dose 0.1%
    solvsel clear --formula examples/formula_citrus_cloud.csv --chain "syrup 1% d=1.28; drink 1+5v d=1.04" \\
        --brix 10.5 --temp 4 --json
"""

from __future__ import annotations

from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table

#: Request fields given otherwise than as --field.
OPTION_NAMES = {"temp_C": "--temp"}


def register(subparsers):
    p = subparsers.add_parser(
        "clear",
        help="will the drink stay clear: each oil-soluble flavour component against its solubility in the drink",
        description=(
            "A flavour dosed through its dilution chain into a finished drink: for each oil-soluble component on "
            "record, its level in the drink against its solubility in the drink's water phase, with the co-solvents "
            "the flavour brings (ethanol, propylene glycol, glycerol) by the log-linear cosolvency model; a verdict "
            "(clear, haze risk, separates), the largest clear dose, and the ways out with their numbers (less of the "
            "component, a solubiliser, or an emulsion of the oil phase). Chain and amounts as for 'dose'."
        ),
    )
    p.add_argument("--formula", required=True, metavar="A=60,B=2|FILE.csv",
                   help="components in percent (NAME=PERCENT,...), or a CSV with columns name, mass_percent "
                        "(or volume_percent), optional cas and density_g_cm3")
    p.add_argument("--by", choices=("mass", "volume"), default="mass",
                   help="whether the --formula percentages are by mass (default) or by volume")
    p.add_argument("--dose", metavar="AMOUNT", help="dose of the flavour in the first stage, e.g. 0.1%%, 1000ppm, 1g/L")
    p.add_argument("--chain", metavar="STEPS",
                   help="dilution chain as for 'dose' (e.g. \"syrup 1%% d=1.28; drink 1+5v d=1.04\"); without it "
                        "the dose goes straight into the drink")
    p.add_argument("--brix", type=float, default=0.0, metavar="BX",
                   help="sugar content of the finished drink, degrees Brix (default 0: a plain water phase)")
    p.add_argument("--temp", type=float, default=20.0, metavar="C", help="storage temperature of the drink (default 20 C)")
    p.add_argument("--formula-density", type=float, metavar="G_CM3", help="density of the flavour [g/cm3]")
    add_json_flag(p)
    return p


def request(args):
    """The :class:`~solvsel.jobs.clarity.ClarityRequest` the options ask for."""
    from ..jobs.clarity import ClarityRequest

    return ClarityRequest(formula=args.formula, by=args.by, dose=args.dose, chain=args.chain, brix=args.brix,
                          temp_C=args.temp, formula_density=args.formula_density)


def run(args) -> int:
    from ..jobs.clarity import clarity

    result = clarity(request(args), catalog=get_catalog(args))
    if args.json:
        emit_json(result.to_dict())
        return 0
    _print(result)
    return 0


def _print(r) -> None:
    last = r.stages[-1]
    print(f"Flavour '{r.formula.name}' in '{last.name}' at {last.fraction_of_formula * 100:.4g} % "
          f"({r.request.brix:g} Brix, {r.request.temp_C:g} C)")
    for c in r.cosolvents:
        print(f"  co-solvent {c['name']}: {c['mg_per_kg']:.4g} mg/kg, {c['volume_fraction']:.3%} of the water phase")
    rows = [{"name": c.name, "level": c.level_mg_kg, "water": c.water_solubility_mg_L, "sol": c.solubility_mg_kg,
             "ratio": c.ratio, "verdict": c.verdict,
             "dose": "-" if c.largest_clear_dose is None else f"{c.largest_clear_dose:.4g}"} for c in r.components]
    if rows:
        print_table(rows, [("name", "component"), ("level", "mg/kg in drink", ".4g"),
                           ("water", "in water mg/L", ".4g"), ("sol", "soluble mg/kg", ".4g"),
                           ("ratio", "level/soluble", ".3g"), ("verdict", "verdict"),
                           ("dose", f"largest clear dose ({r.dose_unit})")])
    for n in r.not_judged:
        print(f"  {n['name']}: {n['reason']}")
    print(f"\nVerdict: {r.verdict}" + ("" if r.largest_clear_dose is None else
                                     f"; largest clear dose {r.largest_clear_dose:.4g} ({r.dose_unit})"))
    for c in r.components:
        for w in c.ways_out:
            print(f"  {c.name}, {w['way']}: {w['text']}")
    if r.notes:
        print()
        for n in r.notes:
            print(f"  {n}")
    print_cautions(r.cautions)
