"""Food-use status and legal limits (hazard classes are in :mod:`.hazards`, cautions in :mod:`.cautions`).

This module answers the questions a formulator must settle before a carrier
or an extraction solvent is worth a bench trial: is it allowed for this use in
this jurisdiction, for the product's purpose, under which rule and condition;
what limit applies and where it is measured (in the extract, in the flavouring,
in the food as consumed, summed from all sources where the rule says so).  The
rules live in data: ``tables/regulations.csv`` (one row per substance,
jurisdiction, rule, use and condition, each with the purposes of
``tables/purposes.csv`` it authorises, its source, confidence and checked-on
date), the food categories in ``tables/food_categories.csv`` and the example
claim rules in ``tables/claims.csv``.  The jurisdictions are those of the
table's rows (:func:`food_jurisdictions`): adding one is adding its rows.

A substance is allowed for a purpose only where a row authorises that purpose
(or every purpose); otherwise it is ``"not allowed for this purpose"``, with the
rules that allow it for other purposes named.  Without a purpose, an allowed
substance is shown with the purposes it is allowed for, never as a bare
"allowed".  Missing data is never taken as permission: a substance with no
row for a use and jurisdiction has the status ``"no data"``, and for the EU
extraction solvents (a positive list) a solvent that is not listed is ``"not
permitted"``.

The dose arithmetic (levels along a dilution chain, maximum dose, residues,
claim flags) is in :func:`check_dose` and :func:`carrier_dose_check`, which take
the chain already parsed (:func:`solvsel.jobs.parse.parse_chain` reads it from
text); the formulation and the chain are modelled in :mod:`solvsel.science.formulation`.

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

import csv
import difflib
import math
import re
from dataclasses import asdict, dataclass, field
from typing import Any, Iterable, Mapping, Sequence

from ..data.catalog import TABLES_DIR
from ..data.catalog import number_or_none as _number
from ..errors import InputError, MissingDataError, TableError, UnknownNameError


__all__ = [
    "FOOD_JURISDICTIONS",
    "JURISDICTIONS",
    "NOT_FOR_PURPOSE",
    "Limit",
    "Purpose",
    "FoodCategory",
    "FoodStatus",
    "limits",
    "jurisdictions",
    "food_jurisdictions",
    "check_food_jurisdiction",
    "purposes",
    "purpose_key",
    "bundled_purposes",
    "describe_purposes",
    "check_purpose",
    "rows_for_purpose",
    "not_for_purpose",
    "food_categories",
    "resolve_category",
    "category_lineage",
    "food_status",
    "LimitCheck",
    "ResidueCheck",
    "ClaimCheck",
    "DoseCheck",
    "check_dose",
    "carrier_dose_check",
    "claim_rules",
]

#: Uses of a rule that make its jurisdiction food law.  A jurisdiction whose rows have only other
#: uses (ICH Q3C: "residual", a pharmaceutical guideline) is a reference shown beside food law.
FOOD_RULE_USES = ("carrier", "extraction", "weighting", "emulsifier")


def _jurisdictions_of(pairs: Iterable[tuple[str, str]]) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(every jurisdiction, the food-law ones), sorted, from ``(jurisdiction, use)`` of the rows."""
    every, food = set(), set()
    for jur, use in pairs:
        if jur:
            every.add(jur)
            if use in FOOD_RULE_USES:
                food.add(jur)
    return tuple(sorted(every)), tuple(sorted(food))


def _bundled_jurisdictions() -> tuple[tuple[str, ...], tuple[str, ...]]:
    """The jurisdictions of the bundled ``tables/regulations.csv`` (read with the csv module: no pandas at import)."""
    with open(TABLES_DIR / "regulations.csv", encoding="utf-8-sig", newline="") as fh:
        return _jurisdictions_of(((r.get("jurisdiction") or "").strip(), (r.get("use") or "").strip())
                                 for r in csv.DictReader(fh))


#: Jurisdictions of the bundled tables/regulations.csv, and those of them with food law (rows for a
#: food use; ICH is a pharmaceutical guideline shown as a reference).  A catalog of other tables
#: has its own: :func:`jurisdictions`, :func:`food_jurisdictions`.
JURISDICTIONS, FOOD_JURISDICTIONS = _bundled_jurisdictions()


#: Uses the food-status check knows.
USES = ("carrier", "extraction", "bench")

_POSITIVE_CACHE: dict = {}


def positive_list(cat, jurisdiction: str, use: str) -> str | None:
    """The name of ``jurisdiction``'s positive list for ``use`` (``tables/jurisdictions.csv``), or
    None: on a positive list a substance with no row is "not permitted" rather than "no data".

    >>> positive_list(None, "EU", "extraction")
    'Dir. 2009/32/EC Annex I (positive list of extraction solvents)'
    >>> positive_list(None, "US", "extraction") is None
    True
    """
    cat = _catalog(cat)
    key = id(cat)
    if key not in _POSITIVE_CACHE:
        lists = {}
        if "jurisdictions" in cat.table_names:
            for r in cat.rows("jurisdictions"):
                for u in str(r.get("positive_list_uses") or "").split(";"):
                    if u.strip() and str(r.get("positive_list") or "").strip():
                        lists[(str(r["code"]).strip().upper(), u.strip())] = str(r["positive_list"]).strip()
        _POSITIVE_CACHE[key] = lists
    return _POSITIVE_CACHE[key].get((str(jurisdiction).upper(), use))

#: Rule uses that set limits in the food as consumed (carriers, additives).
FINISHED_FOOD_USES = ("carrier", "weighting", "emulsifier")

#: The status of a liquid whose rules allow it only for other purposes than the one asked for.
NOT_FOR_PURPOSE = "not allowed for this purpose"

#: Purpose id of a row that authorises every purpose.
ALL_PURPOSES = "all"

_STATUS_ORDER = {"permitted": 3, "conditional": 2, "no data": 1, NOT_FOR_PURPOSE: 0.5, "not permitted": 0,
                 "bench only": -1}

#: Where a limit is measured (the ``applies_to`` column), in words.
MEASURED_IN = {
    "finished food": "in the food as consumed",
    "food residue": "residue in the food as consumed",
    "flavouring residue": "residue in the flavouring",
    "extract residue": "residue in the extract",
    "status": "",
}


# ----------------------------------------------------------------------------- tables


def _catalog(cat):
    if cat is None:
        from ..data.catalog import load_catalog

        return load_catalog()
    return cat


def _text(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float) and math.isnan(v):
        return ""
    return str(v).strip()


def _norm(s: str) -> str:
    return re.sub(r"[\s_]+", " ", str(s).strip().lower())


def _check_jurisdiction(jurisdiction, allowed: Sequence[str]) -> str | None:
    """``jurisdiction`` in upper case if it is one of ``allowed`` (None stays None)."""
    if jurisdiction is None:
        return None
    j = str(jurisdiction).strip().upper()
    if j not in allowed:
        expected = "one of " + ", ".join(allowed)
        raise InputError(f"expected {expected}, got '{jurisdiction}'", param="jurisdiction", value=jurisdiction,
                         expected=expected)
    return j


#: Conversion of a limit's unit to mg/kg (mass basis) or mg/L (volume basis).
_UNIT_BASIS = {"mg/kg": ("mass", 1.0), "ppm": ("mass", 1.0), "%w/w": ("mass", 1e4), "mg/L": ("volume", 1.0)}


