"""Load and validate the bundled tables (and a user's own overlay) into typed records.

Every table in ``tables/`` is declared column by column in
``tables/schema.csv`` (type, required, unique, range, choices) and every
source id must resolve in ``tables/sources.csv``.  A malformed table fails
with a :class:`~solvsel.errors.TableError` naming the file, the row (the
header is row 1, as in a spreadsheet) and the column, and what was expected.

Names are matched forgivingly (case, spacing, dashes, synonyms, CAS); an
unknown name raises :class:`~solvsel.errors.UnknownNameError` with the closest
known names.  A substance outside the tables can be looked up in the reference
library ``chemicals`` (its published HSP data sets MANUEL_RUBEN_2022,
ALSHERI_HANSEN and WDR_SCHRIER only), and is then marked as coming from there.
"""

from __future__ import annotations

import codecs
import csv
import difflib
import io
import math
import os
import re
import stat
import sys
import unicodedata
import warnings
from dataclasses import dataclass, fields, replace
from functools import lru_cache
from pathlib import Path
from typing import Any, Iterable, Mapping, Sequence

import numpy as np

from ..errors import FileError, InputError, SolvselError, SolvselNote, TableError, UnknownNameError

__all__ = [
    "TABLES_DIR",
    "SOURCE_KINDS",
    "Catalog",
    "Solvent",
    "Solute",
    "load_catalog",
    "normalize_name",
    "check_cas",
    "STDIN",
    "MAX_USER_FILE_BYTES",
    "MAX_OWN_ROWS",
    "CsvRecords",
    "write_cache_file",
    "read_user_text",
    "read_user_csv",
    "read_user_text_encoding",
    "shown_path",
    "check_write_target",
    "write_user_file",
    "spreadsheet_safe",
]


def _find_tables_dir() -> Path:
    here = Path(__file__).resolve().parents[1]  # the solvsel package
    for candidate in (here / "tables", here.parent / "tables"):  # installed wheel, then checkout
        if (candidate / "sources.csv").is_file():
            return candidate
    raise FileNotFoundError(f"solvsel: no tables/ folder found next to {here}")


TABLES_DIR = _find_tables_dir()

#: Provenance kinds a source may have.
SOURCE_KINDS = ("published", "regulation", "handbook", "library", "memory", "demo", "derived")

#: Published HSP data sets of the chemicals library that solvsel uses, in order of preference.
LIBRARY_HSP_DATASETS = {
    "MANUEL_RUBEN_2022": "hsp_mr2022",
    "WDR_SCHRIER": "hsp_schrier2020",
    "ALSHERI_HANSEN": "hsp_alshehri2022",
}

_TYPES = ("text", "number", "integer", "cas", "choice", "list", "sources")

#: Short names accepted for tables (``solvsel table agents``).
TABLE_ALIASES = {"agents": "weighting_agents", "liquids": "solvents", "regs": "regulations", "pairs": "miscibility"}


def cache_dir() -> Path | None:
    """The folder where solvsel keeps what it can recompute (None: no disk cache).

    ``SOLVSEL_CACHE_DIR`` if set (empty: no disk cache), else
    ``$XDG_CACHE_HOME/solvsel``, else ``~/.cache/solvsel``.
    """
    env = os.environ.get("SOLVSEL_CACHE_DIR")
    if env is not None:
        return Path(env) if env.strip() else None
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "solvsel"


def write_cache_file(path: Path, write) -> bool:
    """Replace the cache file ``path`` whole: ``write(tmp)`` fills a temporary file beside it (same
    suffix), which is then renamed over it, so a reader never sees half a file.  False when the folder
    cannot be written (read-only or full): a cache that is not kept only costs time on the next run."""
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_name(f"{path.stem}.{os.getpid()}.tmp{path.suffix}")
        write(tmp)
        os.replace(tmp, path)
    except OSError:
        return False
    return True


def installed_stamp(package: str) -> str | None:
    """What names the installed version of ``package`` (its ``dist-info`` folder, e.g.
    ``name-1.2.3.dist-info``, else its ``__init__.py``'s size and time), found without importing the
    package or ``importlib.metadata`` (which costs about 25 ms of a command's start).  None when the
    package is not installed.  Cache keys use it: a new version of the package makes new cache files."""
    from importlib.util import find_spec

    spec = find_spec(package)
    if spec is None or not spec.origin:
        return None
    init = Path(spec.origin)
    where = init.parent.parent
    prefix = package.replace("-", "_").lower() + "-"
    try:
        infos = sorted(p.name for p in where.iterdir() if p.name.lower().startswith(prefix)
                       and p.name.endswith((".dist-info", ".egg-info")))
        if infos:
            return ";".join(infos)
        st = init.stat()
    except OSError:
        return None
    return f"{init}:{st.st_size}:{st.st_mtime_ns}"


# ----------------------------------------------------------------------------- names


def normalize_name(name: str) -> str:
    """Key used to match names: case-folded, accents and dash variants unified, single spaces.

    >>> normalize_name("  Propylene   Glycol ")
    'propylene glycol'
    >>> normalize_name("N,N-Dimethylformamide") == normalize_name("n,n–dimethylformamide")
    True
    """
    s = unicodedata.normalize("NFKC", str(name)).casefold().strip()
    s = re.sub("[\u2010-\u2015\u2212]", "-", s)
    s = s.replace("\u2019", "'")
    s = re.sub(r"\s+", " ", s)
    return s


#: A strength by volume written before or after a name: "ethanol 96%", "96% ethanol", "ethanol 96 % v/v",
#: "ethanol 96 %vol" (a percent by volume, or a bare percent: the strength rows of the tables are by volume).
_STRENGTH_RE = re.compile(
    r"^(?:(?P<n1>\d+(?:[.,]\d+)?)\s*%\s*(?:v/v|vol\.?)?\s+(?P<b1>\D.*?)"
    r"|(?P<b2>.*?\D)\s+(?P<n2>\d+(?:[.,]\d+)?)\s*(?:%\s*(?:v/v|vol\.?)?)?)$")


def strength_name(name: str) -> str | None:
    """The name of a strength row ("ethanol 96% v/v") for the ways a strength by volume is written,
    or None when ``name`` gives no strength (or one by mass).

    >>> [strength_name(n) for n in ("ethanol 96%", "96% ethanol", "ethanol 96 % v/v", "Ethanol 40 %vol")]
    ['ethanol 96% v/v', 'ethanol 96% v/v', 'ethanol 96% v/v', 'ethanol 40% v/v']
    >>> strength_name("ethanol 96% w/w") is None, strength_name("ethanol") is None
    (True, True)
    """
    m = _STRENGTH_RE.match(normalize_name(name))
    if not m:
        return None
    base, number = (m.group("b1"), m.group("n1")) if m.group("b1") else (m.group("b2"), m.group("n2"))
    return f"{base.strip()} {float(number.replace(',', '.')):g}% v/v"


_CAS_RE = re.compile(r"^(\d{2,7})-(\d{2})-(\d)$")


