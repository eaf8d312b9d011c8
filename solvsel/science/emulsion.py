"""Beverage emulsions: density match, weighting agents, creaming and ripening.

A flavour oil dispersed in a drink creams at the Stokes velocity of its
droplets, which is proportional to the density difference between the drink
and the oil phase and to the square of the droplet size.  The developer
closes the density gap with a weighting agent dissolved in the oil (within
the legal maximum in the finished drink, after the concentrate's dilution)
and homogenises to a droplet size at which creaming is too slow to see.
Terpene-rich oils also ripen (the small droplets dissolve into the large
ones through the water), unless an insoluble ripening inhibitor is in the
oil phase.  This module computes those numbers from plain inputs; the legal
limits are data passed in (:class:`AgentLimit` records, or limits in mg/kg),
looked up by the ``emulsion`` job in :mod:`solvsel.rules.regulations`.

References
----------
.. [1] Stokes, G. G. On the effect of the internal friction of fluids on the
   motion of pendulums. Trans. Cambridge Philos. Soc. 9, 8-106 (1851).
.. [2] McClements, D. J. *Food Emulsions: Principles, Practices, and
   Techniques*, 3rd ed. CRC Press, 2015.
.. [3] Chanamai, R.; McClements, D. J. Impact of weighting agents and sucrose
   on gravitational separation of beverage emulsions. J. Agric. Food Chem.
   48, 5561-5565 (2000).
.. [4] Wooster, T. J.; Golding, M.; Sanguansri, P. Impact of oil type on
   nanoemulsion formation and Ostwald ripening stability. Langmuir 24,
   12758-12765 (2008). https://pubmed.ncbi.nlm.nih.gov/18850732/
.. [5] Genotelle, J. Expression de la viscosite des solutions sucrees.
   Industries Alimentaires et Agricoles 95, 747-755 (1978) (the equation
   behind ``tables/sucrose_viscosity.csv``; coefficients as given by
   Mathlouthi and Reiser 1995, source ``sucrose_genotelle_equation``).
"""

from __future__ import annotations

import itertools
import math
import re
from dataclasses import asdict, dataclass
from typing import Mapping, Sequence

import numpy as np

from ..data.catalog import number_or_none as _num
from ..errors import InputError, MissingDataError, OutOfRangeError, UnknownNameError

__all__ = [
    "G",
    "WATER_VISCOSITY_20C",
    "DRINK_DENSITY_RANGE",
    "sucrose_solution_density",
    "oil_phase_density",
    "weighting_fraction",
    "agent_level_ppm",
    "stokes_velocity",
    "creaming_mm_per_day",
    "time_to_cream_days",
    "max_droplet_diameter_um",
    "DistributionCreaming",
    "creaming_of_distribution",
    "AgentLimit",
    "AgentCheck",
    "WeightingOption",
    "weighting_options",
    "RipeningCheck",
    "ripening_check",
    "OilComponent",
    "check_agent",
    "RIPENING_INHIBITOR_THRESHOLDS",
    "sucrose_table",
    "drink_density",
    "oil_phase_components",
    "EmulsifierUse",
    "emulsifier_use",
    "sucrose_solution_viscosity",
    "sucrose_viscosity_table",
    "drink_viscosity",
    "hydrocolloid_row",
    "solution_density",
]

#: Standard gravity [m/s2].
G = 9.80665
#: Viscosity of water at 20 C [mPa s] (handbook value, from memory).
WATER_VISCOSITY_20C = 1.002
_SECONDS_PER_DAY = 86400.0



# ----------------------------------------------------------------------------- densities


def _pos(x, name: str, unit: str) -> float:
    try:
        v = float(x)
    except (TypeError, ValueError):
        raise InputError(f"expected a number in {unit}, got {x!r}", param=name, value=x,
                         expected=f"a positive number in {unit}") from None
    if not math.isfinite(v) or v <= 0:
        raise OutOfRangeError(f"expected a positive number in {unit}, got {x!r}", param=name, value=x,
                              expected=f"a positive number in {unit}")
    return v


def sucrose_solution_density(brix: float, table_brix: Sequence[float], table_density: Sequence[float]) -> float:
    r"""Density of a sucrose solution at 20 C from its Brix, by linear interpolation.

    The bundled table (``tables/sucrose_density.csv``) is the handbook's
    sucrose table at 20 C as recalled (source ``crc_sucrose_memory``); between
    its points 1-2 degrees Brix apart, the curvature of the density
    (about 3e-5 g/cm3 per degree squared) keeps linear interpolation within
    ``h^2 f''/8`` < 2e-5 g/cm3 of the smooth curve.

    .. math::
        \rho(B) = \rho_i + (B - B_i)\frac{\rho_{i+1}-\rho_i}{B_{i+1}-B_i}

    Parameters
    ----------
    brix : float
        Sucrose content, mass % (degrees Brix) [%]
    table_brix, table_density : sequence of float
        The tabulated Brix [%] and densities at 20 C [g/cm3], Brix ascending

    Returns
    -------
    density : float
        [g/cm3]

    Examples
    --------
    >>> round(sucrose_solution_density(11, [10, 12], [1.0381, 1.0465]), 4)
    1.0423
    """
    x = np.asarray(table_brix, dtype=float)
    y = np.asarray(table_density, dtype=float)
    if x.ndim != 1 or x.size < 2 or x.shape != y.shape or np.any(np.diff(x) <= 0):
        raise InputError("the sucrose table needs two columns of equal length with Brix strictly ascending",
                         param="table_brix")
    expected = f"degrees Brix from {x[0]:g} to {x[-1]:g}"
    try:
        b = float(brix)
    except (TypeError, ValueError):
        raise InputError(f"expected a number of degrees Brix, got {brix!r}", param="brix", value=brix,
                         expected=expected) from None
    if not (x[0] <= b <= x[-1]):
        raise OutOfRangeError(f"{brix!r} is outside the sucrose density table ({x[0]:g} to {x[-1]:g} degrees Brix)",
                              param="brix", value=brix, expected=expected)
    return float(np.interp(b, x, y))


