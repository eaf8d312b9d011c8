"""Hansen solubility parameter arithmetic on plain numbers.

Pure functions, vectorised with numpy over whole tables: an HSP triple is the
last axis of an array (``[..., 3]`` = dD, dP, dH in MPa^0.5).  Nothing here
knows about tables or the command line.

References
----------
.. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*, 2nd ed.
   CRC Press, 2007. ISBN 978-0-8493-7248-3.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

__all__ = ["SCALE", "as_hsp", "scaled", "ra", "red"]

#: Factor on each coordinate that makes Euclidean distance equal to Ra.
SCALE = np.array([2.0, 1.0, 1.0])


def as_hsp(values, name: str = "hsp") -> np.ndarray:
    """Return ``values`` as a float array whose last axis is (dD, dP, dH).

    Raises :class:`InputError` naming ``name`` if the last axis is not 3 long
    or a value is not finite.
    """
    arr = np.asarray(values, dtype=float)
    if arr.shape[-1:] != (3,):
        raise InputError(f"expected dD, dP, dH (3 numbers), got shape {arr.shape}", param=name)
    if not np.all(np.isfinite(arr)):
        raise InputError("HSP values must be finite numbers", param=name)
    return arr


def scaled(hsp) -> np.ndarray:
    """Coordinates (2 dD, dP, dH) in which Euclidean distance is Ra [MPa^0.5]."""
    return as_hsp(hsp) * SCALE


def ra(a, b) -> np.ndarray:
    r"""Hansen distance between HSP points, broadcast over leading axes.

    .. math::
        R_a^2 = 4(\delta_{D1}-\delta_{D2})^2 + (\delta_{P1}-\delta_{P2})^2
                + (\delta_{H1}-\delta_{H2})^2

    Parameters
    ----------
    a, b : array_like, shape (..., 3)
        dD, dP, dH [MPa^0.5]

    Returns
    -------
    ra : ndarray
        Hansen distance [MPa^0.5]

    Examples
    --------
    Ethanol (15.8, 8.8, 19.4) and water (15.5, 16.0, 42.3), Hansen (2007)
    Appendix A values: Ra = sqrt(4*0.09 + 51.84 + 524.41) = 24.01

    >>> round(float(ra([15.8, 8.8, 19.4], [15.5, 16.0, 42.3])), 2)
    24.01
    """
    d = (as_hsp(a, "a") - as_hsp(b, "b")) * SCALE
    return np.sqrt(np.sum(d * d, axis=-1))


def red(a, b, r0) -> np.ndarray:
    """Relative energy difference Ra/R0 (< 1 inside the solute's sphere).

    Parameters
    ----------
    a, b : array_like, shape (..., 3)
        dD, dP, dH of solvent(s) and solute [MPa^0.5]
    r0 : float or array_like
        interaction radius of the solute [MPa^0.5], > 0
    """
    r0 = np.asarray(r0, dtype=float)
    if np.any(~(r0 > 0)):
        raise InputError(f"R0 must be a positive number of MPa^0.5, got {r0}", param="r0")
    return ra(a, b) / r0


# ---------------------------------------------------------------------------
# Everything below extends the distance functions above: sphere distance,
# mixing, fraction conversion, temperature, Flory-Huggins, solid solubility and
# partition.  Same conventions: numbers in, numbers or frozen dataclasses out.
# ---------------------------------------------------------------------------

import functools  # noqa: E402
import math  # noqa: E402
import sys  # noqa: E402
from contextlib import contextmanager  # noqa: E402
from dataclasses import asdict, dataclass  # noqa: E402

from ..errors import MissingDataError, OutOfRangeError  # noqa: E402

__all__ += [
    "R_J_MOL_K",
    "T_WINDOW_C",
    "ra_to_surface",
    "mix",
    "convert_fractions",
    "shift_temperature",
    "shift_molar_volume",
    "chi_flory_huggins",
    "chi_critical",
    "MixtureStability",
    "mixture_stability",
    "Binodal",
    "binodal",
    "ideal_solubility",
    "ln_gamma_hansen",
    "SolubilityEstimate",
    "solid_solubility",
    "PartitionEstimate",
    "partition_coefficient",
]

#: Molar gas constant [J/(mol K)] (CODATA 2018, exact).
R_J_MOL_K = 8.314462618

#: Hard temperature window [C] for the Hansen-Beerbower shift.  The rules are
#: first-order in (T - T_ref) with a constant expansion coefficient, which holds
#: for ordinary liquids far from their critical point; -80 C covers cold
#: ethanol extraction (down to about -80 C in practice), +150 C covers hot
#: processing and stripping.  Outside it the constant-alpha assumption and the
#: linearised dH rule are not trustworthy.
T_WINDOW_C = (-80.0, 150.0)

_FRACTION_TOL = 1e-6
_KINDS = ("mass", "volume", "mole")


def ra_to_surface(hsp, center, r0) -> np.ndarray:
    """Signed distance from HSP point(s) to the surface of a sphere [MPa^0.5].

    .. math:: d = R_a - R_0

    Negative inside the sphere (a good solvent), positive outside.

    Parameters
    ----------
    hsp : array_like, shape (..., 3)
        dD, dP, dH of the solvent(s) [MPa^0.5]
    center : array_like, shape (..., 3)
        dD, dP, dH of the sphere centre [MPa^0.5]
    r0 : float or array_like
        radius of the sphere [MPa^0.5], > 0

    Examples
    --------
    Ethanol against a sphere centred on water with R0 = 20 (illustrative
    radius): Ra = 24.01 (see :func:`ra`), so the point lies 4.01 outside.

    >>> round(float(ra_to_surface([15.8, 8.8, 19.4], [15.5, 16.0, 42.3], 20.0)), 2)
    4.01
    """
    r0 = np.asarray(r0, dtype=float)
    if np.any(~(r0 > 0)):
        raise InputError(f"R0 must be a positive number of MPa^0.5, got {r0}", param="r0")
    return ra(hsp, center) - r0


def _check_fractions(fractions, name: str, n: int | None = None) -> np.ndarray:
    f = np.asarray(fractions, dtype=float)
    if f.ndim == 0:
        raise InputError("expected one fraction per component, got a single number", param=name)
    if n is not None and f.shape[-1] != n:
        raise InputError(f"expected {n} fractions (one per component), got {f.shape[-1]}", param=name)
    if not np.all(np.isfinite(f)):
        raise InputError("fractions must be finite numbers", param=name)
    if np.any(f < 0):
        raise InputError(f"fractions must be zero or positive, got {f[f < 0].ravel()[:3].tolist()}", param=name)
    s = f.sum(axis=-1)
    bad = np.abs(s - 1.0) > _FRACTION_TOL
    if np.any(bad):
        raise InputError(
            f"fractions must sum to 1 (within {_FRACTION_TOL:g}), got a sum of "
            f"{float(np.ravel(s)[np.argmax(np.ravel(bad))]):.6g}", param=name,
        )
    return f


def mix(hsp, volume_fractions) -> np.ndarray:
    r"""HSP of a blend as the volume-fraction average of its components.

    .. math:: \delta_{k,\mathrm{blend}} = \sum_i \phi_i\,\delta_{k,i}
              \qquad k \in \{D, P, H\}

    Parameters
    ----------
    hsp : array_like, shape (..., n, 3)
        dD, dP, dH of the n components [MPa^0.5]
    volume_fractions : array_like, shape (..., n)
        volume fractions [-], each >= 0, summing to 1 within 1e-6; leading axes
        broadcast against those of ``hsp`` (e.g. many candidate blends of the
        same n liquids: ``hsp`` (n, 3), fractions (k, n) -> (k, 3)).

    Returns
    -------
    ndarray, shape (..., 3)
        dD, dP, dH of the blend [MPa^0.5]

    References
    ----------
    .. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*,
       2nd ed., CRC Press, 2007, ch. 1 (blends of non-solvents).

    Examples
    --------
    Ethanol (15.8, 8.8, 19.4) and water (15.5, 16.0, 42.3), Hansen (2007)
    values, 50/50 by volume: (15.65, 12.4, 30.85).

    >>> mix([[15.8, 8.8, 19.4], [15.5, 16.0, 42.3]], [0.5, 0.5]).round(2).tolist()
    [15.65, 12.4, 30.85]
    """
    h = as_hsp(hsp)
    if h.ndim < 2:
        raise InputError(f"expected one (dD, dP, dH) row per component, got shape {h.shape}", param="hsp")
    f = _check_fractions(volume_fractions, "volume_fractions", h.shape[-2])
    return np.einsum("...n,...nk->...k", f, h)


def convert_fractions(fractions, frm: str, to: str, density_g_cm3=None, mw_g_mol=None) -> np.ndarray:
    r"""Convert composition fractions between mass, volume and mole bases.

    Volumes are taken as additive (ideal mixing), which is the usual
    assumption of blend HSP arithmetic.

    .. math::
        \phi_i = \frac{w_i/\rho_i}{\sum_j w_j/\rho_j},\qquad
        x_i = \frac{w_i/M_i}{\sum_j w_j/M_j}

    Parameters
    ----------
    fractions : array_like, shape (..., n)
        fractions on the ``frm`` basis [-], >= 0, summing to 1 within 1e-6
    frm, to : {"mass", "volume", "mole"}
        basis of the input and of the output
    density_g_cm3 : array_like, shape (n,) or (..., n)
        densities of the pure components [g/cm^3] (needed whenever the volume
        basis is involved)
    mw_g_mol : array_like, shape (n,) or (..., n)
        molar masses [g/mol] (needed whenever the mole basis is involved)

    Returns
    -------
    ndarray, shape (..., n)
        fractions on the ``to`` basis, summing to 1

    Examples
    --------
    40 % ethanol by volume (0.7893 g/cm^3) in water (0.9970 g/cm^3) is
    34.5 % by mass with additive volumes (tables give 34.0 % at 20 C, the
    difference being the volume contraction on mixing).

    >>> w = convert_fractions([0.4, 0.6], "volume", "mass", density_g_cm3=[0.7893, 0.9970])
    >>> round(float(w[0]), 3)
    0.345
    """
    for label, kind in (("frm", frm), ("to", to)):
        if kind not in _KINDS:
            raise InputError(f"expected one of {', '.join(_KINDS)}, got '{kind}'", param=label)
    f = _check_fractions(fractions, "fractions")
    n = f.shape[-1]

    def need(values, label, unit):
        if values is None:
            raise MissingDataError(f"converting {frm} to {to} fractions needs {label} [{unit}] of every component")
        v = np.asarray(values, dtype=float)
        if v.shape[-1:] != (n,):
            raise InputError(f"expected {n} values (one per component), got shape {v.shape}", param=label)
        if not np.all(np.isfinite(v)) or np.any(v <= 0):
            raise MissingDataError(f"every component needs a known positive value [{unit}], got {v.tolist()}", param=label)
        return v

    if frm == to:
        return f.copy()
    # convert to mass first, then from mass to the wanted basis
    if frm == "mass":
        w = f
    elif frm == "volume":
        w = f * need(density_g_cm3, "density_g_cm3", "g/cm^3")
    else:
        w = f * need(mw_g_mol, "mw_g_mol", "g/mol")
    w = w / w.sum(axis=-1, keepdims=True)
    if to == "mass":
        return w
    if to == "volume":
        out = w / need(density_g_cm3, "density_g_cm3", "g/cm^3")
    else:
        out = w / need(mw_g_mol, "mw_g_mol", "g/mol")
    return out / out.sum(axis=-1, keepdims=True)


def _check_temperature(temp_C, mp_C=None, bp_C=None, what="temp_C") -> np.ndarray:
    t = np.asarray(temp_C, dtype=float)
    if not np.all(np.isfinite(t)):
        raise InputError(f"temperature must be a finite number of C, got {temp_C}", param=what)
    lo, hi = T_WINDOW_C
    if np.any(t < lo) or np.any(t > hi):
        raise OutOfRangeError(
            f"{float(np.ravel(t)[0]):g} C is outside the range of the Hansen-Beerbower "
            f"temperature rules, {lo:g} to {hi:g} C", param=what,
        )
    if mp_C is not None:
        mp = np.asarray(mp_C, dtype=float)
        below = np.isfinite(mp) & (t < mp)
        if np.any(below):
            raise OutOfRangeError(
                f"{float(np.broadcast_to(t, below.shape)[below][0]):g} C is below the melting point "
                f"({float(np.broadcast_to(mp, below.shape)[below][0]):g} C): the liquid would freeze", param=what,
            )
    if bp_C is not None:
        bp = np.asarray(bp_C, dtype=float)
        above = np.isfinite(bp) & (t > bp)
        if np.any(above):
            raise OutOfRangeError(
                f"{float(np.broadcast_to(t, above.shape)[above][0]):g} C is above the boiling point "
                f"({float(np.broadcast_to(bp, above.shape)[above][0]):g} C at 1 atm): the liquid would boil "
                "unless held under pressure", param=what,
            )
    return t


def shift_molar_volume(vm_cm3_mol, alpha_1_K, temp_C, ref_C: float = 25.0) -> np.ndarray:
    r"""Molar volume at ``temp_C`` from a constant cubic expansion coefficient.

    .. math:: V(T) = V(T_\mathrm{ref})\,\exp[\alpha (T - T_\mathrm{ref})]

    Parameters
    ----------
    vm_cm3_mol : array_like
        molar volume at ``ref_C`` [cm^3/mol]
    alpha_1_K : array_like
        cubic thermal expansion coefficient [1/K]
    temp_C, ref_C : float
        temperature wanted and reference temperature [C]
    """
    t = _check_temperature(temp_C)
    a = np.asarray(alpha_1_K, dtype=float)
    return np.asarray(vm_cm3_mol, dtype=float) * np.exp(a * (t - ref_C))


def shift_temperature(hsp, alpha_1_K, temp_C, ref_C: float = 25.0, vm_cm3_mol=None, mp_C=None, bp_C=None):
    r"""HSP of a liquid at another temperature (Hansen and Beerbower 1971).

    The rules of [1]_ (as given in [2]_, ch. 1) are

    .. math::
        \frac{d\delta_D}{dT} = -1.25\,\alpha\,\delta_D,\qquad
        \frac{d\delta_P}{dT} = -0.5\,\alpha\,\delta_P,\qquad
        \frac{d\delta_H}{dT} = -\delta_H\,(1.22\times10^{-3} + 0.5\,\alpha)

    integrated here with a constant ``alpha`` (so that
    :math:`\delta_D(T) = \delta_D(T_\mathrm{ref})\,(V_\mathrm{ref}/V)^{1.25}`,
    with :math:`V = V_\mathrm{ref} e^{\alpha \Delta T}`).

    Valid range: the hard window :data:`T_WINDOW_C` (-80 to 150 C), and the
    liquid range of the substance when ``mp_C`` / ``bp_C`` are given (below the
    melting point it freezes, above the normal boiling point it boils at 1 atm).
    Outside either, :class:`OutOfRangeError` is raised.

    Parameters
    ----------
    hsp : array_like, shape (..., 3)
        dD, dP, dH at ``ref_C`` [MPa^0.5]
    alpha_1_K : float or array_like, shape (...)
        cubic thermal expansion coefficient of each liquid [1/K], 0 <= alpha < 0.01
    temp_C : float
        temperature wanted [C]
    ref_C : float
        temperature of the given values [C] (tables: 25 C)
    vm_cm3_mol : array_like, shape (...), optional
        molar volume at ``ref_C`` [cm^3/mol]; if given the shifted molar volume
        is returned too
    mp_C, bp_C : array_like, shape (...), optional
        melting and normal boiling points [C] (NaN = unknown, not checked)

    Returns
    -------
    hsp : ndarray, shape (..., 3)
        dD, dP, dH at ``temp_C`` [MPa^0.5]; or the tuple ``(hsp, vm)`` when
        ``vm_cm3_mol`` is given (vm [cm^3/mol])

    References
    ----------
    .. [1] Hansen, C. M.; Beerbower, A. Solubility parameters. In
       *Kirk-Othmer Encyclopedia of Chemical Technology*, Suppl. Vol., 2nd ed.;
       Standen, A., Ed.; Interscience: New York, 1971; pp 889-910.
    .. [2] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*,
       2nd ed., CRC Press, 2007.

    Examples
    --------
    n-Hexane (14.9, 0, 0), alpha = 1.4e-3 1/K (from memory), heated from 25 to
    60 C: dD falls by the factor exp(-1.25 * 1.4e-3 * 35) = 0.9406, to 14.01.

    >>> shift_temperature([14.9, 0.0, 0.0], 1.4e-3, 60.0).round(2).tolist()
    [14.01, 0.0, 0.0]
    """
    h = as_hsp(hsp)
    a = np.asarray(alpha_1_K, dtype=float)
    if not np.all(np.isfinite(a)):
        raise MissingDataError("the thermal expansion coefficient is needed to shift HSP with temperature", param="alpha_1_K")
    if np.any(a < 0) or np.any(a >= 0.01):
        raise OutOfRangeError(f"expected 0 <= alpha < 0.01 1/K for a liquid, got {a.ravel()[:3].tolist()}", param="alpha_1_K")
    _check_temperature(ref_C, what="ref_C")
    t = _check_temperature(temp_C, mp_C, bp_C)
    dt = t - ref_C
    factors = np.stack(
        np.broadcast_arrays(
            np.exp(-1.25 * a * dt),
            np.exp(-0.5 * a * dt),
            np.exp(-(1.22e-3 + 0.5 * a) * dt),
        ),
        axis=-1,
    )
    out = h * factors
    if vm_cm3_mol is None:
        return out
    vm = np.asarray(vm_cm3_mol, dtype=float) * np.exp(a * dt)
    return out, vm


def chi_flory_huggins(hsp1, hsp2, vm1_cm3_mol, temp_C=25.0) -> np.ndarray:
    r"""Flory-Huggins interaction parameter from HSP, per molecule of liquid 1.

    .. math::
        \chi_{12} = \frac{V_1}{RT}\left[(\delta_{D1}-\delta_{D2})^2
        + \tfrac14(\delta_{P1}-\delta_{P2})^2 + \tfrac14(\delta_{H1}-\delta_{H2})^2\right]
        = \frac{V_1 R_a^2}{4RT}

    Parameters
    ----------
    hsp1, hsp2 : array_like, shape (..., 3)
        dD, dP, dH [MPa^0.5]
    vm1_cm3_mol : array_like
        molar volume of liquid 1, the lattice reference [cm^3/mol]
    temp_C : float
        temperature [C]

    References
    ----------
    .. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*,
       2nd ed., CRC Press, 2007, ch. 2.

    Examples
    --------
    Ethanol (V = 58.5 cm^3/mol) against water at 25 C: Ra = 24.01, so
    chi = 58.5 * 576.6 / (4 * 8.3145 * 298.15) = 3.40 (far above the critical
    value, although the two mix in all proportions: hydrogen-bonding pairs are
    poorly predicted, which is why measured pairs always win).

    >>> round(float(chi_flory_huggins([15.8, 8.8, 19.4], [15.5, 16.0, 42.3], 58.5)), 2)
    3.4
    """
    v1 = np.asarray(vm1_cm3_mol, dtype=float)
    if np.any(~(v1 > 0)):
        raise InputError(f"molar volume must be a positive number of cm^3/mol, got {v1}", param="vm1_cm3_mol")
    t = np.asarray(temp_C, dtype=float) + 273.15
    r = ra(hsp1, hsp2)
    return v1 * r * r / (4.0 * R_J_MOL_K * t)


def chi_critical(vm1_cm3_mol, vm2_cm3_mol) -> np.ndarray:
    r"""Critical Flory-Huggins parameter of a binary of unequal molar volumes.

    With liquid 1 as the lattice reference (:math:`N_1 = 1`, :math:`N_2 = V_2/V_1`):

    .. math:: \chi_c = \tfrac12\left(\frac{1}{\sqrt{N_1}} + \frac{1}{\sqrt{N_2}}\right)^2

    Above it the pair splits into two liquid phases over some composition range.

    Parameters
    ----------
    vm1_cm3_mol, vm2_cm3_mol : array_like
        molar volumes [cm^3/mol]

    References
    ----------
    .. [1] Flory, P. J. *Principles of Polymer Chemistry*; Cornell University
       Press, 1953, ch. 13.

    Examples
    --------
    Equal sizes give the classic 2; a solvent against a polymer of 100 times
    its volume gives 0.5 (1 + 0.1)^2 = 0.605.

    >>> float(chi_critical(100.0, 100.0)), round(float(chi_critical(100.0, 10000.0)), 3)
    (2.0, 0.605)
    """
    v1 = np.asarray(vm1_cm3_mol, dtype=float)
    v2 = np.asarray(vm2_cm3_mol, dtype=float)
    if np.any(~(v1 > 0)) or np.any(~(v2 > 0)):
        raise InputError("molar volumes must be positive numbers of cm^3/mol")
    return 0.5 * (1.0 + np.sqrt(v1 / v2)) ** 2


@dataclass(frozen=True)
class MixtureStability:
    """Tangent-plane test of a Flory-Huggins mixture at one composition.

    ``stable`` is True when no other composition lies below the tangent plane
    of the free energy of mixing at ``phi`` (then the mixture does not split);
    ``tpd_min`` is the smallest tangent-plane distance found [RT per mole of
    lattice sites] and ``trial`` the composition where it was found (the rough
    composition of a phase that would separate).
    """

    phi: tuple[float, ...]
    stable: bool
    tpd_min: float
    trial: tuple[float, ...]


def _fh_g(Y, N, chi):
    """Flory-Huggins free energy of mixing per lattice site [RT] at the rows of Y (volume fractions)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        ent = np.where(Y > 0, Y * np.log(np.where(Y > 0, Y, 1.0)), 0.0) / N
    return ent.sum(axis=-1) + 0.5 * np.einsum("...i,ij,...j->...", Y, chi, Y)


@functools.lru_cache(maxsize=8)
def _simplex_grid(n: int, steps: int) -> np.ndarray:
    """Every composition of n parts in multiples of 1/steps (rows sum to 1), the first n - 1 parts
    in lexicographic order."""
    a = np.indices((steps + 1,) * (n - 1)).reshape(n - 1, -1).T
    a = a[a.sum(axis=1) <= steps].astype(float)
    out = np.column_stack([a, steps - a.sum(axis=1)]) / steps
    out.setflags(write=False)
    return out


@functools.lru_cache(maxsize=2)
def _blas_threads(scipy_loaded: bool):
    """The controller of the BLAS thread pools (threadpoolctl, installed with scikit-learn), or None.

    It knows the libraries loaded when it is made: scipy brings a BLAS of its own, so a second
    one is made once scipy is loaded."""
    try:
        from threadpoolctl import ThreadpoolController
    except ImportError:  # optional: only a matter of speed
        return None
    return ThreadpoolController()


@contextmanager
def one_blas_thread():
    """Inside, BLAS runs on one thread (where threadpoolctl is installed; else as it is).

    The tangent-plane test multiplies small matrices thousands of times: a thread pool only
    adds waiting, most of all when the other cores are busy (8 ms against 47 ms a test here).
    """
    ctl = _blas_threads("scipy.linalg" in sys.modules)
    if ctl is None:
        yield
        return
    with ctl.limit(limits=1, user_api="blas"):
        yield


#: Grid points of the tangent-plane search closer to zero than this are polished by a local search.
POLISH_BELOW = 0.01
#: Steps of the composition grid of the tangent-plane search (1/steps), by number of liquids.
GRID_STEPS = {2: 100, 3: 50, 4: 50}
#: Local searches started from the lowest grid points (away from the mixture itself).
POLISH_STARTS = 2


@functools.lru_cache(maxsize=8)
def _trial_compositions(m: int) -> np.ndarray:
    """Trial phases of the tangent-plane test for ``m`` liquids: a grid of the composition
    simplex and, next to each pure liquid, log-spaced traces (1e-9 to 0.1) of each other liquid
    (where a poor solvent's small solubility lies)."""
    grid = _simplex_grid(m, GRID_STEPS[min(m, 4)] if m <= 4 else 12)
    edge = []
    for i in range(m):
        for j in range(m):
            if i != j:
                for t in np.logspace(-9, -1, 33):
                    y = np.zeros(m)
                    y[i], y[j] = 1.0 - t, t
                    edge.append(y)
    out = np.vstack([grid, np.array(edge)])
    out.setflags(write=False)
    return out


@functools.lru_cache(maxsize=8)
def _trial_terms(m: int) -> np.ndarray:
    """The columns the tangent-plane distance of the trial phases is linear in: ``y_i ln y_i``
    (0 at y_i = 0), ``y_i`` and ``y_i y_j`` (i < j), so that for any mixture
    ``D(y) = terms @ [1/N, -mu, chi_ij (i < j)] + const``: one product for the whole grid."""
    Y = _trial_compositions(m)
    with np.errstate(divide="ignore", invalid="ignore"):
        ylny = np.where(Y > 0, Y * np.log(np.where(Y > 0, Y, 1.0)), 0.0)
    iu, ju = np.triu_indices(m, 1)
    out = np.hstack([ylny, Y, Y[:, iu] * Y[:, ju]])
    out.setflags(write=False)
    return out


def _lowest(D: np.ndarray, k: int) -> np.ndarray:
    """Indices of the ``k`` smallest values of ``D``, smallest first."""
    if D.size > k:
        part = np.argpartition(D, k)[:k]
        return part[np.argsort(D[part], kind="stable")]
    return np.argsort(D, kind="stable")


def mixture_stability(vm_cm3_mol, phi, chi, tol: float = 1e-7) -> MixtureStability:
    r"""Is a multicomponent Flory-Huggins mixture one phase at volume fractions ``phi``?

    With the smallest molar volume as the lattice site, :math:`N_i = V_i/V_{ref}`,
    the free energy of mixing per site is

    .. math:: \frac{g}{RT} = \sum_i \frac{\phi_i \ln \phi_i}{N_i}
              + \sum_{i<j} \chi_{ij} \phi_i \phi_j

    and the mixture is stable when the tangent-plane distance
    :math:`D(y) = g(y) - g(\phi) - \sum_i \mu_i (y_i - \phi_i)`,
    :math:`\mu_i = \partial g/\partial \phi_i`, is nowhere negative on the
    composition simplex (Gibbs' criterion, in the tangent-plane form of
    Michelsen 1982).  The search: a grid of the simplex (steps of 1/50 for 3
    or 4 liquids, :data:`GRID_STEPS`), log-spaced points along each edge near the
    pure liquids (where a split-off phase of a sparingly soluble liquid sits),
    then a local search (BFGS in softmax coordinates, analytic gradient) from
    the lowest points away from ``phi`` that come within
    :data:`POLISH_BELOW` of zero.  On 400 random 3- and 4-liquid problems it
    found all 249 splits that a finer grid (1/100 for 3 liquids) with ten
    Nelder-Mead polishes each found, at 3 ms a problem.  A negative minimum is a proof of
    instability; a non-negative one is as sure as the search.

    Parameters
    ----------
    vm_cm3_mol : array_like (n,)
        molar volumes [cm^3/mol]
    phi : array_like (n,)
        volume fractions, >= 0, summing to 1
    chi : array_like (n, n)
        symmetric interaction parameters per lattice site (diagonal 0), e.g.
        :math:`V_{ref} R_{a,ij}^2 / 4RT` (:func:`chi_flory_huggins` with the
        reference volume)

    References
    ----------
    .. [1] Flory, P. J. *Principles of Polymer Chemistry*; Cornell University
       Press, 1953, ch. 13.
    .. [2] Michelsen, M. L. The isothermal flash problem. Part I. Stability.
       Fluid Phase Equilibria 9 (1982) 1-19. doi:10.1016/0378-3812(82)85001-2

    Examples
    --------
    Two liquids of one size split at 50/50 once chi passes 2 (Flory):

    >>> mixture_stability([100, 100], [0.5, 0.5], [[0, 1.9], [1.9, 0]]).stable
    True
    >>> mixture_stability([100, 100], [0.5, 0.5], [[0, 2.1], [2.1, 0]]).stable
    False
    """
    with one_blas_thread():
        return _mixture_stability(vm_cm3_mol, phi, chi, tol)


def _mixture_stability(vm_cm3_mol, phi, chi, tol: float) -> MixtureStability:
    v = np.asarray(vm_cm3_mol, dtype=float)
    x = np.asarray(phi, dtype=float)
    C = np.asarray(chi, dtype=float)
    n = v.size
    if n < 2 or x.shape != (n,) or C.shape != (n, n):
        raise InputError(f"expected n >= 2 molar volumes, n fractions and an n x n chi, got {v.shape}, {x.shape}, "
                         f"{C.shape}", param="chi")
    if np.any(~(v > 0)) or np.any(x < 0) or abs(x.sum() - 1.0) > 1e-6 or not np.all(np.isfinite(C)):
        raise InputError("molar volumes must be positive, fractions >= 0 summing to 1, chi finite", param="phi")
    C = 0.5 * (C + C.T)
    np.fill_diagonal(C, 0.0)
    N = v / v.min()
    keep = x > 0  # components absent from the blend do not take part
    if keep.sum() < 2:
        return MixtureStability(tuple(float(t) for t in x), True, 0.0, tuple(float(t) for t in x))
    N, C, xs = N[keep], C[np.ix_(keep, keep)], x[keep] / x[keep].sum()
    m = xs.size
    mu = (np.log(xs) + 1.0) / N + C @ xs
    g0 = float(_fh_g(xs, N, C))
    const = float(xs @ mu) - g0
    iu, ju = np.triu_indices(m, 1)
    Y = _trial_compositions(m)
    D = _trial_terms(m) @ np.concatenate([1.0 / N, -mu, C[iu, ju]]) + const
    lowest = int(np.argmin(D))
    best_d, best_y = float(D[lowest]), Y[lowest]
    if best_d >= -tol:
        # polish, in softmax coordinates, the lowest points away from the mixture itself
        # (next to it the distance is ~0 anyway) that come close to zero: of the 200 lowest
        # points, those within POLISH_BELOW of zero (ordered among themselves alone)
        near = np.flatnonzero(D < POLISH_BELOW)
        order = near[_lowest(D[near], 200)]
        inv_n = 1.0 / N

        def f(z):
            e = np.exp(z - z.max())
            y = e / e.sum()
            lny = np.log(np.maximum(y, 1e-300))
            cy = C @ y
            d = float((y * lny) @ inv_n + 0.5 * (y @ cy) - y @ mu + const)
            grad_y = (lny + 1.0) * inv_n + cy - mu
            return d, y * (grad_y - y @ grad_y)  # chain rule through the softmax

        far = order[np.max(np.abs(Y[order] - xs), axis=1) > 0.05][:POLISH_STARTS]
        if far.size:
            best_d, best_y = _polish(f, Y[far], best_d, best_y)
    trial = np.zeros(n)
    trial[keep] = best_y
    return MixtureStability(tuple(float(t) for t in x), bool(best_d >= -tol), best_d, tuple(float(t) for t in trial))


def _polish(f, starts, best_d: float, best_y):
    """Local searches (BFGS in softmax coordinates, :func:`_bfgs`) of the tangent-plane distance
    ``f`` from each of the compositions ``starts``; the lowest distance and its composition."""
    for y0 in starts:
        fun, z = _bfgs(f, np.log(np.clip(y0, 1e-12, None)))
        if fun < best_d:
            e = np.exp(z - z.max())
            best_d, best_y = float(fun), e / e.sum()
    return best_d, best_y


def _bfgs(f, z0, maxiter: int = 200, gtol: float = 1e-10, ftol: float = 1e-14):
    """Minimise ``f`` (returning value and gradient) from ``z0`` by BFGS with a backtracking
    (Armijo) line search (Nocedal and Wright, *Numerical Optimization*, 2nd ed., 2006, alg. 6.1
    and 3.1).  For the 2-4 variables of a tangent-plane search, plain numpy is faster than loading
    an optimisation library; it stops on the gradient (``gtol``) or on a relative fall of ``f``
    below ``ftol``, the tests of L-BFGS-B.  Returns ``(f, z)`` at the lowest point found."""
    z = np.asarray(z0, dtype=float).copy()
    fz, g = f(z)
    eye = np.eye(z.size)
    H = eye.copy()
    first = True
    for _ in range(maxiter):
        if abs(g).max() <= gtol:
            break
        p = -H @ g
        if g @ p >= 0.0:  # not a descent direction: start the curvature estimate again
            H, p = eye.copy(), -g
        t, slope = 1.0, float(g @ p)
        while True:
            zn = z + t * p
            fn, gn = f(zn)
            if fn <= fz + 1e-4 * t * slope or t < 1e-10:
                break
            t *= 0.5
        if fn > fz:
            break
        s, y = zn - z, gn - g
        done = (fz - fn) <= ftol * max(abs(fz), abs(fn), 1.0)
        z, fz, g = zn, fn, gn
        sy = float(s @ y)
        if sy > 1e-300:
            rho = 1.0 / sy
            if first:  # scale the first curvature estimate (Nocedal and Wright, eq. 6.20)
                H, first = eye * (sy / float(y @ y)), False
            V = eye - rho * (s[:, None] * y)
            H = V @ H @ V.T + rho * (s[:, None] * s)
        if done:
            break
    return float(fz), z


@dataclass(frozen=True)
class Binodal:
    """Coexisting compositions of a Flory-Huggins binary (volume fractions of liquid 2).

    ``phi_a`` is the fraction of liquid 2 in the phase rich in liquid 1 (the
    solubility of 2 in 1), ``phi_b`` its fraction in the phase rich in 2, so
    ``1 - phi_b`` is the solubility of 1 in 2.  A miscible pair
    (``chi <= chi_c``) has ``split = False`` and ``phi_a = phi_b = nan``.
    """

    chi: float
    chi_critical: float
    split: bool
    phi_a: float
    phi_b: float
    success: bool
    message: str

    def to_dict(self) -> dict:
        return asdict(self)


def _softplus(x):
    return np.logaddexp(0.0, x)


def _fh_parts(u, chi, n1, n2):
    """g', g - phi g', g'' of the FH mixing free energy per site at logit(phi) = u."""
    lnp = -_softplus(-u)  # ln phi
    lnq = -_softplus(u)  # ln (1 - phi)
    p = np.exp(lnp)
    q = np.exp(lnq)
    g = q / n1 * lnq + p / n2 * lnp + chi * p * q
    g1 = -(lnq + 1.0) / n1 + (lnp + 1.0) / n2 + chi * (q - p)
    g2 = 1.0 / (n1 * q) + 1.0 / (n2 * p) - 2.0 * chi
    return p, q, g, g1, g - p * g1, g2


def _binodal_start(chi: float, n1: float, n2: float, chic: float) -> np.ndarray | None:
    """A start ``(u_a, u_b)`` (logits of the two phases' phi) for the common-tangent Newton
    iteration of :func:`binodal`, or None just above the critical point (no two-phase region).

    Where an end sits deep in a phase the solubility is tiny, and the strong-segregation limit
    gives the start: ln phi_a ~ N2/N1 - 1 - chi N2 and ln(1 - phi_b) ~ N1/N2 - 1 - chi N1.
    Near the critical point the spinodal roots s1 < s2 bound the concave region; the double
    tangent's slope m lies between g'(s2) and g'(s1), and for a trial slope each convex branch
    touches the line g - m phi at its minimum: bisect on m until both minima are equal (a
    vectorised stand-in for the convex hull).
    """
    if chi > 2.5 * chic:  # well split: the strong-segregation limit is a good start
        x = np.array([n2 / n1 - 1.0 - chi * n2, -(n1 / n2 - 1.0 - chi * n1)], dtype=float)
        x = np.minimum(x, [-0.5, np.inf])
        return np.maximum(x, [-np.inf, 0.5])
    qa = 2.0 * chi * n1 * n2
    qb = n2 - n1 - qa
    disc = qb * qb - 4.0 * qa * n1
    if disc <= 0:
        return None
    s1 = (-qb - math.sqrt(disc)) / (2.0 * qa)
    s2 = (-qb + math.sqrt(disc)) / (2.0 * qa)
    reach = max(40.0, 1.5 * chi * max(n1, n2) + 10.0)
    us1 = math.log(s1) - math.log1p(-s1)
    us2 = math.log(s2) - math.log1p(-s2)
    offsets = np.geomspace(1e-4 * (us2 - us1), reach, 400)  # fine next to the spinodal
    ul = (us1 - offsets)[::-1]
    ur = us2 + offsets
    pl, _, gl, _, _, _ = _fh_parts(ul, chi, n1, n2)
    pr, _, gr, _, _, _ = _fh_parts(ur, chi, n1, n2)
    lo = float(_fh_parts(ur[0], chi, n1, n2)[3])
    hi = float(_fh_parts(ul[-1], chi, n1, n2)[3])
    for _ in range(32):  # a start for Newton: 2^-32 of the bracket is plenty
        m = 0.5 * (lo + hi)
        if (gl - m * pl).min() - (gr - m * pr).min() > 0:
            hi = m
        else:
            lo = m
    m = 0.5 * (lo + hi)
    return np.array([ul[np.argmin(gl - m * pl)], ur[np.argmin(gr - m * pr)]], dtype=float)


def _common_tangent(x: np.ndarray, chi: float, n1: float, n2: float) -> tuple[np.ndarray, bool]:
    """Newton's method on the common tangent (equal slope and intercept of g at both phases), in
    the logits ``x``; returns the polished ``x`` and whether it converged."""
    for _ in range(100):
        pa, qa, _, g1a, ha, g2a = _fh_parts(x[0], chi, n1, n2)
        pb, qb, _, g1b, hb, g2b = _fh_parts(x[1], chi, n1, n2)
        f = np.array([g1a - g1b, ha - hb])
        sa, sb = pa * qa, pb * qb  # d phi / d u
        jac = np.array([[g2a * sa, -g2b * sb], [-pa * g2a * sa, pb * g2b * sb]])
        try:
            step = np.linalg.solve(jac, -f)
        except np.linalg.LinAlgError:
            return x, False
        step = np.clip(step, -2.0, 2.0)
        x = x + step
        if np.max(np.abs(step)) < 1e-11:
            return x, True
    return x, False


def binodal(chi, n1=1.0, n2=1.0) -> Binodal:
    r"""Mutual solubilities of a Flory-Huggins binary by the common tangent.

    The mixing free energy per lattice site (:math:`\phi` = volume fraction of
    liquid 2, :math:`N_i = V_i/V_\mathrm{ref}`)

    .. math::
        \frac{\Delta G}{RT} = \frac{1-\phi}{N_1}\ln(1-\phi)
        + \frac{\phi}{N_2}\ln\phi + \chi\,\phi(1-\phi)

    has a common tangent at the two coexisting compositions
    :math:`\phi_a < \phi_b`: :math:`g'(\phi_a) = g'(\phi_b)` and
    :math:`g - \phi g'` equal at both.  Started from the strong-segregation
    limit (far from critical) or from a bisection on the tangent's slope
    between the spinodal points (near critical), then refined by Newton's
    method in logit coordinates, so that solubilities far below 1e-10 still
    resolve.

    Parameters
    ----------
    chi : float
        interaction parameter per reference site [-]
    n1, n2 : float
        sizes of the two liquids in reference sites [-] (use ``n1 = 1``,
        ``n2 = V2/V1`` with :func:`chi_flory_huggins`)

    Returns
    -------
    Binodal
        non-convergence is reported in ``success``/``message``, not raised

    References
    ----------
    .. [1] Flory, P. J. *Principles of Polymer Chemistry*; Cornell University
       Press, 1953, ch. 13.

    Examples
    --------
    Symmetric binary, chi = 3: the coexisting phases satisfy
    ln[phi/(1-phi)] = chi (2 phi - 1), whose root is phi = 0.0707 (a classic
    textbook check; any table of the symmetric regular solution).

    >>> b = binodal(3.0)
    >>> round(b.phi_a, 4), round(b.phi_b, 4)
    (0.0707, 0.9293)
    """
    chi = float(chi)
    n1 = float(n1)
    n2 = float(n2)
    if not (math.isfinite(chi) and n1 > 0 and n2 > 0):
        raise InputError(f"expected a finite chi and positive sizes, got chi={chi}, n1={n1}, n2={n2}", param="chi")
    chic = 0.5 * (1.0 / math.sqrt(n1) + 1.0 / math.sqrt(n2)) ** 2
    nan = float("nan")
    if chi <= chic * (1 + 1e-9):
        return Binodal(chi, chic, False, nan, nan, True, "miscible in all proportions (chi <= chi_c)")
    x = _binodal_start(chi, n1, n2, chic)
    if x is None:
        return Binodal(chi, chic, True, nan, nan, False, "no two-phase region found (just above critical)")
    x, ok = _common_tangent(x, chi, n1, n2)
    pa = float(1.0 / (1.0 + np.exp(-x[0])))
    pb = float(1.0 / (1.0 + np.exp(-x[1])))
    if not ok or not (pb - pa > 1e-6):
        return Binodal(chi, chic, True, pa, pb, False, "Newton refinement of the common tangent did not converge")
    return Binodal(chi, chic, True, pa, pb, True, "two liquid phases between phi_a and phi_b")


def ideal_solubility(temp_C, mp_C, dHfus_kJ_mol) -> float:
    r"""Ideal mole-fraction solubility of a crystalline solid (Schroeder-van Laar).

    .. math:: \ln x^\mathrm{id} = -\frac{\Delta H_\mathrm{fus}}{R}\left(\frac1T - \frac1{T_m}\right)

    (heat-capacity terms neglected).

    Parameters
    ----------
    temp_C : float
        temperature [C], below the melting point
    mp_C : float
        melting point [C]
    dHfus_kJ_mol : float
        enthalpy of fusion [kJ/mol]

    References
    ----------
    .. [1] Prausnitz, J. M.; Lichtenthaler, R. N.; de Azevedo, E. G.
       *Molecular Thermodynamics of Fluid-Phase Equilibria*, 3rd ed.;
       Prentice Hall, 1999, ch. 11.

    Examples
    --------
    Naphthalene, Tm = 80.2 C, 19.01 kJ/mol (``chemicals`` library values), at
    25 C: x = 0.302 (textbooks quote about 0.30).

    >>> round(ideal_solubility(25.0, 80.2, 19.01), 3)
    0.302
    """
    if mp_C is None or dHfus_kJ_mol is None or not (math.isfinite(mp_C) and math.isfinite(dHfus_kJ_mol)):
        raise MissingDataError("solid solubility needs the solute's melting point and enthalpy of fusion")
    if dHfus_kJ_mol <= 0:
        raise InputError(f"enthalpy of fusion must be positive, got {dHfus_kJ_mol}", param="dHfus_kJ_mol")
    if temp_C >= mp_C:
        raise OutOfRangeError(
            f"temp_C: {temp_C:g} C is at or above the solute's melting point ({mp_C:g} C): it is a liquid "
            "there, so ask whether the two liquids mix instead"
        )
    t = temp_C + 273.15
    tm = mp_C + 273.15
    return math.exp(-dHfus_kJ_mol * 1000.0 / R_J_MOL_K * (1.0 / t - 1.0 / tm))


def ln_gamma_hansen(x2, solute_hsp, vm2_cm3_mol, solvent_hsp, vm1_cm3_mol, temp_C=25.0, combinatorial=True):
    r"""Activity coefficient of a solute (2) in a solvent (1) from HSP.

    Regular-solution residual term in the Hansen form, plus (optionally) the
    Flory-Huggins combinatorial term for unequal molar volumes:

    .. math::
        \ln\gamma_2 = \frac{V_2\,\phi_1^2}{RT}\left[\Delta\delta_D^2
          + \tfrac14\Delta\delta_P^2 + \tfrac14\Delta\delta_H^2\right]
          + \ln\frac{\phi_2}{x_2} + 1 - \frac{\phi_2}{x_2}

    with :math:`\phi_i` the volume fractions.

    Parameters
    ----------
    x2 : array_like
        mole fraction of the solute [-]
    solute_hsp, solvent_hsp : array_like, shape (3,)
        dD, dP, dH [MPa^0.5]
    vm2_cm3_mol, vm1_cm3_mol : float
        molar volumes of the (subcooled liquid) solute and of the solvent [cm^3/mol]
    temp_C : float
        temperature [C]
    combinatorial : bool
        include the Flory-Huggins combinatorial term

    References
    ----------
    .. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*,
       2nd ed., CRC Press, 2007, ch. 2.
    .. [2] Flory, P. J. *J. Chem. Phys.* 1942, 10, 51-61. doi:10.1063/1.1723621
    """
    x2 = np.asarray(x2, dtype=float)
    v1 = float(vm1_cm3_mol)
    v2 = float(vm2_cm3_mol)
    a2 = ra(solute_hsp, solvent_hsp) ** 2 / 4.0
    vol1 = (1.0 - x2) * v1
    vol2 = x2 * v2
    phi1 = vol1 / (vol1 + vol2)
    t = temp_C + 273.15
    out = v2 * phi1 * phi1 * a2 / (R_J_MOL_K * t)
    if combinatorial:
        ratio = v2 / (vol1 + vol2)  # phi2 / x2
        out = out + np.log(ratio) + 1.0 - ratio
    return out


@dataclass(frozen=True)
class SolubilityEstimate:
    """Estimated solubility of a solid solute (an estimate, never a measurement)."""

    temp_C: float
    mole_fraction: float
    mass_fraction: float
    g_per_L: float
    ideal_mole_fraction: float
    gamma: float
    basis: str
    note: str

    def to_dict(self) -> dict:
        return asdict(self)


def _first_root(f, lo: float, hi: float, n: int = 241) -> float:
    """The first point where the vectorised ``f`` turns from negative to zero or positive on
    ``lo..hi``: a scan of ``n`` points, then bisection (no scipy import: keeps the CLI fast).
    ``lo`` when ``f`` is already non-negative there, ``hi`` when it never turns."""
    grid = np.linspace(lo, hi, n)
    idx = np.nonzero(f(grid) >= 0)[0]
    j = int(idx[0]) if idx.size else len(grid) - 1
    if j == 0:
        return float(grid[0])
    a, b = float(grid[j - 1]), float(grid[j])
    for _ in range(60):
        mid = 0.5 * (a + b)
        if f(mid) >= 0:
            b = mid
        else:
            a = mid
    return 0.5 * (a + b)


def solid_solubility(
    solute_hsp,
    vm2_cm3_mol,
    mw2_g_mol,
    mp_C,
    dHfus_kJ_mol,
    solvent_hsp,
    vm1_cm3_mol,
    mw1_g_mol,
    temp_C=25.0,
    combinatorial=True,
) -> SolubilityEstimate:
    r"""Solubility of a crystalline solute in a liquid (or a blend) from HSP.

    Solves :math:`\ln x_2 = \ln x_2^\mathrm{id} - \ln\gamma_2(x_2)` for the
    saturation mole fraction, with :func:`ideal_solubility` and
    :func:`ln_gamma_hansen`; the lowest root is taken (the first saturation
    met when adding solid).  Mass fraction from the molar masses; g of solute
    per L of solution with additive volumes (the solute counted at its
    subcooled-liquid molar volume).  For a blend pass its mixed HSP
    (:func:`mix`), its mole-average molar volume and molar mass.

    Parameters
    ----------
    solute_hsp : array_like, shape (3,)
        dD, dP, dH of the solute [MPa^0.5]
    vm2_cm3_mol : float
        molar volume of the solute (subcooled liquid) [cm^3/mol]
    mw2_g_mol : float
        molar mass of the solute [g/mol]
    mp_C : float
        melting point of the solute [C]
    dHfus_kJ_mol : float
        enthalpy of fusion of the solute [kJ/mol]
    solvent_hsp : array_like, shape (3,)
        dD, dP, dH of the solvent or blend [MPa^0.5]
    vm1_cm3_mol : float
        molar volume of the solvent [cm^3/mol]
    mw1_g_mol : float
        molar mass of the solvent [g/mol]
    temp_C : float
        temperature [C], below the solute's melting point
    combinatorial : bool
        include the Flory-Huggins combinatorial term

    Returns
    -------
    SolubilityEstimate

    References
    ----------
    .. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*,
       2nd ed., CRC Press, 2007, ch. 2.
    .. [2] Prausnitz, J. M.; Lichtenthaler, R. N.; de Azevedo, E. G.
       *Molecular Thermodynamics of Fluid-Phase Equilibria*, 3rd ed., 1999, ch. 11.

    Examples
    --------
    Naphthalene (19.2, 2.0, 5.9 from Hansen 2007; subcooled-liquid V about
    123 cm^3/mol, from memory; 128.17 g/mol; 80.2 C and 19.01 kJ/mol from the
    ``chemicals`` library) in toluene (18.0, 1.4, 2.0; 106.8 cm^3/mol, Hansen
    2007; 92.14 g/mol) at 25 C: x = 0.27 against an ideal 0.302; the measured
    value is about 0.28 (from memory).

    >>> s = solid_solubility([19.2, 2.0, 5.9], 123.0, 128.17, 80.2, 19.01,
    ...                      [18.0, 1.4, 2.0], 106.8, 92.14, 25.0)
    >>> round(s.mole_fraction, 2)
    0.27
    """
    for label, v in (("vm2_cm3_mol", vm2_cm3_mol), ("mw2_g_mol", mw2_g_mol), ("vm1_cm3_mol", vm1_cm3_mol), ("mw1_g_mol", mw1_g_mol)):
        if v is None or not (float(v) > 0):
            raise MissingDataError(f"solid solubility needs {label} (a positive number), got {v}")
    xid = ideal_solubility(temp_C, mp_C, dHfus_kJ_mol)
    lnxid = math.log(xid)

    def f(lnx):
        return lnx + ln_gamma_hansen(np.exp(lnx), solute_hsp, vm2_cm3_mol, solvent_hsp, vm1_cm3_mol, temp_C, combinatorial) - lnxid

    # f -> -inf as x -> 0 and f = -ln x_id >= 0 at x = 1
    x = math.exp(_first_root(f, -60.0, 0.0))
    gamma = xid / x
    m2 = x * mw2_g_mol
    m1 = (1 - x) * mw1_g_mol
    w = m2 / (m1 + m2)
    g_l = 1000.0 * m2 / (x * vm2_cm3_mol + (1 - x) * vm1_cm3_mol)
    note = (
        "estimate: ideal solubility x activity coefficient from HSP (regular solution"
        + (" + Flory-Huggins combinatorial" if combinatorial else "")
        + "); solvation and hydrogen-bond complexing are not modelled, so confirm at the bench"
    )
    return SolubilityEstimate(float(temp_C), x, w, g_l, xid, gamma, "estimated", note)


@dataclass(frozen=True)
class PartitionEstimate:
    """Liquid-liquid partition of a dilute solute between phase I and phase II."""

    k_x: float
    k_c: float
    log10_k_c: float
    gamma_inf_1: float
    gamma_inf_2: float
    basis: str
    note: str

    def to_dict(self) -> dict:
        return asdict(self)


def partition_coefficient(
    solute_hsp, vm_solute_cm3_mol, phase1_hsp, vm1_cm3_mol, phase2_hsp, vm2_cm3_mol, temp_C=25.0, combinatorial=True
) -> PartitionEstimate:
    r"""Partition coefficient of a dilute solute between two immiscible liquids.

    At equal activity in both phases and infinite dilution,

    .. math::
        K_x = \frac{x^{II}}{x^{I}} = \frac{\gamma^\infty_{I}}{\gamma^\infty_{II}},\qquad
        K_c = \frac{c^{II}}{c^{I}} = K_x \frac{V_I}{V_{II}}

    with :math:`\gamma^\infty` from :func:`ln_gamma_hansen` at :math:`x \to 0`
    and :math:`V` the molar volumes of the two phases.  Use it for washing or
    back-extraction steps (which phase takes the solute, and roughly how
    strongly).  Phases are taken as the pure liquids: their mutual solubility
    (e.g. water in octanol) is not modelled.

    Parameters
    ----------
    solute_hsp, phase1_hsp, phase2_hsp : array_like, shape (3,)
        dD, dP, dH [MPa^0.5]
    vm_solute_cm3_mol, vm1_cm3_mol, vm2_cm3_mol : float
        molar volumes [cm^3/mol]
    temp_C : float
        temperature [C]

    Returns
    -------
    PartitionEstimate
        ``k_c`` > 1 means the solute prefers phase II.

    References
    ----------
    .. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*,
       2nd ed., CRC Press, 2007, ch. 2.
    """
    for label, v in (("vm_solute_cm3_mol", vm_solute_cm3_mol), ("vm1_cm3_mol", vm1_cm3_mol), ("vm2_cm3_mol", vm2_cm3_mol)):
        if v is None or not (float(v) > 0):
            raise MissingDataError(f"partition coefficient needs {label} (a positive number), got {v}")
    lg1 = float(ln_gamma_hansen(0.0, solute_hsp, vm_solute_cm3_mol, phase1_hsp, vm1_cm3_mol, temp_C, combinatorial))
    lg2 = float(ln_gamma_hansen(0.0, solute_hsp, vm_solute_cm3_mol, phase2_hsp, vm2_cm3_mol, temp_C, combinatorial))
    kx = math.exp(lg1 - lg2)
    kc = kx * float(vm1_cm3_mol) / float(vm2_cm3_mol)
    note = "estimate from HSP activity coefficients at infinite dilution; mutual solubility of the phases ignored"
    return PartitionEstimate(kx, kc, math.log10(kc), math.exp(lg1), math.exp(lg2), "estimated", note)


__all__ += ["ra_matrix", "rank_order"]


def _ra2_matrix(targets, solvents) -> np.ndarray:
    a = scaled(np.atleast_2d(targets))
    b = scaled(np.atleast_2d(solvents))
    d2 = a @ b.T
    d2 *= -2.0
    d2 += np.einsum("ij,ij->i", a, a)[:, None]
    d2 += np.einsum("ij,ij->i", b, b)[None, :]
    np.maximum(d2, 0.0, out=d2)
    return d2


def ra_matrix(targets, solvents) -> np.ndarray:
    r"""Ra between every target and every solvent, shape (n_targets, n_solvents) [MPa^0.5].

    Computed in the scaled coordinates of :func:`scaled` with the expansion
    :math:`|a-b|^2 = |a|^2 + |b|^2 - 2a\cdot b` (one matrix product), clipped
    at zero against rounding; agrees with :func:`ra` to about 1e-12 MPa^0.5.

    Parameters
    ----------
    targets : array_like, shape (n, 3)
        dD, dP, dH [MPa^0.5]
    solvents : array_like, shape (m, 3)
        dD, dP, dH [MPa^0.5]
    """
    return np.sqrt(_ra2_matrix(targets, solvents))


def rank_order(targets, solvents, r0=None, k: int | None = None):
    """Best solvents for each of many targets, by Ra (or RED with radii).

    Sorts the squared distances (same order, no square root on the whole
    matrix); ties are broken arbitrarily.

    Parameters
    ----------
    targets : array_like, shape (n, 3)
        dD, dP, dH [MPa^0.5]
    solvents : array_like, shape (m, 3)
        dD, dP, dH [MPa^0.5]
    r0 : array_like, shape (n,), optional
        radius of each target [MPa^0.5]; the order is the same as by Ra (one
        radius per target), the returned score becomes RED
    k : int, optional
        keep the best k per target (partial sort); default all

    Returns
    -------
    order : ndarray of int, shape (n, k)
        solvent indices, best first
    score : ndarray, shape (n, k)
        Ra [MPa^0.5] (or RED [-]) in that order

    Examples
    --------
    Hexane's own row first, then toluene (Ra 6.66 from the 2007 handbook
    values), then ethanol (Ra 21.38, as worked in the tests):

    >>> order, score = rank_order([[14.9, 0.0, 0.0]], [[15.8, 8.8, 19.4], [14.9, 0.0, 0.0], [18.0, 1.4, 2.0]])
    >>> order.tolist(), score.round(2).tolist()
    ([[1, 2, 0]], [[0.0, 6.66, 21.38]])
    """
    d2 = _ra2_matrix(targets, solvents)
    m = d2.shape[1]
    if k is None or k >= m:
        order = np.argsort(d2, axis=1)
        # sorting the values again is cheaper than gathering them through the order
        score = np.sort(d2, axis=1)
    else:
        if k < 1:
            raise InputError(f"expected at least 1, got {k}", param="k")
        part = np.argpartition(d2, k - 1, axis=1)[:, :k]
        sub = np.take_along_axis(d2, part, axis=1)
        order = np.take_along_axis(part, np.argsort(sub, axis=1), axis=1)
        score = np.take_along_axis(d2, order, axis=1)
    np.sqrt(score, out=score)
    if r0 is not None:
        r = np.asarray(r0, dtype=float).reshape(-1, 1)
        if np.any(~(r > 0)):
            raise InputError("every radius must be a positive number of MPa^0.5", param="r0")
        score /= r
    return order, score


__all__ += ["blend_pseudo_solvent"]


def blend_pseudo_solvent(hsp, volume_fractions, vm_cm3_mol, mw_g_mol):
    r"""A blend as one pseudo-liquid, for :func:`solid_solubility` or :func:`partition_coefficient`.

    HSP by :func:`mix`; molar volume and molar mass as mole-fraction averages
    (the lattice of the Flory-Huggins terms counts molecules):

    .. math::
        x_i = \frac{\phi_i/V_i}{\sum_j \phi_j/V_j},\qquad
        V = \sum_i x_i V_i = \Big(\sum_i \phi_i/V_i\Big)^{-1},\qquad
        M = \sum_i x_i M_i

    Parameters
    ----------
    hsp : array_like, shape (n, 3)
        dD, dP, dH of the components [MPa^0.5]
    volume_fractions : array_like, shape (n,)
        volume fractions [-]
    vm_cm3_mol : array_like, shape (n,)
        molar volumes [cm^3/mol]
    mw_g_mol : array_like, shape (n,)
        molar masses [g/mol]

    Returns
    -------
    hsp : ndarray, shape (3,)
        [MPa^0.5]
    vm : float
        [cm^3/mol]
    mw : float
        [g/mol]

    Examples
    --------
    Ethanol (58.5 cm^3/mol, 46.07 g/mol) and water (18.0, 18.015) 50/50 by
    volume: x_water = (0.5/18)/(0.5/18 + 0.5/58.5) = 0.765, so
    V = 1/(0.5/58.5 + 0.5/18) = 27.5 cm^3/mol and M = 0.765 * 18.015 + 0.235 * 46.07
    = 24.62 g/mol (by hand).

    >>> h, v, m = blend_pseudo_solvent([[15.8, 8.8, 19.4], [15.5, 16.0, 42.3]], [0.5, 0.5], [58.5, 18.0], [46.07, 18.015])
    >>> round(v, 1), round(m, 2)
    (27.5, 24.62)
    """
    h = mix(hsp, volume_fractions)
    f = np.asarray(volume_fractions, dtype=float)
    v = np.asarray(vm_cm3_mol, dtype=float)
    m = np.asarray(mw_g_mol, dtype=float)
    if v.shape != f.shape or m.shape != f.shape or np.any(~(v > 0)) or np.any(~(m > 0)):
        raise InputError("blend_pseudo_solvent: one positive molar volume and molar mass per component are needed")
    n = f / v
    x = n / n.sum()
    return h, float(1.0 / n.sum()), float(np.dot(x, m))
