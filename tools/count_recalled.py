"""Count the table values ``solvsel demo`` reads and how many of them are marked from memory.

Runs the demo in this process with the default catalog replaced by one that notes every value
read (:func:`solvsel.data.provenance.logging_reads`), then prints the counts per table and the
recalled values (``--list``), or the whole summary as JSON (``--json``)::

    .venv/bin/python tools/count_recalled.py --list
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import sys


def demo_reads() -> dict:
    """The summary of :meth:`solvsel.data.provenance.ReadLog.summary` for one run of ``solvsel demo``."""
    from solvsel.cli import main
    from solvsel.data.provenance import logging_reads

    with logging_reads() as log, contextlib.redirect_stdout(io.StringIO()):
        main(["demo"])
    return log.summary()


def run(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--json", action="store_true", help="print the summary as JSON")
    ap.add_argument("--list", action="store_true", help="also list the recalled values")
    args = ap.parse_args(argv)
    got = demo_reads()
    if args.json:
        json.dump(got, sys.stdout, indent=1)
        print()
        return 0
    print(f"values read: {got['read']}, marked from memory: {got['recalled']}")
    for table, (n, rec) in got["tables"].items():
        print(f"  {table:<18} {n:>5} read  {rec:>5} from memory")
    if args.list:
        for cell in got["recalled_cells"]:
            print("  " + " | ".join(cell))
    return 0


if __name__ == "__main__":
    raise SystemExit(run())
