"""Where an answer comes from: the version of solvsel and a checksum of the tables it read.

A regulator (or a colleague) who is handed a result can check it against the
same program and the same data: every JSON output and report carries one
``audit`` block (:func:`audit_block`) with the version, :func:`tables_sha256`
(a SHA-256 of the bundled tables, computed once per folder) and the rules the
answer applied, each with its jurisdiction, checked-on date, confidence and
sources.

>>> a = audit_block()
>>> sorted(a), len(a["tables_sha256"])
(['rules_applied', 'solvsel_version', 'tables_sha256'], 64)
"""

from __future__ import annotations

import hashlib
from contextlib import contextmanager
from dataclasses import dataclass, fields
from functools import lru_cache
from pathlib import Path
from typing import Any, Iterable, Iterator

from .._version import __version__
from .catalog import TABLES_DIR

__all__ = ["TABLE_SUFFIXES", "tables_sha256", "solvsel_version", "rules_applied", "audit_block",
           "is_recalled", "CellRead", "ReadLog", "logging_reads"]

#: Files of a tables folder that count in its checksum (the data; nothing else lives there).
TABLE_SUFFIXES = (".csv", ".json")


@lru_cache(maxsize=8)
def _sha256_of(tables_dir: Path) -> str:
    digest = hashlib.sha256()
    for path in sorted(p for p in tables_dir.iterdir() if p.is_file() and p.suffix in TABLE_SUFFIXES):
        digest.update(path.name.encode("utf-8") + b"\0")
        digest.update(path.read_bytes())
        digest.update(b"\0")
    return digest.hexdigest()


def tables_sha256(tables_dir: str | Path | None = None) -> str:
    """SHA-256 (hex) of the tables of a folder (default: the bundled ``tables/``).

    Each file (``.csv`` and ``.json``, in name order) adds its name and its
    bytes, so renaming, editing, adding or removing a table changes the
    checksum; it is computed once per folder and process.
    """
    return _sha256_of(Path(tables_dir or TABLES_DIR).resolve())


def solvsel_version() -> str:
    """The version of solvsel that made the answer."""
    return __version__


def rules_applied(rules: Iterable[Any]) -> list[dict[str, Any]]:
    """The rules an answer applied, each once: ``{rule, jurisdiction, checked_on, confidence, source}``.

    ``rules`` are records with those attributes (a row of the regulations table,
    or a check made against one); ``checked_on`` is None where the row records
    no date.  Sorted by jurisdiction and rule.

    >>> from types import SimpleNamespace as Row
    >>> r = Row(rule="21 CFR 173.270", jurisdiction="US", checked_on="", confidence="checked", source=("a",))
    >>> rules_applied([r, r])
    [{'rule': '21 CFR 173.270', 'jurisdiction': 'US', 'checked_on': None, 'confidence': 'checked', 'source': ['a']}]
    """
    seen: dict[tuple, dict[str, Any]] = {}
    for r in rules:
        entry = {"rule": r.rule, "jurisdiction": r.jurisdiction, "checked_on": r.checked_on or None,
                 "confidence": r.confidence, "source": list(r.source)}
        seen.setdefault((r.jurisdiction, r.rule, r.checked_on or "", r.confidence, tuple(r.source)), entry)
    return [seen[k] for k in sorted(seen)]


def audit_block(rules: Iterable[Any] = (), tables_dir: str | Path | None = None) -> dict[str, Any]:
    """The ``audit`` block of an answer: ``{solvsel_version, tables_sha256, rules_applied}``
    (:func:`rules_applied` of ``rules``; the checksum of ``tables_dir``, default the bundled tables)."""
    return {"solvsel_version": solvsel_version(), "tables_sha256": tables_sha256(tables_dir),
            "rules_applied": rules_applied(rules)}


# ----------------------------------------------------------------------------- what a run reads

#: Source column of a value column, where it is not the table's ``source`` (or ``props_source``).
SOURCE_COLUMN = {
    **{(t, c): "hsp_source" for t in ("solvents", "solutes") for c in ("dD_MPa05", "dP_MPa05", "dH_MPa05", "r0_MPa05")},
    **{("solvents", c): "miscibility_source" for c in ("water_miscibility", "water_in_solvent_wt", "solvent_in_water_wt")},
    ("solvents", "cost_class"): "cost_source",
    ("emulsifiers", "hlb"): "hlb_source",
    ("emulsifiers", "use_ratio_to_oil"): "ratio_source",
    ("emulsifiers", "sap_value_mg_KOH_g"): "spec_source",
    ("emulsifiers", "acid_value_of_acid_mg_KOH_g"): "spec_source",
    **{("oils", c): "rhlb_source" for c in ("rhlb_ow", "rhlb_wo")},
    **{(t, c): "density_source" for t in ("oils", "weighting_agents") for c in ("density_g_cm3", "density_T_C")},
    ("oils", "water_solubility_mg_L"): "solubility_source",
    **{(t, "ripening"): "ripening_source" for t in ("oils", "weighting_agents")},
    ("solutes", "vm_cm3_mol"): "vm_source",
    **{("hydrocolloids", c): "ratio_source" for c in ("use_ratio_to_oil", "ratio_min", "ratio_max")},
    ("hydrocolloids", "density_g_cm3"): "density_source",
}

