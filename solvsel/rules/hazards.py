"""GHS hazards of liquids: the physical-hazard class from flash point and boiling point, and the
health hazards (harmonised statements, a worst-hazard scale of our own, exposure limits and
carcinogen listings).

Health hazards come from ``tables/health_hazards.csv`` (the harmonised classification of
Regulation (EC) No 1272/2008 Annex VI [2]_, each row with its source and whether it was checked),
and, for occupational exposure limits and carcinogen listings, from the reference library
``chemicals`` (its ``safety`` module; each value names the list it comes from).

The worst health hazard of a liquid is put on a plain ordered scale of our own
(:data:`HEALTH_LEVELS`), from its statements:

=====  ==================  ==============================================================
level  name                statements
=====  ==================  ==============================================================
0      none                no health hazard statement
1      irritant            H315, H317, H319, H335, H336 (skin, eye, airway irritation,
                           skin sensitisation, drowsiness)
2      harmful             H302, H312, H332 (acute toxicity category 4), H304
                           (aspiration), H371, H373 (organ damage, category 2)
3      toxic or corrosive  H300, H301, H310, H311, H330, H331 (acute toxicity 1-3),
                           H314, H318 (corrosive, serious eye damage), H334, H370, H372
4      suspected CMR       H341, H351, H361 (suspected mutagen, carcinogen, reprotoxicant),
                           H362
5      CMR                 H340, H350, H360 (mutagen, carcinogen, reprotoxicant,
                           categories 1A and 1B)
=====  ==================  ==============================================================

A statement with a suffix (H361d, H360FD, H350i) counts as its three-digit code.

References
----------
.. [1] United Nations. *Globally Harmonized System of Classification and
   Labelling of Chemicals (GHS)*, Rev. 10, 2023, chapter 2.6 (flammable
   liquids) and chapters 2.2 / 2.5 (flammable gases, gases under pressure);
   annex 3 (hazard statements).
.. [2] Regulation (EC) No 1272/2008 of the European Parliament and of the
   Council on classification, labelling and packaging of substances and
   mixtures, Annex VI Part 3 Table 3 (harmonised classification).
"""

from __future__ import annotations

import atexit
import hashlib
import json
import math
from dataclasses import asdict, dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from ..errors import InputError

__all__ = ["Hazard", "hazard_class", "HealthHazard", "HEALTH_LEVELS", "health_hazard", "health_level",
           "check_health_level", "exposure_limits", "carcinogen_listings", "HEALTH_STATEMENTS"]


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




# ----------------------------------------------------------------------------- health

#: The worst-health-hazard scale, mildest first (see the module docstring).
HEALTH_LEVELS = ("none", "irritant", "harmful", "toxic or corrosive", "suspected CMR", "CMR")

#: Texts of the GHS health hazard statements (GHS Rev. 10, annex 3) the tables use.
HEALTH_STATEMENTS = {
    "H300": "fatal if swallowed", "H301": "toxic if swallowed", "H302": "harmful if swallowed",
    "H304": "may be fatal if swallowed and enters airways", "H310": "fatal in contact with skin",
    "H311": "toxic in contact with skin", "H312": "harmful in contact with skin",
    "H314": "causes severe skin burns and eye damage", "H315": "causes skin irritation",
    "H317": "may cause an allergic skin reaction", "H318": "causes serious eye damage",
    "H319": "causes serious eye irritation", "H330": "fatal if inhaled", "H331": "toxic if inhaled",
    "H332": "harmful if inhaled", "H334": "may cause allergy or asthma symptoms or breathing difficulties if inhaled",
    "H335": "may cause respiratory irritation", "H336": "may cause drowsiness or dizziness",
    "H340": "may cause genetic defects", "H341": "suspected of causing genetic defects",
    "H350": "may cause cancer", "H351": "suspected of causing cancer",
    "H360": "may damage fertility or the unborn child", "H361": "suspected of damaging fertility or the unborn child",
    "H362": "may cause harm to breast-fed children", "H370": "causes damage to organs",
    "H371": "may cause damage to organs", "H372": "causes damage to organs through prolonged or repeated exposure",
    "H373": "may cause damage to organs through prolonged or repeated exposure",
}

_LEVEL_OF = {
    **dict.fromkeys(("H315", "H317", "H319", "H335", "H336"), 1),
    **dict.fromkeys(("H302", "H312", "H332", "H304", "H371", "H373"), 2),
    **dict.fromkeys(("H300", "H301", "H310", "H311", "H330", "H331", "H314", "H318", "H334", "H370", "H372"), 3),
    **dict.fromkeys(("H341", "H351", "H361", "H362"), 4),
    **dict.fromkeys(("H340", "H350", "H360"), 5),
}


