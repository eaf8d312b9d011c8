"""The target of a search: the HSP point (and sphere radius) a solvent should match.

A target comes from a solute of the table (or the user's own solutes file,
where a sphere fitted from bench results can be saved), from typed numbers,
or from a structure (SMILES, estimated by group contribution).  Every target
says which of these it is (``basis``), so a result is never read as more
certain than its input.

A liquid's values at the working temperature (:func:`solvent_at`) and the
solubility estimate of a target in one liquid (:func:`solubility_in`) live
here too; the ranking itself is the ``rank`` job (:mod:`solvsel.jobs.rank`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError, OutOfRangeError

__all__ = ["Target", "HSP_RANGES", "target_from_solute", "target_from_hsp", "target_from_smiles", "target_from_estimate", "solvent_at",
           "solubility_in"]

#: Accepted ranges of typed HSP [MPa^0.5]: they span every liquid and solute in
#: Hansen's handbook tables (water has dH 42.3; no ordinary substance has dD
#: outside 10-25), so a number outside is a typing mistake.
HSP_RANGES = {"dD": (10.0, 25.0), "dP": (0.0, 30.0), "dH": (0.0, 45.0)}

BASES = ("table", "typed", "estimated", "fitted")


@dataclass(frozen=True)
class Target:
    """HSP target of a ranking or a blend search.

    Attributes
    ----------
    name : str
        what the target is (solute name, "typed target", the SMILES)
    dD, dP, dH : float
        Hansen parameters [MPa^0.5]
    r0 : float or None
        interaction radius [MPa^0.5]; None when unknown (RED is then not given)
    basis : str
        "table" (a solute of the tables), "typed", "estimated" (from structure)
        or "fitted" (a sphere fitted from bench results)
    solute : Solute or None
        the catalog record when the target is a solute
    note : str
        provenance and caveats
    vm_cm3_mol : float or None
        molar volume of the solute [cm^3/mol], when known
    uncertainty : dict or None
        uncertainty of dD, dP, dH [MPa^0.5], or None when none is stated; its ``kind`` says how
        it is given: "cv_mae" (an estimate from structure: cross-validated mean absolute errors
        per parameter), "interval" (a fitted sphere: ``[lo, hi]`` per parameter at ``level``) or
        "sd" (standard deviations); read by :func:`solvsel.science.robustness.target_spread`
    """

    name: str
    dD: float
    dP: float
    dH: float
    r0: float | None = None
    basis: str = "typed"
    solute: Any = None
    note: str = ""
    vm_cm3_mol: float | None = None
    uncertainty: dict | None = None

    @property
    def hsp(self) -> np.ndarray:
        return np.array([self.dD, self.dP, self.dH], dtype=float)

    def to_dict(self) -> dict:
        d = {
            "name": self.name,
            "dD": self.dD,
            "dP": self.dP,
            "dH": self.dH,
            "r0": self.r0,
            "basis": self.basis,
            "note": self.note,
            "vm_cm3_mol": self.vm_cm3_mol,
        }
        if self.solute is not None:
            d["cas"] = getattr(self.solute, "cas", "")
            d["sources"] = list(getattr(self.solute, "sources", ()))
        if self.uncertainty is not None:
            d["uncertainty"] = dict(self.uncertainty)
        return d


def _check(label: str, value: float) -> float:
    expected = f"a number of MPa^0.5 from {HSP_RANGES[label][0]:g} to {HSP_RANGES[label][1]:g}"
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{label}: expected a number of MPa^0.5, got '{value}'", param="hsp", value=value,
                         expected=expected) from None
    if not math.isfinite(v):
        raise InputError(f"{label}: expected a finite number of MPa^0.5, got {value}", param="hsp", value=value,
                         expected=expected)
    lo, hi = HSP_RANGES[label]
    if not lo <= v <= hi:
        raise OutOfRangeError(f"{label} = {v:g} MPa^0.5 is outside {lo:g}-{hi:g}, the range of real substances",
                              param="hsp", value=value, expected=expected)
    return v


def _check_r0(value) -> float | None:
    if value is None:
        return None
    expected = "a positive number of MPa^0.5"
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"R0: expected a number of MPa^0.5, got '{value}'", param="hsp", value=value,
                         expected=expected) from None
    if not (math.isfinite(v) and v > 0):
        raise OutOfRangeError(f"R0 = {value} MPa^0.5: the interaction radius must be a positive number",
                              param="hsp", value=value, expected=expected)
    return v


def target_from_hsp(values, name: str = "typed target") -> Target:
    """Target from typed numbers ``(dD, dP, dH)`` or ``(dD, dP, dH, R0)`` [MPa^0.5].

    Each number is range-checked (dD 10-25, dP 0-30, dH 0-45, R0 > 0).

    >>> t = target_from_hsp((17.0, 3.0, 8.0, 8.0))
    >>> t.hsp.tolist(), t.r0, t.basis
    ([17.0, 3.0, 8.0], 8.0, 'typed')
    """
    if isinstance(values, (str, bytes)) or not hasattr(values, "__len__"):
        raise InputError(f"expected dD,dP,dH[,R0] as 3 or 4 numbers, got {values!r}", param="hsp", value=values,
                         expected="dD,dP,dH[,R0] in MPa^0.5")
    vals = list(values)
    if len(vals) not in (3, 4):
        raise InputError(f"expected dD,dP,dH[,R0] (3 or 4 numbers), got {len(vals)}", param="hsp", value=values,
                         expected="dD,dP,dH[,R0] in MPa^0.5")
    dD, dP, dH = (_check(k, v) for k, v in zip(("dD", "dP", "dH"), vals[:3]))
    r0 = _check_r0(vals[3]) if len(vals) == 4 else None
    return Target(name, dD, dP, dH, r0, "typed", None, "typed by the user")


def target_from_solute(cat, name: str) -> Target:
    """Target from a solute of the catalog (bundled or the user's own file).

    A user's row whose ``hsp_basis`` is "fitted" (a sphere fitted from bench
    results) gives a target of basis "fitted"; an estimated table row keeps
    "estimated"; otherwise "table".  Unknown names raise
    :class:`~solvsel.errors.UnknownNameError` with the closest names.
    """
    s = cat.solute(name)
    basis = {"fitted": "fitted", "estimated": "estimated"}.get(s.hsp_basis, "table")
    note = f"{s.hsp_basis} HSP"
    if s.hsp_method:
        note += f" ({s.hsp_method})"
    if s.hsp_source:
        note += f"; source {s.hsp_source}"
    if s.is_user:
        note += f"; from your file ({s.origin})"
    if s.r0 is None:
        note += "; no interaction radius known, so RED is not given"
    return Target(s.name, float(s.dD), float(s.dP), float(s.dH), s.r0, basis, s, note, s.vm_cm3_mol)


def target_from_estimate(e) -> Target:
    """Target from a structure estimate (:class:`~solvsel.science.structure.Estimate`): basis
    "estimated", no interaction radius (R0 None), the method's uncertainty."""
    for k in ("dD", "dP", "dH"):
        v = getattr(e, k)
        if v is None or not math.isfinite(v):
            raise InputError(f"no estimate of {k} for '{e.smiles}'", param="smiles", value=e.smiles)
    unc = getattr(e, "uncertainty", None)
    note = f"estimated from structure ({e.method}); a screening estimate, confirm at the bench"
    return Target(e.smiles, float(e.dD), float(e.dP), float(e.dH), None, "estimated", None, note,
                  e.vm_cm3_mol, dict(unc) if isinstance(unc, dict) else None)


