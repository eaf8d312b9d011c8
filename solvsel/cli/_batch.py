"""Batch screening options of ``solvsel rank`` and ``solvsel blend``: many targets from a file.

``--targets FILE`` runs the command for every target of the file (its options shared by all)
and writes the best ``--top`` answers of each (default 5) to ``--out FILE``; the job is
:mod:`solvsel.jobs.batch`.
"""

from __future__ import annotations

from ._common import emit_json, get_catalog

__all__ = ["add_batch_arguments", "run_batch"]

#: The answers kept per target when --top is not given.
DEFAULT_TOP = 5
_TARGET_OPTIONS = ("solute", "hsp", "smiles", "like")


def add_batch_arguments(parser) -> None:
    g = parser.add_argument_group("many targets (batch screening)")
    g.add_argument("--targets", metavar="FILE",
                   help="a CSV file (or Parquet, .parquet, with the 'parquet' extra) of targets, one a row: a column "
                   "solute (names of the tables), dD, dP, dH [and R0], or smiles, and an optional id; each target "
                   f"gets the other options, and its best --top answers (default {DEFAULT_TOP}) go to --out")
    g.add_argument("--out", metavar="FILE",
                   help="with --targets: the answers, one a row (CSV, or Parquet for .parquet); written to a "
                   "temporary file beside it and renamed at the end")
    g.add_argument("--on-error", choices=("skip", "stop"), default="skip",
                   help="a row that is not a target: report it and go on (default), or stop (the answers before it "
                   "are kept in NAME.partial.csv)")
    g.add_argument("--workers", type=int, metavar="N", help="local processes (default: one per core)")
    g.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on a Dask cluster instead: its scheduler's address, e.g. tcp://10.0.0.5:8786 (extra "
                   "'cluster'; solvsel must be installed on the workers)")


def run_batch(args, command: str, fields: dict) -> int:
    """Screen the targets of ``--targets`` with ``command`` and the shared request ``fields``."""
    from ..errors import InputError
    from ..jobs.batch import BatchRequest, screen_to_file
    from ._progress import ProgressBar

    given = [o for o in _TARGET_OPTIONS if getattr(args, o, None)]
    if given:
        raise InputError("the targets come from the file, one a row: give no other target", param=given[0],
                         value=getattr(args, given[0]), expected="no target option with the file of targets")
    if not args.out:
        raise InputError("give the file the answers go to", param="out", expected="a .csv or .parquet file")
    top = fields.pop("top", DEFAULT_TOP)
    req = BatchRequest(command=command, targets=args.targets, fields=fields, top=top, on_error=args.on_error,
                       workers=args.workers, scheduler=args.scheduler, out=args.out)
    summary = screen_to_file(req, catalog=get_catalog(args),
                             progress=None if args.json else ProgressBar(unit="targets"))
    if args.json:
        emit_json(summary.to_dict())
        return 0
    where = f"a Dask cluster at {summary.scheduler}" if summary.scheduler else f"{summary.workers} process(es)"
    print(f"{summary.screened} of {summary.rows} rows screened in {summary.seconds:.1f} s on {where}: "
          f"{summary.answers} answers written to {summary.out}"
          + (f"; {summary.no_answer} target(s) without an answer" if summary.no_answer else "") + ".")
    if summary.bad_rows:
        print(f"{len(summary.bad_rows)} row(s) skipped:")
        for row, why in summary.bad_rows[:20]:
            print(f"  row {row}: {why}")
        if len(summary.bad_rows) > 20:
            print(f"  ... {len(summary.bad_rows) - 20} more (see --json)")
    return 0
