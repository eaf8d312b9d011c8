"""The ``solvsel`` command: a thin layer over the library.

Each subcommand lives in its own module ``solvsel.cli.<name>`` with two
functions: ``register(subparsers)`` adds its parser (and must import nothing
heavy), ``run(args) -> int`` does the work through the library.  Errors a user
can cause (:class:`solvsel.errors.SolvselError`, and a command line argparse
cannot read) are printed as one paragraph with exit code 2, or with ``--json``
as one JSON document on stdout, ``{"error": {"kind", "param", "value",
"expected", "file", "row", "column", "message"}}`` (the fields that apply,
``param`` named by its option); anything else is a bug (exit code 1,
traceback kept).  Notes about the input (a file read as Windows-1252) are
printed on stderr.  With no subcommand the terminal UI opens.
"""

from __future__ import annotations

import argparse
import importlib
import re
import sys
import warnings
from typing import Sequence

from .._version import __version__
from ..errors import FileError, InputError, SolvselError, SolvselNote
from ._common import emit_json, option_name

#: Subcommands in the order ``solvsel --help`` lists them.
COMMANDS = (
    "demo",
    "solvents",
    "rank",
    "blend",
    "miscible",
    "estimate",
    "fit",
    "hlb",
    "emulsion",
    "dose",
    "clear",
    "dissolves",
    "extract",
    "table",
    "report",
)


class UsageError(InputError):
    """A command line that cannot be read: an unknown option, a missing or malformed argument."""

    title = "Bad command line"
    error_kind = "usage"


class _Parser(argparse.ArgumentParser):
    """argparse with its errors raised as :class:`UsageError` (one paragraph, or JSON), not printed."""

    def error(self, message: str):
        raise usage_error(self.prog, message)


_ARGUMENT = re.compile(r"^argument (?P<names>[^:]+): (?P<rest>.*)$", re.S)
_REQUIRED = re.compile(r"^the following arguments are required: (?P<names>.*)$", re.S)
_CHOICES = re.compile(r"\(choose from (?P<choices>.*)\)$", re.S)
_QUOTED = re.compile(r": '(?P<value>.*?)'")


def usage_error(prog: str, message: str) -> UsageError:
    """An argparse message as a :class:`UsageError` with the option as ``param`` (and ``value``,
    ``expected`` where the message says them).

    >>> e = usage_error("solvsel rank", "argument --use: invalid choice: 'x' (choose from 'carrier', 'bench')")
    >>> e.param, e.value, e.expected
    ('--use', 'x', 'one of carrier, bench')
    """
    param = value = expected = None
    m, req = _ARGUMENT.match(message), _REQUIRED.match(message)
    if m:
        param, message = m.group("names").split("/")[-1], m.group("rest")
    elif req:
        names = req.group("names")
        param, message = names.split(",")[0].strip(), f"required, but not given (the command needs {names})"
    quoted, choices = _QUOTED.search(message), _CHOICES.search(message)
    if quoted:
        value = quoted.group("value")
    if choices:
        expected = "one of " + ", ".join(c.strip().strip("'") for c in choices.group("choices").split(","))
    return UsageError(f"{message} (see: {prog} --help)", param=param, value=value, expected=expected)


#: Options of ``solvsel`` itself (before the command) that take a value.
_VALUE_OPTIONS = ("--own-solvents", "--own-solutes", "--workspace")


def command_of(argv: Sequence[str]) -> str | None:
    """The command ``argv`` runs: its first word that is not an option or an option's value, if that
    word is a command (None otherwise: no command, or one argparse must refuse).

    >>> command_of(["--own-solvents", "blend", "rank", "--hsp", "17,3,8"]), command_of(["--version"])
    ('rank', None)
    """
    takes_value = False
    for word in argv:
        if takes_value:
            takes_value = False
        elif word.startswith("--") and len(word) > 2 and "=" not in word:
            takes_value = any(option.startswith(word) for option in _VALUE_OPTIONS)
        elif not word.startswith("-"):
            return word if word in COMMANDS else None
    return None


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    """The parser of ``solvsel`` with every command, or with ``command`` alone (its module is the only
    one imported: a command starts faster without loading the others')."""
    parser = _Parser(
        prog="solvsel",
        description=(
            "Pick carrier solvents, solvent blends and emulsifier systems for flavours, "
            "extracts and beverage emulsions. With no command, opens the terminal UI. "
            "Every result is an estimate for planning bench work, not a safety, "
            "regulatory or stability sign-off."
        ),
    )
    parser.add_argument("--version", action="version", version=f"solvsel {__version__}")
    parser.add_argument(
        "--own-solvents", metavar="CSV", action="append", default=[],
        help="your own solvents table (same columns as tables/solvents.csv; - for stdin); its rows add to "
        "or override the bundled ones and are marked as yours",
    )
    parser.add_argument(
        "--own-solutes", metavar="CSV", action="append", default=[],
        help="your own solutes table (same columns as tables/solutes.csv; - for stdin)",
    )
    parser.add_argument("--workspace", metavar="FILE", help=WORKSPACE_HELP)
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS if command is None else (command,):
        module = importlib.import_module(f"{__name__}.{name}")
        sp = module.register(sub)
        sp.add_argument("--workspace", metavar="FILE", default=argparse.SUPPRESS, help=WORKSPACE_HELP)
        sp.set_defaults(func=module.run)
    return parser


