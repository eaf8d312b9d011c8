"""``solvsel fit``: a solute's Hansen sphere from a CSV of bench results.

Reads the file (liquid, result[, dD, dP, dH, weight, note]), fits the sphere,
prints the centre, R0, fit quality, the liquids on the wrong side, the
uncertainty and the liquids worth testing next; optionally saves the sphere
as a solute row in the user's own solutes CSV, so that ``rank``, ``blend`` and
the UI can use it with ``--own-solutes FILE --solute NAME``.
"""

from __future__ import annotations

from ._common import add_json_flag, emit_json, get_catalog, print_cautions, print_table

_CATEGORIES = ("flavour", "active", "lipid", "pigment", "sugar", "wax", "other")


def register(sub):
    p = sub.add_parser(
        "fit",
        help="fit a solute's Hansen sphere from a CSV of bench results",
        description="Fit a solute's Hansen sphere (dD, dP, dH, R0) to bench solubility results. The CSV has a "
        "header row and one row per liquid: liquid (a name or CAS of the solvents table, a blend of them by "
        "volume written ethanol:water=70:30, or a liquid of your own with dD, dP, dH), result (good, partial, "
        "bad, or a number on your scale with --good-at-most / --good-at-least), and optional weight and note "
        "columns. Lines starting with # are comments. The fit is an estimate for planning bench work.",
    )
    p.add_argument("file", metavar="BENCH_CSV", help="the bench results (CSV, UTF-8)")
    cut = p.add_mutually_exclusive_group()
    cut.add_argument("--good-at-most", type=float, metavar="N",
                     help="numeric scores at or below N are good (low is best, e.g. 1 dissolved .. 6 no effect)")
    cut.add_argument("--good-at-least", type=float, metavar="N",
                     help="numeric scores at or above N are good (high is best, e.g. 0 no change .. 5 dissolved)")
    p.add_argument("--partial", choices=("good", "bad"), default="good",
                   help="how a 'partial' result counts (default good)")
    p.add_argument("--partial-weight", type=float, default=0.5, metavar="W",
                   help="weight of a partial result against 1 for the others (default 0.5)")
    p.add_argument("--rule", choices=("margin", "classic"), default="margin",
                   help="choice among spheres that fit equally well: the largest margin between good and bad "
                   "liquids (default), or the smallest radius (the classic choice, biased low)")
    p.add_argument("--lapse", type=float, default=0.05, metavar="P",
                   help="floor of a wrong-side liquid's score, for gross bench errors (default 0.05; 0 = the "
                   "handbook's desirability exactly)")
    p.add_argument("--level", type=float, default=0.90, metavar="L",
                   help="level of the profile intervals (default 0.90)")
    p.add_argument("--next", type=int, default=5, metavar="N", dest="next_tests",
                   help="propose N untested table liquids to test next (default 5, 0 for none)")
    p.add_argument("--food", action="store_true",
                   help="propose only liquids used on food (carrier or extraction roles) as next tests")
    p.add_argument("--two-spheres", action="store_true",
                   help="also fit two spheres whose union explains the results (for a solute of two "
                   "populations, e.g. an extract of two families of compounds); good/bad results only")
    p.add_argument("--save-as", metavar="NAME", help="save the fitted sphere as a solute named NAME (needs --into)")
    p.add_argument("--into", metavar="MY_SOLUTES_CSV",
                   help="your own solutes CSV to append the sphere to (created if missing; other rows kept)")
    p.add_argument("--category", choices=_CATEGORIES, default="other", help="category of the saved solute (default other)")
    add_json_flag(p)
    return p


def _next_pool(cat, food: bool, bench):
    # gases at room temperature (propane, butanes, CO2...) are no bench test in a vial
    recs = [r for r in cat.solvent_records() if (r.food_use if food else True) and (r.bp_C is None or r.bp_C > 25)]
    tested = {r.key for r in bench.rows}
    recs = [r for r in recs if "liquid:" + (r.cas or r.name) not in tested]
    return recs


