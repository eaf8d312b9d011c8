"""The fit job: a solute's Hansen sphere from a file of bench results.

The file (read by :func:`solvsel.data.bench.read_bench`) lists the liquids tested
and their results; the sphere is fitted by :func:`solvsel.science.sphere.fit_bench`
(Hansen's desirability, the margin or classic rule, profile intervals), untested
liquids of the tables are proposed as next tests (a heuristic), and the sphere
can be saved as a solute of the user's own solutes file, so ``rank``, ``blend``
and the UI can aim at it.

>>> r = fit(path="examples/bench_extract.csv", next_tests=0)
>>> r.sphere.n_liquids, r.sphere.wrong_side, round(r.sphere.r0, 1)
(25, (), 8.4)
>>> r.target.basis
'fitted'
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..data.bench import liquid_key, read_bench
from ..data.catalog import Catalog, check_write_target
from ..data.provenance import audit_block
from ..errors import InputError
from ..rules.cautions import DEFER, solvent_cautions
from ..science.sphere import (
    RULES, BenchData, GradedFit, SphereFit, SuggestedTest, TwoSphereFit, bench_liquids, fit_bench,
    fit_bench_two_spheres, fit_graded, save_solute, score_boundary, solute_row, suggest_tests,
)
from ..science.target import Target
from ._base import build_request, catalog_or_default, check_bool, check_choice, check_int, check_number

__all__ = ["SOLUTE_CATEGORIES", "NEXT_TESTS_METHOD", "FitRequest", "FitResult", "fit"]

#: Categories of a solute of the solutes table (``tables/schema.csv``).
SOLUTE_CATEGORIES = ("flavour", "active", "lipid", "pigment", "sugar", "wax", "other")

#: How the next tests are chosen, in words (part of the JSON).
NEXT_TESTS_METHOD = "heuristic: untested liquids with RED nearest 1, spread over directions from the centre"

#: Liquids boiling at or below this [C] are gases at room temperature (propane, butanes, CO2): no
#: test in a vial, so they are never proposed as next tests.
BENCH_MIN_BP_C = 25.0

_GENERAL_CAUTION = "A sphere fitted to bench results is an estimate: confirm the chosen solvent or blend at the bench."
_UNEXPLAINED_CAUTION = ("Some results are not explained by any sphere: check those tests (purity, time, "
                        "temperature, reading) before relying on the fit.")
_OPEN_CAUTION = "The sphere is open on one side: its centre and radius are poorly bounded there."


@dataclass(frozen=True)
class FitRequest:
    """What to fit and how.

    Attributes
    ----------
    path : str
        the bench-results CSV (see :mod:`solvsel.data.bench` for its columns); ``"-"`` reads it from
        standard input
    good_at_most, good_at_least : float, optional
        for numeric scores, the cut-off of a good result: at most (low is best, e.g. 1 dissolved .. 6 no
        effect) or at least (high is best); exactly one for numbers, none for good/partial/bad [-]
    partial : {"good", "bad"}
        how a partial result counts
    partial_weight : float
        weight of a partial result against 1 for the others, > 0 [-]
    rule : {"margin", "classic"}
        the choice among spheres that fit equally well: the largest margin between good and bad
        liquids, or the smallest radius (biased low)
    lapse : float
        floor of a wrong-side liquid's score, 0 <= lapse < 1 (0: the handbook's desirability) [-]
    level : float
        level of the profile intervals, 0 < level < 1 [-]
    next_tests : int
        how many untested table liquids to propose for the next bench round (0 for none)
    food : bool
        propose only liquids used on food (carrier or extraction roles)
    two_spheres : bool
        also fit two spheres whose union explains the results (good/partial/bad only)
    graded : bool
        numeric scores only: fit the scores themselves (they fall with the squared Hansen distance from
        the centre, :func:`~solvsel.science.sphere.fit_graded`), the cut-off giving the radius; the
        good/bad fit is kept beside it and the target is the graded sphere
    prior : str, optional
        a SMILES whose structure estimate is offered as a prior for the centre: the graded fit is pulled
        toward it by the estimate's uncertainty, and the result says whether the results agree with it
        (a likelihood-ratio test at 5 %); with a good/bad fit, only the distance and whether the
        estimate lies inside the sphere are given
    save_as, into : str, optional
        save the sphere as a solute named ``save_as`` in the user's solutes CSV ``into``
        (created if missing, other rows kept); both or neither
    category : str
        category of the saved solute, one of :data:`SOLUTE_CATEGORIES`
    """

    path: str
    good_at_most: float | None = None
    good_at_least: float | None = None
    partial: str = "good"
    partial_weight: float = 0.5
    rule: str = "margin"
    lapse: float = 0.05
    level: float = 0.90
    next_tests: int = 5
    food: bool = False
    two_spheres: bool = False
    graded: bool = False
    prior: str | None = None
    save_as: str | None = None
    into: str | None = None
    category: str = "other"

    def __post_init__(self) -> None:
        put = object.__setattr__.__get__(self)
        if not isinstance(self.path, (str, Path)) or not str(self.path).strip():
            raise InputError("give the path of a bench-results CSV file", param="path", value=self.path,
                             expected="a path to a CSV file")
        put("path", str(self.path).strip())
        put("good_at_most", check_number(self.good_at_most, "good_at_most", allow_none=True))
        put("good_at_least", check_number(self.good_at_least, "good_at_least", allow_none=True))
        if self.good_at_most is not None and self.good_at_least is not None:
            raise InputError("give one cut-off: good at most (low is best) or good at least (high is best)",
                             param="good_at_least", value=self.good_at_least, expected="one cut-off")
        put("partial", check_choice(self.partial, "partial", ("good", "bad")))
        put("partial_weight", check_number(self.partial_weight, "partial_weight", 0.0, None, lo_open=True))
        put("rule", check_choice(self.rule, "rule", RULES))
        put("lapse", check_number(self.lapse, "lapse", 0.0, 1.0))
        if self.lapse >= 1.0:
            raise InputError(f"expected a number from 0 up to (not including) 1, got {self.lapse:g}", param="lapse",
                             value=self.lapse, expected="a number from 0 up to (not including) 1")
        put("level", check_number(self.level, "level", 0.0, 1.0, lo_open=True))
        if self.level >= 1.0:
            raise InputError(f"expected a number between 0 and 1, got {self.level:g}", param="level",
                             value=self.level, expected="a number between 0 and 1")
        put("next_tests", check_int(self.next_tests, "next_tests", lo=0))
        put("food", check_bool(self.food, "food"))
        put("two_spheres", check_bool(self.two_spheres, "two_spheres"))
        put("graded", check_bool(self.graded, "graded"))
        if self.graded and self.good_at_most is None and self.good_at_least is None:
            raise InputError("a graded fit needs numeric scores and the cut-off of a good result: good at most N "
                             "(low is best) or good at least N (high is best)", param="graded", value=True,
                             expected="good_at_most or good_at_least with numeric scores")
        if self.prior is not None:
            if not isinstance(self.prior, str) or not self.prior.strip():
                raise InputError("expected the SMILES of the solute for the prior", param="prior", value=self.prior,
                                 expected="a SMILES string")
            put("prior", self.prior.strip())
        put("category", check_choice(self.category, "category", SOLUTE_CATEGORIES))
        self._check_saving(put)

    def _check_saving(self, put) -> None:
        if (self.save_as is None) != (self.into is None):
            missing = "into" if self.into is None else "save_as"
            raise InputError("a name for the sphere and the solutes file to save it into go together: give both",
                             param=missing, expected="both save_as and into, or neither")
        if self.save_as is not None:
            if not str(self.save_as).strip():
                raise InputError("expected a name for the fitted solute", param="save_as", value=self.save_as,
                                 expected="a name")
            put("save_as", str(self.save_as).strip())
            put("into", str(self.into))


@dataclass(frozen=True)
class FitResult:
    """The fitted sphere with what the bench needs next.

    Attributes
    ----------
    request : FitRequest
    sphere : SphereFit
        centre, R0, fit quality, wrong-side liquids, intervals (see :class:`~solvsel.science.sphere.SphereFit`)
    bench : BenchData
        the liquids of the file with their HSP and where those came from
    suggestions : tuple of SuggestedTest
        untested liquids worth testing next (a heuristic)
    two : TwoSphereFit or None
        the two-sphere fit, when asked
    graded : GradedFit or None
        the fit of the scores themselves, when asked
    prior : dict or None
        the structure estimate offered as a prior and what the data say of it: ``smiles``, ``dD``, ``dP``,
        ``dH`` [MPa^0.5], ``ra_to_sphere`` (from the good/bad sphere's centre) [MPa^0.5], ``red``,
        ``inside``, and with a graded fit ``ra_to_graded``, ``lr``, ``p_value``, ``agree``
    saved : dict or None
        ``{"name", "file", "action"}`` when the sphere was saved ("created" or "appended")
    cautions : tuple of str
        what to keep in mind, the closing deferral last
    """

    request: FitRequest
    sphere: SphereFit
    bench: BenchData
    suggestions: tuple[SuggestedTest, ...] = ()
    two: TwoSphereFit | None = None
    graded: GradedFit | None = None
    prior: dict | None = None
    saved: dict | None = None
    cautions: tuple[str, ...] = ()
    #: version and tables' checksum of the answer (no legal rule is applied to a fit)
    audit: dict = field(default_factory=dict)

    @property
    def target(self) -> Target:
        """The fitted sphere as a target for ranking and blends (basis "fitted")."""
        f = self.sphere
        name = self.request.save_as or f"bench fit ({Path(self.bench.path).name})"
        g = self.graded
        if g is not None and g.r0 is not None:
            note = (f"sphere fitted to the {g.n} graded bench results (scores worsen with Ra^2); "
                    f"{100 * g.r2:.0f} % of their variance explained")
            return Target(name, g.dD, g.dP, g.dH, g.r0, "fitted", None, note)
        note = f"sphere fitted to {f.n_liquids} bench results; fit {f.fit:.2f}"
        if not f.success:
            note += f"; {f.message}"
        return Target(name, float(f.dD), float(f.dP), float(f.dH), float(f.r0), "fitted", None, note,
                      uncertainty=self._interval_uncertainty())

    def _interval_uncertainty(self) -> dict | None:
        """The sphere's profile intervals as the target's uncertainty (for how sure a ranking is)."""
        iv = getattr(self.sphere, "interval", None) or {}
        if not all(isinstance(iv.get(k), (list, tuple)) and len(iv[k]) == 2 for k in ("dD", "dP", "dH")):
            return None
        return {**{k: [float(v) for v in iv[k]] for k in ("dD", "dP", "dH")},
                "level": float(iv.get("level", self.request.level)), "kind": "interval"}

    def liquids_summary(self) -> str:
        """Where the liquids' HSP came from, in words (table, reference library, blends, the user's values)."""
        rows = self.bench.rows
        lib = [r.label for r in rows if r.basis.startswith("library")]
        own = [r.label for r in rows if r.basis == "your values"]
        parts = [f"{sum(r.basis == 'table' for r in rows)} from the table"]
        if lib:
            parts.append(f"{len(lib)} from the reference library chemicals ({', '.join(lib)})")
        n_blends = sum(r.basis.startswith("blend") for r in rows)
        if n_blends:
            parts.append(f"{n_blends} blend(s) by volume-fraction average")
        if own:
            parts.append(f"{len(own)} with your own dD, dP, dH ({', '.join(own)})")
        n_partial = sum(r.result == "partial" for r in rows)
        if n_partial:
            parts.append(f"{n_partial} partial result(s) counted {self.request.partial} at weight "
                         f"{self.request.partial_weight:g}")
        return "; ".join(parts)

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel fit --json``: the sphere, the input, each liquid, next tests, cautions."""
        q = self.request
        out = self.sphere.to_dict()
        out["input"] = {
            "file": self.bench.path, "scale": self.bench.scale, "good_at_most": q.good_at_most,
            "good_at_least": q.good_at_least, "partial": q.partial, "partial_weight": q.partial_weight,
            "lapse": q.lapse,
        }
        for item, row in zip(out["liquids"], self.bench.rows):
            item["row"] = row.row
            item["basis"] = row.basis
            item["given"] = row.result if row.score is None else row.score
            item["dD"], item["dP"], item["dH"] = row.dD, row.dP, row.dH
        out["next_tests"] = {"method": NEXT_TESTS_METHOD, "liquids": [s.to_dict() for s in self.suggestions]}
        out["saved"] = None if self.saved is None else dict(self.saved)
        if self.two is not None:
            out["two_spheres"] = self.two.to_dict()
        out["graded"] = None if self.graded is None else self.graded.to_dict()
        out["prior"] = None if self.prior is None else dict(self.prior)
        out["cautions"] = list(self.cautions)
        out["audit"] = self.audit
        return out

    def to_frame(self):
        """The liquids of the file as a pandas DataFrame (name, result, weight, RED, where from, HSP)."""
        from ._base import frame

        return frame(self.to_dict()["liquids"])


