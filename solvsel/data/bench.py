"""The one reader of bench-results files (a CSV of liquids tested on a solute, one row each).

A row names the liquid tested and its result::

    # comment lines start with #
    liquid,result,dD,dP,dH,weight,note
    ethanol,bad,,,,,swollen gum
    ethanol:water=70:30,bad,,,,,a blend by volume
    house flavour base,good,19.0,6.0,9.0,,a liquid of our own

``liquid`` is a name, synonym or CAS of the solvents table, a blend of table
liquids by volume (``ethanol:water=70:30``), or a liquid of the user's own with
``dD``, ``dP``, ``dH`` [MPa^0.5]; ``result`` is ``good``, ``partial``, ``bad``
or a number on the user's scale (one kind per file); ``weight`` (> 0, default 1)
and ``note`` are optional.  Header names are matched ignoring case, and the
older spellings are read too: ``solvent`` or ``name`` for ``liquid``, ``score``
for ``result``, and a ``good`` column of yes / no (``y``, ``1``, ``true``,
``soluble`` ... ) in place of ``result``.

Every row is either used or reported as a :class:`~solvsel.errors.TableError`
naming the file, the row (file line, comments counted) and the column: none is
dropped silently.  This module only reads: it resolves names to catalog
records and leaves the Hansen arithmetic (a blend's parameters) to
:mod:`solvsel.science.sphere`.

>>> import tempfile, pathlib
>>> from solvsel.data.catalog import load_catalog
>>> p = pathlib.Path(tempfile.mkdtemp()) / "bench.csv"
>>> _ = p.write_text("solvent,good\\nacetone,yes\\nwater,no\\nethanol:water=70:30,no\\n", encoding="utf-8")
>>> b = read_bench(p, load_catalog())
>>> b.scale, [(e.label, e.result) for e in b.entries]
('words', [('acetone', 'good'), ('water', 'bad'), ('ethanol:water=70:30', 'bad')])
>>> [(r.name, round(f, 2)) for r, f in b.entries[2].blend]
[('ethanol', 0.7), ('water', 0.3)]
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

from ..errors import SolvselError, TableError, UnknownNameError
from .catalog import read_user_csv

__all__ = ["BENCH_COLUMNS", "WORD_RESULTS", "BenchEntry", "BenchFile", "read_bench", "liquid_key"]

#: Columns of a bench file; ``liquid`` and ``result`` are required.
BENCH_COLUMNS = ("liquid", "result", "dD", "dP", "dH", "weight", "note")
#: Other spellings of the columns (older files of the terminal UI), lower case.
COLUMN_ALIASES = {"solvent": "liquid", "name": "liquid", "score": "result"}
#: Result words and what they mean.
WORD_RESULTS = {"good": "good", "partial": "partial", "bad": "bad"}
#: Words of a yes/no ``good`` column.
YES_NO = {**{w: "good" for w in ("yes", "y", "1", "true", "good", "soluble")},
          **{w: "bad" for w in ("no", "n", "0", "false", "bad", "insoluble")}, "partial": "partial"}
#: Ranges of a liquid's own HSP [MPa^0.5]: those of real liquids (Hansen 2007, Appendix A).
OWN_HSP_RANGES = {"dD": (10.0, 25.0), "dP": (0.0, 30.0), "dH": (0.0, 45.0)}

_COLUMNS_HINT = "liquid,result[,dD,dP,dH,weight,note]"


@dataclass(frozen=True)
class BenchEntry:
    """One liquid of a bench file, its name resolved.

    Attributes
    ----------
    row : int
        line of the file (1-based, comment lines counted)
    label : str
        the liquid as written in the file
    key : str
        identity of the liquid (same key, same liquid: two rows of one key are refused)
    result : str
        "good", "partial", "bad", or "score" (a number on the user's scale)
    score : float or None
        the number, for a numeric result
    weight : float
        the row's weight as written (default 1) [-]
    basis : str
        where the liquid's HSP come from: "table", the reference library's origin,
        "blend of table liquids (volume-fraction average)" or "your values"
    hsp : tuple of 3 floats or None
        dD, dP, dH [MPa^0.5] of a single liquid; None for a blend
    blend : tuple of (Solvent, fraction)
        a blend's components and volume fractions (summing to 1); empty otherwise
    """

    row: int
    label: str
    key: str
    result: str
    score: float | None
    weight: float
    basis: str
    hsp: tuple | None
    blend: tuple = ()


@dataclass(frozen=True)
class BenchFile:
    """The rows of a bench file, in file order; ``scale`` is "words" or "numbers"."""

    path: str
    entries: tuple
    scale: str

    @property
    def keys(self) -> frozenset:
        """The keys of the liquids tested (see :func:`liquid_key`)."""
        return frozenset(e.key for e in self.entries)


def liquid_key(record) -> str:
    """The key of a table liquid, as :attr:`BenchEntry.key` has it (``"liquid:<CAS or name>"``)."""
    return "liquid:" + (record.cas or record.name)


def read_bench(path, cat) -> BenchFile:
    """Read a bench file (see the module text) against the liquids of ``cat``.

    Parameters
    ----------
    path : str or Path
        the CSV file, ``"-"`` for standard input (read by :func:`~solvsel.data.catalog.read_user_csv`:
        UTF-8 with or without a byte-order mark, else Windows-1252 with a note; commas, semicolons
        or tabs between fields)
    cat : Catalog
        the catalog whose liquids the names refer to

    Raises
    ------
    FileError
        no such file, a folder, unreadable, not text (``param="path"``)
    TableError
        anything wrong inside the file, with its row and column (``param="path"``)
    """
    try:
        return _read(path, cat)
    except SolvselError as exc:  # every error of the file is about the request field path
        exc.param = exc.param or "path"
        raise


def _read(path, cat) -> BenchFile:
    shown, numbered, records = _lines(path)
    p = Path(shown)
    columns, result_col = _header(p, records[0], numbered[0])
    rows, seen, kinds = [], {}, set()
    for lineno, raw in zip(numbered[1:], records[1:]):
        if not any(c.strip() for c in raw):
            continue
        if len(raw) != len(columns):
            raise TableError(p, f"expected {len(columns)} fields, found {len(raw)} (quote a value that holds a comma)",
                             row=lineno)
        rec = dict(zip(columns, (v.strip() for v in raw)))
        entry = _entry(p, lineno, rec, result_col, cat)
        kinds.add("words" if entry.score is None else "numbers")
        if len(kinds) > 1:
            raise TableError(p, "results mix words (good/partial/bad) and numbers; use one scale in a file",
                             row=lineno, column=result_col)
        if entry.key in seen:
            raise TableError(p, f"'{entry.label}' is the same liquid as row {seen[entry.key]}; keep one result per "
                             "liquid (or average repeats into one score)", row=lineno, column="liquid")
        seen[entry.key] = lineno
        rows.append(entry)
    if not rows:
        raise TableError(p, "no liquids: expected one row per liquid tested under the header")
    return BenchFile(shown, tuple(rows), kinds.pop())


def _lines(path) -> tuple[str, list[int], list[list[str]]]:
    """The file as named in messages, and the line numbers and CSV fields of its records that are neither
    blank nor comments."""
    got = read_user_csv(path, param="path", comments=True, skipinitialspace=True)
    records = [(got.header_row, got.header)] + [(i, r) for i, r in got.rows if any(c.strip() for c in r)]
    return got.path, [i for i, _ in records], [r for _, r in records]


def _header(p: Path, names: list[str], hrow: int) -> tuple[list[str], str]:
    """The columns by their standard names, and the name of the result column ("result" or "good")."""
    canonical = {c.lower(): c for c in BENCH_COLUMNS}
    columns = []
    for h in (h.strip() for h in names):
        low = h.lower()
        name = canonical.get(low) or COLUMN_ALIASES.get(low) or ("good" if low == "good" else None)
        if name is None:
            raise TableError(p, f"unknown column '{h}'; the columns are {', '.join(BENCH_COLUMNS)}", row=hrow, column=h)
        if name in columns or (name in ("result", "good") and {"result", "good"} & set(columns)):
            raise TableError(p, f"column '{h}' says again what another column says; keep one", row=hrow, column=h)
        columns.append(name)
    if "liquid" not in columns:
        raise TableError(p, f"missing column 'liquid' (columns: {_COLUMNS_HINT})", row=hrow)
    if "result" not in columns and "good" not in columns:
        raise TableError(p, f"missing column 'result' (columns: {_COLUMNS_HINT})", row=hrow)
    own = [c for c in ("dD", "dP", "dH") if c in columns]
    if own and len(own) != 3:
        raise TableError(p, "give all three of dD, dP, dH (for liquids of your own) or none", row=hrow)
    return columns, ("good" if "good" in columns else "result")


def _entry(p: Path, lineno: int, rec: dict, result_col: str, cat) -> BenchEntry:
    label = rec["liquid"]
    if not label:
        raise TableError(p, "empty liquid name", row=lineno, column="liquid")
    result, score = _result(p, lineno, rec[result_col], result_col)
    weight = _weight(p, lineno, rec.get("weight", ""))
    own = [rec.get(c, "") for c in ("dD", "dP", "dH")]
    if any(own):
        hsp = _own_hsp(p, lineno, own)
        return BenchEntry(lineno, label, "own:" + label.strip().lower(), result, score, weight, "your values", hsp)
    blend = _blend(p, lineno, label)
    try:
        if blend:
            parts = [(cat.solvent(n), a) for n, a in blend]
            total = sum(a for _, a in parts)
            comps = tuple((r, a / total) for r, a in parts)
            key = "blend:" + ";".join(f"{r.name}={f:.4f}" for r, f in sorted(comps, key=lambda t: t[0].name))
            return BenchEntry(lineno, label, key, result, score, weight,
                              "blend of table liquids (volume-fraction average)", None, comps)
        r = cat.solvent(label)
    except UnknownNameError as exc:
        raise TableError(p, exc.message + "; or give dD, dP, dH for a liquid of your own",
                         row=lineno, column="liquid") from None
    basis = "table" if not r.origin.startswith("library") else r.origin
    return BenchEntry(lineno, label, liquid_key(r), result, score, weight, basis,
                      (float(r.dD), float(r.dP), float(r.dH)))


def _result(p: Path, lineno: int, cell: str, column: str) -> tuple[str, float | None]:
    """("good" | "partial" | "bad", None) or ("score", the number)."""
    res = cell.lower()
    if not res:
        raise TableError(p, "empty result; expected good, partial, bad or a number", row=lineno, column=column)
    if column == "good":
        if res not in YES_NO:
            raise TableError(p, f"expected yes or no, got '{cell}'", row=lineno, column=column)
        return YES_NO[res], None
    if res in WORD_RESULTS:
        return WORD_RESULTS[res], None
    try:
        score = float(res)
    except ValueError:
        raise TableError(p, f"'{cell}' is not a result; expected good, partial, bad or a number",
                         row=lineno, column=column) from None
    if not math.isfinite(score):
        raise TableError(p, f"'{cell}' is not a finite number", row=lineno, column=column)
    return "score", score


def _weight(p: Path, lineno: int, cell: str) -> float:
    if not cell:
        return 1.0
    try:
        weight = float(cell)
    except ValueError:
        weight = math.nan
    if not (math.isfinite(weight) and weight > 0):
        raise TableError(p, f"'{cell}' is not a positive number", row=lineno, column="weight")
    return weight


def _own_hsp(p: Path, lineno: int, cells: list[str]) -> tuple[float, float, float]:
    if not all(cells):
        col = ("dD", "dP", "dH")[[bool(x) for x in cells].index(False)]
        raise TableError(p, "give all three of dD, dP, dH for a liquid of your own", row=lineno, column=col)
    vals = []
    for c, v in zip(("dD", "dP", "dH"), cells):
        try:
            x = float(v)
        except ValueError:
            raise TableError(p, f"'{v}' is not a number of MPa^0.5", row=lineno, column=c) from None
        lo, hi = OWN_HSP_RANGES[c]
        if not (lo <= x <= hi):
            raise TableError(p, f"{c} = {v} is outside {lo:g}-{hi:g} MPa^0.5, the range of real liquids",
                             row=lineno, column=c)
        vals.append(x)
    return tuple(vals)


def _blend(p: Path, lineno: int, text: str) -> list[tuple[str, float]] | None:
    """``"ethanol:water=70:30"`` -> [("ethanol", 70.0), ("water", 30.0)]; None if not a blend."""
    if "=" not in text or ":" not in text:
        return None
    left, _, right = text.rpartition("=")
    names = [n.strip() for n in left.split(":")]
    parts = [x.strip() for x in right.split(":")]

    def fail(message: str) -> TableError:
        return TableError(p, message, row=lineno, column="liquid")

    if len(names) != len(parts) or len(names) < 2 or not all(names):
        raise fail("a blend is written NAME:NAME=PARTS:PARTS, e.g. ethanol:water=70:30 (parts by volume)")
    try:
        amounts = [float(x.rstrip("%")) for x in parts]
    except ValueError:
        raise fail(f"the parts of a blend must be numbers, got '{right.strip()}'") from None
    if any(not math.isfinite(a) or a < 0 for a in amounts) or sum(amounts) <= 0:
        raise fail(f"the parts of a blend must be zero or positive and not all zero, got '{right.strip()}'")
    return list(zip(names, amounts))
