"""``solvsel dissolves``: does a solute stay dissolved at a load in a liquid or blend over a storage range?"""

from __future__ import annotations

from ..jobs.parse import parse_fractions, parse_names
from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table

#: Request fields whose option is not ``--`` + the field's name.
OPTION_NAMES = {"storage_C": "--storage", "solute": "SOLUTE", "carrier": "--in"}


def register(sub):
    p = sub.add_parser(
        "dissolves",
        help="does a solute stay in one phase at a load in a liquid or blend (over a storage range)",
        description="For a liquid solute (an oil, a terpene) or a solid, in one liquid or a blend, at a load (mass "
        "fraction) and over a storage range (default 4 to 25 C): yes / no / borderline, what the answer rests on "
        "(a measured pair, the Flory-Huggins binodal, or the solid's solubility estimate) and the largest load "
        "that stays one phase over the whole range.",
    )
    p.add_argument("solute", metavar="SOLUTE", help="a liquid of the solvents table or a solute of the solutes table")
    p.add_argument("--in", dest="carrier", metavar="LIQUIDS", required=True,
                   help="the liquid, or the liquids of a blend (comma-separated)")
    p.add_argument("--fractions", metavar="F1,F2,...", help="volume fractions of a blend (summing to 1, or percents)")
    p.add_argument("--load", required=True, metavar="LOAD", help="mass fraction of the solute, e.g. 2%% or 0.02")
    p.add_argument("--storage", metavar="LO:HI", help="storage range in C (default 4:25)")
    add_json_flag(p)
    return p


def request(args):
    """The :class:`~solvsel.jobs.load.LoadRequest` the options describe."""
    from ..jobs.load import LoadRequest

    carrier = parse_names(args.carrier, "carrier")
    given = {"fractions": parse_fractions(args.fractions, len(carrier)) if args.fractions else None,
             "storage_C": args.storage}
    return LoadRequest(solute=args.solute, carrier=tuple(carrier), load=args.load,
                       **{k: v for k, v in given.items() if v is not None})


def run(args) -> int:
    from ..jobs.load import load

    result = load(request(args), catalog=get_catalog(args))
    if args.json:
        emit_json(result.to_dict())
        return 0
    c = result.check
    carrier = " + ".join(f"{n} {f:.0%}" if len(c.carrier) > 1 else n for n, f in zip(c.carrier, c.fractions))
    print(f"{c.solute} at {100 * c.load:g} % by mass in {carrier}, stored at {c.temps_C[0]:g} to {c.temps_C[1]:g} C\n")
    print(f"Verdict: {c.verdict.upper()}   ({c.basis})")
    largest = "not known" if c.largest_load is None else f"{100 * c.largest_load:.3g} % by mass"
    print(f"Largest load that stays one phase over the range: {largest}")
    print(f"  {c.reason}\n")
    rows, last = [], None
    for p in c.points:  # a note is shown where it changes
        rows.append({"t": p.temp_C, "max": None if p.largest_load is None else 100 * p.largest_load,
                     "basis": p.basis, "note": "" if p.note == last else p.note})
        last = p.note
    print_table(rows, [("t", "C", "g"), ("max", "largest load %", ".3g"), ("basis", "basis"), ("note", "note")])
    for n in result.notes:
        print(f"Note: {n}")
    print_cautions(result.cautions)
    return 0
