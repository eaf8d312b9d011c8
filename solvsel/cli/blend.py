"""``solvsel blend``: the best blends of up to four liquids for a target, under constraints."""

from __future__ import annotations

from ..jobs.parse import parse_amounts, parse_fraction_bound, parse_names, parse_range
from ..rules.regulations import FOOD_JURISDICTIONS, bundled_purposes, describe_purposes
from ._batch import add_batch_arguments, run_batch
from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table
from ._target import add_target_arguments, target_fields

#: Request fields whose option is not ``--`` + the field's name.
OPTION_NAMES = {
    "worst_flammable_category": "--worst-hazard",
    "rejects": "--reject",
    "one_phase_only": "--keep-two-phase",
    "target": "--solute",
    "storage_C": "--storage",
}


def register(sub):
    p = sub.add_parser(
        "blend",
        help="optimise blends of up to 4 solvents for a solute, with constraints and rejects",
        description=(
            "Find the blends of 1 to 4 liquids whose Hansen parameters come closest to the target, "
            "with the exact best volume fractions for every combination, under your constraints "
            "(use, jurisdiction, hazard, boiling and flash points, fraction bounds, cost). Blends that "
            "would split into two phases are dropped, and the reason is shown. With --reject, blends are "
            "ranked by how well they keep those solutes out while dissolving the target (a Pareto trade-off)."
        ),
    )
    add_target_arguments(p)
    g = p.add_argument_group("pool and constraints")
    g.add_argument("--max-components", type=int, default=3, metavar="N", help="largest blend, 1 to 4 (default 3)")
    g.add_argument("--only", metavar="NAMES", help="search only these liquids (comma-separated names or CAS)")
    g.add_argument("--exclude", metavar="NAMES", help="leave these liquids out (comma-separated)")
    g.add_argument("--use", choices=("carrier", "extraction", "bench"),
                   help="intended use: keeps liquids listed for it (and, with --jurisdiction, permitted for it)")
    g.add_argument("--jurisdiction", choices=FOOD_JURISDICTIONS,
                   help="leave out liquids the bundled food-law table does not permit for the use there")
    g.add_argument("--purpose", choices=tuple(bundled_purposes()), metavar="PURPOSE",
                   help="what the product is; only liquids a rule allows for it are kept: " + describe_purposes())
    g.add_argument("--food", action="store_true",
                   help="only liquids whose food status for the use is permitted or conditional (in EU or US)")
    g.add_argument("--fraction", metavar="BOUND", action="append", default=[],
                   help="volume-fraction bound on a liquid, e.g. \"ethanol<=0.3\", \"water>=0.1\" (the liquid is then "
                   "in every blend), \"0.2<=triacetin<=0.6\"; repeat for several")
    g.add_argument("--worst-hazard", metavar="CAT", choices=("1", "2", "3", "4", "none"),
                   help="most hazardous GHS flammable-liquid category allowed: 1..4, or 'none' for non-flammable "
                   "liquids only (e.g. 2 leaves out category 1 liquids and flammable gases)")
    g.add_argument("--bp-range", metavar="LO:HI",
                   help="normal boiling point window in C for every liquid, e.g. 40:100, :120 or 150:")
    g.add_argument("--min-flash", type=float, metavar="C", help="lowest closed-cup flash point allowed in C")
    g.add_argument("--max-cost", type=int, metavar="CLASS", help="dearest cost class allowed (1 cheap .. 5 dear)")
    g.add_argument("--max-health-hazard", metavar="LEVEL",
                   help="worst health hazard allowed for every liquid: none, irritant, harmful, 'toxic or "
                   "corrosive', 'suspected CMR' or CMR (or 0 to 5)")
    g.add_argument("--temp", type=float, default=25.0, metavar="C",
                   help="temperature in C; the liquids' HSP are shifted to it (default 25)")
    g.add_argument("--min-fraction", type=float, default=0.05, metavar="F",
                   help="smallest volume fraction that counts as a component (default 0.05); blends with less "
                   "of a liquid are the same as a smaller blend")
    d = p.add_argument_group("dose limits (flavour carriers)")
    d.add_argument("--dose", metavar="DOSE",
                   help="dose of the blend in the food, e.g. 0.15%% or 1500ppm; with --jurisdiction and --category, "
                   "blends over a carrier limit of the food as consumed are dropped")
    d.add_argument("--category", metavar="FOOD", help="food category of the food as consumed (solvsel table food_categories)")
    d.add_argument("--chain", metavar="CHAIN", help="dilution chain from the blend to the food as consumed")
    d.add_argument("--already", metavar="NAME=MG_PER_KG,...",
                   help="what other ingredients already bring to the food as consumed [mg/kg]")
    d.add_argument("--keep-over", action="store_true", help="list blends over a limit too (flagged) instead of dropping them")
    d.add_argument("--load", metavar="LOAD", help="the solute's load in the blend, e.g. 2%%: blends that cannot carry "
                   "it over the storage range are marked with their largest load")
    d.add_argument("--storage", metavar="LO:HI", help="storage range of the load check in C (default 4:25)")
    d.add_argument("--drop-over-load", action="store_true", help="leave out the blends that cannot carry the load")
    r = p.add_argument_group("selectivity")
    r.add_argument("--reject", metavar="NAMES", action="append", default=[],
                   help="solutes to keep out of solution (comma-separated names of the solutes table)")
    r.add_argument("--reject-hsp", metavar="dD,dP,dH[,R0]", action="append", default=[],
                   help="a solute to reject given by its Hansen parameters (and radius); repeat for several")
    o = p.add_argument_group("output")
    o.add_argument("--sort", choices=("fit", "selectivity", "cost"),
                   help="ranking: fit (Ra, the default), selectivity (the default with rejects), cost")
    o.add_argument("--keep-two-phase", action="store_true",
                   help="list blends that split into two phases too (marked), instead of dropping them")
    o.add_argument("--top", type=int, metavar="N", help="number of blends shown (default 10; 5 a target with --targets)")
    add_batch_arguments(p)
    add_json_flag(p)
    return p


