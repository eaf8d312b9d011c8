"""Tests of solvsel.science.structure (HSP and molar volume from SMILES) and ``solvsel estimate``.

Sources of the reference numbers are named beside each check: the HSP data sets
bundled with the ``chemicals`` library (Diaz de los Rios & Murcia Belmonte 2022,
Alshehri et al. 2022, Schrier 2020), liquid molar volumes of ``chemicals``
(DIPPR-105 coefficients of Perry's handbook), and hand counts of groups (the
method papers' own worked examples were not at hand: counts are by hand,
following the group definitions of Van Krevelen & te Nijenhuis 2009 and
Fedors 1974).
"""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest

from solvsel.science import structure, structure_training
from solvsel.errors import InputError, MissingDataError, OutOfRangeError


def counts(groups):
    return {g.name: g.count for g in groups}


# --------------------------------------------------------------------------- group counts (hand-counted)

HVK_COUNTS = {
    # SMILES: hand count of Hoftyzer-Van Krevelen groups
    "Cc1ccccc1": {"phenyl": 1, "-CH3": 1},  # toluene
    "CCO": {"-CH3": 1, "-CH2-": 1, "-OH": 1},  # ethanol
    "CC(=O)OCC": {"-COO-": 1, "-CH3": 2, "-CH2-": 1},  # ethyl acetate
    "CC(C)=O": {">CO": 1, "-CH3": 2},  # acetone
    "C1CCCCC1": {"-CH2-": 6, "ring": 1},  # cyclohexane
    "O=[N+]([O-])c1ccccc1": {"phenyl": 1, "-NO2": 1},  # nitrobenzene
    "CC(=O)O": {"-COOH": 1, "-CH3": 1},  # acetic acid
    "Cc1ccc(C)cc1": {"phenylene": 1, "-CH3": 2},  # p-xylene
    "CC1=CCC(CC1)C(=C)C": {"-CH3": 2, "-CH2-": 3, ">CH-": 1, "=CH2": 1, "=CH-": 1, "=C<": 2, "ring": 1},  # limonene
    "CC(C)=CCCC(C)=CC=O": {"-CHO": 1, "-CH3": 3, "-CH2-": 2, "=CH-": 2, "=C<": 2},  # citral
    "CCNCC": {"-NH-": 1, "-CH2-": 2, "-CH3": 2},  # diethylamine
    "ClC(Cl)Cl": {"-Cl": 3, ">CH-": 1},  # chloroform
    "COC=O": {"HCOO-": 1, "-CH3": 1},  # methyl formate
    "N#Cc1ccccc1": {"phenyl": 1, "-CN": 1},  # benzonitrile
    # thymol: a benzene ring with three substituents is neither phenyl nor
    # phenylene; its atoms fall back to =CH- / =C< plus a ring (our approximation)
    "Cc1ccc(C(C)C)c(O)c1": {"=CH-": 3, "=C<": 3, "ring": 1, "-CH3": 3, ">CH-": 1, "-OH": 1},
}


@pytest.mark.parametrize("smiles", sorted(HVK_COUNTS))
def test_hvk_group_counts_by_hand(smiles):
    e = structure.hoftyzer_van_krevelen(smiles)
    assert e.covered
    assert counts(e.groups) == HVK_COUNTS[smiles]
    # every heavy atom is in exactly one group
    mol, _ = structure.parse_smiles(smiles)
    atoms = [i for g in e.groups for o in g.atoms for i in o]
    assert sorted(atoms) == list(range(mol.GetNumAtoms()))


