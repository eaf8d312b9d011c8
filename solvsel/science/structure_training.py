"""Training the project's own structure model (``solvsel-gc``): data, nested cross-validation, refit.

Estimation lives in :mod:`solvsel.science.structure`; this module holds what
only fitting needs.  :func:`training_data` merges the three HSP data sets
bundled with ``chemicals`` by structure; :func:`cross_validate` scores the model
by nested grouped k-fold cross-validation (the settings of each outer fold
chosen by :func:`select_settings` on its training part only); :func:`refit`
writes the parameter table with its training and cross-validation tables
beside it.  A refit of the bundled data reproduces the bundled tables byte
for byte.

Fitting needs scikit-learn (Huber regression, grouped folds) and RDKit, the
``structure`` extra; each is imported in one place, and a missing one raises
:class:`~solvsel.errors.MissingExtraError`.
"""

from __future__ import annotations

import csv
from functools import lru_cache
from pathlib import Path

from ..data.catalog import check_write_target
from ..errors import InputError, MissingExtraError
from .structure import (
    ALPHA, CLASSES, EPSILON, KERNEL_LAMBDA, KERNEL_POWER, METHODS, OWN_METHOD, OWN_TERMS, _PARAM_COLUMNS, _U,
    FitSettings, _neighbour_data, _per_param, _predict, _rdkit, _sibling, _similarities, chemical_class,
    fingerprint, hoftyzer_van_krevelen, load_params, own_design, own_features, parse_smiles, properties_estimate,
)

__all__ = [
    "HSP_DATASETS",
    "CONFLICT_RA",
    "N_FOLDS",
    "SEED",
    "HUBER_GRID",
    "KERNEL_GRID",
    "INNER_FOLDS",
    "training_data",
    "dataset_design",
    "similarity_matrix",
    "kernel_dual",
    "select_settings",
    "cross_validate",
    "error_table",
    "published_predictions",
    "refit",
]


@lru_cache(maxsize=None)
def _sklearn():
    """scikit-learn's pieces used here, imported in this one place: ``(HuberRegressor, GroupKFold)``."""
    try:
        from sklearn.linear_model import HuberRegressor
        from sklearn.model_selection import GroupKFold
    except ImportError:
        raise MissingExtraError("structure", "fitting the structure model", "scikit-learn") from None
    return HuberRegressor, GroupKFold


# --------------------------------------------------------------------------- training data

#: The ``chemicals`` HSP datasets the own model is fitted on (and no others).
HSP_DATASETS = ("MANUEL_RUBEN_2022", "ALSHERI_HANSEN", "WDR_SCHRIER")
DATASET_SOURCE = {"MANUEL_RUBEN_2022": "hsp_mr2022", "ALSHERI_HANSEN": "hsp_alshehri2022",
                  "WDR_SCHRIER": "hsp_schrier2020"}

#: Two datasets that give a compound HSP more than this far apart (Ra, MPa^0.5)
#: make its label doubtful: it is kept out of fitting and reported apart.
CONFLICT_RA = 4.0


