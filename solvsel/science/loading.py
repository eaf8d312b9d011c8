"""Does it dissolve at my level?  The largest load of a solute that a liquid (or a blend) keeps in one phase.

A liquid solute (an oil, a terpene) in one liquid is judged by the pair's one-phase
window at each temperature of the storage range (:func:`solvsel.science.miscibility.pair`:
a measured pair of tables/miscibility.csv where one applies, the Flory-Huggins binodal
otherwise); in a blend, by the blend check with the solute added
(:func:`~solvsel.science.miscibility.blend_phase`), the largest load found by bisection.
A solid is judged by its solubility estimate (ideal solubility from the melting point
and enthalpy of fusion x the HSP activity coefficient,
:func:`solvsel.science.hansen.solid_solubility`) in the liquid or the blend at each
temperature.  The largest load over the whole range is the smallest of them; the
verdict compares the stated load with it:

- "yes": the load is at most :data:`MARGIN` of the largest load;
- "borderline": between that and the largest load, or the limit is not known
  (a measured partial pair whose solubility is not tabulated);
- "no": above the largest load at some temperature of the range.

Loads are mass fractions of the solute in the whole (solute + carrier).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..data.catalog import number_or_none as _num
from . import hansen
from .extraction import fusion_of, liquid_hsp_at
from .miscibility import blend_phase, pair

__all__ = ["MARGIN", "LoadPoint", "LoadCheck", "storage_temperatures", "check_load"]

#: A load up to this share of the largest one-phase load is a "yes" (common practice: keep a margin
#: below a solubility limit for batch-to-batch and temperature scatter).
MARGIN = 0.8


@dataclass(frozen=True)
class LoadPoint:
    """The largest one-phase load [mass fraction] at one temperature [C], and what it rests on."""

    temp_C: float
    largest_load: float | None
    basis: str
    sources: tuple[str, ...] = ()
    note: str = ""

    def to_dict(self) -> dict:
        return {"temp_C": self.temp_C, "largest_load": self.largest_load, "basis": self.basis,
                "sources": list(self.sources), "note": self.note}


@dataclass(frozen=True)
class LoadCheck:
    """The verdict on a load over a temperature range.

    ``largest_load`` is the smallest of the points' largest loads (None where a point's limit is not
    known), ``limiting_temp_C`` where it is reached; ``basis`` that point's basis.
    """

    solute: str
    carrier: tuple[str, ...]
    fractions: tuple[float, ...]
    load: float
    temps_C: tuple[float, float]
    verdict: str
    basis: str
    largest_load: float | None
    limiting_temp_C: float | None
    points: tuple[LoadPoint, ...]
    reason: str

    def to_dict(self) -> dict:
        return {"solute": self.solute, "carrier": list(self.carrier), "fractions": list(self.fractions),
                "load": self.load, "temps_C": list(self.temps_C), "verdict": self.verdict, "basis": self.basis,
                "largest_load": self.largest_load, "limiting_temp_C": self.limiting_temp_C,
                "points": [p.to_dict() for p in self.points], "reason": self.reason}


def storage_temperatures(lo: float, hi: float, step: float = 5.0) -> list[float]:
    """The temperatures checked [C]: both ends and every ``step`` between.

    >>> storage_temperatures(4, 25)
    [4.0, 9.0, 14.0, 19.0, 24.0, 25.0]
    """
    out = [float(t) for t in np.arange(lo, hi, step)] + [float(hi)]
    return sorted(set(round(t, 9) for t in out))


# ----------------------------------------------------------------------------- one temperature


def _predicted_basis(model: str) -> str:
    """The basis of a predicted pair's load in words: the binodal of the model that predicted it.

    >>> _predicted_basis("Flory-Huggins from HSP"), _predicted_basis("UNIFAC-LLE (Magnussen 1981)")
    ('Flory-Huggins binodal', 'UNIFAC-LLE (Magnussen 1981) binodal')
    """
    return "Flory-Huggins binodal" if not model or model.startswith("Flory-Huggins") else f"{model} binodal"


def _pair_point(cat, carrier, solute, temp_C: float) -> LoadPoint:
    """A liquid solute in one liquid: the first one-phase range of the solute's mass fraction."""
    v = pair(cat, carrier, solute, temp_C)
    basis = "measured pair" if v.basis == "measured" else _predicted_basis(v.model)
    if v.one_phase == "yes":
        return LoadPoint(temp_C, 1.0, basis, tuple(v.source), "miscible in all proportions")
    w = v.window or {}
    if v.contradicted:
        return LoadPoint(temp_C, None, basis, tuple(v.source),
                         "not known: the prediction contradicts the table's measurement at its temperature")
    if v.basis == "measured" and v.one_phase == "partial" and w.get("b_in_a_max") is None:
        return LoadPoint(temp_C, None, basis, tuple(v.source),
                         f"partly miscible, the solubility of {v.liquids[1]} in {v.liquids[0]} is not tabulated")
    ranges = w.get("one_phase_ranges") or [[0.0, 0.0]]
    first = ranges[0][1] if ranges and ranges[0][0] == 0.0 else 0.0
    if v.basis == "measured" and v.one_phase == "no":
        first = 0.0
    return LoadPoint(temp_C, float(first), basis, tuple(v.source), v.note)