def sucrose_solution_viscosity(brix: float, temp_C: float, table_brix: Sequence[float],
                               table_temp: Sequence[float], table_visc) -> float:
    r"""Viscosity of a sucrose solution [mPa s] from a table over Brix and temperature.

    Bilinear interpolation of :math:`\ln\eta` between the four surrounding
    grid points (the viscosity of a sugar solution is close to exponential
    in both its Brix and its temperature, so its logarithm interpolates
    far better than the value).

    Parameters
    ----------
    brix : float
        Sucrose content, mass % (degrees Brix) [%]
    temp_C : float
        Temperature [C]
    table_brix, table_temp : sequence of float
        The grid's Brix [%] and temperatures [C], both ascending
    table_visc : 2-D array
        Viscosities [mPa s], one row per Brix, one column per temperature

    Examples
    --------
    Half-way in Brix between 1.0 and 4.0 mPa s: the geometric mean, 2.0.

    >>> sucrose_solution_viscosity(5, 20, [0, 10], [20, 30], [[1.0, 0.8], [4.0, 3.0]])
    2.0
    """
    x = np.asarray(table_brix, dtype=float)
    t = np.asarray(table_temp, dtype=float)
    y = np.log(np.asarray(table_visc, dtype=float))
    b = _in_axis(brix, x, "brix", "degrees Brix")
    c = _in_axis(temp_C, t, "temp_C", "C")
    i, j = _bracket(x, b), _bracket(t, c)
    u = (b - x[i]) / (x[i + 1] - x[i])
    v = (c - t[j]) / (t[j + 1] - t[j])
    ln = ((1 - u) * (1 - v) * y[i, j] + u * (1 - v) * y[i + 1, j] + (1 - u) * v * y[i, j + 1]
          + u * v * y[i + 1, j + 1])
    return round(float(np.exp(ln)), 12)


def _in_axis(value, axis: np.ndarray, param: str, unit: str) -> float:
    """``value`` as a float within the grid axis, else an error naming ``param``."""
    expected = f"{axis[0]:g} to {axis[-1]:g} {unit}"
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"expected a number in {unit}, got {value!r}", param=param, value=value,
                         expected=expected) from None
    if not (axis[0] <= v <= axis[-1]):
        raise OutOfRangeError(f"{value!r} is outside the sucrose viscosity table ({expected})", param=param,
                              value=value, expected=expected)
    return v


def oil_phase_density(mass_fractions: Sequence[float], densities: Sequence[float]) -> float:
    r"""Density of a mixed oil phase by volume additivity.

    .. math::
        \frac{1}{\rho} = \sum_i \frac{w_i}{\rho_i}

    Parameters
    ----------
    mass_fractions : sequence of float
        Mass fraction of each component, summing to 1 [-]
    densities : sequence of float
        Density of each component [g/cm3]

    Examples
    --------
    70 % d-limonene (0.838) with 30 % sucrose acetate isobutyrate (1.146):

    >>> round(oil_phase_density([0.7, 0.3], [0.838, 1.146]), 4)
    0.9115
    """
    w = np.asarray(mass_fractions, dtype=float)
    rho = np.asarray(densities, dtype=float)
    if w.shape != rho.shape or w.size == 0:
        raise InputError(f"{w.size} fractions but {rho.size} densities", param="densities")
    if not np.all(np.isfinite(rho)) or np.any(rho <= 0):
        raise MissingDataError("every component of the oil phase needs a positive density in g/cm3", param="densities")
    if np.any(w < 0) or abs(w.sum() - 1.0) > 1e-6:
        raise InputError(f"mass fractions must be zero or more and sum to 1, they sum to {w.sum():g}",
                         param="mass_fractions", value=list(w))
    return float(1.0 / np.sum(w / rho))


def weighting_fraction(oil_density: float, agent_density: float, target_density: float) -> float:
    r"""Mass fraction of a weighting agent in the oil phase that matches a target density.

    From volume additivity, with ``w`` the agent's mass fraction of the
    weighted oil phase:

    .. math::
        w = \frac{1/\rho_o - 1/\rho_t}{1/\rho_o - 1/\rho_a}

    Parameters
    ----------
    oil_density : float
        Density of the unweighted oil phase [g/cm3]
    agent_density : float
        Density of the weighting agent [g/cm3]
    target_density : float
        Density to match (the finished drink) [g/cm3]

    Returns
    -------
    w : float
        Mass fraction of the agent in the weighted oil phase [-] (0 if the
        oil is already as dense as the target)

    Examples
    --------
    Oil 0.845, agent 1.146, drink 1.045 g/cm3 (hand computation: volume
    fraction 0.200/0.301 = 0.6645, mass fraction 0.6645 x 1.146/1.045):

    >>> round(weighting_fraction(0.845, 1.146, 1.045), 4)
    0.7287
    """
    ro = _pos(oil_density, "oil_density", "g/cm3")
    ra = _pos(agent_density, "agent_density", "g/cm3")
    rt = _pos(target_density, "target_density", "g/cm3")
    if ro >= rt:
        return 0.0
    if ra <= rt:
        raise OutOfRangeError(
            f"a weighting agent of density {ra:g} g/cm3 cannot raise the oil phase to {rt:g} g/cm3: "
            "the agent must be denser than the target",
            param="agent_density", value=ra,
        )
    return (1.0 / ro - 1.0 / rt) / (1.0 / ro - 1.0 / ra)


