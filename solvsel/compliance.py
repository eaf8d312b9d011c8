"""Food-use status, legal limits, hazard classes and cautions.

This module answers the questions a formulator must settle before a carrier
or an extraction solvent is worth a bench trial: is it allowed for this use in
this jurisdiction, under which rule and condition; what limit applies to the
food as consumed (summed from all sources where the rule says so); what is its
flammability class; and which cautions go with it.  The rules live in
``tables/regulations.csv`` (one row per substance, jurisdiction, rule and use,
each with its source, confidence and checked-on date), the food categories
in ``tables/food_categories.csv`` and the example claim rules in
``tables/claims.csv``.

Missing data is never taken as permission: a substance with no row for a use
and jurisdiction has the status ``"no data"``, and for the EU extraction
solvents (a positive list) a solvent that is not listed is ``"not permitted"``.

The dose arithmetic (levels along a dilution chain, maximum dose, residues,
claim flags) is in :func:`check_dose` and :func:`carrier_dose_check`; the
formulation and the chain are modelled in :mod:`solvsel.formulation`.

Every result is an estimate for planning bench work: the legal texts in force,
local codes and licensed practice decide.

References
----------
.. [1] United Nations. *Globally Harmonized System of Classification and
   Labelling of Chemicals (GHS)*, Rev. 10, 2023, chapter 2.6 (flammable
   liquids) and chapters 2.2 / 2.5 (flammable gases, gases under pressure).
.. [2] Regulation (EC) No 1333/2008 on food additives, Annexes II and III.
.. [3] Directive 2009/32/EC on extraction solvents used in the production of
   foodstuffs and food ingredients, Annex I.
.. [4] US Code of Federal Regulations, Title 21, Parts 172, 173 and 184.
.. [5] ICH Q3C(R9) Impurities: guideline for residual solvents, 2024.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import asdict, dataclass, field
from typing import Any, Iterable, Mapping, Sequence

from .errors import InputError, MissingDataError, UnknownNameError

__all__ = [
    "FOOD_JURISDICTIONS",
    "JURISDICTIONS",
    "DEFER",
    "Limit",
    "FoodCategory",
    "Hazard",
    "FoodStatus",
    "limits",
    "food_categories",
    "resolve_category",
    "category_lineage",
    "hazard_class",
    "solvent_cautions",
    "food_status",
]

#: Jurisdictions in tables/regulations.csv (ICH is a pharmaceutical guideline, shown as a reference).
JURISDICTIONS = ("EU", "US", "ICH")
#: Jurisdictions with food law in the table.
FOOD_JURISDICTIONS = ("EU", "US")

#: The closing caution of every result.
DEFER = (
    "Estimates for planning bench work, not a safety or regulatory sign-off: defer to local codes, "
    "the regulations in force and licensed practice."
)

#: Uses the food-status check knows.
USES = ("carrier", "extraction", "bench")

#: Where a jurisdiction's rule for a use is a positive list, so that a
#: substance not listed is not permitted (rather than "no data").
POSITIVE_LISTS = {
    ("EU", "extraction"): "Dir. 2009/32/EC Annex I (positive list of extraction solvents)",
}

#: Rule uses that set limits in the food as consumed (carriers, additives).
FINISHED_FOOD_USES = ("carrier", "weighting", "emulsifier")

_STATUS_ORDER = {"permitted": 3, "conditional": 2, "no data": 1, "not permitted": 0, "bench only": -1}


# ----------------------------------------------------------------------------- tables


def _catalog(cat):
    if cat is None:
        from .catalog import load_catalog

        return load_catalog()
    return cat


def _text(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float) and math.isnan(v):
        return ""
    return str(v).strip()


def _number(v) -> float | None:
    if v is None or v == "":
        return None
    try:
        x = float(v)
    except (TypeError, ValueError):
        return None
    return None if math.isnan(x) else x


def _norm(s: str) -> str:
    return re.sub(r"[\s_]+", " ", str(s).strip().lower())


def _check_jurisdiction(jurisdiction, allowed=JURISDICTIONS, what="jurisdiction") -> str | None:
    if jurisdiction is None:
        return None
    j = str(jurisdiction).strip().upper()
    if j not in allowed:
        raise InputError(f"{what}: expected one of {', '.join(allowed)}, got '{jurisdiction}'")
    return j


#: Conversion of a limit's unit to mg/kg (mass basis) or mg/L (volume basis).
_UNIT_BASIS = {"mg/kg": ("mass", 1.0), "ppm": ("mass", 1.0), "%w/w": ("mass", 1e4), "mg/L": ("volume", 1.0)}


@dataclass(frozen=True)
class Limit:
    """One row of tables/regulations.csv.

    ``limit`` is in ``unit`` (mg/kg, ppm = mg/kg, %w/w, or mg/L); use
    :attr:`basis` and :attr:`limit_mg` for the comparison basis.  ``flagged``
    is true when the row is not confirmed against the official text
    (confidence "secondary, verify" or "from memory").
    """

    substance: str
    cas: str
    ins: str
    jurisdiction: str
    rule: str
    use: str
    condition: str
    food_category: str
    applies_to: str
    limit: float | None
    unit: str
    status: str
    group: str
    checked_on: str
    confidence: str
    source: tuple[str, ...]
    note: str
    origin: str = "bundled"

    @property
    def basis(self) -> str | None:
        """"mass" (compare with mg/kg), "volume" (compare with mg/L) or None (no number)."""
        return _UNIT_BASIS[self.unit][0] if self.unit in _UNIT_BASIS and self.limit is not None else None

    @property
    def limit_mg(self) -> float | None:
        """The limit in mg/kg (mass basis) or mg/L (volume basis)."""
        if self.basis is None:
            return None
        return self.limit * _UNIT_BASIS[self.unit][1]

    @property
    def flagged(self) -> bool:
        return self.confidence != "checked"

    @property
    def in_force(self) -> bool:
        return self.status != "revoked"

    def describe(self) -> str:
        """One line: rule, condition, limit and how far it is confirmed."""
        if self.limit is not None:
            value = f"{self.limit:g} {self.unit}"
        else:
            value = self.status
        where = self.food_category if self.food_category != "food" else "all foods"
        flag = "" if not self.flagged else f" [{self.confidence}]"
        return f"{self.jurisdiction} {self.rule}: {value} ({self.applies_to}, {where}; {self.condition}){flag}"

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["source"] = list(self.source)
        d["basis"] = self.basis
        d["flagged"] = self.flagged
        return d


def _limit_from_row(r: Mapping[str, Any]) -> Limit:
    return Limit(
        substance=_text(r.get("substance")),
        cas=_text(r.get("cas")),
        ins=_text(r.get("ins")),
        jurisdiction=_text(r.get("jurisdiction")),
        rule=_text(r.get("rule")),
        use=_text(r.get("use")),
        condition=_text(r.get("condition")),
        food_category=_text(r.get("food_category")) or "food",
        applies_to=_text(r.get("applies_to")),
        limit=_number(r.get("limit")),
        unit=_text(r.get("unit")),
        status=_text(r.get("status")),
        group=_text(r.get("group")),
        checked_on=_text(r.get("checked_on")),
        confidence=_text(r.get("confidence")),
        source=tuple(s for s in _text(r.get("source")).split(";") if s),
        note=_text(r.get("note")),
        origin=_text(r.get("origin")) or "bundled",
    )


_ROWS_CACHE: dict[int, tuple[Limit, ...]] = {}


def _all_limits(cat) -> tuple[Limit, ...]:
    cat = _catalog(cat)
    key = id(cat)
    if key not in _ROWS_CACHE:
        df = cat.table("regulations")
        _ROWS_CACHE[key] = tuple(_limit_from_row(r) for r in df.to_dict("records"))
    return _ROWS_CACHE[key]


# ----------------------------------------------------------------------------- food categories


@dataclass(frozen=True)
class FoodCategory:
    """A food category of tables/food_categories.csv (a tree rooted at "food")."""

    name: str
    parent: str
    synonyms: tuple[str, ...]
    eu_code: str
    typical_density_g_cm3: float | None
    source: tuple[str, ...]
    note: str

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["synonyms"] = list(self.synonyms)
        d["source"] = list(self.source)
        return d


def food_categories(cat=None) -> dict[str, FoodCategory]:
    """All food categories by name, in table order."""
    cat = _catalog(cat)
    out = {}
    for r in cat.table("food_categories").to_dict("records"):
        fc = FoodCategory(
            name=_text(r["category"]),
            parent=_text(r.get("parent")),
            synonyms=tuple(s for s in _text(r.get("synonyms")).split(";") if s),
            eu_code=_text(r.get("eu_code")),
            typical_density_g_cm3=_number(r.get("typical_density_g_cm3")),
            source=tuple(s for s in _text(r.get("source")).split(";") if s),
            note=_text(r.get("note")),
        )
        out[fc.name] = fc
    return out


def resolve_category(cat, name: str) -> FoodCategory:
    """The food category named ``name`` (name, synonym or EU category number; case and spacing forgiven).

    An unknown name raises :class:`UnknownNameError` listing the known
    categories, closest first.
    """
    cats = food_categories(cat)
    if name is None or not str(name).strip():
        raise InputError("--category: expected a food category, got nothing; known: " + ", ".join(cats))
    key = _norm(name)
    index = {}
    for fc in cats.values():
        for k in (fc.name, *fc.synonyms, fc.eu_code):
            if k and _norm(k) not in index:
                index[_norm(k)] = fc.name
    if key in index:
        return cats[index[key]]
    names = list(cats)
    ranked = sorted(names, key=lambda n: -difflib.SequenceMatcher(None, key, _norm(n)).ratio())
    raise UnknownNameError(str(name), "food category", tuple(ranked))


def category_lineage(cat, name: str) -> list[str]:
    """``[category, parent, ..., "food"]``: the categories whose rules apply, most specific first."""
    cats = food_categories(cat)
    fc = resolve_category(cat, name)
    out = [fc.name]
    while cats[out[-1]].parent:
        parent = cats[out[-1]].parent
        if parent in out or parent not in cats:  # a broken tree is a table error, not a loop
            raise InputError(f"tables/food_categories.csv: parent '{parent}' of '{out[-1]}' is unknown or circular")
        out.append(parent)
    return out


# ----------------------------------------------------------------------------- limits


def _cas_of(cat, substance: str) -> str | None:
    """CAS of a name through the catalog's forgiving lookup, else None."""
    try:
        return cat.solvent(substance, library=False).cas or None
    except Exception:
        pass
    for table in ("solutes", "weighting_agents", "emulsifiers"):
        try:
            row = cat.find(table, substance)
        except Exception:
            continue
        cas = _text(row.get("cas"))
        if cas:
            return cas
    return None


