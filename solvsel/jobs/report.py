"""Markdown, HTML, CSV and JSON export of any result, with its figures.

A report is the readable text of a command, the inputs the result repeats, its figures
(:mod:`solvsel.jobs.figures`, drawn with matplotlib: the extra ``figures``), the full citations of
every source id the result mentions, the audit trail (the version of solvsel, the checksum of the
tables and every rule applied with the date it was checked against its text) and every caution, so a
reader can check each number.  The set of files: ``OUT.md`` (the figures as PNG files beside it),
``OUT.html`` (one self-contained page: figures embedded, nothing loaded from elsewhere), ``OUT.json``
(the result's JSON document) and ``OUT.csv`` (its main list, nested fields joined with dots).
Files that exist are never overwritten unless asked.

A front end other than the command line (the terminal UI's export) calls :func:`write_report` with its
own readable text and the result's ``to_dict()``, naming the job so the figures are drawn.
"""

from __future__ import annotations

import base64
import csv
import datetime as _dt
import html
import io
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable

from .._version import __version__
from ..data.catalog import spreadsheet_safe
from ..data.provenance import audit_block
from ..errors import InputError, MissingExtraError, UnknownNameError
from .figures import FigureData, draw_png, figures_of

__all__ = ["collect_source_ids", "rows_for_csv", "render_markdown", "render_html", "audit_markdown", "write_report",
           "ReportContent", "Figure", "markdown_of", "html_of", "draw_figures", "citations_of", "cautions_of",
           "report_paths"]

_SOURCE_KEYS = ("sources", "source", "hsp_source", "props_source", "source_ids")
_LIST_KEYS = ("results", "pairs", "stages", "limits", "options", "wrong_side", "suggested_tests")


def collect_source_ids(data: Any) -> list[str]:
    """Source ids named anywhere in a JSON-like result (keys such as ``sources`` or ``hsp_source``).

    >>> collect_source_ids({"results": [{"sources": ["a", "b"]}, {"hsp_source": "b;c"}]})
    ['a', 'b', 'c']
    """
    out: list[str] = []
    for v in _values_under(data, _SOURCE_KEYS):
        for s in (v if isinstance(v, list) else str(v or "").split(";")):
            if isinstance(s, str) and s.strip() and s.strip() not in out:
                out.append(s.strip())
    return out


def _values_under(x: Any, keys) -> Iterable[Any]:
    """The values under any of ``keys`` anywhere in a JSON-like document, in document order
    (not looking inside them)."""
    if isinstance(x, dict):
        for k, v in x.items():
            if k in keys:
                yield v
            else:
                yield from _values_under(v, keys)
    elif isinstance(x, list):
        for v in x:
            yield from _values_under(v, keys)


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


#: The closing caution of every report.
CAUTION = ("Every number here is an estimate for planning bench work, not a safety, regulatory or stability "
           "sign-off. Values marked memory were recalled and not checked; legal limits change: check them "
           "against the regulations in force. Defer to local codes, the regulations in force and licensed practice.")
#: Keys under which a result repeats its request.
_INPUT_KEYS = ("input", "constraints", "target")


@dataclass(frozen=True)
class Figure:
    """A figure of a report: its data, its PNG image (None when not drawn) and the file it is written to."""

    data: FigureData
    png: bytes | None = None
    file: str = ""


@dataclass(frozen=True)
class ReportContent:
    """Everything a report says, rendered as Markdown (:func:`render_markdown`) or HTML (:func:`render_html`).

    title, command : str
        The heading, and the command line (or the request, from a front end other than the command line).
    text : str
        The readable answer, as the front end shows it.
    data : dict or list
        The result's JSON document.
    citations : tuple of dict
        Each source id the result names, with its ``kind``, ``citation`` and ``url``.
    figures : tuple of Figure
    figure_note : str
        Why there are no figures (a missing extra), or "".
    when : str
        When it was made (UTC).
    """

    title: str
    command: str
    text: str
    data: Any
    citations: tuple = ()
    figures: tuple = ()
    figure_note: str = ""
    when: str = field(default_factory=lambda: _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"))

    @property
    def inputs(self) -> list[tuple[str, str]]:
        """The request as the result repeats it: (field, value) pairs of its ``input``, ``constraints`` and
        ``target``, fields without a value left out."""
        out = []
        if isinstance(self.data, dict):
            for key in _INPUT_KEYS:
                block = self.data.get(key)
                if isinstance(block, dict):
                    out += [(f"{key}.{k}", _plain(v)) for k, v in block.items()
                            if v not in (None, [], {}, "") and k not in ("sources", "note")]
        return out

    @property
    def cautions(self) -> list[str]:
        """Every caution the result holds, each once, in order."""
        return cautions_of(self.data)


def _plain(value: Any) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, (list, tuple)):
        return ", ".join(_plain(v) for v in value)
    if isinstance(value, dict):
        return json.dumps(value, ensure_ascii=False)
    return str(value)