def training_data(exclude=()):
    """The HSP training set: the three ``chemicals`` datasets merged by structure.

    Each CAS number's values are the per-parameter median over the datasets
    that list it; CAS numbers with the same structure (stereoisomers, duplicate
    numbers: same canonical SMILES without stereo) are merged the same way, so
    one structure is one compound and never sits on both sides of a
    cross-validation split.  A compound whose datasets disagree by more than
    :data:`CONFLICT_RA` is marked ``conflict`` (not fitted; errors on it are
    reported apart).  Compounds that RDKit or the checks of
    :func:`parse_smiles` refuse (salts, ions, metals) are dropped.

    Parameters
    ----------
    exclude : iterable of str
        CAS numbers to leave out (a user's hold-out set)

    Returns
    -------
    pandas.DataFrame
        columns key (canonical SMILES without stereo), smiles, cas (``;``
        joined), dD, dP, dH [MPa^0.5], n_sources, max_ra (largest
        disagreement between datasets), conflict (bool), source (ids of the
        datasets that list it)
    """
    import numpy as np
    import pandas as pd
    from chemicals import solubility
    from chemicals.identifiers import search_chemical

    solubility._load_solubility_data()
    exclude = {c.strip() for c in exclude if c and c.strip()}
    rows, sets = {}, {}
    for key in HSP_DATASETS:
        df = solubility.solubility_sources[key]
        for cas, r in df.iterrows():
            if cas in exclude:
                continue
            rows.setdefault(cas, []).append(
                (r["HANSEN_DELTA_D"] / 1000.0, r["HANSEN_DELTA_P"] / 1000.0, r["HANSEN_DELTA_H"] / 1000.0)
            )
            sets.setdefault(cas, set()).add(DATASET_SOURCE[key])
    Chem = _rdkit()
    by_key: dict = {}
    for cas in sorted(rows):
        try:
            smi = search_chemical(cas).smiles
        except ValueError:  # a CAS number the library's identifiers do not know
            continue
        if not smi:
            continue
        try:
            mol, canonical = parse_smiles(smi)
        except InputError:
            continue
        key = Chem.MolToSmiles(mol, isomericSmiles=False)
        entry = by_key.setdefault(key, {"cas": [], "values": [], "smiles": canonical, "sets": set()})
        entry["cas"].append(cas)
        entry["sets"].update(sets[cas])
        entry["values"].extend(rows[cas])
    out = []
    for key, e in by_key.items():
        v = np.array(e["values"], dtype=float)
        med = np.median(v, axis=0)
        d = (v[:, None, :] - v[None, :, :]) * np.array([2.0, 1.0, 1.0])
        max_ra = float(np.sqrt((d * d).sum(-1)).max())
        out.append({
            "key": key, "smiles": e["smiles"], "cas": ";".join(e["cas"]),
            "dD": med[0], "dP": med[1], "dH": med[2], "n_sources": len(v),
            "max_ra": max_ra, "conflict": max_ra > CONFLICT_RA, "source": ";".join(sorted(e["sets"])),
        })
    return pd.DataFrame(out).sort_values("key").reset_index(drop=True)


# --------------------------------------------------------------------------- fitting and cross-validation

N_FOLDS = 10
SEED = 20221  # fixed, so the recorded split can be regenerated

#: Loss and penalty of the fit.  Huber's loss (quadratic within epsilon
#: standard deviations, linear beyond) keeps a few doubtful labels from pulling
#: the group values; alpha is its L2 penalty on standardised columns.  None of
#: these settings is fixed by hand: for each parameter (dD, dP, dH) the
#: combination of epsilon, alpha and transform (the parameter or its square)
#: is chosen from the grids below by an inner grouped cross-validation
#: (:data:`INNER_FOLDS` folds) on the training compounds only, so the outer
#: cross-validation that reports the errors is nested and never sees its test
#: compounds while choosing (see :func:`select_settings`).
HUBER_GRID = tuple((eps, alpha) for eps in (1.1, 1.35, 2.0) for alpha in (0.1, 1.0))
#: Transforms tried per parameter: dD as it is; dP and dH as they are or as
#: their squares (polar and hydrogen-bond cohesive energy per volume is what
#: adds up by groups, Hoftyzer-Van Krevelen's form).
SQUARE_CHOICES = ((False,), (False, True), (False, True))
#: Similarity correction: kernel ridge regression of the group model's
#: residuals on the training compounds, kernel = a similarity of
#: :data:`KERNELS` (0 Morgan bits, 1 Morgan counts, 2 Morgan and feature-Morgan
#: counts) to a power p, penalty lambda; (kernel, p, lambda) chosen per parameter
#: from this grid by the same inner cross-validation.
KERNEL_GRID = tuple((f, p, lam) for f in (0, 1, 2) for p in (1.0, 2.0, 3.0) for lam in (0.03, 0.1, 0.3, 1.0))
INNER_FOLDS = 5
#: dD is fitted with an intercept; dP and dH without (a molecule of no polar
#: or hydrogen-bonding group gets ~0, as in the Hoftyzer-Van Krevelen form).
INTERCEPT = (True, False, False)