def limits(
    cat=None,
    cas: str | None = None,
    substance: str | None = None,
    jurisdiction: str | None = None,
    category: str | None = None,
    applies_to: str | Sequence[str] | None = None,
    use: str | Sequence[str] | None = None,
    include_revoked: bool = False,
) -> list[Limit]:
    """Rows of tables/regulations.csv that apply, as :class:`Limit` records.

    Parameters
    ----------
    cat : Catalog or None
        The catalog (None: the bundled tables).
    cas : str, optional
        CAS number of the substance (the join key).
    substance : str, optional
        Name of the substance; matched against the table's names and, through
        the catalog, against the names and synonyms of the other tables.
    jurisdiction : {"EU", "US", "ICH"}, optional
    category : str, optional
        Food category of tables/food_categories.csv.  A row for a parent
        category applies to its children, but where the same rule has a row
        for a more specific category that row replaces the general one (e.g.
        21 CFR 184.1666: 5 % in alcoholic beverages instead of 2 % in "all other
        foods").
    applies_to, use : str or list of str, optional
        Filters on those columns.
    include_revoked : bool
        Also return rows whose status is "revoked" (history, never checked).

    Examples
    --------
    The US limit of propylene glycol in a food with no category of its own,
    21 CFR 184.1666(c): 2.0 % as served.

    >>> [(l.rule, l.limit, l.unit) for l in limits(cas="57-55-6", jurisdiction="US", category="sugar")]
    [('21 CFR 184.1666', 2.0, '%w/w')]
    """
    cat = _catalog(cat)
    jur = _check_jurisdiction(jurisdiction)
    rows = [r for r in _all_limits(cat) if include_revoked or r.in_force]
    if cas is None and substance is not None:
        key = _norm(substance)
        named = [r for r in rows if _norm(r.substance) == key]
        if named:
            rows = named
        else:
            cas = _cas_of(cat, substance)
            if cas is None:
                return []
    if cas is not None:
        rows = [r for r in rows if r.cas == cas.strip()]
    if jur is not None:
        rows = [r for r in rows if r.jurisdiction == jur]
    for col, want in (("applies_to", applies_to), ("use", use)):
        if want is not None:
            wanted = {want} if isinstance(want, str) else set(want)
            rows = [r for r in rows if getattr(r, col) in wanted]
    if category is not None:
        lineage = category_lineage(cat, category)
        rank = {c: i for i, c in enumerate(lineage)}
        rows = [r for r in rows if r.food_category in rank]
        # a status row ("not permitted", GMP) and a numeric row for the food as consumed
        # compete for the same place; residue rows are compared only with residue rows
        def key(r):
            level = "food" if r.applies_to in ("status", "finished food") else r.applies_to
            return (r.jurisdiction, r.rule, r.use, level, r.cas or r.substance)

        best: dict[tuple, int] = {}
        for r in rows:
            best[key(r)] = min(best.get(key(r), 99), rank[r.food_category])
        rows = [r for r in rows if rank[r.food_category] == best[key(r)]]
    return rows


