"""``solvsel emulsion``: weighting, density match, creaming and legal checks of a beverage emulsion."""

from __future__ import annotations

import sys

from ..jobs.parse import parse_amounts, parse_fraction, parse_names
from ..rules.regulations import FOOD_JURISDICTIONS, bundled_purposes, describe_purposes
from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table


def register(sub):
    p = sub.add_parser(
        "emulsion",
        help="weighting, density match, creaming and legal checks for a beverage emulsion",
        description=(
            "For an oil phase (flavour oils and weighting agents) in a drink of given sugar content or density: "
            "the oil phase's density, the weighting agent that would match the drink and whether it stays under "
            "the legal maximum in the finished drink after the concentrate's dilution (and which pair of agents "
            "fits when one alone would not), the Stokes creaming rate for a droplet size or a size distribution, "
            "the largest droplet for a shelf life, and a warning for oils prone to Ostwald ripening. "
            "Exits with 2 when a weighting agent in the oil phase is over a legal maximum."
        ),
    )
    p.add_argument("--oil", required=True, metavar="NAME=AMOUNT,...",
                   help='oil phase, e.g. "d-limonene=70,sucrose acetate isobutyrate=30" (percent or fractions)')
    d = p.add_mutually_exclusive_group(required=True)
    d.add_argument("--brix", type=float, metavar="BX", help="sugar content of the finished drink, degrees Brix (sucrose)")
    d.add_argument("--density", type=float, metavar="G_CM3", help="density of the finished drink in g/cm3")
    p.add_argument("--dilution", type=float, metavar="D",
                   help="parts of finished drink made from one part of concentrate (by mass), e.g. 500")
    p.add_argument("--oil-phase", default="10%", metavar="PCT",
                   help="oil phase in the emulsion concentrate, e.g. 12%% or 0.12 (default 10%%)")
    p.add_argument("--droplet-um", type=float, metavar="UM", help="droplet diameter in um (e.g. the mean size)")
    p.add_argument("--sizes", metavar="UM=VOL,...",
                   help='droplet size distribution: diameter in um = volume share, e.g. "0.3=85,0.8=10,1.5=5"')
    p.add_argument("--viscosity", type=float, default=None, metavar="MPA_S",
                   help="viscosity of the drink in mPa s (default: a sucrose solution of the drink's Brix at --temp, "
                   "from the bundled table; water when only --density is given)")
    p.add_argument("--temp", type=float, default=20.0, metavar="C",
                   help="storage temperature of the drink for its viscosity, 0-60 C (default 20)")
    p.add_argument("--concentrate-viscosity", type=float, default=None, metavar="MPA_S",
                   help="measured viscosity of the emulsion concentrate in mPa s: judges creaming in the concentrate")
    p.add_argument("--height-mm", type=float, default=100.0, metavar="MM",
                   help="liquid height the droplets must not cross in the shelf life (default 100 mm)")
    p.add_argument("--shelf-days", type=float, default=180.0, metavar="DAYS", help="target shelf life in days (default 180)")
    p.add_argument("--jurisdiction", default="US,EU", metavar="J,...",
                   help=f"jurisdictions to check: {', '.join(FOOD_JURISDICTIONS)} (default US,EU)")
    p.add_argument("--purpose", choices=tuple(bundled_purposes()), metavar="PURPOSE",
                   help="what the product is; an agent or emulsifier is legal only where a rule allows it for that "
                   "purpose: " + describe_purposes())
    p.add_argument("--category", default="flavoured drinks", metavar="FOOD",
                   help="food category of the finished drink (solvsel table food_categories; default flavoured drinks)")
    p.add_argument("--oil-density", metavar="NAME=G_CM3,...", help="densities for oils with none on record")
    p.add_argument("--nano", action="store_true", help="the emulsion is a nanoemulsion (stricter ripening warning)")
    p.add_argument("--emulsifier", metavar="NAME",
                   help="emulsifier of the concentrate (e.g. gum arabic): its amount from the usual use ratio to oil, "
                   "and its level in the drink checked against the limits on record")
    p.add_argument("--emulsifier-ratio", type=float, metavar="G_PER_G",
                   help="grams of emulsifier per gram of oil phase (default: the table's usual ratio)")
    add_json_flag(p)
    return p


#: Request fields whose option is not ``--`` + the field with dashes.
OPTION_NAMES = {"jurisdictions": "--jurisdiction", "viscosity_mPa_s": "--viscosity", "temp_C": "--temp",
                "concentrate_viscosity_mPa_s": "--concentrate-viscosity"}


def request_from_args(args):
    """The :class:`~solvsel.jobs.emulsion.EmulsionRequest` the options ask for."""
    from ..jobs.emulsion import EmulsionRequest

    return EmulsionRequest(
        oil=parse_amounts(args.oil, "oil"), brix=args.brix, density=args.density, dilution=args.dilution,
        oil_phase=parse_fraction(args.oil_phase, "oil_phase"), droplet_um=args.droplet_um,
        sizes=parse_amounts(args.sizes, "sizes") if args.sizes else None,
        viscosity_mPa_s=args.viscosity, temp_C=args.temp, concentrate_viscosity_mPa_s=args.concentrate_viscosity,
        height_mm=args.height_mm, shelf_days=args.shelf_days,
        jurisdictions=parse_names(args.jurisdiction, "jurisdictions"), category=args.category,
        oil_density=parse_amounts(args.oil_density, "oil_density") if args.oil_density else None, nano=args.nano,
        emulsifier=args.emulsifier, emulsifier_ratio=args.emulsifier_ratio, purpose=args.purpose,
    )


