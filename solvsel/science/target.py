"""The target of a search: the HSP point (and sphere radius) a solvent should match.

A target comes from a solute of the table (or the user's own solutes file,
where a sphere fitted from bench results can be saved), from typed numbers,
or from a structure (SMILES, estimated by group contribution).  Every target
says which of these it is (``basis``), so a result is never read as more
certain than its input.

The ranking of single solvents against a target lives here too
(:func:`rank_solvents`): Hansen distance at the working temperature, the
solubility estimate where the solute has fusion data, food status, dose
limits and cautions from :mod:`solvsel.rules.regulations`; and the nearest liquids
to a given liquid (:func:`nearest_liquids`), for substitutes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError, OutOfRangeError

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
    """Target estimated from a structure (group contribution, ``solvsel.science.structure``).

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


# ----------------------------------------------------------------------------- ranking

from dataclasses import field  # noqa: E402

from ..errors import MissingDataError  # noqa: E402

__all__ += ["RankedSolvent", "Ranking", "rank_solvents", "nearest_liquids", "solvent_at"]


@dataclass(frozen=True)
class RankedSolvent:
    """One solvent of a ranking, with what the bench needs beside the distance.

    ``ra`` and ``red`` are at the ranking temperature (the solvent's HSP
    shifted by Hansen and Beerbower's rules where its expansion coefficient is
    known); ``red`` is None when the target has no R0.  ``solubility`` is an
    estimate (dict of :class:`~solvsel.science.hansen.SolubilityEstimate`) where the
    solute has fusion data, else None.
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
            "origin": self.origin, "sources": list(self.sources),
        }


@dataclass(frozen=True)
class Ranking:
    """Solvents ranked for a target, best first, with what was left out and why."""

    target: Target
    temp_C: float
    results: tuple[RankedSolvent, ...]
    dropped: tuple[dict, ...] = ()
    notes: tuple[str, ...] = ()
    cautions: tuple[str, ...] = ()
    sorted_by: str = "ra"

    def to_dict(self) -> dict:
        return {
            "target": self.target.to_dict(),
            "temp_C": self.temp_C,
            "sorted_by": self.sorted_by,
            "results": [r.to_dict() for r in self.results],
            "dropped": list(self.dropped),
            "notes": list(self.notes),
            "cautions": list(self.cautions),
        }


def solvent_at(s, temp_C: float, ref_C: float = 25.0):
    """HSP [MPa^0.5] and molar volume [cm^3/mol] of a solvent record at ``temp_C``.

    Returns ``(hsp, vm, note)``.  Raises :class:`~solvsel.errors.OutOfRangeError`
    when the liquid is frozen or boiling there.  A liquefied gas (normal
    boiling point below 25 C, handled under pressure) is not checked against
    its boiling point; a liquid without an expansion coefficient keeps its
    25 C values, with a note.
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


def _solubility(target: Target, h, vm, s, temp_C):
    sol = target.solute
    if sol is None or sol.mp_C is None or sol.dHfus_kJ_mol is None or sol.vm_cm3_mol is None or sol.mw_g_mol is None:
        return None
    if temp_C >= sol.mp_C:
        return None
    if s.mw_g_mol is None:
        return None
    from .hansen import solid_solubility

    e = solid_solubility(target.hsp, sol.vm_cm3_mol, sol.mw_g_mol, sol.mp_C, sol.dHfus_kJ_mol, h, vm, s.mw_g_mol, temp_C)
    return {"mole_fraction": e.mole_fraction, "mass_fraction": e.mass_fraction, "g_per_L": e.g_per_L,
            "ideal_mole_fraction": e.ideal_mole_fraction, "basis": "estimated"}


def _hazard_label(s):
    """(label, short code) of the GHS class, e.g. ("flammable liquid, ...", "H225")."""
    from ..rules.hazards import hazard_class

    try:
        hz = hazard_class(s.flash_C, s.bp_C, s.flammable)
    except (InputError, MissingDataError, ValueError, TypeError):
        return None, None
    if hz is None:
        return None, None
    return hz.label or hz.kind, hz.hazard_statement or hz.kind


def _cautions(results, defer: str) -> tuple[str, ...]:
    """Cautions of the shown results, each once, the closing deferral last."""
    seen = dict.fromkeys(c for r in results for c in r.cautions if c != defer)
    return tuple(seen) + (defer,)


