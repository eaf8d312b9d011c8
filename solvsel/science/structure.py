"""Structure to parameters: Hansen solubility parameters and molar volume from SMILES.

A formulator's solute is often in no table.  This module reads a SMILES string
with RDKit, refuses what a group-contribution model of neutral organic liquids
does not cover (ions, salts and mixtures, metals, radicals), cuts the molecule
into the groups of a method by substructure matching, and sums the group
values.  Three estimates are made where they can be:

* the project's own group-contribution model (``"solvsel-gc"``), a robust
  (Huber) regression on volume-scaled group counts fitted to the HSP datasets
  bundled with the ``chemicals`` library, with a similarity correction,
  validated by nested grouped k-fold cross-validation (parameters in
  ``tables/gc_params.csv``, the training split in
  ``tables/gc_params_training.csv``, the cross-validated errors by chemical
  class in ``tables/gc_params_cv.csv``);
* the published Hoftyzer-Van Krevelen method (``"hoftyzer-van-krevelen"``) with
  the molar volume of Fedors [2]_, [3]_;
* where ``chemicals`` knows the compound, an estimate from its physical
  properties (``"properties"``): total parameter from the enthalpy of
  vaporisation and liquid molar volume, dP from the dipole moment (Beerbower),
  dD from the refractive index (Koenhen & Smolders) [4]_, [5]_.

Every atom must be covered by a group; an atom no group covers makes that
method refuse (its estimate is returned with ``covered=False`` and no numbers),
never a silently wrong number.  The uncertainty given with an estimate is the
cross-validated mean absolute error of the model for the molecule's chemical
class, not a promise.

This module estimates; fitting the own model (training data, nested
cross-validation, refit) is in :mod:`solvsel.science.structure_training`.
RDKit comes with the ``structure`` extra and is imported in one place
(:func:`_rd`): without it an estimate raises
:class:`~solvsel.errors.MissingExtraError` naming the extra.

References
----------
.. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*, 2nd ed.
   CRC Press, 2007. ISBN 978-0-8493-7248-3.
.. [2] Van Krevelen, D. W.; te Nijenhuis, K. *Properties of Polymers*, 4th ed.,
   Elsevier, 2009, ch. 7 (Hoftyzer-Van Krevelen method).
   doi:10.1016/B978-0-08-054819-7.X0001-5
.. [3] Fedors, R. F. A method for estimating both the solubility parameters and
   molar volumes of liquids. Polym. Eng. Sci. 14 (1974) 147-154.
   doi:10.1002/pen.760140211
.. [4] Koenhen, D. M.; Smolders, C. A. The determination of solubility
   parameters of solvents and polymers by means of correlations with other
   physical quantities. J. Appl. Polym. Sci. 19 (1975) 1163-1179.
   doi:10.1002/app.1975.070190423
.. [5] Abraham, M. H.; McGowan, J. C. The use of characteristic volumes to
   measure cavity terms in reversed phase liquid chromatography.
   Chromatographia 23 (1987) 243-246. doi:10.1007/BF02311772
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from types import SimpleNamespace

from ..data.catalog import read_user_text
from ..errors import InputError, MissingDataError, MissingExtraError, OutOfRangeError, TableError

__all__ = [
    "Group",
    "MethodEstimate",
    "Estimate",
    "METHODS",
    "estimate",
    "estimate_many",
    "parse_smiles",
    "hoftyzer_van_krevelen",
    "fedors_volume",
    "properties_estimate",
    "own_model",
    "mcgowan_volume",
    "chemical_class",
    "CLASSES",
]

#: Method names accepted by :func:`estimate` (``method=``).
METHODS = ("solvsel-gc", "hoftyzer-van-krevelen", "properties")

#: Chemical classes used to report errors by class (first match wins, see :func:`chemical_class`).
CLASSES = (
    "hydrocarbons",
    "alcohols",
    "esters",
    "phenols",
    "aldehydes/ketones",
    "acids",
    "amines",
    "halogenated",
    "ethers",
    "multifunctional",
    "other",
)

#: Elements a neutral organic molecule may contain here; anything else (metals,
#: noble gases, ...) is outside every method.
ORGANIC_ELEMENTS = frozenset({"H", "C", "N", "O", "F", "Cl", "Br", "I", "S", "P", "Si", "B"})

R_J_molK = 8.314462618


def _tables_dir() -> Path:
    here = Path(__file__).resolve().parents[1]  # the solvsel package
    for cand in (here / "tables", here.parent / "tables"):
        if cand.is_dir():
            return cand
    raise MissingDataError(f"the bundled tables folder was not found next to {here}")  # pragma: no cover


# --------------------------------------------------------------------------- results


@dataclass(frozen=True)
class Group:
    """One group of a method found in the molecule.

    ``atoms`` holds, for each occurrence, the indices of the heavy atoms it
    covers (RDKit atom order of the canonical SMILES); corrections that cover
    no atom (ring closures) have empty tuples.
    """

    name: str
    count: int
    atoms: tuple[tuple[int, ...], ...] = ()

    def to_dict(self) -> dict:
        return {"name": self.name, "count": self.count, "atoms": [list(a) for a in self.atoms]}


@dataclass(frozen=True)
class MethodEstimate:
    """The estimate of one method; numbers are None where the method does not cover the molecule."""

    method: str
    dD: float | None
    dP: float | None
    dH: float | None
    vm_cm3_mol: float | None
    covered: bool
    groups: tuple[Group, ...] = ()
    uncovered_atoms: tuple[int, ...] = ()
    note: str = ""
    source: str = ""
    neighbours: tuple = ()

    @property
    def hsp(self):
        import numpy as np

        return np.array([self.dD, self.dP, self.dH], dtype=float)

    def to_dict(self) -> dict:
        return {
            "method": self.method,
            "dD": self.dD,
            "dP": self.dP,
            "dH": self.dH,
            "vm": self.vm_cm3_mol,
            "covered": self.covered,
            "groups": [g.to_dict() for g in self.groups],
            "uncovered_atoms": list(self.uncovered_atoms),
            "note": self.note,
            "source": self.source,
            "neighbours": [dict(n) for n in self.neighbours],
        }


@dataclass(frozen=True)
class Estimate:
    """HSP and molar volume estimated from a structure.

    Attributes
    ----------
    smiles : str
        canonical SMILES (RDKit, stereo kept)
    dD, dP, dH : float
        estimated Hansen parameters [MPa^0.5]
    vm_cm3_mol : float or None
        molar volume of the liquid [cm^3/mol] (``vm_method`` says from where)
    method : str
        method that gave dD, dP, dH
    groups : tuple of Group
        groups of that method found in the molecule
    uncovered_atoms : tuple of int
        heavy atoms no group of the chosen method covers (empty when the estimate is made)
    chem_class : str
        chemical class used for the uncertainty (one of :data:`CLASSES`)
    uncertainty : dict
        cross-validated mean absolute error of the method for that class,
        keys dD, dP, dH, ra [MPa^0.5], plus n (compounds in the class)
    others : tuple of MethodEstimate
        the other methods' estimates (covered or not)
    spread : dict
        largest minus smallest value of dD, dP, dH over the covered methods [MPa^0.5]
    notes : tuple of str
        warnings (approximate groups, molecule outside the training range, ...)
    neighbours : tuple of dict
        the most similar training compounds (smiles, cas, similarity, dD, dP,
        dH) when the own model is used
    """

    smiles: str
    dD: float
    dP: float
    dH: float
    vm_cm3_mol: float | None
    vm_method: str
    method: str
    groups: tuple[Group, ...]
    uncovered_atoms: tuple[int, ...]
    chem_class: str
    uncertainty: dict
    others: tuple[MethodEstimate, ...] = ()
    spread: dict = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    mw_g_mol: float | None = None
    formula: str = ""
    neighbours: tuple = ()

    @property
    def hsp(self):
        import numpy as np

        return np.array([self.dD, self.dP, self.dH], dtype=float)

    def to_dict(self) -> dict:
        return {
            "smiles": self.smiles,
            "dD": self.dD,
            "dP": self.dP,
            "dH": self.dH,
            "vm": self.vm_cm3_mol,
            "vm_method": self.vm_method,
            "method": self.method,
            "groups": [g.to_dict() for g in self.groups],
            "uncovered_atoms": list(self.uncovered_atoms),
            "uncertainty": dict(self.uncertainty),
            "chem_class": self.chem_class,
            "others": [o.to_dict() for o in self.others],
            "spread": dict(self.spread),
            "notes": list(self.notes),
            "mw_g_mol": self.mw_g_mol,
            "formula": self.formula,
            "neighbours": [dict(n) for n in self.neighbours],
        }


# --------------------------------------------------------------------------- SMILES


@lru_cache(maxsize=None)
def _rd() -> SimpleNamespace:
    """The parts of RDKit used here, imported in this one place (RDKit comes with the ``structure`` extra).

    Attributes ``Chem``, ``DataStructs``, ``Descriptors``, ``rdMolDescriptors`` and
    ``rdFingerprintGenerator``.  Raises :class:`~solvsel.errors.MissingExtraError` when RDKit
    is not installed.
    """
    try:
        from rdkit import Chem, DataStructs, RDLogger
        from rdkit.Chem import Descriptors, rdFingerprintGenerator, rdMolDescriptors
    except ImportError:
        raise MissingExtraError("structure", "estimating HSP from a structure", "rdkit") from None
    RDLogger.DisableLog("rdApp.*")
    return SimpleNamespace(Chem=Chem, DataStructs=DataStructs, Descriptors=Descriptors,
                           rdMolDescriptors=rdMolDescriptors, rdFingerprintGenerator=rdFingerprintGenerator)


def _rdkit():
    """RDKit's ``Chem`` module (see :func:`_rd`)."""
    return _rd().Chem


