"""Markdown, CSV and JSON export of any result.

A report is the readable text of a command, its JSON document, a CSV of its
main list (results, pairs, stages ... flattened to columns), the full
citations of every source id the result mentions, and the audit trail (the
version of solvsel, the checksum of the tables and every rule applied with the
date it was checked against its text), so a reader can check each number.
Files that exist are never overwritten unless asked.
"""

from __future__ import annotations

import csv
import datetime as _dt
import io
import json
from pathlib import Path
from typing import Any, Iterable

from .._version import __version__
from ..data.catalog import spreadsheet_safe
from ..data.provenance import audit_block
from ..errors import InputError, UnknownNameError

__all__ = ["collect_source_ids", "rows_for_csv", "render_markdown", "audit_markdown", "write_report"]

_SOURCE_KEYS = ("sources", "source", "hsp_source", "props_source", "source_ids")
_LIST_KEYS = ("results", "pairs", "stages", "limits", "options", "wrong_side", "suggested_tests")


def collect_source_ids(data: Any) -> list[str]:
    """Source ids named anywhere in a JSON-like result (keys such as ``sources`` or ``hsp_source``).

    >>> collect_source_ids({"results": [{"sources": ["a", "b"]}, {"hsp_source": "b;c"}]})
    ['a', 'b', 'c']
    """
    out: list[str] = []

    def walk(x):
        if isinstance(x, dict):
            for k, v in x.items():
                if k in _SOURCE_KEYS:
                    vals = v if isinstance(v, list) else str(v or "").split(";")
                    for s in vals:
                        if isinstance(s, str) and s.strip() and s.strip() not in out:
                            out.append(s.strip())
                else:
                    walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)

    walk(data)
    return out


def _flatten(d: Any, prefix: str = "") -> dict[str, Any]:
    out: dict[str, Any] = {}
    if isinstance(d, dict):
        for k, v in d.items():
            key = f"{prefix}{k}"
            if isinstance(v, dict):
                out.update(_flatten(v, key + "."))
            elif isinstance(v, list):
                if all(not isinstance(i, (dict, list)) for i in v):
                    out[key] = "; ".join("" if i is None else str(i) for i in v)
                else:
                    out[key] = json.dumps(v, ensure_ascii=False)
            else:
                out[key] = v
    else:
        out[prefix.rstrip(".") or "value"] = d
    return out


def rows_for_csv(data: Any) -> list[dict[str, Any]]:
    """The main list of a result as flat rows (nested fields joined with dots).

    >>> rows_for_csv({"target": {"dD": 17}, "results": [{"name": "ethanol", "ra": 5.2}]})
    [{'name': 'ethanol', 'ra': 5.2}]
    """
    if isinstance(data, list):
        return [_flatten(r) for r in data]
    if isinstance(data, dict):
        for k in _LIST_KEYS:
            if isinstance(data.get(k), list) and data[k]:
                return [_flatten(r) for r in data[k]]
        return [_flatten(data)]
    return [{"value": data}]


def audit_markdown(audit: dict | None) -> list[str]:
    """The ``## Audit`` section of a report: version, tables' checksum and the rules applied (lines).

    >>> audit_markdown({"solvsel_version": "1.0", "tables_sha256": "ab", "rules_applied": [
    ...     {"rule": "21 CFR 173.270", "jurisdiction": "US", "checked_on": None, "confidence": "checked",
    ...      "source": ["s1"]}]})[4]
    '- US 21 CFR 173.270: checked on: not recorded; confidence: checked; sources: s1'
    """
    if not audit:
        return []
    lines = ["## Audit", "", f"solvsel {audit.get('solvsel_version')}; tables SHA-256 `{audit.get('tables_sha256')}`", ""]
    rules = audit.get("rules_applied") or []
    for r in rules:
        lines.append(f"- {r['jurisdiction']} {r['rule']}: checked on: {r.get('checked_on') or 'not recorded'}; "
                     f"confidence: {r['confidence']}; sources: {', '.join(r.get('source') or []) or '-'}")
    if not rules:
        lines.append("No legal rule was applied in this answer.")
    return lines + [""]


def render_markdown(title: str, command: str, text: str, data: Any, citations: Iterable[dict]) -> str:
    """A Markdown report: what was run, its readable output, and the sources cited."""
    when = _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    lines = [
        f"# {title}",
        "",
        f"Made by solvsel {__version__} on {when} with:",
        "",
        "```",
        f"solvsel {command}",
        "```",
        "",
        "## Result",
        "",
        "```",
        text.rstrip(),
        "```",
        "",
    ]
    cites = list(citations)
    if cites:
        lines += ["## Sources", ""]
        for c in cites:
            url = f" <{c['url']}>" if c.get("url") else ""
            lines.append(f"- `{c['id']}` ({c['kind']}): {c['citation']}{url}")
        lines.append("")
    lines += audit_markdown(data.get("audit") if isinstance(data, dict) else None)
    lines += [
        "## Caution",
        "",
        "Every number here is an estimate for planning bench work, not a safety, regulatory or stability "
        "sign-off. Values marked memory were recalled and not checked; legal limits change: check them "
        "against the regulations in force. Defer to local codes, the regulations in force and licensed practice.",
        "",
    ]
    return "\n".join(lines)


def write_report(out: str | Path, title: str, command: str, text: str, data: Any, catalog=None,
                 force: bool = False) -> list[Path]:
    """Write ``out`` (.md) with a .json and a .csv beside it; returns the paths written.

    Raises :class:`InputError` if any of the three exists and ``force`` is False.
    """
    md = Path(out)
    if md.suffix.lower() != ".md":
        md = md.with_suffix(md.suffix + ".md") if md.suffix else md.with_suffix(".md")
    paths = [md, md.with_suffix(".json"), md.with_suffix(".csv")]
    if not force:
        existing = [str(p) for p in paths if p.exists()]
        if existing:
            raise InputError(f"report: {existing[0]} exists already; choose another name or pass --force to replace it")
    if not md.parent.exists():
        raise InputError(f"report: folder '{md.parent}' does not exist")
    if isinstance(data, dict) and "audit" not in data:
        data = {**data, "audit": audit_block(tables_dir=getattr(catalog, "tables_dir", None))}
    citations = []
    if catalog is not None:
        for sid in collect_source_ids(data):
            try:
                citations.append(catalog.source(sid))
            except UnknownNameError:  # a user's own free-text source
                citations.append({"id": sid, "kind": "user", "citation": "given in your own table", "url": ""})
    paths[0].write_text(render_markdown(title, command, text, data, citations), encoding="utf-8")
    paths[1].write_text(json.dumps(data, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    rows = rows_for_csv(data)
    cols: list[str] = []
    for r in rows:
        cols += [c for c in r if c not in cols]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")  # text a spreadsheet would run as a formula is written as text
    w.writerow([spreadsheet_safe(c) for c in cols])
    w.writerows([spreadsheet_safe(r.get(c, "")) for c in cols] for r in rows)
    paths[2].write_text(buf.getvalue(), encoding="utf-8")
    return paths