def rank_solvents(
    cat,
    target: Target,
    temp_C: float = 25.0,
    names=None,
    food: bool = False,
    use: str | None = None,
    jurisdiction: str | None = None,
    top: int | None = None,
    dose=None,
    category: str | None = None,
    keep_over: bool = False,
    exclude=(),
    require_solubility: bool = False,
    bp_min_C: float | None = None,
    bp_max_C: float | None = None,
    min_flash_C: float | None = None,
    max_cost: int | None = None,
) -> Ranking:
    """Rank single solvents for a target by RED (or Ra when R0 is unknown).

    Parameters
    ----------
    cat : Catalog
    target : Target
    temp_C : float
        temperature [C]; solvents are shifted with
        :func:`~solvsel.science.hansen.shift_temperature` (the target's HSP stays at
        25 C: solutes carry no expansion coefficient), solubility estimates use
        it directly; a solvent frozen or boiling there is dropped with the reason
    names : sequence of str, optional
        the pool (default: every solvent of the catalog, the user's included)
    food : bool
        keep only liquids whose food status for ``use`` is permitted or
        conditional (:func:`solvsel.rules.regulations.food_status`; "no data" is never
        taken as permission)
    use : {"carrier", "extraction", "bench"}, optional
        the intended use, for food status and cautions (default: with ``food``,
        a liquid allowed as a carrier or as an extraction solvent is kept; the
        cautions are those of a carrier)
    jurisdiction : {"EU", "US"}, optional
    top : int, optional
        keep the best ``top``
    dose, category : optional
        dose of the flavour in the first stage ("0.15%") and the food category:
        each carrier is checked with :func:`solvsel.rules.regulations.carrier_dose_check`
        (needs ``jurisdiction``); one that breaks a limit is dropped unless
        ``keep_over``
    exclude : sequence of str
        names to leave out (e.g. the liquid itself for substitutes)
    bp_min_C, bp_max_C, min_flash_C, max_cost : optional
        property limits of the pool, applied as in the blend search
        (:func:`solvsel.science.blends.property_reason`); a liquid that fails one is
        dropped with the reason
    require_solubility : bool
        raise :class:`~solvsel.errors.MissingDataError` (rather than leave the
        column empty) when the target has no fusion data for an estimate, and
        :class:`~solvsel.errors.OutOfRangeError` when the temperature is at or
        above its melting point

    Returns
    -------
    Ranking
    """
    from ..rules import regulations as compliance
    from ..rules.cautions import DEFER, solvent_cautions
    from . import hansen

    if not (isinstance(temp_C, (int, float)) and math.isfinite(temp_C)):
        raise InputError(f"--temp: expected a temperature in C, got {temp_C}")
    hansen._check_temperature(temp_C, what="--temp (temp_C)")
    if (dose is not None) != (category is not None):
        raise InputError("--dose and --category go together: the dose check needs both (and --jurisdiction)")
    if dose is not None and jurisdiction is None:
        raise InputError("--dose needs --jurisdiction EU or US: limits differ by jurisdiction")
    if top is not None and (not isinstance(top, int) or top < 1):
        raise InputError(f"--top: expected a whole number of at least 1, got {top}")
    if require_solubility:
        sol = target.solute
        if sol is None:
            raise MissingDataError(
                f"a solubility estimate needs a solute of the table with fusion data; '{target.name}' is {target.basis} HSP only"
            )
        missing = [k for k in ("mp_C", "dHfus_kJ_mol", "vm_cm3_mol", "mw_g_mol") if getattr(sol, k) is None]
        if missing:
            raise MissingDataError(f"no solubility estimate for {sol.name}: the solutes table has no {', '.join(missing)} for it")
        hansen.ideal_solubility(temp_C, sol.mp_C, sol.dHfus_kJ_mol)  # raises above the melting point
    # with no use given, --food keeps a liquid allowed for either food use (carrier or
    # extraction solvent), so substitutes for an extraction solvent are not lost
    uses = (use,) if use else ("carrier", "extraction")
    use = use or "carrier"
    recs = cat.solvent_records() if names is None else [cat.solvent(n) for n in names]
    skip = {cat.solvent(n).name for n in exclude}
    results, dropped = [], []
    notes = []
    if abs(temp_C - 25.0) > 1e-9:
        notes.append(f"solvent HSP shifted from 25 to {temp_C:g} C (Hansen and Beerbower 1971); the target's HSP are at 25 C")
    if target.r0 is None:
        notes.append("the target has no R0: ranked by Ra, RED not given")
    all_cautions: list[str] = []
    from .blends import property_reason

    for s in recs:
        if s.name in skip:
            continue
        why = property_reason(s, bp_min_C=bp_min_C, bp_max_C=bp_max_C, min_flash_C=min_flash_C, max_cost=max_cost)
        if why is not None:
            dropped.append({"name": s.name, "cas": s.cas, "reason": why})
            continue
        try:
            h, vm, tnote = solvent_at(s, temp_C)
        except (InputError, MissingDataError) as exc:
            dropped.append({"name": s.name, "cas": s.cas, "reason": str(exc)})
            continue
        status = None
        allowed = None
        try:
            statuses = [(u, compliance.food_status(cat, s, use=u, jurisdiction=jurisdiction)) for u in uses]
            ok = [(u, fs) for u, fs in statuses if fs.allowed]
            u_shown, fs = ok[0] if ok else statuses[0]
            status, allowed = fs.status, fs.allowed
            if len(uses) > 1:
                status = f"{status} ({'carrier' if u_shown == 'carrier' else 'extraction'})"
        except (InputError, MissingDataError, LookupError) as exc:
            if food:
                dropped.append({"name": s.name, "cas": s.cas, "reason": f"food status unknown: {exc}"})
                continue
        if food and not allowed:
            dropped.append({"name": s.name, "cas": s.cas,
                            "reason": f"food status as {' or '.join(uses)}: {statuses[0][1].status}"})
            continue
        dose_info = None
        row_notes = [n for n in (tnote,) if n]
        if dose is not None:
            chk = compliance.carrier_dose_check(cat, s, dose, jurisdiction, category)
            dose_info = {
                "ok": chk.ok, "complete": chk.complete, "max_dose": chk.max_dose,
                "max_dose_unit": chk.max_dose_unit,
                "binding_rule": chk.binding.rule if chk.binding is not None else None,
            }
            if not chk.ok and not keep_over:
                why = f"breaks a limit at the dose {dose}"
                if chk.binding is not None:
                    why += f" ({chk.binding.rule})"
                dropped.append({"name": s.name, "cas": s.cas, "reason": why})
                continue
            if not chk.ok:
                row_notes.append("over a limit at this dose")
            if not chk.complete:
                row_notes.append("no limit data for some part in this jurisdiction (not a permission)")
        r = float(hansen.ra(h, target.hsp))
        red = r / target.r0 if target.r0 else None
        try:
            sol = _solubility(target, h, vm, s, temp_C)
        except (InputError, MissingDataError):
            sol = None
        cautions = tuple(solvent_cautions(s, use=use, cat=cat))
        all_cautions.extend(cautions)
        if s.is_user:
            row_notes.append(f"your row ({s.origin})")
        results.append(RankedSolvent(
            s.name, s.cas, r, red, float(h[0]), float(h[1]), float(h[2]), vm, s.bp_C, s.flash_C,
            *_hazard_label(s), status, allowed, s.cost_class, s.water_miscibility, sol, dose_info,
            cautions, tuple(row_notes), s.origin, tuple(s.sources),
        ))
    results.sort(key=lambda x: (x.ra, x.name))
    if top is not None:
        results = results[:top]
    if target.solute is not None and target.solute.dHfus_kJ_mol is None:
        notes.append("no enthalpy of fusion for this solute in the table: no solubility estimate")
    elif target.solute is not None:
        notes.append("solubility columns are estimates (ideal solubility x HSP activity coefficient); confirm at the bench")
    if target.basis == "estimated":
        how = (target.solute.hsp_method if target.solute is not None and target.solute.hsp_method
               else "from structure")
        notes.append(f"the target's HSP are estimated ({how}): a screening result; a bench fit (solvsel fit) is better")
    caut = _cautions(results, DEFER)
    return Ranking(target, float(temp_C), tuple(results), tuple(dropped), tuple(notes), caut, "red" if target.r0 else "ra")