_NITRO = None


def parse_smiles(smiles: str):
    """Parse and check one SMILES; return ``(mol, canonical_smiles)``.

    Raises :class:`InputError` for a string RDKit cannot read and
    :class:`OutOfRangeError` for what the HSP methods do not cover: several
    components (salts, mixtures, hydrates), a net charge or separated charges
    (ions, zwitterions; nitro groups and N-oxides are accepted), metals and
    other non-organic elements, radicals, dummy atoms (polymer repeat units).
    Explicit hydrogens, isotope labels, stereo marks and Kekule or aromatic
    input give the same molecule.
    """
    if not isinstance(smiles, str) or not smiles.strip():
        raise InputError(f"expected a non-empty SMILES string, got {smiles!r}", param="smiles", value=smiles,
                         expected="a SMILES string")
    text = smiles.strip()
    if any(c.isspace() for c in text):
        # a SMILES may carry a name after a space; only the first word is the structure
        text = text.split()[0]
    Chem = _rdkit()
    mol = Chem.MolFromSmiles(text)
    if mol is None:
        raise InputError(f"SMILES '{smiles}' could not be read (check brackets, ring-closure digits and valences)",
                         param="smiles", value=smiles, expected="a SMILES string")
    frags = Chem.GetMolFrags(mol)
    if len(frags) > 1:
        raise OutOfRangeError(
            f"SMILES '{smiles}' has {len(frags)} separate components (a salt, hydrate or mixture); "
            "the HSP methods cover one neutral molecule: give the neutral parent compound, and for a mixture "
            "estimate each component and blend them", param="smiles", value=smiles
        )
    if any(a.GetAtomicNum() == 0 for a in mol.GetAtoms()):
        raise OutOfRangeError(
            f"SMILES '{smiles}' has a dummy atom (*): repeat units of polymers and fragments with open "
            "valences are outside the methods; give a whole molecule (for a polymer, an oligomer with end groups)",
            param="smiles", value=smiles)
    bad = sorted({a.GetSymbol() for a in mol.GetAtoms() if a.GetSymbol() not in ORGANIC_ELEMENTS})
    if bad:
        raise OutOfRangeError(
            f"SMILES '{smiles}' contains {', '.join(bad)}: metals, metal complexes and inorganic elements are "
            "outside the HSP group-contribution methods (they cover neutral organic molecules of C, H, N, O, S, "
            "halogens)", param="smiles", value=smiles
        )
    if mol.GetNumAtoms() == 0:
        raise InputError(f"SMILES '{smiles}' holds no atoms", param="smiles", value=smiles)
    net = sum(a.GetFormalCharge() for a in mol.GetAtoms())
    if net != 0:
        raise OutOfRangeError(
            f"SMILES '{smiles}' is an ion (net charge {net:+d}); the HSP methods do not cover ions or ionic "
            "liquids: give the neutral form (acid or base), whose parameters the methods do estimate",
            param="smiles", value=smiles)
    charged = [a.GetIdx() for a in mol.GetAtoms() if a.GetFormalCharge() != 0]
    if charged:
        global _NITRO
        if _NITRO is None:
            _NITRO = Chem.MolFromSmarts("[N+,n+;!$([N+,n+][H])](~[O-])")
        ok = set()
        for m in mol.GetSubstructMatches(_NITRO):
            ok.update(m)
        if set(charged) - ok:
            raise OutOfRangeError(
                f"SMILES '{smiles}' has separated charges (a zwitterion or inner salt); the HSP methods do not "
                "cover ionic species: give an uncharged structure", param="smiles", value=smiles)
    if any(a.GetNumRadicalElectrons() for a in mol.GetAtoms()):
        raise OutOfRangeError(f"SMILES '{smiles}' is a radical; the HSP methods cover closed-shell molecules only",
                              param="smiles", value=smiles)
    for a in mol.GetAtoms():  # isotopes (deuterium, 13C) do not change the group values
        a.SetIsotope(0)
    mol = Chem.RemoveHs(mol)
    canonical = Chem.MolToSmiles(mol)
    # re-read the canonical form so atom indices follow the canonical SMILES
    mol = Chem.MolFromSmiles(canonical)
    return mol, canonical


# --------------------------------------------------------------------------- fragmentation


# Group definitions: (name in the group table, SMARTS, number of leading atoms of
# the match the group owns).  Order matters: each atom goes to the first group
# that claims it.  The SMARTS are ours; the values are the method's.
_FUNCTIONAL = [
    ("-COOH", "[CX3](=[OX1])[OX2H1]", 3),
    ("HCOO-", "[CX3H1](=[OX1])[OX2][#6]", 3),
    ("-COO-", "[CX3](=[OX1])[OX2][#6]", 3),
    ("-CHO", "[CX3H1](=[OX1])", 2),
    (">CO", "[#6X3](=[OX1])", 2),
    ("-CN", "[CX2]#[NX1]", 2),
    ("-NO2", "[N+](=O)[O-]", 3),
    ("-OH", "[OX2H1]", 1),
    ("-O-", "[OX2H0]", 1),
    ("-NH2", "[NX3H2]", 1),
    ("-NH-", "[NX3H1]", 1),
    (">N-", "[NX3H0;!$([N+])]", 1),
    ("-S-", "[SX2H0]", 1),
    ("-F", "[F]", 1),
    ("-Cl", "[Cl]", 1),
    ("-Br", "[Br]", 1),
]
_CARBON = [
    ("-CH3", "[CX4H3]", 1),
    ("-CH2-", "[CX4H2]", 1),
    (">CH-", "[CX4H1]", 1),
    (">C<", "[CX4H0]", 1),
    ("=CH2", "[CX3H2]", 1),
    ("=CH-", "[CX3H1,cH1]", 1),
    ("=C<", "[CX3H0,cH0]", 1),
]
_HVK_DEFS = _FUNCTIONAL + _CARBON

_FEDORS_DEFS = [
    ("-COOH", "[CX3](=[OX1])[OX2H1]", 3),
    ("HCOO-", "[CX3H1](=[OX1])[OX2][#6]", 3),
    ("-COO-", "[CX3](=[OX1])[OX2][#6]", 3),
    ("-CONH2", "[CX3](=[OX1])[NX3H2]", 3),
    ("-CONH-", "[CX3](=[OX1])[NX3H1]", 3),
    ("-CON<", "[CX3](=[OX1])[NX3H0]", 3),
    ("-CHO", "[CX3H1](=[OX1])", 2),
    (">CO", "[#6X3](=[OX1])", 2),
    ("-CN", "[CX2]#[NX1]", 2),
    ("-NO2 (aromatic)", "[N+](=O)([O-])a", 3),
    ("-NO2", "[N+](=O)[O-]", 3),
    ("-OH", "[OX2H1]", 1),
    ("-O-", "[OX2H0,o]", 1),
    ("-NH2", "[NX3H2]", 1),
    ("-NH-", "[NX3H1,nH1]", 1),
    (">N-", "[NX3H0;!$([N+])]", 1),
    ("-N=", "[NX2,nX2]", 1),
    ("-SH", "[SX2H1]", 1),
    ("-S-", "[SX2H0,sX2]", 1),
    ("-F", "[F]", 1),
    ("-Cl", "[Cl]", 1),
    ("-Br", "[Br]", 1),
    ("-I", "[I]", 1),
    ("#CH", "[CX2H1]", 1),
    ("#C-", "[CX2H0]", 1),
] + _CARBON


@lru_cache(maxsize=None)
def _compiled(defs_key: str):
    Chem = _rdkit()
    defs = {"hvk": _HVK_DEFS, "fedors": _FEDORS_DEFS}[defs_key]
    out = []
    for name, smarts, n in defs:
        patt = Chem.MolFromSmarts(smarts)
        if patt is None:  # pragma: no cover - a bug in the definitions above
            raise RuntimeError(f"bad SMARTS for group {name}: {smarts}")
        out.append((name, patt, n))
    return tuple(out)


def _claim(mol, defs, claimed: set, found: dict) -> None:
    for name, patt, n in defs:
        for match in mol.GetSubstructMatches(patt, uniquify=True, maxMatches=10000):
            owned = tuple(match[:n])
            if any(a in claimed for a in owned):
                continue
            claimed.update(owned)
            found.setdefault(name, []).append(owned)