@dataclass(frozen=True)
class Limit:
    """One row of tables/regulations.csv.

    ``limit`` is in ``unit`` (mg/kg, ppm = mg/kg, %w/w, or mg/L); use
    :attr:`basis` and :attr:`limit_mg` for the comparison basis.  ``flagged``
    is true when the row is not confirmed against the official text
    (confidence "secondary, verify" or "from memory").  ``purposes`` are the
    ids of tables/purposes.csv the row authorises the substance for ("all":
    every purpose; none for reference rows and rows that permit nothing).
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
    purposes: tuple[str, ...] = ()

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

    @property
    def measured_in(self) -> str:
        """Where the limit is measured, in words ("residue in the extract"; empty for a status row)."""
        return MEASURED_IN.get(self.applies_to, self.applies_to)

    def authorises(self, purpose: str) -> bool:
        """True when the row authorises the substance for ``purpose`` (or for every purpose)."""
        return self.status != "not permitted" and (ALL_PURPOSES in self.purposes or purpose in self.purposes)

    def describe(self) -> str:
        """One line: rule, limit, where it is measured, the condition, the purposes and how far it is confirmed."""
        if self.limit is not None:
            value = f"{self.limit:g} {self.unit}"
        else:
            value = self.status
        where = self.food_category if self.food_category != "food" else "all foods"
        flag = "" if not self.flagged else f" [{self.confidence}]"
        place = ", ".join(p for p in (self.measured_in, where) if p)
        purposes = f"; for {purposes_text(self.purposes)}" if self.purposes else ""
        return f"{self.jurisdiction} {self.rule}: {value} ({place}; {self.condition}{purposes}){flag}"

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["source"] = list(self.source)
        d["purposes"] = list(self.purposes)
        d["basis"] = self.basis
        d["flagged"] = self.flagged
        d["measured_in"] = self.measured_in
        return d


def purposes_text(ids: Sequence[str]) -> str:
    """Purpose ids as words: "any purpose" for "all", else the ids joined ("no purpose recorded" for none).

    >>> purposes_text(("all",)), purposes_text(("fats_oils", "natural_flavouring")), purposes_text(())
    ('any purpose', 'fats_oils, natural_flavouring', 'no purpose recorded')
    """
    if ALL_PURPOSES in ids:
        return "any purpose"
    return ", ".join(ids) if ids else "no purpose recorded"


def _split(v) -> tuple[str, ...]:
    return tuple(x.strip() for x in _text(v).split(";") if x.strip())


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
        source=_split(r.get("source")),
        note=_text(r.get("note")),
        origin=_text(r.get("origin")) or "bundled",
        purposes=_split(r.get("purposes")),
    )


_ROWS_CACHE: dict[int, tuple[Limit, ...]] = {}
_CATS_CACHE: dict[int, dict] = {}
_RESOLVED: dict[tuple, "FoodCategory"] = {}


def _all_limits(cat) -> tuple[Limit, ...]:
    cat = _catalog(cat)
    key = id(cat)
    if key not in _ROWS_CACHE:
        _ROWS_CACHE[key] = tuple(_limit_from_row(r) for r in cat.rows("regulations"))
    return _ROWS_CACHE[key]


_JURISDICTIONS_CACHE: dict[int, tuple[tuple[str, ...], tuple[str, ...]]] = {}


def _catalog_jurisdictions(cat) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(every jurisdiction, the food-law ones) of the catalog's regulations table, found once."""
    cat = _catalog(cat)
    if id(cat) not in _JURISDICTIONS_CACHE:
        _JURISDICTIONS_CACHE[id(cat)] = _jurisdictions_of((r.jurisdiction, r.use) for r in _all_limits(cat))
    return _JURISDICTIONS_CACHE[id(cat)]


def jurisdictions(cat=None) -> tuple[str, ...]:
    """Every jurisdiction of the catalog's regulations table, sorted (the bundled: EU, ICH, US)."""
    return _catalog_jurisdictions(cat)[0]


def food_jurisdictions(cat=None) -> tuple[str, ...]:
    """The jurisdictions of the catalog's regulations table with food law (a row for a food use).

    A jurisdiction is added by its rows in tables/regulations.csv alone:

    >>> food_jurisdictions()
    ('EU', 'US')
    """
    return _catalog_jurisdictions(cat)[1]


def check_food_jurisdiction(cat, jurisdiction, param: str = "jurisdiction", required: bool = False) -> str | None:
    """``jurisdiction`` (upper case) if the catalog has food law for it; None stays None unless ``required``."""
    allowed = food_jurisdictions(cat)
    if jurisdiction is None and required:
        raise InputError(f"give one of {', '.join(allowed)} (limits differ by jurisdiction)", param=param,
                         expected="one of " + ", ".join(allowed))
    try:
        return _check_jurisdiction(jurisdiction, allowed)
    except InputError as exc:
        exc.param = param
        raise


# ----------------------------------------------------------------------------- purposes


@dataclass(frozen=True)
class Purpose:
    """A purpose of the product (tables/purposes.csv): what the rules authorise a substance for."""

    id: str
    label: str
    description: str
    source: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        return {"id": self.id, "label": self.label, "description": self.description, "source": list(self.source)}


_PURPOSES_CACHE: dict[int, dict[str, Purpose]] = {}


def purposes(cat=None) -> dict[str, Purpose]:
    """The purposes of the catalog's tables/purposes.csv by id, in table order (none without that table).

    >>> purposes()["natural_flavouring"].label
    'flavouring from natural source materials'
    """
    cat = _catalog(cat)
    if id(cat) not in _PURPOSES_CACHE:
        try:
            rows = cat.rows("purposes")
        except UnknownNameError:  # a tables folder without purposes: no purpose can be asked for
            rows = []
        _PURPOSES_CACHE[id(cat)] = {
            _text(r["id"]): Purpose(_text(r["id"]), _text(r.get("label")), _text(r.get("description")),
                                    _split(r.get("source")))
            for r in rows
        }
    return dict(_PURPOSES_CACHE[id(cat)])


def purpose_key(text) -> str:
    """A purpose as typed, in the form of the table's ids (``"Food ingredient"`` -> ``"food_ingredient"``)."""
    return _text(text).lower().replace(" ", "_").replace("-", "_")


def bundled_purposes() -> dict[str, str]:
    """``{id: label}`` of the bundled tables/purposes.csv, read with the csv module (the command line's
    choices; a catalog's own purposes are :func:`purposes`)."""
    path = TABLES_DIR / "purposes.csv"
    if not path.is_file():
        return {}
    with open(path, encoding="utf-8-sig", newline="") as fh:
        return {(r.get("id") or "").strip(): (r.get("label") or "").strip() for r in csv.DictReader(fh)
                if (r.get("id") or "").strip()}


def describe_purposes(ids: Mapping[str, str] | None = None) -> str:
    """The purposes as one line, ``id (label)`` each (default: the bundled ones).

    >>> describe_purposes({"sugar": "sugar production", "hop_extract": "hop extract"})
    'sugar (sugar production), hop_extract (hop extract)'
    """
    ids = bundled_purposes() if ids is None else ids
    return ", ".join(f"{k} ({v})" if v and v != k else k for k, v in ids.items())


def check_purpose(cat, purpose, param: str = "purpose") -> str | None:
    """``purpose`` if it is an id of the catalog's purposes (case and spacing forgiven); None stays None."""
    if purpose is None:
        return None
    known = purposes(cat)
    key = purpose_key(purpose)
    if key in known:
        return key
    expected = "one of " + ", ".join(known) if known else "a purpose of tables/purposes.csv (none in these tables)"
    raise InputError(f"expected {expected}, got '{purpose}'", param=param, value=purpose, expected=expected)


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
    if id(cat) in _CATS_CACHE:
        return dict(_CATS_CACHE[id(cat)])
    out = {}
    for r in cat.rows("food_categories"):
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
    _CATS_CACHE[id(cat)] = out
    return dict(out)


def resolve_category(cat, name: str) -> FoodCategory:
    """The food category named ``name`` (name, synonym or EU category number; case and spacing forgiven).

    An unknown name raises :class:`UnknownNameError` listing the known
    categories, closest first.
    """
    ck = (id(_catalog(cat)), str(name))
    if ck in _RESOLVED:
        return _RESOLVED[ck]
    cats = food_categories(cat)
    if name is None or not str(name).strip():
        raise InputError("expected a food category, got nothing; known: " + ", ".join(cats), param="category",
                         value=name, expected="a food category")
    key = _norm(name)
    index = {}
    for fc in cats.values():
        for k in (fc.name, *fc.synonyms, fc.eu_code):
            if k and _norm(k) not in index:
                index[_norm(k)] = fc.name
    if key in index:
        _RESOLVED[ck] = cats[index[key]]
        return _RESOLVED[ck]
    names = list(cats)
    ranked = sorted(names, key=lambda n: -difflib.SequenceMatcher(None, key, _norm(n)).ratio())
    raise UnknownNameError(str(name), "food category", tuple(ranked), param="category")


