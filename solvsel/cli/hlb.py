"""``solvsel hlb``: required HLB of an oil phase, and the emulsifier pairs (or triples) that hit it."""

from __future__ import annotations

from ..jobs.parse import parse_amounts, parse_names
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
                   help="show the legal rules on record for the emulsifiers of the systems shown (US, EU)")
    e.add_argument("--category", default="flavoured drinks", metavar="FOOD",
                   help="food category for those rules (default flavoured drinks)")
    s = p.add_argument_group("structure")
    s.add_argument("--smiles", metavar="SMILES", help="HLB of this structure by Griffin (nonionic) and Davies")
    b = p.add_argument_group("bench series")
    b.add_argument("--series", metavar="LOW,HIGH",
                   help="lay out a bench series with these two emulsifiers (low HLB first)")
    b.add_argument("--n", type=int, default=9, help="number of blends in the series (default 9)")
    b.add_argument("--span", metavar="FROM:TO", help="HLB range of the series (default: the pair's full reach)")
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


def _float_pairs(text: str, what: str) -> list[tuple[float, float]]:
    from ..errors import InputError

    out = []
    for item in [i.strip() for i in (text or "").split(",") if i.strip()]:
        if "=" not in item:
            raise InputError(f"{what}: expected HLB=SCORE items separated by commas, got '{item}'")
        a, _, b = item.partition("=")
        try:
            out.append((float(a), float(b)))
        except ValueError:
            raise InputError(f"{what}: '{item}' is not two numbers HLB=SCORE") from None
    if not out:
        raise InputError(f"{what}: expected HLB=SCORE items separated by commas")
    return out


def run(args) -> int:
    from ..science import hlb as H
    from ..errors import InputError

    cat = get_catalog(args)
    out: dict = {}
    cautions = list(H.HLB_CAUTIONS)
    if args.smiles:
        res = {}
        try:
            res["griffin"] = H.griffin_hlb_from_smiles(args.smiles).to_dict()
        except InputError as exc:
            res["griffin"] = {"error": str(exc)}
        try:
            res["davies"] = H.davies_hlb_from_smiles(args.smiles).to_dict()
        except Exception as exc:  # a group Davies gave no number for
            if not isinstance(exc, (InputError, LookupError)):
                raise
            res["davies"] = {"error": str(exc)}
        out["structure"] = res
    target = None
    if args.oil and args.target is not None:
        raise InputError("give --oil or --target, not both")
    if args.oil:
        overrides = dict(parse_amounts(args.rhlb, "rhlb")) if args.rhlb else None
        phase = H.oil_phase_required_hlb(cat, parse_amounts(args.oil, "oil"), overrides)
        target = phase.required_hlb
        out["oil_phase"] = list(phase.components)
        cautions = list(phase.cautions) + cautions
    elif args.target is not None:
        target = float(args.target)
    if target is not None:
        out["required_hlb"] = target
        pool = (H.pool_from_catalog(cat, parse_names(args.emulsifiers, "emulsifiers")) if args.emulsifiers
                else H.all_emulsifiers(cat))
        pairs = H.emulsifier_systems(pool, target, 2, args.min_fraction)
        out["pairs"] = [s.to_dict() for s in pairs[: max(args.top, 0)]]
        if not pairs:
            out["message"] = (f"no pair of the pool reaches HLB {target:.2f} with every emulsifier at "
                              f"{args.min_fraction:.0%} or more (lower --min-fraction)")
        if args.triples:
            triples = H.emulsifier_systems(pool, target, 3, args.min_fraction)
            out["triples"] = [s.to_dict() for s in triples[: max(args.top, 0)]]
    if args.jurisdiction and (out.get("pairs") or out.get("triples")):
        out["emulsifier_rules"] = _rules(cat, pool, out, args)
    if args.series:
        names = parse_names(args.series, "series")
        if len(names) != 2:
            raise InputError(f"--series: expected two emulsifiers LOW,HIGH, got {len(names)}")
        low, high = H.pool_from_catalog(cat, names)
        span = (None, None)
        if args.span:
            try:
                a, _, b = args.span.partition(":")
                span = (float(a), float(b))
            except ValueError:
                raise InputError(f"--span: expected FROM:TO as two HLB numbers, got '{args.span}'") from None
        out["series"] = H.bench_series(low, high, args.n, span[0], span[1], args.batch_g, args.emulsifier_pct,
                                       args.oil_pct).to_dict()
    if args.scores:
        pts = _float_pairs(args.scores, "--scores")
        fit = H.fit_required_hlb([h for h, _ in pts], [s for _, s in pts], "low" if args.lower_is_better else "high")
        out["fit"] = fit.to_dict()
    if not out:
        raise InputError("nothing to do: give --oil or --target (and --emulsifiers), --smiles, --series or --scores")
    from ..rules.cautions import DEFER

    out["cautions"] = cautions + [DEFER]
    if args.json:
        emit_json(out)
        return 0
    _print(out)
    return 0


def _rules(cat, pool, out: dict, args) -> list[dict]:
    """Rules on record for each emulsifier shown; none on record is said, never taken as allowed."""
    from ..rules.regulations import limits
    from ..errors import InputError

    jur = [j.strip().upper() for j in parse_names(args.jurisdiction, "jurisdiction")]
    bad = [j for j in jur if j not in ("US", "EU")]
    if bad:
        raise InputError(f"--jurisdiction: expected US and/or EU, got '{bad[0]}'")
    shown = []
    for s in out.get("pairs", []) + out.get("triples", []):
        for c in s["components"]:
            if c["name"] not in shown:
                shown.append(c["name"])
    by_name = {e.name: e for e in pool}
    rows = []
    for name in shown:
        e = by_name[name]
        for j in jur:
            found = limits(cat, cas=e.cas or None, substance=None if e.cas else name, jurisdiction=j,
                           category=args.category, use="emulsifier")
            if found:
                for lim in found:
                    rows.append({"emulsifier": name, "jurisdiction": j, "rule": lim.rule, "limit": lim.limit,
                                 "unit": lim.unit, "status": lim.status, "text": lim.describe()})
            else:
                rows.append({"emulsifier": name, "jurisdiction": j, "rule": None, "limit": None, "unit": None,
                             "status": "no data",
                             "text": f"no rule on record for {name} in {j} {args.category}: not treated as allowed"})
    return rows


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
        print(f"Required HLB: {out['required_hlb']:.2f}\n")
        rows = [{"a": p["a"], "fa": p["fraction_a"], "b": p["b"], "fb": p["fraction_b"], "hlb": p["hlb"],
                 "fam": "yes" if p["same_tail"] else ""} for p in out.get("pairs", [])]
        if rows:
            print("Emulsifier pairs (mass fractions of the emulsifier blend), best first:")
            print_table(rows, [("a", "emulsifier A"), ("fa", "fraction A", ".3f"), ("b", "emulsifier B"),
                               ("fb", "fraction B", ".3f"), ("hlb", "HLB", ".2f"), ("fam", "one fatty acid")])
        elif out.get("message"):
            print(out["message"])
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