# ----------------------------------------------------------------------------- hazard classes


@dataclass(frozen=True)
class Hazard:
    """A GHS physical-hazard class derived from flash point and boiling point.

    ``kind`` is "flammable liquid", "flammable gas" or "gas under pressure";
    ``category`` the GHS category (1-4 for flammable liquids, 1 for flammable
    gases, None for gases under pressure).
    """

    kind: str
    category: int | None
    hazard_statement: str
    signal_word: str
    label: str
    basis: str

    def to_dict(self) -> dict[str, Any]:
        return asdict(self)


_FL_LIQ = {
    1: ("H224", "Danger", "Extremely flammable liquid and vapour"),
    2: ("H225", "Danger", "Highly flammable liquid and vapour"),
    3: ("H226", "Warning", "Flammable liquid and vapour"),
    4: ("H227", "Warning", "Combustible liquid"),
}


def hazard_class(flash_C: float | None, bp_C: float | None, flammable: bool | None = None, gas: bool | None = None) -> Hazard | None:
    """GHS class of a liquid from its closed-cup flash point and initial boiling point.

    Flammable liquids (GHS chapter 2.6) [1]_:

    ====  ===========================================  ==========
    cat.  criteria                                      statement
    ====  ===========================================  ==========
    1     flash point < 23 C and initial bp <= 35 C     H224
    2     flash point < 23 C and initial bp > 35 C      H225
    3     23 C <= flash point <= 60 C                   H226
    4     60 C < flash point <= 93 C                    H227
    ====  ===========================================  ==========

    Category 4 exists in the GHS but not in the EU CLP Regulation or in
    transport rules.  A substance that boils at or below 20 C at 101.3 kPa is
    a gas, not a liquid (GHS chapter 1.2): it is a flammable gas (category 1,
    H220) when it burns, and in every case a gas under pressure (H280; H281
    when refrigerated).

    Parameters
    ----------
    flash_C : float or None
        Closed-cup flash point [C]; None when not flammable or not on record.
    bp_C : float or None
        Initial (normal) boiling point [C].
    flammable : bool, optional
        Whether the substance burns, where the table says so (needed for
        gases with no flash point on record, e.g. propane vs carbon dioxide).
    gas : bool, optional
        Force the gas classification (e.g. carbon dioxide, which sublimes and
        has no normal boiling point).

    Returns
    -------
    Hazard or None
        None when not flammable and not a gas.  A flammable liquid whose flash
        point is not on record gets category None and says so.

    Examples
    --------
    Ethanol (flash point 12-13 C, bp 78 C) is category 2, H225, as in its
    harmonised EU classification (from memory); diethyl ether (flash point
    -45 C, bp 34.6 C) is category 1, H224.

    >>> hazard_class(13.0, 78.4).hazard_statement
    'H225'
    >>> hazard_class(-45.0, 34.6).category
    1
    >>> hazard_class(99.0, 187.3) is None   # propylene glycol
    True
    """
    if flash_C is not None and not math.isfinite(float(flash_C)):
        flash_C = None
    if bp_C is not None and not math.isfinite(float(bp_C)):
        bp_C = None
    is_gas = bool(gas) or (bp_C is not None and bp_C <= 20.0)
    if is_gas:
        burns = flammable if flammable is not None else flash_C is not None
        if burns:
            return Hazard(
                "flammable gas", 1, "H220; H280", "Danger",
                "flammable gas (GHS category 1, H220 extremely flammable gas) and gas under pressure (H280)",
                "boils at or below 20 C: a gas (GHS 1.2); burns",
            )
        return Hazard(
            "gas under pressure", None, "H280", "Warning",
            "gas under pressure (GHS H280; H281 refrigerated liquefied gas); not flammable; asphyxiant in closed rooms",
            "a gas at 20 C and 101.3 kPa (GHS 1.2); does not burn",
        )
    if flash_C is None:
        if flammable:
            return Hazard(
                "flammable liquid", None, "", "Danger",
                "flammable liquid (flash point not on record: class not determined; treat as highly flammable)",
                "the table says it burns but gives no flash point",
            )
        return None
    fp = float(flash_C)
    if fp < 23.0:
        if bp_C is None:
            cat_ = 1
            basis = f"flash point {fp:g} C < 23 C; boiling point not on record, so the stricter category 1 is given"
        else:
            cat_ = 1 if bp_C <= 35.0 else 2
            basis = f"flash point {fp:g} C < 23 C and initial boiling point {bp_C:g} C {'<=' if cat_ == 1 else '>'} 35 C"
    elif fp <= 60.0:
        cat_, basis = 3, f"23 C <= flash point {fp:g} C <= 60 C"
    elif fp <= 93.0:
        cat_, basis = 4, f"60 C < flash point {fp:g} C <= 93 C (GHS only; not a class in EU CLP or transport rules)"
    else:
        return None
    h, word, text = _FL_LIQ[cat_]
    return Hazard("flammable liquid", cat_, h, word, f"flammable liquid, GHS category {cat_} ({h} {text.lower()})", basis)