def category_lineage(cat, name: str) -> list[str]:
    """``[category, parent, ..., "food"]``: the categories whose rules apply, most specific first."""
    cats = food_categories(cat)
    fc = resolve_category(cat, name)
    out = [fc.name]
    while cats[out[-1]].parent:
        parent = cats[out[-1]].parent
        if parent in out or parent not in cats:  # a broken tree is a table error, not a loop
            raise TableError("tables/food_categories.csv", f"parent '{parent}' of '{out[-1]}' is unknown or circular",
                             column="parent")
        out.append(parent)
    return out


# ----------------------------------------------------------------------------- limits


def _cas_of(cat, substance: str) -> str | None:
    """CAS of a name through the catalog's forgiving lookup, else None."""
    try:
        return cat.solvent(substance, library=False).cas or None
    except (UnknownNameError, InputError):  # not a liquid of the tables (or not a name at all)
        pass
    for table in ("solutes", "weighting_agents", "emulsifiers"):
        try:
            row = cat.find(table, substance)
        except (UnknownNameError, InputError):
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
    purpose: str | None = None,
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
    jurisdiction : str, optional
        One of :func:`jurisdictions` (the bundled: EU, US and ICH).
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
    purpose : str, optional
        A purpose of tables/purposes.csv: only the rows that authorise it (or
        every purpose), and the rows that permit nothing ("not permitted").

    Examples
    --------
    The US limit of propylene glycol in a food with no category of its own,
    21 CFR 184.1666(c): 2.0 % as served.

    >>> [(l.rule, l.limit, l.unit) for l in limits(cas="57-55-6", jurisdiction="US", category="sugar")]
    [('21 CFR 184.1666', 2.0, '%w/w')]
    """
    cat = _catalog(cat)
    jur = _check_jurisdiction(jurisdiction, jurisdictions(cat))
    rows = [r for r in _all_limits(cat) if include_revoked or r.in_force]
    rows = rows_for_purpose(rows, check_purpose(cat, purpose))
    if cas is None and substance is not None:
        # the rule's own name, or any name / synonym the other tables know for its CAS
        key = _norm(substance)
        known_cas = _cas_of(cat, substance)
        rows = [r for r in rows if _norm(r.substance) == key or (known_cas and r.cas == known_cas)]
    elif cas is not None:
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


# ----------------------------------------------------------------------------- helpers

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


# ----------------------------------------------------------------------------- food status


@dataclass(frozen=True)
class FoodStatus:
    """Food-law status of one liquid for one use (and, when given, one purpose of the product).

    ``status`` is "permitted" (good manufacturing practice, no number),
    "conditional" (limits or conditions apply: see ``conditions``),
    "not permitted", "not allowed for this purpose" (its rules allow it only for
    other purposes, named in ``message``), "no data" (the table has no rule:
    never a permission) or, for ``use="bench"``, "bench only".  ``purposes``
    lists the purposes of tables/purposes.csv its rules allow it for ("all":
    every purpose) in the jurisdictions judged, ``basis`` the rules that allow
    it (jurisdiction and rule: for a food used as a solvent, that it is a food);
    an allowed liquid is shown with both (:attr:`status_text`), never as a bare
    "allowed".  With ``jurisdiction=None``
    every food-law jurisdiction is evaluated: ``status`` is the most permissive
    and ``per_jurisdiction`` holds each.
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
    purpose: str | None = None
    purposes: tuple[str, ...] = ()
    basis: tuple[str, ...] = ()

    @property
    def allowed(self) -> bool:
        """True for "permitted" and "conditional" (check the conditions)."""
        return self.status in ("permitted", "conditional")

    @property
    def status_text(self) -> str:
        """The status with what it is for and the rules that allow it: "conditional for natural_flavouring
        (EU Dir. 2009/32/EC Annex I Part III)", "permitted for any purpose (US food (common use))"."""
        if not self.allowed:
            return self.status
        basis = f" ({'; '.join(self.basis)})" if self.basis else ""
        return f"{self.status} for {self.purpose or purposes_text(self.purposes)}{basis}"

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name, "cas": self.cas, "use": self.use, "jurisdiction": self.jurisdiction,
            "status": self.status, "allowed": self.allowed, "conditions": list(self.conditions),
            "rules": [r.to_dict() for r in self.rules], "message": self.message, "flagged": self.flagged,
            "per_jurisdiction": dict(self.per_jurisdiction), "purpose": self.purpose,
            "purposes": list(self.purposes), "basis": list(self.basis), "status_text": self.status_text,
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


def _purposes_of(rows: Sequence[Limit]) -> tuple[str, ...]:
    """The purposes the rows authorise, in order ("all" alone when one of them authorises every purpose)."""
    ids = tuple(dict.fromkeys(p for r in rows if r.status != "not permitted" for p in r.purposes))
    return (ALL_PURPOSES,) if ALL_PURPOSES in ids else ids


def _meet(a: tuple[str, ...] | None, b: tuple[str, ...]) -> tuple[str, ...]:
    """The purposes both allow (a mixture is allowed for what each of its parts is allowed for)."""
    if a is None or ALL_PURPOSES in a:
        return b
    return a if ALL_PURPOSES in b else tuple(p for p in a if p in b)


def rows_for_purpose(rows: Iterable[Limit], purpose: str | None) -> list[Limit]:
    """The rows that judge a substance for ``purpose``: those that authorise it (or every purpose) and
    those that permit nothing; every row when no purpose is given."""
    rows = list(rows)
    return rows if purpose is None else [r for r in rows if r.status == "not permitted" or r.authorises(purpose)]


def not_for_purpose(name: str, use: str, jur: str, purpose: str, rows: Sequence[Limit]) -> tuple[str, str]:
    """(status, message) of a substance none of whose ``rows`` allows it for ``purpose``: "not allowed
    for this purpose", each rule named with the purposes it does allow; "no data" when the rules name
    no purpose (never a permission).

    >>> rows = limits(cas="71-36-3", jurisdiction="EU", use="extraction")
    >>> not_for_purpose("1-butanol", "extraction", "EU", "food_ingredient", rows)[1]
    '1-butanol: not allowed for food_ingredient as extraction in EU; Dir. 2009/32/EC Annex I Part III allows it for natural_flavouring only'
    """
    by_rule: dict[str, dict] = {}
    for r in rows:
        if r.purposes and r.status != "not permitted":
            by_rule.setdefault(r.rule, {}).update(dict.fromkeys(r.purposes))
    if not by_rule:
        return "no data", (f"the {jur} rules for {name} as {use} in the bundled table name no purpose, so none is "
                           f"known to allow {purpose} (that is not a permission)")
    others = "; ".join(f"{rule} allows it for {', '.join(ids)} only" for rule, ids in by_rule.items())
    return NOT_FOR_PURPOSE, f"{name}: not allowed for {purpose} as {use} in {jur}; {others}"


def _verdict(name: str, use: str, jur: str, rows: Sequence[Limit], specific: bool) -> tuple[str, list[str], str]:
    """(status, conditions, message) from the rows that apply: a ban, limits, or good manufacturing practice."""
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
    if banned and (specific or not (limited or gmp)):
        return "not permitted", [r.describe() for r in banned], f"{name}: not permitted as {use} in {jur}"
    if limited or (banned and not specific):
        return "conditional", conds + [r.describe() for r in banned], f"{name}: {use} in {jur} under conditions"
    return "permitted", conds, f"{name}: {use} in {jur} under good manufacturing practice"


