"""The ``blend`` job: the best blends of up to four liquids for a target, under constraints.

The liquids are the one candidate pool (:mod:`solvsel.jobs.pool`: use, property
limits, hazard, food law, temperature, each liquid left out with its reason).
For every combination the volume fractions closest to the target are exact
(:func:`solvsel.science.blends.exact_candidates`); the best blends are then
checked one by one, best first: one phase at their fractions
(:mod:`solvsel.science.miscibility`: measured pairs first, prediction
otherwise, a blend of three or four liquids also as a whole), the carrier
limits at a dose (:func:`solvsel.rules.regulations.carrier_dose_check`), and
blends the model cannot tell apart (liquids of the same HSP at the same
fractions) are folded into one.  With solutes to reject, the blends are
sorted into non-dominated layers of (fit, distance of the nearest reject).

.. math::
    \\delta_\\mathrm{blend} = \\sum_i \\phi_i \\delta_i,\\qquad
    \\mathrm{RED} = R_a(\\delta_\\mathrm{blend}, \\delta_t) / R_0

Example: nitrocellulose (sphere 15.4, 14.7, 8.8 with R0 11.5 MPa^0.5, from
memory of the polymer table of Hansen's handbook, 2007) is dissolved by neither
diethyl ether nor ethanol (RED > 1) but by their blend, the classic collodion
solvent:

>>> from solvsel.jobs.blend import blend
>>> res = blend(hsp=(15.4, 14.7, 8.8, 11.5), max_components=2, only=("diethyl ether", "ethanol"))
>>> [(b.label, round(b.red, 2)) for b in res.results]
[('diethyl ether 0.48 + ethanol 0.52', 0.82), ('ethanol 1.00', 1.06), ('diethyl ether 1.00', 1.1)]
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Any, Callable

import numpy as np

from ..data.catalog import Catalog
from ..data.provenance import audit_block
from ..errors import InputError, UnknownNameError
from ..rules.cautions import DEFER, solvent_cautions
from ..rules.regulations import carrier_dose_check
from ..science.blends import (
    MAX_COMPONENTS,
    BestCandidates,
    Blend,
    BlendComponent,
    Candidates,
    DroppedBlend,
    FractionBound,
    RejectDistance,
    SearchCancelled,
    blend_solubility,
    one_phase,
    one_phase_screen,
    pareto_front,
    pareto_layers,
    stream_candidates,
)
from ..science.formulation import Step
from ..science.miscibility import PairMatrix, pair_matrix
from ..science.hansen import SCALE, as_hsp, convert_fractions
from ..science.target import Target, target_from_hsp
from ._base import (build_request, catalog_or_default, check_bool, check_choice, check_int, check_names, check_number,
                    check_pairs, frame, target_of)
from .load import DEFAULT_STORAGE_C, check_load_value, check_storage, load_info
from .parse import parse_amounts, parse_chain, parse_fraction_bound, parse_hsp
from .pool import Candidate, LeftOut, Pool, PoolRequest, hazard_rank, solvent_named

__all__ = ["BlendRequest", "BlendResult", "blend", "SORTS", "GENERAL_CAUTION"]

#: Orders of the blends shown.
SORTS = ("fit", "selectivity", "cost")

#: The caution every blend search carries.
GENERAL_CAUTION = (
    "Screening estimate from Hansen solubility parameters (blend HSP by volume-fraction average): "
    "confirm solubility, phase behaviour and stability at the bench; measured data win."
)

#: Blends checked one by one (one phase, dose) at most, best first.
_SCAN_LIMIT = 20000
#: Dropped blends listed individually (the rest are counted).
_DROPPED_LISTED = 30
#: Fields of a request that are the pool's filters.


@dataclass(frozen=True)
class BlendRequest(PoolRequest):
    """What to search: the target, the pool, the bounds and checks, and what to show.

    Attributes
    ----------
    solute, hsp, smiles, target : optional
        the target, exactly one of: a solute of the tables; typed HSP
        ``(dD, dP, dH[, R0])`` [MPa^0.5]; a SMILES; a ready :class:`~solvsel.science.target.Target`
    max_components : int
        largest blend, 1 to 4 (default 3)
    only, exclude, use, food, jurisdiction, purpose, worst_flammable_category, bp_min_C, bp_max_C, min_flash_C, max_cost, max_health_hazard
        the filters of the candidate pool (:class:`~solvsel.jobs.pool.PoolFilters`; ``purpose``: what the
        product is, an id of tables/purposes.csv; ``max_health_hazard``: the worst health hazard allowed)
    bounds : tuple of FractionBound (or text such as "ethanol<=0.3")
        volume-fraction bounds [-] on single liquids; a lower bound above 0 puts
        the liquid in every blend
    temp_C : float
        temperature [C] (default 25): the liquids' HSP are shifted to it, the
        target's stay at their tabulated values
    rejects : tuple of str
        solutes of the tables to keep out of solution
    reject_hsp : tuple
        solutes to keep out given by their HSP ``(dD, dP, dH[, R0])`` [MPa^0.5] or as text "dD,dP,dH[,R0]"
    sort : {"fit", "selectivity", "cost"}, optional
        order of the blends: Ra; the trade-off of fit and reject distance (the
        default with rejects); cost, then fit
    one_phase_only : bool
        leave out blends measured or predicted to split into two phases (default True)
    min_fraction : float
        smallest volume fraction [-] of a liquid that counts as a component (0 to 0.5, default 0.05)
    top : int
        number of blends shown (default 10)
    dose : str or float, optional
        dose of the blend in the first stage ("0.15%", "1500ppm" or a mass
        fraction); with ``jurisdiction`` and ``category`` each blend is checked
        against the carrier limits of the food as consumed
    category : str, optional
        food category of the food as consumed
    chain : str, optional
        dilution chain from the blend to the food as consumed (the dose fills its first step)
    already : mapping or tuple of (name, mg/kg), optional
        what other ingredients already bring to the food as consumed [mg/kg]
    keep_over : bool
        list blends over a limit too (flagged) instead of leaving them out
    shown_only : bool
        check only for the blends shown (batch screening): the checks (one phase, dose) stop when
        ``top`` blends pass, the trade-off front is among those, and the blends dropped on the way
        are counted, not listed with their reasons.  By default blends are checked until 5 x
        ``top`` pass (at least 50, 200 with rejects), for the front beyond the blends shown
    load : str or float, optional
        the target's load in the blend (mass fraction, "2%"): each blend shown is checked for it over
        ``storage_C`` (:mod:`solvsel.jobs.load`) and marked where it cannot carry it
    storage_C : (float, float) or str
        storage range of the load check [C] (default 4 to 25)
    drop_over_load : bool
        leave out the blends that cannot carry the load (checked as the blends pass) instead of marking them
    """

    solute: str | None = None
    hsp: tuple[float, ...] | None = None
    smiles: str | None = None
    target: Target | None = None
    max_components: int = 3
    only: tuple[str, ...] | None = None
    exclude: tuple[str, ...] = ()
    use: str | None = None
    food: bool = False
    jurisdiction: str | None = None
    purpose: str | None = None
    worst_flammable_category: int | str | None = None
    bp_min_C: float | None = None
    bp_max_C: float | None = None
    min_flash_C: float | None = None
    max_cost: int | None = None
    max_health_hazard: str | None = None
    bounds: tuple[FractionBound, ...] = ()
    temp_C: float = 25.0
    rejects: tuple[str, ...] = ()
    reject_hsp: tuple[Any, ...] = ()
    sort: str | None = None
    one_phase_only: bool = True
    min_fraction: float = 0.05
    top: int = 10
    dose: str | float | None = None
    category: str | None = None
    chain: str | None = None
    already: tuple[tuple[str, float], ...] | None = None
    keep_over: bool = False
    shown_only: bool = False
    load: str | float | None = None
    storage_C: tuple[float, float] | str = DEFAULT_STORAGE_C
    drop_over_load: bool = False

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        set_(self, "load", check_load_value(self.load))
        set_(self, "storage_C", check_storage(self.storage_C))
        set_(self, "drop_over_load", check_bool(self.drop_over_load, "drop_over_load"))
        self.check_pool_fields()
        given = [k for k in ("solute", "hsp", "smiles", "target") if getattr(self, k) is not None]
        if len(given) != 1:
            raise InputError("no target: give a solute of the tables, typed HSP (dD, dP, dH[, R0]) or a SMILES"
                             if not given else f"give one target, not {' and '.join(given)}",
                             param=given[1] if given else "solute", expected="one of solute, hsp, smiles or target")
        for name in ("food", "one_phase_only", "keep_over", "shown_only"):
            set_(self, name, check_bool(getattr(self, name), name))
        if self.hsp is not None:
            target_from_hsp(self.hsp)  # checks the numbers and their ranges
            set_(self, "hsp", tuple(float(v) for v in self.hsp))
        set_(self, "max_components", check_int(self.max_components, "max_components", 1, MAX_COMPONENTS))
        set_(self, "top", check_int(self.top, "top", 1))
        set_(self, "min_fraction", check_number(self.min_fraction, "min_fraction", 0.0, 0.5))
        if self.min_fraction >= 0.5:
            raise InputError("the smallest fraction of a component must be below 0.5", param="min_fraction",
                             value=self.min_fraction, expected="a volume fraction from 0 to below 0.5")
        bounds = _sequence(self.bounds or (), "bounds", "fraction bounds such as ethanol<=0.3")
        set_(self, "bounds", tuple(b if isinstance(b, FractionBound) else parse_fraction_bound(b, "bounds")
                                   for b in bounds))
        set_(self, "rejects", check_names(self.rejects or (), "rejects") if self.rejects else ())
        spheres = self.reject_hsp or ()
        if not isinstance(spheres, str):
            spheres = _sequence(spheres, "reject_hsp", "dD,dP,dH[,R0] in MPa^0.5 for each solute to reject")
        if isinstance(spheres, str) or (len(spheres) and isinstance(spheres[0], (int, float))):
            spheres = (spheres,)  # one sphere given on its own
        set_(self, "reject_hsp", tuple(spheres))
        self.reject_spheres  # checks the typed rejects
        self._check_sort()
        self._check_dose()

    def _check_sort(self) -> None:
        has_rejects = bool(self.rejects or self.reject_hsp)
        sort = check_choice(self.sort, "sort", SORTS, allow_none=True)
        sort = sort or ("selectivity" if has_rejects else "fit")
        if sort == "selectivity" and not has_rejects:
            raise InputError("sorting by selectivity needs at least one solute to reject", param="sort",
                             value=sort, expected="fit or cost, or give solutes to reject")
        object.__setattr__(self, "sort", sort)

    def _check_dose(self) -> None:
        if self.already is not None:
            pairs = parse_amounts(self.already, "already") if isinstance(self.already, str) else self.already
            object.__setattr__(self, "already", check_pairs(pairs, "already", lo=0.0, unit="mg/kg") if pairs else ())
        if self.dose is None and self.chain is None:
            return
        if self.jurisdiction is None or self.category is None:
            param = "jurisdiction" if self.jurisdiction is None else "category"
            raise InputError("the dose check needs the jurisdiction and the food category of the food the "
                             "blend ends up in", param=param, expected="EU or US, and a food category")
        self.steps  # parses the dose and the chain

    @property
    def steps(self) -> list[Step] | None:
        """The dilution chain of the dose check (None without a dose)."""
        if self.dose is None and self.chain is None:
            return None
        return parse_chain(self.chain, None if self.dose is None else str(self.dose))

    @property
    def reject_spheres(self) -> list[tuple[str, np.ndarray, float | None]]:
        """The typed rejects as ``(label, (dD, dP, dH), R0 or None)``."""
        out = []
        for i, item in enumerate(self.reject_hsp, start=1):
            try:
                text = item if isinstance(item, str) else ",".join(f"{float(v):g}" for v in item)
            except (TypeError, ValueError):
                raise InputError(f"expected dD,dP,dH[,R0] in MPa^0.5, got {item!r}", param="reject_hsp", value=item,
                                 expected="dD,dP,dH[,R0] in MPa^0.5") from None
            v = parse_hsp(text, "reject_hsp", allow_r0=True)
            out.append((f"reject sphere {i} ({text})", _reject_hsp(v[:3], text), _reject_r0(v, text)))
        return out


def _sequence(value, param: str, expected: str) -> tuple:
    """``value`` as a tuple when it is a list, tuple or array of items (text or a number is refused)."""
    if not isinstance(value, (list, tuple, np.ndarray)):
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)
    return tuple(value)


def _reject_hsp(values, label: str) -> np.ndarray:
    try:
        return as_hsp(values, "reject_hsp")
    except InputError as exc:
        raise InputError(f"reject '{label}': {exc.message}", param="reject_hsp", value=label) from None


def _reject_r0(values, label: str) -> float | None:
    if len(values) < 4:
        return None
    if not values[3] > 0:
        raise InputError(f"reject '{label}': R0 must be a positive number of MPa^0.5, got {values[3]:g}",
                         param="reject_hsp", value=label, expected="a positive R0")
    return float(values[3])


@dataclass(frozen=True)
class BlendResult:
    """The best blends, best first, and how the search went.

    ``results`` the blends shown; ``pareto`` the non-dominated blends among
    those that passed every check (target RED or Ra, nearest reject, cost,
    hazard, number of liquids); ``dropped`` the blends that would have ranked
    above the last shown one but failed a check; ``excluded`` the liquids the
    pool left out (with filter and reason); ``counts`` how many combinations
    were searched and why the others went; ``success`` False (with
    ``message``) when no blend meets the constraints or the search was cancelled.
    ``cautions`` are those of every search; ``liquid_cautions`` those of the
    liquids of the blends shown, each once, the closing deferral last (each
    blend carries its own in ``Blend.cautions``).
    """

    target: dict
    results: tuple[Blend, ...]
    pareto: tuple[Blend, ...]
    dropped: tuple[DroppedBlend, ...]
    excluded: tuple[LeftOut, ...]
    counts: dict
    constraints: dict
    cautions: tuple[str, ...]
    success: bool
    message: str
    liquid_cautions: tuple[str, ...] = ()
    audit: dict = field(default_factory=dict)
    #: per blend shown (in the order of ``results``): its worst health hazard (``{"level", "category",
    #: "liquid", "liquids": {name: label}}``) and how sure it is (``{"in_top_three", "verdict"}``)
    health: tuple[dict, ...] = ()
    sure: tuple[dict, ...] = ()
    #: how the answers hold when the target is sampled within its uncertainty (summary)
    how_sure: dict | None = None
    #: per blend shown, with a ``load``: the load check (:func:`solvsel.jobs.load.load_info`)
    loads: tuple[dict | None, ...] = ()

    def _row(self, i: int, b: Blend) -> dict:
        """A blend of ``results`` as JSON, with its health hazard, how sure it is and its load check."""
        return {**b.to_dict(), "health_hazard": self.health[i] if i < len(self.health) else None,
                "how_sure": self.sure[i] if i < len(self.sure) else None,
                "load": self.loads[i] if i < len(self.loads) else None}

    def to_dict(self) -> dict:
        return {
            "target": self.target,
            "how_sure": self.how_sure,
            "results": [self._row(i, b) for i, b in enumerate(self.results)],
            "pareto": [b.to_dict() for b in self.pareto],
            "dropped": [d.to_dict() for d in self.dropped],
            "excluded": [e.to_dict() for e in self.excluded],
            "counts": self.counts,
            "constraints": self.constraints,
            "cautions": list(self.cautions),
            "success": self.success,
            "message": self.message,
            "liquid_cautions": list(self.liquid_cautions),
            "audit": self.audit,
        }

    def to_frame(self):
        """The blends shown as a table: one row each, the liquids and fractions joined by " + "."""
        keys = ("rank", "ra", "red", "one_phase", "phase_basis", "bp_min_C", "bp_max_C", "lowest_flash_C",
                "hazard", "cost", "worst_reject_ra", "worst_reject_red", "selectivity", "pareto")
        rows = [{"blend": b.label, "liquids": " + ".join(b.names),
                 "volume_fractions": " + ".join(f"{c.volume_fraction:.4f}" for c in b.components),
                 **{k: getattr(b, k) for k in keys},
                 "health_hazard": (self.health[i] if i < len(self.health) else {}).get("category"),
                 "how_sure": (self.sure[i] if i < len(self.sure) else {}).get("verdict")}
                for i, b in enumerate(self.results)]
        return frame(rows, ("rank", "blend", "liquids", "volume_fractions") + keys[1:] + ("health_hazard", "how_sure"))


# ----------------------------------------------------------------------------- the search state


@dataclass
class _Search:
    """One run of the job: the request, the pool, the candidates and what the checks found."""

    cat: Catalog
    req: BlendRequest
    target: Target
    rejects: list
    pool: Pool
    counts: dict
    cands: Candidates | None = None
    dropped: list = field(default_factory=list)
    phases: dict = field(default_factory=dict)
    seen: dict = field(default_factory=dict)  # signature -> the candidate kept first
    alike: dict = field(default_factory=dict)  # that candidate -> the candidates folded into it
    seen_dropped: set = field(default_factory=set)
    #: ``step_progress(step, done, total)`` of :func:`blend` (None: not asked for)
    step_progress: Callable[[str, int, int], bool | None] | None = None
    to_describe: int = 0  # blends to describe (and check for the load) once the checks are done
    described: int = 0

    @cached_property
    def matrix(self) -> PairMatrix:
        """The pair matrix of the pool at the request's temperature (solved, or read from the cache, once)."""
        return pair_matrix(self.cat, list(self.pool.names), self.req.temp_C)

    def tell(self, step: str, done: int, total: int) -> None:
        """Report ``done`` of ``total`` of a step; the callback's False stops the search (:class:`SearchCancelled`)."""
        if self.step_progress is not None and self.step_progress(step, done, total) is False:
            raise SearchCancelled(f"stopped in the {step} step at {done} of {total}")

    def described_one(self) -> None:
        """One more blend described (or checked for the load), reported as such."""
        self.described += 1
        self.tell("describing", self.described, self.to_describe)

    def members(self, j: int) -> tuple[list[Candidate], np.ndarray]:
        idx, xs = self.cands.members(j)
        return [self.pool.candidates[i] for i in idx], xs

    def hsp_key(self, i: int) -> tuple:
        return tuple(np.round(self.pool.candidates[int(i)].hsp, 6))

    def signature(self, j: int) -> tuple:
        """Liquids of the same HSP at the same fractions give the same blend to the model."""
        idx, xs = self.cands.members(j)
        return tuple(sorted((self.hsp_key(i), round(float(x), 4)) for i, x in zip(idx, xs)))

    def phase(self, j: int) -> tuple[bool | None, str, str]:
        """(one phase, basis, reason) of candidate ``j``, tested once."""
        if j not in self.phases:
            recs, xs = self.members(j)
            self.phases[j] = ((True, "single liquid", "") if len(recs) == 1 else
                              one_phase(self.cat, [c.name for c in recs], xs, self.req.temp_C, self.matrix))
        return self.phases[j]

    def drop(self, j: int, reason: str) -> None:
        sig = self.signature(j)
        if sig in self.seen_dropped:
            return
        self.seen_dropped.add(sig)
        recs, xs = self.members(j)
        self.dropped.append(DroppedBlend(tuple(c.name for c in recs), tuple(float(v) for v in xs),
                                         float(self.cands.ra[j]), reason))

    def drop_two_phase(self, j: int) -> None:
        ph = self.phase(j)
        self.drop(j, f"two phases at these fractions ({ph[1]}): {ph[2]}")

    def liquid_cautions(self, recs: list[Candidate]) -> list[str]:
        """The cautions of liquids for the use (:func:`solvsel.rules.cautions.solvent_cautions`)."""
        return [t for c in recs for t in solvent_cautions(c.record, use=self.req.use, cat=self.cat)]

    def finish(self, results=(), pareto=(), success: bool = False, message: str = "", sure=None,
               loads=()) -> BlendResult:
        by_name = {c.name: c for c in self.pool.candidates}
        names = dict.fromkeys(c.name for b in results for c in b.components)
        shown = dict.fromkeys(t for t in self.liquid_cautions([by_name[n] for n in names]) if t != DEFER)
        health = tuple(_blend_health([by_name[n] for n in b.names]) for b in results)
        return BlendResult({**self.target.to_dict(), "temp_C": self.req.temp_C}, tuple(results), tuple(pareto),
                           tuple(self.dropped), self.pool.left_out, self.counts, _constraints(self.req),
                           _cautions(self.req), success, message, tuple(shown) + (DEFER,),
                           audit_block(self.pool.rules, self.cat.tables_dir), health,
                           () if sure is None else tuple(sure.row(i) for i in range(len(results))),
                           None if sure is None else sure.to_dict(), tuple(loads))

    def load(self, j: int) -> dict | None:
        """The load check of candidate ``j`` (None without a load or a solute target)."""
        recs, xs = self.members(j)
        xs = np.clip(xs, 0.0, 1.0)
        return load_info(self.cat, self.target, [c.record for c in recs], list(xs / xs.sum()), self.req.load,
                         self.req.storage_C)


