"""Which strength and how cold: the ``extraction`` job (an extraction plan over a grid).

Over a grid of strengths of a solvent pair (ethanol in water by default, 40-100 % v/v
of the first liquid) and temperatures (-40 to +40 C by default), each point gets the
target's distance Ra (RED where the target has R0) and solubility estimate, each
reject's solubility estimate, a selectivity figure, whether the mixture is liquid and
its viscosity (:mod:`solvsel.science.extraction`); then the best window in words and
numbers, the temperature at which each strength strips under the stated vacuum (and
the azeotrope), the legal status of each liquid for the product's purpose with the
residue limits that apply, and the cautions of flammable solvents.

The grid is kept as plain arrays (``grid``: one list per strength, one value per
temperature) so that a heat map can be drawn from them.

>>> r = extraction(solute="cannabidiol", strengths=(70, 95), temps_C=(-20, 20))
>>> r.liquids, r.grid["liquid"][0]
(('ethanol', 'water'), [True, True])
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..data.catalog import Catalog
from ..data.provenance import audit_block
from ..errors import InputError, OutOfRangeError, SolvselError
from ..rules.cautions import DEFER, solvent_cautions
from ..rules.regulations import food_status, limits
from ..science import extraction as ex
from ..science.target import Target, target_from_hsp
from ._base import build_request, catalog_or_default, check_jurisdictions, check_names, check_number, frame, target_of
from .pool import solvent_named

__all__ = ["ExtractionRequest", "ExtractionResult", "extraction", "DEFAULT_REJECTS"]

#: The co-extracts a botanical extraction usually keeps out: a pigment, a plant wax ester and a sugar.
DEFAULT_REJECTS = ("chlorophyll a", "cetyl palmitate", "sucrose")
_STRENGTHS = tuple(float(s) for s in range(40, 101, 5))
_TEMPS = tuple(float(t) for t in range(-40, 41, 5))
#: Highest viscosity [mPa s] counted as easy to filter (common practice: a few times that of water at 0 C).
FILTER_VISC_MAX = 10.0


def _grid_text(text: str, param: str, unit: str) -> list[float]:
    """Numbers of a grid written as text: ``LO:HI:STEP`` (both ends included) or ``a, b, c``."""
    from .parse import parse_number

    text = text.strip()
    if ":" not in text:
        return [parse_number(v, param, unit) for v in text.replace(";", ",").split(",") if v.strip()]
    parts = text.split(":")
    if len(parts) != 3:
        raise InputError(f"expected LO:HI:STEP, got '{text}'", param=param, value=text, expected="LO:HI:STEP")
    lo, hi, step = (parse_number(v, param, unit) for v in parts)
    if not (step > 0 and hi >= lo) or (hi - lo) / step > 400:
        raise InputError(f"'{text}': expected LO <= HI and a step above 0 giving at most 400 values", param=param,
                         value=text, expected="LO:HI:STEP")
    return [float(v) for v in np.round(np.arange(lo, hi + step / 2, step), 9)]


def _grid_values(value, param: str, lo: float, hi: float, unit: str) -> tuple[float, ...]:
    """The sorted distinct values of a grid axis: numbers, or text (:func:`_grid_text`)."""
    expected = f"numbers from {lo:g} to {hi:g} {unit}, or LO:HI:STEP"
    if isinstance(value, str):
        value = _grid_text(value, param, unit)
    if isinstance(value, bytes) or not hasattr(value, "__iter__"):
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)
    vals = tuple(sorted({check_number(v, param, lo, hi, unit=unit) for v in value}))
    if not vals:
        raise InputError(f"expected {expected}, got nothing", param=param, expected=expected)
    return vals


@dataclass(frozen=True)
class ExtractionRequest:
    """What to extract, with which pair of liquids, over which grid.

    Attributes
    ----------
    solute, hsp, smiles, target : optional
        the target (one of: a solute of the tables, typed HSP ``(dD, dP, dH[, R0])`` [MPa^0.5], a SMILES,
        a ready target)
    rejects : tuple of str
        solutes of the tables to keep out (default chlorophyll a, cetyl palmitate, sucrose)
    liquids : tuple of two str
        the solvent pair; the strength is the volume percent of the first (default ethanol, water)
    strengths : tuple of float or str
        strengths [% v/v of the first liquid, before mixing], 0 to 100 (default 40 to 100 in steps of 5);
        text "LO:HI:STEP" or "a, b, c" is read too
    temps_C : tuple of float or str
        temperatures [C], -80 to 100 (default -40 to 40 in steps of 5; text as for ``strengths``)
    vacuum_kPa : float
        absolute pressure of the evaporator when stripping [kPa], 0.5 to 101.325 (default 10)
    finish_C : float
        temperature the extract is held at to finish stripping [C], 0 to 150 (default 60, the
        evaporator's setting): the residue left at equilibrium is judged there
    jurisdiction : str
        food law for the legal status (EU or US; default EU)
    purpose : str, optional
        what the product is (an id of tables/purposes.csv, e.g. "food_ingredient")
    """

    solute: str | None = None
    hsp: tuple[float, ...] | None = None
    smiles: str | None = None
    target: Target | None = None
    rejects: tuple[str, ...] = DEFAULT_REJECTS
    liquids: tuple[str, ...] = ("ethanol", "water")
    strengths: tuple[float, ...] = _STRENGTHS
    temps_C: tuple[float, ...] = _TEMPS
    vacuum_kPa: float = 10.0
    finish_C: float = 60.0
    jurisdiction: str = "EU"
    purpose: str | None = None

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        liquids = check_names(self.liquids, "liquids", allow_none=False)
        if len(liquids) != 2:
            raise InputError(f"give two liquids (the strength is that of the first), got {len(liquids)}",
                             param="liquids", value=", ".join(liquids), expected="two liquids")
        set_(self, "liquids", liquids)
        set_(self, "rejects", check_names(self.rejects, "rejects") or ())
        set_(self, "strengths", _grid_values(self.strengths, "strengths", 0.0, 100.0, "% v/v"))
        set_(self, "temps_C", _grid_values(self.temps_C, "temps_C", -80.0, 100.0, "C"))
        set_(self, "vacuum_kPa", check_number(self.vacuum_kPa, "vacuum_kPa", 0.5, 101.325, unit="kPa"))
        set_(self, "finish_C", check_number(self.finish_C, "finish_C", 0.0, 150.0, unit="C"))
        set_(self, "jurisdiction", check_jurisdictions([self.jurisdiction], "jurisdiction")[0])
        if self.hsp is not None:
            target_from_hsp(self.hsp)
            set_(self, "hsp", tuple(float(v) for v in self.hsp))


@dataclass(frozen=True)
class ExtractionResult:
    """The plan: the grid (``grid``, one list per strength), the best window, stripping and legal status.

    ``grid`` keys: ``ra`` and ``red`` of the target [MPa^0.5, -], ``target_g_L`` and ``rejects_g_L``
    (per reject) [g/L], ``selectivity`` (target g/L over the most soluble reject's g/L), ``liquid``,
    ``viscosity_mPa_s``; ``freezing_point_C`` per strength; ``flash_point_C`` per strength, closed cup [C]
    (ethanol-water by :func:`solvsel.science.extraction.flash_point_C`; None for other pairs or where
    the strength boils first); ``strip`` the bubble temperature of each
    strength at the vacuum [C], the end of stripping (the less volatile liquid alone), the azeotrope;
    ``legal`` each liquid's status for the purpose, its residue rules and ``residue_bound_mg_kg``, the most
    that can stay in the extract at equilibrium at ``finish_C`` and the vacuum (each rule with a number
    says whether that bound is ``over`` it).
    """

    target: Target
    liquids: tuple[str, str]
    strengths: tuple[float, ...]
    temps_C: tuple[float, ...]
    rejects: tuple[str, ...]
    grid: dict
    freezing_point_C: tuple[float | None, ...]
    flash_point_C: tuple[float | None, ...]
    hsp_basis: str
    best: dict | None
    window: str
    strip: dict
    legal: tuple[dict, ...]
    notes: tuple[str, ...]
    cautions: tuple[str, ...]
    sources: dict
    audit: dict = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel extract --json``."""
        return {
            "target": self.target.to_dict(), "liquids": list(self.liquids), "strengths_pct_v": list(self.strengths),
            "temps_C": list(self.temps_C), "rejects": list(self.rejects), "grid": self.grid,
            "freezing_point_C": list(self.freezing_point_C), "flash_point_C": list(self.flash_point_C),
            "hsp_basis": self.hsp_basis, "best": self.best,
            "window": self.window, "strip": self.strip, "legal": list(self.legal), "notes": list(self.notes),
            "cautions": list(self.cautions), "sources": self.sources, "audit": self.audit,
        }

    def to_frame(self):
        """One row per grid point (strength, temperature and every value of the grid there)."""
        rows = []
        for i, s in enumerate(self.strengths):
            for j, t in enumerate(self.temps_C):
                row = {"strength_pct_v": s, "temp_C": t}
                for k, v in self.grid.items():
                    if k == "rejects_g_L":
                        row.update({f"{name}_g_L": vals[i][j] for name, vals in v.items()})
                    else:
                        row[k] = v[i][j]
                rows.append(row)
        return frame(rows)


# ----------------------------------------------------------------------------- the grid


def _point(p: ex.Pair, target: Target, rejects, fusions, phi: float, t: float, liquids) -> dict:
    from ..science.hansen import ra

    hsp, vm, mw = ex.mixture_at(p, phi, t, liquids)
    r = float(ra(hsp, target.hsp))
    tg = ex.solubility_g_L(target.solute, hsp, vm, mw, t, fusions[0]) if target.solute is not None else None
    rej = [ex.solubility_g_L(s, hsp, vm, mw, t, f) for s, f in zip(rejects, fusions[1:])]
    known = [v for v in rej if v is not None]
    sel = tg / max(known) if tg is not None and known and max(known) > 0 else None
    return {"ra": r, "red": r / target.r0 if target.r0 else None, "target_g_L": tg, "rejects_g_L": rej,
            "selectivity": sel}


def _liquid_and_viscosity(cat: Catalog, p: ex.Pair, strength: float, temps) -> tuple[float | None, list, list, bool]:
    if p.ethanol_water:
        fp = float(ex.freezing_point_C(cat, strength))
        w = 100.0 * float(p.mass_fraction(strength / 100.0))
        vis = [ex.viscosity_mPa_s(cat, w, t) for t in temps]
        return fp, [t > fp for t in temps], [round(v, 4) for v, _ in vis], any(x for _, x in vis)
    mps = [m for m in (p.a.mp_C, p.b.mp_C) if m is not None]
    fp = max(mps) if mps else None
    return fp, [fp is None or t > fp for t in temps], [None] * len(temps), False


def _flash_points(p: ex.Pair, strengths) -> tuple[float | None, ...]:
    """Closed-cup flash point of each strength [C] (ethanol-water only: the model needs its published NRTL)."""
    if not p.ethanol_water:
        return (None,) * len(strengths)
    out = (ex.flash_point_C(float(p.mass_fraction(s / 100.0))) for s in strengths)
    return tuple(None if f is None else round(f, 1) for f in out)


def _grid(cat: Catalog, p: ex.Pair, target: Target, rejects, req: ExtractionRequest) -> tuple[dict, list, bool]:
    fusions = [ex.fusion_of(target.solute) if target.solute is not None else None] + [ex.fusion_of(s) for s in rejects]
    keys = ("ra", "red", "target_g_L", "selectivity", "liquid", "viscosity_mPa_s")
    g = {k: [] for k in keys}
    g["rejects_g_L"] = {s.name: [] for s in rejects}
    fps, extrapolated = [], False
    at = {t: ex.pair_at(p, t) for t in req.temps_C}
    for s in req.strengths:
        fp, liquid, vis, extra = _liquid_and_viscosity(cat, p, s, req.temps_C)
        fps.append(fp)
        extrapolated |= extra
        pts = [_point(p, target, rejects, fusions, s / 100.0, t, at[t]) for t in req.temps_C]
        for k in ("ra", "red", "target_g_L", "selectivity"):
            g[k].append([pt[k] for pt in pts])
        for n, rec in enumerate(rejects):
            g["rejects_g_L"][rec.name].append([pt["rejects_g_L"][n] for pt in pts])
        g["liquid"].append(liquid)
        g["viscosity_mPa_s"].append(vis)
    return g, fps, extrapolated


def _best(req: ExtractionRequest, g: dict) -> tuple[dict | None, str]:
    """The liquid, filterable point of highest selectivity (else the smallest Ra), and the window of points
    within 80 % of its score, in words."""
    use_sel = any(v is not None for row in g["selectivity"] for v in row)
    cells = []
    for i, s in enumerate(req.strengths):
        for j, t in enumerate(req.temps_C):
            vis = g["viscosity_mPa_s"][i][j]
            if not g["liquid"][i][j] or (vis is not None and vis > FILTER_VISC_MAX):
                continue
            score = g["selectivity"][i][j] if use_sel else -g["ra"][i][j]
            if score is not None:
                cells.append((score, s, t, i, j))
    if not cells:
        return None, "no point of the grid is liquid and easy to filter"
    score, s, t, i, j = max(cells)
    near = [c for c in cells if (c[0] >= 0.8 * score if use_sel else c[0] >= score - 0.5)]
    s_lo, s_hi = min(c[1] for c in near), max(c[1] for c in near)
    t_lo, t_hi = min(c[2] for c in near), max(c[2] for c in near)
    best = {"strength_pct_v": s, "temp_C": t, "ra": g["ra"][i][j], "red": g["red"][i][j],
            "target_g_L": g["target_g_L"][i][j], "selectivity": g["selectivity"][i][j],
            "viscosity_mPa_s": g["viscosity_mPa_s"][i][j], "by": "selectivity" if use_sel else "ra",
            "window": {"strength_pct_v": [s_lo, s_hi], "temp_C": [t_lo, t_hi]},
            "filter_viscosity_max_mPa_s": FILTER_VISC_MAX}
    how = (f"selectivity {g['selectivity'][i][j]:.3g} (target over the most soluble reject, g/L)" if use_sel
           else f"Ra {g['ra'][i][j]:.2f} MPa^0.5")
    words = (f"best at {s:g} % v/v {req.liquids[0]} and {t:g} C: {how}; within "
             f"{'80 % of that selectivity' if use_sel else '0.5 MPa^0.5 of that Ra'}: {s_lo:g}-{s_hi:g} % v/v "
             f"at {t_lo:g} to {t_hi:g} C (points that are liquid and at most {FILTER_VISC_MAX:g} mPa s, "
             f"easy to filter)")
    return best, words


# ----------------------------------------------------------------------------- stripping and law


def _bubble(p: ex.Pair, x1: float, pressure_kPa: float) -> float | None:
    try:
        return round(ex.bubble_point_C(p, x1, pressure_kPa), 2)
    except OutOfRangeError:  # boils below -80 C or above 150 C at this pressure
        return None


def _strip(p: ex.Pair, req: ExtractionRequest) -> dict:
    """When each strength starts to boil under the vacuum, when the last of the solvent goes, the azeotrope."""
    model, source = ex.activity_model(p)
    starts = [_bubble(p, float(p.mole_fraction(s / 100.0)), req.vacuum_kPa) for s in req.strengths]
    end = max((t for t in (_bubble(p, 0.0, req.vacuum_kPa), _bubble(p, 1.0, req.vacuum_kPa)) if t is not None),
              default=None)
    az = ex.azeotrope(p, req.vacuum_kPa)
    note = (f"the more volatile liquid leaves first; the last of the solvent boils off at "
            f"{'n/a' if end is None else format(end, '.1f')} C at {req.vacuum_kPa:g} kPa; the extract is "
            f"finished at {req.finish_C:g} C")
    if any(t is None for t in starts):
        note += "; some strengths do not boil between -80 and 150 C at this pressure (n/a)"
    if az is not None:
        note += (f"; the azeotrope ({100 * az['mass_fraction']:.1f} % w/w {req.liquids[0]}, "
                 f"{az['boiling_point_C']:.1f} C) cannot be passed by distillation")
    return {"vacuum_kPa": req.vacuum_kPa, "start_C": starts, "end_C": end, "finish_C": req.finish_C, "azeotrope": az,
            "activity_model": model, "sources": [source, "extract_poling_antoine"], "note": note}


def _residue(p: ex.Pair, rec, target: Target, strip: dict) -> float | None:
    """Equilibrium bound of ``rec`` left in the extract (the target) at the end of stripping [mg/kg]."""
    sol = target.solute
    vm = target.vm_cm3_mol or (sol.vm_cm3_mol if sol is not None else None)
    mw = sol.mw_g_mol if sol is not None else None
    if vm is None or mw is None:
        return None
    return 1e6 * ex.residue_bound(rec, target.hsp, vm, mw, strip["finish_C"], strip["vacuum_kPa"])


def _legal(cat: Catalog, p: ex.Pair, req: ExtractionRequest, target: Target, strip: dict) -> tuple[list[dict], list]:
    """Each liquid's status for the purpose, its residue rules, and the equilibrium residue against them."""
    out, rules = [], []
    for rec in (p.a, p.b):
        st = food_status(cat, rec, use="extraction", jurisdiction=req.jurisdiction, purpose=req.purpose)
        rows = [l for l in limits(cat, cas=rec.cas, jurisdiction=req.jurisdiction, use="extraction",
                                  purpose=req.purpose) if l.cas == rec.cas] if rec.cas else []
        rules += list(st.rules) + rows
        left = _residue(p, rec, target, strip)
        residue = [{"rule": l.rule, "limit": l.limit, "unit": l.unit, "applies_to": l.applies_to,
                    "status": l.status,
                    "over": (None if left is None or l.limit is None or l.unit not in ("mg/kg", "ppm")
                             else left > l.limit)} for l in rows]
        out.append({"name": rec.name, "cas": rec.cas, "status": st.status, "status_text": st.status_text,
                    "allowed": st.allowed, "message": st.message, "residue_limits": residue,
                    "residue_bound_mg_kg": left})
    return out, rules


def _cautions(cat: Catalog, p: ex.Pair) -> tuple[str, ...]:
    seen = dict.fromkeys(c for rec in (p.a, p.b) for c in solvent_cautions(rec, use="extraction", cat=cat)
                         if c != DEFER)
    return tuple(seen) + (DEFER,)


def _rejects(cat: Catalog, names) -> list:
    out = []
    for n in names:
        try:
            out.append(cat.solute(n))
        except SolvselError as exc:
            exc.param = exc.param or "rejects"
            raise
    return out


def _notes(target: Target, rejects, fusions_basis: list[str], extrapolated: bool, p: ex.Pair) -> list[str]:
    notes = ["solubilities are estimates (ideal solubility x HSP activity coefficient); confirm at the bench"]
    walden = [n for n, b in fusions_basis if b != "table"]
    if walden:
        notes.append("no tabulated enthalpy of fusion for " + ", ".join(walden)
                     + ": estimated by Walden's rule (56.5 J/(mol K) x melting point; recalled, not checked)")
    missing = [s.name for s in rejects if ex.fusion_of(s) is None or s.mw_g_mol is None or s.vm_cm3_mol is None]
    if missing:
        notes.append("no solubility estimate for " + ", ".join(missing) + " (melting point, molar mass or "
                     "molar volume missing in the solutes table)")
    if target.r0 is None:
        notes.append("the target has no R0: RED not given")
    if extrapolated:
        notes.append("viscosities below 0 C are extrapolated from the published 0 and 10 C values "
                     "(ln viscosity against 1/T)")
    if not p.ethanol_water:
        notes.append("no published freezing points for this pair: counted liquid only above the higher melting "
                     "point of the two (conservative); no viscosity data")
    notes.append("strengths are % v/v of the liquids before mixing (the contraction on mixing is ignored)")
    return notes


def extraction(request: ExtractionRequest | None = None, *, catalog: Catalog | None = None,
               **fields: Any) -> ExtractionResult:
    """An extraction plan over strengths of a solvent pair and temperatures (see the module docstring)."""
    req = build_request(ExtractionRequest, request, fields)
    cat = catalog_or_default(catalog)
    target = target_of(cat, target=req.target, solute=req.solute, hsp=req.hsp, smiles=req.smiles)
    p = ex.pair_of(solvent_named(cat, req.liquids[0], "liquids"), solvent_named(cat, req.liquids[1], "liquids"))
    rejects = _rejects(cat, req.rejects)
    g, fps, extrapolated = _grid(cat, p, target, rejects, req)
    best, words = _best(req, g)
    strip = _strip(p, req)
    legal, rules = _legal(cat, p, req, target, strip)
    basis = [(s.name, ex.fusion_of(s)[2]) for s in ([target.solute] if target.solute is not None else []) + rejects
             if ex.fusion_of(s) is not None]
    sources = {**ex.table_sources(cat), "hsp": [target.solute.hsp_source] if target.solute is not None else [],
               "flash_point": [ex.FLASH_MODEL["source"]] if p.ethanol_water else []}
    return ExtractionResult(
        target, (p.a.name, p.b.name), req.strengths, req.temps_C, tuple(s.name for s in rejects), g,
        tuple(fps), _flash_points(p, req.strengths), ex.HSP_BASIS, best, words, strip, tuple(legal),
        tuple(_notes(target, rejects, basis, extrapolated, p)), _cautions(cat, p), sources,
        audit_block(rules, cat.tables_dir))
