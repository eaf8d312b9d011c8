"""HLB of emulsifiers, required HLB of oil phases, and emulsifier systems.

The hydrophile-lipophile balance puts a nonionic emulsifier on a 0-20 scale
by the mass share of its water-loving part (Griffin [1]_, [2]_); Davies [3]_
assigned additive group numbers, which also reach ionic emulsifiers.  An oil
phase asks for a *required* HLB, and a blend of emulsifiers is taken to have
the mass-weighted HLB of its parts (Griffin [1]_).  This module computes all
of these on plain numbers (and on SMILES through RDKit, imported only when a
structure is given), finds the pairs and triples of an allowed pool that hit
a required HLB, lays out a bench series across an HLB range, and fits the
required HLB back from the stability scores of that series.

HLB is a planning number: it ignores temperature, salt, the chemistry of the
oil and the concentration, and it does not describe biopolymers (gum arabic,
OSA starch, proteins) or saponins.  The ``hlb`` job's results carry that caution.

References
----------
.. [1] Griffin, W. C. Classification of surface-active agents by "HLB".
   J. Soc. Cosmet. Chem. 1, 311-326 (1949).
.. [2] Griffin, W. C. Calculation of HLB values of non-ionic surfactants.
   J. Soc. Cosmet. Chem. 5, 249-256 (1954).
.. [3] Davies, J. T. A quantitative kinetic theory of emulsion type. I.
   Physical chemistry of the emulsifying agent. In: Proc. 2nd Int. Congr.
   Surface Activity, vol. 1, 426-438. Butterworths, London (1957).
.. [4] Vaughan, C. D.; Rice, D. A. Predicting O/W emulsion stability by the
   "required HLB equation". J. Dispersion Sci. Technol. 11, 83-91 (1990).
.. [5] Hassan et al. Assignment of optimum surfactants blend and right
   oil phase concentration of oil in water emulsion. Indian J. Pharm. Sci.
   80, 334-341 (2018). https://www.ijpsonline.com/articles/assignment-of-optimum-surfactants-blend-and-right-oil-phase-concentration-of-oil-in-water-emulsion-3464.html
"""

from __future__ import annotations

import itertools
import math
from dataclasses import asdict, dataclass
from typing import Mapping, Sequence

import numpy as np

from ..data.catalog import number_or_none as _num
from ..extras import need
from ..errors import InputError, MissingDataError, OutOfRangeError, UnknownNameError

__all__ = [
    "DAVIES_GROUPS",
    "Emulsifier",
    "GriffinResult",
    "DaviesResult",
    "EmulsifierSystem",
    "BenchBlend",
    "BenchSeries",
    "RequiredHLBFit",
    "OilPhaseHLB",
    "ESTIMATE_SPREAD",
    "griffin_hlb",
    "griffin_hlb_oxyethylene",
    "griffin_hlb_polyol_ester",
    "griffin_hlb_saponification",
    "griffin_hlb_from_smiles",
    "davies_hlb",
    "davies_groups_from_smiles",
    "davies_hlb_from_smiles",
    "blend_hlb",
    "normalize_fractions",
    "required_hlb",
    "required_hlb_vaughan_rice",
    "pair_fractions",
    "emulsifier_systems",
    "bench_series",
    "fit_required_hlb",
    "emulsifier_from_row",
    "pool_from_catalog",
    "all_emulsifiers",
    "oil_phase_required_hlb",
]

_MASS_OH = 17.007  # [g/mol] an OH group: a cut ester or ether gives back the free acid or alcohol


# ----------------------------------------------------------------------------- records


@dataclass(frozen=True)
class Emulsifier:
    """An emulsifier as the HLB engine needs it (a row of ``tables/emulsifiers.csv``).

    ``hlb`` is None for biopolymers and saponins (``use_ratio_to_oil`` applies
    instead) and for emulsifiers without a value on record.
    """

    name: str
    hlb: float | None = None
    ionic_type: str = "nonionic"
    hlb_method: str = ""
    cas: str = ""
    ins_number: str = ""
    use_ratio_to_oil: float | None = None
    smiles: str = ""
    source: str = ""
    synonyms: tuple[str, ...] = ()

    @property
    def is_biopolymer(self) -> bool:
        return self.ionic_type in ("biopolymer", "saponin")

    def to_dict(self) -> dict:
        return asdict(self)


def emulsifier_from_row(row: Mapping) -> Emulsifier:
    """Build an :class:`Emulsifier` from a row (dict) of the emulsifiers table."""
    return Emulsifier(
        name=str(row["name"]),
        hlb=_num(row.get("hlb")),
        ionic_type=str(row.get("ionic_type") or "nonionic"),
        hlb_method=str(row.get("hlb_method") or ""),
        cas=str(row.get("cas") or ""),
        ins_number=str(row.get("ins_number") or ""),
        use_ratio_to_oil=_num(row.get("use_ratio_to_oil")),
        smiles=str(row.get("smiles") or ""),
        source=str(row.get("hlb_source") or ""),
        synonyms=tuple(v for v in str(row.get("synonyms") or "").split(";") if v),
    )


# ----------------------------------------------------------------------------- Griffin


def _check_fraction_pct(value, name: str) -> float:
    x = _num(value)
    if x is None or not (0.0 <= x <= 100.0):
        raise OutOfRangeError(f"expected a weight percent between 0 and 100, got {value!r}", param=name, value=value)
    return x


def griffin_hlb(hydrophilic_mass: float, molar_mass: float) -> float:
    r"""Griffin's HLB from the mass of the hydrophilic part [1]_.

    .. math::
        \mathrm{HLB} = 20\,\frac{M_h}{M}

    Parameters
    ----------
    hydrophilic_mass : float
        Molar mass of the hydrophilic part, M_h [g/mol]
    molar_mass : float
        Molar mass of the whole molecule, M [g/mol]

    Returns
    -------
    hlb : float
        HLB on Griffin's 0-20 scale [-]

    Examples
    --------
    Tetra(oxyethylene) dodecyl ether: 4 x 44.05 g/mol of oxyethylene in
    362.5 g/mol; Griffin (1954) tabulates 9.7 for this ether (from memory).

    >>> round(griffin_hlb(4 * 44.053, 362.55), 1)
    9.7
    """
    mh, m = _num(hydrophilic_mass), _num(molar_mass)
    if m is None or m <= 0:
        raise OutOfRangeError(f"expected a positive number in g/mol, got {molar_mass!r}", param="molar_mass",
                              value=molar_mass)
    if mh is None or not (0 <= mh <= m):
        raise OutOfRangeError(
            f"expected a number between 0 and the molar mass {m:g} g/mol, got {hydrophilic_mass!r}",
            param="hydrophilic_mass", value=hydrophilic_mass,
        )
    return 20.0 * mh / m


