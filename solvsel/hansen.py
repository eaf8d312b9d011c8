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

from .errors import InputError

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
        raise InputError(f"{name}: expected dD, dP, dH (3 numbers), got shape {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise InputError(f"{name}: HSP values must be finite numbers")
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
        raise InputError(f"R0 must be a positive number of MPa^0.5, got {r0}")
    return ra(a, b) / r0