def check_cas(cas: str) -> bool:
    """True if ``cas`` is a well-formed CAS number with a valid check digit.

    >>> check_cas("64-17-5"), check_cas("64-17-4")
    (True, False)
    """
    m = _CAS_RE.match(cas.strip())
    if not m:
        return False
    digits = (m.group(1) + m.group(2))[::-1]
    return sum((i + 1) * int(d) for i, d in enumerate(digits)) % 10 == int(m.group(3))


# ----------------------------------------------------------------------------- a user's files

#: The file name that stands for standard input (``solvsel fit -``).
STDIN = "-"
#: Largest file of a user's that is read [bytes]: far above any real table (the bundled solvents
#: table is under 100 kB), far below what would exhaust memory (a device such as /dev/zero never ends).
MAX_USER_FILE_BYTES = 20 * 2**20
#: Most rows of a table of the user's own (liquids, solutes): the searches pair and blend every
#: liquid of the pool, so their work grows with the square and the cube of this number.
MAX_OWN_ROWS = 5000
#: Single-byte encodings tried, in order, for a file that is not UTF-8 (spreadsheets on Windows save
#: Windows-1252; Latin-1 decodes any byte).
_FALLBACK_ENCODINGS = (("cp1252", "Windows-1252"), ("latin-1", "Latin-1 (ISO 8859-1)"))
_DECIMAL_COMMA = re.compile(r"^[-+]?\d+,\d+(?:[eE][-+]?\d+)?$")


def shown_path(path) -> str:
    """How a file is named in messages: ``"standard input"`` for ``-``, else its path."""
    return "standard input" if str(path) == STDIN else str(path)


def read_user_text(path, *, param: str | None = None) -> str:
    """The text of a user's file (``"-"``: standard input), whatever the user's system saved.

    UTF-8 with or without a byte-order mark, and UTF-16 with one, are read as such; another file
    is read as Windows-1252 (or Latin-1) with a :class:`~solvsel.errors.SolvselNote` saying so.
    A folder, a device, a file that cannot be read, binary data or a file over
    :data:`MAX_USER_FILE_BYTES` is a :class:`~solvsel.errors.FileError` naming ``param`` and the file.

    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "a.csv"
    >>> _ = p.write_bytes("name\\r\\ncaf\\xe9\\r\\n".encode("utf-8-sig"))
    >>> read_user_text(p)
    'name\\r\\ncafé\\r\\n'
    """
    return read_user_text_encoding(path, param=param)[0]


def read_user_text_encoding(path, *, param: str | None = None) -> tuple[str, str]:
    """As :func:`read_user_text`, with the codec that reads the text back into the file's exact bytes
    (``"utf-8"``, ``"utf-8-sig"`` with a byte-order mark, ``"cp1252"`` ...), for adding to the file."""
    shown = shown_path(path)
    data = _stdin_bytes(param) if str(path) == STDIN else _file_bytes(path, param)
    return _decode(data, shown, param)


def _fail(path, param, message: str, expected: str = "a CSV or text file") -> FileError:
    return FileError(message, param=param, value=str(path), expected=expected, path=shown_path(path))


#: Standard input as read once: ``(stream, bytes)`` (a command that runs another, such as a report,
#: reads it again).
_STDIN_READ: list = []


def _stdin_bytes(param) -> bytes:
    stream = getattr(sys.stdin, "buffer", sys.stdin)
    if stream is None:
        raise _fail(STDIN, param, "there is no standard input to read")
    if _STDIN_READ and _STDIN_READ[0] is stream:
        return _STDIN_READ[1]
    try:
        data = stream.read(MAX_USER_FILE_BYTES + 1)
    except OSError as exc:
        raise _fail(STDIN, param, f"cannot be read: {exc.strerror or exc}") from None
    if isinstance(data, str):  # a text stream without a byte buffer
        data = data.encode("utf-8")
    if len(data) > MAX_USER_FILE_BYTES:
        raise _fail(STDIN, param, f"holds more than {MAX_USER_FILE_BYTES // 2**20} MB; a larger file is not read")
    _STDIN_READ[:] = [stream, data]
    return data


def _file_bytes(path, param) -> bytes:
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise _fail(path, param, "no such file") from None
    except (OSError, ValueError) as exc:  # a name too long, a NUL in the name, no permission on a folder
        raise _fail(path, param, f"cannot be read: {getattr(exc, 'strerror', None) or exc}") from None
    if stat.S_ISDIR(st.st_mode):
        raise _fail(path, param, "is a folder, not a file")
    if not (stat.S_ISREG(st.st_mode) or stat.S_ISFIFO(st.st_mode)):
        raise _fail(path, param, "is a device, not a file")
    if st.st_size > MAX_USER_FILE_BYTES:
        raise _fail(path, param, f"is {st.st_size / 2**20:.0f} MB; a file over "
                    f"{MAX_USER_FILE_BYTES // 2**20} MB is not read")
    try:
        with open(path, "rb") as fh:
            data = fh.read(MAX_USER_FILE_BYTES + 1)
    except OSError as exc:  # unreadable (permissions), an I/O error (/proc/self/mem)
        raise _fail(path, param, f"cannot be read: {exc.strerror or exc}") from None
    if len(data) > MAX_USER_FILE_BYTES:
        raise _fail(path, param, f"holds more than {MAX_USER_FILE_BYTES // 2**20} MB; a larger file is not read")
    return data


def _decode(data: bytes, shown: str, param) -> tuple[str, str]:
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16"), "utf-16"
        except UnicodeDecodeError:
            pass  # not UTF-16 after all: judged as bytes below
    controls = sum(data.count(bytes([b])) for b in range(32) if b not in (9, 10, 12, 13))
    if b"\x00" in data or controls > len(data) // 100:
        raise FileError("is not a text file (it holds binary data); save it as CSV", param=param, value=shown,
                        expected="a CSV or text file", path=shown)
    try:
        return data.decode("utf-8-sig"), ("utf-8-sig" if data.startswith(codecs.BOM_UTF8) else "utf-8")
    except UnicodeDecodeError:
        pass
    for encoding, label in _FALLBACK_ENCODINGS:
        try:
            text = data.decode(encoding)
        except UnicodeDecodeError:
            continue
        warnings.warn(SolvselNote(f"{shown} is not UTF-8 text; it was read as {label}: check accented "
                                  "names, or save it as CSV UTF-8"), stacklevel=4)
        return text, encoding
    raise AssertionError("Latin-1 decodes every byte")  # pragma: no cover


@dataclass(frozen=True)
class CsvRecords:
    """A CSV file read by :func:`read_user_csv`: its header and its records with their line numbers."""

    path: str
    header: list
    header_row: int
    rows: list


