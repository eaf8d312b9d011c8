"""``solvsel --workspace FILE COMMAND ...``: a workspace's defaults for any command, and the run recorded in it.

The workspace (:mod:`solvsel.data.workspace`) supplies what the command line leaves out: its
constraints (request field -> value) and its target become the command's options where the
command has them and they were not given, and its own rows of the liquids and solutes tables are
added as ``--own-solvents`` / ``--own-solutes``.  After the command succeeds, the options it ran
with and its JSON document are recorded in the workspace's history with the time, and the
workspace is saved (atomically, the previous version kept as ``FILE.bak``).  A text answer is
computed a second time with ``--json`` for the record; a command without ``--json`` (``report``,
``demo``) is recorded without a result.  A damaged workspace, or one of a newer schema, is
refused before the command runs.
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import sys
import tempfile
from typing import Any, Callable

from ..errors import SolvselError
from ._common import option_name, to_jsonable

__all__ = ["run_in_workspace", "with_defaults"]

#: Options that take a range ``LO:HI`` filled from two request fields.
_RANGES = {"--bp-range": ("bp_min_C", "bp_max_C")}


def subparser(parser: argparse.ArgumentParser, command: str) -> argparse.ArgumentParser:
    """The parser of the subcommand ``command``."""
    action = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return action.choices[command]


def _given(action: argparse.Action, tokens: list[str]) -> bool:
    return any(t == s or t.startswith(s + "=") for t in tokens for s in action.option_strings)


def _text(value: Any) -> str:
    if isinstance(value, (list, tuple)):
        return ",".join(_text(v) for v in value)
    if isinstance(value, float) and value.is_integer():
        return f"{value:g}"
    return str(value)


def _option_values(defaults: dict, names: dict) -> dict[str, Any]:
    """Option -> value for the request fields of ``defaults`` (ranges joined as ``LO:HI``)."""
    out: dict[str, Any] = {}
    for field, value in defaults.items():
        if value is None:
            continue
        opt = names.get(field) or option_name(field)
        if opt in _RANGES:
            lo, hi = (defaults.get(f) for f in _RANGES[opt])
            value = f"{'' if lo is None else _text(lo)}:{'' if hi is None else _text(hi)}"
        out[opt] = value
    return out


def with_defaults(tokens: list[str], sub: argparse.ArgumentParser, names: dict, defaults: dict) -> list[str]:
    """The options of ``defaults`` (request field -> value) the subcommand ``sub`` has and ``tokens`` (its
    part of the command line) does not give, as ``--option=value`` tokens (flags bare).

    An option of a mutually exclusive group is added only when no option of its group is given.
    """
    actions = sub._option_string_actions
    groups = {a: g._group_actions for g in sub._mutually_exclusive_groups for a in g._group_actions}
    out = []
    for opt, value in _option_values(defaults, names).items():
        action = actions.get(opt)
        if action is None or any(_given(a, tokens) for a in groups.get(action, [action])):
            continue
        if action.nargs == 0:  # a flag: set when the workspace says yes
            out += [opt] if value is True else []
        elif value is not False:
            out.append(f"{opt}={_text(value)}")
    return out


def _with_workspace(parser, args, argv: list[str], ws, folder: str) -> list[str]:
    """``argv`` with the workspace's defaults added after the command (for ``report``, after the command it
    reports on) and its own rows as overlay files in ``folder`` at the front."""
    from ..data.workspace import defaults_of, own_tables_csv

    command, start = args.command, argv.index(args.command)
    if command == "report":
        from . import COMMANDS
        from .report import split_args

        inner = (split_args(args)[2] or [None])[0]
        if inner not in COMMANDS:
            return argv
        command, start = inner, argv.index(inner, argv.index(args.out, start + 1) + 1)
    module = sys.modules.get(f"{__package__}.{command}")
    names = getattr(module, "OPTION_NAMES", {})
    sub = subparser(parser, command)
    head, tail = argv[: start + 1], argv[start + 1:]
    own = [f"--own-{table}={p}" for table, paths in own_tables_csv(ws, folder).items() for p in paths]
    return own + head + with_defaults(tail, sub, names, dict(defaults_of(ws))) + tail


def _capture(execute: Callable[[list[str]], int], argv: list[str]) -> tuple[int, str]:
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        rc = execute(argv)
    return rc, out.getvalue()


def _result(execute, parser, args, argv: list[str]) -> tuple[int, Any]:
    """Run ``argv`` (its output shown as usual) and return its exit code and JSON document (None when the
    command has no JSON form)."""
    has_json = "--json" in subparser(parser, args.command)._option_string_actions
    if "--json" in argv:
        rc, text = _capture(execute, argv)
        sys.stdout.write(text)
    else:
        rc = execute(argv)
        text = _capture(execute, argv + ["--json"])[1] if has_json and rc == 0 else ""
    try:
        return rc, json.loads(text) if text.strip() else None
    except json.JSONDecodeError:  # a command that printed something else (a batch's file to stdout)
        return rc, None


def run_in_workspace(parser: argparse.ArgumentParser, args, argv: list[str],
                     execute: Callable[[list[str]], int]) -> int:
    """Run the command of ``argv`` with the defaults of the workspace ``args.workspace`` and record it there."""
    from ..data.catalog import check_write_target
    from ..data.workspace import open_workspace, record_run, save_workspace

    path = args.workspace
    check_write_target(path, param="workspace")
    ws = open_workspace(path, missing_ok=True)  # a damaged or newer file is refused here, before the work
    with tempfile.TemporaryDirectory(prefix="solvsel-workspace-") as folder:
        full = _with_workspace(parser, args, argv, ws, folder)
        try:
            rc, result = _result(execute, parser, args, full)
        except SolvselError as exc:
            raise _in_workspace(exc, folder, path) from None
        shown = [a for a in full if not a.startswith(f"--own-") or folder not in a]
        shown = [a for i, a in enumerate(shown) if not _is_workspace_token(shown, i)]
        options = vars(parser.parse_known_args(shown)[0])
    if rc == 0:
        options = {k: v for k, v in options.items() if k not in ("func", "workspace")}
        save_workspace(record_run(ws, args.command, shown, to_jsonable(options), result), path)
    return rc


def _in_workspace(exc, folder: str, path: str):
    """An error in the workspace's own rows named by the workspace, not by the file they were passed in."""
    if exc.path and exc.path.startswith(folder):
        table = "solutes" if "solutes" in exc.path else "solvents"
        exc.path, exc.param, exc.value = f"{path} (its own {table} rows)", "workspace", path
    return exc


def _is_workspace_token(argv: list[str], i: int) -> bool:
    a = argv[i]
    return a == "--workspace" or a.startswith("--workspace=") or (i > 0 and argv[i - 1] == "--workspace")
