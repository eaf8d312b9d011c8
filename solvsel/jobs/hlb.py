"""Required HLB of an oil phase and the emulsifier systems that hit it: the ``hlb`` job.

One request can ask for any of these, together:

- the required HLB of an oil phase (mass-weighted over its oils, from the
  tables, the user's own values or an estimate from Hansen parameters), or a
  target HLB typed in, and every pair (and, on request, triple) of the allowed
  emulsifiers that reaches it, best first, with the legal rules on record for
  the emulsifiers shown;
- Griffin's and Davies' HLB of one structure (SMILES);
- a bench series spanning an HLB range with two emulsifiers, grams per batch;
- the required HLB fitted back from the stability scores of such a series.

Every result carries the cautions of HLB work and the closing caution.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Sequence

from ..data.catalog import Catalog
from ..data.provenance import audit_block
from ..errors import InputError, OutOfRangeError
from ..rules.cautions import DEFER
from ..rules.regulations import Limit, check_purpose, limits, not_for_purpose, rows_for_purpose
from ..science.hlb import (
    BenchSeries,
    Emulsifier,
    EmulsifierSystem,
    RequiredHLBFit,
    all_emulsifiers,
    bench_series,
    davies_hlb_from_smiles,
    emulsifier_systems,
    fit_required_hlb,
    griffin_hlb_from_smiles,
    normalize_fractions,
    oil_phase_required_hlb,
    pool_from_catalog,
)
from ..science.hlb import read_smiles
from ._base import (
    build_request,
    catalog_or_default,
    check_bool,
    check_category,
    check_fraction,
    check_int,
    check_jurisdictions,
    check_names,
    check_number,
    check_pairs,
    frame,
)
from .pool import check_purpose_text

__all__ = [
    "HlbRequest",
    "HlbResult",
    "hlb",
    "HLB_CAUTIONS",
]

#: Cautions every HLB result carries (common practice; see :mod:`solvsel.science.hlb`).
HLB_CAUTIONS = (
    "HLB is a starting point for bench work: it ignores temperature, salt, oil chemistry, "
    "concentration and the emulsifiers' chemical family; confirm the required HLB with a bench series.",
    "Ethoxylated emulsifiers (polysorbates) lose their balance near their cloud point: hot filling "
    "or warm storage can break an emulsion that was stable at room temperature.",
    "Emulsifier use in the finished food or drink is limited by law and differs by jurisdiction: "
    "check the regulations in force for the product category and country of sale.",
)

#: Largest HLB a value may have (Davies' scale reaches 40; Griffin's ends at 20).
HLB_MAX = 40.0


# ----------------------------------------------------------------------------- checks shared with emulsion


# ----------------------------------------------------------------------------- request


@dataclass(frozen=True)
class HlbRequest:
    """What to work out: give at least one of ``oil`` (or ``target``), ``smiles``, ``series``, ``scores``.

    Attributes
    ----------
    oil : tuple of (name, amount), optional
        the oil phase: oils of ``tables/oils.csv`` (or weighting agents) with
        their mass fractions (summing to 1) or percent (summing to 100)
    rhlb : tuple of (name, HLB), optional
        the user's own required HLB [-] for oils of the phase (wins over the
        table and the estimates)
    target : float, optional
        aim at this HLB [-] (0 to 40) instead of an oil phase
    emulsifiers : tuple of str, optional
        the allowed pool (names, synonyms or CAS); default every nonionic and
        zwitterionic emulsifier of the table with an HLB
    triples : bool
        also blends of three emulsifiers (the most balanced fractions)
    top : int
        how many systems of each size to return, best first (default 10)
    min_fraction : float
        leave out systems in which an emulsifier is below this mass fraction
        of the emulsifier blend [-] (default 0.05)
    jurisdictions : tuple of str, optional
        US and/or EU: the legal rules on record for the emulsifiers returned
    category : str
        food category for those rules (default "flavoured drinks")
    purpose : str, optional
        what the product is, an id of tables/purposes.csv (e.g. ``finished_food``): an emulsifier's
        rule counts only where it authorises that purpose
    smiles : str, optional
        a structure whose HLB is wanted by Griffin (nonionic) and Davies
    series : (str, str), optional
        lay out a bench series with these two emulsifiers, low HLB first
    n : int
        number of blends in the series, 2 to 50 (default 9)
    span : (float or None, float or None), optional
        HLB range of the series [-]; None (or a None end) is the pair's own reach
    batch_g : float
        batch size of the series [g] (default 100)
    emulsifier_pct : float
        total emulsifier in each batch [% w/w] (default 5)
    oil_pct : float
        oil phase in each batch [% w/w] (default 20)
    scores : tuple of (HLB, score), optional
        stability scores of a series (higher is more stable): the required HLB
        is fitted back from them
    lower_is_better : bool
        the scores are droplet sizes or cream heights (lower is more stable)

    >>> HlbRequest(target=12, emulsifiers=["polysorbate 80", "sorbitan monooleate"]).emulsifiers
    ('polysorbate 80', 'sorbitan monooleate')
    """

    oil: tuple[tuple[str, float], ...] | None = None
    rhlb: tuple[tuple[str, float], ...] | None = None
    target: float | None = None
    emulsifiers: tuple[str, ...] | None = None
    triples: bool = False
    top: int = 10
    min_fraction: float = 0.05
    jurisdictions: tuple[str, ...] | None = None
    category: str = "flavoured drinks"
    purpose: str | None = None
    smiles: str | None = None
    series: tuple[str, str] | None = None
    n: int = 9
    span: tuple[float | None, float | None] | None = None
    batch_g: float = 100.0
    emulsifier_pct: float = 5.0
    oil_pct: float = 20.0
    scores: tuple[tuple[float, float], ...] | None = None
    lower_is_better: bool = False

    def __post_init__(self) -> None:
        put = object.__setattr__
        put(self, "oil", check_pairs(self.oil, "oil", lo=0.0))
        if self.oil is not None:
            normalize_fractions([a for _, a in self.oil], param="oil")
        put(self, "rhlb", check_pairs(self.rhlb, "rhlb", lo=0.0, hi=HLB_MAX))
        put(self, "target", check_number(self.target, "target", 0.0, HLB_MAX, allow_none=True))
        if self.oil is not None and self.target is not None:
            raise InputError("give an oil phase or a target HLB, not both", param="target", value=self.target,
                             expected="no target with an oil phase")
        put(self, "emulsifiers", check_names(self.emulsifiers, "emulsifiers"))
        put(self, "top", check_int(self.top, "top", 0))
        put(self, "min_fraction", check_fraction(self.min_fraction, "min_fraction"))
        put(self, "jurisdictions", check_jurisdictions(self.jurisdictions, allow_none=True))
        put(self, "category", check_names(self.category, "category", allow_none=False)[0])
        put(self, "purpose", None if self.purpose is None else check_purpose_text(self.purpose))
        if self.smiles is not None and not str(self.smiles).strip():
            raise InputError("expected a SMILES string, got nothing", param="smiles", value=self.smiles)
        if self.smiles is not None:
            read_smiles(self.smiles)  # an unreadable SMILES is an error; what the methods do not cover is not
        for name in ("triples", "lower_is_better"):
            put(self, name, check_bool(getattr(self, name), name))
        self._check_series()
        put(self, "scores", check_pairs(self.scores, "scores", numeric_keys=True))
        if not any(v is not None for v in (self.oil, self.target, self.smiles, self.series, self.scores)):
            raise InputError("nothing to do: give an oil phase or a target HLB (and the emulsifiers to pair), "
                             "a structure (SMILES), two emulsifiers for a bench series, or the scores of a series",
                             param="oil", expected="an oil phase, a target, a SMILES, a series or scores")

    def _check_series(self) -> None:
        put = object.__setattr__
        series = check_names(self.series, "series")
        if series is not None and len(series) != 2:
            raise InputError(f"expected two emulsifiers, the low-HLB one first, got {len(series)}", param="series",
                             value=", ".join(series), expected="two emulsifiers, low HLB first")
        put(self, "series", series)
        put(self, "n", check_int(self.n, "n", 2, 50))
        if self.span is not None:
            try:
                lo, hi = self.span
            except (TypeError, ValueError):
                raise InputError(f"expected two HLB values FROM, TO, got {self.span!r}", param="span",
                                 value=self.span, expected="two HLB values FROM, TO") from None
            put(self, "span", (check_number(lo, "span", 0.0, HLB_MAX, allow_none=True),
                               check_number(hi, "span", 0.0, HLB_MAX, allow_none=True)))
        put(self, "batch_g", check_number(self.batch_g, "batch_g", 0.0, None, unit="g", lo_open=True))
        put(self, "emulsifier_pct", check_number(self.emulsifier_pct, "emulsifier_pct", 0.0, 100.0, unit="% w/w",
                                                 lo_open=True))
        put(self, "oil_pct", check_number(self.oil_pct, "oil_pct", 0.0, 100.0, unit="% w/w", lo_open=True))
        if self.emulsifier_pct + self.oil_pct >= 100:
            raise InputError(f"emulsifier ({self.emulsifier_pct:g} %) plus oil ({self.oil_pct:g} %) leave no water "
                             "phase", param="oil_pct", value=self.oil_pct,
                             expected=f"less than {100 - self.emulsifier_pct:g} %")


# ----------------------------------------------------------------------------- result


@dataclass(frozen=True)
class HlbResult:
    """What the request asked for; parts not asked for are None.

    ``pairs`` (and ``triples``) are the best ``top`` systems, best first;
    ``pairs_found`` counts every pair that reaches the target.
    ``required_hlb_range`` is the oil phase's (low, high) where some oil's
    value has a range (a published one, or an estimate's); ``range_ends``
    then gives, for each end, ``{required_hlb, pairs, pairs_found, message}``:
    the pairs (and their fractions) that reach that end.
    ``emulsifier_rules`` lists, per emulsifier shown and jurisdiction, the
    rule on record or "no data" (never taken as allowed), or "not allowed for
    this purpose" (naming what its rules allow it for).  ``structure`` holds
    Griffin's and Davies' results for a SMILES (or why a method does not apply);
    ``audit`` the version, the tables' checksum and the rules applied.
    """

    required_hlb: float | None = None
    oil_phase: tuple[dict, ...] | None = None
    required_hlb_range: tuple[float, float] | None = None
    range_ends: tuple[dict, ...] | None = None
    pairs: tuple[EmulsifierSystem, ...] | None = None
    pairs_found: int | None = None
    triples: tuple[EmulsifierSystem, ...] | None = None
    message: str | None = None
    emulsifier_rules: tuple[dict, ...] | None = None
    structure: dict | None = None
    series: BenchSeries | None = None
    fit: RequiredHLBFit | None = None
    cautions: tuple[str, ...] = ()
    audit: dict = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel hlb --json``: the parts asked for, then the cautions."""
        parts = {
            "structure": self.structure,
            "oil_phase": None if self.oil_phase is None else list(self.oil_phase),
            "required_hlb": self.required_hlb,
            "required_hlb_range": None if self.required_hlb_range is None else list(self.required_hlb_range),
            "range_ends": None if self.range_ends is None else list(self.range_ends),
            "pairs": None if self.pairs is None else [s.to_dict() for s in self.pairs],
            "pairs_found": self.pairs_found,
            "message": self.message,
            "triples": None if self.triples is None else [s.to_dict() for s in self.triples],
            "emulsifier_rules": None if self.emulsifier_rules is None else list(self.emulsifier_rules),
            "series": None if self.series is None else self.series.to_dict(),
            "fit": None if self.fit is None else self.fit.to_dict(),
        }
        out = {k: v for k, v in parts.items() if v is not None}
        out["cautions"] = list(self.cautions)
        out["audit"] = self.audit
        return out

    def to_frame(self):
        """The pairs returned, one row each (empty when no target was asked for)."""
        cols = ["a", "fraction_a", "b", "fraction_b", "hlb", "same_tail", "computed_hlb"]
        return frame(({k: s.to_dict()[k] for k in cols} for s in self.pairs or ()), cols)


# ----------------------------------------------------------------------------- the job


def _structure(smiles: str) -> dict:
    """Griffin's and Davies' HLB of a structure; a method that does not apply says why."""
    out = {}
    for method, fn in (("griffin", griffin_hlb_from_smiles), ("davies", davies_hlb_from_smiles)):
        try:
            out[method] = fn(smiles).to_dict()
        except (InputError, LookupError) as exc:  # Davies has no number for a group; Griffin needs a fatty chain
            out[method] = {"error": getattr(exc, "message", str(exc))}
    return out


def _systems(cat: Catalog, req: HlbRequest, target: float) -> tuple[list[Emulsifier], dict]:
    """The pool and the pairs (and triples) of it that reach ``target``."""
    pool = pool_from_catalog(cat, req.emulsifiers) if req.emulsifiers else all_emulsifiers(cat)
    pairs = emulsifier_systems(pool, target, 2, req.min_fraction)
    out: dict = {"pairs": tuple(pairs[: req.top]), "pairs_found": len(pairs)}
    if not pairs:
        out["message"] = (f"no pair of the pool reaches HLB {target:.2f} with every emulsifier at "
                          f"{req.min_fraction:.0%} or more (allow a smaller fraction)")
    if req.triples:
        out["triples"] = tuple(emulsifier_systems(pool, target, 3, req.min_fraction)[: req.top])
    return pool, out


def _range_ends(cat: Catalog, req: HlbRequest, ends: tuple[float, float]) -> tuple[dict, ...]:
    """The pairs at each end of the required HLB's range (an end the pool cannot reach says so)."""
    out = []
    for end in ends:
        try:
            _, found = _systems(cat, req, end)
        except OutOfRangeError as exc:  # the pool does not reach this end
            found = {"pairs": (), "pairs_found": 0, "message": exc.message}
        out.append({"required_hlb": end, "pairs": [p.to_dict() for p in found["pairs"]],
                    "pairs_found": found["pairs_found"], "message": found.get("message")})
    return tuple(out)


def _emulsifier_rules(cat: Catalog, req: HlbRequest, pool: Sequence[Emulsifier],
                      systems: Sequence[EmulsifierSystem], consulted: dict[Limit, None]) -> tuple[dict, ...]:
    """Rules on record for each emulsifier shown (for the product's purpose when given); none on record
    is said, never taken as allowed; every row consulted is added to ``consulted``."""
    category = check_category(cat, req.category)
    purpose = check_purpose(cat, req.purpose)
    shown = list(dict.fromkeys(n for s in systems for n in s.names))
    by_name = {e.name: e for e in pool}
    rows = []
    for name in shown:
        e = by_name[name]
        for j in req.jurisdictions:
            every = limits(cat, cas=e.cas or None, substance=None if e.cas else name, jurisdiction=j,
                           category=category, use="emulsifier")
            consulted.update(dict.fromkeys(every))
            found = rows_for_purpose(every, purpose)
            for lim in found:
                rows.append({"emulsifier": name, "jurisdiction": j, "rule": lim.rule, "limit": lim.limit,
                             "unit": lim.unit, "status": lim.status, "text": lim.describe(),
                             "purposes": list(lim.purposes)})
            if every and not found:
                status, text = not_for_purpose(name, "emulsifier", j, purpose, every)
                rows.append({"emulsifier": name, "jurisdiction": j, "rule": "; ".join(dict.fromkeys(r.rule for r in every)),
                             "limit": None, "unit": None, "status": status, "text": text, "purposes": []})
            elif not every:
                rows.append({"emulsifier": name, "jurisdiction": j, "rule": None, "limit": None, "unit": None,
                             "status": "no data",
                             "text": f"no rule on record for {name} in {j} {req.category}: not treated as allowed",
                             "purposes": []})
    return tuple(rows)


def _series(cat: Catalog, req: HlbRequest) -> BenchSeries:
    low, high = pool_from_catalog(cat, req.series, param="series")
    lo, hi = req.span if req.span is not None else (None, None)
    return bench_series(low, high, req.n, lo, hi, req.batch_g, req.emulsifier_pct, req.oil_pct)


def hlb(request: HlbRequest | None = None, *, catalog: Catalog | None = None, **fields) -> HlbResult:
    """Required HLB, emulsifier systems, the HLB of a structure, a bench series or a fit, as asked.

    Examples
    --------
    70 % d-limonene with 30 % medium-chain triglycerides, paired from two
    oleates; the pair's HLB is the required HLB (mass-weighted, Griffin 1949):

    >>> r = hlb(oil=[("d-limonene", 70), ("medium-chain triglycerides", 30)],
    ...         emulsifiers=["polysorbate 80", "sorbitan monooleate"])
    >>> p = r.pairs[0]
    >>> p.names, round(p.hlb - r.required_hlb, 9)
    (('polysorbate 80', 'sorbitan monooleate'), 0.0)
    """
    req = build_request(HlbRequest, request, fields)
    cat = catalog_or_default(catalog)
    check_purpose(cat, req.purpose)
    parts: dict = {"structure": _structure(req.smiles) if req.smiles is not None else None}
    cautions: list[str] = []
    consulted: dict[Limit, None] = {}
    target = req.target
    if req.oil is not None:
        phase = oil_phase_required_hlb(cat, req.oil, dict(req.rhlb) if req.rhlb else None)
        target = phase.required_hlb
        parts["oil_phase"] = phase.components
        cautions += phase.cautions
        if phase.required_hlb_range is not None:
            parts["required_hlb_range"] = phase.required_hlb_range
            parts["range_ends"] = _range_ends(cat, req, phase.required_hlb_range)
    if target is not None:
        parts["required_hlb"] = target
        pool, systems = _systems(cat, req, target)
        parts.update(systems)
        shown = systems["pairs"] + systems.get("triples", ())
        if req.jurisdictions and shown:
            parts["emulsifier_rules"] = _emulsifier_rules(cat, req, pool, shown, consulted)
    if req.series is not None:
        parts["series"] = _series(cat, req)
    if req.scores is not None:
        parts["fit"] = fit_required_hlb([h for h, _ in req.scores], [s for _, s in req.scores],
                                        "low" if req.lower_is_better else "high")
    return HlbResult(**parts, cautions=tuple(cautions) + HLB_CAUTIONS + (DEFER,),
                     audit=audit_block(consulted, cat.tables_dir))