def dataset_design(df, terms=None):
    """Features of every compound of :func:`training_data`: ``(X, counts, vx, covered)``."""
    import numpy as np

    Chem = _rdkit()
    terms = tuple(tuple(t) for t in (terms or OWN_TERMS))
    C, V, ok = [], [], []
    for smi in df["smiles"]:
        mol = Chem.MolFromSmiles(smi)
        counts, vx, _, unc = own_features(mol, terms)
        C.append(counts)
        V.append(vx)
        ok.append(not unc)
    C = np.array(C)
    V = np.array(V)
    return own_design(C, V), C, V, np.array(ok)


def _fit_one(X, y, intercept, epsilon=EPSILON, alpha=ALPHA):
    """Huber regression on scaled columns; returns (intercept, coefficients on the raw columns)."""
    HuberRegressor, _ = _sklearn()
    sd = X.std(axis=0)
    sd[sd == 0] = 1.0
    r = HuberRegressor(epsilon=epsilon, alpha=alpha, fit_intercept=intercept, max_iter=5000).fit(X / sd, y)
    return float(r.intercept_) if intercept else 0.0, r.coef_ / sd


def _polar_mask(terms, ncol):
    import numpy as np

    terms = terms or OWN_TERMS
    return np.array([t[2] == "polar" for t in terms] + [False] * (ncol - len(terms)))


def _fit_param(X, y, j, epsilon, alpha, square, polar):
    """Fit parameter j (0 dD, 1 dP, 2 dH); the "polar" terms enter the dP fit only."""
    import numpy as np

    cols = np.ones(X.shape[1], bool) if j == 1 else ~polar
    coef = np.zeros(X.shape[1])
    icpt, coef[cols] = _fit_one(X[:, cols], y ** 2 if square else y, INTERCEPT[j], epsilon, alpha)
    return icpt, coef


def _predict_param(X, icpt, coef, square):
    import numpy as np

    y = icpt + X @ coef
    return np.sqrt(np.clip(y, 0, None)) if square else np.clip(y, 0, None)


def _fit(X, Y, terms=None, settings=None):
    """Fit dD, dP, dH with ``settings`` (a :class:`FitSettings`; default settings if None)."""
    import numpy as np

    s = settings or FitSettings()
    polar = _polar_mask(terms, X.shape[1])
    icpt = np.zeros(3)
    coef = np.zeros((X.shape[1], 3))
    for j in range(3):
        icpt[j], coef[:, j] = _fit_param(X, Y[:, j], j, s.epsilon[j], s.alpha[j], s.square[j], polar)
    return icpt, coef


def similarity_matrix(fps_a, fps_b):
    """Similarities between two lists of :func:`fingerprint` triples, shape (3, len(a), len(b)).

    Axis 0 is the kernel of :data:`KERNELS`: 0 bits (Tanimoto), 1 counts (min-max
    Tanimoto), 2 the mean of 1 and the feature-count similarity.
    """
    import numpy as np

    other = tuple([b[f] for b in fps_b] for f in range(3))
    out = np.zeros((3, len(fps_a), len(fps_b)))
    for i, a in enumerate(fps_a):
        sims = _similarities(a, other, (0, 1, 2))
        for k in range(3):
            out[k, i] = sims[k]
    return out


def kernel_dual(K_train, residuals, power=KERNEL_POWER, lam=KERNEL_LAMBDA, fp=(0, 0, 0)):
    r"""Dual coefficients of the kernel ridge correction.

    .. math:: a_j = (K_{f_j}^{\circ p_j} + \lambda_j I)^{-1} r_j

    with :math:`K_f` the Tanimoto similarities of the training compounds by
    kernel :math:`f_j` (:func:`similarity_matrix`, shape (3, n, n)),
    :math:`\circ p_j` the element-wise power and :math:`\lambda_j` the penalty
    of parameter j (scalars or one per parameter); r the residuals (n, 3)
    [MPa^0.5].
    """
    import numpy as np

    n = K_train.shape[-1]
    power, lam = _per_param(power), _per_param(lam)
    out = np.zeros((n, residuals.shape[1]))
    for j in range(residuals.shape[1]):
        out[:, j] = np.linalg.solve(K_train[int(fp[j])] ** power[j] + lam[j] * np.eye(n), residuals[:, j])
    return out