FEDORS = {
    # SMILES: (hand count, hand-summed volume from the increments of Fedors 1974 [cm3/mol])
    "c1ccccc1": ({"=CH-": 6, "ring (5 or more atoms)": 1, "ring double bond": 3}, 6 * 13.5 + 16.0 - 3 * 2.2),
    "Cc1ccccc1": ({"-CH3": 1, "=CH-": 5, "=C<": 1, "ring (5 or more atoms)": 1, "ring double bond": 3},
                  33.5 + 5 * 13.5 - 5.5 + 16.0 - 6.6),
    "CCO": ({"-CH3": 1, "-CH2-": 1, "-OH": 1}, 33.5 + 16.1 + 10.0),
    "CCCCCC": ({"-CH3": 2, "-CH2-": 4}, 2 * 33.5 + 4 * 16.1),
    "c1ccncc1": ({"-N=": 1, "=CH-": 5, "ring (5 or more atoms)": 1, "ring double bond": 3},
                 5.0 + 5 * 13.5 + 16.0 - 6.6),
    "O=[N+]([O-])c1ccccc1": ({"-NO2 (aromatic)": 1, "=CH-": 5, "=C<": 1, "ring (5 or more atoms)": 1,
                              "ring double bond": 3}, 32.0 + 5 * 13.5 - 5.5 + 16.0 - 6.6),
    "CC(N)=O": ({"-CONH2": 1, "-CH3": 1}, 17.5 + 33.5),
    "C1CC1": ({"-CH2-": 3, "ring (3 or 4 atoms)": 1}, 3 * 16.1 + 18.0),
    "C1=CCCCC1": ({"=CH-": 2, "-CH2-": 4, "ring (5 or more atoms)": 1}, 2 * 13.5 + 4 * 16.1 + 16.0),  # isolated C=C
    "CCS": ({"-CH3": 1, "-CH2-": 1, "-SH": 1}, 33.5 + 16.1 + 28.0),
}


@pytest.mark.parametrize("smiles", sorted(FEDORS))
def test_fedors_group_counts_by_hand(smiles):
    vm, ecoh, groups, uncovered = structure.fedors_volume(smiles)
    want_counts, want_vm = FEDORS[smiles]
    assert not uncovered
    assert counts(groups) == want_counts
    assert vm == pytest.approx(want_vm, abs=1e-9)


OWN_COUNTS = {
    # hand count in our own first-order scheme (tables/gc_params.csv)
    "CC(=O)OCC": {"ester C(=O)O": 1, "CH3": 2, "CH2": 1},
    "CCO": {"primary OH": 1, "CH3": 1, "CH2": 1, "H-bond donors": 1},
    "Cc1ccc(C(C)C)c(O)c1": {"phenol OH": 1, "aryl CH3": 1, "CH3": 2, "CH": 1, "aromatic cH": 3, "aromatic c": 3,
                            "aromatic rings": 1, "rings": 1, "H-bond donors": 1},
    "CC(C)=CCCC(C)=CC=O": {"aldehyde CHO": 1, "CH3": 3, "CH2": 2, "=CH": 2, "=C": 2, "C=C-C=O": 1},
}


@pytest.mark.parametrize("smiles", sorted(OWN_COUNTS))
def test_own_scheme_counts_by_hand(smiles):
    mol, _ = structure.parse_smiles(smiles)
    _, _, groups, uncovered = structure.own_features(mol)
    assert not uncovered
    assert counts(groups) == OWN_COUNTS[smiles]


def test_mcgowan_volume_by_hand():
    # Abraham & McGowan (1987) increments (from memory): benzene C6H6 = 6(16.35) + 6(8.71) - 12(6.56) = 71.64,
    # tabulated Vx 0.7164 (100 cm3/mol)
    assert structure.mcgowan_volume("c1ccccc1") == pytest.approx(71.64, abs=1e-9)


# --------------------------------------------------------------------------- against outside data