def agent_level_ppm(agent_in_oil: float, oil_in_concentrate: float, dilution: float) -> float:
    r"""Level of an oil-phase ingredient in the finished drink [mg/kg].

    .. math::
        c = w_{agent}\,w_{oil}\,\frac{10^6}{D}

    with ``D`` the dilution of the concentrate (1 part in ``D`` parts of
    drink, by mass).

    Parameters
    ----------
    agent_in_oil : float
        Mass fraction of the ingredient in the oil phase [-]
    oil_in_concentrate : float
        Mass fraction of the oil phase in the emulsion concentrate [-]
    dilution : float
        Parts of finished drink made from one part of concentrate [-]

    Examples
    --------
    30 % agent in an oil phase that is 10 % of a concentrate dosed 1 in 500:

    >>> agent_level_ppm(0.30, 0.10, 500)
    60.0
    """
    for v, n in ((agent_in_oil, "agent_in_oil"), (oil_in_concentrate, "oil_in_concentrate")):
        if not (0.0 <= float(v) <= 1.0):
            raise OutOfRangeError(f"expected a mass fraction between 0 and 1, got {v!r}", param=n, value=v)
    d = _pos(dilution, "dilution", "parts of drink per part of concentrate")
    if d < 1:
        raise OutOfRangeError(f"expected 1 or more parts of drink per part of concentrate, got {dilution!r}",
                              param="dilution", value=dilution)
    return round(float(agent_in_oil) * float(oil_in_concentrate) * 1e6 / d, 9)


# ----------------------------------------------------------------------------- creaming


def stokes_velocity(radius_m: float, density_difference_kg_m3: float, viscosity_pa_s: float) -> float:
    r"""Stokes' terminal velocity of a sphere [1]_, [2]_.

    .. math::
        v = \frac{2 g r^2 (\rho_c - \rho_d)}{9 \eta_c}

    Parameters
    ----------
    radius_m : float
        Droplet radius, r [m]
    density_difference_kg_m3 : float
        Continuous minus dispersed phase density [kg/m3] (positive: creams)
    viscosity_pa_s : float
        Viscosity of the continuous phase [Pa s]

    Returns
    -------
    v : float
        Velocity [m/s], positive upward (creaming), negative downward

    Examples
    --------
    A 1 um-radius droplet of 910 kg/m3 in water (1000 kg/m3, 1 mPa s):

    >>> round(stokes_velocity(1e-6, 90, 1e-3) * 86400 * 1000, 1)
    16.9
    """
    r = _pos(radius_m, "radius_m", "m")
    eta = _pos(viscosity_pa_s, "viscosity_pa_s", "Pa s")
    drho = float(density_difference_kg_m3)
    if not math.isfinite(drho):
        raise InputError(f"expected a number, got {density_difference_kg_m3!r}", param="density_difference_kg_m3",
                         value=density_difference_kg_m3)
    return 2.0 * G * r * r * drho / (9.0 * eta)


def creaming_mm_per_day(diameter_um: float, continuous_density: float, droplet_density: float, viscosity_mpa_s: float = WATER_VISCOSITY_20C) -> float:
    """Stokes creaming rate in the units of the bench [mm/day].

    Parameters
    ----------
    diameter_um : float
        Droplet diameter [um]
    continuous_density, droplet_density : float
        [g/cm3]
    viscosity_mpa_s : float
        Viscosity of the drink [mPa s]

    Examples
    --------
    Orange oil 0.845 in a 10 degree Brix drink (1.0381), 0.33 um droplets:

    >>> round(creaming_mm_per_day(0.33, 1.0381, 0.845), 2)
    0.99
    """
    d = _pos(diameter_um, "diameter_um", "um")
    drho = (float(continuous_density) - float(droplet_density)) * 1000.0
    v = stokes_velocity(d * 0.5e-6, drho, _pos(viscosity_mpa_s, "viscosity_mpa_s", "mPa s") * 1e-3)
    return v * _SECONDS_PER_DAY * 1000.0


def time_to_cream_days(height_mm: float, velocity_mm_per_day: float) -> float:
    """Days for droplets to rise (or settle) through ``height_mm``; inf when the velocity is 0.

    Examples
    --------
    >>> time_to_cream_days(100, 0.5)
    200.0
    """
    h = _pos(height_mm, "height_mm", "mm")
    v = abs(float(velocity_mm_per_day))
    return math.inf if v == 0 else h / v


def max_droplet_diameter_um(
    height_mm: float, shelf_days: float, continuous_density: float, droplet_density: float,
    viscosity_mpa_s: float = WATER_VISCOSITY_20C,
) -> float:
    r"""Largest droplet that creams less than ``height_mm`` in ``shelf_days`` [um].

    .. math::
        d_{max} = 2\sqrt{\frac{9 \eta h}{2 g |\Delta\rho| t}}

    Examples
    --------
    Orange oil 0.845 in a 10 degree Brix drink, 1 mm/day (the usual
    creaming-stable rate): about 0.33 um.

    >>> round(max_droplet_diameter_um(1, 1, 1.0381, 0.845), 2)
    0.33
    """
    h = _pos(height_mm, "height_mm", "mm") * 1e-3
    t = _pos(shelf_days, "shelf_days", "days") * _SECONDS_PER_DAY
    eta = _pos(viscosity_mpa_s, "viscosity_mpa_s", "mPa s") * 1e-3
    drho = abs(float(continuous_density) - float(droplet_density)) * 1000.0
    if drho == 0:
        return math.inf
    r = math.sqrt(9.0 * eta * (h / t) / (2.0 * G * drho))
    return 2.0 * r * 1e6


