"""The target of a search: the HSP point (and sphere radius) a solvent should match.

A target comes from a solute of the table (or the user's own solutes file,
where a sphere fitted from bench results can be saved), from typed numbers,
or from a structure (SMILES, estimated by group contribution).  Every target
says which of these it is (``basis``), so a result is never read as more
certain than its input.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from .errors import InputError, OutOfRangeError

__all__ = ["Target", "HSP_RANGES", "target_from_solute", "target_from_hsp", "target_from_smiles"]

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
        estimated uncertainty of dD, dP, dH [MPa^0.5] (estimates only)
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
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{label}: expected a number of MPa^0.5, got '{value}'") from None
    if not math.isfinite(v):
        raise InputError(f"{label}: expected a finite number of MPa^0.5, got {value}")
    lo, hi = HSP_RANGES[label]
    if not lo <= v <= hi:
        raise OutOfRangeError(f"{label} = {v:g} MPa^0.5 is outside {lo:g}-{hi:g}, the range of real substances")
    return v


def _check_r0(value) -> float | None:
    if value is None:
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"R0: expected a number of MPa^0.5, got '{value}'") from None
    if not (math.isfinite(v) and v > 0):
        raise OutOfRangeError(f"R0 = {value} MPa^0.5: the interaction radius must be a positive number")
    return v


def target_from_hsp(values, name: str = "typed target") -> Target:
    """Target from typed numbers ``(dD, dP, dH)`` or ``(dD, dP, dH, R0)`` [MPa^0.5].

    Each number is range-checked (dD 10-25, dP 0-30, dH 0-45, R0 > 0).

    >>> t = target_from_hsp((17.0, 3.0, 8.0, 8.0))
    >>> t.hsp.tolist(), t.r0, t.basis
    ([17.0, 3.0, 8.0], 8.0, 'typed')
    """
    vals = list(values)
    if len(vals) not in (3, 4):
        raise InputError(f"--hsp: expected dD,dP,dH[,R0] (3 or 4 numbers), got {len(vals)}")
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


def target_from_smiles(smiles: str) -> Target:
    """Target estimated from a structure (group contribution, ``solvsel.structure``).

    The estimate has no interaction radius (R0 None) and carries the method's
    uncertainty.
    """
    if not smiles or not str(smiles).strip():
        raise InputError("--smiles: expected a SMILES string, got nothing")
    try:
        from . import structure
    except ImportError:
        structure = None
    estimate = getattr(structure, "estimate", None)
    if estimate is None:
        raise InputError("--smiles: estimating HSP from a structure is not available in this version; give --hsp or --solute")
    e = estimate(str(smiles).strip())
    for k in ("dD", "dP", "dH"):
        v = getattr(e, k)
        if v is None or not math.isfinite(v):
            raise InputError(f"--smiles: no estimate of {k} for '{smiles}'")
    unc = getattr(e, "uncertainty", None)
    method = getattr(e, "method", "group contribution")
    note = f"estimated from structure ({method}); a screening estimate, confirm at the bench"
    return Target(
        getattr(e, "smiles", smiles), float(e.dD), float(e.dP), float(e.dH), None, "estimated", None, note,
        getattr(e, "vm_cm3_mol", None), dict(unc) if isinstance(unc, dict) else None,
    )