@dataclass(frozen=True)
class _One:
    """The status of one substance in one jurisdiction."""

    status: str
    conditions: tuple[str, ...]
    rows: tuple[Limit, ...]
    message: str
    purposes: tuple[str, ...]
    basis: tuple[str, ...] = ()


def _status_one(cat, cas: str, name: str, use: str, jur: str, category: str | None, purpose: str | None) -> _One:
    rows = tuple(limits(cat, cas=cas, jurisdiction=jur, use=use, category=category))
    if not rows:
        listed = positive_list(cat, jur, use)
        if listed:
            return _One("not permitted", (), (), f"{name} is not in {listed} as bundled; verify", ())
        return _One("no data", (), (), f"no {jur} rule for {name} as {use} in the bundled table (that is not a permission)",
                    ())
    ids = _purposes_of(rows)
    judged = rows_for_purpose(rows, purpose)
    if not judged:
        status, message = not_for_purpose(name, use, jur, purpose, rows)
        return _One(status, (), rows, message, ids)
    status, conds, message = _verdict(name, use, jur, judged, category is not None)
    if status not in ("permitted", "conditional"):
        return _One(status, tuple(conds), rows, message, ids)
    message += f", for {purpose or purposes_text(ids)}"
    basis = tuple(dict.fromkeys(f"{r.jurisdiction} {r.rule}" for r in judged if r.status != "not permitted"))
    return _One(status, tuple(conds), rows, message, ids, basis)


def food_status(cat, solvent, use: str | None = None, jurisdiction: str | None = None, category: str | None = None,
                purpose: str | None = None) -> FoodStatus:
    """Food-law status of a liquid for a use (and a purpose of the product), with the rules that apply.

    Parameters
    ----------
    cat : Catalog or None
    solvent : Solvent, mapping or str
        A catalog record (needs ``name`` and ``cas``) or a name / CAS to look up.
    use : {"carrier", "extraction", "bench"}
        Flavour carrier (default), extraction solvent, or bench test (not for food).
    jurisdiction : str or None
        A food-law jurisdiction of the tables (:func:`food_jurisdictions`: EU, US);
        None evaluates every one and reports the most permissive status, with
        each one in ``per_jurisdiction``.
    category : str, optional
        Food category; restricts conditional rules to the ones that apply there.
    purpose : str, optional
        What the product is (an id of tables/purposes.csv, e.g. "food_ingredient"):
        the liquid is allowed only where a rule authorises that purpose (or every
        purpose); otherwise its status is "not allowed for this purpose" and the
        message names the rules that allow it for other purposes.  Without a
        purpose, ``purposes`` lists what its rules allow it for.

    Notes
    -----
    For the rank and blend commands: keep a liquid when ``status.allowed``,
    show ``status.status_text`` and ``status.conditions`` beside it (a
    conditional carrier has a dose limit: run :func:`carrier_dose_check` at the
    intended dose), and never treat "no data" as allowed.  A mixture row of the
    solvents table without CAS (ethanol-water strengths) gets the worst status
    of its constituents, and the purposes all of them are allowed for.

    Examples
    --------
    Ethanol is a GMP extraction solvent for any purpose under Directive 2009/32/EC
    Annex I Part I; 1-butanol only for flavourings from natural source materials
    (Part III), so not for a food ingredient.

    >>> food_status(None, "ethanol", use="extraction", jurisdiction="EU").status_text
    'permitted for any purpose (EU Dir. 2009/32/EC Annex I Part I)'
    >>> st = food_status(None, "1-butanol", use="extraction", jurisdiction="EU", purpose="food_ingredient")
    >>> st.status, st.message.split("; ")[1]
    ('not allowed for this purpose', 'Dir. 2009/32/EC Annex I Part III allows it for natural_flavouring only')
    """
    cat = _catalog(cat)
    use = use or "carrier"
    if use not in USES:
        raise InputError(f"expected one of {', '.join(USES)}, got '{use}'", param="use", value=use,
                         expected="one of " + ", ".join(USES))
    jur = check_food_jurisdiction(cat, jurisdiction)
    purpose = check_purpose(cat, purpose)
    if isinstance(solvent, str):
        solvent = cat.solvent(solvent)
    name = _text(_get(solvent, "name"))
    cas = _text(_get(solvent, "cas"))
    if category is not None:
        resolve_category(cat, category)
    if use == "bench":
        return FoodStatus(name, cas, use, jur, "bench only", (), (), f"{name}: bench tests only, not a food use", False,
                          purpose=purpose)
    parts = _constituents(solvent)
    if not parts:
        return FoodStatus(
            name, cas, use, jur, "no data", (), (),
            f"{name} has no CAS number and is not a known mixture: no rule can be looked up (not a permission)", False,
            purpose=purpose,
        )
    return _combined(cat, name, cas, use, jur, category, purpose, parts)


def _combined(cat, name: str, cas: str, use: str, jur: str | None, category: str | None, purpose: str | None,
              parts: Sequence[tuple[str, str]]) -> FoodStatus:
    """The status of a liquid from those of its constituents (the worst) in each jurisdiction (the most
    permissive when none is given)."""
    jurs = (jur,) if jur else food_jurisdictions(cat)
    per: dict[str, str] = {}
    rows: list[Limit] = []
    conds: list[str] = []
    msgs: list[str] = []
    allowed_for: dict[str, None] = {}
    basis: dict[str, None] = {}
    for j in jurs:
        worst, ids, bases = None, None, []
        for pcas, pname in parts:
            one = _status_one(cat, pcas, pname, use, j, category, purpose)
            rows += one.rows
            conds += one.conditions
            msgs.append(one.message)
            bases += one.basis
            ids = _meet(ids, one.purposes)
            if worst is None or _STATUS_ORDER[one.status] < _STATUS_ORDER[worst]:
                worst = one.status
        per[j] = worst
        allowed_for.update(dict.fromkeys(ids or ()))
        if worst in ("permitted", "conditional"):
            basis.update(dict.fromkeys(bases))
    status = per[jur] if jur else max(per.values(), key=lambda s: _STATUS_ORDER[s])
    rows_t = tuple(dict.fromkeys(rows))
    message = "; ".join(dict.fromkeys(msgs))
    if not jur:
        message = ", ".join(f"{j}: {s}" for j, s in per.items()) + " — " + message
    ids = (ALL_PURPOSES,) if ALL_PURPOSES in allowed_for else tuple(allowed_for)
    return FoodStatus(name, cas, use, jur, status, tuple(dict.fromkeys(conds)), rows_t, message,
                      any(r.flagged for r in rows_t), per, purpose, ids, tuple(basis))


# ----------------------------------------------------------------------------- dose checks


@dataclass(frozen=True)
class LimitCheck:
    """One limit compared with the level of its substance (or group) in the food as consumed.

    ``level`` and ``limit`` are in ``unit`` (the unit of the rule).  ``ok`` is
    true when the level keeps the limit; ``binds`` marks the limit that sets
    the maximum dose (the tightest one).  ``max_dose`` is the largest dose of
    the formula (in the unit of the first chain step) that keeps this limit,
    counting what other ingredients already bring; None when the rule has no
    number or the dose cannot be scaled.
    """

    rule: str
    jurisdiction: str
    substance: str
    members: tuple[str, ...]
    cas: tuple[str, ...]
    level: float | None
    limit: float | None
    unit: str
    ok: bool
    binds: bool
    max_dose: float | None
    status: str
    applies_to: str
    food_category: str
    condition: str
    group: str
    confidence: str
    checked_on: str
    source: tuple[str, ...]
    note: str
    purposes: tuple[str, ...] = ()
    measured_in: str = ""

    @property
    def flagged(self) -> bool:
        return self.confidence != "checked"

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        for k in ("members", "cas", "source", "purposes"):
            d[k] = list(d[k])
        d["flagged"] = self.flagged
        d["checked_on"] = self.checked_on or None
        return d