def _benzene_rings(mol, claimed: set, found: dict) -> set:
    """Hoftyzer-Van Krevelen phenyl / phenylene: isolated benzene rings with <= 2 substituents."""
    rings = mol.GetRingInfo()
    used_rings = set()
    for k, ring in enumerate(rings.AtomRings()):
        if len(ring) != 6:
            continue
        atoms = [mol.GetAtomWithIdx(i) for i in ring]
        if not all(a.GetSymbol() == "C" and a.GetIsAromatic() and rings.NumAtomRings(a.GetIdx()) == 1 for a in atoms):
            continue
        if any(i in claimed for i in ring):
            continue
        subs = sum(1 for a in atoms for nb in a.GetNeighbors() if nb.GetIdx() not in ring)
        if subs <= 1:
            name = "phenyl"
        elif subs == 2:
            name = "phenylene"
        else:
            continue
        claimed.update(ring)
        found.setdefault(name, []).append(tuple(ring))
        used_rings.add(k)
    return used_rings


def _groups_tuple(found: dict) -> tuple[Group, ...]:
    return tuple(Group(name, len(occ), tuple(tuple(int(i) for i in o) for o in occ)) for name, occ in found.items())


@lru_cache(maxsize=None)
def _read_group_table(name: str, value_columns: tuple[str, ...]) -> dict:
    path = _tables_dir() / f"{name}.csv"
    out = {}
    with open(path, newline="", encoding="utf-8") as fh:
        for row_no, row in enumerate(csv.DictReader(fh), start=2):
            values = {}
            for col in value_columns:
                try:
                    values[col] = float(row[col])
                except (KeyError, TypeError, ValueError):
                    raise TableError(path, f"expected a number, got {row.get(col)!r}", row=row_no, column=col) from None
            values["source"] = row.get("source", "")
            out[row["group"]] = values
    return out


def _hvk_table() -> dict:
    return _read_group_table("groups_hvk", ("Fd_J05_cm15_mol", "Fp_J05_cm15_mol", "Eh_J_mol"))


def _fedors_table() -> dict:
    return _read_group_table("groups_fedors", ("vm_cm3_mol", "ecoh_J_mol"))


def _uncovered(mol, claimed: set) -> tuple[int, ...]:
    return tuple(a.GetIdx() for a in mol.GetAtoms() if a.GetIdx() not in claimed)


def _as_mol(smiles_or_mol):
    if isinstance(smiles_or_mol, str):
        return parse_smiles(smiles_or_mol)[0]
    return smiles_or_mol


def fedors_volume(smiles_or_mol) -> tuple[float | None, float | None, tuple[Group, ...], tuple[int, ...]]:
    r"""Molar volume and cohesive energy of a liquid by Fedors' group contributions.

    .. math::
        V = \sum_i n_i \Delta v_i, \qquad E_{coh} = \sum_i n_i \Delta e_i,
        \qquad \delta_t = \sqrt{E_{coh}/V}

    with a ring-closure term per ring and a term per conjugated double bond in
    a ring (Fedors 1974 [3]_).

    Parameters
    ----------
    smiles_or_mol : str or rdkit Mol
        the molecule

    Returns
    -------
    vm : float or None
        molar volume [cm^3/mol] (None if an atom is not covered)
    ecoh : float or None
        cohesive energy [J/mol]
    groups : tuple of Group
    uncovered : tuple of int
        heavy atoms no Fedors group covers

    Examples
    --------
    Benzene: 6 (=CH-) 13.5 + ring 16.0 + 3 ring double bonds (-2.2) = 90.4
    cm3/mol (measured 89.4 at 25 C, Hansen 2007 Appendix A).

    >>> round(fedors_volume("c1ccccc1")[0], 1)
    90.4
    """
    mol = _as_mol(smiles_or_mol)
    claimed: set = set()
    found: dict = {}
    _claim(mol, _compiled("fedors"), claimed, found)
    rings = mol.GetRingInfo().AtomRings()
    for ring in rings:
        found.setdefault("ring (5 or more atoms)" if len(ring) >= 5 else "ring (3 or 4 atoms)", []).append(())
    n_db = _ring_conjugated_double_bonds(mol)
    if n_db:
        found["ring double bond"] = [()] * n_db
    uncovered = _uncovered(mol, claimed)
    groups = _groups_tuple(found)
    if uncovered:
        return None, None, groups, uncovered
    table = _fedors_table()
    vm = sum(table[g.name]["vm_cm3_mol"] * g.count for g in groups)
    ecoh = sum(table[g.name]["ecoh_J_mol"] * g.count for g in groups)
    return vm, ecoh, groups, uncovered


def _ring_conjugated_double_bonds(mol) -> int:
    Chem = _rdkit()
    kek = Chem.Mol(mol)
    try:
        Chem.Kekulize(kek, clearAromaticFlags=True)
    except Chem.KekulizeException:  # pragma: no cover - RDKit parsed it, so it kekulises
        return 0
    Chem.SetConjugation(kek)
    n = 0
    for b in kek.GetBonds():
        if b.GetBondType() == Chem.BondType.DOUBLE and b.IsInRing() and b.GetIsConjugated():
            n += 1
    return n


def hoftyzer_van_krevelen(smiles_or_mol) -> MethodEstimate:
    r"""Hansen parameters by the Hoftyzer-Van Krevelen group method, with Fedors' volume.

    .. math::
        \delta_D = \frac{\sum F_{di}}{V}, \qquad
        \delta_P = \frac{\sqrt{\sum F_{pi}^2}}{V}, \qquad
        \delta_H = \sqrt{\frac{\sum E_{hi}}{V}}

    (Van Krevelen & te Nijenhuis 2009 [2]_; V by Fedors [3]_).  The book's
    symmetry factors on the polar term are not applied (planes of symmetry are
    not found from the graph), so dP of symmetric polar molecules comes out high.
    Group values are as recalled (source kind ``memory``); the benchmark shows
    how they hold on the published datasets.

    Parameters
    ----------
    smiles_or_mol : str or rdkit Mol

    Returns
    -------
    MethodEstimate
        dD, dP, dH [MPa^0.5], vm [cm^3/mol]; ``covered`` False (and numbers
        None) when an atom has no group of the method

    Examples
    --------
    Toluene, hand-counted: phenyl (1430, 110, 0) + CH3 (420, 0, 0); Fedors V =
    71.4 + 33.5 = 104.9 cm3/mol, so dD = 1850/104.9 = 17.6 and dP = 110/104.9
    = 1.0 (tabulated 18.0, 1.4, 2.0, Hansen 2007 Appendix A).

    >>> e = hoftyzer_van_krevelen("Cc1ccccc1")
    >>> round(e.dD, 1), round(e.dP, 1), round(e.dH, 1), round(e.vm_cm3_mol, 1)
    (17.6, 1.0, 0.0, 104.9)
    """
    mol = _as_mol(smiles_or_mol)
    claimed: set = set()
    found: dict = {}
    used_rings = _benzene_rings(mol, claimed, found)
    _claim(mol, _compiled("hvk"), claimed, found)
    n_rings = mol.GetRingInfo().NumRings() - len(used_rings)
    if n_rings:
        found["ring"] = [()] * n_rings
    groups = _groups_tuple(found)
    uncovered = _uncovered(mol, claimed)
    source = "hvk_memory;fedors1974_memory"
    if uncovered:
        return MethodEstimate("hoftyzer-van-krevelen", None, None, None, None, False, groups, uncovered,
                              "atoms without a group of the method", source)
    vm, _, _, fed_unc = fedors_volume(mol)
    if vm is None or vm <= 0:
        return MethodEstimate("hoftyzer-van-krevelen", None, None, None, None, False, groups, fed_unc,
                              "no Fedors molar volume for this molecule", source)
    table = _hvk_table()
    fd = sum(table[g.name]["Fd_J05_cm15_mol"] * g.count for g in groups)
    fp2 = sum(table[g.name]["Fp_J05_cm15_mol"] ** 2 * g.count for g in groups)
    eh = sum(table[g.name]["Eh_J_mol"] * g.count for g in groups)
    notes = []
    names = {g.name for g in groups}
    if ({"=CH-", "=C<"} & names) and any(mol.GetAtomWithIdx(i).GetIsAromatic() for g in groups
                                          if g.name in ("=CH-", "=C<") for o in g.atoms for i in o):
        notes.append("aromatic atoms outside a phenyl or phenylene ring counted as =CH- / =C< (approximation)")
    return MethodEstimate(
        "hoftyzer-van-krevelen", fd / vm, math.sqrt(fp2) / vm, math.sqrt(max(eh, 0.0) / vm), vm, True,
        groups, (), "; ".join(notes), source,
    )




# --------------------------------------------------------------------------- the own model