def cautions_of(data: Any) -> list[str]:
    """Every text under a ``cautions`` key anywhere in a result, each once, in order.

    >>> cautions_of({"cautions": ["a"], "results": [{"cautions": ["b", "a"]}]})
    ['a', 'b']
    """
    out: list[str] = []
    for v in _values_under(data, ("cautions", "liquid_cautions")):
        if isinstance(v, list):
            out.extend(c for c in v if isinstance(c, str) and c not in out)
    return out


def render_markdown(title: str, command: str, text: str, data: Any, citations: Iterable[dict],
                    figures: Iterable[Figure] = (), figure_note: str = "") -> str:
    """A Markdown report: what was run, its inputs, its readable output, the figures (image files beside
    it), the sources cited, the audit and the cautions."""
    return markdown_of(ReportContent(title, command, text, data, tuple(citations), tuple(figures), figure_note))


def markdown_of(c: ReportContent) -> str:
    """The Markdown text of a report."""
    lines = [f"# {c.title}", "", f"Made by solvsel {__version__} on {c.when} with:", "", "```",
             f"solvsel {c.command}", "```", ""]
    if c.inputs:
        lines += ["## Inputs", ""] + [f"- {k}: {v}" for k, v in c.inputs] + [""]
    lines += ["## Result", "", "```", c.text.rstrip(), "```", ""]
    if c.figures or c.figure_note:
        lines += ["## Figures", ""]
        for f in c.figures:
            lines += [f"![{f.data.title}]({f.file})", "", f"*{f.data.caption}*", ""]
        if c.figure_note:
            lines += [c.figure_note, ""]
    if c.citations:
        lines += ["## Sources", ""]
        for s in c.citations:
            url = f" <{s['url']}>" if s.get("url") else ""
            lines.append(f"- `{s['id']}` ({s['kind']}): {s['citation']}{url}")
        lines.append("")
    lines += audit_markdown(c.data.get("audit") if isinstance(c.data, dict) else None)
    lines += ["## Caution", ""] + [f"- {x}" for x in c.cautions] + ([""] if c.cautions else []) + [CAUTION, ""]
    return "\n".join(lines)


_STYLE = """body{font-family:system-ui,sans-serif;max-width:1200px;margin:1.5em auto;padding:0 1em;color:#222}
pre{background:#f6f6f6;padding:.8em;overflow-x:auto;font-size:11px;line-height:1.35}
figure{margin:1.5em 0}figure img{max-width:100%;height:auto;border:1px solid #ddd}
figcaption{font-size:.9em;color:#444;margin-top:.4em}code{background:#f1f1f1;padding:0 .2em}
table{border-collapse:collapse}td{padding:.1em .8em .1em 0;vertical-align:top}
.note{background:#fff6e0;padding:.6em;border-left:4px solid #e0a000}li{margin:.2em 0}"""


def html_of(c: ReportContent) -> str:
    """The report as one self-contained HTML page: the figures are embedded (base64 PNG), no file or
    address outside it is loaded, and addresses of sources are shown as text, not links."""
    e = html.escape
    parts = [f"<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>{e(c.title)}</title>"
             f"<style>{_STYLE}</style></head><body>", f"<h1>{e(c.title)}</h1>",
             f"<p>Made by solvsel {e(__version__)} on {e(c.when)} with:</p><pre>solvsel {e(c.command)}</pre>"]
    if c.inputs:
        rows = "".join(f"<tr><td><code>{e(k)}</code></td><td>{e(v)}</td></tr>" for k, v in c.inputs)
        parts.append(f"<h2>Inputs</h2><table>{rows}</table>")
    parts.append(f"<h2>Result</h2><pre>{e(c.text.rstrip())}</pre>")
    if c.figures or c.figure_note:
        parts.append("<h2>Figures</h2>")
        for f in c.figures:
            src = "data:image/png;base64," + base64.b64encode(f.png or b"").decode("ascii")
            parts.append(f"<figure><img src=\"{src}\" alt=\"{e(f.data.title)}\"><figcaption><b>{e(f.data.title)}."
                         f"</b> {e(f.data.caption)}</figcaption></figure>")
        if c.figure_note:
            parts.append(f"<p class=\"note\">{e(c.figure_note)}</p>")
    if c.citations:
        items = "".join(f"<li><code>{e(s['id'])}</code> ({e(s['kind'])}): {e(s['citation'])}"
                        f"{' &lt;' + e(s['url']) + '&gt;' if s.get('url') else ''}</li>" for s in c.citations)
        parts.append(f"<h2>Sources</h2><ul>{items}</ul>")
    audit = audit_markdown(c.data.get("audit") if isinstance(c.data, dict) else None)
    if audit:
        parts.append("<h2>Audit</h2>" + "".join(f"<p>{e(line.lstrip('- ').replace('`', ''))}</p>"
                                                for line in audit[2:] if line.strip()))
    cautions = "".join(f"<li>{e(x)}</li>" for x in c.cautions)
    parts.append(f"<h2>Caution</h2>{'<ul>' + cautions + '</ul>' if cautions else ''}<p>{e(CAUTION)}</p>")
    return "\n".join(parts) + "\n</body></html>\n"