@pytest.mark.parametrize("smiles,cas,rel", [
    ("CCO", "64-17-5", 0.04), ("CCCCCC", "110-54-3", 0.04), ("Cc1ccccc1", "108-88-3", 0.04),
    ("CC(=O)OCC", "141-78-6", 0.04), ("CC(C)=O", "67-64-1", 0.06), ("CCCCO", "71-36-3", 0.04),
    ("c1ccccc1", "71-43-2", 0.04),
    # acetic acid: Fedors gives 62.0 against 57.6 measured (+7.6 %): small H-bonded acids pack tighter than
    # the increments say; kept as a check that the known weakness stays as large as it is, not larger
    ("CC(=O)O", "64-19-7", 0.08),
])
def test_fedors_volume_against_library(smiles, cas, rel):
    # Liquid molar volume at 25 C from chemicals (DIPPR-105, Perry's handbook). Fedors (1974) quotes
    # deviations of a few percent for liquids: 4 % for plain solvents, 6 % for the small ketone.
    vm_ref, _ = structure.liquid_molar_volume(cas)
    vm = structure.fedors_volume(smiles)[0]
    assert vm == pytest.approx(vm_ref, rel=rel)


def test_hvk_against_published_solvents():
    # Hoftyzer-Van Krevelen against the MANUEL_RUBEN_2022 set (chemicals) for plain solvents: the
    # book quotes errors of about 1-2 MPa^0.5 per parameter; 1.0 / 2.5 / 3.0 here (dP is worse without the
    # symmetry factors).  Values recalled from memory are only trusted as far as this holds.
    from chemicals.solubility import hansen_delta_d, hansen_delta_h, hansen_delta_p

    cases = {"CCO": "64-17-5", "CCCCCC": "110-54-3", "Cc1ccccc1": "108-88-3", "CC(=O)OCC": "141-78-6",
             "CC(C)=O": "67-64-1", "CCCCO": "71-36-3"}
    for smiles, cas in cases.items():
        e = structure.hoftyzer_van_krevelen(smiles)
        ref = [f(cas, method="MANUEL_RUBEN_2022") / 1000 for f in (hansen_delta_d, hansen_delta_p, hansen_delta_h)]
        assert abs(e.dD - ref[0]) < 1.0, smiles
        assert abs(e.dP - ref[1]) < 2.5, smiles
        assert abs(e.dH - ref[2]) < 3.0, smiles


def test_properties_estimate_ethanol_against_published():
    # Second, independent estimate from chemicals' physical properties vs the MANUEL_RUBEN_2022 values of
    # ethanol (15.8, 8.8, 19.4). Koenhen-Smolders scatter about 1 MPa^0.5 on dD; Beerbower's rule with the
    # gas-phase dipole is known to run low on dP for small alcohols: 2.0 allowed.
    e = structure.properties_estimate("CCO")
    assert e.covered
    assert abs(e.dD - 15.8) < 1.0 and abs(e.dP - 8.8) < 2.0 and abs(e.dH - 19.4) < 1.5


def test_library_lookup_without_stereo_and_on_request_in_full():
    # chemicals' databank lists citral (CAS 5392-40-5, the E/Z mixture, no stereo in its SMILES) but not
    # geranial: the stereo-free InChIKey finds it, and the estimate says the match ignored stereo. (Without
    # full_lookup only the part of the databank already loaded is searched, which depends on what the
    # process has done before, so it is not checked here.)
    geranial = "CC(C)=CCC/C(C)=C/C=O"
    e = structure.estimate(geranial, full_lookup=True)
    assert any(n.startswith("CAS 5392-40-5 matched to the library without stereo") for n in e.notes)
    assert "COSTALD" in e.vm_method  # the library's volume of citral, not Fedors' estimate


def test_training_labels_are_the_library_medians():
    # The stored training table must hold the median of the three chemicals data sets (checked on a sample).
    from chemicals import solubility

    solubility._load_solubility_data()
    rows = list(csv.DictReader(open(structure._tables_dir() / "gc_params_training.csv", encoding="utf-8")))
    assert len(rows) > 1100
    rng = np.random.default_rng(0)
    for r in rng.choice(rows, 40, replace=False):
        vals = []
        for cas in r["cas"].split(";"):
            for key in structure_training.HSP_DATASETS:
                df = solubility.solubility_sources[key]
                if cas in df.index:
                    vals.append(df.loc[cas, ["HANSEN_DELTA_D", "HANSEN_DELTA_P", "HANSEN_DELTA_H"]].to_numpy() / 1000)
        med = np.median(np.array(vals, float), axis=0)
        assert [float(r[f"{k}_MPa05"]) for k in ("dD", "dP", "dH")] == pytest.approx(list(med), abs=0.006)