def _cautions_for(cat, names):
    from ..rules.cautions import DEFER, solvent_cautions

    out = []
    for n in names:
        try:
            rec = cat.solvent(n, library=False)
        except Exception:  # a name of the table always resolves; nothing to add otherwise
            continue
        out += [c for c in solvent_cautions(rec, use="bench", cat=cat) if c != DEFER]
    return out


def _basis_summary(bench, partial: str, partial_weight: float) -> str:
    """Where the liquids' HSP came from, in words (table, library, blends, the user's values)."""
    table = [r for r in bench.rows if r.basis == "table"]
    lib = [r.label for r in bench.rows if r.basis.startswith("library")]
    blends = [r for r in bench.rows if r.basis.startswith("blend")]
    own = [r.label for r in bench.rows if r.basis == "your values"]
    parts = [f"{len(table)} from the table"]
    if lib:
        parts.append(f"{len(lib)} from the reference library chemicals ({', '.join(lib)})")
    if blends:
        parts.append(f"{len(blends)} blend(s) by volume-fraction average")
    if own:
        parts.append(f"{len(own)} with your own dD, dP, dH ({', '.join(own)})")
    n_partial = sum(r.result == "partial" for r in bench.rows)
    if n_partial:
        parts.append(f"{n_partial} partial result(s) counted {partial} at weight {partial_weight:g}")
    return "; ".join(parts)