def griffin_hlb_oxyethylene(e_wt_pct: float) -> float:
    r"""Griffin's HLB of a polyoxyethylene ether from its oxyethylene content [2]_.

    .. math::
        \mathrm{HLB} = E/5

    Parameters
    ----------
    e_wt_pct : float
        Oxyethylene content, E [wt %]

    Examples
    --------
    >>> griffin_hlb_oxyethylene(48.6)
    9.72
    """
    return _check_fraction_pct(e_wt_pct, "e_wt_pct") / 5.0


def griffin_hlb_polyol_ester(e_wt_pct: float, p_wt_pct: float) -> float:
    r"""Griffin's HLB of a polyol fatty-acid ester (ethoxylated or not) [2]_.

    .. math::
        \mathrm{HLB} = (E + P)/5

    Parameters
    ----------
    e_wt_pct : float
        Oxyethylene content, E [wt %]
    p_wt_pct : float
        Polyol content (sorbitol, glycerol ...), P [wt %]

    Examples
    --------
    >>> griffin_hlb_polyol_ester(67.3, 11.1)
    15.68
    """
    e = _check_fraction_pct(e_wt_pct, "e_wt_pct")
    p = _check_fraction_pct(p_wt_pct, "p_wt_pct")
    if e + p > 100.0 + 1e-9:
        raise OutOfRangeError(f"E + P = {e + p:g} %: the two contents cannot exceed 100 %",
                              param="p_wt_pct", value=p_wt_pct)
    return round((e + p) / 5.0, 10)


def griffin_hlb_saponification(sap_value: float, acid_value: float) -> float:
    r"""Griffin's HLB of a fatty-acid ester from its saponification number [2]_.

    .. math::
        \mathrm{HLB} = 20\left(1 - \frac{S}{A}\right)

    Parameters
    ----------
    sap_value : float
        Saponification number of the ester, S [mg KOH/g]
    acid_value : float
        Acid number of the fatty acid recovered from it, A [mg KOH/g]

    Examples
    --------
    Griffin's (1954) worked example for polyoxyethylene (20) sorbitan
    monolaurate, S = 45.5 and A = 276, gives 16.7 (from memory):

    >>> round(griffin_hlb_saponification(45.5, 276), 1)
    16.7
    """
    s, a = _num(sap_value), _num(acid_value)
    if a is None or a <= 0:
        raise OutOfRangeError(f"expected a positive acid number in mg KOH/g, got {acid_value!r}", param="acid_value",
                              value=acid_value)
    if s is None or not (0 < s <= a):
        raise OutOfRangeError(
            f"expected a saponification number between 0 and the acid number {a:g} mg KOH/g, got {sap_value!r}",
            param="sap_value", value=sap_value,
        )
    return 20.0 * (1.0 - s / a)


@dataclass(frozen=True)
class GriffinResult:
    """Griffin's HLB found on a molecule graph (see :func:`griffin_hlb_from_smiles`)."""

    smiles: str
    hlb: float
    molar_mass: float  # [g/mol]
    hydrophilic_mass: float  # [g/mol]
    lipophilic_parts: tuple[str, ...]  # the cut-off fatty acids / alcohols, as SMILES
    method: str = "Griffin 20 Mh/M (structure)"

    def to_dict(self) -> dict:
        return asdict(self)


def _chem():
    """RDKit's ``Chem`` (the ``structure`` extra), or an error naming the extra to install."""
    need("rdkit.RDLogger", "structure", "HLB from a structure").DisableLog("rdApp.*")
    return need("rdkit.Chem", "structure", "HLB from a structure")


def read_smiles(smiles: str, param: str = "smiles"):
    """The RDKit molecule of ``smiles``; an unreadable one is an InputError on ``param``."""
    Chem = _chem()
    if not isinstance(smiles, str) or not smiles.strip():
        raise InputError(f"expected a SMILES string, got {smiles!r}", param=param, value=smiles)
    mol = Chem.MolFromSmiles(smiles.strip())
    if mol is None:
        raise InputError(f"'{smiles}' is not a valid SMILES string", param=param, value=smiles)
    return mol


def _atom_mass(atom) -> float:
    return atom.GetMass() + atom.GetTotalNumHs() * 1.008


def _side(mol, start: int, blocked: int) -> set[int]:
    """Atoms reachable from ``start`` without stepping onto ``blocked``."""
    seen, stack = {start}, [start]
    while stack:
        a = mol.GetAtomWithIdx(stack.pop())
        for nb in a.GetNeighbors():
            j = nb.GetIdx()
            if j != blocked and j not in seen:
                seen.add(j)
                stack.append(j)
    return seen


def _lipophilic_side(mol, carbon: int, atoms: set[int]) -> bool:
    """A fatty chain: only carbon (and H), but a carbonyl O on the cut carbon; at least 6 C."""
    n_c = 0
    for i in atoms:
        a = mol.GetAtomWithIdx(i)
        if a.GetFormalCharge() != 0:
            return False
        if a.GetSymbol() == "C":
            n_c += 1
            continue
        if a.GetSymbol() == "O" and a.GetDegree() == 1:
            b = mol.GetBondBetweenAtoms(i, carbon)
            if b is not None and b.GetBondTypeAsDouble() == 2.0:
                continue
        return False
    return n_c >= 6


def _as_free_acid_or_alcohol(mol, carbon: int, oxygen: int, side: set[int]) -> str:
    """SMILES of the chain cut off at ``carbon``, with the cut O kept as OH."""
    Chem = _chem()

    keep = sorted(side | {oxygen})
    rw = Chem.RWMol(mol)
    for nb in mol.GetAtomWithIdx(oxygen).GetNeighbors():
        if nb.GetIdx() != carbon:
            rw.RemoveBond(oxygen, nb.GetIdx())
    drop = [i for i in range(mol.GetNumAtoms()) if i not in keep]
    for i in sorted(drop, reverse=True):
        rw.RemoveAtom(i)
    frag = rw.GetMol()
    for a in frag.GetAtoms():
        a.SetNoImplicit(False)
        a.SetNumExplicitHs(0)
    Chem.SanitizeMol(frag)
    return Chem.MolToSmiles(frag)