@dataclass(frozen=True)
class _Scores:
    """Scores of every candidate: Ra [MPa^0.5], RED, distance of the nearest reject (in RED when
    every radius is known, else Ra), the fit it is traded against, cost, and the order checked."""

    ra: np.ndarray
    red: np.ndarray | None
    worst: np.ndarray | None
    fit: np.ndarray
    cost: np.ndarray
    order: np.ndarray
    red_basis: bool


# ----------------------------------------------------------------------------- steps


def _rejects(cat: Catalog, req: BlendRequest) -> list[tuple[str, np.ndarray, float | None]]:
    """The solutes to keep out as ``(name, (dD, dP, dH), R0 or None)``."""
    out = []
    for name in req.rejects:
        try:
            s = cat.solute(name)
        except UnknownNameError as exc:
            exc.param = exc.param or "rejects"
            raise
        r0 = getattr(s, "r0", None)
        out.append((s.name, as_hsp([s.dD, s.dP, s.dH], "rejects"), None if r0 is None else float(r0)))
    return out + req.reject_spheres


def _bounds(cat: Catalog, pool: Pool, req: BlendRequest) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper volume-fraction bounds [-] of every pool liquid."""
    m = len(pool.candidates)
    lo, hi = np.zeros(m), np.ones(m)
    for b in req.bounds:
        ref = solvent_named(cat, b.name, "bounds")
        hit = [i for i, c in enumerate(pool.candidates) if c.name == ref.name or (c.cas and c.cas == ref.cas)]
        if not hit:
            if b.lower > 0:
                why = next((e.reason for e in pool.left_out if e.name == ref.name), "not in the pool")
                raise InputError(f"{ref.name} must be in every blend (at least {b.lower:g} by volume), but it is "
                                 f"left out ({why})", param="bounds", value=b.name)
            continue
        i = hit[0]
        lo[i], hi[i] = max(lo[i], b.lower), min(hi[i], b.upper)
        if lo[i] > hi[i]:
            raise InputError(f"the bounds given for {ref.name} contradict each other", param="bounds", value=b.name)
    n_required = int(np.count_nonzero(lo > 0))
    if n_required > req.max_components:
        raise InputError(f"{n_required} liquids must be in every blend (lower bounds), more than the largest "
                         f"blend of {req.max_components}", param="bounds")
    if lo.sum() > 1 + 1e-12:
        raise InputError(f"the lower bounds add up to {lo.sum():g}, more than the whole blend", param="bounds")
    return lo, hi


def _scores(s: _Search) -> _Scores:
    c, r0, rej = s.cands, s.target.r0, s.rejects
    red = c.ra / r0 if r0 else None
    red_basis = bool(rej) and r0 is not None and all(rr is not None for _, _, rr in rej)
    worst, fit = None, c.ra
    if rej:
        dist = np.stack([np.sqrt(np.sum(((c.hsp - rh) * SCALE) ** 2, axis=1)) / (rr if red_basis else 1.0)
                         for _, rh, rr in rej], axis=1)
        worst = dist.min(axis=1)
        fit = red if red_basis else c.ra
    cost = _cost(s, c)
    if s.req.sort == "cost":
        order = np.lexsort((c.ra, np.nan_to_num(cost, nan=np.inf)))
    else:  # fit, and the pool that selectivity re-ranks
        order = np.lexsort((c.size, c.ra))
    return _Scores(c.ra, red, worst, fit, cost, order, red_basis)


def _cost(s: _Search, c: Candidates) -> np.ndarray:
    """Volume-weighted cost class of each candidate (NaN where a liquid's is unknown)."""
    cost_vec = np.array([np.nan if p.record.cost_class is None else float(p.record.cost_class)
                         for p in s.pool.candidates] + [0.0])
    return np.einsum("nk,nk->n", c.fractions, cost_vec[c.idx])


def _search(s: _Search, lo: np.ndarray, hi: np.ndarray, progress) -> None:
    """The exact search, part by part: the pairwise one-phase screen counted on every candidate,
    and the first :data:`_SCAN_LIMIT` candidates in the order they are checked kept (:func:`_scores`:
    cost then Ra, or Ra then the number of liquids), so memory stays bounded whatever the pool."""
    req, m = s.req, len(s.pool.candidates)
    best, two_phase = BestCandidates(_SCAN_LIMIT), 0
    for part in stream_candidates(s.pool.hsp, s.target.hsp, min(req.max_components, m), lo, hi, req.min_fraction,
                                  progress=progress):
        if len(part):
            screen = one_phase_screen(s.matrix, part.idx, part.fractions)
            two_phase += int(np.count_nonzero(~screen))
        best.add(part, (np.nan_to_num(_cost(s, part), nan=np.inf), part.ra) if req.sort == "cost" else None)
    s.cands = best.result()
    s.counts.update(combinations=s.cands.combinations, bounds_not_met=s.cands.bounds_not_met,
                    same_as_smaller_blend=s.cands.same_as_smaller_blend, two_phase=two_phase)


def _mass_fractions(recs: list[Candidate], xs) -> list[float] | None:
    dens = [c.record.density_g_cm3 for c in recs]
    if not all(d is not None and d > 0 for d in dens):
        return None
    return [float(v) for v in convert_fractions(xs, "volume", "mass", density_g_cm3=dens)]


def _dose_check(s: _Search, j: int, steps: list[Step]) -> dict:
    """The carrier limits of the food at the dose, for one blend."""
    from ..rules.cautions import limit_cautions

    recs, xs = s.members(j)
    xs = np.clip(xs, 0, 1) / np.sum(np.clip(xs, 0, 1))
    w = _mass_fractions(recs, xs)
    if w is None:
        return {"ok": None, "complete": False, "max_dose": None, "max_dose_unit": None, "binding": None,
                "message": "a density is missing, so the blend's mass fractions and its dose limits are unknown",
                "cautions": []}
    req = s.req
    chk = carrier_dose_check(s.cat, [(c.name, v) for c, v in zip(recs, w)], steps, req.jurisdiction, req.category,
                             already=dict(req.already) if req.already else None)
    binding = None
    if chk.binding is not None:
        b = chk.binding
        binding = {"rule": b.rule, "substance": b.substance, "level": b.level, "limit": b.limit, "unit": b.unit,
                   "confidence": b.confidence}
    if chk.ok:
        msg = "within the limits at this dose" + ("" if chk.complete else " (some substances have no data: not a permission)")
    else:
        msg = "over a limit at this dose"
        if binding:
            msg += (f": {binding['substance']} at {binding['level']:.4g} {binding['unit']} against "
                    f"{binding['limit']:.4g} ({binding['rule']})")
    return {"ok": bool(chk.ok), "complete": bool(chk.complete), "max_dose": chk.max_dose,
            "max_dose_unit": chk.max_dose_unit, "binding": binding, "no_data": list(chk.no_data),
            "message": msg, "cautions": list(limit_cautions(chk))}


def _check(s: _Search, sc: _Scores) -> list[tuple[int, dict | None]]:
    """The candidates that pass the checks, best first (folding blends the model cannot tell apart),
    until there are enough for the blends shown and their trade-off front."""
    req, c = s.req, s.cands
    want = req.top
    enough = want if req.shown_only else max(5 * want, 200 if s.rejects else 50)
    steps = req.steps
    kept: list[tuple[int, dict | None]] = []
    # pairwise one-phase screen of the candidates at once (windows, measured pairs first; every
    # candidate's was counted in the search); the full check with its reasons runs on those listed
    screen = one_phase_screen(s.matrix, c.idx, c.fractions)

    def listing() -> bool:
        return not req.shown_only and len(kept) < want and len(s.dropped) < _DROPPED_LISTED

    for j in sc.order[:_SCAN_LIMIT]:
        j = int(j)
        s.tell("checks", len(kept), enough)  # k of n: the blends that passed of those wanted
        s.counts["checked"] += 1
        if req.one_phase_only and not screen[j]:
            if listing():
                s.drop_two_phase(j)
            continue
        if req.one_phase_only and c.size[j] >= 3 and s.phase(j)[0] is False:
            # the pairwise screen passed, the blend as a whole (tangent plane) did not
            s.counts["two_phase"] += 1
            if listing():
                s.drop_two_phase(j)
            continue
        dose = _dose_check(s, j, steps) if steps is not None else None
        if dose is not None and dose["ok"] is False and not req.keep_over:
            s.counts["over_limit"] += 1
            if listing():
                s.drop(j, dose["message"])
            continue
        over = s.load(j) if req.drop_over_load else None
        if over is not None and over["verdict"] == "no":
            s.counts["over_load"] = s.counts.get("over_load", 0) + 1
            if listing():
                s.drop(j, over["mark"])
            continue
        sig = s.signature(j) if c.size[j] > 1 else None
        if sig is not None and sig in s.seen:
            s.counts["alike"] += 1
            s.alike.setdefault(s.seen[sig], []).append(j)
            continue
        if sig is not None:
            s.seen[sig] = j
        kept.append((j, dose))
        if len(kept) >= enough:
            break
    s.tell("checks", len(kept), enough)
    s.counts["kept"] = len(kept)
    return kept


def _hazard_text(hz) -> str:
    """The hazard of a liquid as a blend shows it (its GHS flammable-liquid category)."""
    if hz is None:
        return "not flammable"
    if hz.kind == "gas under pressure":
        return "gas under pressure, not flammable"
    if hz.kind == "flammable gas":
        return "flammable gas"
    if hz.category is None:
        return "flammable liquid, category not determined"
    return f"flammable liquid, GHS category {hz.category}"


def _blend_health(recs: list[Candidate]) -> dict:
    """The worst health hazard of a blend's liquids (level of :data:`~solvsel.rules.hazards.HEALTH_LEVELS`;
    None where a liquid's are not on record) and each liquid's."""
    known = [c for c in recs if c.health is not None]
    worst = max(known, key=lambda c: c.health.level, default=None)
    complete = len(known) == len(recs)
    return {"level": worst.health.level if worst and complete else None,
            "category": (worst.health.category if complete else "not on record for every liquid") if worst else
            "not on record", "liquid": worst.name if worst else None,
            "liquids": {c.name: c.health.label if c.health is not None else "not on record" for c in recs}}


def _how_sure(s: _Search, sc: _Scores, kept: list, results: list[Blend]):
    """How the blends shown hold when the target is sampled within its uncertainty: the blends that
    passed the checks re-scored at their fixed fractions (no new search for each sample)."""
    from ..science.robustness import how_sure, target_spread

    js = [j for j, _ in kept]
    order = sorted(range(len(js)), key=lambda i: (sc.ra[js[i]], i))  # nominal order: best fit first
    position = {js[i]: k for k, i in enumerate(order)}
    label = {j: b.label for (j, _), b in zip(kept, results)}
    names = [label.get(js[i], f"blend {k + 1}") for k, i in enumerate(order)]
    return how_sure(s.target.hsp, target_spread(s.target, s.cat), s.cands.hsp[[js[i] for i in order]], names,
                    [position[j] for j, _ in kept[:len(results)]],
                    f"the {len(js)} blends that passed the checks re-scored at their fixed fractions "
                    "(fractions not re-optimised for each sample)")


def _regulations(c: Candidate, req: BlendRequest) -> list[dict]:
    """The food-law status of a liquid for the use, where a use or a jurisdiction is given."""
    if (req.use is None and req.jurisdiction is None) or c.food is None:
        return []
    d = c.food.to_dict()
    return [{k: d[k] for k in ("name", "cas", "use", "jurisdiction", "status", "allowed", "conditions", "message",
                               "flagged", "per_jurisdiction", "purpose", "purposes", "status_text")}]


def _blend_cautions(s: _Search, recs: list[Candidate], phase) -> list[str]:
    """The cautions of a blend: those of its liquids, its flash point and a predicted phase."""
    out = s.liquid_cautions(recs)
    flashes = [c.record.flash_C for c in recs if c.record.flammable and c.record.flash_C is not None]
    if len(recs) > 1 and flashes:
        out.append(f"Lowest flash point of a component {min(flashes):g} C: the blend's flash point is not the "
                   "average and must be measured (closed cup).")
    if phase[1] == "predicted":
        out.append("One phase is predicted (UNIFAC from the structures, or HSP for mixtures such as the oils), "
                   "not measured: check the blend at the bench and in the cold.")
    return list(dict.fromkeys(t for t in out if t))


def _describe(s: _Search, sc: _Scores, j: int, dose: dict | None, rank: int) -> Blend:
    """Blend ``j`` with its properties, checks and cautions."""
    recs, xs = s.members(j)
    xs = np.clip(xs, 0.0, 1.0)
    xs = xs / xs.sum()
    mass = _mass_fractions(recs, xs) or [None] * len(recs)
    bh = s.cands.hsp[j]
    bps = [c.record.bp_C for c in recs if c.record.bp_C is not None]
    flashes = [c.record.flash_C for c in recs if c.record.flammable and c.record.flash_C is not None]
    worst = max(((_hazard_text(c.hazard), hazard_rank(c.hazard)) for c in recs), key=lambda h: h[1])
    rdist = tuple(RejectDistance(n, v, None if rr is None else v / rr)
                  for n, rh, rr in s.rejects for v in (float(np.sqrt(np.sum(((bh - rh) * SCALE) ** 2))),))
    ra, r0 = float(sc.ra[j]), s.target.r0
    red = None if r0 is None else ra / r0
    worst_ra = min((r.ra for r in rdist), default=None)
    worst_red = min((r.red for r in rdist), default=None) if sc.red_basis else None
    selectivity, basis = (None, None) if not rdist else (
        (worst_red - red, "RED") if sc.red_basis else (worst_ra - ra, "Ra"))
    phase = s.phase(j)
    cautions = _blend_cautions(s, recs, phase) + (list(dose["cautions"]) if dose else [])
    cost = None if np.isnan(sc.cost[j]) else float(sc.cost[j])
    b = Blend(
        components=tuple(BlendComponent(c.name, c.cas, float(x), w, c.record.origin)
                         for c, x, w in zip(recs, xs, mass)),
        dD=float(bh[0]), dP=float(bh[1]), dH=float(bh[2]), ra=ra, red=red,
        one_phase=phase[0] if len(recs) > 1 else True, phase_basis=phase[1], phase_note=phase[2],
        bp_min_C=min(bps) if bps else None, bp_max_C=max(bps) if bps else None, bp_complete=len(bps) == len(recs),
        lowest_flash_C=min(flashes) if flashes else None, hazard=worst[0], hazard_rank=int(worst[1]), cost=cost,
        rejects=rdist, worst_reject_ra=worst_ra, worst_reject_red=worst_red, selectivity=selectivity,
        selectivity_basis=basis,
        solubility=blend_solubility(s.target.solute, s.target.hsp, [c.record for c in recs], xs, bh, s.req.temp_C),
        regulations=tuple(r for c in recs for r in _regulations(c, s.req)),
        cautions=tuple(dict.fromkeys(cautions)), rank=rank, dose_check=dose,
        notes=tuple(f"{c.name}: {c.note}" for c in recs if c.note),
    )
    s.described_one()
    return b


def _with_alike(s: _Search, b: Blend, j: int) -> Blend:
    """``b`` with the names of the blends folded into it, in the order of its components."""
    if j not in s.alike:
        return b
    idx, xs = s.cands.members(j)
    rep = [(s.hsp_key(i), float(x)) for i, x in zip(idx, xs)]
    out = []
    for jj in s.alike[j]:
        idx2, xs2 = s.cands.members(jj)
        free = [(s.hsp_key(i), float(x), s.pool.candidates[i].name) for i, x in zip(idx2, xs2)]
        names = []
        for h, x in rep:
            hit = min((p for p in free if p[0] == h), key=lambda p: abs(p[1] - x))
            free.remove(hit)
            names.append(hit[2])
        out.append(tuple(names))
    return replace(b, alternatives=tuple(out))


def _order(s: _Search, sc: _Scores, kept: list) -> list:
    """With rejects sorted by selectivity: non-dominated layers of (fit, nearest reject), by Ra within."""
    if s.req.sort != "selectivity":
        return kept
    js = np.array([j for j, _ in kept])
    layer = pareto_layers(np.column_stack([sc.fit[js], -sc.worst[js]]))
    return [kept[i] for i in np.lexsort((sc.ra[js], layer))]


def _shown(s: _Search, sc: _Scores, kept: list) -> tuple[list[Blend], list[Blend]]:
    """The blends shown and the trade-off front (fit, nearest reject, cost, hazard, liquids) of those kept."""
    js = [j for j, _ in kept]
    F = [sc.ra[js]]
    if s.rejects:
        F.append(-sc.worst[js])
    F.append(np.nan_to_num(sc.cost[js], nan=np.inf))
    F.append(np.array([max(hazard_rank(c.hazard) for c in s.members(j)[0]) for j in js], float))
    F.append(s.cands.size[js].astype(float))
    front = pareto_front(np.column_stack(F))
    shown = min(s.req.top, len(kept))
    s.to_describe = shown * (2 if s.req.load is not None else 1) + int(np.count_nonzero(front[s.req.top:]))
    described, results = {}, []
    for rank, ((j, dose), on_front) in enumerate(zip(kept[:s.req.top], front[:s.req.top]), start=1):
        b = _with_alike(s, replace(_describe(s, sc, j, dose, rank), pareto=bool(on_front)), j)
        described[j] = b
        results.append(b)
    pareto = [described.get(j) or _with_alike(s, replace(_describe(s, sc, j, dose, pos + 1), pareto=True), j)
              for pos, ((j, dose), on_front) in enumerate(zip(kept, front)) if on_front]
    return results, pareto


def _constraints(req: BlendRequest) -> dict:
    return {
        "max_components": req.max_components, "use": req.use, "food": req.food, "jurisdiction": req.jurisdiction,
        "purpose": req.purpose,
        "only": list(req.only) if req.only else None, "exclude": list(req.exclude) if req.exclude else None,
        "worst_flammable_category": req.worst_flammable_category, "max_health_hazard": req.max_health_hazard,
        "bp_min_C": req.bp_min_C,
        "bp_max_C": req.bp_max_C, "min_flash_C": req.min_flash_C, "max_cost": req.max_cost,
        "bounds": [b.to_dict() for b in req.bounds], "temp_C": req.temp_C,
        "rejects": list(req.rejects) + [label for label, _, _ in req.reject_spheres], "sort": req.sort,
        "one_phase_only": bool(req.one_phase_only), "min_fraction": float(req.min_fraction), "top": req.top,
        "dose": req.dose, "category": req.category, "chain": req.chain,
        "already": dict(req.already) if req.already else None, "keep_over": bool(req.keep_over),
        "shown_only": bool(req.shown_only),
    }


def _cautions(req: BlendRequest) -> tuple[str, ...]:
    out = [GENERAL_CAUTION, DEFER]
    if req.filters.legal and req.use is None:
        out.append(f"No use given: the {req.jurisdiction or 'EU and US'} food-law filter kept liquids allowed "
                   "as a flavour carrier or as an extraction solvent.")
    if abs(req.temp_C - 25.0) > 1e-9:
        out.append(f"Liquids' HSP shifted from 25 C to {req.temp_C:g} C (Hansen-Beerbower); the target's are its "
                   "tabulated values.")
    return tuple(out)


# ----------------------------------------------------------------------------- the job


def blend(request: BlendRequest | None = None, *, catalog: Catalog | None = None,
          progress: Callable[[int, int], bool | None] | None = None, pool: Pool | None = None,
          step_progress: Callable[[str, int, int], bool | None] | None = None, **fields: Any) -> BlendResult:
    """The best blends of 1 to ``max_components`` liquids for a target, under constraints.

    Parameters
    ----------
    request : BlendRequest, optional
        the request; or give its fields as keywords
    catalog : Catalog, optional
        the tables (default: the bundled ones)
    progress : callable, optional
        ``progress(done, total)`` after each batch of the exact search
        (combinations); returning False cancels it, which gives a result with
        ``success`` False and a message starting "cancelled"
    pool : Pool, optional
        the candidate pool of the request's filters (:func:`~solvsel.jobs.pool.build_pool`), built
        once for many targets (batch screening); by default built here
    step_progress : callable, optional
        ``step_progress(step, done, total)`` through every step of the search, for one bar over all of
        them: ``"combinations"`` (the exact search, as ``progress``), ``"checks"`` (``done`` blends passed
        the checks - one phase, limits, load - of the ``total`` wanted; candidates are checked best first
        until that many pass or the candidates run out) and ``"describing"`` (``done`` of ``total`` blends
        described, and checked for the load); returning False cancels at any step, as ``progress`` does

    Returns
    -------
    BlendResult
    """
    req = build_request(BlendRequest, request, fields)
    cat = catalog_or_default(catalog)
    target = target_of(cat, target=req.target, solute=req.solute, hsp=req.hsp, smiles=req.smiles)
    rejects = _rejects(cat, req)
    pool = req.pool_in(cat, pool)
    lo, hi = _bounds(cat, pool, req)
    m = len(pool.candidates)
    counts = {"liquids": m, "excluded_liquids": len(pool.left_out), "combinations": 0, "bounds_not_met": 0,
              "same_as_smaller_blend": 0, "checked": 0, "two_phase": 0, "over_limit": 0, "alike": 0, "kept": 0}
    s = _Search(cat, req, target, rejects, pool, counts, step_progress=step_progress)
    if m == 0:
        return s.finish(message="no liquid is left in the pool under these constraints (see excluded)")
    try:
        return _run(s, lo, hi, progress)
    except SearchCancelled as exc:
        return s.finish(message=f"cancelled: {exc}")


def _run(s: _Search, lo: np.ndarray, hi: np.ndarray, progress) -> BlendResult:
    """The search, the checks and the description of the blends shown (:class:`SearchCancelled` when stopped)."""
    counts, m = s.counts, len(s.pool.candidates)
    _search(s, lo, hi, _counting(progress, s))
    if not len(s.cands):
        return s.finish(message="no combination of the pool meets the fraction bounds")
    sc = _scores(s)
    kept = _check(s, sc)
    if not kept:
        return s.finish(message="no blend passed the checks (see dropped)")
    kept = _order(s, sc, kept)
    results, pareto = _shown(s, sc, kept)
    results, loads = _with_load(s, results)
    return s.finish(results, pareto, True,
                    f"{len(results)} blend(s) from {m} liquids; {counts['combinations']} combinations searched",
                    _how_sure(s, sc, kept, results), loads)


def _counting(progress, s: _Search):
    """The callback of the exact search: ``progress(done, total)`` and ``s.tell("combinations", done, total)``."""
    if s.step_progress is None:
        return progress

    def call(done: int, total: int) -> bool:
        if progress is not None and progress(done, total) is False:
            return False
        s.tell("combinations", done, total)
        return True

    return call


def _with_load(s: _Search, results) -> tuple[list, list]:
    """The blends shown with their load checks, those that cannot carry the load marked in their notes."""
    if s.req.load is None:
        return list(results), []
    by_name = {c.name: c.record for c in s.pool.candidates}
    loads, out = [], []
    for b in results:
        recs = [by_name[c.name] for c in b.components]
        info = load_info(s.cat, s.target, recs, [c.volume_fraction for c in b.components], s.req.load,
                         s.req.storage_C)
        s.described_one()
        loads.append(info)
        out.append(replace(b, notes=b.notes + (info["mark"],)) if info and info["verdict"] == "no" else b)
    return out, loads