@dataclass(frozen=True)
class ResidueCheck:
    """A measured solvent residue in the formula (extract) against one rule.

    ``level`` is in ``unit``, where the rule measures it (``measured_in``): the
    residue in the food as consumed (food residue rows), or in the formula
    itself (extract and flavouring residue rows).  ``tolerated_ppm`` is the
    residue in the formula that the rule would tolerate at this dose and chain.
    ``purposes`` are those the rule authorises the solvent for; a solvent whose
    rules allow it only for other purposes than the one asked for has the status
    "not allowed for this purpose" (``ok`` False).
    """

    substance: str
    cas: str
    measured_ppm: float
    rule: str
    jurisdiction: str
    applies_to: str
    condition: str
    level: float | None
    limit: float | None
    unit: str
    ok: bool | None
    tolerated_ppm: float | None
    status: str
    reference_only: bool
    confidence: str
    source: tuple[str, ...]
    note: str
    checked_on: str = ""
    purposes: tuple[str, ...] = ()
    measured_in: str = ""

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["source"] = list(d["source"])
        d["purposes"] = list(d["purposes"])
        d["flagged"] = self.confidence != "checked"
        d["checked_on"] = self.checked_on or None
        return d


@dataclass(frozen=True)
class ClaimCheck:
    """A claim rule of tables/claims.csv against the formula (flavour) or the product."""

    claim: str
    substance: str
    applies_to: str
    stage: str
    level_percent: float | None
    max_percent: float | None
    ok: bool | None
    requirement: str
    source: tuple[str, ...]
    note: str

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["source"] = list(d["source"])
        return d


@dataclass(frozen=True)
class DoseCheck:
    """Levels along the chain, every applicable limit, residues, claims and the maximum dose.

    ``ok`` is true when every limit with data is kept (and every residue and
    claim ceiling); ``complete`` is false when some substance has no data in
    the jurisdiction (listed in ``no_data``: never a permission).
    """

    formula: Any
    jurisdiction: str
    category: str
    steps: tuple
    stages: tuple
    other_sources_mg_per_kg: dict
    names: dict
    checks: tuple[LimitCheck, ...]
    no_data: tuple[dict, ...]
    residues: tuple[ResidueCheck, ...]
    claims: tuple[ClaimCheck, ...]
    max_dose: float | None
    max_dose_unit: str
    max_fraction_in_food: float | None
    binding: LimitCheck | None
    per_ingredient: tuple[dict, ...]
    ok: bool
    complete: bool
    assumptions: tuple[str, ...]
    purpose: str | None = None

    @property
    def rules(self) -> tuple:
        """The limit and residue checks made (each names its rule, jurisdiction, checked-on date, confidence and
        sources: the rules this answer applied)."""
        return tuple(self.checks) + tuple(self.residues)

    def stage_table(self, index: int) -> list[dict]:
        """Rows ``{substance, cas, mg_per_kg, mg_per_L}`` of one stage, largest first."""
        st = self.stages[index]
        last = index == len(self.stages) - 1
        rows = []
        keys = list(st.mass_fractions) + ([k for k in self.other_sources_mg_per_kg if k not in st.mass_fractions] if last else [])
        for k in keys:
            mgkg = st.mass_fractions.get(k, 0.0) * 1e6 + (self.other_sources_mg_per_kg.get(k, 0.0) if last else 0.0)
            rows.append({
                "substance": self.names[k][0], "cas": self.names[k][1], "mg_per_kg": mgkg,
                "mg_per_L": None if st.density_g_cm3 is None else mgkg * st.density_g_cm3,
            })
        return sorted(rows, key=lambda r: -r["mg_per_kg"])

    def to_dict(self) -> dict[str, Any]:
        stages = []
        for i, st in enumerate(self.stages):
            rows = self.stage_table(i)
            stages.append({
                "name": st.name,
                "step": st.step.to_dict() if st.step is not None else None,
                "density_g_cm3": st.density_g_cm3,
                "density_basis": st.density_basis,
                "fraction_of_previous": st.fraction_of_previous,
                "fraction_of_formula": st.fraction_of_formula,
                "levels": {r["substance"]: r["mg_per_kg"] for r in rows},
                "levels_mg_per_L": {r["substance"]: r["mg_per_L"] for r in rows},
            })
        return {
            "formula": self.formula.to_dict(),
            "jurisdiction": self.jurisdiction,
            "category": self.category,
            "stages": stages,
            "other_sources_mg_per_kg": {self.names[k][0]: v for k, v in self.other_sources_mg_per_kg.items()},
            "limits": [c.to_dict() for c in self.checks],
            "no_data": list(self.no_data),
            "residues": [r.to_dict() for r in self.residues],
            "claims": [c.to_dict() for c in self.claims],
            "max_dose": self.max_dose,
            "max_dose_unit": self.max_dose_unit,
            "max_fraction_in_food": self.max_fraction_in_food,
            "binding": self.binding.to_dict() if self.binding is not None else None,
            "per_ingredient": list(self.per_ingredient),
            "ok": self.ok,
            "complete": self.complete,
            "assumptions": list(self.assumptions),
            "purpose": self.purpose,
        }


def claim_rules(cat=None, claim: str | None = None) -> list[dict]:
    """Rows of tables/claims.csv (all, or those of ``claim``); an unknown claim lists the known ones.

    The bundled rows are examples: the certifier's rules decide.
    """
    cat = _catalog(cat)
    rows = [dict(r) for r in cat.rows("claims")]
    if claim is None:
        return rows
    key = _norm(claim)
    hit = [r for r in rows if _norm(r["claim"]) == key]
    if not hit:
        known = sorted({r["claim"] for r in rows})
        raise UnknownNameError(str(claim), "claim", tuple(known), param="claims")
    return hit


def _resolve_substance(cat, name: str, param: str) -> tuple[str, str, str]:
    """(key, display name, cas) of a substance given by name or CAS; ``param`` names the input it came from."""
    from ..science.formulation import _lookup

    try:
        n, cas, _, _, _ = _lookup(cat, name)
        return (cas or n), n, cas
    except UnknownNameError as exc:
        rows = limits(cat, substance=name)
        if rows:
            return (rows[0].cas or rows[0].substance), rows[0].substance, rows[0].cas
        raise UnknownNameError(exc.name, exc.kind, exc.suggestions, param=param) from None


_MAX_UNIT = {"w/w": "mass fraction", "v/v": "volume fraction", "g/L": "g/L"}


def _checked_steps(steps) -> tuple:
    """The dilution chain as a tuple of :class:`~solvsel.science.formulation.Step` (at least one)."""
    from ..science.formulation import Step

    if isinstance(steps, (str, bytes)) or not isinstance(steps, Sequence):
        raise InputError(f"expected the parsed steps of a dilution chain, got {steps!r}", param="chain", value=steps,
                         expected="a list of Step (solvsel.jobs.parse.parse_chain)")
    steps = tuple(steps)
    if not steps:
        raise InputError("a dilution chain needs at least one step", param="chain", expected="at least one step")
    for s in steps:
        if not isinstance(s, Step):
            raise InputError(f"expected a Step, got {s!r}", param="chain", value=s,
                             expected="a list of Step (solvsel.jobs.parse.parse_chain)")
    return steps


def _stages_in_category(formula, steps, formula_density: float | None, fc: FoodCategory) -> tuple[list, list[str]]:
    """Stages of the chain and the assumptions made; a last stage of unknown density takes the
    typical density of its food category (said so in the assumptions)."""
    from ..science.formulation import stage_levels

    stages = stage_levels(formula, steps, formula_density)
    assumptions = list(formula.notes)
    final = stages[-1]
    if final.density_g_cm3 is None and fc.typical_density_g_cm3 is not None:
        stages[-1] = _replace(final, density_g_cm3=fc.typical_density_g_cm3, density_basis="assumed (category)")
        assumptions.append(
            f"density of '{final.name}' assumed {fc.typical_density_g_cm3:g} g/cm3 (typical for {fc.name}); "
            "give d= in the chain for your product"
        )
    return stages, assumptions


