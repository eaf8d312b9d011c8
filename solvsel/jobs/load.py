"""Does it dissolve at my level?  The ``load`` job.

A liquid solute (an oil, a terpene: a liquid of the solvents table) or a solid (a
solute of the solutes table) in one liquid or a blend, at a stated load (mass
fraction) and over a storage range (default 4-25 C): yes / no / borderline, the
basis (measured pair, the binodal predicted by UNIFAC or Flory-Huggins, or solid
solubility from fusion data and the HSP activity) and the largest load that stays
one phase over the whole range
(:mod:`solvsel.science.loading`).  :func:`load_check` is the same check for the
``rank`` and ``blend`` jobs (their ``load`` field).

>>> r = load(solute="triacetin", carrier="medium-chain triglycerides", load="30%")
>>> r.verdict, round(r.largest_load, 2), r.basis
('no', 0.2, 'measured pair')
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Sequence

from ..data.catalog import Catalog
from ..data.provenance import audit_block
from ..errors import InputError, UnknownNameError
from ..rules.cautions import DEFER, solvent_cautions
from ..science.loading import LoadCheck, check_load
from ._base import build_request, catalog_or_default, check_names, check_number
from .parse import parse_fraction, parse_range
from .pool import solvent_named

__all__ = ["LoadRequest", "LoadResult", "load", "load_check", "load_info", "check_load_value", "check_storage",
           "DEFAULT_STORAGE_C", "LOAD_NOTE"]

#: Storage range checked by default [C]: a refrigerator to a warm room.
DEFAULT_STORAGE_C = (4.0, 25.0)

#: The note of a ranking or a blend search with a load.
LOAD_NOTE = ("load check over the storage range: a liquid or blend that cannot carry the load is marked with the "
             "largest load that stays one phase (measured pair, predicted binodal or solid solubility)")


def check_load_value(value, param: str = "load") -> float | None:
    """A load as a mass fraction above 0 and at most 1, from a number or text ("2%", "0.02", "1500ppm")."""
    if value is None:
        return None
    if isinstance(value, str):
        return parse_fraction(value, param)
    return check_number(value, param, 0.0, 1.0, unit="(mass fraction)", lo_open=True)


def check_storage(value, param: str = "storage_C") -> tuple[float, float]:
    """A storage range ``(lo, hi)`` [C], from two numbers or text "LO:HI"."""
    if isinstance(value, str):
        lo, hi = parse_range(value, param, "C")
    else:
        try:
            lo, hi = value
        except (TypeError, ValueError):
            raise InputError(f"expected two temperatures (lowest, highest) in C, got {value!r}", param=param,
                             value=value, expected="LO:HI in C") from None
    lo = check_number(lo, param, -80.0, 150.0, unit="C")
    hi = check_number(hi, param, -80.0, 150.0, unit="C")
    if hi < lo:
        raise InputError(f"the lowest temperature ({lo:g} C) is above the highest ({hi:g} C)", param=param,
                         value=value, expected="LO:HI with LO <= HI")
    return lo, hi


@dataclass(frozen=True)
class LoadRequest:
    """What to dissolve, in what, at which load, over which storage range.

    Attributes
    ----------
    solute : str
        a liquid of the solvents table (an oil, a terpene: judged by miscibility) or a solute of the
        solutes table (a solid: judged by its solubility estimate)
    carrier : tuple of str
        one liquid, or the liquids of a blend
    fractions : tuple of float, optional
        volume fractions of the blend's liquids, summing to 1 (needed for two or more)
    load : str or float
        the solute's mass fraction in the whole ("2%", "0.02", "1500ppm")
    storage_C : (float, float) or str
        storage range [C], -80 to 150 (default 4 to 25; text "LO:HI" is read too)
    """

    solute: str
    carrier: tuple[str, ...]
    load: str | float
    fractions: tuple[float, ...] | None = None
    storage_C: tuple[float, float] | str = DEFAULT_STORAGE_C

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        if not isinstance(self.solute, str) or not self.solute.strip():
            raise InputError("expected the name of a liquid or a solute", param="solute", value=self.solute,
                             expected="a name of the solvents or solutes table")
        set_(self, "carrier", check_names(self.carrier, "carrier", allow_none=False))
        set_(self, "load", check_load_value(self.load, "load"))
        set_(self, "storage_C", check_storage(self.storage_C))
        n = len(self.carrier)
        if self.fractions is None and n > 1:
            raise InputError("a blend carrier needs its volume fractions", param="fractions",
                             expected=f"{n} volume fractions summing to 1")
        if self.fractions is not None:
            fr = tuple(check_number(f, "fractions", 0.0, 1.0) for f in self.fractions)
            if len(fr) != n or abs(sum(fr) - 1.0) > 1e-6:
                raise InputError(f"expected {n} volume fractions (one per liquid) summing to 1, got {fr}",
                                 param="fractions", value=self.fractions, expected=f"{n} fractions summing to 1")
            set_(self, "fractions", fr)


@dataclass(frozen=True)
class LoadResult:
    """The verdict (``verdict``: yes / no / borderline), its basis and the largest load [mass fraction]."""

    check: LoadCheck
    cautions: tuple[str, ...]
    notes: tuple[str, ...] = ()
    audit: dict = field(default_factory=dict)

    @property
    def verdict(self) -> str:
        return self.check.verdict

    @property
    def largest_load(self) -> float | None:
        return self.check.largest_load

    @property
    def basis(self) -> str:
        return self.check.basis

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel dissolves --json``."""
        return {**self.check.to_dict(), "notes": list(self.notes), "cautions": list(self.cautions),
                "audit": self.audit}

    def to_frame(self):
        """One row per temperature checked."""
        from ._base import frame

        return frame(p.to_dict() for p in self.check.points)


