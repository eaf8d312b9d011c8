"""Measured solubilities of solid solutes (CombiSolu-Exp) near 25 C, shaped for the benchmark and the tests.

The data set (Vermeire, Chung and Green, J. Am. Chem. Soc. 144 (2022) 10785, DOI 10.1021/jacs.2c01768;
SolProp v1.2) lives outside the project in ``../shared/data/external/solubility_combisolu/`` (see its
PROVENANCE.md); :func:`available` says whether it is there.  Nothing of it is copied into the project.

Protocol (the one of the issue that set the goals):

- rows within 3 K of 298.15 K;
- mole fraction as reported; other units converted exactly with the molar masses of solute and solvent
  (RDKit, from the SMILES): g (or mol) per g (kg, 100 g) of solvent, and concentrations per volume of
  solution (g/m3, g/mL, log10 mol/L) through the solvent's density given in the file (the solution's
  volume taken as the solvent's: these rows are dilute, at most x = 0.03);
- repeats averaged in log10 x; solutes and solvents merged by InChIKey (RDKit, standard InChI, so
  tautomers and the names paracetamol / acetaminophen fall together);
- the solutes of ``split.csv`` (46, each with at least 8 solvents), with its dev / heldout mark;
- solute HSP from solvsel's own structure estimate; liquids' HSP from the catalog (by CAS), else from
  the three published data sets of ``chemicals`` (MANUEL_RUBEN_2022, WDR_SCHRIER, ALSHERI_HANSEN), by
  ``Catalog.solvent(cas)``; liquids with neither are left out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
#: The published data sets, beside the project (``../shared/data/external`` from the repository).
EXTERNAL = ROOT.parent / "shared" / "data" / "external"
COMBISOLU = EXTERNAL / "solubility_combisolu"
DATA_FILE = COMBISOLU / "CombiSolu-Exp.csv"
SPLIT_FILE = COMBISOLU / "split.csv"

T_REF_K = 298.15
T_WINDOW_K = 3.0
MIN_SOLVENTS = 8
CITATION = ("Vermeire, Chung, Green, J. Am. Chem. Soc. 144 (2022) 10785 (CombiSolu-Exp, SolProp v1.2), "
            "from ../shared/data/external/solubility_combisolu")


def available() -> bool:
    """True when the published data set is present beside the project."""
    return DATA_FILE.is_file() and SPLIT_FILE.is_file()


@lru_cache(maxsize=None)
def _mol_info(smiles: str) -> tuple[str, float]:
    """(standard InChIKey, molar mass [g/mol]) of a SMILES (RDKit)."""
    from rdkit import Chem, RDLogger
    from rdkit.Chem import Descriptors

    RDLogger.DisableLog("rdApp.*")
    mol = Chem.MolFromSmiles(smiles)
    return Chem.MolToInchiKey(mol), float(Descriptors.MolWt(mol))


def mole_fraction(value: float, unit: str, mw2: float, mw1: float, rho1_kg_m3: float) -> float:
    """Mole fraction of the solute from a reported solubility (solute 2 [g/mol], solvent 1 [g/mol]).

    >>> round(mole_fraction(14.9, "g/kg(solvent)", 151.165, 18.015, 997.0), 5)  # paracetamol in water
    0.00177
    """
    unit = unit.strip()
    n1_per_g = 1.0 / mw1  # mol of solvent per g of solvent
    per_g_solvent = {"g/kg(solvent)": 1e-3, "g/100g(solvent)": 1e-2, "g/g(solvent)": 1.0}
    if unit == "mole fraction":
        return float(value)
    if unit in per_g_solvent:
        n2 = value * per_g_solvent[unit] / mw2
        return n2 / (n2 + n1_per_g)
    if unit == "mol/kg":
        n2 = value * 1e-3
        return n2 / (n2 + n1_per_g)
    # concentrations per volume of solution: mol of solute per L, with a litre of solvent beside it
    c = {"g/m3": value / 1000.0 / mw2, "g/mL": value * 1000.0 / mw2, "logS": 10.0 ** value}.get(unit)
    if c is None:
        raise ValueError(f"unknown unit {unit!r}")
    n1 = rho1_kg_m3 / mw1  # mol of solvent in one litre (kg/m3 = g/L)
    return c / (c + n1)


@lru_cache(maxsize=1)
def measurements():
    """The measured table: one row per (solute, solvent) near 25 C, averaged in log10 x.

    Columns: solute (InChIKey), solute_name, solute_smiles, split (dev / heldout), solvent (InChIKey),
    solvent_name, solvent_smiles, log10_x, n_repeats.  Every solute near 25 C (the solute-blind baseline
    averages over them); those outside ``split.csv`` have split "".
    """
    import pandas as pd

    raw = pd.read_csv(DATA_FILE)
    raw = raw[(raw["temperature"] - T_REF_K).abs() <= T_WINDOW_K]
    rows = []
    for r in raw.itertuples(index=False):
        key2, mw2 = _mol_info(r.solute_smiles)
        key1, mw1 = _mol_info(r.solvent_smiles)
        x = mole_fraction(float(r[8]), str(r[10]), mw2, mw1, float(r[12]) if r[12] == r[12] else float("nan"))
        if not (x > 0 and math.isfinite(x)):
            continue
        rows.append((key2, r.solute_name, key1, r.solvent_name.strip(), r.solvent_smiles, math.log10(x)))
    d = pd.DataFrame(rows, columns=["solute", "raw_solute_name", "solvent", "solvent_name", "solvent_smiles",
                                    "log10_x"])
    split = pd.read_csv(SPLIT_FILE)
    split["solute"] = [_mol_info(s)[0] for s in split["solute_smiles"]]
    g = d.groupby(["solute", "solvent"], sort=True).agg(
        log10_x=("log10_x", "mean"), n_repeats=("log10_x", "size"), solvent_name=("solvent_name", "first"),
        solvent_smiles=("solvent_smiles", "first")).reset_index()
    names = d.groupby("solute")["raw_solute_name"].first()
    g = g.merge(split[["solute", "solute_name", "solute_smiles", "split"]], on="solute", how="left")
    g["solute_name"] = g["solute_name"].fillna(g["solute"].map(names))
    g["split"] = g["split"].fillna("")
    return g.sort_values(["solute_name", "solvent_name"]).reset_index(drop=True)


@dataclass(frozen=True)
class Liquid:
    """A solvent of the data set with its HSP and molar volume at 25 C."""

    key: str
    name: str
    cas: str
    hsp: tuple
    vm_cm3_mol: float
    mw_g_mol: float
    origin: str
    sites: tuple  # (H-bond donors, acceptors), RDKit's Lipinski counts
    smiles: str = ""  # as the data set writes it


@lru_cache(maxsize=1)
def liquids() -> dict:
    """InChIKey -> :class:`Liquid` for every solvent of :func:`measurements` with HSP (catalog, else library)."""
    from chemicals.identifiers import search_chemical

    from solvsel.data.catalog import load_catalog
    from solvsel.errors import UnknownNameError

    cat = load_catalog()
    out = {}
    m = measurements()
    for key, grp in m.groupby("solvent"):
        smiles = grp["solvent_smiles"].iloc[0]
        try:
            cas = search_chemical("InChIKey=" + key).CASs
        except ValueError:  # unknown to the library under this key
            try:
                cas = search_chemical(smiles).CASs
            except ValueError:
                continue
        try:
            s = cat.solvent(cas)
        except UnknownNameError:
            continue
        out[key] = Liquid(key, s.name, cas, (float(s.dD), float(s.dP), float(s.dH)), float(s.vm_cm3_mol),
                          float(s.mw_g_mol or _mol_info(smiles)[1]), s.origin, hbond_sites(smiles), smiles)
    return out


@dataclass(frozen=True)
class SoluteInfo:
    """A solute of the split: its structure estimate (or why there is none) and its fusion data."""

    key: str
    name: str
    smiles: str
    split: str
    hsp: tuple | None
    vm_cm3_mol: float | None
    mw_g_mol: float
    refused: str
    mp_C: float | None
    dHfus_kJ_mol: float | None
    dHfus_source: str
    sites: tuple  # (H-bond donors, acceptors), RDKit's Lipinski counts
    uncertainty: dict | None


@lru_cache(maxsize=1)
def solutes() -> dict:
    """InChIKey -> :class:`SoluteInfo` for the 46 solutes of the split (structure estimates computed once)."""
    from solvsel.errors import SolvselError
    from solvsel.science.solubility import fusion_data
    from solvsel.science.structure import estimate, mcgowan_volume

    m = measurements()
    out = {}
    for key, grp in m[m["split"] != ""].groupby("solute"):
        smiles = grp["solute_smiles"].iloc[0]
        hsp = vm = unc = None
        refused = ""
        try:
            e = estimate(smiles, properties=False)
            hsp, unc = (e.dD, e.dP, e.dH), e.uncertainty
            vm = e.vm_cm3_mol or mcgowan_volume(smiles)
        except SolvselError as exc:
            refused = str(exc)
        mw = _mol_info(smiles)[1]
        fus = fusion_data(smiles)
        out[key] = SoluteInfo(key, grp["solute_name"].iloc[0], smiles, grp["split"].iloc[0], hsp, vm, mw, refused,
                              fus.mp_C, fus.dHfus_kJ_mol, fus.dHfus_source, hbond_sites(smiles), unc)
    return out


def hbond_sites(smiles: str) -> tuple:
    """(H-bond donors, acceptors) of a SMILES: RDKit's Lipinski counts (N-H and O-H; N and O)."""
    from rdkit import Chem
    from rdkit.Chem import Lipinski

    mol = Chem.MolFromSmiles(smiles)
    return int(Lipinski.NumHDonors(mol)), int(Lipinski.NumHAcceptors(mol))


def table(split: str | None = None):
    """:func:`measurements` restricted to solvents with HSP and to ``split`` ("dev", "heldout" or None: both
    of the 46 solutes of the split)."""
    m = measurements()
    liq = liquids()
    m = m[m["solvent"].isin(set(liq))]
    return m[m["split"] == split] if split is not None else m[m["split"] != ""]


def spearman(a, b) -> float:
    """Spearman rank correlation (average ranks for ties), numpy only."""
    def ranks(v):
        v = np.asarray(v, dtype=float)
        order = np.argsort(v, kind="mergesort")
        r = np.empty(len(v))
        r[order] = np.arange(len(v), dtype=float)
        for u in np.unique(v):
            idx = v == u
            if idx.sum() > 1:
                r[idx] = r[idx].mean()
        return r

    ra_, rb = ranks(a), ranks(b)
    if ra_.std() == 0 or rb.std() == 0:
        return float("nan")
    return float(np.corrcoef(ra_, rb)[0, 1])
