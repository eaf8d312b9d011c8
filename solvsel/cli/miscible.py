"""``solvsel miscible A B [C ...]``: do these liquids form one phase, and why."""

from __future__ import annotations

from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table


#: Request fields given otherwise than as --field.
OPTION_NAMES = {"liquids": "LIQUID"}


def register(sub):
    p = sub.add_parser(
        "miscible",
        help="say if two or more liquids form one phase (measured or predicted)",
        description="Say whether liquids form one phase: from the measured pairs of the table where there "
        "is one (about 25 C), else predicted (labelled as such, with the model): by UNIFAC from the two "
        "liquids' structures, or by Flory-Huggins from Hansen parameters for mixtures such as vegetable oils. "
        "Partial pairs show the one-phase window. With --fractions, check a blend at those volume "
        "fractions; with --bridge, list liquids that mix with both of two liquids.",
    )
    p.add_argument("liquids", nargs="+", metavar="LIQUID",
                   help="two or more liquids (names, synonyms or CAS); quote a name of several words, or separate "
                   "the names with commas")
    p.add_argument("--temp", type=float, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--fractions", metavar="F1,F2,...", help="volume fractions of the liquids (sum 1, or percent summing to 100)")
    p.add_argument("--bridge", action="store_true", help="for two liquids: list liquids miscible with both, best first")
    p.add_argument("--food", action="store_true", help="with --bridge: food carriers only (permitted or conditional)")
    add_json_flag(p)
    return p


def _window_text(v):
    w = v.window or {}
    if v.one_phase == "yes":
        return "all proportions"
    a, b = v.liquids
    parts = []
    if w.get("b_in_a_max") is not None:
        parts.append(f"up to {100 * w['b_in_a_max']:.3g} wt % {b} in {a}")
    if w.get("a_in_b_max") is not None:
        parts.append(f"up to {100 * w['a_in_b_max']:.3g} wt % {a} in {b}")
    return "; ".join(parts) if parts else "not tabulated"


def request(args):
    """The :class:`~solvsel.jobs.miscible.MiscibleRequest` the options ask for."""
    from ..jobs.miscible import MiscibleRequest
    from ..jobs.parse import parse_fractions, parse_name_words

    liquids = parse_name_words(args.liquids, "liquids", get_catalog(args).liquid_name)
    fractions = parse_fractions(args.fractions, len(liquids)) if args.fractions else None
    return MiscibleRequest(liquids=tuple(liquids), temp_C=args.temp, fractions=fractions, bridge=args.bridge,
                           food=args.food)


def run(args) -> int:
    from ..jobs.miscible import miscible

    result = miscible(request(args), catalog=get_catalog(args))
    if args.json:
        emit_json(result.to_dict())
        return 0
    out = result.to_dict()
    pairs = out["pairs"]
    rows = [{"a": v.liquids[0], "b": v.liquids[1], "one": v.one_phase, "basis": v.basis, "model": v.model or "-",
             "window": _window_text(v), "chi": v.chi, "chic": v.chi_critical} for v in result.pairs]
    print_table(rows, [("a", "liquid a"), ("b", "liquid b"), ("one", "one phase"), ("basis", "basis"),
                       ("model", "predicted by"), ("window", "one-phase window"), ("chi", "chi", ".2f"),
                       ("chic", "chi crit", ".2f")])
    if "blend" in out:
        b = out["blend"]
        fr = ", ".join(f"{n} {100 * f:.1f} %" for n, f in zip(b["liquids"], b["volume_fractions"]))
        print(f"\nBlend ({fr} by volume): {'one phase' if b['one_phase'] else 'NOT one phase'} ({b['basis']})")
        print(f"  {b['reason']}")
        if b.get("note"):
            print(f"  ({b['note']})")
    elif len(pairs) > 1:
        print(f"\nAll together: {out['one_phase']} ({out['basis']}, pairwise)")
    if "bridges" in out:
        print()
        if out["bridges"]:
            print_table([{"n": i, **b} for i, b in enumerate(out["bridges"][:15], 1)],
                        [("n", "#"), ("name", "mixes with both"), ("basis_a", "with a"), ("basis_b", "with b"), ("closeness", "max chi/chi_c", ".2f")])
        else:
            print("No liquid of the table mixes in all proportions with both.")
    notes = [p.get("note") for p in pairs if p.get("note")]
    for n in dict.fromkeys(notes):
        print(f"Note: {n}")
    print_cautions(result.cautions)
    return 0