def _grouped_folds(keys, n_folds, seed):
    import numpy as np

    _, GroupKFold = _sklearn()
    folds = np.full(len(keys), -1)
    for k, (_, te) in enumerate(GroupKFold(n_splits=n_folds, shuffle=True, random_state=seed).split(
            np.arange(len(keys)), groups=keys)):
        folds[te] = k
    return folds


def select_settings(X, Y, K, keys, terms=None, n_folds=INNER_FOLDS, seed=SEED):
    """Choose the fit settings by grouped cross-validation on the compounds given (and only those).

    For each parameter, the Huber (epsilon, alpha) and transform of
    :data:`HUBER_GRID` x :data:`SQUARE_CHOICES` with the lowest mean absolute
    error of the groups-only out-of-fold prediction is taken; then, with that
    fit, the kernel (fingerprint, power, lambda) of :data:`KERNEL_GRID` with the lowest
    error of the corrected prediction.  Ties go to the first in grid order.
    Called on the training part of each outer fold (nested cross-validation)
    and on every fitted compound for the final parameters.

    Parameters
    ----------
    X : ndarray (n, m) design rows; Y : ndarray (n, 3) labels [MPa^0.5];
    K : ndarray (3, n, n) similarities among these compounds by kernel (:func:`similarity_matrix`);
    keys : grouping keys (one structure, one key)

    Returns
    -------
    FitSettings
    """
    import numpy as np

    folds = _grouped_folds(np.asarray(keys), n_folds, seed)
    polar = _polar_mask(terms, X.shape[1])
    n = len(Y)
    chosen = {"epsilon": [], "alpha": [], "square": [], "fp": [], "power": [], "lam": []}
    eig = {}  # (fold, power) -> eigen-decomposition of the training kernel, shared by the three parameters
    for j in range(3):
        configs = [(e, a, sq) for sq in SQUARE_CHOICES[j] for e, a in HUBER_GRID]
        base = np.zeros((len(configs), n))
        fits = {}
        for k in range(n_folds):
            tr, te = folds != k, folds == k
            for c, (e, a, sq) in enumerate(configs):
                icpt, coef = _fit_param(X[tr], Y[tr, j], j, e, a, sq, polar)
                base[c, te] = _predict_param(X[te], icpt, coef, sq)
                fits[c, k] = (icpt, coef)
        best = int(np.argmin(np.abs(base - Y[:, j]).mean(axis=1)))
        e, a, sq = configs[best]
        kern = np.zeros((len(KERNEL_GRID), n))
        for k in range(n_folds):
            tr, te = np.where(folds != k)[0], np.where(folds == k)[0]
            icpt, coef = fits[best, k]
            r = Y[tr, j] - _predict_param(X[tr], icpt, coef, sq)
            for f, p in sorted({(f, p) for f, p, _ in KERNEL_GRID}):
                if (k, f, p) not in eig:
                    eig[k, f, p] = np.linalg.eigh(K[f][np.ix_(tr, tr)] ** p)
                w, vec = eig[k, f, p]
                proj = vec.T @ r
                Kte = K[f][np.ix_(te, tr)] ** p
                for c, (ff, pp, lam) in enumerate(KERNEL_GRID):
                    if (ff, pp) == (f, p):
                        kern[c, te] = np.clip(base[best, te] + Kte @ (vec @ (proj / (w + lam))), 0, None)
        kbest = int(np.argmin(np.abs(kern - Y[:, j]).mean(axis=1)))
        for name, v in zip(("epsilon", "alpha", "square", "fp", "power", "lam"), (e, a, sq, *KERNEL_GRID[kbest])):
            chosen[name].append(v)
    return FitSettings(**{k: tuple(v) for k, v in chosen.items()})


