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
from functools import lru_cache
from pathlib import Path
from typing import Any, Iterable

from .._version import __version__
from .catalog import TABLES_DIR

__all__ = ["TABLE_SUFFIXES", "tables_sha256", "solvsel_version", "rules_applied", "audit_block"]

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