# Our own fragment scheme.  First-order terms ("atom"): every heavy atom gets
# exactly one type, the first whose SMARTS claims it (the first ``owned`` atoms
# of a match).  Second-order terms ("match"): the number of matches of a SMARTS
# (overlaps allowed), for interactions the first-order types miss.  "special"
# terms are computed in code (rings, H-bond donors).
OWN_TERMS = [
    ("acid C(=O)OH", "[CX3](=O)[OX2H1]", "atom", 3),
    ("lactone C(=O)O", "[CX3;R](=O)[OX2;R][#6]", "atom", 3),
    ("ester C(=O)O", "[CX3](=O)[OX2][#6]", "atom", 3),
    ("carbonate OC(=O)O", "[OX2][CX3](=O)[OX2]", "atom", 4),
    ("amide C(=O)NH2", "[CX3](=O)[NX3H2]", "atom", 3),
    ("amide C(=O)NH", "[CX3](=O)[NX3H1]", "atom", 3),
    ("amide C(=O)N", "[CX3](=O)[NX3H0]", "atom", 3),
    ("aldehyde CHO", "[CX3H1](=O)[#6]", "atom", 2),
    ("formyl CHO", "[CX3H1](=O)", "atom", 2),
    ("aryl ketone C=O", "[CX3](=O)([#6])a", "atom", 2),
    ("ring ketone C=O", "[CX3;R](=O)", "atom", 2),
    ("ketone C=O", "[CX3](=O)", "atom", 2),
    ("nitrile C#N", "[CX2]#[NX1]", "atom", 2),
    ("nitro NO2", "[N+](=O)[O-]", "atom", 3),
    ("N-oxide", "[N+,n+][O-]", "atom", 2),
    ("phenol OH", "[OX2H1]c", "atom", 1),
    ("primary OH", "[OX2H1][CH2]", "atom", 1),
    ("secondary OH", "[OX2H1][CH1]", "atom", 1),
    ("tertiary OH", "[OX2H1][CX4H0]", "atom", 1),
    ("other OH", "[OX2H1]", "atom", 1),
    ("aryl ether O", "[OX2H0](a)", "atom", 1),
    ("ring ether O", "[OX2H0;R]", "atom", 1),
    ("ether O", "[OX2H0]", "atom", 1),
    ("aromatic o", "[o]", "atom", 1),
    ("aryl NH2", "[NX3H2]a", "atom", 1),
    ("NH2", "[NX3H2]", "atom", 1),
    ("aryl NH", "[NX3H1]a", "atom", 1),
    ("NH", "[NX3H1]", "atom", 1),
    ("aryl N", "[NX3H0]a", "atom", 1),
    ("N", "[NX3H0]", "atom", 1),
    ("aromatic nH", "[nH]", "atom", 1),
    ("aromatic n", "[n]", "atom", 1),
    ("imine N=", "[NX2]", "atom", 1),
    ("thiol SH", "[SX2H1]", "atom", 1),
    ("sulfide S", "[SX2H0]", "atom", 1),
    ("aromatic s", "[s]", "atom", 1),
    ("thione C=S", "[CX3]=[SX1]", "atom", 2),
    ("sulfoxide S=O", "[SX3](=O)", "atom", 2),
    ("sulfone SO2", "[SX4](=O)=O", "atom", 3),
    ("phosphorus P", "[P]", "atom", 1),
    ("silicon Si", "[Si]", "atom", 1),
    ("boron B", "[B]", "atom", 1),
    ("F", "[F]", "atom", 1),
    ("aryl Cl", "[Cl]a", "atom", 1),
    ("Cl", "[Cl]", "atom", 1),
    ("Br", "[Br]", "atom", 1),
    ("I", "[I]", "atom", 1),
    ("aryl CH3", "[CH3]a", "atom", 1),
    ("hetero CH3", "[CH3][!#6]", "atom", 1),
    ("CH3", "[CH3]", "atom", 1),
    ("ring CH2", "[CH2;R]", "atom", 1),
    ("CH2", "[CX4H2]", "atom", 1),
    ("ring CH", "[CX4H1;R]", "atom", 1),
    ("CH", "[CX4H1]", "atom", 1),
    ("ring C", "[CX4H0;R]", "atom", 1),
    ("C", "[CX4H0]", "atom", 1),
    ("methane CH4", "[CX4H4]", "atom", 1),
    ("=CH2", "[CX3H2]", "atom", 1),
    ("=CH", "[CX3H1]", "atom", 1),
    ("=C", "[CX3H0]", "atom", 1),
    ("aromatic cH", "[cH1]", "atom", 1),
    ("fused aromatic c", "[cH0;R2,R3]", "atom", 1),
    ("aromatic c", "[cH0]", "atom", 1),
    ("alkyne C", "[CX2]", "atom", 1),
    ("ortho OH..C=O", "[OX2H1]c:c[CX3]=O", "match", 0),
    ("vicinal OH", "[OX2H1][#6][#6][OX2H1]", "match", 0),
    ("CX3 halo", "[CX4]([F,Cl,Br])([F,Cl,Br])[F,Cl,Br]", "match", 0),
    ("CX2 halo", "[CX4;!$(C([F,Cl,Br])([F,Cl,Br])[F,Cl,Br])]([F,Cl,Br])[F,Cl,Br]", "match", 0),
    ("C=C-C=O", "C=C[CX3]=O", "match", 0),
    ("aromatic rings", "", "special", 0),
    ("rings", "", "special", 0),
    ("H-bond donors", "", "special", 0),
    # "polar" terms enter the dP fit only: group dipoles add as vectors, so
    # several polar groups give less than their sum, and symmetric ones cancel
    # (hexafluorobenzene, tetranitromethane); the counts are of heteroatoms.
    ("symmetric heteroatoms", "", "polar", 0),
    ("heteroatom pairs", "", "polar", 0),
    ("heteroatoms squared", "", "polar", 0),
    ("sqrt heteroatoms", "", "polar", 0),
]

#: McGowan characteristic atom volumes [cm^3/mol] and the bond term (Abraham & McGowan 1987 [5]_).
MCGOWAN_ATOM = {"C": 16.35, "H": 8.71, "O": 12.43, "N": 14.39, "F": 10.48, "Cl": 20.95, "Br": 26.21,
                "I": 34.53, "S": 22.91, "P": 24.87, "Si": 26.83, "B": 18.32}
MCGOWAN_BOND = 6.56


def mcgowan_volume(smiles_or_mol) -> float:
    r"""McGowan characteristic volume of a molecule.

    .. math:: V_x = \sum_{atoms} v_i - 6.56 \, N_{bonds}

    (all atoms and bonds, hydrogens included; Abraham & McGowan 1987 [5]_).
    The own model uses it as the size of the molecule.

    Returns
    -------
    float
        characteristic volume [cm^3/mol]

    Examples
    --------
    Ethanol C2H6O: 2(16.35) + 6(8.71) + 12.43 - 8(6.56) = 44.91 cm3/mol
    (Abraham & McGowan tabulate 0.4491 in units of 100 cm3/mol).

    >>> round(mcgowan_volume("CCO"), 2)
    44.91
    """
    Chem = _rdkit()
    mol = Chem.AddHs(_as_mol(smiles_or_mol))
    return sum(MCGOWAN_ATOM[a.GetSymbol()] for a in mol.GetAtoms()) - MCGOWAN_BOND * mol.GetNumBonds()


@lru_cache(maxsize=None)
def _own_compiled(terms: tuple):
    Chem = _rdkit()
    out = []
    for name, smarts, kind, owned in terms:
        patt = Chem.MolFromSmarts(smarts) if smarts else None
        if kind in ("atom", "match") and patt is None:
            raise InputError(f"own-model term '{name}': SMARTS '{smarts}' could not be read", param="params")
        out.append((name, patt, kind, int(owned)))
    return tuple(out)


def own_features(mol, terms=None):
    """Counts of the own scheme's terms in ``mol``.

    Returns ``(counts, vx, groups, uncovered)``: counts per term (numpy array
    in the order of ``terms``), the McGowan volume [cm^3/mol], the groups found
    and the heavy atoms no first-order term covers.
    """
    import numpy as np

    rdMolDescriptors = _rd().rdMolDescriptors
    terms = tuple(tuple(t) for t in (terms or OWN_TERMS))
    comp = _own_compiled(terms)
    claimed: set = set()
    counts = np.zeros(len(comp))
    found: dict = {}
    hetero = None
    for i, (name, patt, kind, owned) in enumerate(comp):
        if kind == "atom":
            for match in mol.GetSubstructMatches(patt, uniquify=True, maxMatches=10000):
                o = tuple(match[:owned])
                if any(a in claimed for a in o):
                    continue
                claimed.update(o)
                counts[i] += 1
                found.setdefault(name, []).append(o)
        elif kind == "match":
            ms = mol.GetSubstructMatches(patt, uniquify=True, maxMatches=10000)
            counts[i] = len(ms)
            if ms:
                found[name] = list(ms)
        elif kind == "polar":
            if hetero is None:
                hetero = _hetero_counts(mol)
            counts[i] = hetero[name]
        else:
            if name == "aromatic rings":
                counts[i] = rdMolDescriptors.CalcNumAromaticRings(mol)
            elif name == "rings":
                counts[i] = rdMolDescriptors.CalcNumRings(mol)
            elif name == "H-bond donors":
                counts[i] = rdMolDescriptors.CalcNumHBD(mol)
            else:
                raise InputError(f"own-model term '{name}': unknown special term", param="params")
            if counts[i]:
                found[name] = [()] * int(counts[i])
    return counts, mcgowan_volume(mol), _groups_tuple(found), _uncovered(mol, claimed)