# ----------------------------------------------------------------------------- cautions

# CAS numbers of the families that carry their own cautions.
_HYDROCARBONS = {
    "74-98-6": "propane", "106-97-8": "n-butane", "75-28-5": "isobutane", "109-66-0": "n-pentane",
    "110-54-3": "n-hexane", "142-82-5": "n-heptane", "110-82-7": "cyclohexane", "108-87-2": "methylcyclohexane",
    "8032-32-4": "petroleum ether",
}
_LIQUEFIED_GASES = {"74-98-6", "106-97-8", "75-28-5", "115-10-6", "124-38-9", "10024-97-2", "811-97-2"}
_CHLORINATED = {
    "75-09-2", "67-66-3", "56-23-5", "79-01-6", "127-18-4", "107-06-2", "71-55-6", "75-35-4", "540-59-0", "108-90-7",
}
_NONFLAMMABLE_GASES = {"124-38-9", "10024-97-2", "811-97-2"}
_ETHANOL_CAS = "64-17-5"
_WATER_CAS = "7732-18-5"


def _get(obj, key, default=None):
    if isinstance(obj, Mapping):
        return obj.get(key, default)
    return getattr(obj, key, default)


def _ethanol_strength(name: str) -> float | None:
    """Volume fraction of ethanol in a table row named like 'ethanol 40% v/v', else None."""
    m = re.match(r"^\s*ethanol\s+(\d+(?:\.\d+)?)\s*%\s*v/v\s*$", str(name or ""), re.I)
    return float(m.group(1)) / 100.0 if m else None


