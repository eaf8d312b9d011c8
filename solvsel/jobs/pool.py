"""The one pool of candidate liquids, shared by every job that searches liquids.

A job that ranks liquids, searches blends or looks for a bridging liquid asks
:func:`build_pool` for its candidates, so every door and every job applies the
same filters in the same order, each leaving a liquid out with its reason:

1. ``only`` / ``exclude``: the liquids the user names (left out: "excluded by you");
2. ``use``: a liquid must be listed in the table for that use (carrier or
   extraction solvent; the bench use takes every liquid);
3. property limits: cost class, boiling window, lowest flash point (a value not
   on record fails its limit);
4. hazard: the most hazardous GHS flammable-liquid category allowed, and the worst health
   hazard allowed (:data:`~solvsel.rules.hazards.HEALTH_LEVELS`; a liquid whose health hazards
   are not on record fails that limit);
5. food law: with ``food``, a ``jurisdiction`` or a ``purpose`` (and a food
   use), the liquid's status for the use (either food use when none is given)
   must be permitted or conditional, in the jurisdiction (or the most
   permissive of the food-law jurisdictions of the tables when none is given),
   and for the purpose of the product when one is given (a liquid its rules
   allow only for other purposes is left out, the rules named); no data is
   never read as permission;
6. temperature: the liquid's HSP and molar volume at ``temp_C`` by Hansen and
   Beerbower's rules; a liquid frozen or boiling there is left out; one without
   an expansion coefficient keeps its 25 C values, with a note.

Liquids that are the same substance (same CAS) are kept once.
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Sequence

import numpy as np

from ..data.catalog import Catalog, Solvent
from ..errors import InputError, MissingDataError, UnknownNameError
from ..rules.hazards import HEALTH_LEVELS, Hazard, HealthHazard, check_health_level, hazard_class, health_hazard
from ..rules.regulations import FoodStatus, Limit, check_food_jurisdiction, check_purpose, food_status, purpose_key
from ..science.hansen import T_WINDOW_C
from ..science.target import solvent_at
from ._base import check_choice, check_int, check_names, check_number

__all__ = ["USES", "check_id", "check_jurisdiction_text", "check_purpose_text", "PoolFilters", "PoolRequest", "Candidate", "LeftOut", "Pool", "build_pool", "property_reason", "hazard_rank",
           "solvent_named"]

#: Uses a liquid can be searched for.
USES = ("carrier", "extraction", "bench")


def check_id(value, param: str, expected: str) -> str:
    """A short name given as text (a jurisdiction, a purpose), stripped; anything else is an error about ``param``.

    Which jurisdictions and purposes exist is the tables' business: the job checks the name against
    its catalog (:func:`~solvsel.rules.regulations.check_food_jurisdiction`,
    :func:`~solvsel.rules.regulations.check_purpose`)."""
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)
    return value.strip()


def check_jurisdiction_text(value, param: str = "jurisdiction") -> str:
    """A jurisdiction as given, upper case (``"eu"`` -> ``"EU"``)."""
    return check_id(value, param, "a jurisdiction such as EU or US").upper()


def check_purpose_text(value, param: str = "purpose") -> str:
    """A purpose id as given, lower case with underscores (``"Food ingredient"`` -> ``"food_ingredient"``)."""
    return purpose_key(check_id(value, param, "a purpose such as food_ingredient"))


@dataclass(frozen=True)
class PoolFilters:
    """What the candidate liquids must satisfy.

    Attributes
    ----------
    temp_C : float
        working temperature [C]; liquids' HSP are shifted to it
    only, exclude : tuple of str, optional
        names, synonyms or CAS numbers the pool is limited to / leaves out
    use : {"carrier", "extraction", "bench"}, optional
        the liquid's role; with a food use, only liquids the table lists for it
    food : bool
        keep only liquids whose food status for the use is permitted or conditional
    jurisdiction : str, optional
        the food law applied (implies the food-law filter): a food-law
        jurisdiction of the tables (EU, US); None: the most permissive of them
    purpose : str, optional
        what the product is, an id of tables/purposes.csv (``food_ingredient``,
        ``natural_flavouring`` ...; implies the food-law filter): only liquids
        a rule allows for that purpose are kept
    worst_flammable_category : int or "none", optional
        most hazardous GHS flammable-liquid category allowed (1 to 4); "none"
        keeps only liquids that are not flammable
    bp_min_C, bp_max_C : float, optional
        window of the normal boiling point [C]
    min_flash_C : float, optional
        lowest closed-cup flash point allowed for a flammable liquid [C]
    max_cost : int, optional
        dearest cost class allowed (1 cheap .. 5 dear)
    max_health_hazard : str, optional
        worst health hazard allowed, a level of :data:`~solvsel.rules.hazards.HEALTH_LEVELS`
        ("none", "irritant", "harmful", "toxic or corrosive", "suspected CMR", "CMR"; or 0 to 5)
    """

    temp_C: float = 25.0
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

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        set_(self, "temp_C", check_number(self.temp_C, "temp_C", *T_WINDOW_C, unit="C"))
        if self.max_health_hazard is not None:
            set_(self, "max_health_hazard", check_health_level(self.max_health_hazard))
        set_(self, "only", check_names(self.only, "only"))
        set_(self, "exclude", check_names(self.exclude or (), "exclude") if self.exclude else ())
        set_(self, "use", check_choice(self.use, "use", USES, allow_none=True))
        # which jurisdictions and purposes exist is the tables' business: checked against them in build_pool
        set_(self, "jurisdiction", None if self.jurisdiction is None else check_jurisdiction_text(self.jurisdiction))
        set_(self, "purpose", None if self.purpose is None else check_purpose_text(self.purpose))
        if self.worst_flammable_category is not None and str(self.worst_flammable_category).lower() != "none":
            set_(self, "worst_flammable_category", check_int(self.worst_flammable_category, "worst_flammable_category", 1, 4))
        elif self.worst_flammable_category is not None:
            set_(self, "worst_flammable_category", "none")
        for name in ("bp_min_C", "bp_max_C", "min_flash_C"):
            set_(self, name, check_number(getattr(self, name), name, -273.15, 1000.0, unit="C", allow_none=True))
        if self.bp_min_C is not None and self.bp_max_C is not None and self.bp_min_C > self.bp_max_C:
            raise InputError(f"the lowest boiling point {self.bp_min_C:g} C is above the highest {self.bp_max_C:g} C",
                             param="bp_min_C", value=self.bp_min_C, expected="a low end at or below the high end")
        set_(self, "max_cost", check_int(self.max_cost, "max_cost", 1, 5, allow_none=True))
        if self.only and self.exclude:
            both = {n.lower() for n in self.only} & {n.lower() for n in self.exclude}
            if both:
                raise InputError(f"'{sorted(both)[0]}' is both among the liquids to use and those to leave out",
                                 param="exclude", value=sorted(both)[0])

    @property
    def legal(self) -> bool:
        """True when the food-law filter applies."""
        return (self.food or self.jurisdiction is not None or self.purpose is not None) and self.use != "bench"

    @property
    def food_uses(self) -> tuple[str, ...]:
        """The uses whose food status counts (either food use when none is given)."""
        return (self.use,) if self.use in ("carrier", "extraction") else ("carrier", "extraction")


#: The fields of :class:`PoolFilters`, which a :class:`PoolRequest` carries too.
POOL_FIELDS = tuple(f.name for f in fields(PoolFilters))


class PoolRequest:
    """Mixin of a job's request that carries the pool filters as fields of its own (the same names
    as :class:`PoolFilters`), so a notebook user passes them flat: ``rank(food=True, use="carrier")``.

    ``filters`` checks them; ``check_pool_fields`` (called from ``__post_init__``) stores the
    checked values back on the request.
    """

    @property
    def filters(self) -> PoolFilters:
        """The pool filters of this request (checked on construction)."""
        return PoolFilters(**{name: getattr(self, name) for name in POOL_FIELDS})

    def pool_in(self, cat: Catalog, pool: "Pool | None" = None, records: Sequence[Solvent] | None = None) -> "Pool":
        """``pool`` if it was built for this request's filters (one pool for many targets), else a
        new pool from the catalog (or ``records``)."""
        if pool is None:
            return build_pool(cat, self.filters, records)
        if pool.filters != self.filters:
            raise InputError("the pool given was built for other filters than the request's", param="pool")
        return pool

    def check_pool_fields(self) -> None:
        filters = self.filters
        for name in POOL_FIELDS:
            object.__setattr__(self, name, getattr(filters, name))


@dataclass(frozen=True)
class Candidate:
    """A liquid that passed every filter, with its values at the working temperature.

    ``hsp`` [MPa^0.5] and ``vm_cm3_mol`` are at the pool's temperature;
    ``note`` says how (e.g. "no expansion coefficient: HSP kept at 25 C");
    ``food`` is its food status for the use shown ("bench only" for the
    bench; None when not asked for and not known), ``food_use`` that use.
    """

    record: Solvent
    hsp: np.ndarray
    vm_cm3_mol: float
    note: str
    hazard: Hazard | None
    food: FoodStatus | None
    food_use: str | None
    health: HealthHazard | None = None

    @property
    def name(self) -> str:
        return self.record.name

    @property
    def cas(self) -> str:
        return self.record.cas


@dataclass(frozen=True)
class LeftOut:
    """A liquid the filters left out: its name, CAS, the filter and the reason in words."""

    name: str
    cas: str
    filter: str
    reason: str

    @property
    def brief(self) -> str:
        """The reason in a few words: a food-law reason without the rule's message ("no data as carrier in EU")."""
        return self.reason.split(":")[0] if self.filter == "food law" else self.reason

    def to_dict(self) -> dict:
        return {"name": self.name, "cas": self.cas, "filter": self.filter, "reason": self.reason}