#: Columns a recalled source covers where a cell lists several sources (``chemicals_lib;memory_fusion``):
#: a recalled id not named here marks every value of the row that cell is the source of.
MEMORY_SCOPE = {
    "memory_fusion": ("mp_C", "dHfus_kJ_mol"),
    "memory_flash": ("flash_C",),
    "memory_liquid_props": ("density_g_cm3", "visc_mPa_s", "alpha_1_K", "vm_cm3_mol"),
    "memory_liquid_viscosity": ("visc_mPa_s",),
    "memory_mutual_solubility_value": ("water_in_solvent_wt", "solvent_in_water_wt"),
    "memory_oil_props_other": ("mp_C", "flash_C", "flammable", "visc_mPa_s"),
    "memory_oil_mw": ("mw_g_mol", "vm_cm3_mol"),
    "memory_oil_mp": ("mp_C", "visc_mPa_s"),
    "memory_genotelle_sucrose_viscosity": tuple(f"visc_{t}C_mPa_s" for t in range(0, 61, 5)),
}

#: Text columns that hold a value (a verdict) rather than a name or a note.
VALUE_CHOICES = {("miscibility", "one_phase"), ("solvents", "water_miscibility"), ("solvents", "flammable"),
                 ("oils", "ripening"), ("weighting_agents", "ripening"), ("health_hazards", "statements")}

#: Record fields whose column name differs from the field name.
_FIELD_COLUMNS = {"dD": "dD_MPa05", "dP": "dP_MPa05", "dH": "dH_MPa05", "r0": "r0_MPa05"}


def is_recalled(source_id: str) -> bool:
    """True for a source id marked "from memory" (``memory_...`` or ``..._memory``).

    >>> is_recalled("griffin1949_memory"), is_recalled("memory_rhlb"), is_recalled("thermo_lib")
    (True, True, False)
    """
    return source_id.startswith("memory_") or source_id.endswith("_memory")


@dataclass(frozen=True)
class CellRead:
    """One value a run read: table, row (its name), column, and the source ids it carries."""

    table: str
    row: str
    column: str
    sources: tuple[str, ...]

    @property
    def recalled(self) -> bool:
        """Marked from memory: one of its sources is recalled and covers this column."""
        return any(is_recalled(s) and self.column in MEMORY_SCOPE.get(s, (self.column,)) for s in self.sources)


class ReadLog:
    """The table cells read while :func:`logging_reads` is active (each cell once)."""

    def __init__(self) -> None:
        self.cells: dict[tuple[str, int, str], CellRead] = {}
        self._frames: dict[str, Any] = {}

    def note(self, table: str, index: int, column: str) -> None:
        """Record that ``column`` of row ``index`` (position in the bundled table) was read."""
        df = self._frames.get(table)
        if df is None or (table, index, column) in self.cells or column not in df.columns:
            return
        if not _is_value(df, table, column):
            return
        row = df.loc[index]
        value = row[column]
        if value is None or (isinstance(value, float) and value != value) or str(value) in ("", "<NA>"):
            return
        src = SOURCE_COLUMN.get((table, column))
        src = src if src in df.columns else next((c for c in ("source", "props_source") if c in df.columns), None)
        ids = tuple(v for v in str(row[src]).split(";") if v) if src else ()
        name = str(row["name"]) if "name" in df.columns else str(row.get("liquid_a", index)) + (
            " / " + str(row["liquid_b"]) if "liquid_b" in df.columns else "")
        if table in ("sucrose_density", "sucrose_viscosity"):
            name = f"{row['sucrose_wt_pct']:g} %"
        self.cells[(table, index, column)] = CellRead(table, name, column, ids)

    def summary(self) -> dict[str, Any]:
        """Counts per table and in all: ``{"read", "recalled", "tables": {t: [read, recalled]}, "recalled_cells"}``."""
        tables: dict[str, list[int]] = {}
        for c in self.cells.values():
            t = tables.setdefault(c.table, [0, 0])
            t[0] += 1
            t[1] += c.recalled
        rec = sorted((c.table, c.row, c.column, ";".join(c.sources)) for c in self.cells.values() if c.recalled)
        return {"read": len(self.cells), "recalled": len(rec), "tables": dict(sorted(tables.items())),
                "recalled_cells": [list(r) for r in rec]}


def _is_value(df, table: str, column: str) -> bool:
    return (table, column) in VALUE_CHOICES or df[column].dtype.kind in "fi" or str(df[column].dtype) == "Int64"