def cross_validate(df, X, covered, n_folds=N_FOLDS, seed=SEED, similarity=True, terms=None, K=None, nested=True,
                   progress=None, fold_settings=None):
    """Grouped, nested k-fold cross-validation of the own model.

    Each compound (one structure, see :func:`training_data`) is one group, so
    no structure is in the training and the test part of a fold at once.
    Compounds marked ``conflict`` get a fold and an out-of-fold prediction but
    are never fitted on.  Within each outer fold the settings are chosen by
    :func:`select_settings` on that fold's training compounds only (``nested``;
    else the default settings), or taken from ``fold_settings`` (one
    :class:`FitSettings` per fold, e.g. those a nested run chose and recorded);
    the similarity correction of a test compound uses only that fold's training
    compounds and their residuals under that fold's fit.  ``progress(k, n_folds)``
    is told when fold ``k`` (from 0) starts.

    Returns
    -------
    folds : ndarray of int (fold of each compound, -1 if not covered)
    pred : ndarray (n, 3) out-of-fold predictions [MPa^0.5] (NaN if not covered)
    base : ndarray (n, 3) the same without the similarity correction
    settings : list of FitSettings, one per outer fold
    """
    import numpy as np

    Chem = _rdkit()
    Y = df[["dD", "dP", "dH"]].to_numpy(float)
    keys = df["key"].to_numpy()
    idx = np.where(covered)[0]
    folds = np.full(len(df), -1)
    pred = np.full((len(df), 3), np.nan)
    base = np.full((len(df), 3), np.nan)
    fitted = covered & ~df["conflict"].to_numpy(bool)
    if K is None and (similarity or nested):
        fps = [fingerprint(Chem.MolFromSmiles(s)) for s in df["smiles"]]
        K = similarity_matrix(fps, fps)
    folds[idx] = _grouped_folds(keys[idx], n_folds, seed)
    settings = []
    for k in range(n_folds):
        tr = np.where(fitted & (folds != k) & (folds >= 0))[0]
        te = np.where(folds == k)[0]
        if progress:
            progress(k, n_folds)
        if fold_settings is not None:
            s = fold_settings[k]
        elif nested:
            s = select_settings(X[tr], Y[tr], K[:, tr][:, :, tr], keys[tr], terms, seed=seed + 1 + k)
        else:
            s = FitSettings()
        settings.append(s)
        icpt, coef = _fit(X[tr], Y[tr], terms, s)
        base[te] = _predict(X[te], icpt, coef, s.square)
        pred[te] = base[te]
        if similarity:
            dual = kernel_dual(K[:, tr][:, :, tr], Y[tr] - _predict(X[tr], icpt, coef, s.square), s.power, s.lam,
                               s.fp)
            corr = np.column_stack([(K[s.fp[j]][np.ix_(te, tr)] ** s.power[j]) @ dual[:, j] for j in range(3)])
            pred[te] = np.clip(base[te] + corr, 0, None)
    return folds, pred, base, settings


def error_table(df, preds: dict, mask=None):
    """Mean absolute errors by class for each method, on the compounds every method covers.

    ``preds`` maps method name to an (n, 3) array (NaN where not covered).
    Returns rows ``{method, class, n, mae_dD, mae_dP, mae_dH, mae_ra, q90_*}``;
    the class ``all`` is over every compound.
    """
    import numpy as np

    Y = df[["dD", "dP", "dH"]].to_numpy(float)
    common = np.ones(len(df), bool) if mask is None else np.asarray(mask, bool).copy()
    for P in preds.values():
        common &= np.isfinite(P).all(axis=1)
    classes = df["chem_class"].to_numpy()
    rows = []
    for method, P in preds.items():
        err = np.abs(P - Y)
        ra = np.sqrt(4 * err[:, 0] ** 2 + err[:, 1] ** 2 + err[:, 2] ** 2)
        for cls in ("all",) + CLASSES:
            m = common if cls == "all" else common & (classes == cls)
            if not m.any():
                continue
            row = {"method": method, "class": cls, "n": int(m.sum())}
            for j, p in enumerate(("dD", "dP", "dH")):
                row[f"mae_{p}"] = float(err[m, j].mean())
            row["mae_ra"] = float(ra[m].mean())
            for j, p in enumerate(("dD", "dP", "dH")):
                row[f"q90_{p}"] = float(np.quantile(err[m, j], 0.9))
            row["q90_ra"] = float(np.quantile(ra[m], 0.9))
            rows.append(row)
    return rows