def read_user_csv(path, *, param: str | None = None, comments: bool = False,
                  skipinitialspace: bool = False) -> CsvRecords:
    """The header and the ``(line, fields)`` records of a CSV file (``"-"``: standard input).

    The text is read by :func:`read_user_text`.  Fields may be separated by commas, semicolons or
    tabs (the separator of the header line is used); with semicolons, numbers written with a
    decimal comma (``17,5``) are read as ``17.5``, with a note.  With ``comments``, lines starting
    with ``#`` are left out (line numbers still count them), as are blank lines.

    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "b.csv"
    >>> _ = p.write_text("liquid;dD\\nmine;17,5\\n", encoding="utf-8")
    >>> import warnings
    >>> with warnings.catch_warnings():
    ...     warnings.simplefilter("ignore")
    ...     read_user_csv(p).rows
    [(2, ['mine', '17.5'])]
    """
    shown = shown_path(path)
    text = read_user_text(path, param=param)
    lines = text.splitlines(keepends=True) if comments else None
    if lines is not None:
        text = "".join("\n" if ln.lstrip().startswith("#") else ln for ln in lines)
    delimiter = _delimiter(text)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, skipinitialspace=skipinitialspace)
    records, line = [], 0
    try:
        for fields_ in reader:
            records.append((line + 1, fields_))
            line = reader.line_num
    except csv.Error as exc:  # a field over the csv module's limit, an unclosed quote at the end
        raise TableError(shown, f"cannot be read as CSV: {exc}", row=line + 1, param=param) from None
    records = [(i, r) for i, r in records if any(c.strip() for c in r)]
    if not records:
        raise TableError(shown, "the file is empty; expected a header row", param=param, expected="a header row")
    if delimiter == ";":
        records = _decimal_commas(records, shown)
    (header_row, header), rows = records[0], records[1:]
    return CsvRecords(shown, [h.strip() for h in header], header_row, rows)


def _delimiter(text: str) -> str:
    """The separator of the first line that is not blank: the one of , ; tab that splits it most."""
    first = next((ln for ln in text.splitlines() if ln.strip()), "")
    counts = {d: len(next(csv.reader([first], delimiter=d), [])) for d in (",", ";", "\t")}
    best = max(counts, key=lambda d: (counts[d], d == ","))
    return best if counts[best] > 1 else ","


def _decimal_commas(records: list, shown: str) -> list:
    changed = False
    out = []
    for i, r in records:
        new = [c.strip().replace(",", ".") if _DECIMAL_COMMA.match(c.strip()) else c for c in r]
        changed = changed or new != r
        out.append((i, new))
    if changed:
        warnings.warn(SolvselNote(f"{shown} has ';' between fields and decimal commas; numbers such as 17,5 "
                                  "were read as 17.5"), stacklevel=3)
    return out


#: First characters that make a spreadsheet read a cell as a formula.
_FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def spreadsheet_safe(cell):
    """A text cell as written to a CSV: one a spreadsheet would run as a formula (starting with
    ``= + - @``, a tab or a carriage return) gets a leading single quote, so it is shown as text; numbers
    and other text are unchanged.

    >>> spreadsheet_safe("=cmd|' /C calc'!A0"), spreadsheet_safe("-12.5"), spreadsheet_safe("ethanol")
    ("'=cmd|' /C calc'!A0", '-12.5', 'ethanol')
    """
    if not isinstance(cell, str) or not cell.startswith(_FORMULA_STARTS):
        return cell
    try:
        float(cell)
        return cell  # a signed number, not a formula
    except ValueError:
        return "'" + cell


def check_write_target(path, *, param: str | None = None) -> Path:
    """``path`` as a file that can be written, checked before any long work: not a folder or a device,
    its folder there and writable (a probe file is made and removed there).  Returns it as a Path."""
    import tempfile

    shown = str(path)
    if not shown.strip() or shown == STDIN:
        raise FileError("expected the name of a file to write", param=param, value=shown, expected="a file name")
    p = Path(path)
    try:
        st = os.stat(p)
    except FileNotFoundError:
        st = None
    except (OSError, ValueError) as exc:  # a name too long, a NUL in the name
        raise _fail(p, param, f"cannot be written: {getattr(exc, 'strerror', None) or exc}", "a file name") from None
    if st is not None and stat.S_ISDIR(st.st_mode):
        raise _fail(p, param, "is a folder; give the name of a file in it", "a file name")
    if st is not None and not stat.S_ISREG(st.st_mode):
        raise _fail(p, param, "is a device, not a file", "a file name")
    folder = p.parent
    if not folder.is_dir():
        raise _fail(p, param, f"the folder '{folder}' does not exist", "a file in a folder that exists")
    try:
        fd, probe = tempfile.mkstemp(prefix=".solvsel-", suffix=".probe", dir=folder)
        os.close(fd)
        os.unlink(probe)
    except OSError as exc:  # a read-only folder, a full disk
        raise _fail(p, param, f"cannot be written in its folder: {exc.strerror or exc}", "a writable folder") from None
    return p


def write_user_file(path, data: bytes, *, param: str | None = None, check=None) -> None:
    """Write ``data`` to the user's file ``path`` whole or not at all.

    The bytes go to a temporary file in the same folder, are flushed to disk, checked by
    ``check(temporary_path)`` when given (which raises to refuse them), and the temporary file is
    then renamed over ``path`` (keeping its permissions).  Whatever fails, the temporary file is
    removed and ``path`` is left as it was; an error of the system is a
    :class:`~solvsel.errors.FileError` naming ``param`` and the file.
    """
    import tempfile

    p = Path(path)
    tmp = None
    _remove_stale_temporaries(p)
    try:
        fd, tmp = tempfile.mkstemp(prefix=_temporary_prefix(p), suffix=p.suffix or ".tmp", dir=p.parent)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if check is not None:
            check(Path(tmp))
        mode = p.stat().st_mode & 0o777 if p.exists() else 0o666 & ~_umask()
        os.chmod(tmp, mode)
        os.replace(tmp, p)
        tmp = None
    except OSError as exc:
        raise _fail(p, param, f"cannot be written: {exc.strerror or exc}; it was left as it was",
                    "a writable file") from None
    finally:
        if tmp is not None and os.path.exists(tmp):
            os.unlink(tmp)


#: A temporary file of a save older than this [s] was left by a save that was killed.
STALE_TEMPORARY_S = 600.0


def _temporary_prefix(p: Path) -> str:
    return f".solvsel-{p.name}-"


def _remove_stale_temporaries(p: Path) -> None:
    """Remove the temporary files that killed saves of ``p`` left in its folder (older than
    :data:`STALE_TEMPORARY_S`, so that a save under way in another process is never touched)."""
    import time

    try:
        prefix = _temporary_prefix(p)  # compared as text: a name may hold glob characters such as [ ]
        stale = [t for t in p.parent.iterdir()
                 if t.name.startswith(prefix) and time.time() - t.stat().st_mtime > STALE_TEMPORARY_S]
        for t in stale:
            t.unlink()
    except OSError:  # a folder that cannot be listed or a file already gone: the save itself reports
        pass


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


# ----------------------------------------------------------------------------- schema


@dataclass(frozen=True)
class ColumnSpec:
    table: str
    column: str
    type: str
    required: bool
    unique: bool
    min: float | None
    max: float | None
    choices: tuple[str, ...]
    description: str


def _read_csv_rows(path: Path, param: str | None = None) -> tuple[list[str], list[tuple[int, list[str]]]]:
    """The header and the ``(line, fields)`` records of a table (a bundled one or a user's own)."""
    got = read_user_csv(path, param=param)
    return got.header, got.rows


