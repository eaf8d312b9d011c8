"""The ``solvsel`` command: a thin layer over the library.

Each subcommand lives in its own module ``solvsel.cli.<name>`` with two
functions: ``register(subparsers)`` adds its parser (and must import nothing
heavy), ``run(args) -> int`` does the work through the library.  Errors a user
can cause (:class:`solvsel.errors.SolvselError`) are printed as one paragraph
with exit code 2; anything else is a bug (exit code 1, traceback kept).
With no subcommand the terminal UI opens.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from .._version import __version__
from ..errors import SolvselError
from ._common import option_name

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
    "table",
    "report",
)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
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
        help="your own solvents table (same columns as tables/solvents.csv); its rows add to "
        "or override the bundled ones and are marked as yours",
    )
    parser.add_argument(
        "--own-solutes", metavar="CSV", action="append", default=[],
        help="your own solutes table (same columns as tables/solutes.csv)",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        module = importlib.import_module(f"{__name__}.{name}")
        sp = module.register(sub)
        sp.set_defaults(func=module.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        if args.command is None:
            from ._common import open_ui

            return open_ui(args)
        return int(args.func(args) or 0)
    except SolvselError as exc:
        module = getattr(args, "func", None)
        overrides = getattr(sys.modules.get(getattr(module, "__module__", "")), "OPTION_NAMES", {})
        print(f"solvsel: {exc.title}: {exc.describe(lambda p: overrides.get(p) or option_name(p))}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # e.g. piped into head
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