def published_predictions(df, methods=("hoftyzer-van-krevelen",)):
    """Predictions of the published (and property) methods for every compound of ``df``."""
    import numpy as np

    Chem = _rdkit()
    out = {}
    for method in methods:
        P = np.full((len(df), 3), np.nan)
        for i, (smi, cas) in enumerate(zip(df["smiles"], df["cas"])):
            mol = Chem.MolFromSmiles(smi)
            if method == "hoftyzer-van-krevelen":
                e = hoftyzer_van_krevelen(mol)
            elif method == "properties":
                e = properties_estimate(mol, cas=cas.split(";")[0])
            else:
                raise InputError(f"expected one of {', '.join(METHODS)}, got '{method}'", param="method", value=method)
            if e.covered:
                P[i] = (e.dD, e.dP, e.dH)
        out[method] = P
    return out


def refit(out, exclude=(), force=False, n_folds=N_FOLDS, seed=SEED, terms=None, progress=None, choose=False):
    """Fit the own model on the ``chemicals`` datasets and write its parameter table.

    Writes ``out`` (parameters), ``<stem>_training.csv`` (every compound with
    its values, fold, whether it was fitted, and its out-of-fold prediction)
    and ``<stem>_cv.csv`` (cross-validated errors by class, the own model and
    Hoftyzer-Van Krevelen on the same compounds).  Never overwrites a file
    unless ``force``.

    The settings (Huber epsilon and alpha, transform, kernel fingerprint, power
    and penalty) are those chosen once, by the nested cross-validation, and
    recorded in the bundled parameter table: the final fit uses the settings
    chosen on every fitted compound, and the cross-validation of each of the
    ``n_folds`` outer folds those chosen on that fold's training compounds.  So
    a refit of the bundled data reproduces the bundled tables byte for byte, in
    about a minute.  With ``choose`` the settings are chosen again, by the
    nested cross-validation (in each outer fold by :func:`select_settings` on
    its training compounds, then on every fitted compound; about 1,700 Huber
    fits, ten minutes and more): what the benchmark runs, and what a hold-out
    study (``exclude``) needs for settings that never saw the held-out compounds.

    Parameters
    ----------
    out : str or Path
        the parameter table to write (``.csv``)
    exclude : iterable of str
        CAS numbers held out of everything (fitting and validation)
    force : bool
        overwrite existing files
    progress : callable, optional
        ``progress(done, total, message)``: ``done`` of ``total`` steps finished, the next one named
    choose : bool
        choose the settings by nested cross-validation instead of taking the recorded ones

    Returns
    -------
    dict
        paths written, number of compounds, cross-validated errors (class ``all``), the error table
    """
    import numpy as np

    paths = _refit_paths(out, force)
    terms = tuple(tuple(t) for t in (terms or OWN_TERMS))
    recorded = None if choose else _recorded_settings(n_folds)
    total = n_folds + 5
    say = (lambda done, msg: progress(done, total, msg)) if progress else (lambda done, msg: None)
    say(0, "reading the HSP datasets of chemicals")
    df = training_data(exclude)
    df["chem_class"] = [chemical_class(s) for s in df["smiles"]]
    say(1, f"{len(df)} compounds; counting groups and comparing structures")
    X, _, _, covered = dataset_design(df, terms)
    fps = [fingerprint(_rdkit().MolFromSmiles(s)) for s in df["smiles"]]
    K = similarity_matrix(fps, fps)
    how = "the recorded settings of each fold" if recorded else f"settings chosen in {INNER_FOLDS} inner folds"
    folds, cvpred, cvbase, fold_settings = cross_validate(
        df, X, covered, n_folds, seed, terms=terms, K=K, fold_settings=recorded and recorded.fold_settings,
        progress=lambda k, n: say(2 + k, f"cross-validation, outer fold {k + 1} of {n} ({how})"))
    fitted = covered & ~df["conflict"].to_numpy(bool)
    Y = df[["dD", "dP", "dH"]].to_numpy(float)
    fi = np.where(fitted)[0]
    say(2 + n_folds, "fitting every compound" + ("" if recorded else ", the settings chosen on all of them"))
    settings = recorded.settings if recorded else select_settings(X[fi], Y[fi], K[:, fi][:, :, fi],
                                                                   df["key"].to_numpy()[fi], terms, seed=seed)
    icpt, coef = _fit(X[fitted], Y[fitted], terms, settings)
    resid = np.full((len(df), 3), np.nan)
    resid[fitted] = Y[fitted] - _predict(X[fitted], icpt, coef, settings.square)
    say(3 + n_folds, "similarity correction")
    dual = np.full((len(df), 3), np.nan)
    dual[fi] = kernel_dual(K[:, fi][:, :, fi], resid[fi], settings.power, settings.lam, settings.fp)
    say(4 + n_folds, "scoring the published method on the same compounds")
    rows_cv = _cv_rows(df, cvpred, cvbase, fitted, covered)
    _write_refit(paths, terms, icpt, coef, settings, fold_settings, f"outer folds={n_folds} seed={seed} "
                 f"fitted={int(fitted.sum())}", (df, covered, fitted, folds, cvpred, resid, dual), rows_cv)
    say(total, "written")
    overall = next(r for r in rows_cv if r["method"] == OWN_METHOD and r["class"] == "all")
    return {"paths": [str(p) for p in paths], "compounds": int(len(df)), "fitted": int(fitted.sum()),
            "cv": overall, "table": rows_cv}