@lru_cache(maxsize=4)
def _load_schema(tables_dir: Path) -> dict[str, list[ColumnSpec]]:
    path = tables_dir / "schema.csv"
    header, rows = _read_csv_rows(path)
    want = ["table", "column", "type", "required", "unique", "min", "max", "choices", "description"]
    if header != want:
        raise TableError(path, f"header must be {','.join(want)}", row=1)
    out: dict[str, list[ColumnSpec]] = {}
    for i, r in rows:
        if not any(c.strip() for c in r):
            continue
        if len(r) != len(want):
            raise TableError(path, f"expected {len(want)} fields, found {len(r)}", row=i)
        d = dict(zip(want, (c.strip() for c in r)))
        if d["type"] not in _TYPES:
            raise TableError(path, f"type must be one of {', '.join(_TYPES)}, got '{d['type']}'", row=i, column="type")
        spec = ColumnSpec(
            table=d["table"],
            column=d["column"],
            type=d["type"],
            required=d["required"] == "yes",
            unique=d["unique"] == "yes",
            min=float(d["min"]) if d["min"] else None,
            max=float(d["max"]) if d["max"] else None,
            choices=tuple(c.strip() for c in d["choices"].split("|")) if d["choices"] else (),
            description=d["description"],
        )
        cols = out.setdefault(spec.table, [])
        if any(c.column == spec.column for c in cols):
            raise TableError(path, f"column '{spec.column}' of table '{spec.table}' declared twice", row=i)
        cols.append(spec)
    return out


#: The columns of ``sources.csv``.
SOURCE_COLUMNS = ("id", "kind", "citation", "url")


@lru_cache(maxsize=4)
def _load_sources(tables_dir: Path) -> tuple[dict[str, str], ...]:
    """The rows of ``sources.csv`` (``id``, ``kind``, ``citation``, ``url``), checked."""
    path = tables_dir / "sources.csv"
    header, rows = _read_csv_rows(path)
    want = list(SOURCE_COLUMNS)
    if header != want:
        raise TableError(path, f"header must be {','.join(want)}", row=1)
    seen: dict[str, int] = {}
    records = []
    for i, r in rows:
        if not any(c.strip() for c in r):
            continue
        if len(r) != 4:
            raise TableError(path, f"expected 4 fields (id,kind,citation,url), found {len(r)}", row=i)
        sid, kind, citation, url = (c.strip() for c in r)
        if not sid:
            raise TableError(path, "empty source id", row=i, column="id")
        if sid in seen:
            raise TableError(path, f"duplicate source id '{sid}' (first at row {seen[sid]})", row=i, column="id")
        if kind not in SOURCE_KINDS:
            raise TableError(path, f"kind must be one of {', '.join(SOURCE_KINDS)}, got '{kind}'", row=i, column="kind")
        if not citation:
            raise TableError(path, "empty citation", row=i, column="citation")
        seen[sid] = i
        records.append({"id": sid, "kind": kind, "citation": citation, "url": url})
    return tuple(records)


@lru_cache(maxsize=4)
def _source_index(tables_dir: Path) -> dict[str, dict[str, str]]:
    """The rows of ``sources.csv`` by id."""
    return {r["id"]: r for r in _load_sources(tables_dir)}


def read_rows(
    path: Path | str,
    table: str,
    tables_dir: Path = TABLES_DIR,
    user: bool = False,
) -> tuple[list[str], list[dict[str, Any]]]:
    """Read and validate one CSV against its rows in ``schema.csv``, with the csv module.

    Returns the table's columns (in the order of ``schema.csv``) and one dict a row: numbers as
    float (empty -> NaN), integers as int (empty -> None), everything else as str ('' when empty).
    ``user=True`` accepts source texts that are not ids of ``sources.csv`` (a user's own data),
    does not require the source columns, reads ``"-"`` as standard input and takes at most
    :data:`MAX_OWN_ROWS` rows.  Rows are the file's lines (the header is row 1).
    """
    schema = _load_schema(tables_dir)
    if table not in schema:
        raise TableError(path, f"no columns declared for table '{table}' in {tables_dir / 'schema.csv'}")
    specs = schema[table]
    got = read_user_csv(path)
    path, header, rows = got.path, got.header, got.rows
    _check_header(path, table, specs, header, user)
    if user and len(rows) > MAX_OWN_ROWS:
        raise TableError(path, f"has {len(rows):,} rows; a table of your own may have at most {MAX_OWN_ROWS:,} "
                         "(the searches pair and blend every liquid); split it or keep the rows you need",
                         row=rows[MAX_OWN_ROWS][0], expected=f"at most {MAX_OWN_ROWS:,} rows")
    data = _table_columns(path, specs, header, rows, set(_source_index(tables_dir)), user)
    for s in specs:
        if s.type == "integer":
            data[s.column] = [None if math.isnan(v) else int(v) for v in data[s.column]]
    columns = [s.column for s in specs]
    return columns, [dict(zip(columns, values)) for values in zip(*(data[c] for c in columns))]


def read_table(
    path: Path | str,
    table: str,
    tables_dir: Path = TABLES_DIR,
    user: bool = False,
):
    """:func:`read_rows` as a pandas DataFrame: numbers as float (empty -> NaN), integers as
    Int64, everything else as str ('' when empty)."""
    columns, rows = read_rows(path, table, tables_dir, user)
    return _frame(columns, rows, _load_schema(tables_dir)[table])


def _frame(columns: Sequence[str], rows: Sequence[Mapping[str, Any]], specs: Sequence[ColumnSpec]):
    """Rows of a table as a DataFrame, each column of the type ``specs`` declares."""
    import pandas as pd

    df = pd.DataFrame({c: [r[c] for r in rows] for c in columns})
    for s in specs:
        if s.column not in df.columns:
            continue
        if s.type == "integer":
            df[s.column] = pd.array([None if v is None or v != v else int(v) for v in df[s.column]], dtype="Int64")
        elif s.type == "number":
            df[s.column] = df[s.column].astype(float)
    return df


def _check_header(path, table: str, specs: list[ColumnSpec], header: list[str], user: bool) -> None:
    """Every required column there, no unknown or repeated one."""
    known = {s.column for s in specs}
    for s in specs:
        if s.column not in header and (s.required and not (user and s.type == "sources")):
            raise TableError(path, f"missing column '{s.column}' ({s.description})", row=1, column=s.column)
    for h in header:
        if h not in known:
            raise TableError(
                path, f"unknown column '{h}'; the columns of {table} are: {', '.join(sorted(known))}", row=1, column=h
            )
    if len(set(header)) != len(header):
        dup = [h for h in header if header.count(h) > 1][0]
        raise TableError(path, f"column '{dup}' appears twice", row=1, column=dup)