@dataclass(frozen=True)
class DistributionCreaming:
    """Creaming of a droplet-size distribution (volume-weighted classes)."""

    diameters_um: tuple[float, ...]
    volume_fractions: tuple[float, ...]
    velocities_mm_per_day: tuple[float, ...]
    mean_mm_per_day: float  # volume-weighted mean velocity
    fraction_creamed: float  # oil volume fraction in droplets that cream the height within the shelf life
    height_mm: float
    shelf_days: float

    def to_dict(self) -> dict:
        return asdict(self)


def creaming_of_distribution(
    diameters_um: Sequence[float], volume_fractions: Sequence[float], continuous_density: float,
    droplet_density: float, viscosity_mpa_s: float = WATER_VISCOSITY_20C, height_mm: float = 100.0,
    shelf_days: float = 180.0,
) -> DistributionCreaming:
    """Creaming of a size distribution given as classes (diameter, volume fraction).

    The volume-weighted mean velocity is dominated by the large tail (v ~ d^2),
    which is why the tail above 1 um matters more than the mean size.

    Examples
    --------
    Nine tenths of the oil at 0.3 um and a tenth at 1.5 um:

    >>> r = creaming_of_distribution([0.3, 1.5], [0.9, 0.1], 1.0381, 0.845, height_mm=200, shelf_days=180)
    >>> round(r.fraction_creamed, 2)
    0.1
    """
    d = np.asarray(diameters_um, dtype=float)
    w = np.asarray(volume_fractions, dtype=float)
    if d.shape != w.shape or d.size == 0:
        raise InputError(f"{d.size} diameters but {w.size} volume fractions", param="volume_fractions")
    if np.any(~np.isfinite(d)) or np.any(d <= 0):
        raise InputError("diameters must be positive numbers in um", param="diameters_um")
    s = w.sum()
    if np.any(w < 0) or not (abs(s - 1) <= 5e-3 or abs(s - 100) <= 0.5):
        raise InputError(f"volume fractions sum to {s:g}; give fractions summing to 1 or percent summing to 100",
                         param="volume_fractions", value=list(w))
    w = w / s
    v = np.array([creaming_mm_per_day(di, continuous_density, droplet_density, viscosity_mpa_s) for di in d])
    travelled = np.abs(v) * float(shelf_days)
    creamed = float(w[travelled >= float(height_mm)].sum())
    return DistributionCreaming(
        tuple(map(float, d)), tuple(map(float, w)), tuple(map(float, v)), float(v @ w), creamed, float(height_mm), float(shelf_days)
    )


# ----------------------------------------------------------------------------- legal limits


@dataclass(frozen=True)
class AgentLimit:
    """A legal maximum of a weighting agent in the finished drink, as the engine needs it.

    ``basis`` is "mass" (limit in mg/kg = ppm) or "volume" (mg/L); a
    ``status`` of "not permitted" (or "revoked") has no number and refuses
    any level.
    """

    agent: str
    jurisdiction: str
    rule: str
    limit_mg: float | None
    basis: str | None
    status: str = "limit"
    flagged: bool = False
    note: str = ""

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class AgentCheck:
    """One agent's level in the finished drink against one jurisdiction's rules."""

    agent: str
    cas: str
    jurisdiction: str
    level_ppm: float  # mg/kg of drink
    level_mg_L: float
    limit_ppm: float | None  # the limit expressed in mg/kg of this drink
    limit_text: str
    rule: str
    ok: bool
    message: str

    def to_dict(self) -> dict:
        return asdict(self)


def check_agent(agent: str, cas: str, jurisdiction: str, level_ppm: float, beverage_density: float, rules: Sequence[AgentLimit]) -> AgentCheck:
    """Check an agent's level against the rules on record; no rule on record is never taken as allowed.

    Examples
    --------
    Ester gum at 264 ppm against the US limit of 100 ppm (21 CFR 172.735):

    >>> lim = AgentLimit("glycerol ester of wood rosin", "US", "21 CFR 172.735", 100, "mass")
    >>> check_agent("glycerol ester of wood rosin", "8050-30-4", "US", 264, 1.045, [lim]).ok
    False
    """
    level_l = level_ppm * beverage_density
    banned = [r for r in rules if r.status in ("not permitted", "revoked")]
    numeric = [r for r in rules if r.limit_mg is not None and r.basis in ("mass", "volume")]
    gmp = [r for r in rules if r.status == "GMP" and r.limit_mg is None]
    if gmp and not numeric and not banned:
        r = gmp[0]
        flag = " (not confirmed against the official text: verify)" if r.flagged else ""
        return AgentCheck(agent, cas, jurisdiction, level_ppm, level_l, None, "GMP", r.rule, True,
                          f"{agent}: permitted at good manufacturing practice, no numerical limit "
                          f"({jurisdiction} {r.rule}){flag}")
    if banned and not numeric:
        r = banned[0]
        return AgentCheck(agent, cas, jurisdiction, level_ppm, level_l, None, r.status, r.rule, level_ppm == 0,
                          f"{agent} is not permitted in {jurisdiction} ({r.rule})" + (f": {r.note}" if r.note else ""))
    if not numeric:
        return AgentCheck(agent, cas, jurisdiction, level_ppm, level_l, None, "no limit on record", "", level_ppm == 0,
                          f"no limit on record for {agent} in {jurisdiction} drinks: not treated as allowed")
    # the strictest limit that applies, each compared on its own basis
    best = None
    for r in numeric:
        as_ppm = r.limit_mg if r.basis == "mass" else r.limit_mg / beverage_density
        if best is None or as_ppm < best[0]:
            best = (as_ppm, r)
    lim_ppm, r = best
    unit = "mg/kg" if r.basis == "mass" else "mg/L"
    text = f"{r.limit_mg:g} {unit}"
    ok = level_ppm <= lim_ppm * (1 + 1e-9)
    flag = " (limit not confirmed against the official text: verify)" if r.flagged else ""
    if ok:
        msg = f"{agent} at {level_ppm:.4g} mg/kg is within {text} ({jurisdiction} {r.rule}){flag}"
    else:
        msg = (f"{agent} at {level_ppm:.4g} mg/kg ({level_l:.4g} mg/L) of drink is over the legal maximum "
               f"of {text} ({jurisdiction} {r.rule}){flag}")
    return AgentCheck(agent, cas, jurisdiction, level_ppm, level_l, lim_ppm, text, r.rule, ok, msg)


