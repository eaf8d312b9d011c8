"""Do two (or more) liquids form one phase?  Measured where known, predicted otherwise.

Measured binary pairs live in ``tables/miscibility.csv`` (each sourced, with
its temperature; a pair may have rows at several temperatures, see
:func:`measured_pair`): miscible in all proportions, partially miscible with
the mutual solubilities in wt %, or practically immiscible.  For a pair not in
the table, a prediction: where both liquids are single compounds whose
structures a UNIFAC parameter set covers, UNIFAC [3]_ [4]_ [5]_ from the
structures (:mod:`solvsel.science.unifac`; the liquid-liquid parameters of
Magnussen et al. first): the pair splits where the Gibbs energy of mixing has
two inflection points, and the two phases of equal activities give the mutual
solubilities.  Otherwise (vegetable oils and other mixtures, structures no set
covers) the Flory-Huggins model with an interaction parameter from the Hansen
parameters: the critical chi for the two molar volumes says whether the pair
splits at all, and the binodal (common tangent) gives the mutual solubilities;
it knows no specific association, so water and other strongly hydrogen-bonding
liquids are predicted poorly by it.  The answer always says its basis
(measured or predicted) and the model, and a measured pair always wins.

On top of the pairs: whether a blend is one phase at given fractions, a fast
array screen of many candidate blends for the optimiser, and a graph of the
liquids (networkx, imported when needed) to find co-solvents that bridge two
immiscible liquids and the largest sets of food-grade liquids that are all
mutually miscible.

References
----------
.. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*, 2nd ed.;
   CRC Press, 2007, ch. 2.
.. [2] Flory, P. J. *Principles of Polymer Chemistry*; Cornell University
   Press, 1953, ch. 12-13.
.. [3] Magnussen, T.; Rasmussen, P.; Fredenslund, A. UNIFAC parameter table for
   prediction of liquid-liquid equilibria. *Ind. Eng. Chem. Process Des. Dev.*
   20 (1981) 331-339.
.. [4] Fredenslund, A.; Jones, R. L.; Prausnitz, J. M. *AIChE J.* 21 (1975)
   1086-1099 (UNIFAC).
.. [5] Gmehling, J.; Li, J.; Schiller, M. *Ind. Eng. Chem. Res.* 32 (1993)
   178-193 (modified UNIFAC, Dortmund).
.. [6] Sorensen, J. M.; Arlt, W. *Liquid-Liquid Equilibrium Data Collection*,
   DECHEMA Chemistry Data Series V/1, 1979 (equal activities in both phases).
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import zipfile
from dataclasses import dataclass, replace
from functools import lru_cache
from itertools import combinations
from pathlib import Path
from typing import NamedTuple

import numpy as np

from ..data.catalog import cache_dir, write_cache_file
from ..data.catalog import number_or_none as _num
from . import hansen
from ..errors import InputError, MissingDataError, OutOfRangeError, SolvselError, UnknownNameError

__all__ = [
    "FULL",
    "PARTIAL",
    "NONE",
    "MEASURED_WINDOW_C",
    "IMMISCIBLE_BELOW_WT",
    "PairVerdict",
    "pair",
    "PairCheck",
    "BlendPhase",
    "blend_phase",
    "PairMatrix",
    "pair_matrix",
    "predict_pair",
    "graph",
    "Bridge",
    "bridges",
    "largest_miscible_sets",
    "cache_dir",
    "DISK_CACHE_FROM",
]

#: Status codes of :class:`PairMatrix` (and the table's ``one_phase`` values).
FULL, PARTIAL, NONE = 0, 1, 2
_TABLE_CODE = {"full": FULL, "partial": PARTIAL, "none": NONE}
_VERDICT = {FULL: "yes", PARTIAL: "partial", NONE: "no"}

#: A measured pair applies within this many degrees of its temperature [C];
#: farther away (e.g. methanol and hexane above their critical solution
#: temperature near 43 C) the prediction is used and the measured verdict noted.
MEASURED_WINDOW_C = 10.0

#: A predicted pair whose two predicted mutual solubilities are both below this
#: [wt %] is called immiscible ("no", decisive) rather than partially miscible.
#: Chosen on tables/miscibility.csv alone, as the level of 0.5, 1, 1.5, ... 5 wt %
#: whose "no" best matches the pairs measured "none" among those measured "none"
#: or "partial", with no pair measured miscible answered "no"
#: (``choose_immiscible_level`` in bench/bench_miscibility.py, on the prediction of
#: :func:`predict_pair`: UNIFAC where the structures allow, else Flory-Huggins from
#: HSP, whose solubilities run high for a small molecule in a large one; 3.5 wt %
#: when Flory-Huggins answered every pair).
IMMISCIBLE_BELOW_WT = 2.5


# ----------------------------------------------------------------------------- one pair


@dataclass(frozen=True)
class PairVerdict:
    """Whether two liquids form one phase, and on what basis.

    Attributes
    ----------
    liquids : tuple of str
        the two names (a, b) as in the catalog
    one_phase : str
        "yes" (miscible in all proportions), "partial" (one phase only inside
        ``window``) or "no" (practically immiscible)
    basis : str
        "measured" (a row of tables/miscibility.csv) or "predicted" (by UNIFAC or by
        Flory-Huggins from HSP: see ``model``)
    window : dict or None
        one-phase compositions of a partial (or predicted immiscible) pair:
        ``b_in_a_max`` and ``a_in_b_max`` as mass fractions (0..1; None where
        not tabulated), the same as volume fractions (``*_volume``), and
        ``one_phase_ranges``, the ranges of the mass fraction of liquid b that
        are one phase
    chi : float or None
        Flory-Huggins parameter from HSP, per molecule of liquid a [-]
    chi_critical : float or None
        critical chi for the two molar volumes [-]
    source : tuple of str
        source ids of a measured pair
    note : str
        anything the user should know (temperature of the data, caveats)
    temp_C : float
        temperature asked [C]
    cas : tuple of str
        the two CAS numbers ("" for a row without one)
    model : str
        what predicted a "predicted" verdict: a UNIFAC parameter set by name (from the two
        liquids' structures) or :data:`FLORY_HUGGINS`; "" for a measured one
    contradicted : bool
        a predicted verdict for a pair the table has measured at another temperature, where
        the same prediction at the measured temperature disagrees with the measurement
        (miscible against not): the model is not to be trusted for this pair
    """

    liquids: tuple[str, str]
    one_phase: str
    basis: str
    window: dict | None
    chi: float | None
    chi_critical: float | None
    source: tuple[str, ...] = ()
    note: str = ""
    temp_C: float = 25.0
    cas: tuple[str, str] = ("", "")
    model: str = ""
    contradicted: bool = False

    @property
    def code(self) -> int:
        return {"yes": FULL, "partial": PARTIAL, "no": NONE}[self.one_phase]

    def to_dict(self) -> dict:
        return {
            "liquids": list(self.liquids),
            "cas": list(self.cas),
            "one_phase": self.one_phase,
            "basis": self.basis,
            "window": self.window,
            "chi": self.chi,
            "chi_critical": self.chi_critical,
            "source": list(self.source),
            "note": self.note,
            "temp_C": self.temp_C,
            "model": self.model,
            "contradicted": self.contradicted,
        }


def _solvent(cat, name):
    if hasattr(name, "dD") and hasattr(name, "vm_cm3_mol"):
        return name
    return cat.solvent(name)


def _mass_from_volume(phi, rho_solute, rho_host):
    """Fraction of the solute in a binary, volume -> mass (additive volumes)."""
    if phi is None or rho_solute is None or rho_host is None:
        return None
    m = phi * rho_solute
    return m / (m + (1.0 - phi) * rho_host)


def _volume_from_mass(w, rho_solute, rho_host):
    if w is None or rho_solute is None or rho_host is None:
        return None
    v = w / rho_solute
    return v / (v + (1.0 - w) / rho_host)


def _window(b_in_a, a_in_b, rho_a, rho_b, basis_kind):
    """Window dict from mass fractions (None = not tabulated)."""
    ranges = []
    lo = b_in_a if b_in_a is not None else 0.0
    hi = a_in_b if a_in_b is not None else 0.0
    if lo + hi >= 1.0:  # the gap closed (can only happen with odd data)
        ranges = [[0.0, 1.0]]
    else:
        ranges = [[0.0, lo], [1.0 - hi, 1.0]]
    return {
        "fraction": "mass fraction of liquid b",
        "b_in_a_max": b_in_a,
        "a_in_b_max": a_in_b,
        "b_in_a_max_volume": _volume_from_mass(b_in_a, rho_b, rho_a),
        "a_in_b_max_volume": _volume_from_mass(a_in_b, rho_a, rho_b),
        "one_phase_ranges": ranges,
        "basis": basis_kind,
    }


@lru_cache(maxsize=64)
def _measured_index(cat_id: int, cat_ref):
    cat = cat_ref()
    try:
        rows = cat.rows("miscibility")
    except SolvselError as exc:  # a missing or malformed table is a data error for the user
        raise MissingDataError(f"the measured miscibility table could not be read: {exc}") from exc
    index = {}
    for row in rows:
        try:
            a = cat.solvent(row["liquid_a"], library=False)
            b = cat.solvent(row["liquid_b"], library=False)
        except UnknownNameError:  # a pair naming a liquid not in this catalog is skipped
            continue
        index.setdefault(frozenset((a.name, b.name)), []).append((a.name, row))
    for rows in index.values():  # measurements of one pair at several temperatures, coldest first
        rows.sort(key=lambda hit: _num(hit[1].get("temp_C")) or 25.0)
    return index


class _Ref:
    """Hashable handle on a catalog for the caches (by identity)."""

    def __init__(self, cat):
        self.cat = cat

    def __call__(self):
        return self.cat

    def __hash__(self):
        return id(self.cat)

    def __eq__(self, other):
        return isinstance(other, _Ref) and other.cat is self.cat


def _oriented(first: str, row: dict, name_a: str) -> dict:
    """A copy of a table row with ``name_a`` as liquid a."""
    row = dict(row)
    if first != name_a:
        row["liquid_a"], row["liquid_b"] = row["liquid_b"], row["liquid_a"]
        row["cas_a"], row["cas_b"] = row.get("cas_b"), row.get("cas_a")
        row["b_in_a_wt"], row["a_in_b_wt"] = row.get("a_in_b_wt"), row.get("b_in_a_wt")
    return row


def _window_known(row: dict) -> bool:
    return row["one_phase"] == "partial" and all(_num(row.get(k)) is not None for k in ("b_in_a_wt", "a_in_b_wt"))


def _between(lo: dict, hi: dict, temp_C: float) -> dict:
    """The row at ``temp_C`` between two partial rows of one pair: each solubility linear in temperature."""
    t0, t1 = _num(lo["temp_C"]), _num(hi["temp_C"])
    w = (temp_C - t0) / (t1 - t0)
    row = dict(lo)
    for k in ("b_in_a_wt", "a_in_b_wt"):
        row[k] = (1.0 - w) * _num(lo[k]) + w * _num(hi[k])
    sources = dict.fromkeys(s for r in (lo, hi) for s in str(r.get("source") or "").split(";") if s)
    row.update(temp_C=temp_C, source=";".join(sources),
               note=f"interpolated linearly between the measurements at {t0:g} and {t1:g} C")
    return row


def measured_pair(cat, a, b, temp_C: float | None = None):
    """The table row of a measured pair (oriented so that ``a`` is first), or None.

    A pair may be measured at several temperatures (one row each): the row
    nearest ``temp_C`` (default 25 C; the colder of two equally near) is
    returned, except between two rows of a partly miscible pair with both
    solubilities tabulated, where each solubility is interpolated linearly in
    temperature (the row then carries ``temp_C`` and both rows' sources).
    """
    sa, sb = _solvent(cat, a), _solvent(cat, b)
    hits = _measured_index(id(cat), _Ref(cat)).get(frozenset((sa.name, sb.name)))
    if not hits:
        return None
    rows = [_oriented(first, row, sa.name) for first, row in hits]
    t = 25.0 if temp_C is None else float(temp_C)
    temps = [_num(r.get("temp_C")) or 25.0 for r in rows]
    for k in range(len(rows) - 1):
        if temps[k] < t < temps[k + 1] and _window_known(rows[k]) and _window_known(rows[k + 1]):
            return _between(rows[k], rows[k + 1], t)
    return rows[min(range(len(rows)), key=lambda k: (abs(temps[k] - t), temps[k]))]


def _liquid_at(s, temp_C):
    """HSP and molar volume of one liquid at ``temp_C`` (Hansen-Beerbower), with a note ("" at 25 C)."""
    from .target import solvent_at

    if abs(temp_C - 25.0) < 1e-9:
        return s.hsp, float(s.vm_cm3_mol), ""
    try:
        h, v, note = solvent_at(s, temp_C)
        return h, v, f"{s.name}: {note}" if note else ""
    except (InputError, MissingDataError) as exc:
        return s.hsp, float(s.vm_cm3_mol), f"{s.name}: HSP kept at 25 C ({exc})"


def _at_temperature(sa, sb, temp_C):
    """HSP and molar volumes of two liquids at ``temp_C`` (Hansen-Beerbower), with a note."""
    (ha, va, na), (hb, vb, nb) = _liquid_at(sa, temp_C), _liquid_at(sb, temp_C)
    if abs(temp_C - 25.0) < 1e-9:
        return ha, va, hb, vb, ""
    notes = "; ".join(n for n in (na, nb) if n)
    return ha, va, hb, vb, notes or f"HSP shifted to {temp_C:g} C (Hansen and Beerbower 1971)"


def _split_volumes(ha, va, hb, vb, temp_C):
    """Binodal of a pair in one fixed orientation, whatever the order the pair was asked in.

    The liquid of smaller molar volume is the lattice site and liquid 1 of
    :func:`solvsel.science.hansen.binodal` (ties by HSP), so that the tiny
    solubility (that of the larger molecule in the smaller) is the one held
    near 0, where a float keeps it, not near 1, where it would round away.

    Returns
    -------
    (Binodal, b_in_a, a_in_b)
        the binodal of the fixed orientation and the two solubilities as
        volume fractions (nan when the pair does not split)
    """
    flip = (vb, tuple(hb)) < (va, tuple(ha))
    h1, v1, h2, v2 = (hb, vb, ha, va) if flip else (ha, va, hb, vb)
    chi = float(hansen.chi_flory_huggins(h1, h2, v1, temp_C))
    b = hansen.binodal(chi, 1.0, v2 / v1)
    two_in_one, one_in_two = b.phi_a, 1.0 - b.phi_b
    return (b, one_in_two, two_in_one) if flip else (b, two_in_one, one_in_two)


# ----------------------------------------------------------------------------- UNIFAC prediction

#: UNIFAC parameter sets tried in turn for a predicted pair: the first that covers both liquids'
#: structures (groups and interaction parameters) gives the verdict; with none, Flory-Huggins from
#: HSP.  The order was chosen on tables/miscibility.csv alone (``choose_model_order`` in
#: bench/bench_miscibility.py: the order whose "miscible in all proportions or not" matches most
#: measured pairs), never on the published chart of bench/published_miscibility.py.
UNIFAC_ORDER = ("lle", "original", "dortmund")
#: Name of the prediction by Flory-Huggins from HSP (``PairVerdict.model``).
FLORY_HUGGINS = "Flory-Huggins from HSP"


@lru_cache(maxsize=1024)
def _smiles_of(cas: str) -> str | None:
    """SMILES of a pure liquid from the reference library ``chemicals`` by CAS, or None (a mixture
    such as a vegetable oil, a row without CAS, or a compound the library does not hold)."""
    if not cas:
        return None
    from chemicals.identifiers import search_chemical

    try:
        return search_chemical(cas).smiles or None
    except ValueError:  # not a single compound of the library
        return None


def _identity(s) -> tuple[str, float] | None:
    """(CAS, molar mass [g/mol]) of a liquid record, or None without them (a blend of other rows)."""
    cas = getattr(s, "cas", "") or ""
    mw = _num(getattr(s, "mw_g_mol", None))
    if not cas or mw is None or not mw > 0:
        return None
    return cas, float(mw)


@lru_cache(maxsize=1)
def _binodal_grid() -> np.ndarray:
    """Mole fractions of liquid 1 where the Gibbs energy of mixing is sampled: 1e-9 to 0.5 on a log
    scale from both ends (tiny solubilities, water in an alkane) and every 0.02 between (made on
    the first UNIFAC pair solved: a run that reads every answer from the cache never needs it)."""
    ends = np.logspace(-9.0, math.log10(0.5), 40)
    grid = np.unique(np.concatenate([ends, 1.0 - ends, np.linspace(0.02, 0.98, 49)]))
    grid.setflags(write=False)
    return grid


def _widest_hull_gap(x: np.ndarray, g: np.ndarray) -> tuple[int, int] | None:
    """The widest stretch of ``x`` that the lower convex hull of (x, g) bridges over points lying above
    it (a miscibility gap: the hull's segment is the common tangent), as grid indices, or None."""
    hull: list[int] = []
    for k in range(len(x)):
        while len(hull) >= 2:
            i, j = hull[-2], hull[-1]
            if (g[j] - g[i]) * (x[k] - x[i]) >= (g[k] - g[i]) * (x[j] - x[i]):
                hull.pop()
            else:
                break
        hull.append(k)
    best = None
    for i, j in zip(hull[:-1], hull[1:]):
        if j - i < 2:
            continue
        chord = g[i] + (g[j] - g[i]) * (x[i + 1:j] - x[i]) / (x[j] - x[i])
        if (g[i + 1:j] - chord).max() > 1e-9 and (best is None or x[j] - x[i] > x[best[1]] - x[best[0]]):
            best = (i, j)
    return best


def _ln_activities(ln_gamma, u: np.ndarray) -> np.ndarray:
    """ln a of both liquids (M, 2) where the logit of liquid 1's mole fraction is ``u`` (M,) (both
    mole fractions kept off 0 and 1 however far out u goes)."""
    ln_x = -np.logaddexp(0.0, np.stack([-u, u], axis=1))
    return ln_x + ln_gamma(np.exp(ln_x))


def _equal_activities(ln_gamma, x_lo: float, x_hi: float) -> tuple[float, float] | None:
    """The two liquid phases' mole fractions of liquid 1 with equal activities of both liquids,
    by Newton's method on their logits from a first guess; None when it does not converge."""
    u = np.log([x_lo / (1.0 - x_lo), x_hi / (1.0 - x_hi)])
    h = 1e-6
    for _ in range(40):
        la = _ln_activities(ln_gamma, np.array([u, u + (h, 0.0), u + (0.0, h)]).reshape(-1)).reshape(3, 2, 2)
        f = la[:, 0, :] - la[:, 1, :]                      # (3, 2): residuals at u, u + h e1, u + h e2
        jac = np.stack([(f[1] - f[0]) / h, (f[2] - f[0]) / h], axis=1)
        try:
            step = np.clip(np.linalg.solve(jac, -f[0]), -2.0, 2.0)
        except np.linalg.LinAlgError:
            return None
        u = u + step
        if np.abs(step).max() < 1e-10:
            break
    x_lo, x_hi = sorted(1.0 / (1.0 + np.exp(-u)))
    if not (x_hi - x_lo > 1e-6 and np.abs(f[0]).max() < 1e-6):
        return None
    return float(x_lo), float(x_hi)


def activity_binodal(ln_gamma) -> tuple[float, float] | None:
    r"""Liquid-liquid split of a binary from its activity coefficients, or None (one phase).

    The Gibbs energy of mixing :math:`g/RT = \sum_i x_i \ln(x_i\gamma_i)` is sampled from 1e-9 to
    1 - 1e-9; where its lower convex hull bridges a stretch (g has two inflection points), the two
    liquids split, and the two phases are solved from equal activities of both liquids
    (the condition of equilibrium [6]_; the hull's ends are the first guess and the answer when
    Newton's method does not converge).

    Parameters
    ----------
    ln_gamma : callable
        mole fractions (M, 2) -> ln gamma (M, 2)

    Returns
    -------
    (x_lo, x_hi) or None
        mole fractions of liquid 1 in the phase poor in it and in the phase rich in it
    """
    x = _binodal_grid()
    la = _ln_activities(ln_gamma, np.log(x / (1.0 - x)))
    g = x * la[:, 0] + (1.0 - x) * la[:, 1]
    chord = g[:-2] + (g[2:] - g[:-2]) * (x[1:-1] - x[:-2]) / (x[2:] - x[:-2])
    if (g[1:-1] <= chord).all():  # convex at every point of the grid: one phase (most pairs)
        return None
    gap = _widest_hull_gap(x, g)
    if gap is None:
        return None
    first = (float(x[gap[0]]), float(x[gap[1]]))
    return _equal_activities(ln_gamma, *first) or first


def _mass_fraction(x: float, mw_solute: float, mw_host: float) -> float:
    return x * mw_solute / (x * mw_solute + (1.0 - x) * mw_host)


def _unifac_pair(sa, sb, temp_C: float, models: tuple[str, ...] = UNIFAC_ORDER):
    """(model, b in a, a in b) by UNIFAC for two liquid records, mass fractions (None, None when one
    phase); None when no model of ``models`` covers both structures."""
    a, b = _identity(sa), _identity(sb)
    if a is None or b is None:
        return None
    flip = b < a  # one fixed orientation: the same answer whichever liquid is named first
    first, second = (b, a) if flip else (a, b)
    got = _unifac_oriented(first, second, float(temp_C), tuple(models))
    if got is None:
        return None
    model, two_in_one, one_in_two = got
    return (model, one_in_two, two_in_one) if flip else got


def _unifac_oriented(a: tuple[str, float], b: tuple[str, float], temp_C: float, models: tuple[str, ...]):
    """The answer of :func:`_unifac_solve`, solved once per pair, temperature and order of parameter sets
    (kept in memory and, with a cache folder, on disk)."""
    key, (name, kept) = json.dumps([a[0], a[1], b[0], b[1], list(models)]), _disk_pairs(temp_C)
    if key in kept:
        return None if kept[key] is None else tuple(kept[key])
    got = _unifac_solve(a, b, temp_C, models)
    kept[key] = list(got) if got is not None else None
    _DISK_PAIRS_NEW.add(name)
    return got


#: Subgroups of a parameter set whose value in ``thermo`` is wrong, skipped (the next set is tried).
#: To merge into solvsel/science/unifac.py (and drop here): ``thermo.unifac.LLEUFSG[30]`` (FCH2O,
#: the ring ether of tetrahydrofuran and 1,4-dioxane) has R = 9183, evidently 0.9183 (the R of the
#: original UNIFAC's ring-ether subgroup ``UFSG[27]``, whose pattern it takes; not checked against
#: the paper); with 9183 every pair with those two liquids is a split at 1e-9.
_WRONG_IN_THERMO = {"lle": frozenset({30})}


def _unifac_solve(a: tuple[str, float], b: tuple[str, float], temp_C: float, models: tuple[str, ...]):
    """(model, b in a, a in b) of two liquids given as (CAS, molar mass), or None (see :func:`_unifac_pair`)."""
    from . import unifac

    smiles = (_smiles_of(a[0]), _smiles_of(b[0]))
    if None in smiles:
        return None
    for model in models:
        try:
            gl = [unifac.groups(smiles[0], model), unifac.groups(smiles[1], model)]
            unifac.ln_gammas(gl, [0.5, 0.5], temp_C, model)  # refuses a mixture without parameters
        except MissingDataError:  # a group or an interaction parameter the model does not have
            continue
        except ImportError:  # thermo or RDKit left out of an install (both are dependencies): Flory-Huggins
            return None
        if _WRONG_IN_THERMO.get(model, frozenset()) & (set(gl[0]) | set(gl[1])):
            continue
        split = activity_binodal(lambda x, gl=gl, model=model: unifac.ln_gammas(gl, x, temp_C, model))
        if split is None:
            return model, None, None
        x_lo, x_hi = split
        return model, _mass_fraction(1.0 - x_hi, b[1], a[1]), _mass_fraction(x_lo, a[1], b[1])
    return None


# UNIFAC answers already solved, kept in memory and in cache_dir() beside the pair matrices, one
# JSON file per version of the code and temperature: {file: {pair key: [model, b in a, a in b] or
# None}}, and the files with answers added since they were last written.
_DISK_PAIRS: dict[str, dict] = {}
_DISK_PAIRS_NEW: set[str] = set()


@lru_cache(maxsize=1)
def _unifac_code_key() -> str:
    """SHA-256 of what a UNIFAC answer depends on besides the pair: the code and ``thermo``'s version."""
    from ..data.catalog import installed_stamp

    here = Path(__file__).resolve().parent
    digest = hashlib.sha256(str(installed_stamp("thermo")).encode())
    for module in ("miscibility.py", "unifac.py"):
        digest.update((here / module).read_bytes())
    return digest.hexdigest()[:32]


@lru_cache(maxsize=8)
def _cache_folder(*environment) -> Path | None:
    """:func:`cache_dir`, once per value of the ``environment`` variables that decide it."""
    return cache_dir()


def _unifac_file(temp_C: float) -> Path | None:
    folder = _cache_folder(os.environ.get("SOLVSEL_CACHE_DIR"), os.environ.get("XDG_CACHE_HOME"), os.environ.get("HOME"))
    return None if folder is None else folder / f"unifac_pairs_{_unifac_code_key()}_{float(temp_C)!r}C.json"


def _read_pairs(path: Path | None) -> dict:
    """The answers kept in ``path``; what is absent, unreadable or malformed is left to recompute."""
    from .unifac import MODELS

    try:
        data = json.loads(path.read_text(encoding="utf-8")) if path is not None else {}
    except (OSError, ValueError):
        return {}
    if not isinstance(data, dict):
        return {}
    return {k: v for k, v in data.items()
            if v is None or (isinstance(v, list) and len(v) == 3 and v[0] in MODELS)}


def _disk_pairs(temp_C: float) -> tuple[str, dict]:
    """(file name, answers) of the UNIFAC answers at ``temp_C`` (the name "None" without a cache folder)."""
    path = _unifac_file(temp_C)
    if str(path) not in _DISK_PAIRS:
        _DISK_PAIRS[str(path)] = _read_pairs(path)
    return str(path), _DISK_PAIRS[str(path)]


def _save_unifac_pairs() -> None:
    """Write the UNIFAC answers solved in this process to the cache folder (nothing without one); only the
    newest :data:`DISK_CACHE_KEEP` files of answers stay."""
    for name in sorted(_DISK_PAIRS_NEW):
        if name == "None":
            continue
        path = Path(name)
        answers = {**_read_pairs(path), **_DISK_PAIRS[name]}
        if write_cache_file(path, lambda tmp, a=answers: tmp.write_text(json.dumps(a), encoding="utf-8")):
            _keep_newest(path.parent, "unifac_pairs_*.json")
    _DISK_PAIRS_NEW.clear()


def predict_pair(sa, sb, temp_C: float = 25.0, models: tuple[str, ...] = UNIFAC_ORDER) -> PairVerdict:
    r"""Predicted miscibility of two liquid records (no table look-up): UNIFAC from their
    structures where a parameter set of ``models`` covers both, else Flory-Huggins from HSP.

    UNIFAC (``model`` names the parameter set; :data:`UNIFAC_ORDER`): the structures come from the
    reference library ``chemicals`` by CAS, the groups and activity coefficients from
    :mod:`solvsel.science.unifac`, and the split from :func:`activity_binodal` (two inflection
    points of the Gibbs energy of mixing, phases of equal activities), converted to mass fractions
    with the molar masses.  A vegetable oil or another mixture, a row without CAS, or a structure
    the parameter sets lack keeps Flory-Huggins from HSP:

    .. math::
        \chi = \frac{V_a R_a^2}{4RT},\qquad
        \chi_c = \tfrac12\left(1 + \sqrt{V_a/V_b}\right)^2

    miscible in all proportions when :math:`\chi \le \chi_c`; otherwise the binodal of
    :func:`solvsel.science.hansen.binodal` gives the mutual solubilities (solved with the smaller
    molecule as the lattice site).  Either way the answer does not depend on the order of the two
    liquids, chi and chi_critical are Flory-Huggins' (for comparison), and a pair that splits is
    "no" when both mutual solubilities are below :data:`IMMISCIBLE_BELOW_WT`.

    Parameters
    ----------
    sa, sb : Solvent
        records with dD, dP, dH [MPa^0.5], vm_cm3_mol [cm^3/mol], density_g_cm3 [g/cm^3],
        mw_g_mol [g/mol] and cas
    temp_C : float
        temperature [C]; away from 25 C both liquids' HSP and molar volumes
        are shifted first (:func:`solvsel.science.target.solvent_at`)
    models : tuple of str
        UNIFAC parameter sets to try, in order ("lle", "original", "dortmund"); () for
        Flory-Huggins from HSP alone

    Examples
    --------
    Ethylene glycol and sunflower oil (a mixture: Flory-Huggins from HSP) split whichever is
    named first (the glycol's solubility in the oil is the same both ways); water and n-hexane
    split by UNIFAC-LLE, decisively:

    >>> from solvsel.data.catalog import load_catalog
    >>> cat = load_catalog()
    >>> g, o = cat.solvent("ethylene glycol"), cat.solvent("sunflower oil")
    >>> ab, ba = predict_pair(g, o), predict_pair(o, g)
    >>> ab.window["a_in_b_max"] == ba.window["b_in_a_max"], ab.model
    (True, 'Flory-Huggins from HSP')
    >>> v = predict_pair(cat.solvent("water"), cat.solvent("n-hexane"))
    >>> v.one_phase, v.model
    ('no', 'UNIFAC-LLE (Magnussen 1981)')
    """
    ha, va, hb, vb, shift_note = _at_temperature(sa, sb, temp_C)
    chi = float(hansen.chi_flory_huggins(ha, hb, va, temp_C))
    chic = float(hansen.chi_critical(va, vb))
    by_groups = _unifac_pair(sa, sb, temp_C, tuple(models)) if models else None
    if by_groups is not None:
        return _unifac_verdict(sa, sb, by_groups, chi, chic, temp_C)
    return _flory_huggins_verdict(sa, sb, (ha, va, hb, vb, shift_note), chi, chic, temp_C)


def _verdict_of(b_in_a: float, a_in_b: float) -> str:
    """"no" when both mutual solubilities [mass fraction] are below :data:`IMMISCIBLE_BELOW_WT`, else "partial"."""
    return "no" if max(b_in_a, a_in_b) * 100.0 < IMMISCIBLE_BELOW_WT else "partial"


def _unifac_verdict(sa, sb, by_groups, chi: float, chic: float, temp_C: float) -> PairVerdict:
    from .unifac import model_label

    model, b_in_a, a_in_b = by_groups
    label = model_label(model)
    names, cas = (sa.name, sb.name), (sa.cas or "", sb.cas or "")
    note = f"predicted by {label} from the two liquids' structures"
    if b_in_a is None:
        window = {"fraction": "mass fraction of liquid b", "one_phase_ranges": [[0.0, 1.0]], "basis": "predicted"}
        return PairVerdict(names, "yes", "predicted", window, chi, chic, (), note, temp_C, cas, label)
    window = _window(b_in_a, a_in_b, _num(sa.density_g_cm3), _num(sb.density_g_cm3), "predicted")
    return PairVerdict(names, _verdict_of(b_in_a, a_in_b), "predicted", window, chi, chic, (), note, temp_C, cas,
                       label)


def _flory_huggins_verdict(sa, sb, shifted, chi: float, chic: float, temp_C: float) -> PairVerdict:
    ha, va, hb, vb, shift_note = shifted
    b, phi_ba, phi_ab = _split_volumes(ha, va, hb, vb, temp_C)
    names = (sa.name, sb.name)
    cas = (sa.cas or "", sb.cas or "")
    why = "a mixture or a structure no UNIFAC parameter set covers"
    base_note = (f"predicted by Flory-Huggins from HSP ({why}); hydrogen-bonding liquids (water, glycols) are "
                 "poorly predicted")
    if shift_note:
        base_note += "; " + shift_note
    if not b.split:
        window = {"fraction": "mass fraction of liquid b", "one_phase_ranges": [[0.0, 1.0]], "basis": "predicted"}
        return PairVerdict(names, "yes", "predicted", window, chi, chic, (), base_note, temp_C, cas, FLORY_HUGGINS)
    if not (math.isfinite(b.phi_a) and 0.0 < b.phi_a < b.phi_b < 1.0):
        return PairVerdict(names, "partial", "predicted", None, chi, chic, (),
                           base_note + "; the binodal did not converge, window unknown", temp_C, cas, FLORY_HUGGINS)
    if not b.success:
        base_note += "; just above the critical point, the window is approximate"
    rho_a, rho_b = _num(sa.density_g_cm3), _num(sb.density_g_cm3)
    b_in_a = _mass_from_volume(phi_ba, rho_b, rho_a)
    a_in_b = _mass_from_volume(phi_ab, rho_a, rho_b)
    if b_in_a is None:  # no densities: report volume fractions as they are
        b_in_a, a_in_b = phi_ba, phi_ab
    w = _window(b_in_a, a_in_b, rho_a, rho_b, "predicted")
    w["b_in_a_max_volume"], w["a_in_b_max_volume"] = phi_ba, phi_ab
    return PairVerdict(names, _verdict_of(b_in_a, a_in_b), "predicted", w, chi, chic, (), base_note, temp_C, cas,
                       FLORY_HUGGINS)


def pair(cat, a, b, temp_C: float = 25.0) -> PairVerdict:
    """Do liquids ``a`` and ``b`` form one phase at ``temp_C``?

    A measured pair of tables/miscibility.csv within :data:`MEASURED_WINDOW_C`
    of its temperature wins; otherwise the prediction of :func:`predict_pair`
    is given, labelled "predicted" (UNIFAC from the structures, or
    Flory-Huggins from HSP: ``model`` says which).  Flory-Huggins' chi and
    chi_critical are reported in every case (for a measured pair they show how
    far that model is from the observation).

    Parameters
    ----------
    cat : Catalog
    a, b : str or Solvent
        names, synonyms or CAS numbers (matched forgivingly), or records
    temp_C : float
        temperature [C]

    Examples
    --------
    d-Limonene and ethanol mix in all proportions (common practice), although
    the model alone predicts a split (chi 4.7 against a critical 3.6):

    >>> from solvsel.data.catalog import load_catalog
    >>> v = pair(load_catalog(), "d-limonene", "ethanol")
    >>> v.one_phase, v.basis, v.chi > v.chi_critical
    ('yes', 'measured', True)
    """
    verdict = _pair(cat, a, b, temp_C)
    _save_unifac_pairs()  # a UNIFAC answer solved here is kept for the next process
    return verdict


def _pair(cat, a, b, temp_C: float) -> PairVerdict:
    """:func:`pair` without writing the UNIFAC answers solved to the cache folder."""
    if not (isinstance(temp_C, (int, float)) and math.isfinite(temp_C)):
        raise InputError(f"expected a temperature in C, got {temp_C}", param="temp_C")
    if not -80.0 <= temp_C <= 150.0:
        raise OutOfRangeError(f"{temp_C:g} C is outside -80 to 150 C, where neither the table nor the model applies", param="temp_C")
    sa, sb = _solvent(cat, a), _solvent(cat, b)
    if sa.name == sb.name:
        return PairVerdict((sa.name, sb.name), "yes", "measured", {"one_phase_ranges": [[0.0, 1.0]]}, 0.0, None, (), "the same liquid", temp_C, (sa.cas, sb.cas))
    predicted = predict_pair(sa, sb, temp_C)
    row = measured_pair(cat, sa, sb, temp_C)
    if row is None:
        return predicted
    t_row = _num(row.get("temp_C")) or 25.0
    src = tuple(s for s in str(row.get("source") or "").split(";") if s)
    code = _TABLE_CODE[row["one_phase"]]
    if abs(temp_C - t_row) > MEASURED_WINDOW_C:
        note = (
            f"{predicted.note}; the table has a measurement at {t_row:g} C "
            f"({_VERDICT[code]}), too far from {temp_C:g} C to apply"
        )
        if row.get("note"):
            note += f" (table note: {row['note']})"
        at_row = predict_pair(sa, sb, t_row)
        contradicted = (code == FULL) != (at_row.one_phase == "yes")
        if contradicted:
            note += (f"; at {t_row:g} C the same prediction says '{at_row.one_phase}' against the measured "
                     f"'{_VERDICT[code]}': it is not reliable for this pair, check at the bench")
        return replace(predicted, source=src, note=note, contradicted=contradicted)
    window = None
    rho_a, rho_b = _num(sa.density_g_cm3), _num(sb.density_g_cm3)
    if code == PARTIAL:
        bia, aib = _num(row.get("b_in_a_wt")), _num(row.get("a_in_b_wt"))
        window = _window(None if bia is None else bia / 100.0, None if aib is None else aib / 100.0, rho_a, rho_b, "measured")
    elif code == FULL:
        window = {"fraction": "mass fraction of liquid b", "one_phase_ranges": [[0.0, 1.0]], "basis": "measured"}
    note = f"measured at {t_row:g} C"
    if row.get("note"):
        note += f"; {row['note']}"
    if code == PARTIAL and window and (window["b_in_a_max"] is None or window["a_in_b_max"] is None):
        note += "; a solubility not tabulated is taken as zero in blend checks"
    if (code == FULL) != (predicted.one_phase == "yes"):
        note += f"; the prediction alone ({predicted.model}) would say '{predicted.one_phase}'"
    return PairVerdict((sa.name, sb.name), _VERDICT[code], "measured", window, predicted.chi, predicted.chi_critical, src, note, temp_C, (sa.cas or "", sb.cas or ""))


# ----------------------------------------------------------------------------- blends


@dataclass(frozen=True)
class PairCheck:
    """One pair of a blend, checked at its proportion in the blend."""

    a: str
    b: str
    one_phase: str
    basis: str
    fraction_b: float  # volume fraction of b in the pair, b / (a + b)
    ok: bool
    reason: str

    def to_dict(self) -> dict:
        return {"a": self.a, "b": self.b, "one_phase": self.one_phase, "basis": self.basis,
                "fraction_b": self.fraction_b, "ok": self.ok, "reason": self.reason}


@dataclass(frozen=True)
class BlendPhase:
    """Whether a blend is one phase at its fractions (pairwise test)."""

    liquids: tuple[str, ...]
    volume_fractions: tuple[float, ...]
    one_phase: bool
    basis: str
    pairs: tuple[PairCheck, ...]
    reason: str
    note: str

    def to_dict(self) -> dict:
        return {
            "liquids": list(self.liquids),
            "volume_fractions": list(self.volume_fractions),
            "one_phase": self.one_phase,
            "basis": self.basis,
            "pairs": [p.to_dict() for p in self.pairs],
            "reason": self.reason,
            "note": self.note,
        }


def _pair_ok(fa, fb, lim_b_in_a, lim_a_in_b):
    """Is a pair one phase at volume amounts fa, fb given its volume-fraction limits?"""
    tot = fa + fb
    if tot <= 0:
        return True, float("nan")
    r = fb / tot
    return (r <= lim_b_in_a + 1e-12) or (1.0 - r <= lim_a_in_b + 1e-12), r


def _limits_from_verdict(v: PairVerdict) -> tuple[float, float]:
    """(max volume fraction of b in a, of a in b) for blend checks."""
    if v.one_phase == "yes":
        return 1.0, 1.0
    w = v.window or {}
    bia = w.get("b_in_a_max_volume")
    aib = w.get("a_in_b_max_volume")
    if bia is None and w.get("b_in_a_max") is not None:
        bia = w["b_in_a_max"]  # no densities: mass ~ volume
    if aib is None and w.get("a_in_b_max") is not None:
        aib = w["a_in_b_max"]
    return float(bia or 0.0), float(aib or 0.0)


class _PairFacts(NamedTuple):
    """What the blend checks use of a pair's verdict (:class:`PairVerdict`, or a row of a :class:`PairMatrix`)."""

    one_phase: str  # "yes", "partial" or "no"
    basis: str  # "measured" or "predicted"
    limits: tuple[float, float]  # (max volume fraction of b in a, of a in b): :func:`_limits_from_verdict`
    flory_huggins: bool  # Flory-Huggins' own prediction from HSP (neither measured nor UNIFAC)


def _pair_facts(cat, recs, temp_C: float, matrix: PairMatrix | None) -> dict[tuple[int, int], _PairFacts]:
    """The facts of every pair (i, j), i < j, of the liquid records ``recs``: read from ``matrix``
    where given (it must hold the liquids, at ``temp_C``), else from :func:`pair`."""
    out = {}
    if matrix is None:
        for i, j in combinations(range(len(recs)), 2):
            v = pair(cat, recs[i], recs[j], temp_C)
            out[(i, j)] = _PairFacts(v.one_phase, v.basis, _limits_from_verdict(v), v.model == FLORY_HUGGINS)
        return out
    if float(matrix.temp_C) != float(temp_C):
        raise InputError(f"the pair matrix is at {matrix.temp_C:g} C, the blend at {temp_C:g} C", param="temp_C")
    at = [matrix.index(r.name) for r in recs]
    for i, j in combinations(range(len(recs)), 2):
        a, b = at[i], at[j]
        out[(i, j)] = _PairFacts(_VERDICT[int(matrix.status[a, b])], "measured" if matrix.measured[a, b] else "predicted",
                                 (float(matrix.limit[a, b]), float(matrix.limit[b, a])), bool(matrix.hsp_model[a, b]))
    return out


def blend_phase(cat, names, volume_fractions, temp_C: float = 25.0, matrix: PairMatrix | None = None) -> BlendPhase:
    """Is a blend of liquids one phase at the given volume fractions?

    Each pair is checked at its own proportion in the blend,
    :math:`\\phi_b/(\\phi_a + \\phi_b)`, against its one-phase window
    (measured where tabulated, else predicted).  A blend of three or more
    liquids is then tested as a whole by the Flory-Huggins tangent-plane test
    (:func:`hansen.mixture_stability`, chi made to agree with the measured
    pairs): a blend whose pairs all mix but which splits as a whole is
    reported as two phases (predicted).  A failing pair stays a failure even
    when the whole-blend test finds one phase (a third liquid may bring the two
    together, ethanol bridging water and a citrus oil, but the model is too
    rough to promise it): that is noted, check it at the bench (or look for a
    ternary diagram).

    Parameters
    ----------
    cat : Catalog
    names : sequence of str
        the liquids
    volume_fractions : sequence of float
        their volume fractions [-] (>= 0, summing to 1)
    temp_C : float
        temperature [C]
    matrix : PairMatrix, optional
        the pair matrix (:func:`pair_matrix`, at ``temp_C``) of a set of liquids that holds these:
        the pairs' verdicts are read from it instead of being solved again (the same answers)

    Examples
    --------
    Water, ethanol and propylene glycol mix in all proportions (each pair measured), and the
    answer read from the pool's matrix is the same:

    >>> from solvsel.data.catalog import load_catalog
    >>> cat = load_catalog()
    >>> liquids, f = ["water", "ethanol", "propylene glycol"], [0.4, 0.3, 0.3]
    >>> bp = blend_phase(cat, liquids, f)
    >>> bp.one_phase, bp.basis
    (True, 'measured')
    >>> pool = liquids + ["d-limonene", "sunflower oil", "ethyl acetate", "triacetin"]
    >>> m = pair_matrix(cat, pool)
    >>> blend_phase(cat, liquids, f, matrix=m) == bp
    True

    So it is where some pairs are predicted (UNIFAC, or Flory-Huggins from HSP for the oil):

    >>> blends = [(["ethanol", "sunflower oil", "ethyl acetate", "triacetin"], [0.4, 0.2, 0.2, 0.2]),
    ...           (["water", "ethanol", "d-limonene"], [0.3, 0.6, 0.1]),
    ...           (["sunflower oil", "d-limonene", "propylene glycol"], [0.5, 0.3, 0.2])]
    >>> all(blend_phase(cat, n, x, matrix=m) == blend_phase(cat, n, x) for n, x in blends)
    True
    """
    names = list(names)
    f = hansen._check_fractions(volume_fractions, "volume_fractions", len(names))
    recs = [_solvent(cat, n) for n in names]
    verdicts = _pair_facts(cat, recs, temp_C, matrix)
    checks = _pair_checks(recs, f, verdicts)
    failing = [c for c in checks if not c.ok]
    present = [k for k in range(len(recs)) if f[k] > 0]
    basis = "measured" if all(c.basis == "measured" for c in checks) else "predicted"
    note = "pairwise test of each pair at its proportion in the blend"
    whole = _whole_blend(recs, f, present, verdicts, temp_C) if len(present) >= 3 else None
    split = None
    if whole is not None:
        if whole.stable:
            note += "; the whole blend is one phase by the Flory-Huggins tangent-plane test (measured pairs honoured)"
        elif not failing:
            trial = ", ".join(f"{recs[k].name} {whole.trial[k]:.2f}" for k in present if whole.trial[k] >= 0.005)
            split = (f"each pair mixes at its proportion, but the whole blend splits by the Flory-Huggins "
                     f"tangent-plane test (predicted; a phase near {trial} by volume would separate)")
            basis = "predicted"
        else:
            note += "; the Flory-Huggins tangent-plane test of the whole blend also finds two phases"
    if split:
        return BlendPhase(tuple(r.name for r in recs), tuple(float(x) for x in f), False, basis, tuple(checks), split,
                          note)
    if failing:
        reason = "; ".join(c.reason for c in failing)
        bridging = _bridging(recs, failing, present, verdicts)
        if bridging:
            note += (
                "; " + ", ".join(sorted(set(bridging)))
                + " mixes with both liquids of a failing pair and may bring them into one phase: check at the bench"
            )
    else:
        reason = "every pair is one phase at its proportion"
    return BlendPhase(tuple(r.name for r in recs), tuple(float(x) for x in f), not failing, basis, tuple(checks), reason, note)


def _pair_checks(recs, f, verdicts) -> list[PairCheck]:
    """Each pair of the blend (records ``recs`` at volume fractions ``f``) checked at its proportion
    against its verdict's one-phase window (``verdicts``: :func:`_pair_facts`)."""
    checks = []
    for i, j in combinations(range(len(recs)), 2):
        v = verdicts[(i, j)]
        if f[i] == 0 or f[j] == 0:
            checks.append(PairCheck(recs[i].name, recs[j].name, v.one_phase, v.basis, float("nan"), True, "not both present"))
            continue
        lim_ba, lim_ab = v.limits
        ok, r = _pair_ok(f[i], f[j], lim_ba, lim_ab)
        if ok:
            reason = "miscible in all proportions" if v.one_phase == "yes" else "inside the one-phase window"
        else:
            reason = (
                f"{recs[j].name} is {r:.1%} of the pair by volume; one phase only up to "
                f"{lim_ba:.2%} of {recs[j].name} in {recs[i].name} or {lim_ab:.2%} of {recs[i].name} in {recs[j].name}"
                f" ({v.basis})"
            )
        checks.append(PairCheck(recs[i].name, recs[j].name, v.one_phase, v.basis, float(r), bool(ok), reason))
    return checks


def _bridging(recs, failing, present, verdicts) -> list[str]:
    """Names of the liquids present (indices ``present``) that mix in all proportions with both liquids
    of a failing pair (:class:`PairCheck` ``failing``), once per such pair."""
    bridging = []
    pos = {r.name: k for k, r in enumerate(recs)}
    for c in failing:
        ia, ib = pos[c.a], pos[c.b]
        for k in present:
            if k in (ia, ib):
                continue
            ka = verdicts[tuple(sorted((k, ia)))]
            kb = verdicts[tuple(sorted((k, ib)))]
            if ka.one_phase == "yes" and kb.one_phase == "yes":
                bridging.append(recs[k].name)
    return bridging


def _whole_blend(recs, f, present, verdicts, temp_C):
    """Tangent-plane test of the whole blend (:func:`hansen.mixture_stability`), or None without molar volumes.

    chi of each pair from HSP (at ``temp_C``) on a lattice of the smallest
    molar volume, made to agree with a pair's verdict where it is not
    Flory-Huggins' own (measured, or predicted by UNIFAC): a pair miscible in
    all proportions gets at most 0.9 of its critical chi, an immiscible pair at
    least 1.1 of it.  A pair with such a solubility window (partly miscible) is
    not tested as a whole (None): one chi cannot reproduce both solubilities,
    and the pairwise test of the window stands.
    """
    sub = [recs[k] for k in present]
    if any(getattr(r, "vm_cm3_mol", None) is None or not r.vm_cm3_mol > 0 for r in sub):
        return None
    if any(not verdicts[(a, b)].flory_huggins and verdicts[(a, b)].one_phase == "partial"
           for a, b in combinations(present, 2)):
        return None  # a solubility window that one chi cannot reproduce: the pairwise test stands
    n = len(sub)
    H, V, _ = zip(*(_liquid_at(r, temp_C) for r in sub))
    V = np.array(V, dtype=float)
    vref = V.min()
    H = np.array(H, dtype=float)
    chi = hansen.chi_flory_huggins(H[:, None, :], H[None, :, :], vref, temp_C)
    for a, b in combinations(range(n), 2):
        v = verdicts[(present[a], present[b])]
        if not v.flory_huggins:  # measured, or predicted by UNIFAC
            # critical chi of the pair, rescaled from liquid a's volume to the lattice site vref
            c, cc = float(chi[a, b]), float(hansen.chi_critical(V[a], V[b])) * vref / V[a]
            chi[a, b] = chi[b, a] = min(c, 0.9 * cc) if v.one_phase == "yes" else max(c, 1.1 * cc)
    res = hansen.mixture_stability(V, [f[k] / sum(f[j] for j in present) for k in present], chi)
    trial = [0.0] * len(recs)
    for a, k in enumerate(present):
        trial[k] = res.trial[a]
    return hansen.MixtureStability(tuple(float(x) for x in f), res.stable, res.tpd_min, tuple(trial))


@dataclass(frozen=True)
class PairMatrix:
    """Pairwise miscibility of a set of liquids as arrays, for screening many blends.

    Attributes
    ----------
    names : tuple of str
        the liquids, in the order of the array axes
    status : ndarray of int8, shape (n, n)
        :data:`FULL` (0), :data:`PARTIAL` (1) or :data:`NONE` (2); symmetric;
        the diagonal is FULL
    measured : ndarray of bool, shape (n, n)
        True where the status comes from the table
    limit : ndarray of float, shape (n, n)
        ``limit[i, j]`` is the largest volume fraction of liquid j in a binary
        with liquid i, :math:`\\phi_j/(\\phi_i+\\phi_j)`, that is still one
        phase on the i-rich side (1.0 for a miscible pair; 0.0 where a measured
        solubility is not tabulated, the cautious choice)
    chi, chi_critical : ndarray of float, shape (n, n)
        Flory-Huggins chi (per molecule of the row liquid) and its critical value
    hsp_model : ndarray of bool, shape (n, n)
        True where the verdict is Flory-Huggins' own prediction from HSP (neither measured nor
        predicted by UNIFAC: ``model`` of :class:`PairVerdict`)
    temp_C : float
        temperature of the screen [C]

    Notes
    -----
    A pair (i, j) present at volume fractions f_i, f_j > 0 of a blend is one
    phase when, with r = f_j / (f_i + f_j),

        r <= limit[i, j]   or   1 - r <= limit[j, i]

    and a blend passes the pairwise screen when every pair of its components
    does.  :meth:`screen` applies this to many blends at once with array
    operations only::

        m = pair_matrix(cat, pool_names)
        idx = np.array([[0, 3, 7], ...])          # (k, c) indices into m.names
        frac = np.array([[0.5, 0.3, 0.2], ...])   # (k, c) volume fractions
        ok = m.screen(idx, frac)                  # (k,) bool

    Zero fractions always pass; the pairwise test ignores co-solvent bridging
    (see :func:`blend_phase`).
    """

    names: tuple[str, ...]
    status: np.ndarray
    measured: np.ndarray
    limit: np.ndarray
    chi: np.ndarray
    chi_critical: np.ndarray
    hsp_model: np.ndarray
    temp_C: float = 25.0

    def index(self, name: str) -> int:
        try:
            return self.names.index(name)
        except ValueError:
            raise InputError(f"'{name}' is not one of the liquids of this matrix: {', '.join(self.names)}") from None

    def screen(self, indices, fractions) -> np.ndarray:
        """Pairwise one-phase screen of many blends.

        Parameters
        ----------
        indices : array_like of int, shape (k, c)
            components of each blend, as indices into :attr:`names`
        fractions : array_like of float, shape (k, c)
            their volume fractions [-]

        Returns
        -------
        ndarray of bool, shape (k,)
        """
        idx = np.asarray(indices, dtype=np.intp)
        f = np.asarray(fractions, dtype=float)
        if idx.shape != f.shape or idx.ndim != 2:
            raise InputError(f"screen: indices and fractions must both have shape (k, c), got {idx.shape} and {f.shape}")
        ok = np.ones(idx.shape[0], dtype=bool)
        for p, q in combinations(range(idx.shape[1]), 2):
            fi, fj = f[:, p], f[:, q]
            tot = fi + fj
            with np.errstate(invalid="ignore", divide="ignore"):
                r = np.where(tot > 0, fj / np.where(tot > 0, tot, 1.0), 0.0)
            i, j = idx[:, p], idx[:, q]
            pair_ok = (r <= self.limit[i, j] + 1e-12) | (1.0 - r <= self.limit[j, i] + 1e-12) | (fi <= 0) | (fj <= 0)
            ok &= pair_ok
        return ok

    def to_dict(self) -> dict:
        return {
            "names": list(self.names),
            "status": self.status.tolist(),
            "measured": self.measured.tolist(),
            "limit": self.limit.tolist(),
            "temp_C": self.temp_C,
        }


#: Matrices of at least this many liquids are also kept on disk between runs (see :func:`pair_matrix`).
DISK_CACHE_FROM = 30
_MATRIX_ARRAYS = ("status", "measured", "limit", "chi", "chi_critical", "hsp_model")


def _matrix_key(cat, recs, temp_C: float) -> str:
    """SHA-256 of everything a pair matrix depends on: the code of the model, the tables (bundled
    and the user's own files), every liquid's record and the temperature."""
    from ..data.provenance import tables_sha256

    here = Path(__file__).resolve().parent
    digest = hashlib.sha256()
    for module in ("miscibility.py", "hansen.py", "target.py", "unifac.py"):
        digest.update((here / module).read_bytes())
    digest.update(tables_sha256(cat.tables_dir).encode())
    for kind, paths in sorted(getattr(cat, "own", {}).items()):
        for path in paths:
            digest.update(f"{kind}:{path}".encode())
            digest.update(Path(path).read_bytes() if Path(path).is_file() else b"")
    digest.update(repr([repr(r) for r in recs]).encode())
    digest.update(repr(float(temp_C)).encode())
    return digest.hexdigest()


def _matrix_from_disk(path: Path, names: tuple[str, ...], temp_C: float) -> PairMatrix | None:
    try:
        with np.load(path, allow_pickle=False) as z:
            arrays = [np.array(z[k]) for k in _MATRIX_ARRAYS]
    except (OSError, ValueError, KeyError, zipfile.BadZipFile):  # absent, unreadable or damaged: recompute
        return None
    n = len(names)
    if any(a.shape != (n, n) for a in arrays):
        return None
    for a in arrays:
        a.setflags(write=False)
    return PairMatrix(names, *arrays, temp_C)


#: Pair matrices kept in the cache folder (the most recently written; older ones are deleted).
DISK_CACHE_KEEP = 16


def _keep_newest(folder: Path, pattern: str) -> None:
    """Delete all but the newest :data:`DISK_CACHE_KEEP` files of ``folder`` matching ``pattern``."""
    kept = sorted(folder.glob(pattern), key=lambda p: p.stat().st_mtime, reverse=True)
    for old in kept[DISK_CACHE_KEEP:]:
        old.unlink(missing_ok=True)


def _matrix_to_disk(path: Path, m: PairMatrix) -> None:
    if write_cache_file(path, lambda tmp: np.savez(tmp, **{k: getattr(m, k) for k in _MATRIX_ARRAYS})):
        _keep_newest(path.parent, "pair_matrix_*.npz")


def _compute_matrix(cat, recs, temp_C: float) -> PairMatrix:
    n = len(recs)
    status = np.zeros((n, n), dtype=np.int8)
    measured = np.ones((n, n), dtype=bool)
    limit = np.ones((n, n))
    chi = np.zeros((n, n))
    chic = np.full((n, n), np.nan)
    hsp_model = np.zeros((n, n), dtype=bool)
    for i, j in combinations(range(n), 2):
        v = _pair(cat, recs[i], recs[j], temp_C)
        status[i, j] = status[j, i] = v.code
        measured[i, j] = measured[j, i] = v.basis == "measured"
        hsp_model[i, j] = hsp_model[j, i] = v.model == FLORY_HUGGINS
        lim_ba, lim_ab = _limits_from_verdict(v)
        limit[i, j], limit[j, i] = lim_ba, lim_ab
        if v.chi is not None:
            chi[i, j] = v.chi
            chi[j, i] = v.chi * recs[j].vm_cm3_mol / recs[i].vm_cm3_mol
        if v.chi_critical is not None:
            chic[i, j] = v.chi_critical
            chic[j, i] = v.chi_critical * recs[j].vm_cm3_mol / recs[i].vm_cm3_mol
    _save_unifac_pairs()
    for a in (status, measured, limit, chi, chic, hsp_model):
        a.setflags(write=False)
    return PairMatrix(tuple(r.name for r in recs), status, measured, limit, chi, chic, hsp_model, temp_C)


@lru_cache(maxsize=32)
def _pair_matrix_cached(ref, names: tuple[str, ...], temp_C: float) -> PairMatrix:
    cat = ref()
    recs = [cat.solvent(n) for n in names]
    folder = cache_dir() if len(recs) >= DISK_CACHE_FROM else None
    if folder is None:
        return _compute_matrix(cat, recs, temp_C)
    path = folder / f"pair_matrix_{_matrix_key(cat, recs, temp_C)}.npz"
    m = _matrix_from_disk(path, names, temp_C)
    if m is None:
        m = _compute_matrix(cat, recs, temp_C)
        _matrix_to_disk(path, m)
    return m


def pair_matrix(cat, names=None, temp_C: float = 25.0) -> PairMatrix:
    """Pairwise miscibility arrays of ``names`` (default: every solvent of the catalog).

    See :class:`PairMatrix` for the arrays and the vectorised blend screen.
    The result is cached per catalog, names and temperature (its arrays are
    read-only); a matrix of :data:`DISK_CACHE_FROM` liquids or more is also
    kept in :func:`cache_dir` under a SHA-256 of the model's code, the tables
    (and the user's own files), the liquids' records and the temperature, so a
    new process reads it instead of solving every pair again (a changed input
    gives a new key; files of old keys can be deleted at any time).
    """
    if names is None:
        names = [s.name for s in cat.solvent_records()]
    canon = tuple(_solvent(cat, n).name for n in names)
    if len(set(canon)) != len(canon):
        raise InputError(f"pair_matrix: a liquid is named twice in {list(names)}")
    return _pair_matrix_cached(_Ref(cat), canon, float(temp_C))


# ----------------------------------------------------------------------------- graph


def graph(cat, temp_C: float = 25.0, names=None, predicted: bool = True):
    """Graph of the liquids: an edge for every pair that is not immiscible.

    Edge attributes: ``one_phase`` ("yes" or "partial"), ``basis``,
    ``window`` (partial pairs), ``chi``, ``chi_critical``.  Node attributes:
    ``cas``.  With ``predicted=False`` only measured pairs make edges.

    Returns
    -------
    networkx.Graph
    """
    import networkx as nx

    m = pair_matrix(cat, names, temp_C)
    g = nx.Graph()
    recs = [cat.solvent(n) for n in m.names]
    for r in recs:
        g.add_node(r.name, cas=r.cas)
    for i, j in combinations(range(len(recs)), 2):
        if m.status[i, j] == NONE or (not predicted and not m.measured[i, j]):
            continue
        attrs = {
            "one_phase": _VERDICT[int(m.status[i, j])],
            "basis": "measured" if m.measured[i, j] else "predicted",
            "chi": float(m.chi[i, j]),
            "chi_critical": float(m.chi_critical[i, j]),
        }
        if m.status[i, j] == PARTIAL:
            attrs["window"] = {"b_in_a_max_volume": float(m.limit[i, j]), "a_in_b_max_volume": float(m.limit[j, i]),
                               "a": recs[i].name, "b": recs[j].name}
        g.add_edge(recs[i].name, recs[j].name, **attrs)
    return g


@dataclass(frozen=True)
class Bridge:
    """A liquid that mixes in all proportions with both liquids of an immiscible pair."""

    name: str
    cas: str
    basis_a: str
    basis_b: str
    measured_both: bool
    closeness: float  # largest chi/chi_c of the two pairs (smaller = more certain)
    food: bool | None = None

    def to_dict(self) -> dict:
        return {"name": self.name, "cas": self.cas, "basis_a": self.basis_a, "basis_b": self.basis_b,
                "measured_both": self.measured_both, "closeness": self.closeness, "food": self.food}


def bridges(cat, a, b, temp_C: float = 25.0, names=None) -> list[Bridge]:
    """Liquids miscible in all proportions with both ``a`` and ``b``, best first.

    Ranked by the evidence (both pairs measured, then one, then none), then by
    the larger of the two chi/chi_critical ratios (smaller is further from a
    split).  E.g. what brings a citrus oil and water into one phase.

    Parameters
    ----------
    cat : Catalog
    a, b : str
        the two liquids
    temp_C : float
        temperature [C]
    names : sequence of str, optional
        candidate pool (default: every solvent); the miscible job passes the
        food carriers of its candidate pool here for a food-only search
    """
    sa, sb = _solvent(cat, a), _solvent(cat, b)
    pool = [s.name for s in cat.solvent_records()] if names is None else [_solvent(cat, n).name for n in names]
    for s in (sa.name, sb.name):
        if s not in pool:
            pool.append(s)
    m = pair_matrix(cat, pool, temp_C)
    ia, ib = m.index(sa.name), m.index(sb.name)
    out = []
    for k, name in enumerate(m.names):
        if k in (ia, ib):
            continue
        if m.status[k, ia] != FULL or m.status[k, ib] != FULL:
            continue
        rec = cat.solvent(name)
        ratio = max(m.chi[ia, k] / m.chi_critical[ia, k], m.chi[ib, k] / m.chi_critical[ib, k])
        out.append(Bridge(name, rec.cas, "measured" if m.measured[k, ia] else "predicted",
                          "measured" if m.measured[k, ib] else "predicted",
                          bool(m.measured[k, ia] and m.measured[k, ib]), float(ratio)))
    evidence = {True: 0, False: 1}
    out.sort(key=lambda r: (evidence[r.measured_both], (r.basis_a != "measured") + (r.basis_b != "measured"), r.closeness, r.name))
    return out


def largest_miscible_sets(cat, temp_C: float = 25.0, names=None, measured_only: bool = False, top: int = 10):
    """The largest sets of liquids that are all mutually miscible in all proportions.

    Maximal cliques of the graph of "yes" edges (networkx ``find_cliques``),
    largest first, then by the share of measured edges.  By default the rows
    without a CAS number (blends of other rows, such as ethanol strengths)
    are left out, as they add nothing to a set that holds their parts.

    Parameters
    ----------
    names : sequence of str, optional
        the liquids to look among (e.g. the food carriers of a candidate pool)
    measured_only : bool
        use measured pairs only
    top : int
        how many sets to return

    Returns
    -------
    list of dict
        ``{"liquids": [...], "size": n, "measured_share": 0..1}``
    """
    import networkx as nx

    pool = [s for s in cat.solvent_records()] if names is None else [_solvent(cat, n) for n in names]
    if names is None:  # rows without CAS are blends of other rows (ethanol strengths)
        pool = [s for s in pool if s.cas]
    if not pool:
        return []
    m = pair_matrix(cat, [s.name for s in pool], temp_C)
    g = nx.Graph()
    g.add_nodes_from(m.names)
    n = len(m.names)
    for i, j in combinations(range(n), 2):
        if m.status[i, j] == FULL and (m.measured[i, j] or not measured_only):
            g.add_edge(m.names[i], m.names[j], measured=bool(m.measured[i, j]))
    sets = []
    for clique in nx.find_cliques(g):
        if len(clique) < 2:
            continue
        edges = list(combinations(clique, 2))
        share = sum(g.edges[e]["measured"] for e in edges) / len(edges)
        sets.append({"liquids": sorted(clique), "size": len(clique), "measured_share": share})
    sets.sort(key=lambda s: (-s["size"], -s["measured_share"], s["liquids"]))
    return sets[: int(top)]