def _table_columns(path, specs: list[ColumnSpec], header: list[str], rows, source_ids: set, user: bool) -> dict:
    """The checked values of every row, column by column."""
    data: dict[str, list] = {s.column: [] for s in specs}
    first_seen: dict[tuple[str, str], int] = {}
    for i, raw in rows:
        if not any(c.strip() for c in raw):
            continue
        if len(raw) != len(header):
            raise TableError(path, f"expected {len(header)} fields, found {len(raw)} (a comma inside an unquoted value?)", row=i)
        rec = dict(zip(header, raw))
        for s in specs:
            raw_val = rec.get(s.column, "")
            val = raw_val.strip()
            if val != raw_val:
                raise TableError(path, "value has leading or trailing spaces", row=i, column=s.column)
            data[s.column].append(_convert(path, i, s, val, source_ids, user))
            if s.unique and val != "":
                key = (s.column, normalize_name(val))
                if key in first_seen:
                    raise TableError(
                        path, f"duplicate value '{val}' (already at row {first_seen[key]})", row=i, column=s.column
                    )
                first_seen[key] = i
    return data


def _convert(path, row, spec: ColumnSpec, val: str, source_ids: set, user: bool):
    col = spec.column
    if val == "":
        if spec.required and not (user and spec.type == "sources"):
            raise TableError(path, f"empty value; expected {_expected(spec)}", row=row, column=col)
        return math.nan if spec.type in ("number", "integer") else ""
    if spec.type in ("number", "integer"):
        try:
            x = float(val)
        except ValueError:
            raise TableError(path, f"'{val}' is not a number; expected {_expected(spec)}", row=row, column=col) from None
        if not math.isfinite(x):
            raise TableError(path, f"'{val}' is not a finite number", row=row, column=col)
        if spec.type == "integer" and x != int(x):
            raise TableError(path, f"'{val}' is not a whole number", row=row, column=col)
        if (spec.min is not None and x < spec.min) or (spec.max is not None and x > spec.max):
            raise TableError(path, f"{val} is out of range; expected {_expected(spec)}", row=row, column=col)
        return x
    if spec.type == "cas":
        if not check_cas(val):
            raise TableError(path, f"'{val}' is not a valid CAS number (format NNNNNNN-NN-N with its check digit)", row=row, column=col)
        return val
    if spec.type == "choice":
        if val not in spec.choices:
            raise TableError(path, f"'{val}' is not one of {', '.join(spec.choices)}", row=row, column=col)
        return val
    if spec.type == "list":
        items = [v.strip() for v in val.split(";")]
        if spec.choices:
            bad = [v for v in items if v not in spec.choices]
            if bad:
                raise TableError(path, f"'{bad[0]}' is not one of {', '.join(spec.choices)}", row=row, column=col)
        return ";".join(items)
    if spec.type == "sources":
        items = [v.strip() for v in val.split(";") if v.strip()]
        if not user:
            bad = [v for v in items if v not in source_ids]
            if bad:
                raise TableError(path, f"unknown source id '{bad[0]}' (not in sources.csv)", row=row, column=col)
        return ";".join(items)
    return val


def _expected(spec: ColumnSpec) -> str:
    if spec.type in ("number", "integer"):
        lo = "" if spec.min is None else f"{spec.min:g} <= "
        hi = "" if spec.max is None else f" <= {spec.max:g}"
        return f"{'a whole number' if spec.type == 'integer' else 'a number'} {lo}{spec.column}{hi} ({spec.description})"
    if spec.type == "choice":
        return "one of " + ", ".join(spec.choices)
    if spec.type == "sources":
        return "source ids from sources.csv separated by ;"
    if spec.type == "cas":
        return "a CAS number"
    return spec.description or spec.type


# ----------------------------------------------------------------------------- records


def number_or_none(x) -> float | None:
    """A table cell as a float, or None when it is empty, not a number, NaN or infinite.

    >>> number_or_none("1.5"), number_or_none(""), number_or_none(float("nan"))
    (1.5, None, None)
    """
    if x is None or x == "":
        return None
    try:
        x = float(x)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None


_num = number_or_none


def _tuple(s: str) -> tuple[str, ...]:
    return tuple(v for v in (s or "").split(";") if v)


class _Record:
    """What the solvent and solute records share: HSP as an array, provenance, JSON."""

    @property
    def hsp(self) -> np.ndarray:
        return np.array([self.dD, self.dP, self.dH])

    @property
    def is_user(self) -> bool:
        return self.origin.startswith("user")

    @property
    def sources(self) -> tuple[str, ...]:
        return tuple(dict.fromkeys(_tuple(self.hsp_source) + _tuple(self.props_source)))

    def to_dict(self) -> dict[str, Any]:
        d = {f.name: getattr(self, f.name) for f in fields(self)}
        d["sources"] = list(self.sources)
        return d


@dataclass(frozen=True)
class Solvent(_Record):
    """A liquid of the solvents table (or of the user's overlay, or of the reference library).

    Numbers are None where unknown; HSP in MPa^0.5 at 25 C.
    """

    name: str
    cas: str
    dD: float
    dP: float
    dH: float
    vm_cm3_mol: float
    synonyms: tuple[str, ...] = ()
    roles: tuple[str, ...] = ()
    mw_g_mol: float | None = None
    density_g_cm3: float | None = None
    bp_C: float | None = None
    mp_C: float | None = None
    flash_C: float | None = None
    flammable: bool = True
    visc_mPa_s: float | None = None
    alpha_1_K: float | None = None
    water_miscibility: str = ""
    water_in_solvent_wt: float | None = None
    solvent_in_water_wt: float | None = None
    cost_class: int | None = None
    hsp_source: str = ""
    props_source: str = ""
    note: str = ""
    origin: str = "bundled"

    @property
    def food_use(self) -> bool:
        """True for liquids used on food (flavour carrier or extraction solvent roles).

        This is the table's role, not a legal status: see
        :func:`solvsel.rules.regulations.food_status` for that, per use and jurisdiction.
        """
        return "carrier" in self.roles or "extraction" in self.roles


@dataclass(frozen=True)
class Solute(_Record):
    """A solute of the solutes table: flavour, active, or a co-extract to reject.

    ``r0`` is None where no interaction radius is published.
    """

    name: str
    cas: str
    dD: float
    dP: float
    dH: float
    r0: float | None = None
    synonyms: tuple[str, ...] = ()
    category: str = "other"
    hsp_basis: str = "measured"
    hsp_method: str = ""
    mw_g_mol: float | None = None
    mp_C: float | None = None
    dHfus_kJ_mol: float | None = None
    vm_cm3_mol: float | None = None
    density_g_cm3: float | None = None
    smiles: str = ""
    hsp_source: str = ""
    props_source: str = ""
    note: str = ""
    origin: str = "bundled"