def fit(request: FitRequest | None = None, *, catalog: Catalog | None = None, **fields) -> FitResult:
    """Fit a solute's Hansen sphere to a file of bench results (see :class:`FitRequest` for the fields).

    Raises :class:`~solvsel.errors.TableError` (file, row, column) for a malformed file and
    :class:`~solvsel.errors.InputError` for a bad field or a set of results no sphere can be fitted to.
    """
    q = build_request(FitRequest, request, fields)
    if q.into is not None:  # before the work: not a folder, its folder there and writable
        check_write_target(q.into, param="into")
    cat = catalog_or_default(catalog)
    read = read_bench(q.path, cat)
    bench = bench_liquids(read, partial=q.partial, partial_weight=q.partial_weight)
    sphere = fit_bench(bench, partial=q.partial, good_at_most=q.good_at_most, good_at_least=q.good_at_least,
                       rule=q.rule, lapse=q.lapse, level=q.level)
    two = fit_bench_two_spheres(bench, partial=q.partial, rule=q.rule, lapse=q.lapse) if q.two_spheres else None
    estimate = _prior_estimate(q.prior) if q.prior is not None else None
    graded = _graded(q, bench, estimate) if q.graded else None
    pool = _next_test_pool(cat, q.food, read.keys) if q.next_tests else []
    suggestions = _suggest(sphere, pool, q.next_tests)
    saved = None
    if q.save_as is not None:
        row = solute_row(sphere, q.save_as, source=f"bench fit of {bench.path}", category=q.category)
        saved = {"name": row["name"], "file": q.into, "action": save_solute(row, q.into)}
    return FitResult(q, sphere, bench, tuple(suggestions), two, graded, _prior_summary(q.prior, estimate, sphere, graded),
                     saved, _cautions(sphere, suggestions, pool, cat), audit_block((), cat.tables_dir))


