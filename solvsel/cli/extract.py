"""``solvsel extract``: which strength of a solvent pair and how cold, for a target and the solutes to keep out."""

from __future__ import annotations

from ..jobs.parse import parse_names
from ..rules.regulations import FOOD_JURISDICTIONS, bundled_purposes, describe_purposes
from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table
from ._target import add_target_arguments, target_fields

#: Request fields whose option is not ``--`` + the field's name.
OPTION_NAMES = {"rejects": "--reject", "temps_C": "--temps", "vacuum_kPa": "--vacuum", "finish_C": "--finish",
                "target": "--solute"}


def register(sub):
    p = sub.add_parser(
        "extract",
        help="extraction plan: which strength of a solvent pair and how cold",
        description="Over strengths of a solvent pair (ethanol in water by default, 40-100 %% v/v) and temperatures "
        "(-40 to 40 C): the target's distance and solubility estimate, each reject's, a selectivity figure, whether "
        "the mixture is liquid (published freezing points) and its viscosity, the legal status for the purpose; "
        "then the temperature at which each strength strips under a vacuum and the azeotrope. The best window in "
        "words; the whole grid with --json. Estimates for planning bench work.",
    )
    add_target_arguments(p)
    p.add_argument("--reject", metavar="NAMES",
                   help="solutes to keep out (comma-separated; default chlorophyll a, cetyl palmitate, sucrose)")
    p.add_argument("--liquids", metavar="A,B",
                   help="the solvent pair; the strength is %% v/v of A (default ethanol,water)")
    p.add_argument("--strengths", metavar="LO:HI:STEP", help="strengths in %% v/v of A (default 40:100:5; or a list)")
    p.add_argument("--temps", metavar="LO:HI:STEP", help="temperatures in C (default -40:40:5; or a list)")
    p.add_argument("--vacuum", type=float, metavar="KPA", help="absolute pressure when stripping, kPa (default 10)")
    p.add_argument("--finish", type=float, metavar="C",
                   help="temperature the extract is held at to finish stripping, C (default 60)")
    p.add_argument("--jurisdiction", choices=FOOD_JURISDICTIONS, help="food law for the legal status (default EU)")
    p.add_argument("--purpose", choices=tuple(bundled_purposes()), metavar="PURPOSE",
                   help="what the product is: " + describe_purposes())
    add_json_flag(p)
    return p


def request(args):
    """The :class:`~solvsel.jobs.extraction.ExtractionRequest` the options describe."""
    from ..jobs.extraction import ExtractionRequest

    given = {
        "rejects": parse_names(args.reject, "rejects") if args.reject is not None else None,
        "liquids": parse_names(args.liquids, "liquids") if args.liquids is not None else None,
        "strengths": args.strengths, "temps_C": args.temps, "vacuum_kPa": args.vacuum, "finish_C": args.finish,
        "jurisdiction": args.jurisdiction, "purpose": args.purpose,
    }
    return ExtractionRequest(**target_fields(args), **{k: v for k, v in given.items() if v is not None})


def _print_grid(result) -> None:
    """Selectivity (or Ra) by strength and temperature; frozen points marked."""
    key = "selectivity" if result.best and result.best["by"] == "selectivity" else "ra"
    print(f"{'selectivity (target / most soluble reject, g/L)' if key == 'selectivity' else 'Ra (MPa^0.5)'} "
          f"by strength (% v/v {result.liquids[0]}) and temperature (C); '-' frozen")
    temps = result.temps_C
    rows = []
    for i, s in enumerate(result.strengths):
        row = {"s": s, "fp": result.freezing_point_C[i], "flash": result.flash_point_C[i]}
        for j, t in enumerate(temps):
            v = result.grid[key][i][j]
            row[f"t{j}"] = "-" if not result.grid["liquid"][i][j] else ("n/a" if v is None else f"{v:.3g}")
        rows.append(row)
    cols = [("s", "%v/v", "g"), ("fp", "freezes C", ".0f"), ("flash", "flash C", ".0f")] + [(f"t{j}", f"{t:g}") for j, t in enumerate(temps)]
    print_table(rows, cols)


def run(args) -> int:
    from ..jobs.extraction import extraction

    result = extraction(request(args), catalog=get_catalog(args))
    if args.json:
        emit_json(result.to_dict())
        return 0
    t = result.target
    print(f"Target: {t.name} ({t.basis})  dD {t.dD:.1f}  dP {t.dP:.1f}  dH {t.dH:.1f}; keep out: "
          f"{', '.join(result.rejects) or 'nothing'}; solvent: {' in '.join(result.liquids)}\n")
    _print_grid(result)
    print(f"\nBest window: {result.window}")
    b = result.best
    if b:
        print(f"  there: target {b['target_g_L'] if b['target_g_L'] is None else format(b['target_g_L'], '.3g')} g/L "
              f"(estimate), Ra {b['ra']:.2f}, viscosity {b['viscosity_mPa_s'] or 'n/a'} mPa s")
    st = result.strip
    starts = ", ".join(f"{s:g} %: {'n/a' if c is None else format(c, '.1f')} C"
                       for s, c in zip(result.strengths, st["start_C"]))
    print(f"\nStripping at {st['vacuum_kPa']:g} kPa ({st['activity_model']}): starts to boil at {starts}")
    print(f"  {st['note']}")
    print("\nLegal status (extraction solvent):")
    for item in result.legal:
        limits = "; ".join(f"{r['rule']}: {r['limit'] if r['limit'] is not None else r['status']} {r['unit']}".strip()
                           for r in item["residue_limits"]) or "no residue rule in the tables"
        left = item["residue_bound_mg_kg"]
        left = "n/a" if left is None else f"at most {left:.3g} mg/kg"
        over = [r["rule"] for r in item["residue_limits"] if r["over"]]
        print(f"  {item['name']}: {item['status_text']}; residue rules: {limits}")
        print(f"    left in the extract at {st['finish_C']:g} C and {st['vacuum_kPa']:g} kPa (equilibrium): {left}"
              + (f": OVER {', '.join(over)}" if over else ""))
    print(f"\nHSP of a strength: {result.hsp_basis}")
    for n in result.notes:
        print(f"Note: {n}")
    print_cautions(result.cautions)
    return 0