def _solvent_from_row(r: Mapping[str, Any]) -> Solvent:
    cost = r.get("cost_class")
    return Solvent(
        name=r["name"],
        cas=r.get("cas", "") or "",
        dD=float(r["dD_MPa05"]),
        dP=float(r["dP_MPa05"]),
        dH=float(r["dH_MPa05"]),
        vm_cm3_mol=float(r["vm_cm3_mol"]),
        synonyms=_tuple(r.get("synonyms", "")),
        roles=_tuple(r.get("roles", "")),
        mw_g_mol=_num(r.get("mw_g_mol")),
        density_g_cm3=_num(r.get("density_g_cm3")),
        bp_C=_num(r.get("bp_C")),
        mp_C=_num(r.get("mp_C")),
        flash_C=_num(r.get("flash_C")),
        flammable=(r.get("flammable", "yes") or "yes") != "no",
        visc_mPa_s=_num(r.get("visc_mPa_s")),
        alpha_1_K=_num(r.get("alpha_1_K")),
        water_miscibility=r.get("water_miscibility", "") or "",
        water_in_solvent_wt=_num(r.get("water_in_solvent_wt")),
        solvent_in_water_wt=_num(r.get("solvent_in_water_wt")),
        cost_class=None if cost is None or (isinstance(cost, float) and math.isnan(cost)) or str(cost) == "<NA>" else int(cost),
        hsp_source=r.get("hsp_source", "") or "",
        props_source=r.get("props_source", "") or "",
        note=r.get("note", "") or "",
        origin=r.get("origin", "bundled") or "bundled",
    )


def _solute_from_row(r: Mapping[str, Any]) -> Solute:
    return Solute(
        name=r["name"],
        cas=r.get("cas", "") or "",
        dD=float(r["dD_MPa05"]),
        dP=float(r["dP_MPa05"]),
        dH=float(r["dH_MPa05"]),
        r0=_num(r.get("r0_MPa05")),
        synonyms=_tuple(r.get("synonyms", "")),
        category=r.get("category", "other") or "other",
        hsp_basis=r.get("hsp_basis", "measured") or "measured",
        hsp_method=r.get("hsp_method", "") or "",
        mw_g_mol=_num(r.get("mw_g_mol")),
        mp_C=_num(r.get("mp_C")),
        dHfus_kJ_mol=_num(r.get("dHfus_kJ_mol")),
        vm_cm3_mol=_num(r.get("vm_cm3_mol")),
        density_g_cm3=_num(r.get("density_g_cm3")),
        smiles=r.get("smiles", "") or "",
        hsp_source=r.get("hsp_source", "") or "",
        props_source=r.get("props_source", "") or "",
        note=r.get("note", "") or "",
        origin=r.get("origin", "bundled") or "bundled",
    )


# ----------------------------------------------------------------------------- catalog