# ----------------------------------------------------------------------------- weighting options


@dataclass(frozen=True)
class WeightingOption:
    """One way (one agent, or two) to weight the oil phase toward the drink's density."""

    agents: tuple[str, ...]
    fractions: tuple[float, ...]  # mass fractions of each agent in the weighted oil phase
    levels_ppm: tuple[float, ...]  # in the finished drink [mg/kg]
    limits_ppm: tuple[float | None, ...]
    density: float  # of the weighted oil phase [g/cm3]
    matched: bool  # reaches the drink's density
    legal: bool  # every level within its limit
    max_oil_ppm: float | None  # largest oil-phase level in the drink at which this full match stays legal
    message: str

    def to_dict(self) -> dict:
        return asdict(self)


def weighting_options(
    oil_density: float, beverage_density: float, oil_in_drink_ppm: float,
    agents: Sequence[tuple[str, float, float | None]],
) -> list[WeightingOption]:
    r"""Single agents, then pairs, that bring an oil phase to the drink's density within their limits.

    Specific volume is linear in the mass fractions, so the match is one
    linear equation in the agents' fractions ``x_i`` of the weighted oil:

    .. math::
        \sum_i x_i\left(\frac{1}{\rho_o} - \frac{1}{\rho_i}\right) = \frac{1}{\rho_o} - \frac{1}{\rho_t},
        \qquad x_i\,c_{oil} \le L_i

    A pair is tried when neither agent alone fits under its limit: the
    denser-per-gram agent is filled to its limit first and the other makes
    up the rest (this uses the least total agent).  When nothing fits, the
    closest legal match is returned with ``matched=False``.

    Parameters
    ----------
    oil_density : float
        Unweighted oil phase [g/cm3]
    beverage_density : float
        Finished drink [g/cm3]
    oil_in_drink_ppm : float
        Weighted oil phase in the finished drink [mg/kg]
    agents : sequence of (name, density [g/cm3], limit [mg/kg] or None)
        Candidate agents; a None limit means no legal use (skipped).

    Examples
    --------
    A 1 in 500 dose of a concentrate with 10 % oil phase (200 ppm of oil in
    the drink): ester gum alone would need 88 % and 176 ppm (limit 100),
    SAIB alone 73 % and 146 ppm (limit 300):

    >>> opts = weighting_options(0.845, 1.045, 200, [("ester gum", 1.08, 100), ("SAIB", 1.146, 300)])
    >>> [(o.agents, o.legal) for o in opts]
    [(('SAIB',), True), (('ester gum',), False)]
    """
    ro = _pos(oil_density, "oil_density", "g/cm3")
    rt = _pos(beverage_density, "beverage_density", "g/cm3")
    c_oil = _pos(oil_in_drink_ppm, "oil_in_drink_ppm", "mg/kg")
    usable = [(n, _pos(d, "agents", "g/cm3"), lim) for n, d, lim in agents if lim is not None]
    if ro >= rt:
        return [WeightingOption((), (), (), (), ro, True, True, None, "the oil phase is already as dense as the drink")]
    need = 1.0 / ro - 1.0 / rt
    out: list[WeightingOption] = []
    for n, d, lim in usable:
        if d <= rt:
            continue
        x = need / (1.0 / ro - 1.0 / d)
        level = x * c_oil
        legal = level <= lim * (1 + 1e-9)
        max_oil = lim / x if x > 0 else None
        msg = (f"{x:.1%} {n} in the oil phase puts {level:.4g} mg/kg in the drink "
               f"({'within' if legal else 'over'} {lim:g} mg/kg)")
        out.append(WeightingOption((n,), (x,), (level,), (lim,), rt, True, legal, max_oil, msg))
    singles_legal = [o for o in out if o.legal]
    if singles_legal:
        over = [o for o in out if not o.legal]
        return sorted(singles_legal, key=lambda o: o.levels_ppm[0] / o.limits_ppm[0]) + over
    return _pair_options(usable, ro, rt, c_oil) + sorted(out, key=lambda o: o.levels_ppm[0] / o.limits_ppm[0])