def solvent_cautions(solvent, use: str | None = None, cat=None) -> list[str]:
    """The usual cautions for a liquid, most serious first, ending with :data:`DEFER`.

    Parameters
    ----------
    solvent : Solvent or mapping
        Needs ``name`` and ``cas``; uses ``flash_C``, ``bp_C`` and ``flammable``
        where present.
    use : {"carrier", "extraction", "bench"}, optional
        The intended use; extraction adds the equipment and room cautions.
    cat : Catalog, optional
        Used to look up the ICH Q3C class of the solvent.

    Examples
    --------
    >>> c = solvent_cautions({"name": "n-hexane", "cas": "110-54-3", "flash_C": -22, "bp_C": 68.7}, use="extraction")
    >>> any("gas detection" in x for x in c) and c[-1] == DEFER
    True
    """
    if use is not None and use not in USES:
        raise InputError(f"use: expected one of {', '.join(USES)}, got '{use}'")
    name = _text(_get(solvent, "name")) or "this liquid"
    cas = _text(_get(solvent, "cas"))
    strength = _ethanol_strength(name)
    is_ethanol = cas == _ETHANOL_CAS or strength is not None
    flash = _number(_get(solvent, "flash_C"))
    bp = _number(_get(solvent, "bp_C"))
    flammable = _get(solvent, "flammable")
    if isinstance(flammable, str):
        flammable = {"yes": True, "no": False}.get(flammable.lower())
    if cas in _NONFLAMMABLE_GASES:
        flammable = False
    out: list[str] = []
    hz = hazard_class(flash, bp, flammable=flammable, gas=cas in _LIQUEFIED_GASES or None)
    if hz is not None:
        if hz.kind == "gas under pressure":
            out.append(f"{name}: {hz.label}.")
        else:
            out.append(
                f"{name}: {hz.label}; keep from ignition sources, ground and bond containers, store and ship "
                "as a flammable under the local fire code."
            )
    if cas in _HYDROCARBONS or cas == "115-10-6":
        if use in (None, "extraction"):
            out.append(
                f"{name}: hydrocarbon or ether extraction belongs in a code-compliant room (hazardous-location "
                "classification, ventilation) with listed or engineer-reviewed closed-loop equipment and gas "
                "detection; permits and quantity limits of the local fire and building codes apply."
            )
    if cas in _LIQUEFIED_GASES and cas != "124-38-9":
        out.append(f"{name}: liquefied gas; vessels, hoses and fittings must be rated for its vapour pressure.")
    if cas == "124-38-9":
        out.append(
            "carbon dioxide: pressure and asphyxiation hazard; rated vessels with relief devices, CO2 monitoring "
            "and ventilation in the room; never in unrated or household equipment."
        )
    if cas == "110-54-3":
        out.append("n-hexane: neurotoxic on repeated exposure; occupational exposure limits and residue limits apply.")
    if cas == "67-56-1":
        out.append(
            "methanol: toxic by ingestion, inhalation and skin contact; not a food carrier; occupational exposure "
            "limits and strict residue limits apply."
        )
    if cas in _CHLORINATED:
        out.append(
            f"{name}: chlorinated solvent; toxic, several are known or suspected carcinogens; exposure limits and "
            "strict residue limits apply; use only where the rules in force allow it, with fume extraction."
        )
    if cas and cas not in _CHLORINATED and cas != "67-56-1":
        try:
            ich = [r for r in limits(cat, cas=cas, jurisdiction="ICH") if r.status in ("class 1", "class 2")]
        except Exception:  # the caution must never hide the result
            ich = []
        for r in ich[:1]:
            out.append(
                f"{name}: ICH Q3C {r.status} solvent (residual limit {r.limit:g} {r.unit} in pharmaceuticals); "
                "toxic or restricted: exposure limits apply and residues must be measured."
            )
    if is_ethanol:
        out.append(
            "ethanol: denatured ethanol may not remain in food or flavour extracts and its denaturant (e.g. "
            "heptane) leaves a residue; excise rules apply to tax-paid ethanol."
        )
        if use in (None, "extraction"):
            out.append("ethanol: never chill it in a household freezer; cold extraction needs rated equipment.")
    if use == "bench":
        out.append(f"{name}: bench tests only; not for food; use a fume hood and the exposure limits of the lab.")
    out.append(DEFER)
    return list(dict.fromkeys(out))