# --------------------------------------------------------------------------- cross-validated accuracy


def _cv_rows():
    return list(csv.DictReader(open(structure._tables_dir() / "gc_params_cv.csv", encoding="utf-8")))


def test_stored_cv_errors_recomputed_from_the_training_table():
    # The per-compound out-of-fold predictions stored in gc_params_training.csv, scored against the labels:
    # must reproduce the overall row of gc_params_cv.csv, and stay within what was measured by nested CV
    # (0.495 / 1.498 / 1.151 MPa^0.5 on 1084 compounds) plus 0.05.
    rows = [r for r in csv.DictReader(open(structure._tables_dir() / "gc_params_training.csv", encoding="utf-8"))
            if r["fitted"] == "yes"]
    y = np.array([[float(r[f"{k}_MPa05"]) for k in ("dD", "dP", "dH")] for r in rows])
    p = np.array([[float(r[f"cv_{k}_MPa05"]) for k in ("dD", "dP", "dH")] for r in rows])
    mae = np.abs(p - y).mean(axis=0)
    overall = next(r for r in _cv_rows() if r["method"] == "solvsel-gc" and r["class"] == "all")
    assert mae == pytest.approx([float(overall[f"mae_{k}_MPa05"]) for k in ("dD", "dP", "dH")], abs=2e-3)
    assert mae[0] <= 0.495 + 0.05 and mae[1] <= 1.498 + 0.05 and mae[2] <= 1.151 + 0.05


def test_own_model_beats_the_published_method_on_the_same_compounds():
    # Same-compound comparison written by refit (rows other than solvsel-gc are on the compounds both cover).
    rows = {(r["method"], r["class"]): r for r in _cv_rows()}
    own, pub = rows[("solvsel-gc", "all")], rows[("hoftyzer-van-krevelen", "all")]
    for k in ("dD", "dP", "dH", "ra"):
        assert float(own[f"mae_{k}_MPa05"]) < float(pub[f"mae_{k}_MPa05"])
    # and the anchor measured on these data for plain ridge on ~35 counts (0.57 / 2.2 / 1.7) is beaten
    assert float(own["mae_dD_MPa05"]) < 0.57 and float(own["mae_dP_MPa05"]) < 2.2
    assert float(own["mae_dH_MPa05"]) < 1.7


@pytest.fixture(scope="module")
def dataset():
    df = structure_training.training_data()
    X, _, _, covered = structure_training.dataset_design(df)
    return df, X, covered


def test_one_fold_refit_reproduces_the_stored_out_of_fold_predictions(dataset):
    # Refit fold 0 from scratch (the split is recorded): its out-of-fold predictions must equal the stored
    # ones (3 decimals stored), so the published CV errors come from this code and these data.
    df, X, covered = dataset
    stored = {r["key"]: r for r in csv.DictReader(open(structure._tables_dir() / "gc_params_training.csv",
                                                        encoding="utf-8"))}
    folds = np.array([int(stored[k]["fold"]) for k in df["key"]])
    fitted = np.array([stored[k]["fitted"] == "yes" for k in df["key"]])
    assert (fitted == (covered & ~df["conflict"].to_numpy(bool))).all()
    Y = df[["dD", "dP", "dH"]].to_numpy(float)
    tr = np.where(fitted & (folds != 0) & (folds >= 0))[0]
    te = np.where((folds == 0) & fitted)[0]
    # the settings the nested CV chose on fold 0's training compounds (recorded in gc_params.csv; choosing
    # them again takes the inner CV, which the full refit of the benchmark reruns)
    fs = structure.load_params().fold_settings[0]
    icpt, coef = structure_training._fit(X[tr], Y[tr], settings=fs)
    res = Y[tr] - structure._predict(X[tr], icpt, coef, fs.square)
    from rdkit import Chem

    fps = [structure.fingerprint(Chem.MolFromSmiles(s)) for s in df["smiles"]]
    tr_fps = [fps[i] for i in tr]
    dual = structure_training.kernel_dual(structure_training.similarity_matrix(tr_fps, tr_fps), res, fs.power, fs.lam, fs.fp)
    base = structure._predict(X[te], icpt, coef, fs.square)
    for n, i in enumerate(te):
        p = np.clip(base[n] + structure.kernel_correction(fps[i], tr_fps, dual, power=fs.power,
                                                              kind=fs.fp)[0], 0, None)
        want = [float(stored[df["key"][i]][f"cv_{k}_MPa05"]) for k in ("dD", "dP", "dH")]
        assert p == pytest.approx(want, abs=2e-3)
    # no structure on both sides: the grouping key is unique and the fold's test keys are not in training
    assert df["key"].is_unique
    assert not set(df["key"][te]) & set(df["key"][tr])