def _recorded_settings(n_folds: int):
    """The settings the nested cross-validation chose and the bundled parameter table records."""
    P = load_params()
    if len(P.fold_settings) != n_folds:
        raise InputError(f"the bundled parameters record the settings of {len(P.fold_settings)} outer folds, not "
                         f"{n_folds}: choose the settings again for another number of folds", param="n_folds",
                         value=n_folds, expected=str(len(P.fold_settings)))
    return P


def _write_refit(paths, terms, icpt, coef, settings, fold_settings, split: str, training: tuple, rows_cv) -> None:
    """The three tables of a refit, each written beside its name and then renamed onto it."""
    tmp = [p.with_name(p.name + ".tmp") for p in paths]
    _write_params(tmp[0], terms, icpt, coef, settings, fold_settings, split)
    _write_training(tmp[1], *training)
    _write_cv(tmp[2], rows_cv)
    for t, p in zip(tmp, paths):
        t.replace(p)
    load_params.cache_clear()
    _neighbour_data.cache_clear()


#: Source id of the tables a refit writes (kind "derived" in ``tables/sources.csv``).
_REFIT_SOURCE = "derived_gc_fit"


def _refit_paths(out, force: bool) -> list[Path]:
    """The three files a refit writes, checked: a .csv name, an existing folder that can be written, no
    file overwritten unless ``force``."""
    out = Path(out)
    if out.suffix.lower() != ".csv":
        raise InputError(f"the parameter file must end in .csv, got '{out}'", param="refit", value=str(out),
                         expected="a file name ending in .csv")
    paths = [out, _sibling(out, "training"), _sibling(out, "cv")]
    if not force:
        exist = [str(p) for p in paths if p.exists()]
        if exist:
            raise InputError(f"{', '.join(exist)} already exist; choose another name, or allow overwriting",
                             param="force", value=False, expected="a file name not in use, or force")
    for p in paths:  # before the fit: an existing folder that can be written, no folder or device in the way
        check_write_target(p, param="refit")
    return paths