def griffin_hlb_from_smiles(smiles: str) -> GriffinResult:
    r"""Griffin's HLB of a nonionic emulsifier from its structure [1]_, [2]_.

    The fatty chains are found on the molecule graph: every single, acyclic
    O-C bond whose carbon side is a hydrocarbon chain of six or more carbons
    (with at most the carbonyl O of an ester on the cut carbon) is cut, and
    each chain is counted as its free fatty acid or fatty alcohol (the chain
    plus OH).  Everything else (polyoxyethylene, sorbitan, glycerol, sucrose)
    is the hydrophilic part:

    .. math::
        \mathrm{HLB} = 20\,\frac{M - \sum M_{\mathrm{acid\ or\ alcohol}}}{M}

    With this count the result equals both ``E/5`` for polyoxyethylene
    ethers and ``20 (1 - S/A)`` for the pure ester, which is how Griffin's
    formulas agree with each other.

    Parameters
    ----------
    smiles : str
        SMILES of the main species (uncharged) [-]

    Returns
    -------
    GriffinResult
        ``hlb`` [-], ``molar_mass`` and ``hydrophilic_mass`` [g/mol], and the
        lipophilic parts found.

    Examples
    --------
    Polyoxyethylene (20) sorbitan monolaurate, drawn with the ester at the end
    of one of four 5-unit chains; Griffin (1954) gives 16.7 (from memory):

    >>> eo = "CCO" * 5
    >>> ps20 = "CCCCCCCCCCCC(=O)O" + eo + "CC(O" + eo + ")C1OCC(O" + eo + ")C1O" + eo
    >>> round(griffin_hlb_from_smiles(ps20).hlb, 1)
    16.7
    """
    Chem = _chem()
    MolWt = need("rdkit.Chem.Descriptors", "structure", "HLB from a structure").MolWt

    mol = read_smiles(smiles)
    if any(a.GetFormalCharge() != 0 for a in mol.GetAtoms()):
        raise InputError(
            f"'{smiles}' is charged: Griffin's formula applies to nonionic emulsifiers; "
            "use Davies' group numbers (davies_hlb_from_smiles) for ionic ones",
            param="smiles", value=smiles,
        )
    if len(Chem.GetMolFrags(mol)) != 1:
        raise InputError(f"'{smiles}': expected one molecule, got several dot-separated parts",
                         param="smiles", value=smiles)
    m = MolWt(mol)
    lipo_mass = 0.0
    parts = []
    for bond in mol.GetBonds():
        if bond.IsInRing() or bond.GetBondTypeAsDouble() != 1.0:
            continue
        a, b = bond.GetBeginAtom(), bond.GetEndAtom()
        if {a.GetSymbol(), b.GetSymbol()} != {"O", "C"}:
            continue
        o, c = (a, b) if a.GetSymbol() == "O" else (b, a)
        if o.GetDegree() != 2:  # a hydroxyl or carbonyl O cuts nothing off
            continue
        side = _side(mol, c.GetIdx(), o.GetIdx())
        if o.GetIdx() in side or not _lipophilic_side(mol, c.GetIdx(), side):
            continue
        lipo_mass += sum(_atom_mass(mol.GetAtomWithIdx(i)) for i in side) + _MASS_OH
        parts.append(_as_free_acid_or_alcohol(mol, c.GetIdx(), o.GetIdx(), side))
    if not parts:
        raise InputError(
            f"'{smiles}': no fatty chain (six or more carbons joined to the rest through an ester or ether "
            "oxygen) was found, so Griffin's structure formula does not apply",
            param="smiles", value=smiles,
        )
    mh = m - lipo_mass
    if mh <= 0:
        raise InputError(f"'{smiles}': no hydrophilic part is left once the fatty chains are taken off",
                         param="smiles", value=smiles)
    return GriffinResult(
        smiles=smiles, hlb=griffin_hlb(mh, m), molar_mass=m, hydrophilic_mass=mh, lipophilic_parts=tuple(parts)
    )


# ----------------------------------------------------------------------------- Davies

#: Davies' (1957) group numbers [3]_ (values recalled from the paper's table, from memory).
DAVIES_GROUPS: dict[str, float] = {
    "sulfate_na": 38.7,  # -SO4- Na+
    "carboxylate_k": 21.1,  # -COO- K+
    "carboxylate_na": 19.1,  # -COO- Na+
    "tertiary_amine": 9.4,  # N (tertiary amine)
    "ester_sorbitan_ring": 6.8,  # ester bound to a sorbitan ring
    "ester": 2.4,  # free ester
    "carboxylic_acid": 2.1,  # -COOH
    "hydroxyl": 1.9,  # free -OH
    "ether": 1.3,  # -O-
    "hydroxyl_sorbitan_ring": 0.5,  # -OH on a sorbitan ring
    "oxyethylene": 0.33,  # -(CH2CH2O)-
    "ch": -0.475,  # -CH-, -CH2-, -CH3, =CH-
    "oxypropylene": -0.15,  # -(CH2CH2CH2O)- as Davies wrote it
    "cf": -0.870,  # -CF2-, -CF3
}


def davies_hlb(groups: Mapping[str, float]) -> float:
    r"""Davies' HLB from group counts [3]_.

    .. math::
        \mathrm{HLB} = 7 + \sum_i n_i\,H_i

    with the group numbers ``H_i`` of :data:`DAVIES_GROUPS` (lipophilic
    groups negative).

    Parameters
    ----------
    groups : mapping of str to number
        Count of each group, keyed as in :data:`DAVIES_GROUPS` [-]

    Examples
    --------
    Sodium dodecyl sulfate, Davies' own example (40, from memory):

    >>> round(davies_hlb({"sulfate_na": 1, "ch": 12}), 1)
    40.0
    """
    total = 7.0
    for key, n in groups.items():
        if key not in DAVIES_GROUPS:
            raise InputError(f"unknown Davies group '{key}'; known groups: {', '.join(DAVIES_GROUPS)}",
                             param="groups", value=key)
        count = _num(n)
        if count is None or count < 0:
            raise InputError(f"count of Davies group '{key}' must be zero or positive, got {n!r}",
                             param="groups", value=key)
        total += count * DAVIES_GROUPS[key]
    return total