@dataclass(frozen=True)
class Pool:
    """The candidates (in table order) and the liquids left out, with the filters used;
    ``order`` names every liquid considered, in the order considered; ``rules`` the rows of
    the regulations table the food-law statuses were judged by (for the answer's audit)."""

    filters: PoolFilters
    candidates: tuple[Candidate, ...]
    left_out: tuple[LeftOut, ...]
    order: tuple[str, ...] = ()
    rules: tuple[Limit, ...] = ()

    @property
    def names(self) -> list[str]:
        return [c.name for c in self.candidates]

    @property
    def hsp(self) -> np.ndarray:
        """``(n, 3)`` HSP of the candidates at the pool's temperature [MPa^0.5]."""
        return np.array([c.hsp for c in self.candidates], dtype=float).reshape(-1, 3)


def property_reason(rec, bp_min_C=None, bp_max_C=None, min_flash_C=None, max_cost=None) -> str | None:
    """Why a liquid fails the property limits of a pool (cost class, boiling window, lowest
    flash point), or None if it passes; a value not on record fails its limit.

    >>> from solvsel.data.catalog import load_catalog
    >>> property_reason(load_catalog().solvent("ethanol"), min_flash_C=60)
    'flash point 12 C, below 60 C'
    """
    if max_cost is not None and rec.cost_class is not None and rec.cost_class > int(max_cost):
        return f"cost class {rec.cost_class} above {int(max_cost)}"
    if bp_min_C is not None or bp_max_C is not None:
        if rec.bp_C is None:
            return "boiling point not on record"
        if bp_min_C is not None and rec.bp_C < bp_min_C:
            return f"boils at {rec.bp_C:g} C, below {bp_min_C:g} C"
        if bp_max_C is not None and rec.bp_C > bp_max_C:
            return f"boils at {rec.bp_C:g} C, above {bp_max_C:g} C"
    if min_flash_C is not None and rec.flammable:
        if rec.flash_C is None:
            return "flammable, flash point not on record"
        if rec.flash_C < min_flash_C:
            return f"flash point {rec.flash_C:g} C, below {min_flash_C:g} C"
    return None


