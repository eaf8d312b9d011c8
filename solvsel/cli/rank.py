"""``solvsel rank``: single solvents ranked for a target, or the nearest liquids to one."""

from __future__ import annotations

from ..jobs.parse import parse_names, parse_range
from ..rules.regulations import FOOD_JURISDICTIONS, bundled_purposes, describe_purposes
from ._batch import add_batch_arguments, run_batch
from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table
from ._target import add_target_arguments, target_fields

#: Request fields whose option is not ``--`` + the field's name.
OPTION_NAMES = {
    "require_solubility": "--solubility",
    "worst_flammable_category": "--worst-hazard",
    "target": "--solute",
    "storage_C": "--storage",
}


def register(sub):
    p = sub.add_parser(
        "rank",
        help="rank single solvents for a solute (or find substitutes for a liquid)",
        description="Rank every liquid of the table (or a pool) by its Hansen distance Ra, and RED = Ra/R0 "
        "where the target has a radius, with the estimated solubility where the solute has fusion data, "
        "boiling and flash point, food status and the cautions that apply. With --like NAME, list the "
        "liquids nearest to NAME in Hansen space instead (substitutes). Estimates for planning bench work.",
    )
    group = add_target_arguments(p)
    group.add_argument("--like", metavar="NAME", help="find the liquids nearest to this liquid (substitutes)")
    p.add_argument("--food", action="store_true", help="only liquids whose food status for the use is permitted or conditional")
    p.add_argument("--use", choices=("carrier", "extraction", "bench"), default=None, help="intended use (default carrier)")
    p.add_argument("--jurisdiction", choices=FOOD_JURISDICTIONS,
                   help="food law to apply (default: the most permissive of " + ", ".join(FOOD_JURISDICTIONS) + ")")
    p.add_argument("--purpose", choices=tuple(bundled_purposes()), metavar="PURPOSE",
                   help="what the product is; only liquids a rule allows for it are kept: " + describe_purposes())
    p.add_argument("--only", metavar="NAMES", help="rank only these liquids (comma-separated)")
    p.add_argument("--exclude", metavar="NAMES", help="leave these liquids out (comma-separated)")
    p.add_argument("--worst-hazard", metavar="CAT", choices=("1", "2", "3", "4", "none"),
                   help="most hazardous GHS flammable-liquid category allowed: 1..4, or 'none' for non-flammable "
                   "liquids only")
    p.add_argument("--top", type=int, metavar="N", help="show the best N (default 15; 5 a target with --targets)")
    p.add_argument("--all", action="store_true", help="show every ranked liquid")
    p.add_argument("--temp", type=float, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--bp-range", metavar="LO:HI",
                   help="boiling-point window in C, e.g. 40:100 for a solvent to strip, 150: for one that must stay")
    p.add_argument("--min-flash", type=float, metavar="C", help="lowest closed-cup flash point allowed in C")
    p.add_argument("--max-cost", type=int, metavar="CLASS", help="dearest cost class allowed (1 cheap .. 5 dear)")
    p.add_argument("--max-health-hazard", metavar="LEVEL",
                   help="worst health hazard allowed: none, irritant, harmful, 'toxic or corrosive', "
                   "'suspected CMR' or CMR (or 0 to 5)")
    p.add_argument("--dose", metavar="DOSE", help="dose of the flavour in the food, e.g. 0.15%% (needs --category and --jurisdiction)")
    p.add_argument("--category", metavar="CATEGORY", help="food category for the dose check (see: solvsel table food_categories)")
    p.add_argument("--chain", metavar="CHAIN", help="dilution chain from the flavour to the food as consumed")
    p.add_argument("--solubility", action="store_true",
                   help="require the solubility estimate (error if the solute has no fusion data)")
    p.add_argument("--keep-over", action="store_true", help="keep carriers that break a limit at the dose (flagged) instead of dropping them")
    p.add_argument("--load", metavar="LOAD", help="the solute's load in the carrier, e.g. 2%%: liquids that cannot "
                   "carry it over the storage range are marked with their largest load")
    p.add_argument("--storage", metavar="LO:HI", help="storage range of the load check in C (default 4:25)")
    p.add_argument("--drop-over-load", action="store_true", help="leave out the liquids that cannot carry the load")
    add_batch_arguments(p)
    add_json_flag(p)
    return p