class Catalog:
    """All tables of one data folder, plus a user's overlay of solvents and solutes.

    Tables are read and validated on first use.  Use :func:`load_catalog`
    rather than building one directly.
    """

    def __init__(self, tables_dir: Path | str = TABLES_DIR, own: Mapping[str, Sequence[str | Path]] | None = None):
        self.tables_dir = Path(tables_dir)
        self.own = {k: tuple(Path(p) for p in v) for k, v in (own or {}).items()}
        for k in self.own:
            if k not in _load_schema(self.tables_dir):
                raise InputError(f"own tables: no table named '{k}' to add rows to")
        self._tables: dict[str, Any] = {}  # DataFrames, made from the rows when asked for
        self._rows: dict[str, tuple[list[str], list[dict[str, Any]]]] = {}
        self._index: dict[str, dict[str, int]] = {}
        self._records: dict[str, list] = {}

    # -- tables
    @property
    def table_names(self) -> list[str]:
        """Names of the tables declared in schema.csv that have a file."""
        return [t for t in _load_schema(self.tables_dir) if (self.tables_dir / f"{t}.csv").is_file()]

    def _table_name(self, name: str) -> str:
        """The table's name for ``name`` (any case, spaces, the short names of :data:`TABLE_ALIASES`)."""
        name = name.strip().lower().replace(" ", "_")
        return TABLE_ALIASES.get(name, name)

    def _read(self, name: str) -> tuple[list[str], list[dict[str, Any]]]:
        """The columns and validated rows of table ``name`` with the user's own rows laid over
        them, and an ``origin`` column; read once."""
        if name in self._rows:
            return self._rows[name]
        path = self.tables_dir / f"{name}.csv"
        if name not in _load_schema(self.tables_dir) or not path.is_file():
            known = self.table_names + ["sources"]
            close = difflib.get_close_matches(name, known, n=3, cutoff=0.5)
            raise UnknownNameError(name, "table", tuple(close or known))
        columns, rows = read_rows(path, name, self.tables_dir)
        rows = [{**r, "origin": "bundled"} for r in rows]
        for own_path in self.own.get(name, ()):
            try:
                _, mine = read_rows(own_path, name, self.tables_dir, user=True)
            except SolvselError as exc:  # name the request field the file came from (own_solvents ...)
                exc.param = exc.param or f"own_{name}"
                raise
            rows = _overlay(rows, [{**r, "origin": f"user: {shown_path(own_path)}"} for r in mine])
        self._rows[name] = (columns + ["origin"], rows)
        return self._rows[name]

    def rows(self, name: str) -> list[dict[str, Any]]:
        """The validated rows of table ``name`` (without .csv), one dict a row with an ``origin``
        (numbers as float, NaN when empty; integers as int, None when empty; text as str), read
        with the csv module: what a job reads without needing a DataFrame.  Do not change them.

        The same values as :meth:`table`:

        >>> cat = load_catalog()
        >>> row = cat.rows("solvents")[cat.find_index("solvents", "ethanol")]
        >>> frame = cat.table("solvents").set_index("name")
        >>> all(row[c] == frame.loc["ethanol", c] for c in ("cas", "dD_MPa05", "bp_C", "cost_class", "origin"))
        True
        """
        name = self._table_name(name)
        if name == "sources":
            return list(_load_sources(self.tables_dir))
        return self._read(name)[1]

    def table(self, name: str):
        """The validated table ``name`` (without .csv) as a DataFrame, with an ``origin`` column."""
        name = self._table_name(name)
        if name == "sources":
            return self.sources
        if name not in self._tables:
            columns, rows = self._read(name)
            self._tables[name] = _frame(columns, rows, _load_schema(self.tables_dir)[name])
        return self._tables[name]

    @property
    def sources(self):
        """``sources.csv`` as a DataFrame."""
        return _sources_frame(self.tables_dir)

    def source(self, source_id: str) -> dict:
        """The row of ``sources.csv`` with id ``source_id`` (``id``, ``kind``, ``citation``, ``url``)."""
        index = _source_index(self.tables_dir)
        if source_id not in index:
            close = difflib.get_close_matches(source_id, list(index), n=5, cutoff=0.5)
            raise UnknownNameError(source_id, "source id", tuple(close))
        return dict(index[source_id])

    @property
    def solvents(self):
        return self.table("solvents")

    @property
    def solutes(self):
        return self.table("solutes")

    # -- lookup
    def _name_index(self, table: str) -> dict[str, int]:
        if table not in self._index:
            columns, rows = self._read(self._table_name(table))[0], self.rows(table)
            idx: dict[str, int] = {}
            cols = [c for c in ("name", "cas", "synonyms") if c in columns]
            if "name" not in cols:
                raise InputError(f"table '{table}' has no name column to look names up in")
            # names first, then CAS, then synonyms: a synonym never shadows a name
            for col in cols:
                for i, row in enumerate(rows):
                    v = row[col]
                    keys = str(v).split(";") if col == "synonyms" else [str(v)]
                    for k in keys:
                        k = normalize_name(k)
                        if k and k not in idx:
                            idx[k] = i
            self._index[table] = idx
        return self._index[table]

    def match_index(self, table: str, name: str) -> int | None:
        """Row position of ``name`` in ``table``, or None: the name, a synonym or the CAS, the same
        with a missing or extra 'n-' prefix or a hyphen for a space (and back), and a strength by
        volume however it is written (:func:`strength_name`).  Nothing looser: a name that is only
        close to one of the table's is not a match."""
        if not isinstance(name, str) or not name.strip():
            raise InputError(f"expected a {table[:-1] if table.endswith('s') else table} name, got '{name}'")
        idx = self._name_index(table)
        key = normalize_name(name)
        for variant in (key, key.replace("-", " "), key.replace(" ", "-"), "n-" + key, key.removeprefix("n-"),
                        strength_name(key)):
            if variant in idx:
                return idx[variant]
        return None

    def unknown_name(self, table: str, name: str, also: Sequence[str] = (), why: str = "") -> UnknownNameError:
        """The error for a name ``table`` does not know: the closest names of the table (after
        ``also``) as the candidates, listed in ``expected``; ``why`` replaces the message."""
        idx = self._name_index(table)
        close = difflib.get_close_matches(normalize_name(name), list(idx), n=8, cutoff=0.6)
        rows = self.rows(table)
        names = tuple(dict.fromkeys(list(also) + [rows[idx[c]]["name"] for c in close]))[:5]
        kind = {"solvents": "liquid", "solutes": "solute"}.get(table, f"entry in table '{table}'")
        return refused_name(name, kind, names, why)

    def find_index(self, table: str, name: str) -> int:
        """Row position of ``name`` (:meth:`match_index`) in ``table``; UnknownNameError with the closest
        names otherwise."""
        i = self.match_index(table, name)
        if i is None:
            raise self.unknown_name(table, name)
        return i

    def _row_by_library_cas(self, table: str, name: str) -> int | None:
        """Row of ``table`` whose CAS the reference library gives for ``name`` (a misspelling it
        forgives, or a synonym we do not list), so our own row is used rather than the library's."""
        cas = library_cas(name)
        if not cas:
            return None
        return self._name_index(table).get(normalize_name(cas))

    def find(self, table: str, name: str) -> dict:
        """The row of ``table`` named ``name`` (forgiving match) as a dict."""
        return dict(self.rows(table)[self.find_index(table, name)])

    def solvent(self, name: str, library: bool = True) -> Solvent:
        """The liquid named ``name`` (name, synonym or CAS), the same in every command.

        In order: the solvents table (:meth:`match_index`); an oil of the oils table that stands
        for a liquid (its ``hsp_as``: "orange oil" is the oils table's cold-pressed orange oil with
        the values of d-limonene, :meth:`oil_liquid`); with ``library=True`` the table's row whose
        CAS the reference library ``chemicals`` gives for the name, else the library's own record
        (marked ``origin='library: ...'``), but only when the name is the library's own name for it
        (common or IUPAC) or its CAS: a name the library matches only through a synonym list (e.g.
        "propylene", read as propene) is refused with the library's reading among the candidates.
        """
        i = self.match_index("solvents", name)
        if i is not None:
            return self.solvent_records()[i]
        oil = self.oil_liquid(name)
        if oil is not None:
            return oil
        if not library:
            raise self.unknown_name("solvents", name)
        ours = self._row_by_library_cas("solvents", name)
        if ours is not None:
            return self.solvent_records()[ours]
        found = library_solvent(name)
        if found is None:
            raise self.unknown_name("solvents", name)
        if not library_name_is_exact(name):
            reading = f"{found.name} (CAS {found.cas})"
            raise self.unknown_name(
                "solvents", name, (found.name,),
                f"no liquid named '{name}' in the tables; {_LIBRARY_READING} {reading} through its list of "
                "synonyms only: give that name or its CAS number to use it")
        return found

    def liquid_name(self, name: str) -> str | None:
        """The table's name of the liquid ``name`` stands for (solvents table, or an oil that stands
        for a liquid), or None; the reference library is not asked."""
        if self.match_index("solvents", name) is not None:
            return self.solvent_records()[self.match_index("solvents", name)].name
        oil = self.oil_liquid(name)
        return None if oil is None else oil.name

    def oil_liquid(self, name: str) -> Solvent | None:
        """The oil of tables/oils.csv named ``name`` as a liquid, where the table says which liquid
        stands for it (``hsp_as``): that liquid's record under the oil's name, CAS and density (molar
        volume from the liquid's molar mass and the oil's density), with a note; None otherwise."""
        if "oils" not in self.table_names:
            return None
        i = self.match_index("oils", name)
        if i is None:
            return None
        row = self.rows("oils")[i]
        j = self.match_index("solvents", str(row.get("hsp_as") or "")) if str(row.get("hsp_as") or "").strip() else None
        if j is None:
            return None
        liquid = self.solvent_records()[j]
        density = _num(row.get("density_g_cm3")) or liquid.density_g_cm3
        vm = liquid.mw_g_mol / density if liquid.mw_g_mol and density else liquid.vm_cm3_mol
        return replace(liquid, name=str(row["name"]), cas=str(row.get("cas") or ""), synonyms=_tuple(row.get("synonyms", "")),
                       roles=(), density_g_cm3=density, vm_cm3_mol=round(vm, 1),
                       props_source=";".join(dict.fromkeys(_tuple(str(row.get("density_source") or ""))
                                                          + _tuple(liquid.props_source))),
                       note=f"an oil of tables/oils.csv taken as {liquid.name} (its HSP, boiling and flash point); "
                            f"density of the oil", water_miscibility=liquid.water_miscibility)

    def solute(self, name: str, library: bool = True) -> Solute:
        """The solute named ``name``; falls back to the solvents table, then the library."""
        try:
            return self.solute_records()[self.find_index("solutes", name)]
        except UnknownNameError as exc:
            ours = self._row_by_library_cas("solutes", name) if library else None
            if ours is not None:
                return self.solute_records()[ours]
            try:
                s = self.solvent(name, library=library)
            except UnknownNameError as inner:  # the library's reading of a name is the more telling refusal
                raise (inner if _LIBRARY_READING in inner.message else exc) from None
            return Solute(
                name=s.name, cas=s.cas, dD=s.dD, dP=s.dP, dH=s.dH, synonyms=s.synonyms, category="other",
                hsp_basis="measured", mw_g_mol=s.mw_g_mol, mp_C=s.mp_C, vm_cm3_mol=s.vm_cm3_mol,
                density_g_cm3=s.density_g_cm3, hsp_source=s.hsp_source, props_source=s.props_source,
                note=(s.note + " (a liquid of the solvents table used as a solute)").strip(), origin=s.origin,
            )

    def solvent_records(self) -> list[Solvent]:
        if "solvents" not in self._records:
            self._records["solvents"] = [_solvent_from_row(r) for r in self.rows("solvents")]
        return self._records["solvents"]

    def solute_records(self) -> list[Solute]:
        if "solutes" not in self._records:
            self._records["solutes"] = [_solute_from_row(r) for r in self.rows("solutes")]
        return self._records["solutes"]

    def solvents_with_role(self, role: str) -> list[Solvent]:
        return [s for s in self.solvent_records() if role in s.roles]

    def hsp_array(self, items: Iterable[str | Solvent | Solute]) -> np.ndarray:
        """HSP of several liquids or solutes as an (n, 3) array."""
        out = []
        for it in items:
            rec = self.solvent(it) if isinstance(it, str) else it
            out.append(rec.hsp)
        return np.array(out, dtype=float).reshape(-1, 3)