def davies_groups_from_smiles(smiles: str) -> dict[str, int]:
    """Count Davies' groups on a molecule graph.

    Carbons of oxyethylene units (``O-CH2-CH2-O``) count as oxyethylene;
    every other carbon that is not a carbonyl carbon counts as a ``-CH-``
    group.  The sorbitan-ring variants are not told apart from the free ester
    and hydroxyl (give counts to :func:`davies_hlb` directly for those).
    Structures with a group Davies gave no number for (phosphate, quaternary
    ammonium, aromatic rings ...) raise :class:`MissingDataError`.

    Examples
    --------
    >>> davies_groups_from_smiles("CCCCCCCC/C=C\\\\CCCCCCCC(=O)[O-].[Na+]")
    {'carboxylate_na': 1, 'ch': 17}
    """
    Chem = _chem()

    mol = read_smiles(smiles)
    counts: dict[str, int] = {}
    used: set[int] = set()

    def add(key, n=1):
        counts[key] = counts.get(key, 0) + n

    cations = {a.GetSymbol() for a in mol.GetAtoms() if a.GetFormalCharge() > 0 and a.GetDegree() == 0}
    patt = Chem.MolFromSmarts
    for m in mol.GetSubstructMatches(patt("[#6][OX2]S(=O)(=O)[OX1-]")):
        if "Na" not in cations:
            raise MissingDataError(f"'{smiles}': Davies gave a sulfate group number for the sodium salt only",
                                   param="smiles", value=smiles)
        add("sulfate_na")
        used.update(m[1:])
    for m in mol.GetSubstructMatches(patt("[CX3](=O)[OX1-]")):
        if "K" in cations:
            add("carboxylate_k")
        elif "Na" in cations:
            add("carboxylate_na")
        else:
            raise MissingDataError(f"'{smiles}': Davies gave carboxylate numbers for sodium and potassium salts only",
                                   param="smiles", value=smiles)
        used.update(m)
    for m in mol.GetSubstructMatches(patt("[CX3](=O)[OX2H1]")):
        add("carboxylic_acid")
        used.update(m)
    for m in mol.GetSubstructMatches(patt("[CX3](=O)[OX2][#6]")):
        add("ester")
        used.update(m[:3])
    eo_pairs = set()
    for m in mol.GetSubstructMatches(patt("[OX2][CH2X4][CH2X4][OX2]")):
        eo_pairs.add(tuple(sorted(m[1:3])))
    eo_carbons = {i for p in eo_pairs for i in p}
    if eo_pairs:
        add("oxyethylene", len(eo_pairs))
    eo_oxygens_left = len(eo_pairs)
    for a in mol.GetAtoms():
        i, sym = a.GetIdx(), a.GetSymbol()
        if i in used or a.GetDegree() == 0 and a.GetFormalCharge() > 0:
            continue
        if sym == "C":
            if a.GetIsAromatic():
                raise MissingDataError(f"'{smiles}': Davies gave no group number for aromatic rings",
                                       param="smiles", value=smiles)
            if i not in eo_carbons:
                add("ch")
        elif sym == "O":
            if a.GetTotalNumHs() == 1 and a.GetDegree() == 1:
                add("hydroxyl")
            elif a.GetDegree() == 2 and all(n.GetSymbol() == "C" for n in a.GetNeighbors()):
                near_eo = any(n.GetIdx() in eo_carbons for n in a.GetNeighbors())
                if near_eo and eo_oxygens_left > 0:
                    eo_oxygens_left -= 1  # the oxygen of an oxyethylene unit
                else:
                    add("ether")
            else:
                raise MissingDataError(f"'{smiles}': Davies gave no group number for the oxygen at atom {i}",
                                       param="smiles", value=smiles)
        elif sym == "N" and a.GetFormalCharge() == 0 and a.GetDegree() == 3 and a.GetTotalNumHs() == 0:
            add("tertiary_amine")
        else:
            raise MissingDataError(f"'{smiles}': Davies gave no group number for the {sym} atom at position {i}",
                                   param="smiles", value=smiles)
    return counts


@dataclass(frozen=True)
class DaviesResult:
    smiles: str
    hlb: float
    groups: dict
    method: str = "Davies group numbers"

    def to_dict(self) -> dict:
        return asdict(self)


def davies_hlb_from_smiles(smiles: str) -> DaviesResult:
    """Davies' HLB of the structure ``smiles`` [3]_ (groups by :func:`davies_groups_from_smiles`).

    Davies' numbers are known to be poor for ethoxylates (Guo, Rong & Ying,
    J. Colloid Interface Sci. 298, 441-450, 2006).

    Examples
    --------
    Glycerol 1-monostearate; Griffin's value is 3.8 (from memory):

    >>> round(davies_hlb_from_smiles("CCCCCCCCCCCCCCCCCC(=O)OCC(O)CO").hlb, 1)
    3.7
    """
    groups = davies_groups_from_smiles(smiles)
    return DaviesResult(smiles=smiles, hlb=davies_hlb(groups), groups=groups)


# ----------------------------------------------------------------------------- blends


def normalize_fractions(amounts: Sequence[float], param: str = "fractions") -> np.ndarray:
    """Mass fractions from amounts given as fractions (sum 1) or percent (sum 100).

    Any other sum is refused (a typo is likelier than a meaning), with the sum
    in the message; ``param`` names the input in the error.

    >>> normalize_fractions([70, 30]).tolist()
    [0.7, 0.3]
    """
    x = np.asarray([_num(v) if _num(v) is not None else np.nan for v in amounts], dtype=float)
    expected = "fractions that sum to 1 or percentages that sum to 100"
    if x.size == 0:
        raise InputError("expected at least one amount", param=param, expected=expected)
    if not np.all(np.isfinite(x)) or np.any(x < 0):
        raise InputError(f"amounts must be numbers of zero or more, got {list(amounts)}", param=param,
                         value=list(amounts), expected=expected)
    s = float(x.sum())
    if abs(s - 1.0) <= 5e-3:
        return x / s
    if abs(s - 100.0) <= 0.5:
        return x / s
    raise InputError(f"amounts sum to {s:g}; give {expected}", param=param, value=list(amounts), expected=expected)


def blend_hlb(hlbs: Sequence[float], fractions: Sequence[float]) -> float:
    r"""HLB of an emulsifier blend: the mass-weighted mean (Griffin [1]_).

    .. math::
        \mathrm{HLB}_{blend} = \sum_i w_i\,\mathrm{HLB}_i

    Parameters
    ----------
    hlbs : sequence of float
        HLB of each emulsifier [-]
    fractions : sequence of float
        Mass fraction of each (summing to 1), or percent (summing to 100) [-]

    Examples
    --------
    40 % sorbitan monooleate (4.3) with 60 % polysorbate 80 (15.0), the
    textbook example (Martin's Physical Pharmacy, from memory):

    >>> round(blend_hlb([4.3, 15.0], [40, 60]), 2)
    10.72
    """
    h = np.asarray(hlbs, dtype=float)
    w = normalize_fractions(fractions)
    if h.shape != w.shape:
        raise InputError(f"{h.size} HLB values but {w.size} fractions", param="fractions")
    if not np.all(np.isfinite(h)):
        raise MissingDataError("every emulsifier needs an HLB value", param="hlbs")
    return float(h @ w)