def _hetero_counts(mol) -> dict:
    """Counts behind the "polar" terms: heteroatoms, and those with a symmetry-equivalent twin."""
    from collections import Counter

    Chem = _rdkit()
    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False))
    het = [a.GetIdx() for a in mol.GetAtoms() if a.GetSymbol() != "C"]
    by_class = Counter(ranks[i] for i in het)
    n = len(het)
    return {
        "symmetric heteroatoms": float(sum(v for v in by_class.values() if v >= 2)),
        "heteroatom pairs": float(max(n - 1, 0)),
        "heteroatoms squared": float(n * n),
        "sqrt heteroatoms": math.sqrt(n),
    }


def own_design(counts, vx):
    """Design row(s) of the own model: counts per 100 cm^3/mol of McGowan volume, then 100/Vx.

    Group contributions to an intensive property act per unit volume (the
    Hoftyzer-Van Krevelen form dD = sum F / V); scaling the counts by the size
    of the molecule lets a linear model express that.
    """
    import numpy as np

    counts = np.atleast_2d(np.asarray(counts, dtype=float))
    vx = np.atleast_1d(np.asarray(vx, dtype=float))[:, None]
    return np.hstack([counts * (100.0 / vx), 100.0 / vx])


# --------------------------------------------------------------------------- second estimate from properties

KOENHEN_SMOLDERS = (9.55, -5.55)  # dD [(cal/cm3)^0.5] = 9.55 nD - 5.55 (Koenhen & Smolders 1975)
CAL05_TO_MPA05 = math.sqrt(4.184)
BEERBOWER_DP = 37.4  # dP [MPa^0.5] = 37.4 mu [D] / V^0.5 [cm3/mol] (Hansen 2007, ch. 1)


def _lookup_cas(mol, full: bool = False) -> tuple[str | None, bool]:
    """CAS number of ``mol`` in the main ``chemicals`` databank by InChIKey: ``(cas or None, exact)``.

    When the exact key is not there, the key of the structure without stereo
    is tried (``exact`` False): the library often lists only the isomer
    mixture or the unspecified compound (citral for geranial).  Only the part
    of the databank loaded by default is searched unless ``full`` (the whole
    databank takes about 1.3 s to load, once a process; then only when the
    default part finds nothing).
    """
    Chem = _rdkit()
    from chemicals.identifiers import pubchem_db

    flat = Chem.Mol(mol)
    Chem.RemoveStereochemistry(flat)
    keys = []
    for m, exact in ((mol, True), (flat, False)):
        try:
            key = Chem.MolToInchiKey(m)
        except (ValueError, RuntimeError):  # pragma: no cover - RDKit's InChI layer refused the molecule
            continue
        if key:
            keys.append((key, exact))
    for autoload in (False, True) if full else (False,):
        for key, exact in keys:
            hit = pubchem_db.search_InChI_key(key, autoload=autoload)
            if hit:
                return hit.CASs, exact
    return None, True


STEREO_FREE_NOTE = "matched to the library without stereo: its data may be for another isomer or the mixture"


def _not_found_note(full: bool) -> str:
    if full:
        return "compound not in the chemicals library"
    return "compound not in the part of the chemicals library searched by default (a full search finds more, slower)"


def liquid_molar_volume(cas: str, T: float = 298.15) -> tuple[float | None, str]:
    """Liquid molar volume [cm^3/mol] at ``T`` [K] from ``chemicals``, with the route used.

    DIPPR-105 coefficients of Perry's handbook where the library has them, else
    the COSTALD correlation on the library's critical constants.
    """
    from chemicals import volume

    volume._load_rho_data()
    df = volume.rho_data_Perry_8E_105_l
    if cas in df.index:
        r = df.loc[cas]
        if r["Tmin"] <= T <= r["Tmax"]:
            from chemicals.dippr import EQ105

            return 1e6 / EQ105(T, r["C1"], r["C2"], r["C3"], r["C4"]), "DIPPR-105 (Perry's handbook, via chemicals)"
    from chemicals.acentric import omega
    from chemicals.critical import Tc, Vc

    tc, vc, w = Tc(cas), Vc(cas), omega(cas)
    if tc and vc and w is not None and T < tc:
        return volume.COSTALD(T, tc, vc, w) * 1e6, "COSTALD on critical constants (via chemicals)"
    return None, ""


def properties_estimate(smiles_or_mol, cas: str | None = None, full_lookup: bool = False) -> MethodEstimate:
    r"""Hansen parameters from measured physical properties in the ``chemicals`` library.

    .. math::
        \delta_t = \sqrt{(\Delta H_{vap} - RT)/V_m}, \quad
        \delta_D = 2.045 (9.55 n_D - 5.55), \quad
        \delta_P = 37.4 \mu / \sqrt{V_m}, \quad
        \delta_H = \sqrt{\delta_t^2 - \delta_D^2 - \delta_P^2}

    at 25 C: enthalpy of vaporisation at 298 K (CRC, else Watson from the
    normal boiling point), liquid molar volume (:func:`liquid_molar_volume`),
    refractive index (Koenhen & Smolders [4]_; the factor converts
    (cal/cm3)^0.5 to MPa^0.5) and dipole moment (Beerbower, Hansen 2007 [1]_).
    Independent of any group method; ``covered`` is False when a property is missing.

    Parameters
    ----------
    smiles_or_mol : str or rdkit Mol
    cas : str, optional
        CAS number, if known (else looked up by InChIKey)
    full_lookup : bool
        search the whole databank of ``chemicals``, not only its default part (slower)

    Examples
    --------
    Ethanol from the library's data (n 1.3611, dipole 1.44 D, Hvap 42.32 kJ/mol,
    Vm 58.6 cm3/mol); tabulated 15.8, 8.8, 19.4 (Hansen 2007).  The gas-phase
    dipole makes dP low, as Beerbower's rule often does for small polar liquids:

    >>> e = properties_estimate("CCO")
    >>> [round(x, 1) for x in (e.dD, e.dP, e.dH)]
    [15.2, 7.0, 20.0]
    """
    mol = _as_mol(smiles_or_mol)
    name = "properties"
    src = "chemicals_lib;koenhen1975_memory;hansen2007"
    exact = True
    if not cas:
        cas, exact = _lookup_cas(mol, full_lookup)
    if not cas:
        return MethodEstimate(name, None, None, None, None, False, note=_not_found_note(full_lookup), source=src)
    from chemicals import phase_change
    from chemicals.dipole import dipole_moment
    from chemicals.refractivity import RI

    T = 298.15
    missing = []
    vm, vm_route = liquid_molar_volume(cas, T)
    if vm is None:
        missing.append("liquid molar volume")
    hvap = None
    crc = phase_change.Hvap_data_CRC
    if cas in crc.index and crc.loc[cas, "Hvap298"] == crc.loc[cas, "Hvap298"]:
        hvap = float(crc.loc[cas, "Hvap298"])
    else:
        from chemicals.critical import Tc

        tc = Tc(cas)
        if cas in crc.index and tc and crc.loc[cas, "HvapTb"] == crc.loc[cas, "HvapTb"]:
            tb = float(crc.loc[cas, "Tb"])
            if tb < tc and T < tc:
                hvap = phase_change.Watson(T, float(crc.loc[cas, "HvapTb"]), tb, tc)
    if hvap is None:
        missing.append("enthalpy of vaporisation")
    n = RI(cas)
    n = n[0] if isinstance(n, tuple) else n
    if not n:
        missing.append("refractive index")
    mu = dipole_moment(cas)
    if mu is None:
        missing.append("dipole moment")
    if missing:
        return MethodEstimate(name, None, None, None, vm, False,
                              note=f"CAS {cas}: the library lacks " + ", ".join(missing), source=src)
    dt2 = (hvap - R_J_molK * T) / vm
    dD = (KOENHEN_SMOLDERS[0] * n + KOENHEN_SMOLDERS[1]) * CAL05_TO_MPA05
    dP = BEERBOWER_DP * mu / math.sqrt(vm)
    rest = dt2 - dD * dD - dP * dP
    note = f"CAS {cas}; Vm {vm_route}" + ("" if exact else f"; {STEREO_FREE_NOTE}")
    if rest < 0:
        note += "; total parameter below dD and dP: dH set to 0"
    return MethodEstimate(name, dD, dP, math.sqrt(max(rest, 0.0)), vm, True, note=note, source=src)


# --------------------------------------------------------------------------- classes

_CLASS_SMARTS = None