# ----------------------------------------------------------------------------- food status


@dataclass(frozen=True)
class FoodStatus:
    """Food-law status of one liquid for one use.

    ``status`` is "permitted" (good manufacturing practice, no number),
    "conditional" (limits or conditions apply: see ``conditions``),
    "not permitted", "no data" (the table has no rule: never a permission) or,
    for ``use="bench"``, "bench only".  With ``jurisdiction=None`` both EU and
    US are evaluated: ``status`` is the most permissive of the two and
    ``per_jurisdiction`` holds each.
    """

    name: str
    cas: str
    use: str
    jurisdiction: str | None
    status: str
    conditions: tuple[str, ...]
    rules: tuple[Limit, ...]
    message: str
    flagged: bool
    per_jurisdiction: dict = field(default_factory=dict)

    @property
    def allowed(self) -> bool:
        """True for "permitted" and "conditional" (check the conditions)."""
        return self.status in ("permitted", "conditional")

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name, "cas": self.cas, "use": self.use, "jurisdiction": self.jurisdiction,
            "status": self.status, "allowed": self.allowed, "conditions": list(self.conditions),
            "rules": [r.to_dict() for r in self.rules], "message": self.message, "flagged": self.flagged,
            "per_jurisdiction": dict(self.per_jurisdiction),
        }