def _overlay(rows: list[dict], mine: list[dict]) -> list[dict]:
    """Rows of ``mine`` replace rows of ``rows`` with the same CAS (or name), others are appended."""
    keys = {}
    for i, r in enumerate(rows):
        if r.get("cas"):
            keys[("cas", r["cas"])] = i
        keys[("name", normalize_name(r["name"]))] = i
    drop = set()
    for r in mine:
        for k in (("cas", r.get("cas")), ("name", normalize_name(r["name"]))):
            if k[1] and k in keys:
                drop.add(keys[k])
    return [r for i, r in enumerate(rows) if i not in drop] + list(mine)


@lru_cache(maxsize=4)
def _sources_frame(tables_dir: Path):
    import pandas as pd

    return pd.DataFrame.from_records(list(_load_sources(tables_dir)), columns=list(SOURCE_COLUMNS))


@lru_cache(maxsize=8)
def _cached_catalog(tables_dir: Path) -> Catalog:
    return Catalog(tables_dir)


def load_catalog(own: Mapping[str, Sequence[str | Path]] | None = None, tables_dir: Path | str | None = None) -> Catalog:
    """The catalog of the bundled tables (cached), or with the user's ``own`` overlay files.

    ``own`` maps a table name to CSV paths with the same columns, e.g.
    ``{"solutes": ["my_solutes.csv"]}``; their rows add to or replace the
    bundled ones (matched by CAS, else by name) and are marked as the user's.
    """
    tdir = Path(tables_dir) if tables_dir is not None else TABLES_DIR
    if not own:
        return _cached_catalog(tdir)
    return Catalog(tdir, own=own)


# ----------------------------------------------------------------------------- library

_LIBRARY_READING = "the reference library reads it as"


def refused_name(name: str, kind: str, candidates: Sequence[str], why: str = "",
                 param: str | None = None) -> UnknownNameError:
    """An :class:`~solvsel.errors.UnknownNameError` for ``name`` with its candidates listed in
    ``expected`` (and as ``suggestions``); ``why`` replaces the usual message.

    >>> e = refused_name("propylene", "liquid", ("propylene glycol",), "the words name another liquid")
    >>> e.expected, e.suggestions
    ("one of: 'propylene glycol'", ('propylene glycol',))
    """
    err = UnknownNameError(name, kind, tuple(candidates), param=param)
    if candidates:
        err.expected = "one of: " + ", ".join(f"'{c}'" for c in candidates)
    if why:
        err.message = why + ("; candidates: " + ", ".join(f"'{c}'" for c in candidates) if candidates else "")
        err.args = (err.message,)
    return err


@lru_cache(maxsize=256)
def library_name_is_exact(name_or_cas: str) -> bool:
    """True when the reference library knows ``name_or_cas`` as a CAS number or as its own common or
    IUPAC name for the substance (not only through its list of synonyms).

    >>> library_name_is_exact("naphthalene"), library_name_is_exact("propylene")
    (True, False)
    """
    from chemicals.identifiers import search_chemical

    key = normalize_name(name_or_cas)
    if not key:
        return False
    try:
        meta = search_chemical(name_or_cas.strip())
    except ValueError:  # unknown to the library
        return False
    return key in {normalize_name(meta.CASs), normalize_name(meta.common_name or ""), normalize_name(meta.iupac_name or "")}



@lru_cache(maxsize=256)
def library_cas(name_or_cas: str) -> str | None:
    """CAS number the reference library ``chemicals`` gives for a name, or None."""
    from chemicals.identifiers import search_chemical

    if not name_or_cas.strip():
        return None
    try:
        return search_chemical(name_or_cas.strip()).CASs
    except ValueError:  # unknown to the library
        return None


@lru_cache(maxsize=256)
def library_solvent(name_or_cas: str) -> Solvent | None:
    """A substance from the reference library ``chemicals``, or None if it is unknown there
    or has no HSP in the three published data sets.

    Molar volume from the COSTALD correlation at 25 C (an estimate) from the
    library's critical constants; the record says so in its note.
    """
    from chemicals.identifiers import search_chemical

    if not name_or_cas.strip():
        return None
    try:
        meta = search_chemical(name_or_cas.strip())
    except ValueError:  # unknown to the library
        return None
    cas = meta.CASs
    hsp, src = library_hsp(cas)
    if hsp is None:
        return None
    from chemicals import critical, acentric, phase_change, safety
    from chemicals.volume import COSTALD

    vm = density = None
    try:
        tc, vc, omega = critical.Tc(cas), critical.Vc(cas), acentric.omega(cas)
        if tc and vc and omega is not None and tc > 298.15:
            v = COSTALD(298.15, tc, vc, omega)  # m3/mol
            vm = v * 1e6
            density = meta.MW / vm
    except (ValueError, TypeError, ZeroDivisionError):  # the library's data incomplete for this substance
        vm = None
    if vm is None:
        return None
    tb, tm, tf = phase_change.Tb(cas), phase_change.Tm(cas), safety.T_flash(cas)
    return Solvent(
        name=meta.common_name or name_or_cas,
        cas=cas,
        dD=hsp[0], dP=hsp[1], dH=hsp[2],
        vm_cm3_mol=round(vm, 1),
        mw_g_mol=meta.MW,
        density_g_cm3=round(density, 4),
        bp_C=None if tb is None else round(tb - 273.15, 1),
        mp_C=None if tm is None else round(tm - 273.15, 1),
        flash_C=None if tf is None else round(tf - 273.15, 0),
        hsp_source=src,
        props_source="chemicals_lib",
        note="from the reference library chemicals; molar volume estimated (COSTALD); not a food-use record",
        origin=f"library: chemicals ({src})",
    )


def library_hsp(cas: str) -> tuple[tuple[float, float, float] | None, str]:
    """HSP of ``cas`` from the first of the three published data sets that has it [MPa^0.5]."""
    import chemicals.solubility as s

    for key, sid in LIBRARY_HSP_DATASETS.items():
        d = s.hansen_delta_d(cas, method=key) if key in s.hansen_delta_d_methods(cas) else None
        if d is None:
            continue
        p = s.hansen_delta_p(cas, method=key)
        h = s.hansen_delta_h(cas, method=key)
        if p is None or h is None:
            continue
        return (round(d / 1000, 2), round(p / 1000, 2), round(h / 1000, 2)), sid
    return None, ""
