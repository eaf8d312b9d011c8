"""Which strength and how cold: the physics of an extraction plan over a grid of a solvent pair.

Over a grid of compositions of two liquids (ethanol in water by default, % v/v
of the first liquid, mixed before contraction) and temperatures, this module
gives for each point

- the HSP of the mixture: the volume-fraction average of the two liquids'
  HSP at that temperature (Hansen and Beerbower 1971; the tables hold no
  published HSP of ethanol-water mixtures, and :data:`HSP_BASIS` says so);
- the distance Ra (and RED) of a target, and the solubility estimate of the
  target and of each solute to reject (ideal solubility x the HSP activity
  coefficient, :func:`solvsel.science.hansen.solid_solubility`);
- whether the mixture is liquid: for ethanol-water the published freezing
  points of the mixtures (tables/ethanol_water.csv), not water's 0 C; for
  other pairs the higher melting point of the two (conservative);
- its viscosity for filtering (ethanol-water: the published table, in ln
  viscosity against 1/T; below 0 C extrapolated and marked so);

and, to get the solvent out, the bubble temperature of a strength under a
vacuum by modified Raoult's law (Antoine constants of Poling et al., bundled in
the ``chemicals`` library; activity coefficients from the published NRTL
parameters of ethanol-water, otherwise Flory-Huggins from HSP) and the
azeotrope where there is one.

Nothing here knows food law: the job (:mod:`solvsel.jobs.extraction`) adds the
legal status and cautions.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..data.catalog import number_or_none as _num
from ..errors import MissingDataError, OutOfRangeError
from . import hansen
from .miscibility import _Ref

__all__ = [
    "ETHANOL_CAS", "WATER_CAS", "HSP_BASIS", "NRTL_ETHANOL_WATER", "WALDEN_DSFUS_J_MOL_K",
    "Pair", "pair_of", "pair_at", "mixture_at", "liquid_hsp_at", "nrtl_ln_gamma", "antoine", "psat_kPa",
    "freezing_point_C", "viscosity_mPa_s", "table_sources", "fusion_of", "solubility_g_L", "activity_model",
    "bubble_pressure_kPa", "bubble_point_C", "azeotrope", "residue_bound", "FLASH_MODEL", "flash_point_C",
]

ETHANOL_CAS, WATER_CAS = "64-17-5", "7732-18-5"

#: How the HSP of a strength are obtained (no published HSP of the mixtures are in the tables).
HSP_BASIS = ("volume mixing of the two liquids' HSP at the temperature (Hansen 2007; Hansen and Beerbower 1971); "
             "no published HSP of these mixtures are in the tables")

#: NRTL parameters of ethanol (1) - water (2), tau_ij = b_ij / T [K] (source ``extract_chemsep_nrtl``).
NRTL_ETHANOL_WATER = {"b12_K": -29.166654483541816, "b21_K": 624.8676222389441, "alpha": 0.2937,
                      "source": "extract_chemsep_nrtl"}

#: How the flash point of an ethanol-water strength is obtained (:func:`flash_point_C`) and its source id.
FLASH_MODEL = {"model": "Le Chatelier's rule with NRTL activity coefficients, water inert (Liaw et al. 2002)",
               "source": "ethwat_liaw_flash"}

#: Walden's rule: entropy of fusion of a rigid organic molecule [J/(mol K)] (source ``memory_walden_rule``).
WALDEN_DSFUS_J_MOL_K = 56.5

_R = 8.314462618  # J/(mol K)


# ----------------------------------------------------------------------------- the pair


@dataclass(frozen=True)
class Pair:
    """Two liquids of an extraction solvent: ``a`` (the one whose strength is given) and ``b``."""

    a: object
    b: object

    @property
    def ethanol_water(self) -> bool:
        return (self.a.cas, self.b.cas) == (ETHANOL_CAS, WATER_CAS)

    def mass_fraction(self, phi_a):
        """Mass fraction of ``a`` from its volume fraction (volumes before mixing)."""
        ra, rb = float(self.a.density_g_cm3), float(self.b.density_g_cm3)
        phi_a = np.asarray(phi_a, dtype=float)
        return phi_a * ra / (phi_a * ra + (1.0 - phi_a) * rb)

    def mole_fraction(self, phi_a):
        """Mole fraction of ``a`` from its volume fraction (molar volumes at 25 C)."""
        va, vb = float(self.a.vm_cm3_mol), float(self.b.vm_cm3_mol)
        phi_a = np.asarray(phi_a, dtype=float)
        return (phi_a / va) / (phi_a / va + (1.0 - phi_a) / vb)


def pair_of(a, b) -> Pair:
    """A :class:`Pair` of two liquid records, refused where a value the plan needs is missing."""
    for rec in (a, b):
        for key in ("density_g_cm3", "vm_cm3_mol", "mw_g_mol"):
            if _num(getattr(rec, key, None)) is None:
                raise MissingDataError(f"{rec.name}: the liquids table has no {key}, which the plan needs",
                                       param="liquids", value=rec.name)
    return Pair(a, b)


def liquid_hsp_at(rec, temp_C: float) -> tuple[np.ndarray, float]:
    """HSP [MPa^0.5] and molar volume [cm^3/mol] of one liquid at ``temp_C`` inside a mixture (no check of
    its own melting point: the mixture's liquid range is judged separately)."""
    h = np.array([rec.dD, rec.dP, rec.dH], dtype=float)
    vm = float(rec.vm_cm3_mol)
    if rec.alpha_1_K is None or abs(temp_C - 25.0) < 1e-9:
        return h, vm
    h2, vm2 = hansen.shift_temperature(h, rec.alpha_1_K, temp_C, 25.0, vm, None, None)
    return np.asarray(h2, dtype=float), float(vm2)


def pair_at(p: Pair, temp_C: float) -> tuple:
    """HSP and molar volumes of both liquids at ``temp_C``: ``((ha, va), (hb, vb))`` (for :func:`mixture_at`)."""
    return liquid_hsp_at(p.a, temp_C), liquid_hsp_at(p.b, temp_C)


def mixture_at(p: Pair, phi_a: float, temp_C: float, liquids=None) -> tuple[np.ndarray, float, float]:
    """HSP [MPa^0.5], mole-average molar volume [cm^3/mol] and molar mass [g/mol] of the mixture at volume
    fraction ``phi_a`` of ``a``; ``liquids`` the two liquids at ``temp_C`` from :func:`pair_at` (computed here
    when not given)."""
    (ha, va), (hb, vb) = liquids if liquids is not None else pair_at(p, temp_C)
    hsp = phi_a * ha + (1.0 - phi_a) * hb
    x = float(p.mole_fraction(phi_a))
    return hsp, x * va + (1 - x) * vb, x * float(p.a.mw_g_mol) + (1 - x) * float(p.b.mw_g_mol)


# ----------------------------------------------------------------------------- liquid range and viscosity


@lru_cache(maxsize=8)
def _ew_rows(cat_id: int, cat_ref) -> dict:
    df = cat_ref().table("ethanol_water")
    fp = df[df["property"] == "freezing_point"].sort_values("ethanol_pct")
    vis = df[df["property"] == "viscosity"]
    temps = sorted(float(t) for t in vis["temp_C"].unique())
    pcts = sorted(float(w) for w in vis["ethanol_pct"].unique())
    grid = np.full((len(temps), len(pcts)), np.nan)
    for r in vis.itertuples():
        grid[temps.index(float(r.temp_C)), pcts.index(float(r.ethanol_pct))] = float(r.value)
    return {"fp_pct": fp["ethanol_pct"].to_numpy(float), "fp_C": fp["value"].to_numpy(float),
            "fp_source": tuple(sorted(set(";".join(fp["source"]).split(";")))),
            "vis_T": np.array(temps), "vis_w": np.array(pcts), "vis": grid,
            "vis_source": tuple(sorted(set(";".join(vis["source"]).split(";"))))}


def _ew(cat) -> dict:
    return _ew_rows(id(cat), _Ref(cat))


def freezing_point_C(cat, vol_pct) -> np.ndarray:
    """Freezing point [C] of ethanol-water at ``vol_pct`` % v/v ethanol, by linear interpolation in the
    published table (tables/ethanol_water.csv).

    >>> from solvsel.data.catalog import load_catalog
    >>> float(freezing_point_C(load_catalog(), 70.0))
    -48.0
    """
    d = _ew(cat)
    return np.interp(np.asarray(vol_pct, dtype=float), d["fp_pct"], d["fp_C"])


def viscosity_mPa_s(cat, wt_pct: float, temp_C: float) -> tuple[float, bool]:
    """Viscosity [mPa s] of ethanol-water at ``wt_pct`` % w/w and ``temp_C``, and whether it is extrapolated.

    Linear in composition between the tabulated mass percents, and in ln viscosity against 1/T between
    the tabulated temperatures; outside them (below 0 C) extrapolated from the two nearest temperatures.
    """
    d = _ew(cat)
    T = d["vis_T"]
    col = np.array([np.interp(wt_pct, d["vis_w"][~np.isnan(row)], row[~np.isnan(row)]) for row in d["vis"]])
    inv = 1.0 / (T + 273.15)
    x = 1.0 / (temp_C + 273.15)
    i = int(np.clip(np.searchsorted(-inv, -x) - 1, 0, len(T) - 2))  # inv falls with T
    lo, hi = np.log(col[i]), np.log(col[i + 1])
    ln = lo + (hi - lo) * (x - inv[i]) / (inv[i + 1] - inv[i])
    return float(math.exp(ln)), bool(temp_C < T[0] - 1e-9 or temp_C > T[-1] + 1e-9)


def table_sources(cat) -> dict:
    """Source ids of the freezing points and of the viscosities of ethanol-water."""
    d = _ew(cat)
    return {"freezing_point": list(d["fp_source"]), "viscosity": list(d["vis_source"])}


# ----------------------------------------------------------------------------- solubility of a solid


def fusion_of(solute) -> tuple[float, float, str] | None:
    """(melting point [C], enthalpy of fusion [kJ/mol], basis) of a solute record, or None without a melting
    point.  Without a tabulated enthalpy of fusion, Walden's rule gives one (56.5 J/(mol K) x Tm), marked so."""
    mp = _num(getattr(solute, "mp_C", None))
    if mp is None:
        return None
    dh = _num(getattr(solute, "dHfus_kJ_mol", None))
    if dh is not None:
        return mp, dh, "table"
    return mp, WALDEN_DSFUS_J_MOL_K * (mp + 273.15) / 1000.0, "Walden's rule (from memory)"


def _first_root(f, lo: float, hi: float, rounds: int = 3, n: int = 241) -> float:
    """Where the vectorised ``f`` first turns from negative to zero or positive on ``lo..hi``: a scan of
    ``n`` points, then ``rounds - 1`` finer scans of the bracketing interval (all vectorised)."""
    for _ in range(rounds):
        grid = np.linspace(lo, hi, n)
        idx = np.nonzero(f(grid) >= 0)[0]
        j = int(idx[0]) if idx.size else n - 1
        if j == 0:
            return float(grid[0])
        lo, hi = float(grid[j - 1]), float(grid[j])
    return 0.5 * (lo + hi)


def solubility_g_L(solute, hsp, vm_mix: float, mw_mix: float, temp_C: float, fusion=None) -> float | None:
    """Estimated solubility [g/L] of a solid solute (record with HSP, molar volume and mass) in a mixture of
    HSP ``hsp``, molar volume ``vm_mix`` and molar mass ``mw_mix`` at ``temp_C``; None where the data do not
    allow an estimate (no melting point, molar volume or molar mass; at or above the melting point).

    The model of :func:`solvsel.science.hansen.solid_solubility` (ideal solubility x the HSP activity
    coefficient with the combinatorial term, lowest root), solved by vectorised scans instead of a scalar
    bisection (the grid of a plan calls it hundreds of times).
    """
    fusion = fusion if fusion is not None else fusion_of(solute)
    vm, mw = _num(getattr(solute, "vm_cm3_mol", None)), _num(getattr(solute, "mw_g_mol", None))
    if fusion is None or vm is None or mw is None or temp_C >= fusion[0]:
        return None
    sh = np.array([solute.dD, solute.dP, solute.dH], dtype=float)
    lnxid = math.log(hansen.ideal_solubility(temp_C, fusion[0], fusion[1]))

    def f(lnx):
        return lnx + hansen.ln_gamma_hansen(np.exp(lnx), sh, vm, hsp, vm_mix, temp_C) - lnxid

    x = math.exp(_first_root(f, -60.0, 0.0))
    return 1000.0 * x * mw / (x * vm + (1 - x) * vm_mix)


# ----------------------------------------------------------------------------- vapour-liquid equilibrium


def nrtl_ln_gamma(x1, T_K, b12: float, b21: float, alpha: float):
    """ln gamma of both liquids of a binary by NRTL (Renon and Prausnitz 1968), tau_ij = b_ij / T.

    Pure ethanol has no excess: ln gamma 0.

    >>> p = NRTL_ETHANOL_WATER
    >>> g1, g2 = nrtl_ln_gamma(1.0, 351.0, p["b12_K"], p["b21_K"], p["alpha"])
    >>> round(float(g1), 12)
    0.0
    """
    x1 = np.asarray(x1, dtype=float)
    x2 = 1.0 - x1
    t12, t21 = b12 / T_K, b21 / T_K
    g12, g21 = np.exp(-alpha * t12), np.exp(-alpha * t21)
    ln1 = x2 ** 2 * (t21 * (g21 / (x1 + x2 * g21)) ** 2 + t12 * g12 / (x2 + x1 * g12) ** 2)
    ln2 = x1 ** 2 * (t12 * (g12 / (x2 + x1 * g12)) ** 2 + t21 * g21 / (x1 + x2 * g21) ** 2)
    return ln1, ln2


def nrtl_ln_gamma_ethanol_water(x1, T_K):
    """NRTL ln gammas of ethanol (1) and water (2) with the published parameters."""
    p = NRTL_ETHANOL_WATER
    return nrtl_ln_gamma(x1, T_K, p["b12_K"], p["b21_K"], p["alpha"])


@lru_cache(maxsize=256)
def antoine(cas: str) -> tuple[float, float, float]:
    """Antoine constants ``(A, B, C)`` of log10 P[Pa] = A - B/(T[K] + C) from Poling et al. (2001), as bundled
    in the ``chemicals`` library."""
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as table

    if cas not in table.index:
        raise MissingDataError(f"no Antoine constants for CAS {cas} in the published set used", param="liquids",
                               value=cas)
    row = table.loc[cas]
    return float(row["A"]), float(row["B"]), float(row["C"])


def psat_kPa(cas: str, T_K: float) -> float:
    """Vapour pressure [kPa] from the Antoine constants of :func:`antoine`."""
    a, b, c = antoine(cas)
    return 10.0 ** (a - b / (T_K + c)) / 1000.0


def _ln_gammas(p: Pair, x1: float, T_K: float) -> tuple[float, float]:
    if p.ethanol_water:
        g1, g2 = nrtl_ln_gamma_ethanol_water(x1, T_K)
        return float(g1), float(g2)
    # Flory-Huggins from HSP (the project's model for pairs without published parameters), each liquid
    # taken as the "solute" in the other
    (ha, va), (hb, vb) = pair_at(p, T_K - 273.15)
    x1 = min(max(x1, 1e-12), 1 - 1e-12)
    ln1 = hansen.ln_gamma_hansen(x1, ha, va, hb, vb, T_K - 273.15)
    ln2 = hansen.ln_gamma_hansen(1.0 - x1, hb, vb, ha, va, T_K - 273.15)
    return float(ln1), float(ln2)


def activity_model(p: Pair) -> tuple[str, str]:
    """(model, source id) of the activity coefficients used for the pair's vapour-liquid equilibrium."""
    if p.ethanol_water:
        return "NRTL with published ethanol-water parameters", NRTL_ETHANOL_WATER["source"]
    return "Flory-Huggins from HSP (no published parameters for this pair in the tables)", "hansen2007"


def bubble_pressure_kPa(p: Pair, x1: float, T_K: float) -> tuple[float, float]:
    """Bubble pressure [kPa] and vapour mole fraction of ``a`` of liquid of mole fraction ``x1`` at ``T_K``."""
    g1, g2 = _ln_gammas(p, x1, T_K)
    p1 = x1 * math.exp(g1) * psat_kPa(p.a.cas, T_K)
    p2 = (1 - x1) * math.exp(g2) * psat_kPa(p.b.cas, T_K)
    return p1 + p2, p1 / (p1 + p2)


def bubble_point_C(p: Pair, x1: float, pressure_kPa: float) -> float:
    """Temperature [C] at which liquid of mole fraction ``x1`` of ``a`` starts to boil at ``pressure_kPa``."""
    from scipy.optimize import brentq

    lo, hi = 193.15, 423.15  # -80 to 150 C, where the Antoine sets and the HSP temperature rules are used
    f = lambda T: bubble_pressure_kPa(p, x1, T)[0] - pressure_kPa  # noqa: E731
    if f(lo) > 0 or f(hi) < 0:
        raise OutOfRangeError(f"{p.a.name} and {p.b.name} do not boil between -80 and 150 C at {pressure_kPa:g} kPa",
                              param="vacuum_kPa", value=pressure_kPa)
    return float(brentq(f, lo, hi, xtol=1e-6)) - 273.15


def azeotrope(p: Pair, pressure_kPa: float = 101.325) -> dict | None:
    """The azeotrope at ``pressure_kPa``: mole and mass fraction of ``a`` and its boiling point [C], or None.

    Found where the vapour and the liquid have the same composition (y1 - x1 changes sign) on the
    bubble-point curve.
    """
    from scipy.optimize import brentq

    def excess(x1: float) -> float:
        T = bubble_point_C(p, x1, pressure_kPa) + 273.15
        return bubble_pressure_kPa(p, x1, T)[1] - x1

    def excess_or_nan(x1: float) -> float:
        try:
            return excess(x1)
        except OutOfRangeError:  # does not boil between -80 and 150 C at this pressure
            return math.nan

    xs = np.linspace(0.02, 0.995, 20)
    ys = [excess_or_nan(x) for x in xs]
    for i in range(len(xs) - 1):
        if ys[i] == 0 or ys[i] * ys[i + 1] < 0:  # False where either is NaN
            x = float(brentq(excess, xs[i], xs[i + 1], xtol=1e-8))
            w = x * float(p.a.mw_g_mol) / (x * float(p.a.mw_g_mol) + (1 - x) * float(p.b.mw_g_mol))
            return {"mole_fraction": x, "mass_fraction": w, "boiling_point_C": bubble_point_C(p, x, pressure_kPa),
                    "pressure_kPa": pressure_kPa}
    return None


# ----------------------------------------------------------------------------- flash point of a strength


@lru_cache(maxsize=1)
def _ethanol_water_constants() -> tuple[float, float, float]:
    """Molar masses of ethanol and water [g/mol] and ethanol's closed-cup flash point [K] (``chemicals``
    library: the IEC 60079-20-1 value, the one the liquids table uses)."""
    from chemicals.identifiers import search_chemical
    from chemicals.safety import T_flash

    return search_chemical(ETHANOL_CAS).MW, search_chemical(WATER_CAS).MW, float(T_flash(ETHANOL_CAS))


def _ethanol_water_bubble_K(x1: float) -> float:
    """Bubble point [K] at 101.325 kPa of ethanol-water of ethanol mole fraction ``x1`` (NRTL, Antoine)."""
    from scipy.optimize import brentq

    def excess(T: float) -> float:
        g1, g2 = nrtl_ln_gamma_ethanol_water(x1, T)
        return (x1 * math.exp(float(g1)) * psat_kPa(ETHANOL_CAS, T)
                + (1.0 - x1) * math.exp(float(g2)) * psat_kPa(WATER_CAS, T) - 101.325)

    return float(brentq(excess, 273.15, 423.15, xtol=1e-6))


def flash_point_C(ethanol_wt_fraction: float) -> float | None:
    r"""Closed-cup flash point [C] of ethanol-water of ethanol mass fraction ``ethanol_wt_fraction``.

    The model of Liaw, Lee, Tang, Hsu and Liu (J. Loss Prev. Process Ind. 15 (2002) 429-438) for a binary
    with one flammable component: Le Chatelier's rule over the vapour in equilibrium with the liquid, water
    adding nothing, so the mixture flashes at the temperature :math:`T` where
    :math:`x_e \gamma_e(T) P^{sat}_e(T) / P^{sat}_e(T_{fp,e}) = 1`, with the NRTL activity coefficient of
    ethanol (:func:`nrtl_ln_gamma_ethanol_water`), its Antoine vapour pressure (:func:`psat_kPa`) and its
    measured flash point :math:`T_{fp,e}` = 12 C (``chemicals`` library).  The model assumes the lower
    flammable limit of ethanol does not change with the water vapour beside it; it runs a few kelvin below
    measured flash points of strong mixtures and further below them under about 30 % v/v.  None where the
    mixture boils at 101.325 kPa before it flashes (no ethanol).

    >>> flash_point_C(1.0)
    12.0
    >>> round(flash_point_C(0.4243), 1)   # 50 % v/v; measured about 24 C
    22.8
    """
    from scipy.optimize import brentq

    w = float(ethanol_wt_fraction)
    if not 0.0 <= w <= 1.0:
        raise OutOfRangeError(f"an ethanol mass fraction is between 0 and 1, not {w:g}", param="ethanol_wt_fraction",
                              value=w, expected="0 to 1")
    mw_e, mw_w, t_fp = _ethanol_water_constants()
    if w == 0.0:
        return None
    if w == 1.0:
        return t_fp - 273.15
    x1 = (w / mw_e) / (w / mw_e + (1.0 - w) / mw_w)
    p_fp = psat_kPa(ETHANOL_CAS, t_fp)
    f = lambda T: x1 * math.exp(float(nrtl_ln_gamma_ethanol_water(x1, T)[0])) * psat_kPa(ETHANOL_CAS, T) / p_fp - 1.0  # noqa: E731
    t_boil = _ethanol_water_bubble_K(x1)
    if f(t_boil) < 0.0:
        return None
    return float(brentq(f, t_fp - 1.0, t_boil, xtol=1e-6)) - 273.15  # below T_fp,e: x gamma <= 1


def residue_bound(rec, extract_hsp, extract_vm: float, extract_mw: float, temp_C: float,
                  pressure_kPa: float) -> float:
    r"""Largest mass fraction of liquid ``rec`` left in an extract at equilibrium at the end of stripping.

    The liquid's partial pressure over the extract cannot exceed the pressure of the evaporator, so its
    mole fraction is at most :math:`x = P / (\gamma^\infty P^{sat}(T))`, with :math:`\gamma^\infty` of the
    liquid in the extract by Flory-Huggins from HSP (:math:`\ln\gamma^\infty = \ln(V_1/V_2) + 1 - V_1/V_2
    + \chi`, :math:`\chi = V_1 R_a^2 / 4RT`); as a mass fraction with the extract's molar mass.  An
    equilibrium bound: drying time, the matrix and the residue the rules count govern what is really left.
    """
    h, v1 = liquid_hsp_at(rec, temp_C)
    ln_g = float(hansen.ln_gamma_hansen(0.0, h, v1, np.asarray(extract_hsp, dtype=float), extract_vm, temp_C))
    x = min(1.0, pressure_kPa / (math.exp(ln_g) * psat_kPa(rec.cas, temp_C + 273.15)))
    m1 = x * float(rec.mw_g_mol)
    return m1 / (m1 + (1.0 - x) * float(extract_mw))