def _other_sources(cat, already: Mapping[str, float] | None, names: dict) -> dict[str, float]:
    """What other ingredients bring to the food as consumed, ``{key: mg/kg}``; adds their names to ``names``."""
    other: dict[str, float] = {}
    for n, v in (already or {}).items():
        if v is None or not math.isfinite(float(v)) or float(v) < 0:
            raise InputError(f"the amount of '{n}' must be zero or more mg/kg, got {v}", param="already", value=v,
                             expected="zero or more mg/kg")
        key, disp, cas = _resolve_substance(cat, n, "already")
        other[key] = other.get(key, 0.0) + float(v)
        names.setdefault(key, (disp, cas))
    return other


@dataclass(frozen=True)
class _Levels:
    """Levels in the food as consumed: from the formula (scaled by its fraction in the food) and
    from other sources, in mg/kg, or in mg/L with the food's density."""

    formula_fractions: Mapping[str, float]  # mass fractions in the formula (stage 0)
    other: Mapping[str, float]  # mg/kg from other ingredients
    fraction_of_formula: float  # F: mass fraction of the formula in the food
    density: float | None  # of the food [g/cm3]
    stage_name: str
    category: str

    def of(self, keys: Sequence[str], basis: str | None) -> tuple[float, float]:
        """(level from the formula, level from other sources) in mg/kg or mg/L."""
        fp = sum(self.formula_fractions.get(k, 0.0) for k in keys) * self.fraction_of_formula * 1e6
        bg = sum(self.other.get(k, 0.0) for k in keys)
        if basis == "volume":
            if self.density is None:
                raise MissingDataError(
                    f"a limit in mg/L applies in '{self.stage_name}' ({self.category}) but its density is not known: "
                    "give d= in the chain", param="chain"
                )
            return fp * self.density, bg * self.density
        return fp, bg


def _rules_of_substances(cat, names: Mapping[str, tuple[str, str]], present: Sequence[str], jur: str,
                         category: str) -> tuple[dict[str, list[Limit]], list[dict]]:
    """The finished-food rules of each substance present, and the substances with no rule (never a permission)."""
    rules_of: dict[str, list[Limit]] = {}
    no_data = []
    for k in present:
        cas = names[k][1]
        rows = []
        if cas:
            rows = [r for r in limits(cat, cas=cas, jurisdiction=jur, category=category, use=FINISHED_FOOD_USES)
                    if r.applies_to in ("finished food", "status")]
        if rows:
            rules_of[k] = rows
            continue
        why = "no CAS number, so no rule can be looked up" if not cas else "no rule in the bundled table"
        elsewhere = sorted({r.food_category for r in limits(cat, cas=cas, jurisdiction=jur, use=FINISHED_FOOD_USES)}) if cas else []
        hint = f" (the table has {jur} rules for it in: {', '.join(elsewhere)})" if elsewhere else ""
        no_data.append({
            "substance": names[k][0], "cas": cas, "jurisdiction": jur, "category": category,
            "message": f"{names[k][0]}: {why} for {jur} / {category}{hint}; that is not a permission "
                       "(check the rules in force)",
            "rules_in_categories": elsewhere,
        })
    return rules_of, no_data


def _limit_checks(rules_of: Mapping[str, list[Limit]], names, levels: _Levels, x0: float | None) -> list[LimitCheck]:
    """One check per rule, the level summed over the members of a group; ``max_dose`` is the dose
    (``x0`` scaled) that keeps the rule, or None when the first step is not scalable (``x0`` None)."""
    grouped: dict[tuple, dict] = {}
    for k, rows in rules_of.items():
        for r in rows:
            # a group's members are summed under one limit even where their rows name different
            # categories of the lineage (a drinks row of one member, the all-foods row of another)
            ident = r.group or (r.cas or r.substance)
            key = (ident, r.rule, r.limit, r.unit, r.status, r.applies_to)
            entry = grouped.setdefault(key, {"row": r, "members": []})
            entry["members"].append(k)
    scalable = x0 is not None
    checks = []
    for e in grouped.values():
        r, members = e["row"], e["members"]
        label = " + ".join(names[m][0] for m in members)
        if r.group:
            label += f" (group {r.group})"
        base = dict(
            rule=r.rule, jurisdiction=r.jurisdiction, substance=label, members=tuple(names[m][0] for m in members),
            cas=tuple(names[m][1] for m in members), unit=r.unit, status=r.status, applies_to=r.applies_to,
            food_category=r.food_category, condition=r.condition, group=r.group, confidence=r.confidence,
            checked_on=r.checked_on, source=r.source, note=r.note, purposes=r.purposes, measured_in=r.measured_in,
        )
        if r.status == "not permitted":
            fp, bg = levels.of(members, "mass")
            checks.append(LimitCheck(level=fp + bg, limit=0.0, ok=(fp + bg) == 0, binds=False,
                                     max_dose=0.0 if scalable else None, **{**base, "unit": "mg/kg"}))
            continue
        if r.limit_mg is None:  # GMP: no number to keep
            checks.append(LimitCheck(level=None, limit=None, ok=True, binds=False, max_dose=None, **base))
            continue
        fp, bg = levels.of(members, r.basis)
        mx = None
        if scalable:
            room = r.limit_mg - bg
            mx = 0.0 if room <= 0 else (math.inf if fp <= 0 else x0 * room / fp)
        checks.append(LimitCheck(level=(fp + bg) / _UNIT_BASIS[r.unit][1], limit=r.limit,
                                 ok=(fp + bg) <= r.limit_mg * (1 + 1e-12), binds=False, max_dose=mx, **base))
    return checks


def _binding(checks: list[LimitCheck]) -> tuple[list[LimitCheck], float | None, LimitCheck | None]:
    """(checks with the binding ones marked, sorted binding first then the broken ones, the maximum dose, the binding check)."""
    finite = [c.max_dose for c in checks if c.max_dose is not None and math.isfinite(c.max_dose)]
    max_dose = min(finite) if finite else None
    binding = None
    if max_dose is not None:
        checks = [
            c if c.max_dose is None or not math.isfinite(c.max_dose) or c.max_dose > max_dose * (1 + 1e-9) + 1e-300
            else _replace(c, binds=True)
            for c in checks
        ]
        binding = next(c for c in checks if c.binds)
    checks = [(_replace(c, max_dose=None) if c.max_dose is not None and not math.isfinite(c.max_dose) else c) for c in checks]
    checks.sort(key=lambda c: (not c.binds, c.ok, -(c.level / c.limit if c.level is not None and c.limit else 0)))
    return checks, max_dose, binding


def _per_ingredient(formula, checks: Sequence[LimitCheck], names, no_data: Sequence[dict]) -> list[dict]:
    """Per ingredient of the formula: the tightest limit on what it brings."""
    out = []
    for comp in formula.components:
        keys = {s[0] for s in comp.substances}
        mine = [c for c in checks if c.max_dose is not None and any(names.get(k, ("", ""))[0] in c.members for k in keys)]
        best = min(mine, key=lambda c: c.max_dose) if mine else None
        out.append({
            "name": comp.name, "cas": comp.cas, "mass_fraction": comp.mass_fraction,
            "max_dose": best.max_dose if best else None,
            "binding_rule": best.rule if best else None,
            "binding_substance": best.substance if best else None,
            "no_data": any(d["substance"] in {names.get(k, ("",))[0] for k in keys} for d in no_data),
        })
    return out


