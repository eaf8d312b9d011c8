"""``solvsel table NAME``: print any bundled table (with the user's overlay where given)."""

from __future__ import annotations

from ..jobs.parse import parse_names
from ._common import add_json_flag, emit_json, get_catalog, print_table

#: Request fields given otherwise than as --field.
OPTION_NAMES = {"name": "NAME"}


def register(sub):
    p = sub.add_parser(
        "table",
        help="print a bundled table (solvents, solutes, emulsifiers, oils, weighting_agents, regulations, sources ...)",
        description="Print one of the bundled tables with its own column names. "
        "Without NAME, list the tables.",
    )
    p.add_argument("name", nargs="?", help="table name, e.g. solvents, solutes, regulations, sources")
    p.add_argument("--columns", metavar="A,B,...", help="only these columns")
    p.add_argument("--width", type=int, default=38, metavar="N", help="cut text cells to N characters (text output; default 38)")
    add_json_flag(p)
    return p


def _columns(args, df) -> list[str]:
    """The columns asked for with --columns (all of them without it), each checked."""
    from ..errors import InputError

    cols = list(df.columns)
    if args.columns is None:
        return cols
    want = parse_names(args.columns, "columns")
    bad = [c for c in want if c not in cols]
    if bad:
        raise InputError(f"table '{args.name}' has no column '{bad[0]}'; its columns: {', '.join(cols)}",
                         param="columns", value=bad[0], expected="columns of the table")
    return want


def run(args) -> int:
    from ..errors import UnknownNameError
    from ..jobs._base import check_int

    check_int(args.width, "width", lo=2)
    cat = get_catalog(args)
    if args.name is None:
        names = cat.table_names + ["sources"]
        if args.json:
            emit_json(names)
        else:
            for n in names:
                print(n)
        return 0
    try:
        df = cat.table(args.name)
    except UnknownNameError as exc:
        exc.param = exc.param or "name"
        raise
    cols = _columns(args, df)
    if args.json:
        emit_json(df[cols].to_dict("records"))
        return 0

    def cut(v):
        if isinstance(v, str) and len(v) > args.width:
            return v[: args.width - 1] + "…"
        return v
    rows = [{c: cut(r[c]) for c in cols} for r in df.to_dict("records")]
    print_table(rows, [(c, c) for c in cols])
    print(f"\n{len(rows)} rows. Full cells: solvsel table {args.name} --json")
    return 0