@dataclass(frozen=True)
class OilPhaseHLB:
    """Required HLB of an oil phase and how each part contributed."""

    required_hlb: float
    components: tuple  # ({name, mass_fraction, rhlb, rhlb_range, basis}, ...)
    cautions: tuple[str, ...] = ()
    #: (low, high) of the phase where some part's value has a range (a published range or an estimate's), else None
    required_hlb_range: tuple[float, float] | None = None

    def to_dict(self) -> dict:
        return {"required_hlb": self.required_hlb, "components": list(self.components), "cautions": list(self.cautions),
                "required_hlb_range": None if self.required_hlb_range is None else list(self.required_hlb_range)}


#: Spread [HLB units] carried either side of a required HLB estimated from solubility parameters (the
#: caution's +/- 2: Vaughan & Rice's equation is a correlation, not a measurement).
ESTIMATE_SPREAD = 2.0


def required_hlb(components: Sequence[tuple[str, float, float | None]], basis: Sequence[str] | None = None,
                 ranges: Sequence[tuple[float, float] | None] | None = None) -> OilPhaseHLB:
    r"""Required HLB of an oil phase: the mass-weighted mean of its parts' values.

    .. math::
        \mathrm{rHLB} = \sum_i w_i\,\mathrm{rHLB}_i

    Where some part's value has a range, the phase's range is the same mean of
    the parts' low ends and of their high ends (a part without one counts at
    its value in both).

    Parameters
    ----------
    components : sequence of (name, amount, rhlb)
        Each oil, its amount (fractions summing to 1 or percent summing to
        100) and its required HLB for oil-in-water [-]
    basis : sequence of str, optional
        Where each rHLB came from (tabulated, estimated ...), echoed back.
    ranges : sequence of (low, high) or None, optional
        The range of each part's rHLB [-], None where it has none.

    Examples
    --------
    70 % of an oil needing 14 with 30 % of one needing 8:

    >>> required_hlb([("a", 70, 14.0), ("b", 30, 8.0)]).required_hlb
    12.2

    The same with the first oil's value known only as 13 to 15:

    >>> [round(x, 2) for x in required_hlb([("a", 70, 14.0), ("b", 30, 8.0)], ranges=[(13, 15), None]).required_hlb_range]
    [11.5, 12.9]
    """
    if not components:
        raise InputError("the oil phase has no components", param="oil")
    names = [c[0] for c in components]
    w = normalize_fractions([c[1] for c in components], param="oil")
    missing = [n for n, c in zip(names, components) if _num(c[2]) is None]
    if missing:
        raise MissingDataError(
            f"no required HLB on record for {', '.join(repr(m) for m in missing)}: give one "
            "(NAME=HLB, e.g. 'lemon oil=14') or measure it with a bench series",
            param="rhlb", value=", ".join(missing), expected="a required HLB for each oil",
        )
    r = np.array([float(c[2]) for c in components])
    basis = list(basis) if basis is not None else ["given"] * len(components)
    ranges = list(ranges) if ranges is not None else [None] * len(components)
    span = np.array([(float(g[0]), float(g[1])) if g is not None else (ri, ri) for g, ri in zip(ranges, r)])
    comps = tuple(
        {"name": n, "mass_fraction": float(wi), "rhlb": float(ri), "rhlb_range": None if g is None else [float(x) for x in g],
         "basis": b}
        for n, wi, ri, g, b in zip(names, w, r, ranges, basis)
    )
    phase_range = None
    if any(g is not None for g in ranges):
        phase_range = (round(float(span[:, 0] @ w), 10), round(float(span[:, 1] @ w), 10))
    cautions = []
    if any(b.startswith("estimated") for b in basis):
        cautions.append(
            "Some required HLB values are estimated from solubility parameters (Vaughan & Rice 1990), "
            "not measured: treat them as +/- 2 HLB units and confirm with a bench series."
        )
    return OilPhaseHLB(required_hlb=round(float(r @ w), 10), components=comps, cautions=tuple(cautions),
                       required_hlb_range=phase_range)


def required_hlb_vaughan_rice(delta_total_mpa05: float) -> float:
    r"""Required HLB of a non-electrolyte oil from its solubility parameter [4]_.

    .. math::
        \mathrm{rHLB} = \left(\frac{\delta + 7}{8}\right)^4

    with ``delta`` in (cal/cm3)^0.5 (1 (cal/cm3)^0.5 = 2.0455 MPa^0.5).  The
    authors correct long aliphatic chains for folding; without it the formula
    overestimates triglycerides, so use it for small oils (terpenes, aroma
    chemicals) only.

    Parameters
    ----------
    delta_total_mpa05 : float
        Total (Hildebrand) solubility parameter [MPa^0.5]

    Examples
    --------
    Mineral oil, delta about 7.5 (cal/cm3)^0.5, tabulated near 10:

    >>> round(required_hlb_vaughan_rice(7.5 * 2.0455), 1)
    10.8
    """
    d = _num(delta_total_mpa05)
    if d is None or not (10.0 <= d <= 40.0):
        raise OutOfRangeError(f"expected a solubility parameter of 10-40 MPa^0.5, got {delta_total_mpa05!r}",
                              param="delta_total_mpa05", value=delta_total_mpa05)
    delta_cal = d / 2.0455
    return ((delta_cal + 7.0) / 8.0) ** 4


# ----------------------------------------------------------------------------- systems


def _usable(e: Emulsifier, param: str = "emulsifiers") -> float:
    if e.is_biopolymer:
        ratio = f"; it is used at about {e.use_ratio_to_oil:g} g per g of oil instead" if e.use_ratio_to_oil else ""
        raise InputError(
            f"'{e.name}' is a {e.ionic_type}: HLB does not describe it, so it cannot be part of an HLB blend{ratio}. "
            "Leave it out of the HLB pool (it may still carry the emulsion on its own).",
            param=param, value=e.name, expected="emulsifiers with an HLB",
        )
    if e.hlb is None:
        raise MissingDataError(f"no HLB on record for '{e.name}': measure it in a bench series or give its value",
                               param=param, value=e.name)
    return float(e.hlb)


def pair_fractions(hlb_a: float, hlb_b: float, target: float) -> tuple[float, float]:
    r"""Mass fractions of a two-emulsifier blend that hits ``target``.

    .. math::
        w_a = \frac{\mathrm{HLB}_t - \mathrm{HLB}_b}{\mathrm{HLB}_a - \mathrm{HLB}_b}

    Examples
    --------
    Polysorbate 80 (15.0) with sorbitan monooleate (4.3) for HLB 12:

    >>> [round(x, 3) for x in pair_fractions(15.0, 4.3, 12.0)]
    [0.72, 0.28]
    """
    a, b, t = float(hlb_a), float(hlb_b), float(target)
    lo, hi = min(a, b), max(a, b)
    if not (lo - 1e-12 <= t <= hi + 1e-12):
        raise OutOfRangeError(f"target HLB {t:g} is outside what this pair can reach ({lo:g} to {hi:g})",
                              param="target", value=t)
    if a == b:
        return 1.0, 0.0
    wa = (t - b) / (a - b)
    wa = min(1.0, max(0.0, wa))
    return wa, 1.0 - wa