def _prior_estimate(smiles: str):
    """The structure estimate of the prior's SMILES (an error about it names the ``prior`` field)."""
    from ..errors import SolvselError
    from ..science.structure import estimate

    try:
        return estimate(smiles, properties=False)
    except SolvselError as exc:  # the SMILES is this request's prior field
        exc.param, exc.value = "prior", smiles
        raise


def _graded(q: FitRequest, bench: BenchData, est) -> GradedFit:
    """The graded fit of a numbers file (the cut-off orients the scale and sets the radius)."""
    if bench.scale != "numbers":
        raise InputError("a graded fit takes numeric scores; this file has good/partial/bad", param="graded",
                         value=True, expected="a file of numeric scores")
    import numpy as np

    scores = np.array([r.score for r in bench.rows])
    low_best = q.good_at_most is not None
    prior = prior_sd = None
    if est is not None:
        prior = (est.dD, est.dP, est.dH)
        u = est.uncertainty or {}
        if all(k in u for k in ("dD", "dP", "dH")):  # mean absolute error -> standard deviation (x 1.25)
            prior_sd = tuple(1.25 * float(u[k]) for k in ("dD", "dP", "dH"))
    boundary, _ = score_boundary(scores, q.good_at_most, q.good_at_least)
    return fit_graded(bench.hsp, scores, cut=boundary, higher_is_better=not low_best, prior=prior, prior_sd=prior_sd)