def target_from_smiles(smiles: str) -> Target:
    """Target estimated from a structure (group contribution, ``solvsel.science.structure``).

    The estimate has no interaction radius (R0 None) and carries the method's
    uncertainty.
    """
    if not smiles or not str(smiles).strip():
        raise InputError("expected a SMILES string, got nothing", param="smiles", value=smiles,
                         expected="a SMILES string")
    from .structure import estimate

    return target_from_estimate(estimate(str(smiles).strip()))


# ----------------------------------------------------------------------------- one liquid at a temperature


def solvent_at(s, temp_C: float, ref_C: float = 25.0):
    """HSP [MPa^0.5] and molar volume [cm^3/mol] of a solvent record at ``temp_C``.

    Returns ``(hsp, vm, note)``.  Raises :class:`~solvsel.errors.OutOfRangeError`
    when the liquid is frozen or boiling there.  A liquefied gas (normal
    boiling point below 25 C, handled under pressure) is not checked against
    its boiling point; a liquid without an expansion coefficient keeps its
    25 C values, with a note.

    Examples
    --------
    Ethanol at 40 C by Hansen and Beerbower's rules (its expansion coefficient
    is in the table), and at 25 C unchanged:

    >>> from solvsel.data.catalog import load_catalog
    >>> h, vm, note = solvent_at(load_catalog().solvent("ethanol"), 25.0)
    >>> h.tolist(), note
    ([15.8, 8.8, 19.4], '')
    """
    from . import hansen

    h = np.array([s.dD, s.dP, s.dH], dtype=float)
    vm = float(s.vm_cm3_mol)
    if abs(temp_C - ref_C) < 1e-9:
        return h, vm, ""
    gas = s.bp_C is not None and s.bp_C < ref_C
    if s.alpha_1_K is None:
        hansen._check_temperature(temp_C, s.mp_C, None if gas else s.bp_C)
        return h, vm, f"no expansion coefficient: HSP kept at {ref_C:g} C"
    h2, vm2 = hansen.shift_temperature(h, s.alpha_1_K, temp_C, ref_C, vm, s.mp_C, None if gas else s.bp_C)
    note = "liquefied gas: held under pressure" if gas else ""
    return h2, float(vm2), note


def solubility_in(target: Target, s, hsp, vm_cm3_mol: float, temp_C: float) -> dict | None:
    """Estimated solubility of a solid target in one liquid, or None where the data do not allow it.

    Needs a solute target with melting point, enthalpy of fusion, molar volume
    and molar mass, a temperature below its melting point and the liquid's
    molar mass; ``hsp`` [MPa^0.5] and ``vm_cm3_mol`` are the liquid's at
    ``temp_C`` [C].  The estimate is ideal solubility times the activity
    coefficient from HSP (:func:`solvsel.science.hansen.solid_solubility`):
    ``{"mole_fraction", "mass_fraction", "g_per_L", "ideal_mole_fraction", "basis"}``.
    """
    sol = target.solute
    if sol is None or sol.mp_C is None or sol.dHfus_kJ_mol is None or sol.vm_cm3_mol is None or sol.mw_g_mol is None:
        return None
    if temp_C >= sol.mp_C or s.mw_g_mol is None:
        return None
    from ..errors import MissingDataError
    from .hansen import solid_solubility

    try:
        e = solid_solubility(target.hsp, sol.vm_cm3_mol, sol.mw_g_mol, sol.mp_C, sol.dHfus_kJ_mol, hsp, vm_cm3_mol,
                             s.mw_g_mol, temp_C)
    except (InputError, MissingDataError):
        return None
    return {"mole_fraction": e.mole_fraction, "mass_fraction": e.mass_fraction, "g_per_L": e.g_per_L,
            "ideal_mole_fraction": e.ideal_mole_fraction, "basis": "estimated"}