def check_dose(cat, formula, steps: Sequence, jurisdiction: str, category: str,
               already: Mapping[str, float] | None = None, residues: Mapping[str, float] | None = None,
               claims: Sequence[str] | None = None, formula_density: float | None = None,
               purpose: str | None = None) -> DoseCheck:
    """Levels of a formula along a dilution chain, checked against every limit that applies.

    Parameters
    ----------
    cat : Catalog or None
    formula : solvsel.science.formulation.Formula
    steps : sequence of solvsel.science.formulation.Step
        The dilution chain, at least one step, the first one carrying the dose
        of the formula (:func:`solvsel.jobs.parse.parse_chain` reads it from
        text; a single step into the food as consumed when there is no chain).
    jurisdiction : str
        A food-law jurisdiction of the tables (:func:`food_jurisdictions`: EU, US).
    category : str
        Food category of the food as consumed (the last stage).
    already : mapping, optional
        What other ingredients already bring to the food as consumed,
        ``{substance: mg/kg}``; added to the formula's share ("from all sources").
    residues : mapping, optional
        Measured solvent residues in the formula (extract), ``{solvent: ppm}``.
    claims : list of str, optional
        Claims to check with tables/claims.csv (e.g. "halal").
    formula_density : float, optional
        Density of the formula [g/cm3]; default from its components.
    purpose : str, optional
        What the formula is (an id of tables/purposes.csv): its measured residues
        are judged by the rules that authorise that purpose only (a solvent
        allowed only for other purposes is "not allowed for this purpose");
        without it every residue rule is shown, each with its purposes.  The
        limits in the food as consumed apply whatever the purpose.

    Notes
    -----
    Level in the food as consumed of substance *i* (group *G*: summed over
    its members), with :math:`w_i` its mass fraction in the formula,
    :math:`F` the mass fraction of the formula in the food and :math:`B_i`
    what other ingredients bring:

    .. math::

        c_G = \\sum_{i \\in G} (10^6 F w_i + B_i) \\quad [\\mathrm{mg/kg}],
        \\qquad c_G\\,\\rho_\\mathrm{food} \\quad [\\mathrm{mg/L}]

    The level is proportional to the dose (for doses in %, ppm, % v/v or
    g/L), so the largest dose keeping limit :math:`L` is
    :math:`x_\\max = x\\,(L - B_G\\rho)/(c_G - B_G\\rho)` (Practice: "maximum
    flavour dose = (limit - what other ingredients bring) / share of the
    limited carriers").  A substance with no rule in the jurisdiction is
    listed in ``no_data`` and the result is not ``complete``.  The cautions
    that go with the result are in :func:`solvsel.rules.cautions.limit_cautions`.

    Examples
    --------
    90 % propylene glycol at 0.15 % in a confection: 1 350 mg/kg against the EU carrier
    group's 3 000 mg/kg (Reg. (EC) No 1333/2008 Annex III Part 4), so at most
    0.15 % x 3000 / 1350 = 0.3333 %.

    >>> from solvsel.science.formulation import Step, formula_from_amounts
    >>> from solvsel.data.catalog import load_catalog
    >>> f = formula_from_amounts(load_catalog(), [("propylene glycol", 90), ("vanillin", 10)])
    >>> chk = check_dose(None, f, [Step("sweet", "w/w", 0.0015)], "EU", "confectionery")
    >>> round(chk.max_dose * 100, 4), chk.binding.rule
    (0.3333, 'Reg. (EC) No 1333/2008 Annex III Part 4')
    """
    cat = _catalog(cat)
    jur = check_food_jurisdiction(cat, jurisdiction, required=True)
    purpose = check_purpose(cat, purpose)
    fc = resolve_category(cat, category)
    steps = _checked_steps(steps)
    stages, assumptions = _stages_in_category(formula, steps, formula_density, fc)
    names = {k: (v[0], v[1]) for k, v in formula.substance_fractions().items()}
    other = _other_sources(cat, already, names)
    final = stages[-1]
    levels = _Levels(dict(stages[0].mass_fractions), other, final.fraction_of_formula, final.density_g_cm3,
                     final.name, fc.name)
    x0 = steps[0].amount if steps[0].scalable else None
    present = [k for k in names if (levels.formula_fractions.get(k, 0.0) > 0 or other.get(k, 0.0) > 0)]
    rules_of, no_data = _rules_of_substances(cat, names, present, jur, fc.name)
    checks, max_dose, binding = _binding(_limit_checks(rules_of, names, levels, x0))
    F = final.fraction_of_formula
    res = _residue_checks(cat, residues or {}, jur, fc.name, F, purpose)
    cl = _claim_checks(cat, claims or (), stages, other)
    ok = all(c.ok for c in checks) and all(r.ok is not False for r in res if not r.reference_only) and all(
        c.ok is not False for c in cl
    )
    return DoseCheck(
        formula=formula, jurisdiction=jur, category=fc.name, steps=steps, stages=tuple(stages),
        other_sources_mg_per_kg=other, names=names, checks=tuple(checks), no_data=tuple(no_data),
        residues=tuple(res), claims=tuple(cl), max_dose=max_dose,
        max_dose_unit=_MAX_UNIT.get(steps[0].how, steps[0].how),
        max_fraction_in_food=F * max_dose / x0 if max_dose is not None and x0 else None,
        binding=binding, per_ingredient=tuple(_per_ingredient(formula, checks, names, no_data)), ok=ok,
        complete=not no_data, assumptions=tuple(assumptions), purpose=purpose,
    )


def _replace(obj, **kw):
    from dataclasses import replace

    return replace(obj, **kw)


def _given_residues(cat, residues: Mapping[str, float]) -> dict[str, tuple[str, str, float]]:
    """``{cas: (display name, cas, ppm)}`` of the measured residues (each must have a CAS number)."""
    given: dict[str, tuple[str, str, float]] = {}
    for n, ppm in residues.items():
        if ppm is None or not math.isfinite(float(ppm)) or float(ppm) < 0:
            raise InputError(f"the residue of '{n}' must be zero or more ppm, got {ppm}", param="residues", value=ppm,
                             expected="zero or more ppm")
        key, disp, cas = _resolve_substance(cat, n, "residues")
        if not cas:
            raise InputError(f"'{n}' has no CAS number; residue rules are looked up by CAS", param="residues", value=n,
                             expected="a solvent with a CAS number")
        given[cas] = (disp, cas, float(ppm))
    return given


def _unlisted_residue(cat, disp: str, cas: str, ppm: float, jur: str) -> ResidueCheck:
    """A measured residue of a solvent with no extraction rule in ``jur``: not permitted on a positive
    list, else no data (never a permission)."""
    name = positive_list(cat, jur, "extraction")
    listed = name is not None
    return ResidueCheck(
        disp, cas, ppm, name or "no rule", jur, "status",
        "not listed" if listed else "no data", None, None, "", False if listed else None, None,
        "not permitted" if listed else "no data", False, "checked" if listed else "from memory", (),
        (f"{disp} is not a permitted extraction solvent in the {jur} (not in the bundled positive list; verify)"
         if listed else f"no {jur} residue rule for {disp} in the bundled table: not a permission"),
    )


def _residue_not_for_purpose(disp: str, cas: str, ppm: float, jur: str, purpose: str,
                             rows: Sequence[Limit]) -> list[ResidueCheck]:
    """A measured residue of a solvent whose rules allow it only for other purposes than ``purpose``:
    one check per rule, naming the purposes it does allow (a rule that names none is no data)."""
    by_rule: dict[str, list[Limit]] = {}
    for r in rows:
        by_rule.setdefault(r.rule, []).append(r)
    out = []
    for rule, mine in by_rule.items():
        status, said = not_for_purpose(disp, "extraction", jur, purpose, mine)
        worst = max(mine, key=_doubt)
        out.append(ResidueCheck(disp, cas, ppm, rule, jur, "status", f"not authorised for {purpose}", None, None, "",
                                False if status == NOT_FOR_PURPOSE else None, None, status, False, worst.confidence,
                                tuple(dict.fromkeys(x for r in mine for x in r.source)), said,
                                checked_on=worst.checked_on, purposes=_purposes_of(mine)))
    return out


#: Confidence of a row, most doubtful last (a check resting on several rows takes the most doubtful).
_CONFIDENCE_ORDER = ("checked", "secondary, verify", "from memory")