def request(args):
    """The :class:`~solvsel.jobs.rank.RankRequest` the options describe."""
    from ..jobs.rank import RankRequest

    return RankRequest(**target_fields(args), like=args.like, **request_fields(args))


def request_fields(args) -> dict:
    """The request fields of the options other than the target (``top`` only where given)."""
    bp_lo, bp_hi = parse_range(args.bp_range, "bp_min_C")
    return dict(
        only=parse_names(args.only, "only") if args.only is not None else None,
        exclude=parse_names(args.exclude, "exclude") if args.exclude else (),
        use=args.use, food=args.food, jurisdiction=args.jurisdiction, purpose=args.purpose,
        worst_flammable_category=args.worst_hazard,
        bp_min_C=bp_lo, bp_max_C=bp_hi, min_flash_C=args.min_flash, max_cost=args.max_cost,
        max_health_hazard=args.max_health_hazard, temp_C=args.temp, all=args.all,
        dose=args.dose, category=args.category, chain=args.chain, keep_over=args.keep_over,
        load=args.load, drop_over_load=args.drop_over_load, **({} if args.storage is None else {"storage_C": args.storage}),
        require_solubility=args.solubility, **({} if args.top is None else {"top": args.top}),
    )


def _fmt_sol(r):
    s = r.solubility
    if not s:
        return None
    return s["g_per_L"]


def run(args) -> int:
    from ..jobs.rank import rank

    if args.targets:
        return run_batch(args, "rank", request_fields(args))
    result = rank(request(args), catalog=get_catalog(args))
    if args.json:
        emit_json(result.to_dict())
        return 0
    t = result.target
    head = f"Target: {t.name} ({t.basis})  dD {t.dD:.1f}  dP {t.dP:.1f}  dH {t.dH:.1f}"
    head += f"  R0 {t.r0:.1f}" if t.r0 else "  R0 unknown"
    head += f"   at {result.temp_C:g} C"
    print(head)
    print()
    rows = []
    for i, r in enumerate(result.results, 1):
        flag = []
        if r.dose and not r.dose["ok"]:
            flag.append("OVER LIMIT")
        if r.origin.startswith("user"):
            flag.append("yours")
        rows.append({
            "n": i, "name": r.name, "ra": r.ra, "red": r.red, "sol": _fmt_sol(r),
            "bp": r.bp_C, "flash": r.flash_C, "hazard": r.hazard_code or "", "food": r.food_status or "-",
            "health": (r.health_hazard or {}).get("label", "not on record"),
            "sure": (r.how_sure or {}).get("verdict", ""),
            "flag": ", ".join(flag + list(r.notes)),
        })
    cols = [("n", "#"), ("name", "liquid"), ("ra", "Ra", ".2f")]
    if t.r0:
        cols.append(("red", "RED", ".2f"))
    if any(r.solubility for r in result.results):
        cols.append(("sol", "est. g/L", ".3g"))
    cols += [("bp", "bp C", ".1f"), ("flash", "flash C", ".0f"), ("hazard", "GHS"), ("health", "health hazard"),
             ("food", "food status"), ("sure", "how sure"), ("flag", "notes")]
    if rows:
        print_table(rows, cols)
    else:
        print("No liquid is left after the filters.")
    if result.dropped:
        print(f"\nLeft out: {len(result.dropped)} liquid(s)", end="")
        shown = result.dropped[:5]
        print(": " + "; ".join(f"{d.name} ({d.brief})" for d in shown) + (" ..." if len(result.dropped) > 5 else ""))
    for n in result.notes:
        print(f"Note: {n}")
    if result.how_sure:
        print(f"How sure: {result.how_sure['summary']}")
    print_cautions(result.cautions)
    return 0