def chemical_class(smiles_or_mol) -> str:
    """Chemical class of a molecule, for reporting errors by class.

    ``hydrocarbons`` (C and H only); ``halogenated`` (C, H and halogens only);
    one of ``alcohols``, ``phenols``, ``esters``, ``aldehydes/ketones``,
    ``acids``, ``amines``, ``ethers`` when that is the only functional family
    (halogens count as one); ``multifunctional`` when two or more families are
    present; ``other`` for the rest (nitriles, amides, nitro, sulfur, ...).

    >>> chemical_class("CC(C)=CCCC(C)=CC=O"), chemical_class("Cc1ccc(C(C)C)c(O)c1")
    ('aldehydes/ketones', 'phenols')
    """
    global _CLASS_SMARTS
    Chem = _rdkit()
    mol = _as_mol(smiles_or_mol)
    if _CLASS_SMARTS is None:
        _CLASS_SMARTS = {
            "acids": Chem.MolFromSmarts("[CX3](=O)[OX2H1]"),
            "esters": Chem.MolFromSmarts("[CX3](=O)[OX2][#6]"),
            "aldehydes/ketones": Chem.MolFromSmarts("[CX3;$([CX3H1](=O)[#6]),$([CX3](=O)([#6])[#6])]=O"),
            "phenols": Chem.MolFromSmarts("[OX2H1]c"),
            "alcohols": Chem.MolFromSmarts("[OX2H1][CX4,CX3;!$(C=O)]"),
            "amines": Chem.MolFromSmarts("[NX3;!$(N-C=[O,S]);!$(N-[S,P]=O);!$([N+])]"),
            "ethers": Chem.MolFromSmarts("[OX2H0;!$(O-C=O)]([#6])[#6]"),
            "halogenated": Chem.MolFromSmarts("[F,Cl,Br,I]"),
        }
    elements = {a.GetSymbol() for a in mol.GetAtoms()}
    if elements <= {"C"}:
        return "hydrocarbons"
    fams = [name for name, patt in _CLASS_SMARTS.items() if mol.HasSubstructMatch(patt)]
    # heteroatoms not explained by any family make the molecule "other"
    explained = set()
    for name in fams:
        for m in mol.GetSubstructMatches(_CLASS_SMARTS[name]):
            explained.update(m)
    hetero = {a.GetIdx() for a in mol.GetAtoms() if a.GetSymbol() != "C"}
    if hetero - explained:
        return "multifunctional" if len(fams) >= 2 else "other"
    if len(fams) == 1:
        return fams[0]
    return "multifunctional" if fams else "other"


# --------------------------------------------------------------------------- own model parameters

OWN_METHOD = "solvsel-gc"
_PARAM_COLUMNS = ["term", "kind", "smarts", "owned", "coef_dD", "coef_dP", "coef_dH", "source"]
_U = "_MPa05"  # unit suffix of HSP columns in the training and CV tables
_BUNDLED_PARAMS = "gc_params.csv"


def _sibling(path: Path, what: str) -> Path:
    return path.with_name(f"{path.stem}_{what}.csv")


@dataclass(frozen=True)
class OwnParams:
    """Fitted parameters of the own model (one coefficient per term and parameter)."""

    path: str
    terms: tuple  # (name, smarts, kind, owned)
    coef: object  # ndarray (n_terms + 1, 3): terms then the 100/Vx size term
    intercept: object  # ndarray (3,)
    square: tuple  # per parameter: fitted as its square?
    cv: dict  # class -> {"n", "mae_dD", ..., "q90_dD", ...}
    source: str
    settings: object = None  # FitSettings of the final fit (kernel power and penalty used at estimate time)
    fold_settings: tuple = ()  # FitSettings chosen in each outer fold of the nested CV


@lru_cache(maxsize=8)
def load_params(path=None) -> OwnParams:
    """Read the own model's parameters (bundled ``tables/gc_params.csv`` by default).

    The cross-validated errors by class are read from ``<stem>_cv.csv`` beside it.
    A malformed file raises :class:`TableError` naming the row and column.
    """
    import numpy as np

    p = Path(path) if path else _tables_dir() / _BUNDLED_PARAMS
    if not p.is_file():
        raise InputError(f"file '{p}' not found", param="params", value=str(p),
                         expected="a parameter table from a refit")
    terms, coefs, intercept, square, size, srcs = [], [], None, (False, False, False), None, set()
    meta = {}
    reader = csv.DictReader(io.StringIO(read_user_text(p, param="params"), newline=""))
    missing = [c for c in _PARAM_COLUMNS if c not in (reader.fieldnames or [])]
    if missing:
        raise TableError(p, f"missing columns {', '.join(missing)} (expected {', '.join(_PARAM_COLUMNS)})",
                         param="params")
    for row_no, row in enumerate(reader, start=2):
        try:
            vals = np.array([float(row[c]) for c in ("coef_dD", "coef_dP", "coef_dH")])
        except ValueError:
            raise TableError(p, "coef_dD, coef_dP, coef_dH must be numbers", row=row_no, column="coef_dD",
                             param="params") from None
        kind = row["kind"]
        srcs.update(s for s in (row.get("source") or "").split(";") if s)
        if kind in ("atom", "match", "special", "polar"):
            try:
                owned = int(row["owned"] or 0)
            except ValueError:
                raise TableError(p, "expected an integer", row=row_no, column="owned", param="params") from None
            terms.append((row["term"], row["smarts"], kind, owned))
            coefs.append(vals)
        elif kind == "size":
            size = vals
        elif kind == "intercept":
            intercept = vals
        elif kind == "transform":
            square = tuple(bool(v) for v in vals)
        elif kind == "meta":
            meta[row["term"]] = vals
        else:
            raise TableError(p, f"unknown kind '{kind}' (atom, match, special, polar, size, intercept, transform, "
                             "meta)",
                             row=row_no, column="kind", param="params")
    if intercept is None or size is None or not terms:
        raise TableError(p, "needs term rows, one 'size' row and one 'intercept' row", param="params")
    cv = {}
    cvp = _sibling(p, "cv")
    if cvp.is_file():
        with open(cvp, newline="", encoding="utf-8") as fh:
            for row in csv.DictReader(fh):
                if row.get("method") != OWN_METHOD and row.get("method") is not None:
                    cv.setdefault(("method", row["method"]), {})[row["class"]] = _cv_row(row)
                else:
                    cv[row["class"]] = _cv_row(row)
    _own_compiled(tuple(terms))  # fail early on a bad SMARTS
    settings = FitSettings.from_rows(dict(meta, square=square))
    folds = []
    while f"fold {len(folds)} huber epsilon" in meta:
        k = len(folds)
        folds.append(FitSettings.from_rows({n: meta[f"fold {k} {n}"] for n in FitSettings.ROWS
                                            if f"fold {k} {n}" in meta}))
    return OwnParams(str(p), tuple(terms), np.vstack(coefs + [size]), intercept, square, cv, ";".join(sorted(srcs)),
                     settings, tuple(folds))


@lru_cache(maxsize=8)
def _neighbour_data(params_path: str):
    """Fingerprints, dual coefficients and labels of the fitted training compounds of a parameter table."""
    import numpy as np

    tp = _sibling(Path(params_path), "training")
    if not tp.is_file():
        return None
    Chem = _rdkit()
    fps, res, info = [], [], []
    with open(tp, newline="", encoding="utf-8") as fh:
        for row in csv.DictReader(fh):
            if row.get("fitted") != "yes" or not row.get("dual_dD" + _U):
                continue
            mol = Chem.MolFromSmiles(row["smiles"])
            if mol is None:
                continue
            fps.append(fingerprint(mol))
            res.append([float(row[f"dual_{k}{_U}"]) for k in ("dD", "dP", "dH")])
            info.append((row["smiles"], row["cas"].split(";")[0],
                         *(float(row[f"{k}{_U}"]) for k in ("dD", "dP", "dH")), row["key"]))
    if not fps:
        return None
    return tuple([f[k] for f in fps] for k in range(3)), np.array(res), tuple(info)


def _cv_row(row) -> dict:
    out = {"n": int(float(row["n"]))}
    for k, v in row.items():
        if k.startswith(("mae_", "q90_")):
            out[k.removesuffix(_U)] = float(v) if v not in ("", None) else None
    return out