def _doubt(r: Limit) -> int:
    """How doubtful a row is (0 checked; an unknown confidence is the most doubtful)."""
    return _CONFIDENCE_ORDER.index(r.confidence) if r.confidence in _CONFIDENCE_ORDER else len(_CONFIDENCE_ORDER)


def _residue_against(r: Limit, disp: str, cas: str, ppm: float, given, cat, F: float) -> ResidueCheck | None:
    """One measured residue (summed over its group where the rule has one) against rule ``r``; None for
    a group already reported at its first member."""
    members = [cas]
    if r.group:
        members = [c for c in given if any(x.group == r.group for x in limits(cat, cas=c, jurisdiction=r.jurisdiction))]
        if members[0] != cas:  # report a group once, at its first member
            return None
    total = sum(given[c][2] for c in members)
    common = dict(checked_on=r.checked_on, purposes=r.purposes, measured_in=r.measured_in)
    reference = r.jurisdiction not in food_jurisdictions(cat)
    if r.limit is None:
        ok = r.status != "not permitted"
        return ResidueCheck(disp, cas, ppm, r.rule, r.jurisdiction, r.applies_to, r.condition, None, None, "",
                            ok, None, r.status, reference, r.confidence, r.source,
                            r.note or ("good manufacturing practice: technically unavoidable residues only" if ok else ""),
                            **common)
    per = _UNIT_BASIS[r.unit][1]
    if r.applies_to == "food residue":
        lvl_mg = total * F
        tol = r.limit_mg / F if F > 0 else None
    else:  # residue in the formula itself (the extract or the flavouring)
        lvl_mg = total
        tol = r.limit_mg
    if r.group and tol is not None:
        tol = tol - (total - ppm)
    label = disp if not r.group else " + ".join(given[c][0] for c in members) + f" (group {r.group})"
    return ResidueCheck(label, cas, ppm, r.rule, r.jurisdiction, r.applies_to, r.condition, lvl_mg / per,
                        r.limit, r.unit, lvl_mg <= r.limit_mg * (1 + 1e-12), tol, r.status, reference,
                        r.confidence, r.source, r.note, **common)


def _residue_checks(cat, residues: Mapping[str, float], jur: str, category: str, F: float,
                    purpose: str | None = None) -> list[ResidueCheck]:
    """Each measured residue against its rules in ``jur`` (and the numeric limits of the reference
    guidelines, ICH Q3C, shown beside them); ``F`` is the mass fraction of the formula in the food as
    consumed.  With a ``purpose`` only the rules that authorise it count; a solvent whose rules allow
    it only for other purposes is reported as such."""
    out: list[ResidueCheck] = []
    given = _given_residues(cat, residues)
    food = food_jurisdictions(cat)
    for cas, (disp, _, ppm) in given.items():
        rows = limits(cat, cas=cas, jurisdiction=jur, category=category, use="extraction")
        ref = [r for r in limits(cat, cas=cas) if r.jurisdiction not in food and r.limit is not None]
        if not rows:
            out.append(_unlisted_residue(cat, disp, cas, ppm, jur))
        elif purpose is not None:
            judged = rows_for_purpose(rows, purpose)
            if not judged:
                out += _residue_not_for_purpose(disp, cas, ppm, jur, purpose, rows)
            rows = judged
        for r in rows + ref:
            chk = _residue_against(r, disp, cas, ppm, given, cat, F)
            if chk is not None:
                out.append(chk)
    return out


def _claim_checks(cat, claims: Sequence[str], stages, other: Mapping[str, float]) -> list[ClaimCheck]:
    out = []
    first, last = stages[0], stages[-1]
    for claim in claims:
        for r in claim_rules(cat, claim):
            cas = _text(r.get("cas"))
            key = cas or _text(r.get("substance"))
            if r["applies_to"] == "flavour":
                st, w = first, first.mass_fractions.get(key, 0.0)
            else:
                st, w = last, last.mass_fractions.get(key, 0.0) + other.get(key, 0.0) * 1e-6
            mx = _number(r.get("max_percent"))
            pct = w * 100.0
            present = w > 0
            if mx is None:
                ok = None if present else True
            else:
                ok = pct <= mx * (1 + 1e-12) and not (mx == 0 and present)
            out.append(ClaimCheck(
                claim=_text(r["claim"]), substance=_text(r["substance"]), applies_to=r["applies_to"], stage=st.name,
                level_percent=pct, max_percent=mx, ok=ok, requirement=_text(r.get("requirement")),
                source=tuple(s for s in _text(r.get("source")).split(";") if s), note=_text(r.get("note")),
            ))
    return out


def carrier_dose_check(cat, solvent_or_formula, steps: Sequence, jurisdiction: str, category: str,
                       already: Mapping[str, float] | None = None) -> DoseCheck:
    """Check a carrier (or a blend, or a whole formula) at a dose, for ``rank`` and ``blend``.

    Parameters
    ----------
    cat : Catalog or None
    solvent_or_formula : Solvent, str, mapping, list or Formula
        A single carrier (record or name: 100 % of the formula), a blend as
        ``{name: mass_fraction}`` or ``[(name, mass_fraction), ...]`` with
        fractions in 0..1 (the rest, if any, is unspecified), or a
        :class:`~solvsel.science.formulation.Formula`.
    steps : sequence of solvsel.science.formulation.Step
        The dilution chain, the first step carrying the dose (parse a dose and a
        chain with :func:`solvsel.jobs.parse.parse_chain`).
    jurisdiction : str
        A food-law jurisdiction of the tables (:func:`food_jurisdictions`: EU, US).
    category : str
        Food category of the food as consumed (see ``solvsel table food_categories``).
    already : mapping, optional
        What other ingredients already bring, ``{substance: mg/kg}``.

    Returns
    -------
    DoseCheck
        ``.ok`` (every limit kept), ``.complete`` (no substance without data),
        ``.max_dose`` (in the unit of the dose, e.g. a mass fraction) and
        ``.binding`` (the limit that sets it), ``.checks`` (every limit with its
        level).

    Notes
    -----
    How ``rank`` and ``blend`` use it: for each candidate, call
    ``carrier_dose_check(cat, candidate, steps, jurisdiction, category)``; drop
    (or flag, with ``keep_over``) a candidate whose ``ok`` is false, show
    ``binding.rule`` and ``max_dose`` beside it, and flag one whose
    ``complete`` is false ("no data": never a permission).  A candidate that
    is a user's or library liquid without CAS gets ``no_data``.

    Examples
    --------
    A flavour that is 100 % propylene glycol in an EU beverage: the carrier
    group limit of 1 000 mg/L (Reg. (EC) No 1333/2008 Annex III Part 4) caps
    the dose at 1000 / (10^6 x 1.04) = 0.096 % for a drink of density 1.04.

    >>> from solvsel.science.formulation import Step
    >>> drink = [Step("drink", "w/w", 0.0005, density_g_cm3=1.04)]
    >>> chk = carrier_dose_check(None, "propylene glycol", drink, "EU", "flavoured drinks")
    >>> round(chk.max_dose * 100, 4), chk.binding.unit
    (0.0962, 'mg/L')
    """
    from ..science.formulation import Formula, formula_from_amounts

    cat = _catalog(cat)
    if isinstance(solvent_or_formula, Formula):
        formula = solvent_or_formula
    elif isinstance(solvent_or_formula, Mapping):
        formula = formula_from_amounts(cat, [(n, 100.0 * w) for n, w in solvent_or_formula.items()], name="blend")
    elif isinstance(solvent_or_formula, (list, tuple)):
        formula = formula_from_amounts(cat, [(n, 100.0 * w) for n, w in solvent_or_formula], name="blend")
    else:
        name = solvent_or_formula if isinstance(solvent_or_formula, str) else _get(solvent_or_formula, "name")
        formula = formula_from_amounts(cat, [(solvent_or_formula, 100.0)], name=str(name))
    return check_dose(cat, formula, steps, jurisdiction, category, already=already)