@pytest.mark.slow
def test_fold_settings_are_chosen_on_the_fold_training_part_only(dataset):
    # Nested CV (no tuning on the test compounds): the settings recorded for outer fold 3 must come out of
    # select_settings run on that fold's training compounds alone (its inner folds use seed SEED + 1 + k).
    df, X, covered = dataset
    stored = {r["key"]: r for r in csv.DictReader(open(structure._tables_dir() / "gc_params_training.csv",
                                                        encoding="utf-8"))}
    folds = np.array([int(stored[k]["fold"]) for k in df["key"]])
    fitted = np.array([stored[k]["fitted"] == "yes" for k in df["key"]])
    tr = np.where(fitted & (folds != 3) & (folds >= 0))[0]
    from rdkit import Chem

    fps = [structure.fingerprint(Chem.MolFromSmiles(df["smiles"][i])) for i in tr]
    Y = df[["dD", "dP", "dH"]].to_numpy(float)
    got = structure_training.select_settings(X[tr], Y[tr], structure_training.similarity_matrix(fps, fps), df["key"].to_numpy()[tr],
                                    seed=structure_training.SEED + 1 + 3)
    assert got == structure.load_params().fold_settings[3]


def test_bundled_params_reproduce_stored_residuals():
    # In-sample residuals stored at fit time = label - groups-only estimate of the bundled parameters.
    rows = [r for r in csv.DictReader(open(structure._tables_dir() / "gc_params_training.csv", encoding="utf-8"))
            if r["fitted"] == "yes"][:60]
    for r in rows:
        e = structure.own_model(r["smiles"], neighbours_on=False)
        got = [float(r[f"{k}_MPa05"]) - v for k, v in zip(("dD", "dP", "dH"), (e.dD, e.dP, e.dH))]
        assert got == pytest.approx([float(r[f"res_{k}_MPa05"]) for k in ("dD", "dP", "dH")], abs=2e-3)


# --------------------------------------------------------------------------- SMILES edge cases


def test_same_answer_for_kekule_aromatic_explicit_h_and_stereo():
    forms = ["Cc1ccccc1", "CC1=CC=CC=C1", "[H]c1c([H])c([H])c(C([H])([H])[H])c([H])c1[H]"]
    ests = [structure.estimate(s, properties=False) for s in forms]
    for e in ests[1:]:
        assert e.smiles == ests[0].smiles
        assert (e.dD, e.dP, e.dH, e.vm_cm3_mol) == (ests[0].dD, ests[0].dP, ests[0].dH, ests[0].vm_cm3_mol)
    # cannabidiol with and without stereo marks: same numbers, stereo kept in the canonical SMILES
    a = structure.estimate("CCCCCc1cc(O)c([C@@H]2C=C(C)CC[C@H]2C(C)=C)c(O)c1", properties=False)
    b = structure.estimate("CCCCCc1cc(O)c(C2C=C(C)CCC2C(C)=C)c(O)c1", properties=False)
    assert "@" in a.smiles and "@" not in b.smiles
    assert (a.dD, a.dP, a.dH) == (b.dD, b.dP, b.dH)
    # isotope labels: perdeuterated toluene gives the toluene numbers
    d = structure.estimate("[2H]c1c([2H])c([2H])c(C([2H])([2H])[2H])c([2H])c1[2H]", properties=False)
    assert (d.smiles, d.dD, d.dP, d.dH) == (ests[0].smiles, ests[0].dD, ests[0].dP, ests[0].dH)