_TAILS = ("ricinole", "laur", "myrist", "palmit", "stear", "ole")  # longest match first


def _family(e: Emulsifier) -> str | None:
    """The fatty acid of an emulsifier, read from its name or synonyms (None if not named)."""
    for n in (e.name, *e.synonyms):
        n = n.lower()
        for t in _TAILS:
            if t in n:
                return t
    return None


@dataclass(frozen=True)
class EmulsifierSystem:
    """A blend of 2 or 3 emulsifiers of the pool that hits the target HLB."""

    names: tuple[str, ...]
    fractions: tuple[float, ...]  # mass fractions of the emulsifier blend, summing to 1
    hlbs: tuple[float, ...]
    hlb: float
    same_tail: bool  # all share one fatty acid (the classic low/high pair of one family)
    score: float  # higher is better: balance of the blend (smallest fraction)
    computed_hlb: bool = False  # some HLB is computed from an idealised structure, not measured

    def to_dict(self) -> dict:
        d = {
            "components": [{"name": n, "fraction": f, "hlb": h} for n, f, h in zip(self.names, self.fractions, self.hlbs)],
            "hlb": self.hlb,
            "same_tail": self.same_tail,
            "computed_hlb": self.computed_hlb,
        }
        if len(self.names) == 2:
            d.update(a=self.names[0], b=self.names[1], fraction_a=self.fractions[0], fraction_b=self.fractions[1])
        return d


def _triple_fractions(h: np.ndarray, target: float) -> np.ndarray | None:
    """Most balanced fractions (largest smallest fraction) of three emulsifiers for ``target``, or None.

    The blends of three that hit the target form a segment of the simplex
    whose ends have one fraction zero; the smallest fraction is concave along
    it, so the best point is an end or a crossing of two fractions.
    """
    ends = []
    for i in range(3):
        j, k = [m for m in range(3) if m != i]
        if min(h[j], h[k]) - 1e-12 <= target <= max(h[j], h[k]) + 1e-12 and h[j] != h[k]:
            w = np.zeros(3)
            w[j] = (target - h[k]) / (h[j] - h[k])
            w[k] = 1.0 - w[j]
            ends.append(np.clip(w, 0.0, 1.0))
    if len(ends) < 2:
        return None
    p, q = ends[0], max(ends[1:], key=lambda e: float(np.abs(e - ends[0]).sum()))
    cands = [0.0, 1.0]
    d = q - p
    for i, j in itertools.combinations(range(3), 2):
        den = d[i] - d[j]
        if abs(den) > 1e-15:
            s = (p[j] - p[i]) / den
            if 0.0 <= s <= 1.0:
                cands.append(s)
    best = max((p + s * d for s in cands), key=lambda w: float(w.min()))
    return best if best.min() > 1e-6 else None


def emulsifier_systems(pool: Sequence[Emulsifier], target: float, size: int = 2, min_fraction: float = 0.0) -> list[EmulsifierSystem]:
    """Every pair (``size=2``) or triple (``size=3``) of ``pool`` that hits ``target``, best first.

    Ranked by: one fatty-acid family first (practitioners blend a low- and a
    high-HLB emulsifier of one family), then systems whose HLB values are
    measured (or from analytical numbers) before those computed from an
    idealised structure, then by balance (the larger the smallest fraction,
    the less the blend hangs on one component), then by name.  A target outside the pool's HLB range raises
    :class:`OutOfRangeError` naming the range; a biopolymer in the pool raises
    :class:`InputError`.

    Parameters
    ----------
    pool : sequence of Emulsifier
        The emulsifiers allowed [-]
    target : float
        Required HLB [-]
    size : int
        2 for pairs, 3 for triples [-]
    min_fraction : float
        Drop systems in which a component is below this mass fraction [-]

    Examples
    --------
    >>> pool = [Emulsifier("polysorbate 80", 15.0, synonyms=("polyoxyethylene (20) sorbitan monooleate",)),
    ...         Emulsifier("sorbitan monooleate", 4.3), Emulsifier("sorbitan monolaurate", 8.6)]
    >>> best = emulsifier_systems(pool, 12.0)[0]
    >>> best.names, [round(f, 2) for f in best.fractions]
    (('polysorbate 80', 'sorbitan monooleate'), [0.72, 0.28])
    """
    if size not in (2, 3):
        raise InputError(f"expected 2 (pairs) or 3 (triples), got {size!r}", param="size", value=size)
    t = _num(target)
    if t is None or not (0 <= t <= 40):
        raise OutOfRangeError(f"expected a target HLB between 0 and 40, got {target!r}", param="target", value=target)
    hl = [_usable(e) for e in pool]
    if len(pool) < size:
        raise InputError(f"need at least {size} emulsifiers with an HLB in the pool, got {len(pool)}",
                         param="emulsifiers", expected=f"at least {size} emulsifiers")
    lo, hi = min(hl), max(hl)
    if not (lo <= t <= hi):
        raise OutOfRangeError(
            f"target HLB {t:g} is outside what the pool can reach ({lo:g} to {hi:g}, "
            f"from '{pool[hl.index(lo)].name}' to '{pool[hl.index(hi)].name}'): add an emulsifier "
            f"{'below' if t < lo else 'above'} {t:g}",
            param="emulsifiers", value=t,
        )
    out = []
    for idx in itertools.combinations(range(len(pool)), size):
        h = np.array([hl[i] for i in idx])
        if not (h.min() - 1e-12 <= t <= h.max() + 1e-12) or h.max() - h.min() < 1e-9:
            continue
        if size == 2:
            w = np.array(pair_fractions(h[0], h[1], t))
        else:
            w = _triple_fractions(h, t)
            if w is None:
                continue
        if w.min() < min_fraction - 1e-12 or (size == 2 and w.min() <= 1e-9):
            continue
        # present the higher-HLB emulsifier first
        order = np.argsort(-h, kind="stable")
        names = tuple(pool[idx[k]].name for k in order)
        fams = {_family(pool[i]) for i in idx}
        out.append(
            EmulsifierSystem(
                names=names,
                fractions=tuple(float(w[k]) for k in order),
                hlbs=tuple(float(h[k]) for k in order),
                hlb=float(h @ w),
                same_tail=len(fams) == 1 and None not in fams,
                score=float(w.min()),
                computed_hlb=any(pool[i].hlb_method == "Griffin structure" for i in idx),
            )
        )
    out.sort(key=lambda s: (not s.same_tail, s.computed_hlb, -round(s.score, 9), s.names))
    return out