def own_model(smiles_or_mol, params=None, neighbours_on: bool = True) -> MethodEstimate:
    r"""The project's own group-contribution estimate (``solvsel-gc``).

    .. math::
        y = b + \sum_i c_i \frac{100\, n_i}{V_x} + c_V \frac{100}{V_x}

    with :math:`n_i` the counts of the scheme's terms, :math:`V_x` the McGowan
    volume [cm^3/mol]; y is dD, dP, or the square of dH (see the ``transform``
    row of the parameter table).  Coefficients are fitted by Huber regression
    (:func:`solvsel.science.structure_training.refit`), with settings chosen by cross-validation
    (:func:`~solvsel.science.structure_training.select_settings`).  The fitted residuals of the most similar training
    compounds are then added through a kernel ridge correction
    (:func:`kernel_correction`); the three nearest are returned in ``neighbours``.

    Parameters
    ----------
    smiles_or_mol : str or rdkit Mol
    params : str or Path or OwnParams, optional
        a parameter table from :func:`~solvsel.science.structure_training.refit` (default: the bundled one)
    neighbours_on : bool
        apply the similarity correction (needs ``<stem>_training.csv`` beside the parameters)
    """
    import numpy as np

    mol = _as_mol(smiles_or_mol)
    P = params if isinstance(params, OwnParams) else load_params(str(params) if params else None)
    counts, vx, groups, uncovered = own_features(mol, P.terms)
    if uncovered:
        return MethodEstimate(OWN_METHOD, None, None, None, None, False, groups, uncovered,
                              "atoms without a term of the scheme", P.source)
    x = own_design(counts, vx)
    y = _predict(x, P.intercept, P.coef, P.square)[0]
    neighbours = ()
    note = ""
    nd = _neighbour_data(P.path) if neighbours_on else None
    if nd is not None:
        fps, res, info = nd
        delta, idx, sim = kernel_correction(fingerprint(mol), fps, res, k=10, power=P.settings.power,
                                            kind=P.settings.fp)
        y = np.clip(y + delta, 0, None)
        neighbours = tuple(
            {"smiles": info[i][0], "cas": info[i][1], "similarity": round(float(si), 3),
             "dD": info[i][2], "dP": info[i][3], "dH": info[i][4]}
            for i, si in zip(idx[:3], sim[:3]))
        key = _rdkit().MolToSmiles(mol, isomericSmiles=False)
        same = [info[i] for i in idx if info[i][5] == key]
        if same:
            t = same[0]
            note = (f"this structure is in the training data (CAS {t[1]}: {t[2]:.1f}, {t[3]:.1f}, {t[4]:.1f} "
                    "as tabulated); tabulated values win over the estimate")
    elif neighbours_on:
        note = "no training table beside the parameters: similarity correction not applied"
    return MethodEstimate(OWN_METHOD, float(y[0]), float(y[1]), float(y[2]), None, True, groups, (), note,
                          P.source, neighbours)

#: Settings used when none are given (a parameter table written before the
#: settings were recorded; tests of single fits).
EPSILON = 1.1
ALPHA = 0.1
SQUARE = (False, False, True)
KERNEL_POWER = 2.0
KERNEL_LAMBDA = 0.3


@dataclass(frozen=True)
class FitSettings:
    """Settings of one fit, one value per parameter (dD, dP, dH)."""

    epsilon: tuple = (EPSILON,) * 3
    alpha: tuple = (ALPHA,) * 3
    square: tuple = SQUARE
    power: tuple = (KERNEL_POWER,) * 3
    lam: tuple = (KERNEL_LAMBDA,) * 3
    fp: tuple = (0, 0, 0)  # kernel of the correction, an index of KERNELS

    ROWS = ("huber epsilon", "huber alpha", "square", "kernel power", "kernel lambda", "kernel fingerprint")

    def rows(self):
        """``(term, values)`` pairs as written to the parameter table."""
        return list(zip(self.ROWS, (self.epsilon, self.alpha, tuple(int(s) for s in self.square), self.power,
                                    self.lam, tuple(int(f) for f in self.fp))))

    @classmethod
    def from_rows(cls, rows: dict):
        """From ``{term: (v_dD, v_dP, v_dH)}``; missing rows keep the defaults."""
        d = cls()
        get = lambda name, dflt: tuple(float(v) for v in rows.get(name, dflt))  # noqa: E731
        return cls(get("huber epsilon", d.epsilon), get("huber alpha", d.alpha),
                   tuple(bool(v) for v in get("square", d.square)), get("kernel power", d.power),
                   get("kernel lambda", d.lam), tuple(int(v) for v in get("kernel fingerprint", d.fp)))




def _predict(X, icpt, coef, square=SQUARE):
    import numpy as np

    Y = icpt + X @ coef
    for j in range(3):
        if square[j]:
            Y[:, j] = np.sqrt(np.clip(Y[:, j], 0, None))
    return np.clip(Y, 0, None)



#: Kernels of the similarity correction, by index: 0 Tanimoto of 2048-bit
#: Morgan radius-2 fingerprints; 1 min-max Tanimoto of Morgan radius-2 counts;
#: 2 the mean of kernel 1 and the min-max Tanimoto of feature-Morgan radius-2
#: counts (atoms typed only as donor, acceptor, aromatic, halogen, acidic,
#: basic or none of these: compounds alike in the roles of their atoms count
#: as similar even when the elements differ, e.g. a chloro and a bromo
#: compound).  The mean of two kernels is again a kernel.
KERNELS = ("Morgan bits", "Morgan counts", "Morgan + feature-Morgan counts")


def fingerprint(mol):
    """Fingerprints of the similarity correction: ``(2048 Morgan bits, Morgan counts, feature-Morgan counts)``."""
    G = _rd().rdFingerprintGenerator
    global _FPGEN
    try:
        gen, feat = _FPGEN
    except NameError:
        gen = G.GetMorganGenerator(radius=2, fpSize=2048)
        feat = G.GetMorganGenerator(radius=2, atomInvariantsGenerator=G.GetMorganFeatureAtomInvGen())
        _FPGEN = (gen, feat)
    return gen.GetFingerprint(mol), gen.GetSparseCountFingerprint(mol), feat.GetSparseCountFingerprint(mol)


def _similarities(fp, train_fps, kinds):
    """Similarities of one :func:`fingerprint` triple to training lists ``(bits, counts, features)``, by kernel."""
    import numpy as np

    DataStructs = _rd().DataStructs
    raw = {}

    def tanimoto(f):
        if f not in raw:
            raw[f] = np.asarray(DataStructs.BulkTanimotoSimilarity(fp[f], train_fps[f]))
        return raw[f]

    return {k: (tanimoto(1) + tanimoto(2)) / 2 if k == 2 else tanimoto(k) for k in set(kinds)}




def _per_param(v):
    return tuple(float(x) for x in v) if hasattr(v, "__len__") else (float(v),) * 3




def kernel_correction(fp, train_fps, dual, k=3, power=KERNEL_POWER, kind=(0, 0, 0)):
    r"""Correction of the group estimate from the similar training compounds.

    .. math:: \Delta_j = \sum_i s_{f_j, i}^{p_j} a_{ij}

    with :math:`s_{f,i}` the similarity to training compound i by kernel f
    (:data:`KERNELS`; ``fp`` and ``train_fps`` are :func:`fingerprint` triples)
    and :math:`a_{ij}` its dual coefficient (:func:`~solvsel.science.structure_training.kernel_dual`); a molecule
    like none of the training compounds gets almost no correction.

    ``train_fps`` may also be given as a triple of lists (bits, counts,
    features), which is faster.

    Returns ``(delta (3,), indices of the k most similar, their similarities)``
    (similarity by the bit fingerprint).
    """
    import numpy as np

    if not (isinstance(train_fps, tuple) and len(train_fps) == 3 and isinstance(train_fps[0], list)):
        train_fps = tuple([t[f] for t in train_fps] for f in range(3))
    sims = _similarities(fp, train_fps, tuple(int(f) for f in kind) + (0,))
    power = _per_param(power)
    delta = np.array([(sims[int(kind[j])] ** power[j]) @ dual[:, j] for j in range(dual.shape[1])])
    idx = np.argsort(-sims[0], kind="stable")[:k]
    return delta, idx, sims[0][idx]




# --------------------------------------------------------------------------- the public entry point

_LOW_CONFIDENCE_N = 10  # a class with fewer CV compounds than this falls back to the overall error


def _uncertainty(P: OwnParams, method: str, cls: str) -> dict:
    table = P.cv if method == OWN_METHOD else P.cv.get(("method", method), {})
    row = table.get(cls)
    basis = cls
    if row is None or row["n"] < _LOW_CONFIDENCE_N:
        row, basis = table.get("all"), "all"
    if row is None:
        return {"dD": None, "dP": None, "dH": None, "ra": None, "n": 0, "basis": "none", "kind": "cv_mae"}
    return {
        "dD": row.get("mae_dD"), "dP": row.get("mae_dP"), "dH": row.get("mae_dH"), "ra": row.get("mae_ra"),
        "q90_dD": row.get("q90_dD"), "q90_dP": row.get("q90_dP"), "q90_dH": row.get("q90_dH"),
        "q90_ra": row.get("q90_ra"), "n": row["n"], "basis": basis, "kind": "cv_mae",
    }