def health_level(statements) -> int:
    """Level on :data:`HEALTH_LEVELS` of a set of health hazard statements (0 when none).

    >>> HEALTH_LEVELS[health_level(["H301", "H311", "H331", "H370"])]
    'toxic or corrosive'
    >>> HEALTH_LEVELS[health_level(["H351"])], health_level([])
    ('suspected CMR', 0)
    """
    return max((_LEVEL_OF.get(str(h).strip()[:4].upper(), 0) for h in statements), default=0)


def check_health_level(value, param: str = "max_health_hazard") -> str:
    """A level of :data:`HEALTH_LEVELS` given by name (any case) or by its number 0-5.

    >>> check_health_level("Harmful"), check_health_level(4)
    ('harmful', 'suspected CMR')
    """
    expected = "one of " + ", ".join(HEALTH_LEVELS) + " (or 0 to 5)"
    text = str(value).strip()
    if text.isdigit() and int(text) < len(HEALTH_LEVELS) and not isinstance(value, bool):
        return HEALTH_LEVELS[int(text)]
    for level in HEALTH_LEVELS:
        if text.casefold() == level.casefold():
            return level
    raise InputError(f"expected {expected}, got '{value}'", param=param, value=value, expected=expected)


@dataclass(frozen=True)
class HealthHazard:
    """The health hazards of one liquid.

    ``statements`` are the GHS health hazard statements (empty: none), ``basis`` "harmonised"
    (Regulation (EC) No 1272/2008 Annex VI), "none harmonised" or "safety data compilation",
    ``confidence`` "checked" or "from memory", ``level`` / ``category`` the worst hazard on
    :data:`HEALTH_LEVELS`; ``exposure_limits`` the occupational exposure limits
    (``{"TWA": [value, unit], "STEL": ..., "Ceiling": ..., "source": ...}``) and
    ``carcinogen_listings`` the listings (list name -> status) of the reference library.
    """

    name: str
    cas: str
    statements: tuple[str, ...]
    level: int
    category: str
    basis: str
    confidence: str
    sources: tuple[str, ...]
    note: str = ""
    exposure_limits: dict | None = None
    carcinogen_listings: dict | None = None

    @property
    def label(self) -> str:
        """The worst hazard and its statements in a few words ("suspected CMR (H351)")."""
        if not self.statements:
            return "none classified" if self.basis != "none harmonised" else "no harmonised classification"
        return f"{self.category} ({', '.join(self.statements)})"

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["statements"] = list(self.statements)
        d["sources"] = list(self.sources)
        d["texts"] = {h: HEALTH_STATEMENTS.get(h[:4], "") for h in self.statements}
        d["label"] = self.label
        return d


def _listed(values: str) -> tuple[str, ...]:
    return tuple(v.strip() for v in str(values or "").split(";") if v.strip())


def health_hazard(cat, solvent) -> HealthHazard | None:
    """The health hazards of a liquid (a record or mapping with ``name`` and ``cas``) from
    ``tables/health_hazards.csv`` (by CAS, else by name), with the reference library's exposure
    limits and carcinogen listings; None when the table has no row for it (a user's or library
    liquid).

    >>> from solvsel.data.catalog import load_catalog
    >>> hh = health_hazard(load_catalog(), {"name": "dichloromethane", "cas": "75-09-2"})
    >>> hh.statements, hh.category, hh.basis
    (('H351',), 'suspected CMR', 'harmonised')
    """
    get = solvent.get if isinstance(solvent, dict) else (lambda k, d=None: getattr(solvent, k, d))
    name, cas = str(get("name", "") or ""), str(get("cas", "") or "")
    if cat is None:
        from ..data.catalog import load_catalog

        cat = load_catalog()
    key = cas if cas and cat.match_index("health_hazards", cas) is not None else name
    if not key.strip() or cat.match_index("health_hazards", key) is None:
        return None
    row = cat.find("health_hazards", key)  # through find, so a log of the values read sees these too
    statements = _listed(row["statements"])
    level = health_level(statements)
    return HealthHazard(str(row["name"]), cas, statements, level, HEALTH_LEVELS[level], str(row["basis"]),
                        str(row["confidence"]), _listed(row["source"]), str(row.get("note") or ""),
                        exposure_limits(cas) if cas else None, carcinogen_listings(cas) if cas else None)


# The reference library's exposure limits and carcinogen listings, kept in the cache folder
# (:func:`~solvsel.data.catalog.cache_dir`) beside the pair matrices: loading the library's safety
# data costs more than a whole search.  One JSON file per version of the library and of this module:
# {"limits": {cas: [[key, [value, unit], list], ...]}, "carcinogen": {cas: [[listing, status], ...]}}.
_LIBRARY: dict[str, dict] = {}
_LIBRARY_NEW: list[str] = []


