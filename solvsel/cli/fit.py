"""``solvsel fit``: a solute's Hansen sphere from a CSV of bench results.

Reads the file (liquid, result[, dD, dP, dH, weight, note]), fits the sphere,
prints the centre, R0, the agreement with the bench, the liquids the sphere misplaces, the
uncertainty and the liquids worth testing next; optionally saves the sphere
as a solute row in the user's own solutes CSV, so that ``rank``, ``blend`` and
the UI can use it with ``--own-solutes FILE --solute NAME``.
"""

from __future__ import annotations

from ..jobs.fit import SOLUTE_CATEGORIES
from ._common import add_json_flag, blas_loads_on_one_thread, emit_json, get_catalog, print_cautions, print_table

#: Request fields given by another option (or the positional file) than ``--`` + the field.
OPTION_NAMES = {"path": "BENCH_CSV", "next_tests": "--next"}


def register(sub):
    p = sub.add_parser(
        "fit",
        help="fit a solute's Hansen sphere from a CSV of bench results",
        description="Fit a solute's Hansen sphere (dD, dP, dH, R0) to bench solubility results. The CSV has a "
        "header row and one row per liquid: liquid (a name or CAS of the solvents table, a blend of them by "
        "volume written ethanol:water=70:30, or a liquid of your own with dD, dP, dH), result (good, partial, "
        "bad, or a number on your scale with --good-at-most / --good-at-least), and optional weight and note "
        "columns. Lines starting with # are comments; the older headers solvent (or name) with score, or with a yes/no "
        "good column, are read too. The fit is an estimate for planning bench work.",
    )
    p.add_argument("file", metavar="BENCH_CSV",
                   help="the bench results (CSV, UTF-8 or Windows-1252; commas, or semicolons with decimal commas); "
                   "- reads them from stdin")
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
    p.add_argument("--graded", action="store_true",
                   help="numeric scores: fit the scores themselves (they worsen with the squared Hansen distance "
                   "from the centre), the cut-off giving the radius; the good/bad fit is shown beside it")
    p.add_argument("--prior", metavar="SMILES",
                   help="the solute's structure: its estimated HSP are offered as a prior for the centre, and the "
                   "fit says whether the results agree with them")
    p.add_argument("--save-as", metavar="NAME", help="save the fitted sphere as a solute named NAME (needs --into)")
    p.add_argument("--into", metavar="MY_SOLUTES_CSV",
                   help="your own solutes CSV to append the sphere to (created if missing; other rows kept)")
    p.add_argument("--category", choices=SOLUTE_CATEGORIES, default="other", help="category of the saved solute (default other)")
    add_json_flag(p)
    return p


def run(args) -> int:
    from ..jobs.fit import fit

    with blas_loads_on_one_thread():  # the optimisers' BLAS (the fit runs it on one thread)
        result = fit(
            path=args.file, good_at_most=args.good_at_most, good_at_least=args.good_at_least, partial=args.partial,
            partial_weight=args.partial_weight, rule=args.rule, lapse=args.lapse, level=args.level,
            next_tests=args.next_tests, food=args.food, two_spheres=args.two_spheres, graded=args.graded,
            prior=args.prior, save_as=args.save_as,
            into=args.into, category=args.category, catalog=get_catalog(args),
        )
    if args.json:
        emit_json(result.to_dict())
        return 0
    _print_sphere(result)
    _print_wrong_side(result)
    _print_two_spheres(result)
    _print_graded(result)
    _print_next_tests(result)
    saved = result.saved
    if saved:
        print(f"\nSaved as solute '{saved['name']}' ({saved['action']} {saved['file']}); use it with "
              f"--own-solutes {saved['file']} --solute \"{saved['name']}\"")
    print_cautions(result.cautions)
    return 0


def _print_sphere(result) -> None:
    fit = result.sphere
    print(f"Sphere fitted to {fit.n_liquids} liquids ({fit.n_good} good) from {result.bench.path}")
    print(f"  centre  dD {fit.dD:.2f}   dP {fit.dP:.2f}   dH {fit.dH:.2f}   R0 {fit.r0:.2f}  MPa^0.5")
    print(f"  agreement with the bench {fit.fit:.3f} of 1 (Hansen's desirability), {100 * fit.explained:.0f} % "
          f"of results explained ({fit.rule} rule{', margin %.2f' % fit.margin if fit.separable else ''})")
    print(f"  shape   {fit.open_note}")
    print(f"  liquids {result.liquids_summary()}")
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


def _print_wrong_side(result) -> None:
    wrong = result.sphere.wrong_side
    if not wrong:
        print("\nEvery result is explained (good liquids inside, bad ones outside).")
        return
    print("\nMisplaced by the sphere (a good liquid outside or a bad one inside):")
    print_table(
        [{"name": w.name, "result": "good" if w.good else "bad", "red": w.red, "w": w.weight} for w in wrong],
        [("name", "liquid"), ("result", "result"), ("red", "RED", ".2f"), ("w", "weight", ".2f")],
    )


def _print_two_spheres(result) -> None:
    two = result.two
    if two is None:
        return
    print(f"\nTwo spheres (union): agreement with the bench {two.fit:.3f} against {two.one_sphere_fit:.3f} for one; "
          f"{two.message}")
    names = result.bench.names
    print_table(
        [{"n": i + 1, "dD": f.dD, "dP": f.dP, "dH": f.dH, "r0": f.r0,
          "good": ", ".join(n for n, m in zip(names, two.members) if m == i)}
         for i, f in enumerate(two.spheres)],
        [("n", "sphere"), ("dD", "dD", ".2f"), ("dP", "dP", ".2f"), ("dH", "dH", ".2f"), ("r0", "R0", ".2f"),
         ("good", "good liquids in it")],
    )


def _print_graded(result) -> None:
    g, p = result.graded, result.prior
    if g is not None:
        r0 = "no liquid reaches the boundary" if g.r0 is None else f"R0 {g.r0:.2f}"
        print(f"\nGraded fit (scores worsen with Ra^2; boundary of good results {g.cut:g}):")
        print(f"  centre  dD {g.dD:.2f}   dP {g.dP:.2f}   dH {g.dH:.2f}   {r0}  MPa^0.5")
        print(f"  fit     {100 * g.r2:.0f} % of the scores' variance explained, residual {g.residual_sd:.2f}")
        print(f"  note    {g.message}")
    if p is not None:
        print(f"\nStructure estimate of {p['smiles']}: dD {p['dD']:.2f}   dP {p['dP']:.2f}   dH {p['dH']:.2f}; "
              f"Ra {p['ra_to_sphere']:.2f} from the good/bad sphere's centre (RED {p['red']:.2f}, "
              f"{'inside' if p['inside'] else 'outside'})")


def _print_next_tests(result) -> None:
    if not result.suggestions:
        return
    print("\nWorth testing next (a heuristic: RED nearest 1, spread over directions):")
    print_table(
        [{"name": s.name, "red": s.red, "dD": s.dD, "dP": s.dP, "dH": s.dH, "why": s.why.split(": ", 1)[-1]}
         for s in result.suggestions],
        [("name", "liquid"), ("red", "RED", ".2f"), ("dD", "dD", ".1f"), ("dP", "dP", ".1f"), ("dH", "dH", ".1f"),
         ("why", "where")],
    )