def estimate(smiles: str, method: str | None = None, params=None, properties: bool = True,
             full_lookup: bool = False) -> Estimate:
    """Estimate the Hansen parameters and molar volume of one molecule from its SMILES.

    Parameters
    ----------
    smiles : str
        one neutral organic molecule (stereo, Kekule or aromatic form, explicit
        hydrogens all give the same answer)
    method : str, optional
        ``"solvsel-gc"`` (default), ``"hoftyzer-van-krevelen"`` or ``"properties"``
    params : str or Path, optional
        the own model's parameter table (default the bundled ``tables/gc_params.csv``)
    properties : bool
        also look the compound up in ``chemicals`` for the property-based estimate
    full_lookup : bool
        search the whole databank of ``chemicals`` (about 1.3 s more, once a
        process), not only the part it loads by default

    Returns
    -------
    Estimate
        dD, dP, dH [MPa^0.5], vm [cm^3/mol], the groups, the cross-validated
        uncertainty for the molecule's class, the other methods and their spread

    Raises
    ------
    InputError
        unreadable SMILES or unknown method
    OutOfRangeError
        ions, salts and mixtures, metals, radicals
    MissingDataError
        the chosen method has no group for some atom (the message lists them)

    Examples
    --------
    d-Limonene (tabulated 17.2, 1.8, 4.3, Hansen 2007 Appendix A):

    >>> e = estimate("CC1=CCC(CC1)C(=C)C", properties=False)
    >>> e.method, e.chem_class, abs(e.dD - 17.2) < 1.0
    ('solvsel-gc', 'hydrocarbons', True)
    """
    import numpy as np

    if method is not None and method not in METHODS:
        raise InputError(f"expected one of {', '.join(METHODS)}, got '{method}'", param="method", value=method,
                         expected=", ".join(METHODS))
    method = method or OWN_METHOD
    mol, canonical = parse_smiles(smiles)
    P = load_params(str(params) if params else None)
    looked = properties or method == "properties"
    cas, exact = _lookup_cas(mol, full_lookup) if looked else (None, True)
    prop = properties_estimate(mol, cas) if cas else MethodEstimate(
        "properties", None, None, None, None, False,
        note=_not_found_note(full_lookup) if looked else "not looked up", source="chemicals_lib")
    by_name = {OWN_METHOD: own_model(mol, P), "hoftyzer-van-krevelen": hoftyzer_van_krevelen(mol), "properties": prop}
    chosen = by_name[method]
    keto = _keto_form(mol) if not chosen.covered else None
    if keto is not None:  # a ring carbonyl RDKit reads as aromatic (O=c): the groups see its keto form
        keto_by_name = {OWN_METHOD: own_model(keto, P), "hoftyzer-van-krevelen": hoftyzer_van_krevelen(keto),
                        "properties": prop}
        if keto_by_name[method].covered:
            mol, by_name, chosen = keto, keto_by_name, keto_by_name[method]
    if not chosen.covered:
        raise _refusal(mol, canonical, method, chosen)
    cls = chemical_class(mol)
    vm, vm_method = _molar_volume(mol, cas)
    mw = float(_rd().Descriptors.MolWt(mol))
    notes = _estimate_notes(mol, chosen, cas, exact, vm, mw)
    if keto is not None and mol is keto:
        notes.append(KETO_NOTE)
    covered = [e for e in by_name.values() if e.covered]
    spread = {}
    if len(covered) > 1:
        arr = np.array([e.hsp for e in covered])
        spread = {p: float(arr[:, j].max() - arr[:, j].min()) for j, p in enumerate(("dD", "dP", "dH"))}
    others = tuple(e for name, e in by_name.items() if name != method)
    return Estimate(
        smiles=canonical, dD=float(chosen.dD), dP=float(chosen.dP), dH=float(chosen.dH),
        vm_cm3_mol=vm, vm_method=vm_method, method=method, groups=chosen.groups,
        uncovered_atoms=chosen.uncovered_atoms, chem_class=cls, uncertainty=_uncertainty(P, method, cls),
        others=others, spread=spread, notes=tuple(notes), mw_g_mol=mw,
        formula=_rd().rdMolDescriptors.CalcMolFormula(mol), neighbours=chosen.neighbours,
    )


#: Note of an estimate made on the keto form of a ring carbonyl that RDKit reads as aromatic.
KETO_NOTE = ("ring carbonyl(s) that RDKit reads as aromatic (O=c, as in xanthone or 2-pyridone) estimated in "
             "their keto form: C=O in a non-aromatic ring, the benzene rings beside it kept aromatic")


def _keto_form(mol):
    """The molecule with each ring that carries an exocyclic C=O on an aromatic atom made non-aromatic
    (Kekule bonds), other aromatic rings kept; None when it has no such ring.

    RDKit's aromaticity model counts a ring with an exocyclic carbonyl as aromatic when its pi
    electrons allow (xanthone's pyranone, 2-pyridone, isatoic anhydride, 2-benzimidazolone); the
    groups of the methods describe that carbonyl as a ring ketone, lactone or lactam.
    """
    Chem = _rdkit()
    rings = mol.GetRingInfo()
    carbonyl_atoms = {a.GetIdx() for a in mol.GetAtoms() if a.GetIsAromatic() and any(
        b.GetBondType() == Chem.BondType.DOUBLE and not b.IsInRing() and b.GetOtherAtom(a).GetSymbol() in ("O", "S")
        for b in a.GetBonds())}
    if not carbonyl_atoms:
        return None
    bond_rings = rings.BondRings()
    keep = [br for ar, br in zip(rings.AtomRings(), bond_rings)
            if not carbonyl_atoms & set(ar) and all(mol.GetBondWithIdx(b).GetIsAromatic() for b in br)]
    out = Chem.RWMol(mol)
    Chem.Kekulize(out, clearAromaticFlags=True)
    for br in keep:
        for b in br:
            bond = out.GetBondWithIdx(b)
            bond.SetBondType(Chem.BondType.AROMATIC)
            bond.SetIsAromatic(True)
            bond.GetBeginAtom().SetIsAromatic(True)
            bond.GetEndAtom().SetIsAromatic(True)
    out = out.GetMol()
    out.UpdatePropertyCache(strict=False)
    Chem.FastFindRings(out)
    return out


def _refusal(mol, canonical: str, method: str, chosen: MethodEstimate) -> MissingDataError:
    """The error of a method that cannot estimate the molecule (atoms without a group, data missing)."""
    if chosen.uncovered_atoms:
        what = ", ".join(f"{mol.GetAtomWithIdx(i).GetSymbol()}{i} ({_atom_kind(mol.GetAtomWithIdx(i))})"
                         for i in chosen.uncovered_atoms)
        return MissingDataError(
            f"method '{method}' has no group for atom(s) {what} of '{canonical}'; the estimate is refused "
            "rather than guessed (try another method)", param="method", value=method)
    return MissingDataError(f"method '{method}' cannot estimate '{canonical}': {chosen.note}", param="method",
                            value=method)


def _atom_kind(atom) -> str:
    """An atom in words for a refusal: aromatic or not, ring or chain, its bonds.

    >>> _atom_kind(parse_smiles("CP(C)(C)=O")[0].GetAtomWithIdx(4))
    'chain atom, double-bonded to P'
    """
    where = ("aromatic " if atom.GetIsAromatic() else "") + ("ring " if atom.IsInRing() else "chain ")
    double = [b.GetOtherAtom(atom).GetSymbol() for b in atom.GetBonds() if b.GetBondTypeAsDouble() == 2.0]
    single = sorted(b.GetOtherAtom(atom).GetSymbol() for b in atom.GetBonds() if b.GetBondTypeAsDouble() != 2.0)
    parts = [f"double-bonded to {', '.join(double)}"] if double else []
    if single:
        parts.append(f"bonded to {', '.join(single)}")
    return ", ".join([where + "atom"] + parts)


def _molar_volume(mol, cas: str | None) -> tuple[float | None, str]:
    """Molar volume [cm^3/mol] and its route: the library's liquid value where it has the compound, else Fedors."""
    if cas:
        v, route = liquid_molar_volume(cas)
        if v:
            return float(v), f"chemicals: {route}"
    fv = fedors_volume(mol)[0]
    if fv:
        return float(fv), "Fedors 1974 group contribution"
    return None, ""


def _estimate_notes(mol, chosen: MethodEstimate, cas: str | None, exact: bool, vm, mw: float) -> list[str]:
    """What to know about an estimate: the method's note, a stereo-free match, the size of the molecule."""
    notes = []
    if chosen.note:
        notes.append(chosen.note)
    if cas and not exact:
        notes.append(f"CAS {cas} {STEREO_FREE_NOTE}")
    if vm is None:
        notes.append("no molar volume: Fedors has no group for some atom")
    if mol.GetNumAtoms() < 3:
        notes.append("very small molecule: group contributions are least reliable here")
    if mw > 600:
        notes.append("molecule larger than most of the training data (MW > 600): treat the estimate as rough")
    return notes


def estimate_many(smiles_list, method=None, params=None, properties=False):
    """Estimate many SMILES; returns a list of (smiles, Estimate or the error raised)."""
    from ..errors import SolvselError

    out = []
    for s in smiles_list:
        try:
            out.append((s, estimate(s, method=method, params=params, properties=properties)))
        except SolvselError as exc:
            out.append((s, exc))
    return out
