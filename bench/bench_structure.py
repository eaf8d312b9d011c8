"""Benchmark of solvsel.science.structure and structure_training: cross-validated accuracy by method and class,
flavour molecules outside the training data with the interval the cross-validation supports, and speed.

    .venv/bin/python bench/bench_structure.py            # full: refits with nested grouped 10-fold CV (6-11 min)
    .venv/bin/python bench/bench_structure.py --quick    # stored CV results, flavour table, timings

Errors are mean absolute errors in MPa^0.5 against the median of the three HSP data sets bundled with
chemicals (MANUEL_RUBEN_2022, ALSHERI_HANSEN, WDR_SCHRIER); every method is scored on the same compounds.
"""

from __future__ import annotations

import argparse
import csv
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from solvsel.science import structure, structure_training  # noqa: E402

FLAVOURS = [
    ("cannabidiol", "CCCCCc1cc(O)c([C@@H]2C=C(C)CC[C@H]2C(C)=C)c(O)c1"),
    ("delta-9-tetrahydrocannabinol", "CCCCCc1cc(O)c2c(c1)OC(C)(C)[C@@H]1CCC(C)=C[C@@H]21"),
    ("thymol", "Cc1ccc(C(C)C)c(O)c1"),
    ("carvacrol", "Cc1ccc(C(C)C)cc1O"),
    ("eugenol", "COc1cc(CC=C)ccc1O"),
    ("vanillin", "COc1cc(C=O)ccc1O"),
    ("citral (geranial)", "CC(C)=CCC/C(C)=C/C=O"),
    ("cinnamaldehyde", "O=C/C=C/c1ccccc1"),
    ("linalool", "CC(C)=CCCC(C)(O)C=C"),
    ("linalyl acetate", "CC(=O)OC(C)(CCC=C(C)C)C=C"),
    ("geraniol", "CC(C)=CCC/C(C)=C/CO"),
    ("menthol", "CC(C)[C@@H]1CC[C@@H](C)C[C@H]1O"),
    ("d-limonene", "CC1=CC[C@@H](CC1)C(=C)C"),
    ("alpha-pinene", "CC1=CCC2CC1C2(C)C"),
    ("beta-caryophyllene", "C/C1=C\\CCC(=C)[C@H]2CC(C)(C)[C@@H]2CC1"),
    ("nootkatone", "CC1CC(=O)C=C2CCC(C(C)=C)CC12C"),
    ("ethyl butyrate", "CCCC(=O)OCC"),
    ("isoamyl acetate", "CC(C)CCOC(C)=O"),
    ("gamma-decalactone", "CCCCCCC1CCC(=O)O1"),
    ("triacetin", "CC(=O)OCC(COC(C)=O)OC(C)=O"),
]


def read_csv(path):
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def print_rows(rows, cols, fmt="{:>8.2f}"):
    print("  ".join(f"{c:>18}" if i == 0 else f"{c:>8}" for i, c in enumerate(cols)))
    for r in rows:
        out = []
        for i, c in enumerate(cols):
            v = r[c]
            if i == 0:
                out.append(f"{v:>18}")
            elif isinstance(v, float):
                out.append(fmt.format(v))
            else:
                out.append(f"{v:>8}")
        print("  ".join(out))