def render_html(title: str, command: str, text: str, data: Any, citations: Iterable[dict],
                figures: Iterable[Figure] = (), figure_note: str = "") -> str:
    """As :func:`render_markdown`, one self-contained HTML page (figures embedded)."""
    return html_of(ReportContent(title, command, text, data, tuple(citations), tuple(figures), figure_note))


def draw_figures(job: str | None, data: Any, stem: str) -> tuple[tuple[Figure, ...], str]:
    """The figures of a result drawn as PNG (files named ``STEM-figN-KIND.png``), and a note instead when
    the plotting library is not installed."""
    found = figures_of(job or "", data)
    if not found:
        return (), ""
    try:
        drawn = tuple(Figure(f, draw_png(f), f"{stem}-fig{i}-{f.kind}.png") for i, f in enumerate(found, 1))
    except MissingExtraError as exc:
        return (), (f"{len(found)} figure(s) not drawn: {exc.message}.")
    return drawn, ""


def named_liquids(data: Any) -> list[str]:
    """Names of the entries of a result that carry no source of their own (a bench fit's liquids, a
    blend's components): their values are the tables', whose sources the report cites.

    >>> named_liquids({"liquids": [{"name": "water", "red": 2.1}], "target": {"name": "x", "sources": ["s"]}})
    ['water']
    """
    out: list[str] = []

    def walk(x):
        if isinstance(x, dict):
            if isinstance(x.get("name"), str) and not any(k in x for k in _SOURCE_KEYS) and x["name"] not in out:
                out.append(x["name"])
            for v in x.values():
                walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)

    walk(data)
    return out


def citations_of(data: Any, catalog=None) -> tuple[dict, ...]:
    """The full citation of every source id the result names, and of the table values of the liquids
    it names without a source (a user's free-text source as such)."""
    out = []
    if catalog is not None:
        ids = collect_source_ids(data)
        for name in named_liquids(data):
            try:
                ids += [s for s in catalog.solvent(name).sources if s not in ids]
            except UnknownNameError:  # not a liquid of the tables (a blend's label, a rule)
                continue
        for sid in ids:
            try:
                out.append(catalog.source(sid))
            except UnknownNameError:  # a user's own free-text source
                out.append({"id": sid, "kind": "user", "citation": "given in your own table", "url": ""})
    return tuple(out)


def report_paths(out: str | Path) -> list[Path]:
    """The Markdown file a report is written to (``.md`` added where missing), and the JSON, CSV and HTML beside it."""
    md = Path(out)
    if md.suffix.lower() != ".md":
        md = md.with_suffix(md.suffix + ".md") if md.suffix else md.with_suffix(".md")
    return [md, md.with_suffix(".json"), md.with_suffix(".csv"), md.with_suffix(".html")]


def write_report(out: str | Path, title: str, command: str, text: str, data: Any, catalog=None,
                 force: bool = False, job: str | None = None, figures: bool = True) -> list[Path]:
    """Write the report ``out`` (.md) with a .json, .csv, .html and its figures (.png) beside it; returns the
    paths written.

    ``job`` names the job whose result ``data`` is (``rank``, ``blend``, ``fit``, ``emulsion`` ... as in
    :func:`~solvsel.jobs.figures.figures_of`) so its figures are drawn (with ``figures``); without the
    plotting library the report says which extra adds them.  Raises :class:`InputError` if a file of the
    set exists and ``force`` is False.
    """
    paths = report_paths(out)
    md = paths[0]
    if not force:
        existing = [str(p) for p in paths if p.exists()]
        if existing:
            raise InputError(f"report: {existing[0]} exists already; choose another name or allow it to be replaced",
                             param="force", value=existing[0], expected="a new file name, or replacing allowed")
    if not md.parent.exists():
        raise InputError(f"report: folder '{md.parent}' does not exist")
    if isinstance(data, dict) and "audit" not in data:
        data = {**data, "audit": audit_block(tables_dir=getattr(catalog, "tables_dir", None))}
    drawn, note = draw_figures(job, data, md.stem) if figures else ((), "")
    cited = [data, *({"sources": list(f.data.sources)} for f in drawn)]  # the result's and the figures' methods
    content = ReportContent(title, command, text, data, citations_of(cited, catalog), drawn, note)
    paths[0].write_text(markdown_of(content), encoding="utf-8")
    paths[1].write_text(json.dumps(data, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    paths[2].write_text(_csv_text(data), encoding="utf-8")
    paths[3].write_text(html_of(content), encoding="utf-8")
    for f in drawn:
        (md.parent / f.file).write_bytes(f.png)
    return paths + [md.parent / f.file for f in drawn]


def _csv_text(data: Any) -> str:
    rows = rows_for_csv(data)
    cols: list[str] = []
    for r in rows:
        cols += [c for c in r if c not in cols]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")  # text a spreadsheet would run as a formula is written as text
    w.writerow([spreadsheet_safe(c) for c in cols])
    w.writerows([spreadsheet_safe(r.get(c, "")) for c in cols] for r in rows)
    return buf.getvalue()