def _cv_rows(df, cvpred, cvbase, fitted, covered) -> list[dict]:
    """The rows of the cross-validation table: the own model, the same-compound comparison, the property
    route on every compound it covers, and the own model on the compounds of conflicting labels."""
    pub = published_predictions(df)
    preds = {OWN_METHOD: cvpred, OWN_METHOD + " (groups only)": cvbase, **pub}
    rows_cv = error_table(df, {OWN_METHOD: cvpred}, mask=fitted)
    # the same-compound comparison (where every method covers the compound)
    rows_cv += [dict(r, method=r["method"] + (" (same compounds)" if r["method"] == OWN_METHOD else ""))
                for r in error_table(df, preds, mask=fitted)]
    # the property route on every compound the library has the data for (its own uncertainty)
    rows_cv += error_table(df, published_predictions(df, ("properties",)), mask=fitted)
    conflict_rows = error_table(df, {OWN_METHOD: cvpred}, mask=covered & df["conflict"].to_numpy(bool))
    for r in conflict_rows:
        if r["class"] == "all":
            rows_cv.append(dict(r, **{"class": "conflicting labels"}))
    return rows_cv


def _write_params(path: Path, terms, icpt, coef, settings, fold_settings, split: str) -> None:
    src = _REFIT_SOURCE
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(_PARAM_COLUMNS)
        for (name, smarts, kind, owned), c in zip(terms, coef[:-1]):
            w.writerow([name, kind, smarts, owned, *(f"{v:.8g}" for v in c), src])
        w.writerow(["100/Vx", "size", "", 0, *(f"{v:.8g}" for v in coef[-1]), src])
        w.writerow(["intercept", "intercept", "", 0, *(f"{v:.8g}" for v in icpt), src])
        w.writerow(["square", "transform", "", 0, *(int(s) for s in settings.square), src])
        w.writerow(["intercept fitted", "meta", "", 0, *(int(v) for v in INTERCEPT), src])
        for name, vals in settings.rows():
            if name != "square":
                w.writerow([name, "meta", "", 0, *(f"{v:g}" for v in vals), src])
        w.writerow([f"settings chosen by {INNER_FOLDS}-fold grouped CV from huber (epsilon, alpha) {list(HUBER_GRID)}, "
                    f"kernel (fingerprint 0 bits 1 counts 2 counts+features, power, lambda) {list(KERNEL_GRID)}; "
                    f"{split}", "meta", "", 0, 0, 0, 0, src])
        for k, fs in enumerate(fold_settings):
            for name, vals in fs.rows():
                w.writerow([f"fold {k} {name}", "meta", "", 0, *(f"{v:g}" for v in vals), src])


def _write_training(path: Path, df, covered, fitted, folds, cvpred, resid, dual) -> None:
    import numpy as np

    hsp = ("dD", "dP", "dH")
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["key", "smiles", "cas", "dD" + _U, "dP" + _U, "dH" + _U, "n_sources", "max_ra" + _U, "conflict",
                    "covered", "fitted", "fold", "chem_class", *(f"cv_{k}{_U}" for k in hsp),
                    *(f"res_{k}{_U}" for k in hsp), *(f"dual_{k}{_U}" for k in hsp), "source"])
        for i, r in df.iterrows():
            cvp = ["" if not np.isfinite(v) else f"{v:.3f}" for v in list(cvpred[i]) + list(resid[i])]
            cvp += ["" if not np.isfinite(v) else f"{v:.8g}" for v in dual[i]]
            w.writerow([r["key"], r["smiles"], r["cas"], f"{r['dD']:.2f}", f"{r['dP']:.2f}", f"{r['dH']:.2f}",
                        r["n_sources"], f"{r['max_ra']:.2f}", "yes" if r["conflict"] else "no",
                        "yes" if covered[i] else "no", "yes" if fitted[i] else "no", int(folds[i]),
                        r["chem_class"], *cvp, r["source"]])


def _write_cv(path: Path, rows_cv) -> None:
    cols = ["method", "class", "n", "mae_dD", "mae_dP", "mae_dH", "mae_ra", "q90_dD", "q90_dP", "q90_dH", "q90_ra"]
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(cols[:3] + [c + _U for c in cols[3:]] + ["source"])
        for r in rows_cv:
            w.writerow([r[c] if isinstance(r[c], str) or c == "n" else f"{r[c]:.3f}" for c in cols] + [_REFIT_SOURCE])
