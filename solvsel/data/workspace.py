"""Workspaces: a whole piece of work in one file.

A workspace holds what a formulator builds up over days: the targets (solutes, typed or fitted
spheres), bench results, the constraints that apply to every search (food use, jurisdiction,
temperature, boiling and flash limits ...), the blends chosen, emulsion designs, flavour formulas,
the user's own rows of the liquids and solutes tables, and a history of the requests run with
their answers and a time stamp.

The file format
---------------
One JSON document (UTF-8) of our own, written with sorted keys and an indent so a change shows
as a readable difference in a version-control system::

    {
      "format": "solvsel-workspace",
      "schema_version": 1,
      "saved_at": "2026-12-05T14:00:00Z",       # UTC, written by each save
      "solvsel_version": "0.2.0",                # the version that saved it
      "name": "citrus cloud, spring trials",
      "target": {"solute": "cannabidiol"},        # the current target: one of solute / hsp / smiles
      "targets": [{"name": ..., "dD": ..., "dP": ..., "dH": ..., "r0": ..., "source": ...}],
      "constraints": {"food": true, "jurisdiction": "EU", "temp_C": 40.0},   # request field -> value
      "bench_results": [{"name": ..., "rows": [{"liquid": ..., "result": ..., "note": ...}], "fit": {...}}],
      "blends": [{"name": ..., "components": [{"name": ..., "volume_fraction": ...}], "ra": ...}],
      "emulsions": [{"name": ..., "request": {...emulsion request fields...}, "result": {...}}],
      "formulas": [{"name": ..., "parts": [{"name": ..., "percent": ...}]}],
      "own_solvents": [{"name": ..., "cas": ..., "dD_MPa05": ..., ...}],   # rows: column -> value
      "own_solutes": [...],
      "history": [{"time": ..., "command": ..., "argv": [...], "request": {...}, "result": {...}}]
    }

Constraints are keyed by the request field they fill (``temp_C``, ``min_flash_C``, ``food`` ...),
as in the jobs' requests, so any front end can apply them; own rows use the columns of
``tables/solvents.csv`` and ``tables/solutes.csv``.

Why JSON and not SQLite: a workspace is small (tens of kilobytes to a few megabytes), is read
and written whole, and must be easy to inspect, mail, diff and repair by hand; JSON needs nothing
beyond the standard library and its atomic replacement is one rename (:func:`save_workspace`),
where an SQLite file would bring its journal files beside it and would not survive being copied
while open.

Saving is atomic: the new text goes to a temporary file in the same folder, is flushed to disk
(fsync) and renamed over the old file (:func:`solvsel.data.catalog.write_user_file`); the
previous version is first kept as ``FILE.bak`` (written the same way).  A kill at any moment
leaves the old or the new workspace whole.  A damaged file, or one written by a newer schema, is
refused with a :class:`~solvsel.errors.FileError` naming the file and what was expected, and is
never written over; a file of an older schema is migrated on opening (and saved in the new
schema at the next save).
"""

from __future__ import annotations

import csv
import datetime as _dt
import io
import json
import math
from dataclasses import dataclass, field, fields, replace
from pathlib import Path
from typing import Any, Callable, Mapping

from .._version import __version__
from ..errors import FileError, InputError
from .catalog import read_user_text, write_user_file

__all__ = [
    "FORMAT",
    "SCHEMA_VERSION",
    "Workspace",
    "open_workspace",
    "save_workspace",
    "workspace_from_dict",
    "workspace_to_dict",
    "record_run",
    "own_tables_csv",
    "backup_path",
]

#: The ``format`` tag of every workspace file.
FORMAT = "solvsel-workspace"
#: The schema this version of solvsel writes (and the newest it reads).
SCHEMA_VERSION = 1
#: What a workspace file is expected to be (in messages).
EXPECTED = f"a solvsel workspace (JSON with \"format\": \"{FORMAT}\", schema version {SCHEMA_VERSION} or older)"
#: Most history entries kept: the oldest are dropped first (a year of daily work fits).
MAX_HISTORY = 1000
#: Most bytes of history kept (as JSON), the oldest entries dropped first, so that a workspace stays far
#: below the largest file the readers open (:data:`solvsel.data.catalog.MAX_USER_FILE_BYTES`, 20 MB).
MAX_HISTORY_BYTES = 8 * 2**20
#: Largest answer kept in one history entry [bytes of JSON]; a larger one is replaced by a note.
MAX_ENTRY_BYTES = 2 * 2**20

