r"""Solubility of a crystalline solid in liquids: which liquid dissolves more of it.

The estimate is the solid-liquid equilibrium of a crystalline solute,

.. math::
    \ln x_2 = \underbrace{-\frac{\Delta H_\mathrm{fus}}{R}\Big(\frac1T - \frac1{T_m}\Big)}_{\ln x^\mathrm{id}}
              - \ln\gamma_2(x_2)

with the ideal term from fusion data (:func:`fusion_data`: the solutes table, then the measured values of
the reference library ``chemicals``, else the enthalpy of fusion from Walden's rule, stated as such) and the
activity coefficient from Hansen parameters (:func:`ln_gamma`):

- the Flory-Huggins combinatorial term for unequal molar volumes [2]_;
- the regular-solution residual term in Hansen's form [1]_,
  :math:`V_2\phi_1^2 (\Delta\delta_D^2 + \tfrac14\Delta\delta_P^2 + \tfrac14 H)/RT`, where ``H`` is
  the lumped :math:`\Delta\delta_H^2` (default) or, as an option, the hydrogen-bond term split into
  donor and acceptor parts (:func:`hbond_difference`).

The ideal term is the same for every liquid, so the order of the liquids needs no fusion data; only the
amount does.

Measured against published solubilities (``bench/bench_published.py``: Vermeire, Chung and Green,
J. Am. Chem. Soc. 144 (2022) 10785, 25 C, solute HSP from the structure estimate; settings chosen on the
``dev`` solutes): the median Spearman correlation of this estimate with the measured order of the liquids
is 0.44 on ``dev`` (-Ra: 0.39; a solute-blind ranking from the other solutes' data: 0.58), and its median
RMS error is 0.25 in log10 x with a measured enthalpy of fusion, 0.66 with Walden's rule.  The split
hydrogen-bond term ranks worse (0.23) and is not the default.

:func:`log10_solubility_unifac` solves the same equation with a UNIFAC activity coefficient
(:mod:`solvsel.science.unifac`).  On the same data (``dev``), modified UNIFAC (Dortmund) has groups for 19
of the 31 solutes and every interaction parameter for 178 of their 534 solute-liquid pairs; on the 12
solutes with at least 5 covered liquids its median Spearman is 0.47 (the Hansen estimate on the same
liquids 0.42) and its median RMS error 0.37 in log10 x (Hansen 0.39).  Modified UNIFAC 2.0 (the table
completed by machine learning) covers 351 pairs: 0.55 on its 19 solutes (Hansen 0.44), and 0.49 over all
31 with the Hansen estimate for the pairs it does not cover.  The goal of 0.70 is met by none.

References
----------
.. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*, 2nd ed., CRC Press, 2007, ch. 2.
.. [2] Flory, P. J. *J. Chem. Phys.* 10 (1942) 51-61. doi:10.1063/1.1723621
.. [3] Walden, P. *Z. Elektrochem.* 14 (1908) 713 (entropy of fusion of organic crystals about
   56.5 J/(mol K)); as used by Yalkowsky, S. H. *Ind. Eng. Chem. Fundam.* 18 (1979) 108 (value and
   citations recalled, not checked: source id ``solubility_walden_memory``).
.. [4] Prausnitz, J. M.; Lichtenthaler, R. N.; de Azevedo, E. G. *Molecular Thermodynamics of
   Fluid-Phase Equilibria*, 3rd ed., Prentice Hall, 1999, ch. 11.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..errors import InputError, OutOfRangeError
from .hansen import R_J_MOL_K
from .unifac import cas_of_smiles, solute_in_liquids

__all__ = ["WALDEN_J_MOL_K", "Fusion", "fusion_data", "walden_dHfus", "ideal_log10", "hbond_difference", "ln_gamma",
           "log10_solubility", "log10_solubility_unifac"]

#: Walden's rule: entropy of fusion of rigid organic crystals [J/(mol K)] (Walden 1908, Yalkowsky 1979;
#: recalled, source id ``solubility_walden_memory``).
WALDEN_J_MOL_K = 56.5

#: Library melting-point methods that are measurements (never the Joback estimate).
_MEASURED_TM = ("OPEN_NTBKM", "CRC_ORG", "COMMON_CHEMISTRY", "WEBBOOK", "WIKIDATA")


@dataclass(frozen=True)
class Fusion:
    """Melting point and enthalpy of fusion of a solute, with where each came from.

    ``dHfus_source`` is "table", "measured" (the ``chemicals`` library's CRC value), "walden" (estimated
    from the melting point by Walden's rule) or "" (no melting point, so no estimate).
    """

    mp_C: float | None
    dHfus_kJ_mol: float | None
    mp_source: str
    dHfus_source: str

    @property
    def complete(self) -> bool:
        return self.mp_C is not None and self.dHfus_kJ_mol is not None

    def note(self) -> str:
        if not self.complete:
            return "no melting point known: the amount is not estimated, only the order of the liquids"
        if self.dHfus_source == "walden":
            return (f"enthalpy of fusion {self.dHfus_kJ_mol:.1f} kJ/mol estimated by Walden's rule "
                    f"({WALDEN_J_MOL_K:g} J/(mol K) x Tm), melting point {self.mp_C:g} C ({self.mp_source})")
        return (f"melting point {self.mp_C:g} C ({self.mp_source}), enthalpy of fusion "
                f"{self.dHfus_kJ_mol:.2f} kJ/mol ({self.dHfus_source})")


def walden_dHfus(mp_C: float) -> float:
    """Enthalpy of fusion [kJ/mol] by Walden's rule, 56.5 J/(mol K) times the melting point.

    >>> round(walden_dHfus(169.0), 1)   # a solute melting at 169 C
    25.0
    """
    return WALDEN_J_MOL_K * (mp_C + 273.15) / 1000.0


@lru_cache(maxsize=512)
def _library_fusion(cas: str) -> tuple[float | None, float | None, str]:
    """(Tm [C], dHfus [kJ/mol], Tm method) measured values of ``cas`` in ``chemicals``."""
    from chemicals.phase_change import Hfus, Hfus_methods, Tm, Tm_methods

    methods = Tm_methods(cas)
    tm_method = next((m for m in methods if m in _MEASURED_TM), None)
    tm = Tm(cas, method=tm_method) if tm_method else None
    hf = Hfus(cas, method="CRC") if "CRC" in Hfus_methods(cas) else None
    return (None if tm is None else tm - 273.15), (None if hf is None else hf / 1000.0), tm_method or ""


def fusion_data(smiles: str | None = None, *, cas: str | None = None, mp_C: float | None = None,
                dHfus_kJ_mol: float | None = None) -> Fusion:
    """Fusion data of a solute: given values (a table row) first, then ``chemicals``, then Walden's rule.

    Parameters
    ----------
    smiles : str, optional
        the structure, used to find the compound in ``chemicals`` when no CAS is given
    cas : str, optional
        CAS number
    mp_C, dHfus_kJ_mol : float, optional
        values of the solutes table [C], [kJ/mol]

    Examples
    --------
    Benzoic acid (``chemicals``: Tm 122.4 C, and 18.02 kJ/mol from the CRC Handbook):

    >>> f = fusion_data("OC(=O)c1ccccc1")
    >>> round(f.mp_C), f.dHfus_kJ_mol, f.dHfus_source
    (122, 18.02, 'measured')
    """
    mp_source = "table" if mp_C is not None else ""
    h_source = "table" if dHfus_kJ_mol is not None else ""
    if mp_C is None or dHfus_kJ_mol is None:
        cas = cas or (cas_of_smiles(smiles) if smiles else None)
        if cas:
            tm, hf, how = _library_fusion(cas)
            if mp_C is None and tm is not None:
                mp_C, mp_source = tm, f"chemicals {how}"
            if dHfus_kJ_mol is None and hf is not None:
                dHfus_kJ_mol, h_source = hf, "measured"
    if dHfus_kJ_mol is None and mp_C is not None:
        dHfus_kJ_mol, h_source = walden_dHfus(mp_C), "walden"
    return Fusion(mp_C, dHfus_kJ_mol, mp_source, h_source)


def ideal_log10(fusion: Fusion, temp_C: float) -> float:
    """log10 of the ideal mole-fraction solubility (Schroeder-van Laar, no heat-capacity term) [-]."""
    if not fusion.complete:
        raise InputError("no melting point known for this solute", param="solute")
    if temp_C >= fusion.mp_C:
        raise OutOfRangeError(f"{temp_C:g} C is at or above the solute's melting point ({fusion.mp_C:g} C)",
                              param="temp_C", value=temp_C)
    t, tm = temp_C + 273.15, fusion.mp_C + 273.15
    return -fusion.dHfus_kJ_mol * 1000.0 / R_J_MOL_K * (1.0 / t - 1.0 / tm) / math.log(10.0)


def _hb_split(dH, donors, acceptors, eps: float):
    """Donor (acid) and acceptor (base) parts of dH with ``dH^2 = 2 a b`` (Karger, Snyder and Eon's
    form), their ratio ``a/b = 2 (n_donor + eps)/(n_acceptor + eps)`` from the counts of donor and
    acceptor sites (our choice of split, measured in ``bench/bench_published.py``)."""
    r = (np.asarray(donors, dtype=float) + eps) / (np.asarray(acceptors, dtype=float) + eps)
    dH = np.asarray(dH, dtype=float)
    return dH * np.sqrt(r / 2.0), dH / np.sqrt(2.0 * r)


def hbond_difference(solute_dH: float, liquids_dH, solute_sites=None, liquids_sites=None, eps: float = 0.2):
    r"""The hydrogen-bond part of the Hansen distance, :math:`(\delta_{H1}-\delta_{H2})^2` lumped, or split.

    With the donor and acceptor site counts of both sides (``(n_donor, n_acceptor)``; RDKit's Lipinski
    counts of N-H/O-H and N/O), dH is split into an acid part ``a`` and a base part ``b`` with
    ``dH^2 = 2 a b`` and the term becomes ``2 (a1 - a2)(b1 - b2)`` (the acid-base form of the
    hydrogen-bond solubility parameter of Karger, Snyder and Eon, J. Chromatogr. 125 (1976) 71;
    citation from memory, not checked: source id ``solubility_karger_memory``): smaller than the lumped term, or negative (favourable), when
    a donor meets an acceptor.  Without counts the lumped term.

    >>> float(hbond_difference(10.0, [4.0])[0])   # lumped
    36.0
    >>> round(float(hbond_difference(10.0, [4.0], (1, 1), [(0, 1)])[0]), 2)   # a donor solute in an acceptor-only liquid
    1.69
    """
    dl = np.asarray(liquids_dH, dtype=float)
    if solute_sites is None or liquids_sites is None:
        return (dl - solute_dH) ** 2
    sl = np.asarray(liquids_sites, dtype=float).reshape(-1, 2)
    a2, b2 = _hb_split(solute_dH, solute_sites[0], solute_sites[1], eps)
    a1, b1 = _hb_split(dl, sl[:, 0], sl[:, 1], eps)
    return 2.0 * (a1 - a2) * (b1 - b2)


def ln_gamma(x2, solute_hsp, solute_vm: float, liquids_hsp, liquids_vm, temp_C: float = 25.0, *,
             combinatorial: bool = True, solute_sites=None, liquids_sites=None):
    r"""ln of the solute's activity coefficient at mole fraction ``x2`` in each liquid (vectorised).

    .. math::
        \ln\gamma_2 = \frac{V_2\phi_1^2}{RT}\Big[\Delta\delta_D^2 + \tfrac14\Delta\delta_P^2
          + \tfrac14 H\Big] + \ln\frac{\phi_2}{x_2} + 1 - \frac{\phi_2}{x_2}

    ``H`` from :func:`hbond_difference`; the last two terms are Flory-Huggins's combinatorial part.

    Parameters
    ----------
    x2 : float or array (n,)
        mole fraction of the solute [-]
    solute_hsp : (3,)
        dD, dP, dH of the solute [MPa^0.5]
    solute_vm : float
        molar volume of the (subcooled liquid) solute [cm^3/mol]
    liquids_hsp : (n, 3)
        dD, dP, dH of the liquids [MPa^0.5]
    liquids_vm : (n,)
        molar volumes of the liquids [cm^3/mol]
    temp_C : float
        temperature [C]
    combinatorial : bool
        include the Flory-Huggins combinatorial term
    solute_sites, liquids_sites : optional
        ``(n_donor, n_acceptor)`` of the solute and of each liquid, for the split hydrogen-bond term
    """
    L = np.asarray(liquids_hsp, dtype=float).reshape(-1, 3)
    v1 = np.asarray(liquids_vm, dtype=float)
    s = np.asarray(solute_hsp, dtype=float)
    v2 = float(solute_vm)
    x2 = np.asarray(x2, dtype=float)
    a = (L[:, 0] - s[0]) ** 2 + 0.25 * (L[:, 1] - s[1]) ** 2 + 0.25 * hbond_difference(
        s[2], L[:, 2], solute_sites, liquids_sites)
    vol1, vol2 = (1.0 - x2) * v1, x2 * v2
    phi1 = vol1 / (vol1 + vol2)
    out = v2 * phi1 * phi1 * a / (R_J_MOL_K * (temp_C + 273.15))
    if combinatorial:
        ratio = v2 / (vol1 + vol2)
        out = out + np.log(ratio) + 1.0 - ratio
    return out


def log10_solubility(solute_hsp, solute_vm: float, liquids_hsp, liquids_vm, temp_C: float = 25.0,
                     log10_ideal: float | None = None, **terms) -> np.ndarray:
    r"""log10 of the estimated saturation mole fraction of the solute in each liquid.

    Solves :math:`\ln x_2 + \ln\gamma_2(x_2) = \ln x^\mathrm{id}` for every liquid at once (a scan of
    ln x from -60 to 0, then bisection: the lowest root, the first saturation met when adding solid).
    Without ``log10_ideal`` (no fusion data) the ranking value :math:`-\log_{10}\gamma_2^\infty`
    is returned instead: the same order of liquids, no amount.  ``terms`` go to :func:`ln_gamma`.

    Examples
    --------
    Naphthalene (19.2, 2.0, 5.9; Hansen 2007) in toluene (18.0, 1.4, 2.0) and in methanol
    (14.7, 12.3, 22.3) with the ideal term of :func:`ideal_log10` (80.2 C, 19.01 kJ/mol, ``chemicals``):
    toluene dissolves far more (x 0.27 against the ideal 0.302).

    >>> f = Fusion(80.2, 19.01, "chemicals", "measured")
    >>> x = 10 ** log10_solubility([19.2, 2.0, 5.9], 123.0, [[18.0, 1.4, 2.0], [14.7, 12.3, 22.3]],
    ...                            [106.8, 40.7], 25.0, ideal_log10(f, 25.0))
    >>> [round(float(v), 3) for v in x]
    [0.266, 0.003]
    """
    L = np.asarray(liquids_hsp, dtype=float).reshape(-1, 3)
    if log10_ideal is None:
        return -ln_gamma(np.zeros(len(L)), solute_hsp, solute_vm, L, liquids_vm, temp_C, **terms) / math.log(10.0)
    lnxid = float(log10_ideal) * math.log(10.0)

    def f(lnx):
        return lnx + ln_gamma(np.exp(lnx), solute_hsp, solute_vm, L, liquids_vm, temp_C, **terms) - lnxid

    return _saturation(f, len(L)) / math.log(10.0)


def _saturation(f, n: int) -> np.ndarray:
    """The lowest root in ln x of ``f(ln x) = 0`` for n liquids at once: a scan of ln x from -60 to 0, then
    bisection (the first saturation met when adding solid); 0 where ``f`` stays negative."""
    grid = np.linspace(-60.0, 0.0, 241)
    vals = np.array([f(np.full(n, g)) for g in grid])
    j = np.maximum(np.argmax(vals >= 0.0, axis=0), 1)
    j = np.where((vals >= 0.0).any(axis=0), j, len(grid) - 1)
    lo, hi = grid[j - 1], grid[j]
    for _ in range(50):
        mid = 0.5 * (lo + hi)
        up = f(mid) >= 0.0
        lo, hi = np.where(up, lo, mid), np.where(up, mid, hi)
    return 0.5 * (lo + hi)


def log10_solubility_unifac(solute_groups, liquids_groups, temp_C: float = 25.0, log10_ideal: float | None = None,
                            model: str = "dortmund") -> np.ndarray:
    r"""log10 of the estimated saturation mole fraction of a solute in each liquid, with UNIFAC.

    Solves :math:`\ln x_2 + \ln\gamma_2(x_2) = \ln x^\mathrm{id}` as :func:`log10_solubility` does, with
    the activity coefficient of :mod:`solvsel.science.unifac` (``model``: "dortmund", "original" or
    "lle").  Without ``log10_ideal`` the ranking value :math:`-\log_{10}\gamma_2^\infty` (same order, no
    amount).  NaN for a liquid whose groups lack an interaction parameter with the solute's.

    Parameters
    ----------
    solute_groups : dict
        the solute's subgroups (:func:`solvsel.science.unifac.groups`)
    liquids_groups : sequence of dict
        each liquid's subgroups
    temp_C : float
        temperature [C]
    log10_ideal : float, optional
        log10 of the ideal solubility (:func:`ideal_log10`)
    model : str
        the UNIFAC parameter set

    Examples
    --------
    Naphthalene in toluene and in methanol at 25 C (80.2 C, 19.01 kJ/mol, ``chemicals``): toluene
    dissolves far more.

    >>> from solvsel.science.unifac import groups
    >>> lid = ideal_log10(Fusion(80.2, 19.01, "chemicals", "measured"), 25.0)
    >>> x = 10 ** log10_solubility_unifac(groups("c1ccc2ccccc2c1"), [groups("Cc1ccccc1"), groups("CO")], 25.0, lid)
    >>> [round(float(v), 3) for v in x]
    [0.296, 0.026]
    """
    ln_g, usable = solute_in_liquids(solute_groups, liquids_groups, temp_C, model)
    n = len(liquids_groups)
    if log10_ideal is None:
        out = -ln_g(0.0) / math.log(10.0)
    else:
        lnxid = float(log10_ideal) * math.log(10.0)
        out = _saturation(lambda lnx: lnx + ln_g(np.exp(lnx)) - lnxid, n) / math.log(10.0)
    return np.where(usable, out, np.nan)