def request(args):
    """The :class:`~solvsel.jobs.blend.BlendRequest` the options describe."""
    from ..jobs.blend import BlendRequest

    return BlendRequest(**target_fields(args), **request_fields(args))


def request_fields(args) -> dict:
    """The request fields of the options other than the target (``top`` only where given)."""
    bp_lo, bp_hi = parse_range(args.bp_range, "bp_min_C")
    return dict(
        max_components=args.max_components,
        only=parse_names(args.only, "only") if args.only is not None else None,
        exclude=parse_names(args.exclude, "exclude") if args.exclude else (),
        use=args.use, food=args.food, jurisdiction=args.jurisdiction, purpose=args.purpose,
        worst_flammable_category=args.worst_hazard,
        bp_min_C=bp_lo, bp_max_C=bp_hi, min_flash_C=args.min_flash, max_cost=args.max_cost,
        max_health_hazard=args.max_health_hazard,
        bounds=tuple(parse_fraction_bound(b, "bounds") for b in args.fraction),
        temp_C=args.temp,
        rejects=tuple(n for text in args.reject for n in parse_names(text, "rejects")),
        reject_hsp=tuple(args.reject_hsp),
        sort=args.sort, one_phase_only=not args.keep_two_phase, min_fraction=args.min_fraction,
        dose=args.dose, category=args.category, chain=args.chain,
        already=tuple(parse_amounts(args.already, "already")) if args.already else None,
        keep_over=args.keep_over, **({} if args.top is None else {"top": args.top}),
        load=args.load, drop_over_load=args.drop_over_load, **({} if args.storage is None else {"storage_C": args.storage}),
    )


def _short_hazard(b) -> str:
    import re

    h = b.hazard
    m = re.search(r"category (\d)", h)
    if m:
        return f"cat {m.group(1)}"
    if h.startswith("not flammable"):
        return "no"
    if h.startswith("gas under pressure"):
        return "no (gas)"
    if h.startswith("flammable gas"):
        return "gas, cat 1"
    return "yes, cat ?"