_LISTS = ("targets", "bench_results", "blends", "emulsions", "formulas", "own_solvents", "own_solutes", "history")
_TARGET_KEYS = ("solute", "hsp", "smiles")


@dataclass(frozen=True)
class Workspace:
    """A piece of work, as saved in one workspace file (see the module's text for the format).

    Every field is plain JSON data (dicts, lists, text, numbers), so a front end can show and edit
    it; :func:`save_workspace` writes it, :func:`open_workspace` reads it back equal.

    name : str
        What the user calls this piece of work.
    target : dict or None
        The current target: ``{"solute": NAME}``, ``{"hsp": [dD, dP, dH]}`` or ``[dD, dP, dH, R0]``
        [MPa^0.5], or ``{"smiles": SMILES}``.
    targets : tuple of dict
        Saved targets (``name``, ``dD``, ``dP``, ``dH``, ``r0`` [MPa^0.5], ``source``).
    constraints : dict
        Defaults for every request: request field -> value (``food``, ``use``, ``jurisdiction``,
        ``purpose``, ``temp_C`` [C], ``min_flash_C`` [C], ``bp_min_C`` / ``bp_max_C`` [C],
        ``max_cost`` (class 1-5), ``exclude`` (names) ...).
    bench_results, blends, emulsions, formulas : tuple of dict
        Bench results (rows and the fitted sphere), blends chosen, emulsion designs, flavour formulas.
    own_solvents, own_solutes : tuple of dict
        The user's own rows of the liquids and solutes tables (column -> value).
    history : tuple of dict
        Requests run with the workspace: ``time`` (UTC, ISO 8601), ``command``, ``argv``,
        ``request`` and ``result`` (the result's JSON document).
    saved_at : str or None
        When the file was last saved (UTC, ISO 8601); set by :func:`save_workspace`.

    >>> Workspace(name="trial").constraints
    {}
    """

    name: str = ""
    target: dict | None = None
    targets: tuple = ()
    constraints: dict = field(default_factory=dict)
    bench_results: tuple = ()
    blends: tuple = ()
    emulsions: tuple = ()
    formulas: tuple = ()
    own_solvents: tuple = ()
    own_solutes: tuple = ()
    history: tuple = ()
    saved_at: str | None = None

    def __post_init__(self):
        if not isinstance(self.name, str):
            raise InputError(f"expected text for the name, got {self.name!r}", param="name", value=self.name)
        if self.target is not None:
            _check_target(self.target)
        if not isinstance(self.constraints, dict):
            raise InputError("expected a mapping of request field -> value", param="constraints",
                             value=self.constraints, expected="a dict")
        for name in _LISTS:
            value = getattr(self, name)
            if isinstance(value, list):
                object.__setattr__(self, name, tuple(value))
            elif not isinstance(value, tuple):
                raise InputError(f"expected a list of entries, got {type(value).__name__}", param=name,
                                 value=value, expected="a list of dicts")
            if not all(isinstance(e, dict) for e in getattr(self, name)):
                raise InputError("expected every entry to be a dict", param=name, expected="a list of dicts")


def _check_target(target) -> None:
    if not isinstance(target, dict) or len(target) != 1 or next(iter(target)) not in _TARGET_KEYS:
        raise InputError(f"expected one of {', '.join(_TARGET_KEYS)} as the target, got {target!r}",
                         param="target", value=target, expected="{'solute': NAME}, {'hsp': [dD, dP, dH]} or "
                         "{'smiles': SMILES}")


def now_utc() -> str:
    """The time now, UTC, ISO 8601 to the second (``2026-12-05T14:00:00Z``)."""
    return _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def workspace_to_dict(ws: Workspace) -> dict[str, Any]:
    """The JSON document of ``ws`` (the current schema).

    >>> workspace_to_dict(Workspace(name="a"))["schema_version"]
    1
    """
    out: dict[str, Any] = {"format": FORMAT, "schema_version": SCHEMA_VERSION, "solvsel_version": __version__}
    for f in fields(Workspace):
        value = getattr(ws, f.name)
        out[f.name] = list(value) if isinstance(value, tuple) else value
    return out


