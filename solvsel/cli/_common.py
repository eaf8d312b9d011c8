"""Shared pieces of the subcommands: catalog with the user's overlay, argument
parsers for the usual value forms, JSON output and aligned text tables.

Every subcommand uses these so that the same kind of argument is parsed and
reported the same way everywhere.
"""

from __future__ import annotations

import json
import math
import sys
from dataclasses import asdict, is_dataclass
from typing import Any, Iterable, Sequence

from ..errors import InputError

__all__ = [
    "get_catalog",
    "add_json_flag",
    "emit_json",
    "to_jsonable",
    "print_table",
    "print_cautions",
    "parse_names",
    "parse_hsp",
    "parse_amounts",
    "parse_percent",
    "parse_range",
    "open_ui",
]


_CATALOG = None


def get_catalog(args=None):
    """The catalog of bundled tables plus the user's ``--own-*`` overlay files."""
    global _CATALOG
    from ..data.catalog import load_catalog

    own = {}
    if args is not None:
        if getattr(args, "own_solvents", None):
            own["solvents"] = list(args.own_solvents)
        if getattr(args, "own_solutes", None):
            own["solutes"] = list(args.own_solutes)
    if own:
        return load_catalog(own=own)
    if _CATALOG is None:
        _CATALOG = load_catalog()
    return _CATALOG


def add_json_flag(parser) -> None:
    parser.add_argument("--json", action="store_true", help="print one JSON document on stdout")


def to_jsonable(obj: Any) -> Any:
    """Turn results (dataclasses with ``to_dict``, numpy values, tuples) into JSON types.

    Non-finite floats become ``null`` so the output is strict JSON.
    """
    if hasattr(obj, "to_dict") and callable(obj.to_dict):
        return to_jsonable(obj.to_dict())
    if is_dataclass(obj) and not isinstance(obj, type):
        return to_jsonable(asdict(obj))
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple, set, frozenset)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, bool) or obj is None or isinstance(obj, str):
        return obj
    if isinstance(obj, int):
        return obj
    try:
        import numpy as np

        if isinstance(obj, np.ndarray):
            return [to_jsonable(v) for v in obj.tolist()]
        if isinstance(obj, np.bool_):
            return bool(obj)
        if isinstance(obj, np.integer):
            return int(obj)
        if isinstance(obj, np.floating):
            obj = float(obj)
    except ImportError:  # pragma: no cover
        pass
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    return str(obj)


def emit_json(obj: Any) -> None:
    json.dump(to_jsonable(obj), sys.stdout, indent=2, ensure_ascii=False, allow_nan=False)
    sys.stdout.write("\n")


def _fmt(value: Any, spec: str | None) -> str:
    if value is None:
        return "-"
    if isinstance(value, float):
        if not math.isfinite(value):
            return "-"
        return format(value, spec or ".3g")
    if isinstance(value, (list, tuple)):
        return ", ".join(_fmt(v, None) for v in value)
    return str(value)


def print_table(
    rows: Iterable[dict],
    columns: Sequence[tuple[str, str] | tuple[str, str, str]],
    file=None,
) -> None:
    """Print ``rows`` as an aligned text table.

    ``columns`` is a sequence of ``(key, header)`` or ``(key, header, format_spec)``;
    numbers are right-aligned, text left-aligned; missing values print as ``-``.
    """
    file = file or sys.stdout
    rows = list(rows)
    cells = []
    for row in rows:
        cells.append([_fmt(row.get(c[0]), c[2] if len(c) > 2 else None) for c in columns])
    headers = [c[1] for c in columns]
    widths = [max([len(h)] + [len(r[i]) for r in cells]) for i, h in enumerate(headers)]
    numeric = [
        all(isinstance(row.get(c[0]), (int, float)) or row.get(c[0]) is None for row in rows) and rows
        for c in columns
    ]

    def line(values):
        out = []
        for v, w, num in zip(values, widths, numeric):
            out.append(v.rjust(w) if num else v.ljust(w))
        return "  ".join(out).rstrip()

    print(line(headers), file=file)
    print("  ".join("-" * w for w in widths), file=file)
    for r in cells:
        print(line(r), file=file)


def print_cautions(cautions: Iterable[str], file=None) -> None:
    file = file or sys.stdout
    seen = []
    for c in cautions:
        if c and c not in seen:
            seen.append(c)
    if seen:
        print("\nCautions:", file=file)
        for c in seen:
            print(f"  ! {c}", file=file)