def _volume_fraction(load: float, rho_solute: float, rho_carrier: float) -> float:
    v = load / rho_solute
    return v / (v + (1.0 - load) / rho_carrier)


def _blend_point(cat, recs, fractions, solute, temp_C: float) -> LoadPoint:
    """A liquid solute in a blend: the largest load at which the blend with the solute is one phase
    (bisection on the load; the blend check of each trial)."""
    rho = float(np.dot(fractions, [float(r.density_g_cm3) for r in recs]))
    rho_s = float(solute.density_g_cm3)
    names = [*recs, solute]

    def one_phase(load: float) -> tuple[bool, str]:
        phi = _volume_fraction(load, rho_s, rho)
        b = blend_phase(cat, names, [f * (1 - phi) for f in fractions] + [phi], temp_C)
        return b.one_phase, b.basis

    ok_hi, basis = one_phase(0.999)
    if ok_hi:
        return LoadPoint(temp_C, 1.0, f"blend check ({basis})", (), "one phase at every load")
    lo, hi = 0.0, 0.999
    for _ in range(24):
        mid = 0.5 * (lo + hi)
        ok, basis = one_phase(mid)
        lo, hi = (mid, hi) if ok else (lo, mid)
    return LoadPoint(temp_C, lo, f"blend check ({basis})", (), "pairwise windows and the whole-blend test")


def _solid_point(solute, hsp, vm: float, mw: float, temp_C: float) -> LoadPoint:
    """A solid: its solubility estimate (mass fraction) in the liquid or blend."""
    fus = fusion_of(solute)
    vm2, mw2 = _num(solute.vm_cm3_mol), _num(solute.mw_g_mol)
    if fus is None or vm2 is None or mw2 is None:
        return LoadPoint(temp_C, None, "solid solubility", (), "no melting point, molar volume or molar mass "
                         "in the solutes table: no estimate")
    if temp_C >= fus[0]:
        return LoadPoint(temp_C, None, "solid solubility", (), f"at or above its melting point ({fus[0]:g} C)")
    e = hansen.solid_solubility(np.array([solute.dD, solute.dP, solute.dH], dtype=float), vm2, mw2, fus[0], fus[1],
                                hsp, vm, mw, temp_C)
    note = "ideal solubility x HSP activity coefficient" + ("" if fus[2] == "table" else
                                                           "; enthalpy of fusion by Walden's rule (from memory)")
    return LoadPoint(temp_C, float(e.mass_fraction), "solid solubility (fusion data and HSP activity)", (), note)


def _carrier_at(recs, fractions, temp_C: float):
    """Volume-mixed HSP, mole-average molar volume and molar mass of the carrier at ``temp_C``."""
    hs, vs = zip(*(liquid_hsp_at(r, temp_C) for r in recs))
    hsp = np.sum([f * h for f, h in zip(fractions, hs)], axis=0)
    moles = np.array([f / v for f, v in zip(fractions, vs)])
    x = moles / moles.sum()
    return hsp, float(np.dot(x, vs)), float(np.dot(x, [float(r.mw_g_mol) for r in recs]))


# ----------------------------------------------------------------------------- the check


def _verdict(load: float, largest: float | None, unknown: bool) -> str:
    if largest is not None and load > largest:
        return "no"
    if unknown or largest is None or load > MARGIN * largest:
        return "borderline"
    return "yes"


def check_load(cat, solute, recs, fractions, load: float, temps_C: tuple[float, float], *,
               liquid: bool) -> LoadCheck:
    """Whether ``load`` [mass fraction] of ``solute`` stays one phase in the carrier over ``temps_C`` [C].

    Parameters
    ----------
    cat : Catalog
    solute : Solvent or Solute
        a liquid record (``liquid=True``, judged by miscibility) or a solute record (a solid)
    recs, fractions : sequences
        the carrier's liquids and their volume fractions (one liquid: ``[rec], [1.0]``)
    load : float
        mass fraction of the solute in the whole, above 0 and at most 1
    temps_C : (float, float)
        the storage range [C]
    """
    points = []
    for t in storage_temperatures(*temps_C):
        if liquid and len(recs) == 1:
            points.append(_pair_point(cat, recs[0], solute, t))
        elif liquid:
            points.append(_blend_point(cat, recs, fractions, solute, t))
        else:
            points.append(_solid_point(solute, *_carrier_at(recs, fractions, t), t))
    known = [p for p in points if p.largest_load is not None]
    worst = min(known, key=lambda p: p.largest_load) if known else points[0]
    unknown = len(known) < len(points)
    largest = worst.largest_load if known else None
    verdict = _verdict(load, largest, unknown)
    carrier = " + ".join(r.name for r in recs)
    if largest is None:
        reason = f"no limit known for {solute.name} in {carrier}: {worst.note}"
    else:
        reason = (f"{solute.name} stays one phase in {carrier} up to {100 * largest:.3g} % by mass over "
                  f"{temps_C[0]:g} to {temps_C[1]:g} C (lowest at {worst.temp_C:g} C, {worst.basis})")
        if unknown:
            reason += "; at some temperatures the limit is not known"
    return LoadCheck(solute.name, tuple(r.name for r in recs), tuple(float(f) for f in fractions), float(load),
                     (float(temps_C[0]), float(temps_C[1])), verdict, worst.basis, largest,
                     worst.temp_C if known else None, tuple(points), reason)
