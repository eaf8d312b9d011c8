"""Will the drink stay clear?  Solubility of flavour components in a drink's water phase.

A flavour dosed into a clear drink brings oil-soluble components (terpenes,
aldehydes, esters) at a level in the drink; each stays dissolved only up to
its solubility in the drink's water phase.  The flavour's own co-solvents
(ethanol, propylene glycol, glycerol) raise that solubility by the log-linear
model of Yalkowsky and Roseman [1]_:

.. math::
    \\log_{10} S_{mix} = \\log_{10} S_w + \\sum_i \\sigma_i f_i

with :math:`f_i` the volume fraction of co-solvent *i* in the solute-free
solvent (water and co-solvents) and :math:`\\sigma_i` its cosolvency power for
the solute, from the correlation with the solute's octanol-water partition
coefficient [2]_, [3]_:

.. math::
    \\sigma_i = M_i \\log K_{ow} + N_i

At drink levels (about 0.1 % of co-solvent) the gain is a few percent; it
matters only in a concentrate.  The verdict compares the level with the
solubility per kilogram of drink: the ratio :math:`r = c / S`; ``clear`` for
:math:`r \\le 0.8` (a margin for the scatter of measured solubilities),
``haze risk`` for :math:`0.8 < r \\le 2` (at or just past saturation: a faint
haze or opalescence, depending on temperature and the other components) and
``separates`` beyond (enough excess oil for visible droplets, a ring or a film
on storage).  The thresholds are this module's choice, not a published rule.

References
----------
.. [1] Yalkowsky, S. H.; Roseman, T. J. Solubilization of drugs by
   cosolvents. In: Techniques of Solubilization of Drugs, Marcel Dekker, 1981,
   pp. 91-134 (source ``clarity_yalkowsky_roseman1981``).
.. [2] Li, A.; Yalkowsky, S. H. Predicting cosolvency. 1. Solubility ratio and
   solute log Kow. Ind. Eng. Chem. Res. 37, 4470-4475 (1998)
   (``clarity_li_yalkowsky1998``).
.. [3] Millard, J. W.; Alvarez-Nunez, F. A.; Yalkowsky, S. H. Solubilization
   by cosolvents: establishing useful constants for the log-linear model.
   Int. J. Pharm. 245, 153-166 (2002): the constants below, recalled
   (``clarity_millard2002_memory``: from memory).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from functools import lru_cache
from typing import Mapping

from ..errors import InputError

__all__ = [
    "COSOLVENT_POWER",
    "COSOLVENT_POWER_SOURCE",
    "CLEAR_BELOW",
    "SEPARATES_ABOVE",
    "NEGLIGIBLE_GAIN",
    "cosolvency_power",
    "log_linear_solubility",
    "volume_fractions",
    "clarity_verdict",
    "largest_clear_factor",
    "log_p",
    "ComponentClarity",
    "gain_text",
]

#: Cosolvency power :math:`\sigma = M \log K_{ow} + N` per volume fraction, by co-solvent CAS:
#: (name, M, N) (Millard, Alvarez-Nunez and Yalkowsky 2002, from memory).
COSOLVENT_POWER: dict[str, tuple[str, float, float]] = {
    "64-17-5": ("ethanol", 0.93, 0.40),
    "57-55-6": ("propylene glycol", 0.77, 0.58),
    "56-81-5": ("glycerol", 0.35, 0.28),
}
#: Source ids of :data:`COSOLVENT_POWER` and of the model (tables/sources.csv).
COSOLVENT_POWER_SOURCE = ("clarity_yalkowsky_roseman1981", "clarity_li_yalkowsky1998", "clarity_millard2002_memory")

#: Level / solubility at or below which the drink is judged clear [-].
CLEAR_BELOW = 0.8
#: Level / solubility above which the component is judged to separate [-].
SEPARATES_ABOVE = 2.0
#: A co-solvent gain in solubility below this fraction (10 %) is called negligible: it is far inside the
#: scatter of measured water solubilities.
NEGLIGIBLE_GAIN = 0.10


def cosolvency_power(log_kow: float, cosolvent_cas: str) -> float:
    """The log-linear cosolvency power :math:`\\sigma` of a co-solvent for a solute of ``log_kow``.

    >>> round(cosolvency_power(2.73, "64-17-5"), 3)  # toluene in ethanol: 0.93 x 2.73 + 0.40
    2.939
    """
    try:
        _, m, n = COSOLVENT_POWER[cosolvent_cas]
    except KeyError:
        raise InputError(f"no cosolvency constants for the co-solvent with CAS {cosolvent_cas}",
                         param="cosolvent", value=cosolvent_cas,
                         expected="one of " + ", ".join(v[0] for v in COSOLVENT_POWER.values())) from None
    return m * float(log_kow) + n


def log_linear_solubility(s_water: float, log_kow: float, fractions: Mapping[str, float]) -> float:
    """Solubility in a water/co-solvent mixture by the log-linear model, in the units of ``s_water``.

    ``fractions`` maps each co-solvent's CAS to its volume fraction in the solute-free solvent.

    >>> round(log_linear_solubility(526.0, 2.73, {"64-17-5": 0.5}), 0)  # toluene in 50 % v/v ethanol [mg/L]
    15504.0
    """
    exponent = sum(cosolvency_power(log_kow, cas) * float(f) for cas, f in fractions.items())
    return float(s_water) * 10.0 ** exponent


def volume_fractions(mass_fractions: Mapping[str, float], densities: Mapping[str, float], water_mass_fraction: float,
                     water_density: float) -> tuple[dict[str, float], float]:
    """Volume fractions of co-solvents in a water phase, and its volume [L per kg of the whole].

    ``mass_fractions`` are those of the co-solvents in the whole (a drink), ``water_mass_fraction`` that of
    water; densities in g/cm3 (= kg/L); volumes are taken as additive.

    >>> f, v = volume_fractions({"64-17-5": 0.001}, {"64-17-5": 0.7852}, 0.999, 0.99705)
    >>> round(f["64-17-5"], 6), round(v, 5)
    (0.001269, 1.00323)
    """
    vols = {cas: float(w) / float(densities[cas]) for cas, w in mass_fractions.items()}
    total = float(water_mass_fraction) / float(water_density) + sum(vols.values())
    if total <= 0:
        raise InputError("the drink has no water phase", param="brix")
    return {cas: v / total for cas, v in vols.items()}, total


def clarity_verdict(ratio: float) -> str:
    """``clear``, ``haze risk`` or ``separates`` for a level / solubility ratio (see the module docstring).

    >>> [clarity_verdict(r) for r in (0.5, 1.0, 3.0)]
    ['clear', 'haze risk', 'separates']
    """
    if ratio <= CLEAR_BELOW:
        return "clear"
    return "haze risk" if ratio <= SEPARATES_ABOVE else "separates"


def largest_clear_factor(level: float, clear_level: float, exponent: float, cap: float = 1e6) -> float | None:
    r"""The largest factor :math:`k` on the dose that keeps a component clear.

    The level grows as :math:`k c` and, with the co-solvents the same dose brings, the clear level as
    :math:`C\,10^{b k}` (``clear_level`` :math:`C` in the water without co-solvent, ``exponent`` :math:`b` at
    :math:`k = 1`); the first root of :math:`k c = C\,10^{b k}` is returned (None: clear up to ``cap``).

    >>> largest_clear_factor(20.0, 10.0, 0.0)
    0.5
    >>> round(largest_clear_factor(20.0, 10.0, 0.01), 4)  # a little more with a little co-solvent
    0.5059
    """
    if level <= 0:
        return None

    def g(k: float) -> float:  # log10 of level / clear level: no overflow, the same first root
        return math.log10(level * k / clear_level) - exponent * k

    lo, hi = 0.0, clear_level / level
    while g(hi) < 0:
        lo, hi = hi, hi * 2.0
        if hi > cap:
            return None
    for _ in range(80):  # bisection: g is concave, so the first sign change is the root wanted
        mid = 0.5 * (lo + hi)
        if g(mid) < 0:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


@lru_cache(maxsize=None)
def log_p(cas: str, smiles: str = "", as_cas: str = "") -> tuple[float, str]:
    """Octanol-water log P and its basis: the reference library ``chemicals`` for ``cas`` (or ``as_cas``, a
    substance with the same log P such as the racemate of an enantiomer), else RDKit's Crippen estimate from
    ``smiles``.

    >>> log_p("108-88-3")
    (2.73, 'chemicals library (108-88-3)')
    """
    from chemicals import logP

    for key in (cas, as_cas):
        if key:
            value = logP(key)
            if value is not None:
                return float(value), f"chemicals library ({key})"
    if not smiles:
        raise InputError(f"no log P for {cas or 'the component'}: the chemicals library has none and no SMILES is "
                         "on record", param="formula", value=cas)
    from .structure import _rd

    rd = _rd()  # MissingExtraError without RDKit
    mol = rd.Chem.MolFromSmiles(smiles)
    if mol is None:
        raise InputError(f"unreadable SMILES on record: {smiles}", param="formula", value=smiles)
    return round(float(rd.Descriptors.MolLogP(mol)), 2), "RDKit Crippen estimate"


@dataclass(frozen=True)
class ComponentClarity:
    """One oil-soluble component in the finished drink.

    Levels and solubilities are per kilogram of drink [mg/kg]; ``water_solubility_mg_L`` is the tabulated
    solubility in pure water [mg/L]; ``cosolvent_gain`` the factor by which the flavour's co-solvents raise it;
    ``ratio`` level / solubility; ``max_clear_level_mg_kg`` the largest level judged clear with the co-solvents
    of this dose; ``largest_clear_dose`` the dose (the first stage's unit) that keeps it clear (None: clear
    at any dose, or a first step in parts).
    """

    name: str
    cas: str
    from_ingredients: tuple[str, ...]
    level_mg_kg: float
    water_solubility_mg_L: float
    solubility_temp_C: float | None
    solubility_source: tuple[str, ...]
    log_p: float
    log_p_basis: str
    cosolvent_gain: float
    gain_negligible: bool
    solubility_mg_kg: float
    ratio: float
    verdict: str
    max_clear_level_mg_kg: float
    largest_clear_dose: float | None
    ways_out: tuple[dict, ...]

    def to_dict(self) -> dict:
        d = asdict(self)
        d["ways_out"] = [dict(w) for w in self.ways_out]
        return d


def gain_text(gain: float) -> str:
    """How the co-solvents change the solubility, in words.

    >>> gain_text(1.013)
    'the co-solvents raise it by 1.3 %: negligible'
    """
    if gain - 1.0 < NEGLIGIBLE_GAIN:
        return f"the co-solvents raise it by {100 * (gain - 1):.2g} %: negligible"
    return f"the co-solvents raise it {gain:.3g}-fold"