@pytest.mark.parametrize("smiles,err,words", [
    ("C1CC", InputError, "could not be read"),
    ("", InputError, "non-empty"),
    ("CC(=O)[O-].[Na+]", OutOfRangeError, "separate components"),
    ("CCO.O", OutOfRangeError, "separate components"),
    ("CC(=O)[O-]", OutOfRangeError, "ion"),
    ("C[N+](C)(C)C", OutOfRangeError, "ion"),
    ("[NH3+]CC(=O)[O-]", OutOfRangeError, "zwitterion"),
    ("CC[Sn](CC)(CC)CC", OutOfRangeError, "metals"),
    ("[Fe]", OutOfRangeError, "metals"),
    ("C[CH2]", OutOfRangeError, "radical"),
    ("*CC(*)c1ccccc1", OutOfRangeError, "polymers"),
])
def test_refused_with_a_clear_message(smiles, err, words):
    with pytest.raises(err) as exc:
        structure.estimate(smiles, properties=False)
    assert words in str(exc.value)


def test_nitro_is_not_an_ion():
    e = structure.estimate("CC[N+](=O)[O-]", properties=False)  # nitroethane: charge-separated but neutral
    assert e.dP > 5


def test_uncovered_atoms_refuse_the_method():
    # Hoftyzer-Van Krevelen has no group for an aromatic ring nitrogen: refused, never a silent guess
    e = structure.hoftyzer_van_krevelen("c1ccncc1")
    assert not e.covered and e.uncovered_atoms == (3,)
    with pytest.raises(MissingDataError) as exc:
        structure.estimate("c1ccncc1", method="hoftyzer-van-krevelen", properties=False)
    assert "N3" in str(exc.value)
    # the own scheme covers it, and reports the other method as not covered
    e = structure.estimate("c1ccncc1", properties=False)
    assert e.method == "solvsel-gc" and not e.others[0].covered


def test_unknown_method():
    with pytest.raises(InputError):
        structure.estimate("CCO", method="nonsense")


def test_estimate_result_fields():
    # d-limonene, in the training data (MANUEL_RUBEN_2022: 17.2, 1.8, 4.3); the estimate with its neighbour
    # correction must land within the hydrocarbon class error (CV MAE about 0.5 / 1.3 / 1.1).
    e = structure.estimate("CC1=CCC(CC1)C(=C)C", properties=False)
    d = e.to_dict()
    for k in ("smiles", "dD", "dP", "dH", "vm", "method", "groups", "uncertainty"):
        assert k in d
    assert d["uncertainty"]["basis"] == "hydrocarbons" and d["uncertainty"]["n"] > 50
    assert abs(e.dD - 17.2) < 1.0 and abs(e.dP - 1.8) < 1.5 and abs(e.dH - 4.3) < 1.5
    assert e.vm_cm3_mol == pytest.approx(161.3, abs=0.05)  # Fedors, hand sum of the groups below
    assert json.dumps(d)


def test_target_from_smiles_uses_the_estimate():
    from solvsel.science.target import target_from_smiles

    t = target_from_smiles("CC(C)=CCCC(C)=CC=O")
    e = structure.estimate("CC(C)=CCCC(C)=CC=O")
    assert (t.dD, t.dP, t.dH) == (e.dD, e.dP, e.dH)


# --------------------------------------------------------------------------- command line


