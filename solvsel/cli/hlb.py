"""``solvsel hlb``: required HLB of an oil phase, and the emulsifier pairs (or triples) that hit it."""

from __future__ import annotations

from ..jobs.parse import parse_amounts, parse_names, parse_range
from ..rules.regulations import FOOD_JURISDICTIONS, bundled_purposes, describe_purposes
from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table


def register(sub):
    p = sub.add_parser(
        "hlb",
        help="required HLB of an oil phase, and emulsifier pairs that hit it",
        description=(
            "Work out the required HLB of an oil phase (mass-weighted over its ingredients), then every pair "
            "(or triple) of the allowed emulsifiers that reaches it, with the mass fraction of each, best first. "
            "Also: the HLB of one structure (Griffin and Davies), a bench series spanning an HLB range with grams "
            "per batch, and the required HLB fitted back from your stability scores of that series."
        ),
    )
    g = p.add_argument_group("target")
    g.add_argument("--oil", metavar="NAME=AMOUNT,...",
                   help='oil phase, e.g. "d-limonene=70,medium-chain triglycerides=30" (percent or fractions)')
    g.add_argument("--rhlb", metavar="NAME=HLB,...",
                   help="your own required HLB for oils of the phase (overrides the table and estimates)")
    g.add_argument("--target", type=float, metavar="HLB", help="aim at this HLB instead of an oil phase")
    e = p.add_argument_group("emulsifiers")
    e.add_argument("--emulsifiers", metavar="NAMES",
                   help="the allowed pool (comma-separated names, synonyms or CAS); default: every nonionic and "
                   "zwitterionic emulsifier of the table with an HLB")
    e.add_argument("--triples", action="store_true", help="also blends of three (the most balanced fractions)")
    e.add_argument("--top", type=int, default=10, metavar="N", help="show the N best systems of each size (default 10)")
    e.add_argument("--min-fraction", type=float, default=0.05, metavar="F",
                   help="drop systems in which an emulsifier is below this mass fraction (default 0.05)")
    e.add_argument("--jurisdiction", metavar="J,...",
                   help="show the legal rules on record for the emulsifiers of the systems shown "
                   f"({', '.join(FOOD_JURISDICTIONS)})")
    e.add_argument("--purpose", choices=tuple(bundled_purposes()), metavar="PURPOSE",
                   help="with --jurisdiction: what the product is; an emulsifier's rule counts only where it allows "
                   "that purpose: " + describe_purposes())
    e.add_argument("--category", default="flavoured drinks", metavar="FOOD",
                   help="food category for those rules (default flavoured drinks)")
    s = p.add_argument_group("structure")
    s.add_argument("--smiles", metavar="SMILES", help="HLB of this structure by Griffin (nonionic) and Davies")
    b = p.add_argument_group("bench series")
    b.add_argument("--series", metavar="LOW,HIGH",
                   help="lay out a bench series with these two emulsifiers (low HLB first)")
    b.add_argument("--n", type=int, default=9, help="number of blends in the series (default 9)")
    b.add_argument("--span", metavar="FROM:TO",
                   help="HLB range of the series; either end may be left out (default: the pair's full reach)")
    b.add_argument("--batch-g", type=float, default=100.0, metavar="G", help="batch size in g (default 100)")
    b.add_argument("--emulsifier-pct", type=float, default=5.0, metavar="PCT",
                   help="total emulsifier in each batch, %% w/w (default 5)")
    b.add_argument("--oil-pct", type=float, default=20.0, metavar="PCT", help="oil phase in each batch, %% w/w (default 20)")
    b.add_argument("--scores", metavar="HLB=SCORE,...",
                   help='your stability scores of a series, e.g. "5.4=0,6.4=1,7.5=3,..." (higher = more stable); '
                   "the required HLB is fitted back from them")
    b.add_argument("--lower-is-better", action="store_true",
                   help="the scores are droplet sizes or cream heights (lower = more stable)")
    add_json_flag(p)
    return p


#: Request fields whose option is not ``--`` + the field with dashes.
OPTION_NAMES = {"jurisdictions": "--jurisdiction"}