def _pair_options(usable: Sequence[tuple[str, float, float]], ro: float, rt: float, c_oil: float) -> list[WeightingOption]:
    """Every pair of agents, the denser-per-gram one filled to its limit first (the least total
    agent), the pairs that reach the drink's density first."""
    need = 1.0 / ro - 1.0 / rt
    pairs: list[WeightingOption] = []
    for (n1, d1, l1), (n2, d2, l2) in itertools.combinations(usable, 2):
        a = {n1: 1.0 / ro - 1.0 / d1, n2: 1.0 / ro - 1.0 / d2}
        cap = {n1: l1 / c_oil, n2: l2 / c_oil}
        order = sorted((n1, n2), key=lambda n: -a[n])
        x = {}
        rest = need
        for n in order:
            if a[n] <= 0:
                x[n] = 0.0
                continue
            x[n] = min(cap[n], rest / a[n], 1.0)
            rest -= x[n] * a[n]
        total = sum(x.values())
        matched = rest <= 1e-12 and total <= 1.0
        dens = 1.0 / (1.0 / ro - (need - rest))
        names = (n1, n2)
        levels = tuple(x[n] * c_oil for n in names)
        if matched:
            msg = " + ".join(f"{x[n]:.1%} {n}" for n in names) + " match the drink within both limits"
            max_oil = None
        else:
            msg = (" + ".join(f"{x[n]:.1%} {n}" for n in names) + f" at their limits reach only {dens:.4f} g/cm3 "
                   f"(drink {rt:.4f}): dose less oil phase, use a denser agent, or accept a partial match")
            max_oil = None
        pairs.append(WeightingOption(names, tuple(x[n] for n in names), levels, (l1, l2), dens, matched, True, max_oil, msg))
    pairs.sort(key=lambda o: (not o.matched, -o.density, sum(o.fractions)))
    return pairs


# ----------------------------------------------------------------------------- ripening


@dataclass(frozen=True)
class OilComponent:
    """An oil-phase ingredient as the emulsion engine needs it."""

    name: str
    mass_fraction: float
    density: float | None
    ripening: str = "unknown"  # prone | slow | inhibitor | unknown
    water_solubility_mg_L: float | None = None
    cas: str = ""
    is_agent: bool = False

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class RipeningCheck:
    warn: bool
    prone_fraction: float
    inhibitor_fraction: float
    reason: str
    remedy: str

    def to_dict(self) -> dict:
        return asdict(self)


#: Inhibitor shares of the oil phase that stopped ripening in published work:
#: ester gum > 9 % with modified starch (study quoted in practice notes, authors not captured);
#: >= 20 % ester gum with polyoxyethylene alkyl ethers (Park et al. 2020); >= 20 % corn oil in
#: model decane emulsions (Kim et al. 2024).
RIPENING_INHIBITOR_THRESHOLDS = (0.09, 0.20)


def ripening_check(components: Sequence[OilComponent], nano: bool = False) -> RipeningCheck:
    """Warn when an oil phase is prone to Ostwald ripening, with the reason and the usual remedy.

    Ripening needs an oil that dissolves in water to some extent (terpenes,
    flavour solvents); an insoluble component (long-chain triglycerides, ester
    gum, SAIB) in the droplets opposes it by the entropy of mixing.  The warning
    is raised when prone components are present and the inhibitor share is
    below the upper published threshold (20 %), and always for nanoemulsions.

    Examples
    --------
    >>> r = ripening_check([OilComponent("d-limonene", 1.0, 0.838, "prone", 13.8)])
    >>> r.warn, r.remedy.split(":")[0]
    (True, 'Add a ripening inhibitor')
    """
    prone = sum(c.mass_fraction for c in components if c.ripening == "prone")
    inhib = sum(c.mass_fraction for c in components if c.ripening == "inhibitor")
    unknown = [c.name for c in components if c.ripening == "unknown"]
    lo, hi = RIPENING_INHIBITOR_THRESHOLDS
    names = ", ".join(c.name for c in components if c.ripening == "prone")
    if prone <= 0:
        reason = "no component of the oil phase is known to ripen"
        if unknown:
            reason += f" (not known for: {', '.join(unknown)})"
        return RipeningCheck(False, 0.0, inhib, reason, "")
    reason = (f"{prone:.0%} of the oil phase ({names}) dissolves in water enough for Ostwald ripening: small droplets "
              "feed large ones through the water, the size grows and the emulsion creams or rings")
    remedy = (f"Add a ripening inhibitor: an insoluble long-chain triglyceride (e.g. a vegetable oil) or a weighting "
              f"agent such as glycerol ester of wood rosin (E 445) or sucrose acetate isobutyrate (E 444) in the oil "
              f"phase; published work needed {lo:.0%} to {hi:.0%} of the oil phase, depending on the emulsifier (the "
              f"oil phase has {inhib:.0%})")
    warn = inhib < hi or nano
    if nano:
        reason += "; nanoemulsions are far more sensitive to ripening"
    if not warn:
        return RipeningCheck(False, prone, inhib, reason + f"; the inhibitor share ({inhib:.0%}) is at or above the published thresholds", "")
    return RipeningCheck(True, prone, inhib, reason, remedy)


# ----------------------------------------------------------------------------- catalog edge


def sucrose_table(cat) -> tuple[np.ndarray, np.ndarray]:
    """The bundled sucrose density table (Brix [%], density at 20 C [g/cm3]), Brix ascending."""
    df = cat.table("sucrose_density").sort_values("sucrose_wt_pct")
    return df["sucrose_wt_pct"].to_numpy(float), df["density_20C_g_cm3"].to_numpy(float)


#: Densities a finished drink may have [g/cm3] (water to a heavy syrup).
DRINK_DENSITY_RANGE = (0.95, 1.4)


