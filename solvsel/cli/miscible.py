"""``solvsel miscible A B [C ...]``: do these liquids form one phase, and why."""

from __future__ import annotations

from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table


def register(sub):
    p = sub.add_parser(
        "miscible",
        help="say if two or more liquids form one phase (measured or predicted)",
        description="Say whether liquids form one phase: from the measured pairs of the table where there "
        "is one (about 25 C), else predicted by Flory-Huggins from Hansen parameters (labelled as such). "
        "Partial pairs show the one-phase window. With --fractions, check a blend at those volume "
        "fractions; with --bridge, list liquids that mix with both of two liquids.",
    )
    p.add_argument("liquids", nargs="+", metavar="LIQUID", help="two or more liquids (names, synonyms or CAS)")
    p.add_argument("--temp", type=float, default=25.0, metavar="C", help="temperature in C (default 25)")
    p.add_argument("--fractions", metavar="F1,F2,...", help="volume fractions of the liquids (sum 1, or percent summing to 100)")
    p.add_argument("--bridge", action="store_true", help="for two liquids: list liquids miscible with both, best first")
    p.add_argument("--food", action="store_true", help="with --bridge: food-grade carriers only")
    add_json_flag(p)
    return p


def _fractions(text, n):
    from ..errors import InputError

    parts = [p.strip().rstrip("%") for p in str(text).split(",") if p.strip()]
    try:
        vals = [float(p) for p in parts]
    except ValueError:
        raise InputError(f"--fractions: expected {n} numbers separated by commas, got '{text}'") from None
    if len(vals) != n:
        raise InputError(f"--fractions: expected {n} numbers (one per liquid), got {len(vals)}")
    if any(v < 0 for v in vals):
        raise InputError("--fractions: fractions must be zero or positive")
    total = sum(vals)
    if abs(total - 100.0) < 1e-6 and n > 1:
        vals = [v / 100.0 for v in vals]
    elif abs(total - 1.0) > 1e-6:
        raise InputError(f"--fractions: fractions must sum to 1 (or to 100 %), got {total:g}")
    return vals


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


def compute(args, cat):
    from itertools import combinations

    from ..errors import InputError
    from ..science.miscibility import blend_phase, bridges, pair

    names = list(args.liquids)
    if len(names) < 2:
        raise InputError("miscible: give at least two liquids")
    if args.bridge:
        if len(names) != 2:
            raise InputError("--bridge: give exactly two liquids")
        v = pair(cat, names[0], names[1], args.temp)
        out = v.to_dict()
        out["bridges"] = [b.to_dict() for b in bridges(cat, names[0], names[1], args.temp, food_only=args.food)]
        return out
    verdicts = [pair(cat, a, b, args.temp) for a, b in combinations(names, 2)]
    if len(verdicts) == 1 and not args.fractions:
        return verdicts[0].to_dict()
    worst = max(verdicts, key=lambda v: (v.code, (v.chi or 0) / (v.chi_critical or 1)))
    order = {"yes": 0, "partial": 1, "no": 2}
    one = max((v.one_phase for v in verdicts), key=order.get)
    out = {
        "liquids": [v for v in dict.fromkeys(n for vv in verdicts for n in vv.liquids)],
        "one_phase": one,
        "basis": "measured" if all(v.basis == "measured" for v in verdicts) else "predicted",
        "window": worst.window if one != "yes" else {"one_phase_ranges": [[0.0, 1.0]]},
        "chi": worst.chi,
        "chi_critical": worst.chi_critical,
        "temp_C": args.temp,
        "pairs": [v.to_dict() for v in verdicts],
        "note": "pairwise: a third liquid can bring two immiscible ones together; use --fractions to check a blend",
    }
    if args.fractions:
        bp = blend_phase(cat, names, _fractions(args.fractions, len(names)), args.temp)
        out["blend"] = bp.to_dict()
        out["one_phase"] = "yes" if bp.one_phase else "no"
        out["basis"] = bp.basis
        out["note"] = bp.reason + "; " + bp.note
    return out


def run(args) -> int:
    cat = get_catalog(args)
    out = compute(args, cat)
    if args.json:
        emit_json(out)
        return 0
    from ..science.miscibility import PairVerdict

    pairs = out.get("pairs") or [out]
    rows = []
    for p in pairs:
        v = PairVerdict(tuple(p["liquids"]), p["one_phase"], p["basis"], p["window"], p["chi"], p["chi_critical"])
        rows.append({"a": p["liquids"][0], "b": p["liquids"][1], "one": p["one_phase"], "basis": p["basis"],
                     "window": _window_text(v), "chi": p["chi"], "chic": p["chi_critical"]})
    print_table(rows, [("a", "liquid a"), ("b", "liquid b"), ("one", "one phase"), ("basis", "basis"),
                       ("window", "one-phase window"), ("chi", "chi", ".2f"), ("chic", "chi crit", ".2f")])
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
    print_cautions(["Miscibility predicted from HSP is a screening estimate; measured pairs win. Check blends at the bench "
                    "at the temperatures of use and storage (cold can split a blend)."])
    return 0
