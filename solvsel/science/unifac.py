r"""Activity coefficients by group contribution (UNIFAC): which groups a molecule is made of, and how
the groups of a mixture interact.

Three published parameter sets, as the reference library ``thermo`` (``thermo.unifac``) ships them:

- ``"dortmund"``: modified UNIFAC (Dortmund) [1]_, subgroups ``DOUFSG`` and the interaction table
  ``DOUFIP2016`` (temperature-dependent ``a + b T + c T^2``), with the combinatorial term on
  :math:`r^{3/4}`;
- ``"original"``: UNIFAC of Fredenslund, Jones and Prausnitz [2]_ (``UFSG``, ``UFIP``, ``a`` only);
- ``"lle"``: UNIFAC with the liquid-liquid parameters of Magnussen, Rasmussen and Fredenslund [3]_
  (``LLEUFSG``, ``LLEUFIP``; the original model's equations);
- ``"nist"``: modified UNIFAC of NIST [4]_ (``NISTUFSG``, ``NISTUFIP``; the Dortmund equations, more
  subgroups: aromatic acids, ketones and amides among them);
- ``"dortmund2"``: modified UNIFAC 2.0 [5]_, the Dortmund subgroups with the table ``DOUF2IP``, whose
  missing interaction parameters were completed by machine learning (the Dortmund equations).

Group assignment (:func:`groups`): the Dortmund Data Bank's own assignment of the compound where
``thermo`` has it (found by InChIKey, ``UNIFAC_group_assignment_DDBST``; not for ``"lle"`` and ``"nist"``,
whose ids differ), else the subgroups' SMARTS patterns, each atom once, by ``thermo``'s priority rules
(``smarts_fragment_priority``).  A molecule that cannot be covered is refused, naming the atoms left
over; a mixture whose groups lack a published interaction parameter is refused by :func:`ln_gammas`
(:func:`interaction_gaps` names the pairs).

.. math::
    \ln\gamma_i = \underbrace{1 - V'_i + \ln V'_i - 5 q_i\Big(1 - \frac{V_i}{F_i} + \ln\frac{V_i}{F_i}\Big)}_{\text{combinatorial}}
      + \underbrace{\sum_k \nu_{ki}\,(\ln\Gamma_k - \ln\Gamma_k^{(i)})}_{\text{residual}}

with :math:`V_i = r_i/\sum_j x_j r_j`, :math:`F_i = q_i/\sum_j x_j q_j`, :math:`V'_i` the same as
:math:`V_i` on :math:`r^{3/4}` (Dortmund) or equal to it (original, LLE), and
:math:`\ln\Gamma_k = Q_k[1 - \ln\sum_m\Theta_m\Psi_{mk} - \sum_m \Theta_m\Psi_{km}/\sum_n\Theta_n\Psi_{nm}]`,
:math:`\Psi_{mn} = \exp(-(a_{mn} + b_{mn}T + c_{mn}T^2)/T)`.

References
----------
.. [1] Gmehling, J.; Li, J.; Schiller, M. *Ind. Eng. Chem. Res.* 32 (1993) 178 (the method); the
   parameters are ``thermo``'s table ``DOUFIP2016`` ("Dortmund parameters as published by 2016", the
   publicly released ones; ``thermo`` cites Jakob, A.; Grensemann, H.; Lohmann, J.; Gmehling, J.
   *Ind. Eng. Chem. Res.* 45 (2006) 7924-7933 for the revision before it).
.. [2] Fredenslund, A.; Jones, R. L.; Prausnitz, J. M. *AIChE J.* 21 (1975) 1086-1099.
.. [3] Magnussen, T.; Rasmussen, P.; Fredenslund, A. *Ind. Eng. Chem. Process Des. Dev.* 20 (1981) 331-339.
.. [4] Kang, J. W.; Diky, V.; Frenkel, M. *Fluid Phase Equilib.* 388 (2015) 128-141.
.. [5] Hayer, N.; Hasse, H.; Jirasek, F. *Ind. Eng. Chem. Res.* 64 (2025) 10304-10313.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Mapping, Sequence

import numpy as np

from ..errors import InputError, MissingDataError

__all__ = ["MODELS", "groups", "ln_gammas", "interaction_gaps", "solute_in_liquids", "cas_of_smiles", "model_label"]

#: The parameter sets: model -> (thermo subgroup table, main group table, interaction table, DDBST key, label).
MODELS = {
    "dortmund": ("DOUFSG", "DOUFMG", "DOUFIP2016", "MODIFIED_UNIFAC", "modified UNIFAC (Dortmund), 2016 parameters"),
    "original": ("UFSG", "UFMG", "UFIP", "UNIFAC", "UNIFAC (original)"),
    "lle": ("LLEUFSG", "LLEMG", "LLEUFIP", None, "UNIFAC-LLE (Magnussen 1981)"),
    "nist": ("NISTUFSG", "NISTUFMG", "NISTUFIP", None, "modified UNIFAC (NIST 2015)"),
    "dortmund2": ("DOUFSG", "DOUFMG", "DOUF2IP", "MODIFIED_UNIFAC",
                  "modified UNIFAC 2.0 (Dortmund groups, parameter table completed by machine learning)"),
}
#: The subgroup lists ``thermo`` fragments with (with priorities), per model.
_FRAGMENT_LISTS = {"dortmund": "DOUFSG_SUBGROUPS", "original": "UNIFAC_SUBGROUPS", "lle": "UNIFAC_LLE_SUBGROUPS",
                   "nist": "NISTUFSG_SUBGROUPS", "dortmund2": "DOUFSG_SUBGROUPS"}
#: Models with the modified (Dortmund) equations: temperature-dependent interactions, r^(3/4) in the
#: combinatorial term.
_MODIFIED = ("dortmund", "nist", "dortmund2")


def _check_model(model: str) -> str:
    if model not in MODELS:
        raise InputError(f"unknown UNIFAC model {model!r}", param="model", value=model,
                         expected=", ".join(MODELS))
    return model


def model_label(model: str) -> str:
    """The model's name in words.

    >>> model_label("dortmund")
    'modified UNIFAC (Dortmund), 2016 parameters'
    """
    return MODELS[_check_model(model)][4]


@lru_cache(maxsize=None)
def _tables(model: str):
    """(subgroups, interaction parameters) of ``model`` from ``thermo.unifac``."""
    import thermo.unifac as tu

    sub, _, inter, _, _ = MODELS[_check_model(model)]
    return getattr(tu, sub), getattr(tu, inter)


@lru_cache(maxsize=4096)
def cas_of_smiles(smiles: str) -> str | None:
    """CAS number of a structure in the reference library ``chemicals`` (by InChIKey), or None.

    >>> cas_of_smiles("CCO")
    '64-17-5'
    """
    from chemicals.identifiers import search_chemical

    from .structure import _rd, parse_smiles

    mol, _ = parse_smiles(smiles)
    try:
        return search_chemical("InChIKey=" + _rd().Chem.MolToInchiKey(mol)).CASs
    except ValueError:  # not in the library
        return None


def _ddbst(smiles: str, model: str) -> dict[int, int] | None:
    """The Dortmund Data Bank's own assignment of the compound (via ``thermo``), when it has one."""
    key = MODELS[model][3]
    cas = cas_of_smiles(smiles) if key else None
    if not cas:
        return None
    from thermo.unifac import UNIFAC_group_assignment_DDBST

    got = UNIFAC_group_assignment_DDBST(cas, key)
    sub, _ = _tables(model)
    if not got or any(k not in sub for k in got):
        return None
    return {int(k): int(v) for k, v in got.items()}