def test_cli_json_contract(capsys):
    from solvsel.cli import main

    assert main(["estimate", "CC(=O)OC(C)(CCC=C(C)C)C=C", "--json", "--no-lookup"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert {"smiles", "dD", "dP", "dH", "vm", "method", "groups", "uncertainty"} <= set(d)
    assert d["method"] == "solvsel-gc" and d["uncertainty"]["basis"] == "esters"


def test_cli_bad_input_exit_2(capsys):
    from solvsel.cli import main

    assert main(["estimate", "C1CC"]) == 2
    assert "could not be read" in capsys.readouterr().err
    assert main(["estimate", "[Na+].[Cl-]"]) == 2
    capsys.readouterr()
    assert main(["estimate", "CCO", "--lookup-all", "--no-lookup"]) == 2
    assert "contradict" in capsys.readouterr().err


def test_cli_refit_never_overwrites(tmp_path, capsys):
    from solvsel.cli import main

    out = tmp_path / "mine.csv"
    out.write_text("precious\n")
    assert main(["estimate", "--refit", str(out)]) == 2
    assert "--force" in capsys.readouterr().err
    assert out.read_text() == "precious\n"


def test_cli_params_file_is_used(tmp_path, capsys):
    # A parameter table with every coefficient zero but the dD intercept gives exactly that intercept.
    src = structure._tables_dir() / "gc_params.csv"
    rows = list(csv.DictReader(open(src, encoding="utf-8")))
    out = tmp_path / "p.csv"
    with open(out, "w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=list(rows[0]))
        w.writeheader()
        for r in rows:
            if r["kind"] in ("atom", "match", "special", "polar", "size"):
                r.update(coef_dD="0", coef_dP="0", coef_dH="0")
            if r["kind"] == "intercept":
                r.update(coef_dD="17.5", coef_dP="0", coef_dH="0")
            w.writerow(r)
    from solvsel.cli import main

    assert main(["estimate", "CCO", "--params", str(out), "--json", "--no-lookup"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["dD"] == pytest.approx(17.5) and d["dP"] == 0 and d["dH"] == 0


def test_cli_save_to_own_solutes(tmp_path, capsys):
    from solvsel.data.catalog import load_catalog
    from solvsel.cli import main

    path = tmp_path / "my_solutes.csv"
    assert main(["estimate", "CC(C)=CCCC(C)=CC=O", "--save-to", str(path), "--name", "citral estimate",
                 "--category", "flavour", "--no-lookup"]) == 0
    assert main(["estimate", "CCO", "--save-to", str(path), "--name", "citral estimate", "--no-lookup"]) == 2
    capsys.readouterr()
    cat = load_catalog(own={"solutes": [str(path)]})
    s = cat.solute("citral estimate")
    e = structure.estimate("CC(C)=CCCC(C)=CC=O", properties=False)
    assert s.dD == pytest.approx(e.dD, abs=0.006) and s.hsp_basis == "estimated"


def test_cli_many(capsys):
    from solvsel.cli import main

    assert main(["estimate", "CCO", "Oc1ccccc1", "--no-lookup"]) == 0
    out = capsys.readouterr().out
    assert "CCO" in out and "Oc1ccccc1" in out and "Cautions" in out


# --------------------------------------------------------------------------- the optional extra


def test_without_rdkit_an_estimate_names_the_extra(monkeypatch, capsys):
    import sys

    from solvsel.errors import MissingExtraError

    monkeypatch.setitem(sys.modules, "rdkit", None)  # as if RDKit were not installed
    structure._rd.cache_clear()
    try:
        with pytest.raises(MissingExtraError) as exc:
            structure.estimate("CCO", properties=False)
        assert exc.value.module == "rdkit" and "solvsel[structure]" in str(exc.value)
        from solvsel.cli import main

        assert main(["estimate", "CCO", "--no-lookup"]) == 2
        assert "pip install 'solvsel[structure]'" in capsys.readouterr().err
    finally:
        monkeypatch.undo()
        structure._rd.cache_clear()


def test_without_scikit_learn_a_refit_names_the_extra(monkeypatch):
    import sys

    from solvsel.errors import MissingExtraError

    for name in ("sklearn", "sklearn.linear_model", "sklearn.model_selection"):  # as if not installed
        monkeypatch.setitem(sys.modules, name, None)
    structure_training._sklearn.cache_clear()
    try:
        with pytest.raises(MissingExtraError) as exc:
            structure_training._grouped_folds(np.array(["a", "b", "c"]), 3, 0)
        assert exc.value.module == "scikit-learn" and "solvsel[structure]" in str(exc.value)
    finally:
        monkeypatch.undo()
        structure_training._sklearn.cache_clear()


# --------------------------------------------------------------------------- ring carbonyls RDKit reads as aromatic

#: Solutes of the published solubility set (Vermeire, Chung and Green, J. Am. Chem. Soc. 144 (2022) 10785)
#: whose ring carbonyl RDKit writes O=c; 2-benzimidazolone in its usual N-H form.
RING_CARBONYLS = {
    "xanthone": "O=C1c2ccccc2Oc2ccccc12",
    "isatoic anhydride": "O=C1OC(=O)c2ccccc2N1",
    "2-benzimidazolone": "O=C1Nc2ccccc2N1",
    "risperidone": "CC1=C(CCN2CCC(CC2)c2noc3cc(F)ccc23)C(=O)N2CCCCC2=N1",
}


@pytest.mark.parametrize("name", sorted(RING_CARBONYLS))
def test_ring_carbonyls_read_as_aromatic_are_estimated_in_keto_form(name):
    e = structure.estimate(RING_CARBONYLS[name], properties=False)
    assert structure.KETO_NOTE in e.notes
    # the keto form has a ring carbonyl group of the own scheme (ring ketone, lactone or amide)
    assert {g.name for g in e.groups} & {"ring ketone C=O", "aryl ketone C=O", "lactone C(=O)O", "amide C(=O)NH",
                                          "amide C(=O)N"}
    assert 17.0 < e.dD < 23.0 and 0.0 < e.dP < 25.0 and 0.0 < e.dH < 25.0


def test_keto_form_against_published_coumarin_and_caffeine():
    # coumarin and caffeine (O=c in RDKit) against MANUEL_RUBEN_2022 in chemicals: 20.0, 12.5, 6.7 and
    # 19.5, 10.1, 13.0; the estimates lie within the class's cross-validated mean error (coumarin, Ra 1.7
    # against 1.9) and 1.5 times it (caffeine, Ra 5.1 against 3.8), as measured when the keto form was added
    from solvsel.data.catalog import library_hsp
    from solvsel.science.hansen import ra

    for cas, smiles, times in (("91-64-5", "O=c1ccc2ccccc2o1", 1.0), ("58-08-2", "Cn1cnc2c1c(=O)n(C)c(=O)n2C", 1.5)):
        published, source = library_hsp(cas)
        assert source == "hsp_mr2022"
        e = structure.estimate(smiles, properties=False)
        assert structure.KETO_NOTE in e.notes
        assert float(ra(published, e.hsp)) < times * e.uncertainty["ra"]


def test_molecules_without_ring_carbonyls_are_untouched():
    # anthraquinone's carbonyls are not aromatic in RDKit: no keto note, no change
    e = structure.estimate("O=C1c2ccccc2C(=O)c2ccccc12", properties=False)
    assert structure.KETO_NOTE not in e.notes
    assert structure._keto_form(structure.parse_smiles("c1ccccc1O")[0]) is None


def test_a_missing_group_is_named_with_its_kind():
    # trimethylphosphine oxide: no group for the P=O oxygen; the message says what kind of atom it is
    with pytest.raises(MissingDataError) as ei:
        structure.estimate("CP(=O)(C)C", properties=False)
    assert "O4 (chain atom, double-bonded to P)" in ei.value.message