def _solute(cat: Catalog, name: str, lo_C: float):
    """(record, liquid?) of a solute name: a liquid of the solvents table that is liquid over the range, else a
    solute of the solutes table."""
    try:
        rec = cat.solvent(name, library=False)
        if rec.mp_C is None or rec.mp_C < lo_C:
            return rec, True
    except UnknownNameError:
        pass
    try:
        return cat.solute(name), False
    except UnknownNameError as exc:
        exc.param = "solute"
        raise


def load_check(cat: Catalog, solute_rec, liquid: bool, recs: Sequence, fractions: Sequence[float], load: float,
               storage_C: tuple[float, float]) -> LoadCheck:
    """The load check of one carrier (for ``rank`` and ``blend``)."""
    return check_load(cat, solute_rec, list(recs), list(fractions), load, storage_C, liquid=liquid)


def solute_of_target(cat: Catalog, target, lo_C: float):
    """(record, liquid?) of a ranking target that is a solute of the tables, else None (typed HSP, a SMILES)."""
    sol = getattr(target, "solute", None)
    if sol is None:
        return None
    for key in (sol.cas, sol.name):
        if key:
            try:
                return _solute(cat, key, lo_C)
            except UnknownNameError:
                continue
    return sol, False


def load(request: LoadRequest | None = None, *, catalog: Catalog | None = None, **fields: Any) -> LoadResult:
    """Whether a load of a solute stays one phase in a liquid or blend over a storage range."""
    req = build_request(LoadRequest, request, fields)
    cat = catalog_or_default(catalog)
    rec, liquid = _solute(cat, req.solute, req.storage_C[0])
    recs = [solvent_named(cat, n, "carrier") for n in req.carrier]
    fractions = req.fractions or (1.0,)
    chk = load_check(cat, rec, liquid, recs, fractions, req.load, req.storage_C)
    notes = ["estimates for planning: confirm at the bench over the storage range (cold can split a blend or "
             "crystallise a solid)"]
    if liquid:
        notes.append("judged as a liquid: measured pairs where the table has one near the temperature, else the "
                     "binodal predicted by UNIFAC from the two structures, or by Flory-Huggins from HSP for "
                     "mixtures such as the oils (water and glycols are poorly predicted by the latter)")
    seen = dict.fromkeys(c for r in recs for c in solvent_cautions(r, use="carrier", cat=cat) if c != DEFER)
    return LoadResult(chk, tuple(seen) + (DEFER,), tuple(notes), audit_block((), cat.tables_dir))


#: How the ``mark`` of a load check begins, by verdict.
_MARK_WORDS = {"yes": "carries", "borderline": "borderline at", "no": "cannot carry"}


def load_info(cat: Catalog, target, recs: Sequence, fractions: Sequence[float], load_value: float | None,
              storage_C: tuple[float, float]) -> dict | None:
    """The load check of a ranking target in a liquid or blend (``recs`` at volume ``fractions``), as the ``load``
    field of a ranked liquid or a blend; None without a load, or for a target that is not a solute of the
    tables (typed HSP, a SMILES)."""
    if load_value is None:
        return None
    found = solute_of_target(cat, target, storage_C[0])
    if found is None:
        return None
    chk = load_check(cat, found[0], found[1], recs, fractions, load_value, storage_C)
    largest = "not known" if chk.largest_load is None else f"{100 * chk.largest_load:.3g} %"
    return {"verdict": chk.verdict, "load": chk.load, "largest_load": chk.largest_load, "basis": chk.basis,
            "limiting_temp_C": chk.limiting_temp_C, "reason": chk.reason,
            "mark": f"{_MARK_WORDS[chk.verdict]} {100 * chk.load:g} % (one phase up to {largest}, {chk.basis})"}