def hazard_rank(hz: Hazard | None) -> int:
    """Order of hazard for trade-offs: 0 not flammable, 1 gas under pressure (not flammable) or
    flammable-liquid category 4, 2 category 3, 3 category 2, 4 category 1 (or no category on
    record), 5 flammable gas."""
    if hz is None:
        return 0
    if hz.kind == "gas under pressure":
        return 1
    if hz.kind == "flammable gas":
        return 5
    return 4 if hz.category is None else 5 - hz.category


def _hazard_reason(hz: Hazard | None, worst) -> str | None:
    flammable = hz is not None and hz.kind != "gas under pressure"
    if worst == "none":
        return f"flammable ({hz.label})" if flammable else None
    category = (hz.category or 1) if flammable else None  # no category on record: the worst is assumed
    if category is not None and category < worst:
        return f"{hz.label}, more hazardous than category {worst}"
    return None


@dataclass(frozen=True)
class _Food:
    """A liquid's food-law status as the pool shows it: the status, its use, the reason to leave the
    liquid out (None: kept) and the rules of every use judged."""

    status: FoodStatus | None = None
    use: str | None = None
    reason: str | None = None
    rules: tuple[Limit, ...] = ()


def _food(cat: Catalog, rec: Solvent, filters: PoolFilters) -> _Food:
    """The food-law status of ``rec`` for the pool's use(s), jurisdiction and purpose."""
    if filters.use == "bench":  # not a food use: shown as such, never a reason to leave a liquid out
        return _Food(food_status(cat, rec, use="bench", jurisdiction=filters.jurisdiction), "bench")
    statuses = []
    for use in filters.food_uses:
        try:
            statuses.append((use, food_status(cat, rec, use=use, jurisdiction=filters.jurisdiction,
                                              purpose=filters.purpose)))
        except (InputError, MissingDataError, LookupError) as exc:
            return _Food(reason=f"food status unknown: {exc}" if filters.legal else None)
    rules = tuple(r for _, st in statuses for r in st.rules)
    allowed = [(u, st) for u, st in statuses if st.allowed]
    # shown: the first use it is allowed for, else the first status that rests on rules (the most telling)
    use, status = allowed[0] if allowed else next(((u, st) for u, st in statuses if st.rules), statuses[0])
    if filters.legal and not allowed:
        where = f" in {filters.jurisdiction}" if filters.jurisdiction else ""
        return _Food(status, use, f"{status.status} as {' or '.join(filters.food_uses)}{where}: {status.message}",
                     rules)
    return _Food(status, use, None, rules)


