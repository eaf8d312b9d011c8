"""``solvsel solvents``: list, filter, sort and search the liquids table."""

from __future__ import annotations

from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table


def register(sub):
    p = sub.add_parser(
        "solvents",
        help="list, filter, sort and search the bundled liquids",
        description="List the liquids of the solvents table (and your own, with --own-solvents). "
        "Filter with --food, --role, --search and --where; sort with --sort.",
    )
    p.add_argument("--food", action="store_true", help="only liquids used on food (carrier or extraction roles)")
    p.add_argument("--role", choices=("carrier", "extraction", "bench"), help="only liquids with this role")
    p.add_argument("--search", metavar="TEXT", help="name, synonym or CAS contains TEXT")
    p.add_argument(
        "--where", metavar="CONDITION",
        help="filter on columns, e.g. \"dH > 10 and bp_C < 120\" or \"roles has carrier and not flash < 60\" "
        "(operators < <= > >= == != has is; and, or, not, parentheses)",
    )
    p.add_argument("--sort", metavar="COLUMN", help="sort by a column (prefix with - for descending), e.g. bp_C or -dH")
    p.add_argument("--top", type=int, metavar="N", help="show the first N rows only")
    add_json_flag(p)
    return p


def select(cat, food=False, role=None, search=None, where_text=None, sort=None):
    """The solvents table filtered and sorted as the options say (a DataFrame)."""
    from ..data.catalog import normalize_name
    from ..data.query import resolve_column, where

    df = cat.solvents
    if food:
        df = df[df["roles"].str.split(";").apply(lambda r: "carrier" in r or "extraction" in r)]
    if role:
        df = df[df["roles"].str.split(";").apply(lambda r: role in r)]
    if search:
        key = normalize_name(search)
        hay = (df["name"] + ";" + df["synonyms"] + ";" + df["cas"]).map(normalize_name)
        df = df[hay.str.contains(key, regex=False)]
    if where_text:
        df = df[where(df, where_text)]
    if sort:
        desc = sort.startswith("-")
        col = resolve_column(df, sort.lstrip("-+"), what="--sort")
        df = df.sort_values(col, ascending=not desc, na_position="last", kind="stable")
    return df


def _check(args) -> None:
    """Options given empty or out of range are refused, not read as not given."""
    from ..errors import InputError
    from ..jobs._base import check_int

    for param in ("search", "where", "sort"):
        value = getattr(args, param)
        if value is not None and not value.strip("-+ "):
            raise InputError("expected some text, got nothing", param=param, value=value, expected="some text")
    check_int(args.top, "top", lo=1, allow_none=True)


def run(args) -> int:
    _check(args)
    cat = get_catalog(args)
    df = select(cat, args.food, args.role, args.search, args.where, args.sort)
    if args.top is not None:
        df = df.head(args.top)
    records = [cat.solvent_records()[cat.find_index("solvents", n)] for n in df["name"]]
    if args.json:
        out = []
        for s in records:
            d = {
                "name": s.name, "cas": s.cas, "dD": s.dD, "dP": s.dP, "dH": s.dH, "vm": s.vm_cm3_mol,
                "bp_C": s.bp_C, "flash_C": s.flash_C, "density": s.density_g_cm3, "sources": list(s.sources),
                "mp_C": s.mp_C, "mw": s.mw_g_mol, "visc_mPa_s": s.visc_mPa_s, "roles": list(s.roles),
                "water_miscibility": s.water_miscibility, "cost_class": s.cost_class, "origin": s.origin,
            }
            out.append(d)
        emit_json(out)
        return 0
    rows = []
    for s in records:
        rows.append({
            "name": s.name + (" [yours]" if s.is_user else ""), "cas": s.cas or "(mixture)", "dD": s.dD, "dP": s.dP,
            "dH": s.dH, "vm": s.vm_cm3_mol, "bp": s.bp_C, "flash": s.flash_C if s.flammable else "none",
            "water": s.water_miscibility, "roles": "/".join(s.roles), "cost": s.cost_class,
        })
    print_table(rows, [
        ("name", "liquid"), ("cas", "CAS"), ("dD", "dD", ".1f"), ("dP", "dP", ".1f"), ("dH", "dH", ".1f"),
        ("vm", "Vm cm3/mol", ".1f"), ("bp", "bp C", ".1f"), ("flash", "flash C", ".0f"), ("water", "water"),
        ("roles", "roles"), ("cost", "cost 1-5"),
    ])
    print(f"\n{len(rows)} of {len(cat.solvents)} liquids. HSP in MPa^0.5 at 25 C. Every value and its source: "
          "solvsel table solvents --json; citations: solvsel table sources.")
    if any(s.flammable and s.flash_C is not None and s.flash_C < 23 for s in records):
        print_cautions([
            "Liquids with a flash point below 23 C are highly flammable (GHS category 1-2): handle and extract them "
            "only in rooms and equipment built for it, under the local fire and building codes."
        ])
    return 0