# ----------------------------------------------------------------------------- bench series


@dataclass(frozen=True)
class BenchBlend:
    hlb: float
    fraction_low: float
    fraction_high: float
    grams_low: float
    grams_high: float
    grams_oil: float
    grams_water: float


@dataclass(frozen=True)
class BenchSeries:
    low: str
    high: str
    hlb_low: float
    hlb_high: float
    batch_g: float
    emulsifier_wt_pct: float
    oil_wt_pct: float
    blends: tuple[BenchBlend, ...]

    def to_dict(self) -> dict:
        d = asdict(self)
        d["blends"] = [asdict(b) for b in self.blends]
        return d


def bench_series(
    low: Emulsifier,
    high: Emulsifier,
    n: int = 9,
    hlb_from: float | None = None,
    hlb_to: float | None = None,
    batch_g: float = 100.0,
    emulsifier_wt_pct: float = 5.0,
    oil_wt_pct: float = 20.0,
) -> BenchSeries:
    """A series of ``n`` emulsions spanning an HLB range with two emulsifiers.

    Total emulsifier and oil stay fixed; only the low/high ratio moves
    (the usual way to measure a required HLB).  Grams are for one batch of
    ``batch_g``; the rest of the batch is water phase.

    Examples
    --------
    Hassan et al. (2018) made nine blends at HLB 5.37-13.93 (5 % surfactant);
    those are 10 % ... 90 % polysorbate 80 (15.0) in sorbitan monooleate (4.3):

    >>> s = bench_series(Emulsifier("sorbitan monooleate", 4.3), Emulsifier("polysorbate 80", 15.0),
    ...                  n=9, hlb_from=5.37, hlb_to=13.93)
    >>> [round(b.hlb, 2) for b in s.blends][:3], round(s.blends[4].fraction_high, 2)
    ([5.37, 6.44, 7.51], 0.5)
    """
    hl, hh = _usable(low, "series"), _usable(high, "series")
    if hl >= hh:
        raise InputError(f"'{low.name}' (HLB {hl:g}) must have a lower HLB than '{high.name}' (HLB {hh:g})",
                         param="series", expected="the low-HLB emulsifier first")
    if not isinstance(n, (int, np.integer)) or n < 2 or n > 50:
        raise InputError(f"expected a whole number of blends from 2 to 50, got {n!r}", param="n", value=n)
    a = hl if hlb_from is None else float(hlb_from)
    b = hh if hlb_to is None else float(hlb_to)
    if not (hl <= a < b <= hh):
        raise OutOfRangeError(f"HLB range {a:g}-{b:g} must lie within the pair's reach {hl:g}-{hh:g}, low end first",
                              param="span", value=(a, b), expected=f"a range within {hl:g}-{hh:g}")
    for v, nm in ((batch_g, "batch_g"), (emulsifier_wt_pct, "emulsifier_wt_pct"), (oil_wt_pct, "oil_wt_pct")):
        if _num(v) is None or v <= 0:
            raise InputError(f"expected a positive number, got {v!r}", param=nm, value=v)
    if emulsifier_wt_pct + oil_wt_pct >= 100:
        raise InputError(f"emulsifier ({emulsifier_wt_pct:g} %) plus oil ({oil_wt_pct:g} %) leave no water phase",
                         param="oil_wt_pct", value=oil_wt_pct)
    blends = []
    g_em = batch_g * emulsifier_wt_pct / 100.0
    g_oil = batch_g * oil_wt_pct / 100.0
    for h in np.linspace(a, b, n):
        wl, wh = pair_fractions(hl, hh, float(h))
        blends.append(BenchBlend(float(h), wl, wh, g_em * wl, g_em * wh, g_oil, batch_g - g_em - g_oil))
    return BenchSeries(low.name, high.name, hl, hh, float(batch_g), float(emulsifier_wt_pct), float(oil_wt_pct), tuple(blends))


@dataclass(frozen=True)
class RequiredHLBFit:
    """Required HLB fitted from the stability scores of a bench series."""

    required_hlb: float | None
    interval: tuple[float, float] | None  # 95 % interval [-]
    best_tested: float  # the tested HLB with the best score
    success: bool
    message: str
    n: int

    def to_dict(self) -> dict:
        return asdict(self)


def _vertex_interval(design: np.ndarray, s: np.ndarray, coef: np.ndarray, vertex: float) -> tuple[float, float] | None:
    """95 % interval of a fitted parabola's vertex by the delta method (t quantile on n - 3
    degrees of freedom); None when there are as many blends as parameters."""
    dof = design.shape[0] - 3
    if dof <= 0:
        return None
    from scipy.stats import t as student_t

    _, c1, c2 = coef
    resid = s - design @ coef
    sigma2 = float(resid @ resid) / dof
    cov = sigma2 * np.linalg.pinv(design.T @ design)
    grad = np.array([0.0, -1.0 / (2 * c2), c1 / (2 * c2 * c2)])
    se = math.sqrt(max(float(grad @ cov @ grad), 0.0))
    q = float(student_t.ppf(0.975, dof))
    return (vertex - q * se, vertex + q * se)