def accuracy(quick: bool):
    print("== cross-validated accuracy (nested grouped 10-fold; no structure in train and test at once; the "
          "fit settings of each fold chosen on inner folds of its training part) ==")
    if quick:
        base = structure._tables_dir() / "gc_params.csv"
        print(f"(stored results of {base.name}; run without --quick to refit)")
        train = read_csv(structure._sibling(base, "training"))
        cvrows = read_csv(structure._sibling(base, "cv"))
    else:
        tmp = Path(tempfile.mkdtemp())
        t = time.perf_counter()
        structure_training.refit(tmp / "bench.csv", choose=True,
                                 progress=lambda done, total, m: print(f"  ... {done}/{total} {m}", flush=True))
        print(f"  refit choosing the settings by nested CV: {time.perf_counter() - t:.1f} s")
        t = time.perf_counter()
        structure_training.refit(tmp / "recorded.csv")
        same = all((tmp / f"recorded{s}.csv").read_bytes() == (tmp / f"bench{s}.csv").read_bytes()
                   for s in ("", "_training", "_cv"))
        print(f"  refit with the recorded settings (what `solvsel estimate --refit` runs): "
              f"{time.perf_counter() - t:.1f} s (goal 120 s); the same tables as the nested run: {same}")
        train = read_csv(tmp / "bench_training.csv")
        cvrows = read_csv(tmp / "bench_cv.csv")
        base = tmp / "bench.csv"
    # same-compound comparison: own (with and without neighbours) and HVK where HVK covers
    import pandas as pd

    df = pd.DataFrame(train).rename(columns=lambda c: c.removesuffix("_MPa05"))
    for c in ("dD", "dP", "dH", "cv_dD", "cv_dP", "cv_dH"):
        df[c] = pd.to_numeric(df[c], errors="coerce")
    df = df[df["fitted"] == "yes"].reset_index(drop=True)
    n_all = len(df)
    own = df[["cv_dD", "cv_dP", "cv_dH"]].to_numpy(float)
    t = time.perf_counter()
    pub = structure_training.published_predictions(df, ("hoftyzer-van-krevelen", "properties"))
    t_pub = time.perf_counter() - t
    preds = {"solvsel-gc": own, **pub}
    # the anchor: plain ridge on first-order group counts (no volume scaling), same folds
    anchor = ridge_anchor(df)
    preds["ridge on counts"] = anchor
    print(f"\n{n_all} fitted compounds; Hoftyzer-Van Krevelen covers "
          f"{int(np.isfinite(pub['hoftyzer-van-krevelen']).all(1).sum())}, the property route "
          f"{int(np.isfinite(pub['properties']).all(1).sum())} ({t_pub:.1f} s to score both)")
    cols = ["method", "class", "n", "mae_dD", "mae_dP", "mae_dH", "mae_ra"]
    print("\n-- every compound each method covers (class 'all') --")
    rows = []
    for m, P in preds.items():
        rows += [r for r in structure_training.error_table(df, {m: P}) if r["class"] == "all"]
    print_rows(rows, cols)
    print("\n-- own model against Hoftyzer-Van Krevelen and the ridge anchor, on the same compounds, by class --")
    sub = {k: preds[k] for k in ("solvsel-gc", "hoftyzer-van-krevelen", "ridge on counts")}
    print_rows(structure_training.error_table(df, sub), cols)
    print("\n-- on the compounds the property route covers (all methods on the same compounds) --")
    print_rows([r for r in structure_training.error_table(df, {k: preds[k] for k in ("solvsel-gc", "hoftyzer-van-krevelen",
                                                                              "properties")})
                if r["class"] == "all"], cols)
    print("\n-- by size (heavy atoms), same compounds --")
    from rdkit import Chem

    heavy = np.array([Chem.MolFromSmiles(x).GetNumAtoms() for x in df["smiles"]])
    for lo, hi in ((1, 4), (5, 9), (10, 200)):
        sel = (heavy >= lo) & (heavy <= hi)
        sub = {k: np.where(sel[:, None], preds[k], np.nan) for k in ("solvsel-gc", "hoftyzer-van-krevelen")}
        rows = [dict(r, **{"class": f"{lo}-{hi} atoms"}) for r in structure_training.error_table(df, sub) if r["class"] == "all"]
        print_rows(rows, cols)
    print("\n-- settings chosen in each outer fold (per parameter dD / dP / dH) and for the final fit --")
    P = structure.load_params(str(base))
    for k, fs in enumerate(list(P.fold_settings) + [P.settings]):
        label = f"fold {k}" if k < len(P.fold_settings) else "final"
        print(f"{label:>8}: huber epsilon {fs.epsilon}, alpha {fs.alpha}, squared {tuple(int(v) for v in fs.square)}, "
              f"kernel {fs.fp} (of {', '.join(f'{i} {n}' for i, n in enumerate(structure.KERNELS))}), "
              f"power {fs.power}, lambda {fs.lam}")
    conf = [r for r in cvrows if r["class"] == "conflicting labels"]
    if conf:
        r = conf[0]
        print(f"\ncompounds whose data sets disagree by Ra > {structure_training.CONFLICT_RA} (not fitted, scored against "
              f"the median): n {r['n']}, MAE {float(r['mae_dD_MPa05']):.2f} / {float(r['mae_dP_MPa05']):.2f} / "
              f"{float(r['mae_dH_MPa05']):.2f}")
    return base


