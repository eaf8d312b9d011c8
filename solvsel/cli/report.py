"""``solvsel report OUT.md COMMAND ...``: run any command and write its Markdown report, with JSON and CSV beside it."""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import shlex


def register(sub):
    p = sub.add_parser(
        "report",
        help="run a command and write a Markdown report (with .json and .csv beside it)",
        description="Run any solvsel command and write OUT.md (readable output, sources cited, cautions), "
        "OUT.json (the command's JSON document) and OUT.csv (its main list). Example: "
        "solvsel report cbd-carriers.md rank --solute cannabidiol --food",
    )
    p.add_argument("out", metavar="OUT.md", help="report file to write (.json and .csv go beside it)")
    p.add_argument("--title", help="report title (default: the command)")
    p.add_argument("--force", action="store_true", help="replace the report files if they exist")
    p.add_argument("cmd", nargs=argparse.REMAINDER, metavar="COMMAND ...", help="the solvsel command to report on")
    return p


def _capture(argv):
    from . import main

    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        rc = main(argv)
    return rc, out.getvalue(), err.getvalue()


def run(args) -> int:
    from ..errors import InputError
    from ..jobs.report import write_report
    from ._common import get_catalog

    cmd = [a for a in args.cmd if a != "--json"]
    if cmd and cmd[0] == "--":
        cmd = cmd[1:]
    if not cmd or cmd[0] in ("report", "demo"):
        raise InputError("report: give the command to report on after OUT.md, e.g. "
                         "solvsel report out.md rank --solute cannabidiol --food")
    rc, text, err = _capture(cmd)
    if rc != 0:
        raise InputError(f"report: the command failed: {err.strip() or 'exit code ' + str(rc)}")
    rc, js, err = _capture(cmd + ["--json"])
    if rc != 0:
        raise InputError(f"report: '{cmd[0]}' has no JSON output ({err.strip()})")
    data = json.loads(js)
    command = " ".join(shlex.quote(a) for a in cmd)
    paths = write_report(args.out, args.title or f"solvsel {command}", command, text, data,
                         catalog=get_catalog(args), force=args.force)
    for p in paths:
        print(f"wrote {p}")
    return 0