def _phase_text(b) -> str:
    if len(b.components) == 1:
        return "-"
    if b.one_phase is None:
        return "?"
    return ("yes" if b.one_phase else "NO") + (" (m)" if b.phase_basis == "measured" else " (p)" if b.phase_basis == "predicted" else "")


def _row(b, rejects: bool) -> dict:
    """One blend as a row of the text table."""
    row = {
        "rank": b.rank,
        "blend": b.label + (" *" if b.pareto and rejects else "") + (f" (+{len(b.alternatives)} alike)"
                                                                     if b.alternatives else ""),
        "mass": " / ".join("-" if x.mass_fraction is None else f"{x.mass_fraction:.2f}" for x in b.components),
        "ra": b.ra, "red": b.red,
        "phase": _phase_text(b),
        "bp": ("-" if b.bp_min_C is None else (f"{b.bp_min_C:g}" if b.bp_min_C == b.bp_max_C
                                               else f"{b.bp_min_C:g} to {b.bp_max_C:g}"))
        + ("" if b.bp_complete else " (+?)"),
        "flash": b.lowest_flash_C,
        "hazard": _short_hazard(b),
        "cost": b.cost,
    }
    if rejects:
        row["near"] = b.worst_reject_red if b.worst_reject_red is not None else b.worst_reject_ra
        row["sel"] = b.selectivity
    if b.solubility:
        row["sol"] = b.solubility.get("g_per_L")
    if b.dose_check:
        dc = b.dose_check
        row["dose"] = "no data" if dc["ok"] is None else ("ok" if dc["ok"] else "OVER")
        if dc.get("max_dose") is not None and dc.get("max_dose_unit") == "mass fraction":
            row["dose"] += f", max {100 * dc['max_dose']:.3g}%"
    return row


def _print_blends(res, file) -> None:
    """The table of the blends shown, its key, and the blends folded into them."""
    rejects = bool(res.results[0].rejects)
    rows = [_row(b, rejects) for b in res.results]
    for i, row in enumerate(rows):
        row["health"] = res.health[i]["category"] if i < len(res.health) else ""
        row["sure"] = res.sure[i]["verdict"] if i < len(res.sure) else ""
    cols = [("rank", "#"), ("blend", "blend (volume fractions)"), ("mass", "mass fr."),
            ("ra", "Ra", ".2f"), ("red", "RED", ".2f"), ("phase", "1 phase"), ("bp", "bp C"),
            ("flash", "flash C", ".0f"), ("hazard", "flammable"), ("health", "health"), ("cost", "cost", ".1f"),
            ("sure", "how sure")]
    basis = res.results[0].selectivity_basis
    if rejects:
        cols += [("near", "reject " + ("RED" if basis == "RED" else "Ra"), ".2f"), ("sel", "margin", ".2f")]
    if any("sol" in r for r in rows):
        cols.append(("sol", "sol. g/L", ".3g"))
    if any("dose" in r for r in rows):
        cols.append(("dose", "at dose"))
    print(file=file)
    print_table(rows, cols, file=file)
    notes = ["Ra, RED: distance to the target [MPa^0.5]; 1 phase: (m) measured pair data, (p) predicted, ? not checked; "
             "bp: normal boiling points of the components, (+?) some not on record; "
             "health: the worst health hazard of the liquids; "
             "cost: volume-weighted cost class (1 cheap .. 5 dear)."]
    if res.how_sure:
        notes.append(f"How sure: {res.how_sure['summary']}")
    if rejects:
        notes.append("reject: distance of the nearest reject solute; margin: how much further it is than the target "
                     f"(in {basis}); * on the Pareto front (fit, reject distance, cost, hazard, components).")
    notes += [f"#{b.rank}: {n}" for b in res.results for n in b.notes]
    for n in notes:
        print("  " + n, file=file)
    alike = [b for b in res.results if b.alternatives]
    if alike:
        print("\nThe same blend with a liquid of the same HSP in place (one answer of the model; cost, hazard and "
              "food-law status may differ):", file=file)
        for b in alike:
            print(f"  #{b.rank}: also with {', '.join(b.swapped_in)}", file=file)