def ridge_anchor(df):
    """Ridge on raw first-order counts (no volume scaling, no neighbours), alpha by inner CV, same folds."""
    from sklearn.linear_model import RidgeCV

    from rdkit import Chem

    terms = [t for t in structure.OWN_TERMS if t[2] == "atom"]
    X = np.array([structure.own_features(Chem.MolFromSmiles(s), terms)[0] for s in df["smiles"]])
    Y = df[["dD", "dP", "dH"]].to_numpy(float)
    folds = df["fold"].astype(int).to_numpy()
    P = np.full(Y.shape, np.nan)
    for k in sorted(set(folds)):
        tr, te = folds != k, folds == k
        for j in range(3):
            m = RidgeCV(alphas=(0.1, 1, 10, 100)).fit(X[tr], Y[tr, j])
            P[te, j] = m.predict(X[te])
    return P


def flavours(params):
    print("\n== flavour and active molecules: estimate with the cross-validated error of their class ==")
    train_keys = {r["key"] for r in read_csv(structure._sibling(Path(params), "training"))}
    from rdkit import Chem

    print(f"{'molecule':>30} {'in data':>7} {'class':>17}  {'dD':>5} {'dP':>5} {'dH':>5}   "
          f"{'MAE (90 % of errors below)':>34}  {'HVK dD/dP/dH':>16}")
    for name, smi in FLAVOURS:
        e = structure.estimate(smi, params=params, properties=False)
        key = Chem.MolToSmiles(Chem.MolFromSmiles(e.smiles), isomericSmiles=False)
        u = e.uncertainty
        hv = e.others[0]
        hvs = f"{hv.dD:.1f}/{hv.dP:.1f}/{hv.dH:.1f}" if hv.covered else "not covered"
        print(f"{name:>30} {'yes' if key in train_keys else 'no':>7} {e.chem_class:>17}  {e.dD:5.1f} {e.dP:5.1f} "
              f"{e.dH:5.1f}   +/-{u['dD']:.1f}/{u['dP']:.1f}/{u['dH']:.1f} ({u['q90_dD']:.1f}/{u['q90_dP']:.1f}/"
              f"{u['q90_dH']:.1f})  {hvs:>16}")
    print("(in data = the structure is in the training data; then the similarity correction pulls toward its label)")


def speed(params):
    print("\n== speed ==")
    rows = read_csv(structure._sibling(Path(params), "training"))
    smiles = [r["smiles"] for r in rows][:1000]
    structure.estimate("CCO", params=params, properties=False)  # warm caches
    t = time.perf_counter()
    res = structure.estimate_many(smiles, params=params, properties=False)
    dt = time.perf_counter() - t
    ok = sum(1 for _, r in res if not isinstance(r, Exception))
    print(f"{len(smiles)} SMILES, no library look-up: {dt:.2f} s ({ok} estimated)  goal < 5 s  ratio {dt / 5:.2f}")
    t = time.perf_counter()
    structure.estimate_many(smiles[:200], params=params, properties=True)
    dt2 = time.perf_counter() - t
    print(f"200 SMILES with the library look-up and property estimate: {dt2:.2f} s")
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    for args in (["CC1=CCC(CC1)C(=C)C"], ["CC1=CCC(CC1)C(=C)C", "--no-lookup"]):
        walls, cpus = [], []
        for _ in range(3):
            t0 = time.perf_counter()
            r0 = os.times()
            subprocess.run([sys.executable, "-m", "solvsel", "estimate", *args], env=env, check=True,
                           stdout=subprocess.DEVNULL)
            r1 = os.times()
            walls.append(time.perf_counter() - t0)
            cpus.append((r1.children_user - r0.children_user) + (r1.children_system - r0.children_system))
        print(f"cold start 'solvsel estimate {' '.join(args)}': wall {min(walls):.2f} s (best of 3), CPU "
              f"{min(cpus):.2f} s  goal < 1.5 s  ratio {min(walls) / 1.5:.2f}")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="use the stored CV results instead of refitting")
    args = ap.parse_args()
    params = accuracy(args.quick)
    flavours(params)
    speed(params)


if __name__ == "__main__":
    main()