def drink_density(cat, brix: float | None = None, density: float | None = None) -> tuple[float, str]:
    """The finished drink's density [g/cm3] and where it comes from: from its Brix (the bundled
    sucrose table at 20 C) or as given (one of the two).

    >>> from solvsel.data.catalog import load_catalog
    >>> drink_density(load_catalog(), brix=11)
    (1.0423, 'sucrose solution of 11 degrees Brix at 20 C (bundled table, interpolated)')
    """
    if (brix is None) == (density is None):
        raise InputError("give the drink's sugar content (Brix) or its density, one of the two", param="brix",
                         expected="a Brix or a density")
    if brix is not None:
        rho = sucrose_solution_density(brix, *sucrose_table(cat))
        return rho, f"sucrose solution of {float(brix):g} degrees Brix at 20 C (bundled table, interpolated)"
    rho = _pos(density, "density", "g/cm3")
    lo, hi = DRINK_DENSITY_RANGE
    if not (lo <= rho <= hi):
        raise OutOfRangeError(f"{density!r} g/cm3 is not the density of a drink (expected {lo:g}-{hi:g})",
                              param="density", value=density, expected=f"{lo:g} to {hi:g} g/cm3")
    return rho, "given"


#: Columns of ``tables/sucrose_viscosity.csv`` holding the viscosity at a temperature (one per temperature, as the
#: published tables print them).
_VISC_COLUMN = re.compile(r"visc_(-?\d+(?:\.\d+)?)C_mPa_s")