def _print_front_and_law(res, file) -> None:
    """More of the trade-off front (with rejects), and the food-law status of the liquids shown."""
    shown = {b.names for b in res.results}
    extra = [b for b in res.pareto if b.names not in shown]
    if res.results[0].rejects and extra:
        print(f"\nAlso on the trade-off front ({len(extra)} more; see --json):", file=file)
        for b in extra[:5]:
            near = b.worst_reject_red if b.worst_reject_red is not None else b.worst_reject_ra
            print(f"  {b.label}: Ra {b.ra:.2f}, nearest reject {near:.2f}, cost {b.cost or 0:.1f}, "
                  f"{_short_hazard(b)}", file=file)
    regs = {}
    for b in res.results:
        for rg in b.regulations:
            regs.setdefault(rg["name"], rg)
    if regs:
        print("\nFood-law status of the liquids shown (bundled table; check the regulations in force):", file=file)
        for name, rg in regs.items():
            line = f"  {name}: {rg.get('status_text', rg['status'])}"
            if rg.get("conditions"):
                line += " - " + "; ".join(rg["conditions"][:2]) + (" ..." if len(rg["conditions"]) > 2 else "")
            print(line, file=file)


def _print_left_out(res, file) -> None:
    """The blends dropped by a check and the liquids the pool left out, with their reasons."""
    c = res.counts
    dropped_n = c.get("two_phase", 0)
    if res.dropped or dropped_n or c.get("bounds_not_met") or c.get("same_as_smaller_blend"):
        over = f"{c['over_limit']} over a dose limit; " if c.get("over_limit") else ""
        print(f"\nDropped: {dropped_n} of the {c['combinations']} combinations split into two phases; {over}"
              f"{c['bounds_not_met']} cannot meet the fraction bounds; {c['same_as_smaller_blend']} are the same "
              f"as a smaller blend (a liquid under the minimum fraction).", file=file)
        for d in res.dropped[:5]:
            label = " + ".join(f"{n} {x:.2f}" for n, x in zip(d.names, d.volume_fractions))
            reason = d.reason if len(d.reason) <= 150 else d.reason[:147] + "..."
            print(f"  {label} (Ra {d.ra:.2f}): {reason}", file=file)
        if len(res.dropped) > 5:
            print(f"  ... {len(res.dropped) - 5} more (see --json)", file=file)
    if res.excluded:
        reasons = {}
        for e in res.excluded:
            key = "not listed for that use" if e.filter == "use" else e.brief
            reasons.setdefault(key, []).append(e.name)
        print(f"\nLeft out of the pool: {len(res.excluded)} liquids", file=file)
        for key, names in list(reasons.items())[:8]:
            shown = ", ".join(names[:6]) + (f" and {len(names) - 6} more" if len(names) > 6 else "")
            print(f"  {key}: {shown}", file=file)


def print_search(res, file=None) -> None:
    """The text form of a :class:`~solvsel.jobs.blend.BlendResult`."""
    import sys

    file = file or sys.stdout
    t = res.target
    r0 = f", R0 {t['r0']:g}" if t.get("r0") else " (no R0: RED not given)"
    print(f"Target: {t['name']}  dD {t['dD']:.1f}  dP {t['dP']:.1f}  dH {t['dH']:.1f}{r0}  at {t['temp_C']:g} C",
          file=file)
    c = res.counts
    print(f"Pool: {c['liquids']} liquids ({c['excluded_liquids']} left out); {c['combinations']} combinations "
          f"searched with exact fractions", file=file)
    if not res.results:
        print(f"\nNo blend found: {res.message}", file=file)
    else:
        _print_blends(res, file)
        _print_front_and_law(res, file)
    _print_left_out(res, file)
    cautions = [x for b in res.results[:3] for x in b.cautions] + list(res.cautions)
    print_cautions(cautions, file=file)


def run(args) -> int:
    from ..jobs.blend import blend

    if args.targets:
        return run_batch(args, "blend", request_fields(args))
    res = blend(request(args), catalog=get_catalog(args))
    if args.json:
        emit_json(res.to_dict())
    else:
        print_search(res)
    return 0