@lru_cache(maxsize=1)
def _library_key() -> str | None:
    """What the kept values depend on: the library's version and this module (None: no library)."""
    from ..data.catalog import installed_stamp

    stamp = installed_stamp("chemicals")
    if stamp is None:
        return None
    digest = hashlib.sha256(stamp.encode())
    digest.update(Path(__file__).read_bytes())
    return digest.hexdigest()[:32]


def _library_file() -> Path | None:
    """The cache file of the library's safety values, or None (no cache folder, or no library)."""
    from ..data.catalog import cache_dir

    folder, key = cache_dir(), _library_key()
    return None if folder is None or key is None else folder / f"safety_{key}.json"


def _read_library_file(path: Path | None) -> dict[str, dict]:
    """The values kept in ``path`` (what is absent, unreadable or malformed is read from the library again)."""
    empty: dict[str, dict] = {"limits": {}, "carcinogen": {}}
    try:
        data = json.loads(path.read_text(encoding="utf-8")) if path is not None else empty
        return {kind: {str(cas): tuple(tuple(tuple(v) if isinstance(v, list) else v for v in entry)
                                       for entry in entries)
                       for cas, entries in data[kind].items()} for kind in empty}
    except (OSError, ValueError, TypeError, KeyError, AttributeError):
        return empty


def _save_library_values() -> None:
    """Write the values read from the library in this process to the cache file (run at exit)."""
    path = _library_file()
    if not _LIBRARY_NEW or path is None:
        return
    from ..data.catalog import write_cache_file

    merged = _read_library_file(path)
    for kind, values in _LIBRARY.items():
        merged[kind].update(values)
    if write_cache_file(path, lambda tmp: tmp.write_text(json.dumps(merged), encoding="utf-8")):
        _LIBRARY_NEW.clear()


def _library_value(kind: str, cas: str, read) -> tuple:
    """The library's ``kind`` of values for ``cas``: from the cache file, else ``read(cas)`` (kept
    for the next run)."""
    if not _LIBRARY:
        _LIBRARY.update(_read_library_file(_library_file()))
    values = _LIBRARY[kind]
    if cas not in values:
        values[cas] = read(cas)
        if not _LIBRARY_NEW:
            atexit.register(_save_library_values)
        _LIBRARY_NEW.append(cas)
    return values[cas]


def _read_limits(cas: str) -> tuple:
    from chemicals import safety

    out = []
    for key, fn, methods in (("TWA", safety.TWA, safety.TWA_methods), ("STEL", safety.STEL, safety.STEL_methods),
                             ("Ceiling", safety.Ceiling, safety.Ceiling_methods)):
        found = methods(cas)
        value = fn(cas) if found else None
        if value is not None:
            out.append((key, (float(value[0]), str(value[1])), found[0]))
    return tuple(out)


def _limits(cas: str) -> tuple:
    return _library_value("limits", cas, _read_limits)


def exposure_limits(cas: str) -> dict | None:
    """Occupational exposure limits of ``cas`` from the reference library ``chemicals``
    (``chemicals.safety``: TWA, STEL, Ceiling), each ``[value, unit]``, and ``source``, the list
    the library names (e.g. "Ontario Limits"); None when it has none.

    >>> exposure_limits("67-56-1")["TWA"], exposure_limits("67-56-1")["source"]
    ([200.0, 'ppm'], 'Ontario Limits')
    """
    found = _limits(cas)
    if not found:
        return None
    out: dict[str, Any] = {key: list(value) for key, value, _ in found}
    out["source"] = "; ".join(dict.fromkeys(src for _, _, src in found))
    return out


def _read_carcinogen(cas: str) -> tuple:
    from chemicals import safety

    if not safety.Carcinogen_methods(cas):
        return ()
    return tuple((k, str(v)) for k, v in safety.Carcinogen(cas).items() if str(v) != "Unlisted")


def _carcinogen(cas: str) -> tuple:
    return _library_value("carcinogen", cas, _read_carcinogen)


def carcinogen_listings(cas: str) -> dict | None:
    """The carcinogen listings of ``cas`` in the reference library ``chemicals``
    (``chemicals.safety.Carcinogen``: IARC and the NTP Report on Carcinogens), listing -> status,
    the unlisted left out; None when it is listed nowhere.

    >>> sorted(carcinogen_listings("75-09-2"))
    ['International Agency for Research on Cancer', 'National Toxicology Program 13th Report on Carcinogens']
    """
    found = _carcinogen(cas)
    return dict(found) if found else None