@lru_cache(maxsize=4096)
def _assign(smiles: str, model: str) -> tuple[tuple, str]:
    """(sorted (subgroup, count) pairs, "") or ((), why not): cached, refusals too."""
    import thermo.unifac as tu
    from thermo.group_contribution.group_contribution_base import smarts_fragment_priority

    from .structure import _atom_kind, parse_smiles

    known = _ddbst(smiles, model)
    if known:
        return tuple(sorted(known.items())), ""
    mol, canonical = parse_smiles(smiles)
    counts, _, matched, ok, _ = smarts_fragment_priority(getattr(tu, _FRAGMENT_LISTS[model]), rdkitmol=mol)
    if ok:
        return tuple(sorted((int(k), int(v)) for k, v in counts.items())), ""
    left = [a for a in mol.GetAtoms() if a.GetIdx() not in matched]
    if left:
        what = ", ".join(f"{a.GetSymbol()}{a.GetIdx()} ({_atom_kind(a)})" for a in left)
        return (), f"{model_label(model)} has no group for atom(s) {what} of '{canonical}'"
    return (), (f"{model_label(model)}: the groups found for '{canonical}' cover every atom but not its "
                "hydrogens; no assignment")


def groups(smiles: str, model: str = "dortmund") -> dict[int, int]:
    """UNIFAC subgroups of a molecule: ``{subgroup id: count}`` (ids of ``thermo.unifac``'s table).

    Raises :class:`~solvsel.errors.MissingDataError` (``param="smiles"``) naming the atoms no group
    covers, :class:`~solvsel.errors.InputError` for a SMILES that cannot be read.

    >>> groups("CCO")                 # ethanol: CH3, CH2, OH(primary)
    {1: 1, 2: 1, 14: 1}
    >>> groups("Cc1ccccc1")           # toluene: 5 ACH, ACCH3
    {9: 5, 11: 1}
    """
    found, why = _assign(smiles, _check_model(model))
    if why:
        raise MissingDataError(why, param="smiles", value=smiles)
    return dict(found)