class _LoggedRow(dict):
    """A table row (``to_dict("records")``) that notes each value read from it."""

    def __init__(self, data, log: ReadLog, table: str, index: int):
        super().__init__(data)
        self._where = (log, table, index)

    def __getitem__(self, key):
        log, table, index = self._where
        log.note(table, index, key)
        return super().__getitem__(key)

    def get(self, key, default=None):
        return self[key] if key in self else default

    def __iter__(self):  # makes dict(row) read through __getitem__
        return iter(list(super().keys()))


def _logged_frame(df, log: ReadLog, table: str):
    """``df`` as a DataFrame whose column reads and ``to_dict("records")`` rows note what is read."""
    import pandas as pd

    class LoggedFrame(pd.DataFrame):
        _metadata = ["_read_where"]

        @property
        def _constructor(self):
            return LoggedFrame

        def __getitem__(self, key):
            where = getattr(self, "_read_where", None)
            if where and isinstance(key, str) and key in self.columns:
                for i in self.index:
                    where[0].note(where[1], i, key)
            return super().__getitem__(key)

        def to_dict(self, orient="dict", *args, **kwargs):
            out = super().to_dict(orient, *args, **kwargs)
            where = getattr(self, "_read_where", None)
            if orient == "records" and where:
                return [_LoggedRow(r, where[0], where[1], i) for r, i in zip(out, self.index)]
            return out

    frame = LoggedFrame(df)
    frame._read_where = (log, table)
    return frame


_LOGGED_CLASSES: dict[type, type] = {}


def _logged_record(rec, log: ReadLog, table: str, index: int):
    """A copy of a solvent or solute record that notes each field read (a field is its column)."""
    cls = type(rec)
    if cls not in _LOGGED_CLASSES:
        names = {f.name for f in fields(cls)}

        def __getattribute__(self, name, _names=names, _base=cls):
            if name in _names:
                where = object.__getattribute__(self, "__dict__").get("_read_where")
                if where:
                    where[0].note(where[1], where[2], _FIELD_COLUMNS.get(name, name))
            return _base.__getattribute__(self, name)

        _LOGGED_CLASSES[cls] = type(cls.__name__, (cls,), {"__getattribute__": __getattribute__})
    out = _LOGGED_CLASSES[cls](**{f.name: getattr(rec, f.name) for f in fields(rec)})
    object.__setattr__(out, "_read_where", (log, table, index))
    return out


def _logging_catalog(tables_dir: Path, log: ReadLog):
    from .catalog import Catalog, _solute_from_row, _solvent_from_row

    builders = {"solvents": _solvent_from_row, "solutes": _solute_from_row}

    class LoggingCatalog(Catalog):
        def table(self, name: str):
            df = super().table(name)
            key = next((t for t, f in self._tables.items() if f is df), None)
            if key is None:
                return df
            log._frames.setdefault(key, df)
            return _logged_frame(df, log, key)

        def _plain(self, table: str):
            key = self._table_name(table)
            return key, log._frames.setdefault(key, Catalog.table(self, key))

        def rows(self, name: str) -> list:
            if self._table_name(name) == "sources":
                return Catalog.rows(self, name)
            key, _ = self._plain(name)
            return [_LoggedRow(r, log, key, i) for i, r in enumerate(Catalog._read(self, key)[1])]

        def find(self, table: str, name: str) -> dict:
            i = self.find_index(table, name)
            key, plain = self._plain(table)
            return _LoggedRow(plain.iloc[i].to_dict(), log, key, i)

        def _records_of(self, table: str) -> list:
            if table not in self._records:
                plain = Catalog.table(self, table)
                log._frames.setdefault(table, plain)
                self._records[table] = [_logged_record(builders[table](r), log, table, i)
                                        for i, r in enumerate(plain.to_dict("records"))]
            return self._records[table]

        def solvent_records(self) -> list:
            return self._records_of("solvents")

        def solute_records(self) -> list:
            return self._records_of("solutes")

    return LoggingCatalog(tables_dir)


@contextmanager
def logging_reads(tables_dir: str | Path | None = None) -> Iterator[ReadLog]:
    """While active, the default catalog (:func:`~solvsel.data.catalog.load_catalog` without own
    tables) is a fresh one that notes every table value read; yields the :class:`ReadLog`.

    Use it in a fresh process (caches of earlier runs would hide reads):

    >>> with logging_reads() as log:
    ...     from solvsel.data.catalog import load_catalog
    ...     _ = load_catalog().solute("caffeine").dD
    >>> [(c.table, c.row, c.column) for c in log.cells.values()]
    [('solutes', 'caffeine', 'dD_MPa05')]
    """
    from . import catalog as catalog_module

    log = ReadLog()
    tdir = Path(tables_dir or TABLES_DIR)
    cat = _logging_catalog(tdir, log)
    saved = catalog_module._cached_catalog

    def cached(path: Path):
        return cat if Path(path) == tdir else saved(path)

    catalog_module._cached_catalog = cached
    try:
        yield log
    finally:
        catalog_module._cached_catalog = saved