def solvent_named(cat: Catalog, name: str, param: str) -> Solvent:
    """The liquid ``name`` of the catalog; an unknown name is an error about the request field ``param``."""
    try:
        return cat.solvent(name)
    except UnknownNameError as exc:
        exc.param = exc.param or param
        raise


def _same(rec: Solvent, other: Solvent) -> bool:
    if rec.cas and other.cas:
        return rec.cas == other.cas
    return rec.name == other.name


def _records(cat: Catalog, filters: PoolFilters, records: Sequence[Solvent] | None) -> list[Solvent]:
    if records is not None:
        recs = list(records)
    elif filters.only:
        recs = [solvent_named(cat, n, "only") for n in filters.only]
    else:
        recs = list(cat.solvent_records())
    unique: list[Solvent] = []
    for rec in recs:
        if not any(_same(rec, u) for u in unique):
            unique.append(rec)
    return unique


def _health_reason(hh: HealthHazard | None, worst: str) -> str | None:
    if hh is None:
        return "health hazards not on record"
    if hh.level > HEALTH_LEVELS.index(worst):
        return f"health hazard '{hh.category}' ({', '.join(hh.statements)}), worse than '{worst}'"
    return None


def _reason(cat: Catalog, rec: Solvent, filters: PoolFilters, dropped: list[Solvent], hz,
            hh: HealthHazard | None = None) -> tuple[str, str] | None:
    """(filter, reason) of the first filter ``rec`` fails, in the order of the module docstring."""
    if any(_same(rec, d) for d in dropped):
        return "exclude", "excluded by you"
    if filters.use in ("carrier", "extraction") and filters.use not in rec.roles:
        return "use", f"not listed for use as {filters.use} (listed: {', '.join(rec.roles) or 'none'})"
    why = property_reason(rec, filters.bp_min_C, filters.bp_max_C, filters.min_flash_C, filters.max_cost)
    if why is not None:
        return "property", why
    if filters.worst_flammable_category is not None:
        why = _hazard_reason(hz, filters.worst_flammable_category)
        if why is not None:
            return "hazard", why
    if filters.max_health_hazard is not None:
        why = _health_reason(hh, filters.max_health_hazard)
        if why is not None:
            return "hazard", why
    return None


def build_pool(cat: Catalog, filters: PoolFilters | None = None, records: Sequence[Solvent] | None = None) -> Pool:
    """The candidate liquids for ``filters`` (and the ones left out, with reasons).

    ``records`` replaces the solvents table as the starting set (e.g. a user's
    own liquids); else ``filters.only``, else every liquid of the catalog.

    Examples
    --------
    >>> from solvsel.data.catalog import load_catalog
    >>> pool = build_pool(load_catalog(), PoolFilters(use="carrier", jurisdiction="EU", temp_C=25))
    >>> "triacetin" in pool.names and "n-hexane" not in pool.names
    True
    """
    filters = filters or PoolFilters()
    check_food_jurisdiction(cat, filters.jurisdiction)
    check_purpose(cat, filters.purpose)
    dropped = [solvent_named(cat, n, "exclude") for n in filters.exclude]
    kept, left, rules = [], [], {}
    recs = _records(cat, filters, records)
    for rec in recs:
        hz = hazard_class(rec.flash_C, rec.bp_C, flammable=rec.flammable)
        hh = health_hazard(cat, rec)
        why = _reason(cat, rec, filters, dropped, hz, hh)
        food = _Food() if why else _food(cat, rec, filters)
        rules.update(dict.fromkeys(food.rules))
        if why is None and food.reason is not None:
            why = ("food law", food.reason)
        if why is None:
            try:
                h, vm, note = solvent_at(rec, filters.temp_C)
            except (InputError, MissingDataError) as exc:
                why = ("temperature", getattr(exc, "message", str(exc)))
        if why is not None:
            left.append(LeftOut(rec.name, rec.cas, *why))
            continue
        kept.append(Candidate(rec, np.asarray(h, dtype=float), float(vm), note, hz, food.status, food.use, hh))
    return Pool(filters, tuple(kept), tuple(left), tuple(r.name for r in recs), tuple(rules))