# --------------------------------------------------------------------------- activity coefficients


@lru_cache(maxsize=256)
def _group_arrays(ids: tuple, model: str):
    """R, Q (G,), interaction coefficients a, b, c (G, G) and the mask of missing pairs for subgroups ``ids``."""
    sub, inter = _tables(model)
    main = [sub[i].main_group_id for i in ids]
    R = np.array([sub[i].R for i in ids], dtype=float)
    Q = np.array([sub[i].Q for i in ids], dtype=float)
    n = len(ids)
    abc = np.zeros((3, n, n))
    missing = np.zeros((n, n), dtype=bool)
    for i, m in enumerate(main):
        for j, k in enumerate(main):
            if m == k:
                continue
            p = inter.get(m, {}).get(k)
            if p is None:
                missing[i, j] = True
                continue
            abc[:, i, j] = p if isinstance(p, tuple) else (p, 0.0, 0.0)
    return R, Q, abc, missing, tuple(main)


def _setup(groups_list: Sequence[Mapping[int, int]], model: str):
    """Subgroup ids of the mixture and the component x subgroup count matrix nu (n, G)."""
    sub, _ = _tables(_check_model(model))
    ids = tuple(sorted({int(k) for g in groups_list for k in g}))
    bad = [k for k in ids if k not in sub]
    if bad:
        raise InputError(f"subgroup(s) {bad} are not in the {model_label(model)} table", param="groups",
                         value=bad)
    col = {k: j for j, k in enumerate(ids)}
    nu = np.zeros((len(groups_list), len(ids)))
    for i, g in enumerate(groups_list):
        for k, v in g.items():
            nu[i, col[int(k)]] = v
    return ids, nu


def interaction_gaps(groups_list: Sequence[Mapping[int, int]], model: str = "dortmund") -> list[tuple[str, str]]:
    """Pairs of main groups of the mixture without a published interaction parameter (names).

    >>> interaction_gaps([groups("CCO"), groups("O")])
    []
    """
    ids, _ = _setup(groups_list, model)
    _, _, _, missing, main = _group_arrays(ids, model)
    import thermo.unifac as tu

    names = getattr(tu, MODELS[model][1])
    out = set()
    for i, j in zip(*np.nonzero(missing)):
        a, b = sorted((main[i], main[j]))
        out.add((names[a][0], names[b][0]))
    return sorted(out)


def _psi(abc: np.ndarray, T: float, model: str) -> np.ndarray:
    a, b, c = abc
    if model in _MODIFIED:
        return np.exp(-(a + b * T + c * T * T) / T)
    return np.exp(-a / T)


def _ln_big_gamma(theta: np.ndarray, psi: np.ndarray, Q: np.ndarray) -> np.ndarray:
    """ln Gamma_k of each group for group area fractions ``theta`` (..., G)."""
    s = theta @ psi                      # sum_m theta_m psi_mk
    return Q * (1.0 - np.log(s) - (theta / s) @ psi.T)


def _ln_gammas(nu: np.ndarray, R: np.ndarray, Q: np.ndarray, psi: np.ndarray, x: np.ndarray, model: str):
    """ln gamma (M, n) of every component for mole fractions ``x`` (M, n): combinatorial + residual."""
    r, q = nu @ R, nu @ Q
    rx, qx = x @ r, x @ q
    V, F = r / rx[:, None], q / qx[:, None]
    if model in _MODIFIED:
        r34 = r ** 0.75
        Vp = r34 / (x @ r34)[:, None]
    else:
        Vp = V
    comb = 1.0 - Vp + np.log(Vp) - 5.0 * q * (1.0 - V / F + np.log(V / F))
    X = x @ nu
    X = X / X.sum(axis=1, keepdims=True)
    theta = Q * X
    theta = theta / theta.sum(axis=1, keepdims=True)
    lnG = _ln_big_gamma(theta, psi, Q)                                  # (M, G)
    tp = Q * nu
    tp = tp / tp.sum(axis=1, keepdims=True)                             # pure components' area fractions
    lnG_pure = _ln_big_gamma(tp, psi, Q)                                # (n, G)
    res = lnG @ nu.T - (nu * lnG_pure).sum(axis=1)
    return comb + res


