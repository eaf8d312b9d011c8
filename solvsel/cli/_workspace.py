"""``solvsel --workspace FILE COMMAND ...``: a workspace's defaults for any command, and the run recorded in it.

``--workspace FILE`` may stand anywhere on the command line (before the command, among its options, or
among those of the command a report runs); it is read before the command line is parsed, so an option
a command requires can come from the workspace.

The workspace (:mod:`solvsel.data.workspace`) supplies what the command line leaves out: its
constraints (request field -> value) and its target become the command's options where the
command has them and they were not given, and its own rows of the liquids and solutes tables are
added as ``--own-solvents`` / ``--own-solutes``.  After the command succeeds, the options it ran
with and its JSON document are recorded in the workspace's history with the time, and the
workspace is saved (atomically, the previous version kept as ``FILE.bak``).  A text answer is
computed a second time with ``--json`` for the record, except where the command writes a file (a
batch's ``--out``, ``--refit``, ``--save-to``, ``--into``): that one, and a command without ``--json``
(``report``, ``demo``), is recorded without a result.  A damaged workspace, or one of a newer schema, is
refused before the command runs; a value the workspace supplied that the command refuses is said to
come from the workspace.
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

#: Options of the commands that write a file (a batch's answers, a refit, a saved estimate or sphere): such a
#: command is never run a second time for the record, so its text answer is recorded without its JSON.
_WRITES = ("out", "refit", "save_to", "into")
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


#: Options of the command line before the command (or of ``report`` before its file name) that take a value.
_VALUED = ("--own-solvents", "--own-solutes", "--workspace", "--title")


def workspace_of(argv: list[str]) -> str | None:
    """The file given with ``--workspace`` anywhere in ``argv`` (the last one), else None.

    >>> workspace_of(["rank", "--workspace", "w.json"]), workspace_of(["--workspace=a.json", "table", "x"])
    ('w.json', 'a.json')
    """
    found = None
    for i, a in enumerate(argv):
        if a == "--workspace" and i + 1 < len(argv):
            found = argv[i + 1]
        elif a.startswith("--workspace="):
            found = a.split("=", 1)[1]
    return found


def _positional(argv: list[str], start: int) -> int | None:
    """Index of the first token from ``start`` that is not an option or an option's value."""
    i = start
    while i < len(argv):
        a = argv[i]
        if a in _VALUED:
            i += 2
        elif a.startswith("-") and a != "-":
            i += 1
        else:
            return i
    return None


def command_at(argv: list[str]) -> int | None:
    """Index in ``argv`` of the command whose options the workspace fills: the subcommand, or for
    ``report`` the command it reports on (after the report's file name); None where there is none."""
    from . import COMMANDS

    i = _positional(argv, 0)
    if i is None or argv[i] not in COMMANDS:
        return None
    if argv[i] == "report":
        out = _positional(argv, i + 1)
        inner = None if out is None else _positional(argv, out + 1)
        return inner if inner is not None and argv[inner] in COMMANDS and argv[inner] != "report" else None
    return i


def _without_workspace(argv: list[str]) -> list[str]:
    return [a for i, a in enumerate(argv) if not (a == "--workspace" or a.startswith("--workspace=")
                                                  or (i > 0 and argv[i - 1] == "--workspace"))]


def _with_workspace(parser, argv: list[str], ws, folder: str) -> tuple[list[str], dict[str, str]]:
    """``argv`` with the workspace's defaults added after the command (for ``report``, after the command it
    reports on) and its own rows as overlay files in ``folder`` at the front; and the options added (option
    -> the request field they came from)."""
    from ..data.workspace import defaults_of, own_tables_csv

    own = [f"--own-{table}={p}" for table, paths in own_tables_csv(ws, folder).items() for p in paths]
    at = command_at(argv)
    if at is None:
        return own + argv, {}
    module = sys.modules.get(f"{__package__}.{argv[at]}")
    names = getattr(module, "OPTION_NAMES", {})
    added = with_defaults(argv[at + 1:], subparser(parser, argv[at]), names, dict(defaults_of(ws)))
    return own + argv[: at + 1] + added + argv[at + 1:], {t.split("=", 1)[0]: argv[at] for t in added}


def _capture(execute: Callable[[list[str]], int], argv: list[str]) -> tuple[int, str]:
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        rc = execute(argv)
    return rc, out.getvalue()


def _result(execute, parser, args, argv: list[str]) -> tuple[int, Any]:
    """Run ``argv`` (its output shown as usual) and return its exit code and JSON document (None when the
    command has no JSON form)."""
    has_json = "--json" in subparser(parser, args.command)._option_string_actions
    writes = any(getattr(args, dest, None) for dest in _WRITES)
    if "--json" in argv:
        rc, text = _capture(execute, argv)
        sys.stdout.write(text)
    else:
        rc = execute(argv)
        text = _capture(execute, argv + ["--json"])[1] if has_json and rc == 0 and not writes else ""
    try:
        return rc, json.loads(text) if text.strip() else None
    except json.JSONDecodeError:  # a command that printed something else (a batch's file to stdout)
        return rc, None


def run_in_workspace(parser: argparse.ArgumentParser, path: str, argv: list[str],
                     execute: Callable[[list[str]], int]) -> int:
    """Run the command of ``argv`` with the defaults of the workspace ``path`` and record it there."""
    from ..data.catalog import check_write_target
    from ..data.workspace import open_workspace, record_run, save_workspace

    check_write_target(path, param="workspace")
    ws = open_workspace(path, missing_ok=True)  # a damaged or newer file is refused here, before the work
    argv = _without_workspace(argv)
    with tempfile.TemporaryDirectory(prefix="solvsel-workspace-") as folder:
        full, added = _with_workspace(parser, argv, ws, folder)
        try:
            args = parser.parse_known_args(full)[0]
            if args.command is None:  # the UI: it opens workspaces itself
                return execute(full)
            rc, result = _result(execute, parser, args, full)
        except SolvselError as exc:
            raise _in_workspace(exc, folder, path, added) from None
        shown = [a for a in full if not a.startswith("--own-") or folder not in a]
        options = vars(parser.parse_known_args(shown)[0])
    if rc == 0:
        options = {k: v for k, v in options.items() if k not in ("func", "workspace")}
        save_workspace(record_run(ws, args.command, shown, to_jsonable(options), result), path)
    return rc


def _in_workspace(exc, folder: str, path: str, added: dict[str, str]):
    """An error caused by the workspace named as such: its own rows by the workspace (not by the file they
    were passed in), a default it supplied with a word saying where the value came from."""
    if exc.path and exc.path.startswith(folder):
        table = "solutes" if "solutes" in exc.path else "solvents"
        exc.path, exc.param, exc.value = f"{path} (its own {table} rows)", "workspace", path
    elif exc.param:
        command = next(iter(added.values()), None)
        names = getattr(sys.modules.get(f"{__package__}.{command}"), "OPTION_NAMES", {})
        if (names.get(exc.param) or option_name(exc.param)) in added:
            exc.message += f" (the value is a default of the workspace {path})"
    return exc
