"""``solvsel report OUT.md COMMAND ...``: run any command and write its report: Markdown, a self-contained
HTML page, JSON and CSV, and its figures (PNG; with the extra ``figures``).

The files are replaced as a set: they are written into a temporary folder beside OUT.md and
renamed into place only when all are whole; if a rename fails, the files already replaced are
put back, and the temporary folder is removed whatever happens.  ``OUT.md`` given as ``-`` prints the
Markdown on stdout (no other file, no figures then).
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import os
import shlex
import shutil
import sys
import tempfile
from pathlib import Path

#: Request fields given otherwise than as --field.
OPTION_NAMES = {"out": "OUT.md", "cmd": "COMMAND"}


def register(sub):
    p = sub.add_parser(
        "report",
        help="run a command and write a report (Markdown, HTML, .json, .csv and figures)",
        description="Run any solvsel command and write OUT.md (inputs, readable output, figures, sources cited, "
        "cautions), OUT.html (the same as one self-contained page), OUT.json (the command's JSON document), "
        "OUT.csv (its main list) and the figures as OUT-figN-KIND.png (the map, the bench fit, creaming against "
        "droplet size, the blends' trade-off; they need the extra 'figures'); with --force an existing set is "
        "replaced as a whole. OUT.md given as - prints the Markdown on stdout. Example: "
        "solvsel report cbd-carriers.md rank --solute cannabidiol --food",
    )
    p.add_argument("out", metavar="OUT.md", help="report file to write (.json and .csv go beside it); - for stdout")
    p.add_argument("--title", help="report title (default: the command)")
    p.add_argument("--force", action="store_true", help="replace the report files if they exist")
    p.add_argument("cmd", nargs=argparse.REMAINDER, metavar="COMMAND ...", help="the solvsel command to report on")
    return p


def _capture(argv):
    """Run ``argv`` with its output caught; a user's error in it is raised as it is."""
    from . import execute

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        rc = execute(argv)
    return rc, out.getvalue()


def split_args(args) -> tuple[bool, str | None, list[str]]:
    """``--force`` and ``--title`` given after OUT.md (they arrive at the head of the command), and the command."""
    force, title, cmd = args.force, args.title, list(args.cmd)
    while cmd and (cmd[0] == "--force" or cmd[0].startswith("--title")):
        head = cmd.pop(0)
        if head == "--force":
            force = True
        elif head.startswith("--title="):
            title = head.split("=", 1)[1]
        elif cmd:
            title = cmd.pop(0)
    if cmd and cmd[0] == "--":
        cmd = cmd[1:]
    return force, title, [a for a in cmd if a != "--json"]


def run(args) -> int:
    from ..data.catalog import STDIN, check_write_target
    from ..errors import InputError

    force, title, cmd = split_args(args)
    if not cmd or cmd[0] in ("report", "demo"):
        raise InputError("give the command to report on after the report's file name, e.g. "
                         "solvsel report out.md rank --solute cannabidiol --food", param="cmd",
                         value=" ".join(cmd), expected="a solvsel command other than report and demo")
    if args.out != STDIN:
        check_write_target(args.out, param="out")  # before the work: not a folder, a writable folder
    own = [a for path in args.own_solvents for a in ("--own-solvents", path)]
    own += [a for path in args.own_solutes for a in ("--own-solutes", path)]
    rc, text = _capture(own + cmd)
    if rc != 0:
        raise InputError(f"the command '{cmd[0]}' ended with exit code {rc}; no report was written", param="cmd",
                         value=" ".join(cmd), expected="a command that succeeds")
    _, js = _capture(own + cmd + ["--json"])
    data = json.loads(js)
    command = " ".join(shlex.quote(a) for a in own + cmd)
    report = (title or f"solvsel {command}", command, text, data)
    if args.out == STDIN:
        _print_report(args, report)
        return 0
    for p in _write_set(args, Path(args.out), report, force, cmd[0]):
        print(f"wrote {p}")
    return 0


def _print_report(args, report) -> None:
    """The Markdown of the report on stdout."""
    from ..jobs.report import write_report
    from ._common import get_catalog

    folder = tempfile.mkdtemp(prefix="solvsel-report-")
    try:
        written = write_report(Path(folder) / "report.md", *report, catalog=get_catalog(args), figures=False)
        sys.stdout.write(written[0].read_text(encoding="utf-8"))
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def _write_set(args, out: Path, report, force: bool, cmd_name: str) -> list[Path]:
    """Write the report's files beside ``out`` as a set: all replaced, or none."""
    from ..errors import FileError, InputError
    from ..jobs.report import write_report
    from ._common import get_catalog

    folder = out.parent
    try:
        staging = Path(tempfile.mkdtemp(prefix=".solvsel-report-", dir=folder))
    except OSError as exc:
        raise FileError(f"cannot be written in its folder: {exc.strerror or exc}", param="out", value=str(out),
                        path=str(out)) from None
    try:
        written = write_report(staging / out.name, *report, catalog=get_catalog(args), job=cmd_name)
        finals = [folder / p.name for p in written]
        existing = [p for p in finals if p.exists()]
        if existing and not force:
            raise InputError(f"'{existing[0]}' exists already; choose another name, or force the report set's "
                             "replacement", param="out", value=str(out), expected="a name not in use")
        _replace_all(written, finals, staging, out)
        return finals
    except OSError as exc:
        raise FileError(f"cannot be written: {exc.strerror or exc}; the files there were left as they were",
                        param="out", value=str(out), path=str(exc.filename or out)) from None
    finally:
        shutil.rmtree(staging, ignore_errors=True)


def _replace_all(new: list[Path], finals: list[Path], staging: Path, out: Path) -> None:
    """Rename each new file over its final name; on a failure put back what was there before."""
    backups = {}
    for f in finals:
        if f.exists():
            backups[f] = staging / f"previous-{f.name}"
            try:
                os.link(f, backups[f])
            except OSError:  # a file system without hard links
                shutil.copy2(f, backups[f])
    done = []
    try:
        for src, dst in zip(new, finals):
            os.replace(src, dst)
            done.append(dst)
    except OSError:
        for dst in done:
            if dst in backups:
                os.replace(backups[dst], dst)
            else:
                dst.unlink()
        raise