def ln_gammas(groups_list: Sequence[Mapping[int, int]], x, temp_C: float, model: str = "dortmund") -> np.ndarray:
    """ln of the activity coefficient of each component of a liquid mixture.

    Parameters
    ----------
    groups_list : sequence of dict
        each component's subgroups ``{subgroup id: count}`` (:func:`groups`)
    x : array (n,) or (M, n)
        mole fractions [-] (one mixture, or M mixtures of the same components); a component at
        zero is at infinite dilution
    temp_C : float
        temperature [C]
    model : str
        a key of :data:`MODELS` ("dortmund", "original", "lle", "nist", "dortmund2")

    Returns ln gamma with the shape of ``x``.  Raises :class:`~solvsel.errors.MissingDataError`
    (``param="groups"``) when the table lacks an interaction parameter between two of the mixture's
    main groups.

    Example: n-hexane and butan-2-one, equimolar at 60 C, original UNIFAC: gamma 1.428 and 1.365
    (the worked example P05.22a of Gmehling et al., *Chemical Thermodynamics for Process Simulation*,
    as ``thermo``'s documentation gives it):

    >>> g = ln_gammas([{1: 2, 2: 4}, {1: 1, 2: 1, 18: 1}], [0.5, 0.5], 60.0, "original")
    >>> [round(float(v), 3) for v in np.exp(g)]
    [1.428, 1.365]
    """
    ids, nu = _setup(groups_list, model)
    R, Q, abc, missing, _ = _group_arrays(ids, model)
    if missing.any():
        pairs = "; ".join(f"{a} - {b}" for a, b in interaction_gaps(groups_list, model))
        raise MissingDataError(f"{model_label(model)} has no interaction parameter for {pairs}", param="groups")
    xa = _mole_fractions(x, nu.shape[0])
    out = _ln_gammas(nu, R, Q, _psi(abc, float(temp_C) + 273.15, model), np.atleast_2d(xa), model)
    return out.reshape(xa.shape)


def _mole_fractions(x, n: int) -> np.ndarray:
    """``x`` as an array of n mole fractions per mixture, checked."""
    xa = np.asarray(x, dtype=float)
    if xa.ndim not in (1, 2) or xa.shape[-1] != n:
        raise InputError(f"expected {n} mole fractions per mixture, got shape {xa.shape}", param="x")
    if (xa < 0).any() or (xa.sum(axis=-1) <= 0).any():
        raise InputError("mole fractions must be zero or positive, with a positive sum", param="x")
    return xa


def solute_in_liquids(solute: Mapping[int, int], liquids: Sequence[Mapping[int, int]], temp_C: float,
                      model: str = "dortmund"):
    """A solute in each of N liquids (N binary mixtures at once): ``(ln_gamma, usable)``.

    ``ln_gamma(x2)`` gives the solute's ln gamma at mole fraction ``x2`` (scalar or (N,)) in each liquid;
    ``usable`` (N,) is False for a liquid whose groups lack an interaction parameter with the solute's
    (or among its own): its values are not to be used.

    >>> lg, ok = solute_in_liquids(groups("CC(C)=O"), [groups("CCCCCC"), groups("O")], 25.0)
    >>> [round(float(v), 2) for v in lg(0.0)], ok.tolist()   # acetone at infinite dilution
    ([1.84, 2.08], [True, True])
    """
    ids, nu = _setup([solute, *liquids], model)
    R, Q, abc, missing, _ = _group_arrays(ids, model)
    psi = _psi(abc, float(temp_C) + 273.15, model)
    n = len(liquids)
    present = nu > 0
    usable = np.array([not missing[np.ix_(c, c)].any() for c in (present[0] | present[1:])], dtype=bool)
    rows = np.arange(n)

    def ln_gamma(x2) -> np.ndarray:
        x2 = np.broadcast_to(np.asarray(x2, dtype=float), (n,))
        x = np.zeros((n, n + 1))
        x[:, 0] = x2
        x[rows, rows + 1] = 1.0 - x2
        return _ln_gammas(nu, R, Q, psi, x, model)[:, 0]

    return ln_gamma, usable