def run(args) -> int:
    from ..rules.cautions import DEFER
    from ..errors import InputError
    from ..science.sphere import fit_bench, read_bench, save_solute, solute_row, suggest_tests

    if (args.save_as is None) != (args.into is None):
        raise InputError("--save-as NAME and --into MY_SOLUTES_CSV go together: give both to save the sphere")
    if args.save_as is not None and not args.save_as.strip():
        raise InputError("--save-as: expected a name for the fitted solute")
    if args.next_tests < 0:
        raise InputError(f"--next: expected 0 or a positive whole number, got {args.next_tests}")
    cat = get_catalog(args)
    bench = read_bench(args.file, cat, partial=args.partial, partial_weight=args.partial_weight)
    fit = fit_bench(bench, partial=args.partial, good_at_most=args.good_at_most, good_at_least=args.good_at_least,
                    rule=args.rule, lapse=args.lapse, level=args.level)

    two = None
    if args.two_spheres:
        import numpy as np

        from ..science.sphere import fit_two_spheres

        if bench.scale != "words":
            raise InputError("--two-spheres takes good/partial/bad results, not numeric scores")
        good = np.array([r.result == "good" or (r.result == "partial" and args.partial == "good") for r in bench.rows])
        two = fit_two_spheres(bench.hsp, good, np.array([r.weight for r in bench.rows]), names=bench.names,
                              rule=args.rule, lapse=args.lapse)

    suggestions = []
    if args.next_tests:
        pool = _next_pool(cat, args.food, bench)
        if pool:
            import numpy as np

            suggestions = suggest_tests(fit, np.array([r.hsp for r in pool]), [r.name for r in pool], k=args.next_tests)

    saved = None
    if args.save_as:
        row = solute_row(fit, args.save_as.strip(), source=f"bench fit of {bench.path}", category=args.category)
        what = save_solute(row, args.into)
        saved = {"name": row["name"], "file": args.into, "action": what}

    cautions = [
        "A sphere fitted to bench results is an estimate: confirm the chosen solvent or blend at the bench.",
    ]
    if not fit.separable:
        cautions.append("Some results are not explained by any sphere: check those tests (purity, time, "
                        "temperature, reading) before relying on the fit.")
    if fit.open:
        cautions.append("The sphere is open on one side: its centre and radius are poorly bounded there.")
    cautions += _cautions_for(cat, [s.name for s in suggestions])
    cautions.append(DEFER)

    if args.json:
        out = fit.to_dict()
        out["input"] = {
            "file": bench.path, "scale": bench.scale, "good_at_most": args.good_at_most,
            "good_at_least": args.good_at_least, "partial": args.partial, "partial_weight": args.partial_weight,
            "lapse": args.lapse,
        }
        for item, row in zip(out["liquids"], bench.rows):
            item["row"] = row.row
            item["basis"] = row.basis
            item["given"] = row.result if row.score is None else row.score
            item["dD"], item["dP"], item["dH"] = row.dD, row.dP, row.dH
        out["next_tests"] = {
            "method": "heuristic: untested liquids with RED nearest 1, spread over directions from the centre",
            "liquids": [s.to_dict() for s in suggestions],
        }
        out["saved"] = saved
        if two is not None:
            out["two_spheres"] = two.to_dict()
        out["cautions"] = list(dict.fromkeys(cautions))
        emit_json(out)
        return 0

    print(f"Sphere fitted to {fit.n_liquids} liquids ({fit.n_good} good) from {bench.path}")
    print(f"  centre  dD {fit.dD:.2f}   dP {fit.dP:.2f}   dH {fit.dH:.2f}   R0 {fit.r0:.2f}  MPa^0.5")
    print(f"  fit     desirability {fit.fit:.3f}, {100 * fit.explained:.0f} % of results explained "
          f"({fit.rule} rule{', margin %.2f' % fit.margin if fit.separable else ''})")
    print(f"  shape   {fit.open_note}")
    print(f"  liquids {_basis_summary(bench, args.partial, args.partial_weight)}")
    if fit.message:
        print(f"  note    {fit.message}")
    iv = fit.interval
    if iv.get("method") == "profile":
        print(f"\n{100 * iv['level']:.0f} % profile intervals (Hansen's desirability read as a likelihood):")
        print_table(
            [{"p": k if k != "r0" else "R0", "est": getattr(fit, k), "lo": iv[k][0], "hi": iv[k][1]}
             for k in ("dD", "dP", "dH", "r0")],
            [("p", "param"), ("est", "fit", ".2f"), ("lo", "low", ".2f"), ("hi", "high", ".2f")],
        )
    if fit.wrong_side:
        print("\nOn the wrong side:")
        print_table(
            [{"name": w.name, "result": "good" if w.good else "bad", "red": w.red, "w": w.weight} for w in fit.wrong_side],
            [("name", "liquid"), ("result", "result"), ("red", "RED", ".2f"), ("w", "weight", ".2f")],
        )
    else:
        print("\nEvery result is explained (good liquids inside, bad ones outside).")
    if two is not None:
        print(f"\nTwo spheres (union): desirability {two.fit:.3f} against {two.one_sphere_fit:.3f} for one; {two.message}")
        print_table(
            [{"n": i + 1, "dD": f.dD, "dP": f.dP, "dH": f.dH, "r0": f.r0,
              "good": ", ".join(n for n, m in zip(bench.names, two.members) if m == i)}
             for i, f in enumerate(two.spheres)],
            [("n", "sphere"), ("dD", "dD", ".2f"), ("dP", "dP", ".2f"), ("dH", "dH", ".2f"), ("r0", "R0", ".2f"),
             ("good", "good liquids in it")],
        )
    if suggestions:
        print("\nWorth testing next (a heuristic: RED nearest 1, spread over directions):")
        print_table(
            [{"name": s.name, "red": s.red, "dD": s.dD, "dP": s.dP, "dH": s.dH, "why": s.why.split(": ", 1)[-1]}
             for s in suggestions],
            [("name", "liquid"), ("red", "RED", ".2f"), ("dD", "dD", ".1f"), ("dP", "dP", ".1f"), ("dH", "dH", ".1f"),
             ("why", "where")],
        )
    if saved:
        print(f"\nSaved as solute '{saved['name']}' ({saved['action']} {saved['file']}); use it with "
              f"--own-solutes {saved['file']} --solute \"{saved['name']}\"")
    print_cautions(cautions)
    return 0