def request_from_args(args):
    """The :class:`~solvsel.jobs.hlb.HlbRequest` the options ask for."""
    from ..jobs.hlb import HlbRequest

    def given(text, parse, param, *extra):
        return parse(text, param, *extra) if text else None

    return HlbRequest(
        oil=given(args.oil, parse_amounts, "oil"), rhlb=given(args.rhlb, parse_amounts, "rhlb"), target=args.target,
        emulsifiers=given(args.emulsifiers, parse_names, "emulsifiers"), triples=args.triples, top=args.top,
        min_fraction=args.min_fraction, jurisdictions=given(args.jurisdiction, parse_names, "jurisdictions"),
        category=args.category, purpose=args.purpose, smiles=args.smiles, series=given(args.series, parse_names, "series"), n=args.n,
        span=given(args.span, parse_range, "span", "HLB"), batch_g=args.batch_g, emulsifier_pct=args.emulsifier_pct,
        oil_pct=args.oil_pct, scores=given(args.scores, parse_scores, "scores"), lower_is_better=args.lower_is_better,
    )


def parse_scores(text: str, param: str):
    """``HLB=SCORE`` pairs; a score may be negative (the user's own scale)."""
    return parse_amounts(text, param, allow_negative=True)


def run(args) -> int:
    from ..jobs.hlb import hlb

    result = hlb(request_from_args(args), catalog=get_catalog(args))
    if args.json:
        emit_json(result.to_dict())
    else:
        _print(result.to_dict())
    return 0


def _print_pairs(pairs: list, message: str | None) -> None:
    rows = [{"a": p["a"], "fa": p["fraction_a"], "b": p["b"], "fb": p["fraction_b"], "hlb": p["hlb"],
             "fam": "yes" if p["same_tail"] else ""} for p in pairs]
    if rows:
        print_table(rows, [("a", "emulsifier A"), ("fa", "fraction A", ".3f"), ("b", "emulsifier B"),
                           ("fb", "fraction B", ".3f"), ("hlb", "HLB", ".2f"), ("fam", "one fatty acid")])
    elif message:
        print(message)


def _print(out: dict) -> None:
    if "structure" in out:
        for method, r in out["structure"].items():
            if "error" in r:
                print(f"{method.capitalize()}: not applicable: {r['error']}")
            else:
                print(f"{method.capitalize()} HLB: {r['hlb']:.2f}  ({r['method']})")
        print()
    if "oil_phase" in out:
        print_table(out["oil_phase"], [("name", "oil"), ("mass_fraction", "fraction", ".3f"), ("rhlb", "rHLB", ".2f"),
                                       ("basis", "where the value comes from")])
        print()
    if "required_hlb" in out:
        span = out.get("required_hlb_range")
        extra = f" (range {span[0]:.2f} to {span[1]:.2f}: some values are a range or an estimate)" if span else ""
        print(f"Required HLB: {out['required_hlb']:.2f}{extra}\n")
        if out.get("pairs"):
            print("Emulsifier pairs (mass fractions of the emulsifier blend), best first:")
        _print_pairs(out.get("pairs", []), out.get("message"))
        for end in out.get("range_ends") or ():
            print(f"\nAt HLB {end['required_hlb']:.2f} ({'low' if end is out['range_ends'][0] else 'high'} end of the range):")
            _print_pairs(end["pairs"], end.get("message"))
        if out.get("triples"):
            print("\nBlends of three (most balanced fractions):")
            rows = [{"names": " + ".join(f"{c['name']} {c['fraction']:.2f}" for c in t["components"]), "hlb": t["hlb"]}
                    for t in out["triples"]]
            print_table(rows, [("names", "emulsifiers and mass fractions"), ("hlb", "HLB", ".2f")])
        print()
    if out.get("emulsifier_rules"):
        print("Legal rules on record for these emulsifiers:")
        for r in out["emulsifier_rules"]:
            print(f"  {r['emulsifier']}: {r['text']}")
        print()
    if "series" in out:
        s = out["series"]
        print(f"Bench series: {s['low']} (HLB {s['hlb_low']:g}) with {s['high']} (HLB {s['hlb_high']:g}); "
              f"batch {s['batch_g']:g} g, {s['emulsifier_wt_pct']:g} % emulsifier, {s['oil_wt_pct']:g} % oil phase")
        print_table(s["blends"], [("hlb", "HLB", ".2f"), ("grams_low", f"g {s['low']}", ".2f"),
                                  ("grams_high", f"g {s['high']}", ".2f"), ("grams_oil", "g oil", ".1f"),
                                  ("grams_water", "g water phase", ".1f")])
        print()
    if "fit" in out:
        f = out["fit"]
        if f["required_hlb"] is not None and f["success"]:
            iv = f["interval"]
            extra = f" (95 % interval {iv[0]:.2f} to {iv[1]:.2f})" if iv else ""
            print(f"Required HLB fitted from your scores: {f['required_hlb']:.2f}{extra}; best blend tested {f['best_tested']:g}")
        else:
            print(f"No required HLB fitted: {f['message']}")
        print()
    print_cautions(out.get("cautions", []))