def parse_names(text: str, what: str = "--only") -> list[str]:
    """Split a comma-separated list of names (``"ethanol, water"``); quotes allowed."""
    import csv

    if text is None:
        return []
    items = next(csv.reader([text], skipinitialspace=True), [])
    names = [i.strip() for i in items if i.strip()]
    if not names:
        raise InputError(f"{what}: expected a comma-separated list of names, got '{text}'")
    return names


def parse_hsp(text: str, what: str = "--hsp", allow_r0: bool = True) -> tuple[float, ...]:
    """Parse ``"dD,dP,dH"`` or ``"dD,dP,dH,R0"`` (MPa^0.5)."""
    parts = [p.strip() for p in str(text).split(",")]
    want = "dD,dP,dH" + ("[,R0]" if allow_r0 else "")
    if len(parts) not in ((3, 4) if allow_r0 else (3,)):
        raise InputError(f"{what}: expected {want} in MPa^0.5, got '{text}'")
    try:
        values = tuple(float(p) for p in parts)
    except ValueError:
        raise InputError(f"{what}: expected numbers {want} in MPa^0.5, got '{text}'") from None
    return values


def parse_amounts(text: str, what: str = "--oil") -> list[tuple[str, float]]:
    """Parse ``"d-limonene=70, medium-chain triglycerides=30"`` into (name, amount) pairs."""
    import csv

    out = []
    items = next(csv.reader([text or ""], skipinitialspace=True), [])
    for item in items:
        if not item.strip():
            continue
        if "=" not in item:
            raise InputError(f"{what}: expected NAME=AMOUNT items separated by commas, got '{item.strip()}'")
        name, _, amount = item.rpartition("=")
        try:
            value = float(amount.strip().rstrip("%"))
        except ValueError:
            raise InputError(f"{what}: amount of '{name.strip()}' must be a number, got '{amount.strip()}'") from None
        if not math.isfinite(value) or value < 0:
            raise InputError(f"{what}: amount of '{name.strip()}' must be zero or positive, got {amount.strip()}")
        out.append((name.strip(), value))
    if not out:
        raise InputError(f"{what}: expected NAME=AMOUNT items separated by commas, got '{text}'")
    return out


def parse_percent(text: str, what: str = "--dose") -> float:
    """Parse ``"0.15%"`` (percent) or ``"0.0015"`` (fraction) or ``"1500ppm"`` into a mass fraction."""
    t = str(text).strip().lower().replace(" ", "")
    factor = 1.0
    for suffix, f in (("%", 1e-2), ("ppm", 1e-6), ("mg/kg", 1e-6), ("g/kg", 1e-3)):
        if t.endswith(suffix):
            t, factor = t[: -len(suffix)], f
            break
    try:
        value = float(t) * factor
    except ValueError:
        raise InputError(f"{what}: expected a fraction (0.0015), a percent (0.15%) or ppm (1500ppm), got '{text}'") from None
    if not (0 <= value <= 1):
        raise InputError(f"{what}: must be between 0 and 100 %, got '{text}'")
    return value


def parse_range(text: str | None, what: str = "--bp-range") -> tuple[float | None, float | None]:
    """Parse ``"LO:HI"`` (either side may be empty) into two numbers or None."""
    if text is None:
        return None, None
    t = str(text).strip()
    if ":" not in t:
        raise InputError(f"{what}: expected LO:HI in C (either side may be empty), got '{text}'")
    lo, _, hi = t.partition(":")
    try:
        lo_v = float(lo) if lo.strip() else None
        hi_v = float(hi) if hi.strip() else None
    except ValueError:
        raise InputError(f"{what}: expected numbers of C as LO:HI, got '{text}'") from None
    if lo_v is None and hi_v is None:
        raise InputError(f"{what}: give at least one side, e.g. 40:100, :120 or 150:")
    if lo_v is not None and hi_v is not None and lo_v > hi_v:
        raise InputError(f"{what}: the low end {lo_v:g} is above the high end {hi_v:g}")
    return lo_v, hi_v


def open_ui(args) -> int:
    """Open the terminal UI on the demo scenario.

    Without a terminal (output piped, or run by a script) the text walk-through
    of the same scenario is printed instead.
    """
    from argparse import Namespace

    from .demo import run as run_demo

    if not (sys.stdin.isatty() and sys.stdout.isatty()):
        print("(no terminal: printing the text walk-through of the demo; run `solvsel` in a terminal for the UI)\n")
        return run_demo(Namespace(step=None))
    try:
        from ..tui.app import run_app
    except ModuleNotFoundError as exc:
        if exc.name and exc.name.startswith("solvsel.tui"):
            return run_demo(Namespace(step=None))
        raise
    return run_app(catalog=get_catalog(args))