def run(args) -> int:
    from ..jobs.emulsion import emulsion

    res = emulsion(request_from_args(args), catalog=get_catalog(args))
    if args.json:
        emit_json(res.to_dict())
    else:
        _print(res)
    if not res.ok:
        for r in res.refusals:
            print(f"solvsel: over the legal maximum: {r}", file=sys.stderr)
        return 2
    return 0


def _print(r) -> None:
    print(f"Drink density: {r.beverage_density:.4f} g/cm3 ({r.beverage_density_basis})")
    print_table([c.to_dict() for c in r.oil_phase],
                [("name", "oil phase"), ("mass_fraction", "fraction", ".3f"), ("density", "g/cm3", ".3f"),
                 ("ripening", "ripening")])
    print(f"Oil phase density: {r.oil_phase_density:.4f} g/cm3; difference to the drink {r.density_difference:+.4f} g/cm3")
    if r.oil_in_drink_ppm is not None:
        print(f"Oil phase in the drink: {r.oil_in_drink_ppm:.4g} mg/kg ({r.oil_in_concentrate:.1%} of the concentrate, "
              f"1 part in {r.dilution:g})")
    else:
        print("Give --dilution to compute levels in the drink and check legal limits.")
    if r.agents:
        print("\nWeighting agents in the oil phase, in the finished drink:")
        print_table([a.to_dict() | {"verdict": "ok" if a.ok else "OVER"} for a in r.agents],
                    [("agent", "agent"), ("jurisdiction", "where"), ("level_ppm", "mg/kg", ".4g"),
                     ("limit_text", "legal maximum"), ("rule", "rule"), ("verdict", "")])
    print()
    if r.creaming_mm_per_day is not None:
        word = "cream" if r.creaming_mm_per_day >= 0 else "settle"
        print(f"Droplets of {r.droplet_diameter_um:g} um {word} at {abs(r.creaming_mm_per_day):.3g} mm/day "
              f"(viscosity {r.viscosity_mPa_s:.4g} mPa s, {r.viscosity_basis}): {r.time_to_cream_days:.4g} days to "
              f"cross {r.height_mm:g} mm")
    else:
        print(f"Drink viscosity: {r.viscosity_mPa_s:.4g} mPa s ({r.viscosity_basis})")
    print(f"Largest droplet that crosses less than {r.height_mm:g} mm in {r.shelf_days:g} days: {r.max_droplet_um:.3g} um")
    if r.distribution is not None:
        dd = r.distribution
        print(f"Size distribution: volume-weighted mean rate {dd.mean_mm_per_day:.3g} mm/day; "
              f"{dd.fraction_creamed:.1%} of the oil is in droplets that cross {dd.height_mm:g} mm within {dd.shelf_days:g} days")
    for j, opts in r.weighting.items():
        if not opts:
            continue
        print(f"\nWeighting the flavour oil to the drink's density ({j}):")
        rows = [{"agents": " + ".join(o.agents) or "none needed",
                 "pct": " + ".join(f"{x:.1%}" for x in o.fractions),
                 "ppm": " + ".join(f"{x:.4g}" for x in o.levels_ppm),
                 "lim": " / ".join("-" if x is None else f"{x:.4g}" for x in o.limits_ppm),
                 "rho": o.density,
                 "ok": ("matched" if o.matched else "partial") + ("" if o.legal else ", OVER")} for o in opts]
        print_table(rows, [("agents", "agent(s)"), ("pct", "in oil phase"), ("ppm", "mg/kg in drink"),
                           ("lim", "limit mg/kg"), ("rho", "oil g/cm3", ".4f"), ("ok", "")])
        for msg in r.weighting_excluded.get(j, []):
            print(f"  left out: {msg}")
    if r.concentrate_viscosity_mPa_s is not None:
        line = (f"In the concentrate ({r.concentrate_viscosity_mPa_s:g} mPa s, water phase "
                f"{r.concentrate_water_phase_density:.4f} g/cm3): ")
        if r.concentrate_creaming_mm_per_day is not None:
            line += f"droplets cream at {abs(r.concentrate_creaming_mm_per_day):.3g} mm/day; "
        print(line + f"largest droplet that stays put {r.concentrate_max_droplet_um:.3g} um")
    if r.emulsifier is not None:
        e = r.emulsifier
        usual = "" if e.usual_ratio is None else f"; usual {e.usual_ratio[0]:g}-{e.usual_ratio[1]:g} g/g"
        print(f"\nEmulsifier: {e.name} at {e.ratio_to_oil:g} g per g of oil phase ({e.ratio_basis}{usual}), "
              f"{e.in_concentrate:.1%} of the concentrate")
        for c in r.emulsifier_checks:
            print(f"  {'ok  ' if c.ok else 'OVER'} {c.message}")
    print(f"\nOstwald ripening: {'WARNING' if r.ripening.warn else 'no warning'}: {r.ripening.reason}")
    if r.ripening.remedy:
        print(f"  remedy: {r.ripening.remedy}")
    print_cautions(r.cautions)