# ----------------------------------------------------------------------------- migration


def _from_0(doc: dict) -> dict:
    """Schema 0 (the draft layout): constraints were ``filters``, the user's rows one list
    ``own_rows`` with a ``table`` key per row, and the target a plain solute name."""
    doc = dict(doc)
    doc["constraints"] = doc.pop("filters", {}) or {}
    rows = doc.pop("own_rows", []) or []
    doc["own_solvents"] = [{k: v for k, v in r.items() if k != "table"} for r in rows
                           if r.get("table", "solvents") == "solvents"]
    doc["own_solutes"] = [{k: v for k, v in r.items() if k != "table"} for r in rows if r.get("table") == "solutes"]
    if isinstance(doc.get("target"), str):
        doc["target"] = {"solute": doc["target"]}
    doc["schema_version"] = 1
    return doc


#: schema version -> the function that turns a document of that version into the next one.
MIGRATIONS: dict[int, Callable[[dict], dict]] = {0: _from_0}


def workspace_from_dict(doc: Any, *, path: str = "workspace") -> Workspace:
    """The :class:`Workspace` of a JSON document, migrated from an older schema where needed.

    A document that is not a workspace, or is of a newer schema, is a :class:`FileError` naming
    ``path``.
    """
    if not isinstance(doc, dict) or doc.get("format") != FORMAT:
        raise _damaged(path, f"is not a solvsel workspace (no \"format\": \"{FORMAT}\")")
    version = doc.get("schema_version")
    if isinstance(version, bool) or not isinstance(version, int) or version < 0:
        raise _damaged(path, f"has no readable schema version (got {version!r})")
    if version > SCHEMA_VERSION:
        raise FileError(f"was saved by a newer solvsel (workspace schema {version}); this version reads schema "
                        f"{SCHEMA_VERSION} and older: update solvsel to open it. The file was left as it was",
                        param="workspace", value=path, path=path, expected=EXPECTED)
    while version < SCHEMA_VERSION:
        try:
            doc = MIGRATIONS[version](doc)
        except (AttributeError, TypeError, ValueError) as exc:  # a field of the old schema of the wrong kind
            raise _damaged(path, f"is damaged: it cannot be read as workspace schema {version} ({exc})") from None
        version = doc["schema_version"]
    known = {f.name for f in fields(Workspace)}
    try:
        return Workspace(**{k: v for k, v in doc.items() if k in known})
    except InputError as exc:
        raise _damaged(path, f"is damaged: {exc.param}: {exc.message}") from None
    except TypeError as exc:  # a field of the wrong kind that the dataclass cannot take
        raise _damaged(path, f"is damaged: {exc}") from None


def _damaged(path: str, message: str) -> FileError:
    return FileError(f"{message}; the file was left as it was", param="workspace", value=path, path=path,
                     expected=EXPECTED)


# ----------------------------------------------------------------------------- open and save


def backup_path(path: str | Path) -> Path:
    """Where the previous version of a workspace is kept: ``FILE.bak`` beside it."""
    p = Path(path)
    return p.with_name(p.name + ".bak")


def open_workspace(path: str | Path, *, missing_ok: bool = False) -> Workspace:
    """Read the workspace file ``path`` (migrating an older schema).

    With ``missing_ok``, a file that does not exist gives an empty workspace (to be created at
    the first save).  A damaged file or one of a newer schema is refused (:class:`FileError`) and
    left as it was.

    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "trial.json"
    >>> save_workspace(Workspace(name="trial", constraints={"food": True}), p)
    >>> open_workspace(p).constraints
    {'food': True}
    """
    p = Path(path)
    if missing_ok and not p.exists():
        return Workspace()
    try:
        text = read_user_text(p, param="workspace")
    except FileError as exc:  # missing, a folder, unreadable, too large, binary: said for a workspace
        binary = "binary" in exc.message
        raise FileError("is damaged: it holds binary data, not JSON text; the file was left as it was" if binary
                        else exc.message, param="workspace", value=str(p), path=str(p), expected=EXPECTED) from None
    try:
        doc = json.loads(text)
    except (json.JSONDecodeError, RecursionError) as exc:
        where = f" (line {exc.lineno}, column {exc.colno})" if isinstance(exc, json.JSONDecodeError) else ""
        raise _damaged(str(p), f"is damaged: not readable as JSON{where}") from None
    return workspace_from_dict(doc, path=str(p))