def _constituents(solvent) -> list[tuple[str, str]]:
    """(cas, name) of the substances a table liquid is made of (ethanol-water rows have no CAS)."""
    name = _text(_get(solvent, "name"))
    cas = _text(_get(solvent, "cas"))
    if cas:
        return [(cas, name)]
    if _ethanol_strength(name) is not None:
        return [(_ETHANOL_CAS, "ethanol"), (_WATER_CAS, "water")]
    return []


def _status_one(cat, cas: str, name: str, use: str, jur: str, category: str | None) -> tuple[str, list[str], list[Limit], str]:
    rows = limits(cat, cas=cas, jurisdiction=jur, use=use, category=category)
    if not rows:
        if (jur, use) in POSITIVE_LISTS:
            return ("not permitted", [], [], f"{name} is not in {POSITIVE_LISTS[(jur, use)]} as bundled; verify")
        return ("no data", [], [], f"no {jur} rule for {name} as {use} in the bundled table (that is not a permission)")
    conds, banned, gmp, limited = [], [], [], []
    for r in rows:
        if r.status == "not permitted":
            banned.append(r)
        elif r.limit is not None:
            limited.append(r)
            conds.append(r.describe())
        else:
            gmp.append(r)
            if r.condition:
                conds.append(r.describe())
    specific = category is not None
    if banned and (specific or not (limited or gmp)):
        return ("not permitted", [r.describe() for r in banned], rows, f"{name}: not permitted as {use} in {jur}")
    if limited or (banned and not specific):
        return ("conditional", conds + [r.describe() for r in banned], rows, f"{name}: {use} in {jur} under conditions")
    return ("permitted", conds, rows, f"{name}: {use} in {jur} under good manufacturing practice")


