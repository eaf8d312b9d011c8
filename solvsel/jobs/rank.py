"""The ``rank`` job: single liquids ranked for a target, or the nearest liquids to one liquid.

Every liquid of the one candidate pool (:mod:`solvsel.jobs.pool`: use, property
limits, hazard, food law, temperature) is ranked by its Hansen distance Ra to
the target at the working temperature, and by RED = Ra / R0 where the target
has a radius; beside each: the solubility estimate where the solute has fusion
data, boiling and flash point, GHS class, food status, the dose check (with a
dose and a food category) and the cautions that apply.  With ``like`` the job
lists the liquids nearest to a given liquid instead (substitutes).

>>> from solvsel.jobs.rank import rank
>>> r = rank(hsp=(17.0, 3.0, 8.0, 8.0), top=3)
>>> r.sorted_by, len(r.results), r.results[0].ra <= r.results[1].ra
('red', 3, True)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Sequence

from ..data.catalog import Catalog
from ..data.provenance import audit_block
from ..errors import InputError, MissingDataError
from ..rules.cautions import DEFER, solvent_cautions
from ..rules.regulations import carrier_dose_check
from ..science.formulation import Step
from ..science.target import Target, solubility_in, target_from_hsp
from ._base import build_request, catalog_or_default, check_bool, check_int, frame, target_of
from .load import DEFAULT_STORAGE_C, LOAD_NOTE, check_load_value, check_storage, load_info
from .parse import parse_chain
from .pool import Candidate, LeftOut, Pool, PoolRequest, solvent_named

__all__ = ["RankRequest", "RankedSolvent", "RankResult", "rank"]

#: Fields of a request that are the pool's filters (:class:`~solvsel.jobs.pool.PoolFilters`).


@dataclass(frozen=True)
class RankRequest(PoolRequest):
    """What to rank, for which target, under which filters.

    Attributes
    ----------
    solute, hsp, smiles, target : optional
        the target, exactly one of: a solute of the tables (name, synonym or
        CAS); typed HSP ``(dD, dP, dH[, R0])`` [MPa^0.5]; a structure (SMILES,
        HSP estimated by group contribution); a ready
        :class:`~solvsel.science.target.Target` (e.g. a bench fit)
    like : str, optional
        instead of a target: list the liquids nearest to this liquid in Hansen
        space (substitutes); takes no ``only``, dose or solubility
    only, exclude, use, food, jurisdiction, purpose, worst_flammable_category, bp_min_C, bp_max_C, min_flash_C, max_cost, max_health_hazard
        the filters of the candidate pool (:class:`~solvsel.jobs.pool.PoolFilters`:
        names [-], use, food law, the product's purpose (an id of
        tables/purposes.csv), GHS category, boiling window [C], lowest flash
        point [C], dearest cost class 1..5, worst health hazard allowed)
    temp_C : float
        working temperature [C] (default 25); the liquids' HSP are shifted to
        it, the target's stay at 25 C
    top : int, optional
        how many liquids to show (default 15); ``all`` shows every one
    all : bool
        show every ranked liquid (``top`` ignored)
    dose : str or float, optional
        dose of the flavour in the first stage ("0.15%", "1500ppm" or a mass
        fraction); with ``category`` and ``jurisdiction`` each carrier is
        checked against the carrier limits of the food as consumed
    category : str, optional
        food category of the food as consumed (``solvsel table food_categories``)
    chain : str, optional
        dilution chain from the flavour to the food as consumed (the dose fills its first step)
    keep_over : bool
        keep (flagged) carriers over a limit at the dose instead of leaving them out
    require_solubility : bool
        fail when the target has no fusion data for a solubility estimate, or
        when the temperature is at or above its melting point
    load : str or float, optional
        the target's load in the carrier (mass fraction, "2%"): each liquid is checked for it over
        ``storage_C`` (:mod:`solvsel.jobs.load`) and marked where it cannot carry it
    storage_C : (float, float) or str
        storage range of the load check [C] (default 4 to 25)
    drop_over_load : bool
        leave out the liquids that cannot carry the load instead of marking them
    """

    solute: str | None = None
    hsp: tuple[float, ...] | None = None
    smiles: str | None = None
    target: Target | None = None
    like: str | None = None
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
    temp_C: float = 25.0
    top: int | None = 15
    all: bool = False
    dose: str | float | None = None
    category: str | None = None
    chain: str | None = None
    keep_over: bool = False
    require_solubility: bool = False
    load: str | float | None = None
    storage_C: tuple[float, float] | str = DEFAULT_STORAGE_C
    drop_over_load: bool = False

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        set_(self, "load", check_load_value(self.load))
        set_(self, "storage_C", check_storage(self.storage_C))
        for name in ("food", "all", "keep_over", "require_solubility", "drop_over_load"):
            set_(self, name, check_bool(getattr(self, name), name))
        self.check_pool_fields()
        given = [k for k in ("solute", "hsp", "smiles", "target", "like") if getattr(self, k) is not None]
        if not given:
            raise InputError("no target: give a solute of the tables, typed HSP (dD, dP, dH[, R0]), a SMILES, "
                             "or a liquid to find substitutes for", param="solute",
                             expected="one of solute, hsp, smiles, target or like")
        if len(given) > 1:
            raise InputError(f"give one target, not {' and '.join(given)}", param=given[1],
                             expected="one of solute, hsp, smiles, target or like")
        if self.hsp is not None:
            target_from_hsp(self.hsp)  # checks the numbers and their ranges
            set_(self, "hsp", tuple(float(v) for v in self.hsp))
        set_(self, "top", check_int(self.top, "top", 1, allow_none=True))
        if self.like is not None and (self.only or self.dose is not None or self.chain or self.require_solubility
                                      or self.load is not None):
            raise InputError("substitutes are looked for among all liquids, without a dose check or a solubility "
                             "estimate", param="like", value=self.like)
        self._check_dose()

    def _check_dose(self) -> None:
        if self.dose is None and self.chain is None:
            if self.category is not None:
                raise InputError("a food category is for the dose check: give the dose too", param="dose",
                                 expected="a dose such as 0.15%")
            return
        if self.category is None:
            raise InputError("the dose check needs the food category of the food as consumed (and the "
                             "jurisdiction)", param="category", expected="a food category")
        if self.jurisdiction is None:
            raise InputError("the dose check needs the jurisdiction (EU or US): limits differ by jurisdiction",
                             param="jurisdiction", expected="EU or US")
        self.steps  # parses the dose and the chain

    @property
    def steps(self) -> list[Step] | None:
        """The dilution chain of the dose check (None without a dose)."""
        if self.dose is None and self.chain is None:
            return None
        return parse_chain(self.chain, None if self.dose is None else str(self.dose))


@dataclass(frozen=True)
class RankedSolvent:
    """One liquid of a ranking, with what the bench needs beside the distance.

    ``ra`` [MPa^0.5] and ``red`` [-] are at the ranking temperature (``dD``,
    ``dP``, ``dH`` [MPa^0.5] and ``vm_cm3_mol`` [cm^3/mol] are the liquid's
    there); ``red`` is None when the target has no R0.  ``solubility`` is an
    estimate where the solute has fusion data, else None; ``dose`` the dose
    check where one was asked for.
    """

    name: str
    cas: str
    ra: float
    red: float | None
    dD: float
    dP: float
    dH: float
    vm_cm3_mol: float
    bp_C: float | None
    flash_C: float | None
    hazard: str | None
    hazard_code: str | None
    food_status: str | None
    food_allowed: bool | None
    cost_class: int | None
    water_miscibility: str
    solubility: dict | None
    dose: dict | None
    cautions: tuple[str, ...]
    notes: tuple[str, ...]
    origin: str
    sources: tuple[str, ...] = ()
    food_purposes: tuple[str, ...] = ()
    health_hazard: dict | None = None
    how_sure: dict | None = None
    load: dict | None = None

    def to_dict(self) -> dict:
        return {
            "name": self.name, "cas": self.cas, "ra": self.ra, "red": self.red,
            "dD": self.dD, "dP": self.dP, "dH": self.dH, "vm": self.vm_cm3_mol,
            "bp_C": self.bp_C, "flash_C": self.flash_C, "hazard": self.hazard,
            "hazard_code": self.hazard_code,
            "food_status": self.food_status, "food_allowed": self.food_allowed,
            "cost_class": self.cost_class, "water_miscibility": self.water_miscibility,
            "solubility": self.solubility, "dose": self.dose,
            "cautions": list(self.cautions), "notes": list(self.notes),
            "origin": self.origin, "sources": list(self.sources), "food_purposes": list(self.food_purposes),
            "health_hazard": self.health_hazard, "how_sure": self.how_sure, "load": self.load,
        }


@dataclass(frozen=True)
class RankResult:
    """Liquids ranked for a target, best first, with the liquids left out and why.

    ``sorted_by`` is "red" when the target has a radius, else "ra";
    ``dropped`` the liquids the pool or the dose check left out (each with its
    filter and reason); ``cautions`` those of the liquids shown, each once,
    the closing deferral last.
    """

    target: Target
    temp_C: float
    results: tuple[RankedSolvent, ...]
    dropped: tuple[LeftOut, ...] = ()
    notes: tuple[str, ...] = ()
    cautions: tuple[str, ...] = ()
    sorted_by: str = "ra"
    audit: dict = field(default_factory=dict)
    how_sure: dict | None = None

    def to_dict(self) -> dict:
        return {
            "target": self.target.to_dict(),
            "temp_C": self.temp_C,
            "sorted_by": self.sorted_by,
            "how_sure": self.how_sure,
            "results": [r.to_dict() for r in self.results],
            "dropped": [d.to_dict() for d in self.dropped],
            "notes": list(self.notes),
            "cautions": list(self.cautions),
            "audit": self.audit,
        }

    def to_frame(self):
        """The ranked liquids as a table (one row each; the solubility estimate as ``g_per_L``)."""
        skip = ("solubility", "dose", "cautions", "notes", "sources", "health_hazard", "how_sure", "load")
        rows = [{**{k: v for k, v in r.to_dict().items() if k not in skip},
                 "how_sure": (r.how_sure or {}).get("verdict"),
                 "g_per_L": (r.solubility or {}).get("g_per_L"),
                 "health_hazard": (r.health_hazard or {}).get("label")} for r in self.results]
        return frame(rows)


# ----------------------------------------------------------------------------- one liquid


def _dose_info(cat: Catalog, c: Candidate, req: RankRequest, steps: list[Step]) -> dict:
    chk = carrier_dose_check(cat, c.record, steps, req.jurisdiction, req.category)
    return {
        "ok": chk.ok, "complete": chk.complete, "max_dose": chk.max_dose, "max_dose_unit": chk.max_dose_unit,
        "binding_rule": chk.binding.rule if chk.binding is not None else None,
    }


def _food_text(c: Candidate, req: RankRequest) -> tuple[str | None, bool | None]:
    """(food status as shown, allowed) of a candidate, with the purposes it is allowed for (or the purpose
    asked for); with no use given, the use it was found for."""
    if c.food is None:
        return None, None
    status = c.food.status_text + (f" ({c.food_use})" if req.use is None else "")
    return status, c.food.allowed


def _ranked(cat: Catalog, target: Target, c: Candidate, req: RankRequest, steps) -> RankedSolvent | LeftOut:
    """A candidate as a row of the ranking, or left out by the dose check."""
    from ..science.hansen import ra

    s = c.record
    notes = [c.note] if c.note else []
    dose = None
    if steps is not None:
        dose = _dose_info(cat, c, req, steps)
        if not dose["ok"] and not req.keep_over:
            rule = f" ({dose['binding_rule']})" if dose["binding_rule"] else ""
            return LeftOut(s.name, s.cas, "dose", f"breaks a limit at the dose {req.dose}{rule}")
        if not dose["ok"]:
            notes.append("over a limit at this dose")
        if not dose["complete"]:
            notes.append("no limit data for some part in this jurisdiction (not a permission)")
    if s.is_user:
        notes.append(f"your row ({s.origin})")
    load = load_info(cat, target, [s], [1.0], req.load, req.storage_C)
    if load is not None and load["verdict"] == "no":
        if req.drop_over_load:
            return LeftOut(s.name, s.cas, "load", load["reason"])
        notes.append(load["mark"])
    r = float(ra(c.hsp, target.hsp))
    hz = c.hazard
    status, allowed = _food_text(c, req)
    return RankedSolvent(
        s.name, s.cas, r, r / target.r0 if target.r0 else None, float(c.hsp[0]), float(c.hsp[1]), float(c.hsp[2]),
        c.vm_cm3_mol, s.bp_C, s.flash_C, None if hz is None else (hz.label or hz.kind),
        None if hz is None else (hz.hazard_statement or hz.kind), status, allowed, s.cost_class,
        s.water_miscibility, solubility_in(target, s, c.hsp, c.vm_cm3_mol, req.temp_C), dose,
        tuple(solvent_cautions(s, use=req.use or c.food_use, cat=cat)), tuple(notes), s.origin, tuple(s.sources),
        c.food.purposes if c.food is not None else (), None if c.health is None else c.health.to_dict(),
        load=load,
    )


def _rank_pool(cat: Catalog, target: Target, req: RankRequest, records=None, pool: Pool | None = None):
    """Every candidate of the pool ranked (best first), the liquids left out, and the rules judged by."""
    pool = req.pool_in(cat, pool, records)
    steps = req.steps
    results, dropped = [], list(pool.left_out)
    for c in pool.candidates:
        row = _ranked(cat, target, c, req, steps)
        (dropped if isinstance(row, LeftOut) else results).append(row)
    results.sort(key=lambda x: (x.ra, x.name))
    position = {name: i for i, name in enumerate(pool.order)}
    dropped.sort(key=lambda d: position[d.name])  # the dose check's among the pool's, in table order
    return results, dropped, pool.rules


# ----------------------------------------------------------------------------- the job


def _check_solubility(target: Target, temp_C: float) -> None:
    """Raise where a required solubility estimate cannot be made."""
    from ..science.hansen import ideal_solubility

    sol = target.solute
    if sol is None:
        raise MissingDataError(f"a solubility estimate needs a solute of the table with fusion data; "
                               f"'{target.name}' is {target.basis} HSP only", param="require_solubility")
    missing = [k for k in ("mp_C", "dHfus_kJ_mol", "vm_cm3_mol", "mw_g_mol") if getattr(sol, k) is None]
    if missing:
        raise MissingDataError(f"no solubility estimate for {sol.name}: the solutes table has no "
                               f"{', '.join(missing)} for it", param="require_solubility")
    try:
        ideal_solubility(temp_C, sol.mp_C, sol.dHfus_kJ_mol)  # raises at or above the melting point
    except InputError as exc:
        exc.param = "temp_C"
        raise


def _notes(target: Target, temp_C: float) -> list[str]:
    notes = []
    if abs(temp_C - 25.0) > 1e-9:
        notes.append(f"solvent HSP shifted from 25 to {temp_C:g} C (Hansen and Beerbower 1971); "
                     "the target's HSP are at 25 C")
    if target.r0 is None:
        notes.append("the target has no R0: ranked by Ra, RED not given")
    return notes


def _closing_notes(target: Target) -> list[str]:
    notes = []
    if target.solute is not None and target.solute.dHfus_kJ_mol is None:
        notes.append("no enthalpy of fusion for this solute in the table: no solubility estimate")
    elif target.solute is not None:
        notes.append("solubility columns are estimates (ideal solubility x HSP activity coefficient); "
                     "confirm at the bench")
    if target.basis == "estimated":
        how = (target.solute.hsp_method if target.solute is not None and target.solute.hsp_method
               else "from structure")
        notes.append(f"the target's HSP are estimated ({how}): a screening result; a bench fit (solvsel fit) "
                     "is better")
    return notes


def _cautions(results: Sequence[RankedSolvent]) -> tuple[str, ...]:
    """Cautions of the shown liquids, each once, the closing deferral last."""
    seen = dict.fromkeys(c for r in results for c in r.cautions if c != DEFER)
    return tuple(seen) + (DEFER,)


def _nearest(cat: Catalog, req: RankRequest) -> RankResult:
    """The liquids nearest to ``req.like`` in Hansen space (smallest Ra first; every liquid kept
    has its Ra to the liquid, so the nearest are a sort, no neighbour search); the liquid itself
    is left out."""

    me = solvent_named(cat, req.like, "like")
    target = Target(me.name, float(me.dD), float(me.dP), float(me.dH), None, "table", None,
                    f"the liquid to replace; HSP source {me.hsp_source}", me.vm_cm3_mol)
    others = [r for r in cat.solvent_records() if r.name != me.name]
    results, dropped, rules = _rank_pool(cat, target, req, others)
    notes = _notes(target, req.temp_C) + _closing_notes(target)
    if results:
        k = len(results) if req.all or req.top is None else min(req.top, len(results))
        results = sorted(results, key=lambda r: (r.ra, r.name))[:k]
        notes.append(f"nearest liquids to {me.name} (Ra in MPa^0.5); similar HSP is not similar toxicity, "
                     "taste or legal status")
    return RankResult(target, req.temp_C, tuple(results), tuple(dropped), tuple(notes), _cautions(results), "ra",
                      audit_block(rules, cat.tables_dir))


def rank(request: RankRequest | None = None, *, catalog: Catalog | None = None, pool: Pool | None = None,
         **fields: Any) -> RankResult:
    """Rank single liquids for a target by RED (or Ra when R0 is unknown), or list substitutes.

    Parameters
    ----------
    request : RankRequest, optional
        the request; or give its fields as keywords
    catalog : Catalog, optional
        the tables (default: the bundled ones)
    pool : Pool, optional
        the candidate pool of the request's filters (:func:`~solvsel.jobs.pool.build_pool`), built
        once for many targets (batch screening); by default built here

    Returns
    -------
    RankResult

    Examples
    --------
    Triacetin, a food carrier, ranks first for cannabidiol among the EU carriers
    (README walk-through):

    >>> r = rank(solute="cannabidiol", food=True, use="carrier", jurisdiction="EU", top=2)
    >>> [x.name for x in r.results]
    ['triacetin', 'triethyl citrate']
    """
    req = build_request(RankRequest, request, fields)
    cat = catalog_or_default(catalog)
    if req.like is not None:
        return _nearest(cat, req)
    target = target_of(cat, target=req.target, solute=req.solute, hsp=req.hsp, smiles=req.smiles)
    if req.require_solubility:
        _check_solubility(target, req.temp_C)
    results, dropped, rules = _rank_pool(cat, target, req, pool=pool)
    results, sure = _how_sure(cat, target, results, None if req.all else req.top)
    notes = _notes(target, req.temp_C) + _closing_notes(target)
    if req.load is not None:
        notes.append(LOAD_NOTE if target.solute is not None else "no load check: it needs a solute of the tables")
    return RankResult(target, req.temp_C, tuple(results), tuple(dropped), tuple(notes), _cautions(results),
                      "red" if target.r0 else "ra", audit_block(rules, cat.tables_dir), sure)


def _how_sure(cat: Catalog, target: Target, results: list[RankedSolvent], top: int | None):
    """The rows shown (the best ``top``), each with how often it stays in the top three when the target is
    sampled within its uncertainty (:mod:`solvsel.science.robustness`), and the summary."""
    from dataclasses import replace

    from ..science.robustness import how_sure, target_spread

    shown = results if top is None else results[:top]
    h = how_sure(target.hsp, target_spread(target, cat), [[r.dD, r.dP, r.dH] for r in results],
                 [r.name for r in results], len(shown), "every ranked liquid re-scored")
    return [replace(r, how_sure=h.row(i)) for i, r in enumerate(shown)], h.to_dict()