def save_workspace(ws: Workspace, path: str | Path) -> None:
    """Write ``ws`` to ``path`` atomically, keeping the file that was there as ``FILE.bak``.

    The file there is read first: a damaged file, or one of a newer schema, is refused and left
    as it was (nothing is written).  The backup and then the new file are each written to a
    temporary file in the folder, flushed to disk and renamed into place, so a kill at any moment
    leaves the old or the new workspace whole.
    """
    if not isinstance(ws, Workspace):
        raise InputError(f"expected a Workspace, got {type(ws).__name__}", param="workspace", value=ws)
    p = Path(path)
    doc = workspace_to_dict(replace(ws, saved_at=now_utc()))
    try:
        text = json.dumps(doc, indent=1, sort_keys=True, ensure_ascii=False, allow_nan=False)
    except (TypeError, ValueError) as exc:  # a value that is not JSON data, NaN or infinity
        raise InputError(f"holds a value that cannot be saved as JSON: {exc}", param="workspace",
                         expected="JSON data: text, finite numbers, lists and dicts") from None
    if p.exists():
        open_workspace(p)  # refuses a damaged or newer file before anything is written
        write_user_file(backup_path(p), p.read_bytes(), param="workspace")
    write_user_file(p, (text + "\n").encode("utf-8"), param="workspace")


# ----------------------------------------------------------------------------- what front ends use


def record_run(ws: Workspace, command: str, argv: list[str], request: Any, result: Any,
               time: str | None = None) -> Workspace:
    """``ws`` with one more history entry (the request and its result's JSON, stamped with the time).

    >>> w = record_run(Workspace(), "rank", ["rank", "--solute", "vanillin"], {"solute": "vanillin"}, {"results": []})
    >>> w.history[0]["command"], w.history[0]["result"]
    ('rank', {'results': []})
    """
    entry = {"time": time or now_utc(), "command": command, "argv": list(argv), "request": request,
             "result": result}
    size = _size(entry)
    if size > MAX_ENTRY_BYTES:
        entry["result"] = {"not_kept": f"the answer was {size / 2**20:.1f} MB, more than the "
                                       f"{MAX_ENTRY_BYTES // 2**20} MB kept for one answer: run the request again to see it"}
    kept, total = [], 0
    for e in reversed((ws.history + (entry,))[-MAX_HISTORY:]):
        total += _size(e)
        if kept and total > MAX_HISTORY_BYTES:
            break
        kept.append(e)
    return replace(ws, history=tuple(reversed(kept)))


def _size(entry: dict) -> int:
    return len(json.dumps(entry, ensure_ascii=False, default=str).encode("utf-8"))


def own_tables_csv(ws: Workspace, folder: str | Path) -> dict[str, list[Path]]:
    """Write the user's own rows as CSV files in ``folder`` (for the catalog's overlay); returns
    ``{"solvents": [path], "solutes": [path]}`` for the tables that have rows."""
    out = {}
    for table in ("solvents", "solutes"):
        rows = getattr(ws, f"own_{table}")
        if not rows:
            continue
        cols = list(dict.fromkeys(k for r in rows for k in r))
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(cols)
        w.writerows([_cell(r.get(c)) for c in cols] for r in rows)
        path = Path(folder) / f"workspace own {table}.csv"
        path.write_text(buf.getvalue(), encoding="utf-8")
        out[table] = [path]
    return out


def _cell(value) -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return ""
    if isinstance(value, (list, tuple)):
        return ";".join(str(v) for v in value)
    return str(value)


def defaults_of(ws: Workspace) -> Mapping[str, Any]:
    """The request fields the workspace supplies as defaults: its constraints and its target.

    >>> dict(defaults_of(Workspace(target={"solute": "vanillin"}, constraints={"food": True})))
    {'food': True, 'solute': 'vanillin'}
    """
    return {**ws.constraints, **(ws.target or {})}
