"""Shared pieces of the subcommands: catalog with the user's overlay, argument
parsers for the usual value forms, JSON output and aligned text tables.

Every subcommand uses these so that the same kind of argument is parsed and
reported the same way everywhere.
"""

from __future__ import annotations

import json
import math
import os
import sys
from contextlib import contextmanager
from dataclasses import asdict, is_dataclass
from typing import Any, Iterable, Sequence


__all__ = [
    "get_catalog",
    "add_json_flag",
    "emit_json",
    "to_jsonable",
    "print_table",
    "print_cautions",
    "open_ui",
    "option_name",
    "blas_loads_on_one_thread",
]

#: Request fields whose command-line option is not ``--`` + the field with dashes
#: (a command module may add its own in an ``OPTION_NAMES`` dict of the same form).
OPTION_NAMES = {
    "temp_C": "--temp",
    "bp_min_C": "--bp-range",
    "bp_max_C": "--bp-range",
    "min_flash_C": "--min-flash",
    "top": "--top",
    "bounds": "--fraction",
}


def option_name(param: str) -> str:
    """The option a request field is given with on the command line (``temp_C`` -> ``--temp``).

    >>> option_name("temp_C"), option_name("oil_phase")
    ('--temp', '--oil-phase')
    """
    if param.startswith("-") or param.isupper():  # already an option, or a positional's metavar
        return param
    return OPTION_NAMES.get(param) or "--" + param.replace("_", "-")


@contextmanager
def blas_loads_on_one_thread():
    """Inside, an OpenBLAS library loaded for the first time (scipy's, with its optimisers) starts
    with one thread instead of a pool (unless ``OPENBLAS_NUM_THREADS`` is set); the environment is
    as before afterwards.

    For a command whose solvers make many tiny BLAS calls on one thread anyway (the sphere fit limits
    them to one): starting and stopping the library's thread pool cost 30-50 ms of a cold start.
    """
    mine = "OPENBLAS_NUM_THREADS" not in os.environ
    if mine:
        os.environ["OPENBLAS_NUM_THREADS"] = "1"
    try:
        yield
    finally:
        if mine:
            os.environ.pop("OPENBLAS_NUM_THREADS", None)


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
    import numpy as np

    if isinstance(obj, np.ndarray):
        return [to_jsonable(v) for v in obj.tolist()]
    if isinstance(obj, np.bool_):
        return bool(obj)
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, np.floating):
        obj = float(obj)
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    return str(obj)


def emit_json(obj: Any) -> None:
    """Print ``obj`` as one JSON document (a result's ``to_dict()``: the jobs that judge legal status put
    their ``audit`` block in it, so the library and the command line give the same document)."""
    json.dump(to_jsonable(obj), sys.stdout, indent=2, ensure_ascii=False, allow_nan=False)
    sys.stdout.write("\n")


def _fmt(value: Any, spec: str | None) -> str:
    if value is None:
        return "-"
    if isinstance(value, float):
        if not math.isfinite(value):
            return "-"
        text = format(value, spec or ".3g")
        if "e+" in text and abs(value) < 1e12:  # 1032600 mg/L, not 1.0326e+06
            text = format(value, ".0f")
        return text
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
    """Print each caution once, in order, the closing deferral to local codes and the rules in force last."""
    from ..rules.cautions import DEFER

    file = file or sys.stdout
    seen = list(dict.fromkeys(c for c in cautions if c))
    if DEFER in seen:
        seen = [c for c in seen if c != DEFER] + [DEFER]
    if seen:
        print("\nCautions:", file=file)
        for c in seen:
            print(f"  ! {c}", file=file)


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
    from ..extras import need

    need("textual", "ui", "the terminal UI")
    from ..tui.app import run_app

    return run_app(catalog=get_catalog(args))