def fit_required_hlb(hlbs: Sequence[float], scores: Sequence[float], better: str = "high") -> RequiredHLBFit:
    r"""Fit the required HLB back from the scores of a bench series.

    A parabola is fitted by least squares to score against HLB; its vertex
    is the required HLB, with a 95 % interval by the delta method (t
    quantile on n - 3 degrees of freedom).  A score set with no maximum (or
    minimum for ``better="low"``, e.g. droplet size) inside the tested range
    is data, not an error: ``success`` is False and the message says which way
    to extend the series.

    .. math::
        s = c_0 + c_1 h + c_2 h^2, \qquad \mathrm{rHLB} = -\frac{c_1}{2 c_2}

    Parameters
    ----------
    hlbs : sequence of float
        HLB of each blend tested [-]
    scores : sequence of float
        Stability score of each (e.g. 1 stable / 0 not, or hours to
        creaming); droplet size or cream height with ``better="low"`` [-]
    better : {"high", "low"}
        Whether a higher score means a more stable emulsion.

    Examples
    --------
    Hassan et al. (2018): of nine blends only those at 9.65, 10.72 and 11.79
    were stable:

    >>> h = [5.37, 6.44, 7.51, 8.58, 9.65, 10.72, 11.79, 12.86, 13.93]
    >>> fit = fit_required_hlb(h, [0, 0, 0, 0, 1, 1, 1, 0, 0])
    >>> fit.success, round(fit.required_hlb, 1)
    (True, 10.2)
    """
    if better not in ("high", "low"):
        raise InputError(f"expected 'high' or 'low', got {better!r}", param="better", value=better)
    h = np.asarray(hlbs, dtype=float)
    s = np.asarray(scores, dtype=float)
    if h.shape != s.shape or h.ndim != 1:
        raise InputError(f"{h.size} HLB values but {s.size} scores: give one score per blend", param="scores")
    if not (np.all(np.isfinite(h)) and np.all(np.isfinite(s))):
        raise InputError("HLB values and scores must be numbers", param="scores")
    if h.size < 4 or np.unique(h).size < 4:
        raise InputError(f"need at least 4 blends at different HLB to fit a required HLB, got {np.unique(h).size}",
                         param="scores", expected="scores of at least 4 blends at different HLB")
    if better == "low":
        s = -s
    best = float(h[int(np.argmax(s))])
    if np.ptp(s) == 0:
        return RequiredHLBFit(None, None, best, False, "all blends scored the same: the series does not locate a required HLB", int(h.size))
    hc = h.mean()
    x = h - hc
    design = np.column_stack([np.ones_like(x), x, x * x])
    coef, *_ = np.linalg.lstsq(design, s, rcond=None)
    c0, c1, c2 = coef
    lo, hi = float(h.min()), float(h.max())
    if c2 >= 0:
        edge = "higher" if s[np.argmax(h)] > s[np.argmin(h)] else "lower"
        return RequiredHLBFit(
            None, None, best, False,
            f"the scores have no optimum inside the tested range {lo:g}-{hi:g}: extend the series to {edge} HLB", int(h.size),
        )
    vertex = -c1 / (2 * c2)
    rhlb = float(vertex + hc)
    interval = _vertex_interval(design, s, coef, rhlb)
    if not (lo <= rhlb <= hi):
        edge = "higher" if rhlb > hi else "lower"
        return RequiredHLBFit(
            rhlb, interval, best, False,
            f"the fitted optimum {rhlb:.2f} lies outside the tested range {lo:g}-{hi:g}: extend the series to {edge} HLB",
            int(h.size),
        )
    msg = "parabola fitted to the scores; 95 % interval by the delta method"
    if interval is None:
        msg += " (no interval: as many parameters as blends)"
    return RequiredHLBFit(rhlb, interval, best, True, msg, int(h.size))


# ----------------------------------------------------------------------------- catalog edge


def _find(cat, table: str, name: str, param: str) -> dict:
    """The row of ``table`` named ``name``; an unknown name is an error about ``param``."""
    try:
        return cat.find(table, name)
    except UnknownNameError as exc:
        exc.param = param
        raise


def pool_from_catalog(cat, names: Sequence[str], param: str = "emulsifiers") -> list[Emulsifier]:
    """The emulsifiers named (forgiving lookup in ``tables/emulsifiers.csv``), in the order given.

    ``param`` names the input in an error (an unknown name, one named twice).
    """
    out = []
    seen = set()
    for n in names:
        row = _find(cat, "emulsifiers", n, param)
        if row["name"] in seen:
            raise InputError(f"'{n}' names '{row['name']}' a second time", param=param, value=n)
        seen.add(row["name"])
        out.append(emulsifier_from_row(row))
    return out


def all_emulsifiers(cat) -> list[Emulsifier]:
    """The default pool: every nonionic or zwitterionic emulsifier of the table with an HLB.

    Ionic emulsifiers are on Davies' scale (up to 40) and do not mix
    linearly with nonionics on Griffin's, and biopolymers have no HLB: name
    them explicitly to use them.
    """
    return [e for e in (emulsifier_from_row(r) for r in cat.table("emulsifiers").to_dict("records"))
            if e.ionic_type in ("nonionic", "zwitterionic") and e.hlb is not None]


def _oil_row(cat, name: str, param: str = "oil") -> tuple[str, dict]:
    """(table, row) of an oil-phase ingredient: oils first, then weighting agents."""
    try:
        return "oils", cat.find("oils", name)
    except UnknownNameError as first:
        try:
            return "weighting_agents", cat.find("weighting_agents", name)
        except UnknownNameError:
            raise UnknownNameError(name, "oil-phase ingredient (tables/oils.csv or tables/weighting_agents.csv)",
                                   first.suggestions, param=param) from None


def oil_phase_required_hlb(cat, amounts: Sequence[tuple[str, float]], overrides: Mapping[str, float] | None = None) -> OilPhaseHLB:
    """Required HLB of an oil phase named as (name, amount) pairs, from the tables.

    Each part's value comes from, in order: ``overrides`` (the user's own), the
    oils table, or an estimate from the HSP of the liquid named in its
    ``hsp_as`` column (Vaughan & Rice [4]_).  A part with none of these raises
    :class:`MissingDataError` naming it.
    """
    overrides = {k.strip().lower(): float(v) for k, v in (overrides or {}).items()}
    comps, basis, ranges = [], [], []
    for name, amount in amounts:
        table, row = _oil_row(cat, name)
        key = row["name"]
        given = next((overrides[k] for k in (name.strip().lower(), key.lower()) if k in overrides), None)
        r, b, g = (given, "given", None) if given is not None else _table_rhlb(cat, table, row)
        comps.append((key, amount, r))
        basis.append(b or "none")
        ranges.append(g)
    return required_hlb(comps, basis, ranges)


def _table_rhlb(cat, table: str, row: Mapping) -> tuple[float | None, str, tuple[float, float] | None]:
    """(rHLB, where it comes from, its range or None) of an oil-phase row: the oils table's value
    (with its range where the row gives one), else the Vaughan & Rice estimate from the HSP of the
    liquid named in ``hsp_as`` (+/- :data:`ESTIMATE_SPREAD`), else nothing."""
    if table != "oils":
        return None, "", None
    if _num(row.get("rhlb_ow")) is not None:
        lo, hi = _num(row.get("rhlb_ow_min")), _num(row.get("rhlb_ow_max"))
        return float(row["rhlb_ow"]), f"tabulated ({row.get('rhlb_source')})", (lo, hi) if None not in (lo, hi) else None
    if str(row.get("hsp_as") or ""):
        s = cat.solvent(row["hsp_as"], library=False)
        dt = float(np.sqrt(np.sum(np.asarray(s.hsp, dtype=float) ** 2)))
        r = required_hlb_vaughan_rice(dt)
        return r, f"estimated (Vaughan & Rice 1990 from the HSP of {s.name})", (r - ESTIMATE_SPREAD, r + ESTIMATE_SPREAD)
    return None, "", None