def _prior_summary(smiles: str | None, est, sphere: SphereFit, graded: GradedFit | None) -> dict | None:
    """Where the structure estimate lies against the fitted spheres (and the graded fit's test of it)."""
    if est is None:
        return None
    import numpy as np

    from ..science.hansen import ra

    h = np.array([est.dD, est.dP, est.dH])
    d = float(ra(h, sphere.hsp))
    out = {"smiles": smiles, "dD": float(est.dD), "dP": float(est.dP), "dH": float(est.dH),
           "uncertainty": dict(est.uncertainty or {}), "ra_to_sphere": d, "red": d / sphere.r0,
           "inside": bool(d < sphere.r0)}
    if graded is not None and graded.prior is not None:
        out.update(ra_to_graded=float(ra(h, np.array(graded.free))), lr=graded.prior["lr"],
                   p_value=graded.prior["p_value"], agree=graded.prior["agree"])
    return out


def _next_test_pool(cat: Catalog, food: bool, tested: frozenset) -> list:
    """Liquids of the tables worth a bench test: not tested yet, liquid at room temperature, used on food if asked."""
    return [r for r in cat.solvent_records()
            if (r.food_use or not food) and (r.bp_C is None or r.bp_C > BENCH_MIN_BP_C) and liquid_key(r) not in tested]


def _suggest(sphere: SphereFit, pool: list, k: int) -> list[SuggestedTest]:
    if not pool:
        return []
    import numpy as np

    return suggest_tests(sphere, np.array([r.hsp for r in pool]), [r.name for r in pool], k=k)


def _cautions(sphere: SphereFit, suggestions, pool, cat: Catalog) -> tuple[str, ...]:
    """The fit's own cautions, then those of each liquid proposed for a bench test, the deferral last."""
    out = [_GENERAL_CAUTION]
    if not sphere.separable:
        out.append(_UNEXPLAINED_CAUTION)
    if sphere.open:
        out.append(_OPEN_CAUTION)
    by_name = {r.name: r for r in pool}
    for s in suggestions:
        out += [c for c in solvent_cautions(by_name[s.name], use="bench", cat=cat) if c != DEFER]
    out.append(DEFER)
    return tuple(dict.fromkeys(out))