def sucrose_viscosity_table(cat, brix: float | None = None,
                            temp_C: float | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The bundled sucrose viscosity table as (Brix [%], temperatures [C], viscosities [mPa s] one row per Brix);
    with ``brix`` and ``temp_C``, only the 2 x 2 grid around that point (the values an interpolation reads).

    >>> from solvsel.data.catalog import load_catalog
    >>> b, t, v = sucrose_viscosity_table(load_catalog())
    >>> v.shape == (b.size, t.size)
    True
    >>> sucrose_viscosity_table(load_catalog(), 10.5, 20)[:2]
    (array([10., 12.]), array([20., 25.]))
    """
    df = cat.table("sucrose_viscosity").sort_values("sucrose_wt_pct")
    temps = sorted((float(m.group(1)), c) for c in df.columns if (m := _VISC_COLUMN.fullmatch(str(c))))
    if len(temps) < 2 or len(df) < 2:
        raise MissingDataError("the sucrose viscosity table needs two Brix rows and two temperature columns",
                               param="sucrose_viscosity")
    t_axis = np.array([t for t, _ in temps])
    rows = slice(None)
    if brix is not None and temp_C is not None:
        b_axis = df["sucrose_wt_pct"].to_numpy(float)
        i = _bracket(b_axis, _in_axis(brix, b_axis, "brix", "degrees Brix"))
        j = _bracket(t_axis, _in_axis(temp_C, t_axis, "temp_C", "C"))
        rows, temps = slice(i, i + 2), temps[j:j + 2]
    records = df.iloc[rows].to_dict("records")
    return (np.array([float(r["sucrose_wt_pct"]) for r in records]), np.array([t for t, _ in temps]),
            np.array([[float(r[c]) for _, c in temps] for r in records]))


def _bracket(axis: np.ndarray, value: float) -> int:
    """The index i with axis[i] <= value <= axis[i + 1] (the last interval at the upper end)."""
    return int(np.clip(np.searchsorted(axis, value, side="right") - 1, 0, axis.size - 2))


def drink_viscosity(cat, brix: float | None, temp_C: float = 20.0) -> tuple[float, str]:
    """The viscosity of a drink's water phase [mPa s] and where it comes from: a sucrose solution of
    ``brix`` at ``temp_C`` from ``tables/sucrose_viscosity.csv`` (water, the table at 0 Brix, when the
    sugar content is not known).

    >>> from solvsel.data.catalog import load_catalog
    >>> round(drink_viscosity(load_catalog(), 10.5, 20)[0], 3)
    1.348
    """
    b = 0.0 if brix is None else brix
    eta = sucrose_solution_viscosity(b, temp_C, *sucrose_viscosity_table(cat, b, temp_C))
    what = "water" if brix is None else f"sucrose solution of {float(brix):g} degrees Brix"
    return eta, f"{what} at {float(temp_C):g} C (bundled table, interpolated)"


def solution_density(solute_fraction: float, solute_density: float, water_density: float) -> float:
    r"""Density of a solution by volume additivity [g/cm3]: :math:`1/\rho = w/\rho_s + (1-w)/\rho_w`.

    20 % gum arabic (1.4) in water (0.99705): 1 / (0.2/1.4 + 0.8/0.99705) = 1.0580

    >>> round(solution_density(0.2, 1.4, 0.99705), 4)
    1.058
    """
    w = float(solute_fraction)
    if not (0.0 <= w < 1.0):
        raise OutOfRangeError(f"expected a mass fraction from 0 to below 1, got {solute_fraction!r}",
                              param="solute_fraction", value=solute_fraction)
    return 1.0 / (w / _pos(solute_density, "solute_density", "g/cm3") + (1.0 - w) / _pos(water_density, "water_density", "g/cm3"))


def hydrocolloid_row(cat, name: str) -> dict | None:
    """The row of ``tables/hydrocolloids.csv`` for an emulsifier (its name or a synonym), or None when the
    emulsifier is not a hydrocolloid of the table."""
    try:
        return cat.find("hydrocolloids", name)
    except UnknownNameError:
        return None


def _component(cat, name: str, fraction: float, densities: Mapping[str, float]) -> OilComponent:
    from .hlb import _oil_row

    try:
        table, row = _oil_row(cat, name, "oil")
    except UnknownNameError as not_an_oil:
        # a flavour solvent of the solvents table (e.g. benzyl alcohol): its density, and whether it
        # dissolves in water (then it leaves the droplets and ripens)
        try:
            sv = cat.solvent(name, library=False)
        except UnknownNameError:
            raise not_an_oil from None
        table = "solvents"
        ripe = {"full": "prone", "partial": "prone"}.get(sv.water_miscibility or "", "unknown")
        row = {"name": sv.name, "density_g_cm3": sv.density_g_cm3, "ripening": ripe, "cas": sv.cas or ""}
    key = row["name"]
    dens = None
    for k in (name.strip().lower(), key.lower()):
        if k in densities:
            dens = float(densities[k])
    if dens is None:
        dens = _num(row.get("density_g_cm3"))
    if dens is None:
        raise MissingDataError(f"no density on record for '{key}': give it in g/cm3 (e.g. '{key}=0.85')",
                               param="oil_density", value=key, expected="a density in g/cm3")
    return OilComponent(key, fraction, dens, str(row.get("ripening") or "unknown"), _num(row.get("water_solubility_mg_L")),
                        str(row.get("cas") or ""), table == "weighting_agents")


def oil_phase_components(cat, oil: Sequence[tuple[str, float]],
                         densities: Mapping[str, float] | None = None) -> tuple[OilComponent, ...]:
    """The oil phase's ingredients with their mass fractions, densities and ripening behaviour.

    ``oil`` is (name, amount) pairs, amounts as fractions (sum 1) or percent
    (sum 100); a name is an oil, a weighting agent, or a flavour solvent of the
    solvents table.  ``densities`` (g/cm3 by name) fill or replace the densities
    on record.

    >>> from solvsel.data.catalog import load_catalog
    >>> [(c.name, c.mass_fraction, c.is_agent) for c in oil_phase_components(
    ...     load_catalog(), [("d-limonene", 70), ("sucrose acetate isobutyrate", 30)])]
    [('d-limonene', 0.7, False), ('sucrose acetate isobutyrate', 0.3, True)]
    """
    from .hlb import normalize_fractions

    dens = {k.strip().lower(): float(v) for k, v in (densities or {}).items()}
    w = normalize_fractions([a for _, a in oil], param="oil")
    comps = tuple(_component(cat, n, float(wi), dens) for (n, _), wi in zip(oil, w))
    names = [c.name for c in comps]
    if len(set(names)) != len(names):
        raise InputError(f"the oil phase names the same ingredient twice: {', '.join(names)}", param="oil",
                         value=", ".join(names), expected="each ingredient once")
    return comps


@dataclass(frozen=True)
class EmulsifierUse:
    """How much of an emulsifier the concentrate holds, from its use ratio to the oil phase."""

    name: str
    cas: str
    ratio_to_oil: float  # g of emulsifier per g of oil phase
    ratio_basis: str  # "given" or "table (usual use ratio)"
    in_concentrate: float  # mass fraction of the concentrate [-]
    level_ppm: float | None  # in the finished drink [mg/kg], None without a dilution
    usual_ratio: tuple[float, float] | None = None  # usual range for a hydrocolloid [g/g] (tables/hydrocolloids.csv)
    ratio_source: tuple[str, ...] = ()  # source ids of the usual ratio
    density: float | None = None  # of the dry hydrocolloid as it dissolves [g/cm3]

    def to_dict(self) -> dict:
        return asdict(self)


def emulsifier_use(cat, emulsifier: str, oil_in_concentrate: float, ratio: float | None = None,
                   oil_in_drink_ppm: float | None = None) -> EmulsifierUse:
    """An emulsifier at its usual use ratio to oil (or ``ratio``, g per g of oil phase): its share of the
    concentrate and its level in the drink.  A hydrocolloid (gum arabic, octenyl-succinate starch) takes its
    usual ratio and range from ``tables/hydrocolloids.csv``, any other from ``tables/emulsifiers.csv``.

    >>> from solvsel.data.catalog import load_catalog
    >>> u = emulsifier_use(load_catalog(), "gum arabic", 0.10, oil_in_drink_ppm=400)
    >>> u.ratio_to_oil, u.in_concentrate, u.level_ppm, u.usual_ratio
    (1.0, 0.1, 400.0, (1.0, 4.0))
    """
    from .hlb import _find

    row = _find(cat, "emulsifiers", emulsifier, "emulsifier")
    hydro = hydrocolloid_row(cat, row["name"])
    usual = row if hydro is None else hydro
    r = _num(ratio) if ratio is not None else _num(usual.get("use_ratio_to_oil"))
    if r is None or r <= 0:
        raise MissingDataError(f"no use ratio to oil on record for '{row['name']}': give it (g per g of oil phase)",
                               param="emulsifier_ratio", value=row["name"], expected="g per g of oil phase")
    share = r * float(oil_in_concentrate)
    if share >= 1.0 - float(oil_in_concentrate):
        raise InputError(f"{row['name']} at {r:g} g per g of oil leaves no water in the concentrate",
                         param="emulsifier_ratio", value=r)
    src = str(usual.get("ratio_source") or "")
    return EmulsifierUse(
        row["name"], str(row.get("cas") or ""), r, "given" if ratio is not None else "table (usual use ratio)", share,
        None if oil_in_drink_ppm is None else r * oil_in_drink_ppm,
        None if hydro is None else (float(hydro["ratio_min"]), float(hydro["ratio_max"])),
        tuple(x for x in src.split(";") if x), None if hydro is None else _num(hydro.get("density_g_cm3")))