def nearest_liquids(cat, name: str, k: int = 10, food: bool = False, use: str | None = None,
                    jurisdiction: str | None = None, temp_C: float = 25.0, **limits) -> Ranking:
    """The liquids nearest to a given liquid in Hansen space (substitutes).

    Uses scikit-learn's :class:`~sklearn.neighbors.NearestNeighbors` on the
    coordinates (2 dD, dP, dH) of :func:`solvsel.science.hansen.scaled`, in which
    Euclidean distance equals Ra; for replacing a solvent that is banned,
    toxic or costly.  The pool can be restricted to food-grade liquids
    (``food``); the liquid itself is left out.

    Parameters
    ----------
    name : str
        the liquid to replace
    k : int
        how many neighbours
    """
    from sklearn.neighbors import NearestNeighbors

    from . import hansen

    me = cat.solvent(name)
    if not isinstance(k, int) or k < 1:
        raise InputError(f"--top: expected a whole number of at least 1, got {k}")
    target = Target(me.name, float(me.dD), float(me.dP), float(me.dH), None, "table", None,
                    f"the liquid to replace; HSP source {me.hsp_source}", me.vm_cm3_mol)
    full = rank_solvents(cat, target, temp_C=temp_C, food=food, use=use, jurisdiction=jurisdiction, exclude=[me.name],
                         **limits)
    if not full.results:
        return full
    pts = hansen.scaled(np.array([[r.dD, r.dP, r.dH] for r in full.results]))
    nn = NearestNeighbors(n_neighbors=min(k, len(pts))).fit(pts)
    dist, idx = nn.kneighbors(hansen.scaled(me.hsp)[None, :])
    chosen = [full.results[i] for i in idx[0]]
    notes = full.notes + (f"nearest liquids to {me.name} (Ra in MPa^0.5); similar HSP is not similar toxicity, taste or legal status",)
    from ..rules.cautions import DEFER

    return Ranking(target, full.temp_C, tuple(chosen), full.dropped, notes, _cautions(chosen, DEFER), "ra")