def food_status(cat, solvent, use: str | None = None, jurisdiction: str | None = None, category: str | None = None) -> FoodStatus:
    """Food-law status of a liquid for a use, with the rules that apply.

    Parameters
    ----------
    cat : Catalog or None
    solvent : Solvent, mapping or str
        A catalog record (needs ``name`` and ``cas``) or a name / CAS to look up.
    use : {"carrier", "extraction", "bench"}
        Flavour carrier (default), extraction solvent, or bench test (not for food).
    jurisdiction : {"EU", "US"} or None
        None evaluates both and reports the most permissive status, with each
        one in ``per_jurisdiction``.
    category : str, optional
        Food category; restricts conditional rules to the ones that apply there.

    Notes
    -----
    For the rank and blend commands: keep a liquid when ``status.allowed``,
    show ``status.conditions`` beside it (a conditional carrier has a dose
    limit: run :func:`carrier_dose_check` at the intended dose), and never
    treat "no data" as allowed.  A mixture row of the solvents table without
    CAS (ethanol-water strengths) gets the worst status of its constituents.

    Examples
    --------
    Ethanol is a GMP extraction solvent under Directive 2009/32/EC Annex I Part I;
    n-hexane is conditional (residue limits by use, Part II / III).

    >>> food_status(None, "ethanol", use="extraction", jurisdiction="EU").status
    'permitted'
    >>> food_status(None, "n-hexane", use="extraction", jurisdiction="EU").status
    'conditional'
    """
    cat = _catalog(cat)
    use = use or "carrier"
    if use not in USES:
        raise InputError(f"use: expected one of {', '.join(USES)}, got '{use}'")
    jur = _check_jurisdiction(jurisdiction, FOOD_JURISDICTIONS, "jurisdiction (food law)")
    if isinstance(solvent, str):
        solvent = cat.solvent(solvent)
    name = _text(_get(solvent, "name"))
    cas = _text(_get(solvent, "cas"))
    if category is not None:
        resolve_category(cat, category)
    if use == "bench":
        return FoodStatus(name, cas, use, jur, "bench only", (), (), f"{name}: bench tests only, not a food use", False)
    parts = _constituents(solvent)
    if not parts:
        return FoodStatus(
            name, cas, use, jur, "no data", (), (),
            f"{name} has no CAS number and is not a known mixture: no rule can be looked up (not a permission)", False,
        )
    jurs = (jur,) if jur else FOOD_JURISDICTIONS
    per: dict[str, str] = {}
    all_rows: list[Limit] = []
    all_conds: list[str] = []
    msgs: list[str] = []
    for j in jurs:
        worst = None
        for pcas, pname in parts:
            st, conds, rows, msg = _status_one(cat, pcas, pname, use, j, category)
            all_rows += rows
            all_conds += conds
            msgs.append(msg)
            if worst is None or _STATUS_ORDER[st] < _STATUS_ORDER[worst]:
                worst = st
        per[j] = worst
    if jur:
        status = per[jur]
    else:
        status = max(per.values(), key=lambda s: _STATUS_ORDER[s])
    rows_t = tuple(dict.fromkeys(all_rows))
    flagged = any(r.flagged for r in rows_t)
    message = "; ".join(dict.fromkeys(msgs))
    if not jur:
        message = ", ".join(f"{j}: {s}" for j, s in per.items()) + " — " + message
    return FoodStatus(name, cas, use, jur, status, tuple(dict.fromkeys(all_conds)), rows_t, message, flagged, per)