WORKSPACE_HELP = ("a workspace file (created if missing): its target, constraints and own rows fill the options "
                  "not given, and the command and its answer are recorded in it with the time")


def execute(argv: list[str] | None = None) -> int:
    """Parse ``argv`` and run its command; a user's error is raised (a :class:`SolvselError`)
    with the command it came from in ``cli_command``, so its options can be named."""
    parser = build_parser(command_of(argv))
    args, extra = parser.parse_known_args(argv)
    if extra:
        prog = f"solvsel {args.command}" if args.command else "solvsel"
        raise UsageError(f"unknown argument{'s' if len(extra) > 1 else ''} {' '.join(extra)} (see: {prog} --help)",
                         value=" ".join(extra))
    if args.command is None:
        from ._common import open_ui

        return open_ui(args)
    try:
        return int(args.func(args) or 0)
    except SolvselError as exc:
        if getattr(exc, "cli_command", None) is None:
            exc.cli_command = args.command
        raise


def main(argv: list[str] | None = None) -> int:
    """Run the command line ``argv`` (default ``sys.argv[1:]``); returns the exit code."""
    argv = sys.argv[1:] if argv is None else list(argv)
    as_json = "--json" in argv
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SolvselNote)
        try:
            return _run(argv)
        except SolvselError as exc:
            return _fail(exc, as_json)
        except BrokenPipeError:  # e.g. piped into head
            return 0
        except OSError as exc:  # a file the command wrote or read failed on the way (a full disk)
            return _fail(FileError(f"cannot be read or written: {exc.strerror or exc}",
                                   path=exc.filename, value=exc.filename), as_json)
        finally:
            _show_notes(caught)


def console() -> None:
    """The installed ``solvsel`` command (and ``python -m solvsel``): run :func:`main` on the process's
    arguments, then end the process with its exit code.

    Before leaving, the objects the command made are moved out of the garbage collector's sight
    (:func:`gc.freeze`): the interpreter would otherwise walk them all once more on its way out, about
    50 ms after the answer is printed (a quarter of a ranking's whole run).  Only here, where the process
    ends next; :func:`main` called from a program leaves its collector alone."""
    import gc

    code = main()
    gc.freeze()
    sys.exit(code)


def _run(argv: list[str]) -> int:
    """Run ``argv``; with ``--workspace FILE`` (before or after the command) in the workspace."""
    from ._workspace import run_in_workspace, workspace_of

    path = workspace_of(argv)
    if path is None:
        return execute(argv)
    try:
        return run_in_workspace(build_parser(), path, argv, execute)
    except SolvselError as exc:
        if getattr(exc, "cli_command", None) is None:
            exc.cli_command = next((a for a in argv if a in COMMANDS), None)
        raise


def _fail(exc: SolvselError, as_json: bool) -> int:
    """Say what was wrong, naming the input by its option: one paragraph on stderr, or the JSON error."""
    module = sys.modules.get(f"{__name__}.{getattr(exc, 'cli_command', None)}")
    overrides = getattr(module, "OPTION_NAMES", {})

    def names(param: str) -> str:
        return overrides.get(param) or option_name(param)

    if as_json:
        emit_json({"error": exc.as_json(names)})
    else:
        print(f"solvsel: {exc.title}: {exc.describe(names)}", file=sys.stderr)
    return 2


def _show_notes(caught) -> None:
    """Each note once (a command run twice, as a report or a workspace's record does, notes its input twice)."""
    shown = set()
    for w in caught:
        if issubclass(w.category, SolvselNote):
            if str(w.message) not in shown:
                print(f"solvsel: note: {w.message}", file=sys.stderr)
            shown.add(str(w.message))
        else:
            warnings.showwarning(w.message, w.category, w.filename, w.lineno)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
