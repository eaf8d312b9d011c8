"""The ``batch`` job: many targets screened by ``rank`` or ``blend``, the best answers of each in one table.

A file of targets (CSV, or Parquet with the ``parquet`` extra) holds one target a row, in one of
three columns: ``solute`` (a solute of the tables; ``name`` is read the same), ``dD``, ``dP``,
``dH`` and optionally ``R0`` (typed HSP [MPa^0.5]), or ``smiles`` (a structure); an optional
``id`` column names the row.  Every target gets the same request (the fields of
:class:`~solvsel.jobs.rank.RankRequest` or :class:`~solvsel.jobs.blend.BlendRequest` other than
the target) and keeps its ``top`` best answers; a blend search checks one phase for those only
(``shown_only``).  Each answer is one row of the result: the target's row number in the file,
its id and HSP, the answer's rank, then the columns of the job's ``to_frame()``.

The targets go in chunks to local processes (:mod:`concurrent.futures`, one per core by
default) or to a Dask cluster (``scheduler``, the ``cluster`` extra): the same chunks, the same
answers, in the order of the file.  A row that is not a target (no target, two targets, an
unknown solute, a bad number or SMILES) is reported with its row number (the header is row 1,
as a spreadsheet shows it) and skipped, or stops the run (``on_error``).  :func:`screen` gives
the answers as a DataFrame; :func:`screen_to_file` streams them to a CSV or Parquet file: to a
temporary file in the same folder, renamed to the file asked for at the end, so a file of that
name is never half written; a run stopped by a bad row keeps the answers of the rows before it
in ``<name>.partial.csv``.

Two targets typed as HSP, the second those of ethanol (Hansen 2007, Appendix A: 15.8, 8.8,
19.4), which ranks ethanol itself first:

>>> import pandas as pd, tempfile, os
>>> path = os.path.join(tempfile.mkdtemp(), "targets.csv")
>>> pd.DataFrame({"id": ["a", "b"], "dD": [17.0, 15.8], "dP": [3.0, 8.8], "dH": [8.0, 19.4]}).to_csv(path, index=False)
>>> df = screen(command="rank", targets=path, top=2, workers=1)
>>> len(df), df[df["id"] == "b"][["row", "rank", "name"]].values.tolist()[0]
(4, [3, 1, 'ethanol'])
"""

from __future__ import annotations

import csv
import json
import math
import os
import time
from collections import deque
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Iterator, Mapping

from ..data.catalog import Catalog, load_catalog
from ..errors import InputError, MissingExtraError, SolvselError
from ._base import build_request, catalog_or_default, check_choice, check_int

__all__ = ["BatchRequest", "BatchSummary", "COMMANDS", "screen", "screen_to_file", "read_targets"]

#: The jobs a batch runs.
COMMANDS = ("rank", "blend")
#: The request fields that name a target: given by the file, one a row.
TARGET_FIELDS = ("solute", "hsp", "smiles", "target", "like")
#: The columns before the job's own: where the answer comes from.
LEAD_COLUMNS = ("row", "id", "target", "target_dD", "target_dP", "target_dH", "target_r0", "rank")
_HSP_COLUMNS = ("dd", "dp", "dh")


@dataclass(frozen=True)
class BatchRequest:
    """What to screen, how, and where the answers go.

    Attributes
    ----------
    command : {"rank", "blend"}
        the job run for every target
    targets : str
        the file of targets (CSV, or Parquet: ``.parquet``, ``.pq``)
    fields : mapping
        the request fields every target shares (those of the job's request but the target and
        ``top``), e.g. ``{"max_components": 3, "food": True}``
    top : int
        answers kept per target (default 5)
    on_error : {"skip", "stop"}
        a bad row is reported and skipped (default), or stops the run
    workers : int, optional
        local processes (default: one per core; 1 runs in this process)
    scheduler : str, optional
        address of a Dask scheduler (``tcp://host:8786``) to run the chunks on instead
    chunk : int
        targets a chunk (default 25)
    out : str, optional
        the file :func:`screen_to_file` writes (CSV, or Parquet: ``.parquet``, ``.pq``)
    """

    command: str = "blend"
    targets: str | None = None
    fields: Any = ()
    top: int = 5
    on_error: str = "skip"
    workers: int | None = None
    scheduler: str | None = None
    chunk: int = 25
    out: str | None = None

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        set_(self, "command", check_choice(self.command, "command", COMMANDS))
        if not self.targets or not isinstance(self.targets, (str, os.PathLike)):
            raise InputError("give the file of targets", param="targets", value=self.targets,
                             expected="a CSV or Parquet file, one target a row")
        set_(self, "targets", str(self.targets))
        fields = dict(self.fields.items() if isinstance(self.fields, Mapping) else self.fields or ())
        for name in fields:
            if name in TARGET_FIELDS or name == "top":
                raise InputError(f"'{name}' comes from the file of targets or from top, not from the shared fields",
                                 param=name, value=fields[name], expected="the job's other fields")
        set_(self, "fields", tuple(sorted(fields.items())))
        set_(self, "top", check_int(self.top, "top", 1))
        set_(self, "on_error", check_choice(self.on_error, "on_error", ("skip", "stop")))
        set_(self, "workers", check_int(self.workers, "workers", 1, allow_none=True))
        set_(self, "chunk", check_int(self.chunk, "chunk", 1))
        self.job_request({"hsp": (17.0, 5.0, 8.0)})  # the shared fields, checked once with a stand-in target

    def job_request(self, target: Mapping[str, Any]):
        """The job's request for one target (``{"solute": ...}``, ``{"hsp": ...}`` or ``{"smiles": ...}``)."""
        from .blend import BlendRequest
        from .rank import RankRequest

        fields = dict(self.fields, **target, top=self.top)
        if self.command == "blend":
            return BlendRequest(**fields, shown_only=True)
        return RankRequest(**fields)


@dataclass(frozen=True)
class BatchSummary:
    """How a batch went: rows read, targets answered, answers written, rows refused (row number and why)."""

    command: str
    targets: str
    out: str | None
    rows: int
    screened: int
    no_answer: int
    answers: int
    bad_rows: tuple[tuple[int, str], ...]
    stopped: bool
    partial: str | None
    seconds: float
    workers: int
    scheduler: str | None

    def to_dict(self) -> dict:
        return {"command": self.command, "targets": self.targets, "out": self.out, "rows": self.rows,
                "screened": self.screened, "no_answer": self.no_answer, "answers": self.answers,
                "bad_rows": [{"row": r, "error": e} for r, e in self.bad_rows], "stopped": self.stopped,
                "partial": self.partial, "seconds": self.seconds, "workers": self.workers,
                "scheduler": self.scheduler}


# ----------------------------------------------------------------------------- the file of targets


@dataclass(frozen=True)
class TargetRow:
    """One row of the file: its number (header = 1), its id, the target fields, or why it is not one."""

    row: int
    id: str
    target: dict
    error: str | None = None


def _parquet_rows(path: Path) -> Iterator[tuple[int, dict]]:
    try:
        import pyarrow.parquet as pq
    except ImportError:
        raise MissingExtraError("parquet", "reading a Parquet file", "pyarrow") from None
    for n, rec in enumerate(pq.read_table(path).to_pylist(), start=2):
        yield n, {str(k): ("" if v is None else str(v)) for k, v in rec.items()}


def _csv_rows(path: Path) -> Iterator[tuple[int, dict]]:
    try:
        fh = open(path, newline="", encoding="utf-8-sig")
    except OSError as exc:
        raise InputError(f"cannot read the file of targets: {exc.strerror}", param="targets", value=str(path),
                         path=str(path)) from None
    with fh:
        lines = (ln for ln in fh if not ln.lstrip().startswith("#"))
        reader = csv.reader(lines)
        header = next(reader, None)
        if header is None:
            raise InputError("the file of targets is empty", param="targets", value=str(path), path=str(path))
        n = 1
        for cells in reader:
            n += 1
            if any(c.strip() for c in cells):
                yield n, dict(zip(header, cells))


def _target_of_row(n: int, cells: dict) -> TargetRow:
    """The target a row names (exactly one of solute, HSP, SMILES), or the row's error."""
    low = {k.strip().lower(): (v or "").strip() for k, v in cells.items() if k is not None}
    solute = low.get("solute") or low.get("name") or ""
    smiles = low.get("smiles", "")
    hsp_cells = [low.get(c, "") for c in _HSP_COLUMNS]
    kinds = [k for k, given in (("solute", solute), ("hsp", any(hsp_cells)), ("smiles", smiles)) if given]
    label = low.get("id", "")
    if len(kinds) != 1:
        why = "no target" if not kinds else f"{' and '.join(kinds)} both given"
        return TargetRow(n, label, {}, f"{why}: give one of solute, dD/dP/dH[/R0] or smiles")
    if kinds == ["solute"]:
        return TargetRow(n, label or solute, {"solute": solute})
    if kinds == ["smiles"]:
        return TargetRow(n, label or smiles, {"smiles": smiles})
    texts = hsp_cells + ([low["r0"]] if low.get("r0") else [])
    try:
        values = tuple(float(t) for t in texts)
    except ValueError:
        return TargetRow(n, label, {}, f"dD, dP, dH and R0 must be numbers of MPa^0.5, got {', '.join(texts)}")
    if not all(math.isfinite(v) for v in values):
        return TargetRow(n, label, {}, f"dD, dP, dH and R0 must be finite numbers, got {', '.join(texts)}")
    return TargetRow(n, label or ",".join(texts), {"hsp": values})


def read_targets(path: str | Path) -> list[TargetRow]:
    """Every row of a file of targets (CSV, or Parquet with the ``parquet`` extra), in order."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"the file of targets '{path}' does not exist", param="targets", value=str(path),
                         path=str(path))
    rows = _parquet_rows(path) if path.suffix.lower() in (".parquet", ".pq") else _csv_rows(path)
    return [_target_of_row(n, cells) for n, cells in rows]


# ----------------------------------------------------------------------------- one chunk (in any process)

#: Per process: the catalog of a catalog spec and the pools built from it, by their filters.
_STATE: dict = {}


def _catalog_spec(cat: Catalog | None) -> tuple | None:
    """What a worker needs to load the same tables: the folder and the user's own files (None: bundled)."""
    if cat is None:
        return None
    return str(cat.tables_dir), tuple(sorted((k, tuple(str(p) for p in v)) for k, v in cat.own.items()))


def _state(spec) -> tuple[Catalog, dict]:
    if spec not in _STATE:
        cat = load_catalog() if spec is None else load_catalog(own={k: list(v) for k, v in spec[1]},
                                                                 tables_dir=spec[0])
        _STATE[spec] = (cat, {})
    return _STATE[spec]


def _cell(v):
    """A value as a table cell: lists as "a; b", mappings as JSON text, numpy numbers as Python ones."""
    if isinstance(v, (list, tuple)):
        return "; ".join(str(x) for x in v)
    if isinstance(v, dict):
        return json.dumps(v, default=str)
    return v.item() if hasattr(v, "item") else v


def _answer_rows(tr: TargetRow, res) -> list[dict]:
    """The answers of one target as table rows (the lead columns, then the job's own)."""
    t = res.target if isinstance(res.target, dict) else res.target.to_dict()
    lead = {"row": tr.row, "id": tr.id, "target": t.get("name"), "target_dD": t.get("dD"),
            "target_dP": t.get("dP"), "target_dH": t.get("dH"), "target_r0": t.get("r0")}
    frame = res.to_frame()
    return [{**lead, "rank": i, **{k: _cell(v) for k, v in rec.items()}}
            for i, rec in enumerate(frame.to_dict("records"), start=1)]


def _error_text(exc: SolvselError) -> str:
    """A row's error in words for any front end: the column it came from, then what is wrong."""
    return exc.describe(lambda param: "dD/dP/dH/R0" if param == "hsp" else param)


def run_chunk(spec: dict, rows: list[TargetRow]) -> tuple[list[dict], list[tuple[int, str]], int, bool]:
    """Screen one chunk of target rows (in whichever process or Dask worker it lands).

    ``spec``: the batch request and the catalog spec.  Returns the answer rows, the bad rows
    (row number, why), the number of targets without an answer, and whether a bad row stopped it.
    """
    from .blend import blend
    from .pool import build_pool
    from .rank import rank

    req: BatchRequest = spec["request"]
    cat, pools = _state(spec["catalog"])
    job = blend if req.command == "blend" else rank
    out, bad, empty = [], [], 0
    for tr in rows:
        try:
            if tr.error is not None:
                raise InputError(tr.error, param="targets")
            jr = req.job_request(tr.target)
            if jr.filters not in pools:
                pools[jr.filters] = build_pool(cat, jr.filters)
            res = job(jr, catalog=cat, pool=pools[jr.filters])
        except SolvselError as exc:
            bad.append((tr.row, tr.error or _error_text(exc)))
            if req.on_error == "stop":
                return out, bad, empty, True
            continue
        answers = _answer_rows(tr, res)
        empty += not answers
        out += answers
    return out, bad, empty, False


# ----------------------------------------------------------------------------- the chunks, in order


def _in_order(submit, chunks: list, depth: int) -> Iterator:
    """The results of ``submit(chunk)`` futures in the order of the chunks, ``depth`` of them at work."""
    pending = deque()
    it = iter(chunks)
    try:
        for c in it:
            pending.append(submit(c))
            if len(pending) >= depth:
                break
        while pending:
            res = pending.popleft().result()
            nxt = next(it, None)
            if nxt is not None:
                pending.append(submit(nxt))
            yield res
    finally:
        for f in pending:
            f.cancel()


def _results(req: BatchRequest, spec: dict, chunks: list) -> Iterator:
    """Each chunk's result, in order: here, on local processes, or on a Dask cluster."""
    if req.scheduler:
        try:
            from dask.distributed import Client
        except ImportError:
            raise MissingExtraError("cluster", "screening on a Dask cluster", "dask[distributed]") from None
        with Client(req.scheduler) as client:
            depth = 2 * max(1, len(client.scheduler_info().get("workers", {})))
            yield from _in_order(lambda c: client.submit(run_chunk, spec, c, pure=False), chunks, depth)
        return
    workers = req.workers or os.cpu_count() or 1
    if workers == 1 or len(chunks) == 1:
        for c in chunks:
            yield run_chunk(spec, c)
        return
    from concurrent.futures import ProcessPoolExecutor

    with ProcessPoolExecutor(max_workers=workers) as ex:
        yield from _in_order(lambda c: ex.submit(run_chunk, spec, c), chunks, 2 * workers)


def _run(req: BatchRequest, catalog: Catalog | None, progress) -> Iterator[tuple[list[dict], list, int, bool]]:
    """Read the targets and run them chunk by chunk; yields each chunk's result in order."""
    from .pool import build_pool

    rows = read_targets(req.targets)
    cat = catalog_or_default(catalog)
    spec = {"request": req, "catalog": _catalog_spec(cat)}
    # this process uses the caller's tables as they are, and the pool is built (and checked) once here
    _, pools = _STATE.setdefault(spec["catalog"], (cat, {}))
    filters = req.job_request({"hsp": (17.0, 5.0, 8.0)}).filters
    if filters not in pools:
        pools[filters] = build_pool(cat, filters)
    chunks = [rows[i:i + req.chunk] for i in range(0, len(rows), req.chunk)]
    done = 0
    for chunk, res in zip(chunks, _results(req, spec, chunks)):
        done += len(chunk)
        if progress is not None:
            progress(done, len(rows))
        yield res
        if res[3]:
            return


def _stopped_error(req: BatchRequest, bad: tuple[int, str], partial: str | None) -> InputError:
    kept = f"; the answers of the rows before it are kept in {partial}" if partial else ""
    return InputError(f"{bad[1]}{kept}", param="targets", value=req.targets,
                      path=req.targets, row=bad[0], expected="one target a row: solute, dD/dP/dH[/R0] or smiles")


def screen(request: BatchRequest | None = None, *, catalog: Catalog | None = None,
           progress: Callable[[int, int], None] | None = None, **fields: Any):
    """The best answers of every target of a file, as a pandas DataFrame (one row an answer).

    ``progress(done, total)`` is told the targets done after each chunk.  Bad rows skipped are
    listed in ``df.attrs["bad_rows"]`` as ``(row, why)``; with ``on_error="stop"`` the first one
    raises :class:`~solvsel.errors.InputError` naming its row.
    """
    import pandas as pd

    req = build_request(BatchRequest, request, fields)
    rows, bad = [], []
    for out, b, _, stopped in _run(req, catalog, progress):
        rows += out
        bad += b
        if stopped:
            raise _stopped_error(req, bad[-1], None)
    columns = list(dict.fromkeys([*LEAD_COLUMNS, *(k for r in rows[:1] for k in r)]))
    df = pd.DataFrame(rows, columns=columns)
    df.attrs["bad_rows"] = bad
    return df


def _temporary(out: Path) -> Path:
    return out.with_name(f".{out.name}.{os.getpid()}.part")


def screen_to_file(request: BatchRequest | None = None, *, catalog: Catalog | None = None,
                   progress: Callable[[int, int], None] | None = None, **fields: Any) -> BatchSummary:
    """Stream the best answers of every target of a file to ``out`` (CSV, or Parquet with the
    ``parquet`` extra); returns the summary.

    The answers go to a temporary file in the folder of ``out`` as each chunk comes back, and
    that file is renamed to ``out`` at the end (a Parquet file is written from it then).  A bad row
    with ``on_error="stop"`` (or an interruption) renames what was written, the answers of the rows
    before it, to ``<out stem>.partial.csv`` and raises an error naming the row.
    """
    req = build_request(BatchRequest, request, fields)
    if not req.out:
        raise InputError("give the file the answers go to", param="out", expected="a .csv or .parquet file")
    out = Path(req.out)
    if not out.parent.is_dir():
        raise InputError(f"the folder '{out.parent}' does not exist", param="out", value=req.out)
    parquet = out.suffix.lower() in (".parquet", ".pq")
    if parquet:
        _parquet_module()
    t0, tmp = time.perf_counter(), _temporary(out)
    counts = {"screened": 0, "no_answer": 0, "answers": 0}
    bad: list = []
    stopped = False
    try:
        stopped = _write_csv(tmp, _run(req, catalog, progress), counts, bad)
    except BaseException:
        _keep_partial(tmp, out)
        raise
    if stopped:
        partial = _keep_partial(tmp, out)
        raise _stopped_error(req, bad[-1], partial)
    if parquet:
        _csv_to_parquet(tmp, out)
    else:
        tmp.replace(out)
    n_rows = counts["screened"] + len(bad)
    return BatchSummary(req.command, req.targets, str(out), n_rows, counts["screened"], counts["no_answer"],
                        counts["answers"], tuple(bad), False, None, round(time.perf_counter() - t0, 3),
                        1 if req.scheduler else (req.workers or os.cpu_count() or 1), req.scheduler)


def _write_csv(tmp: Path, results, counts: dict, bad: list) -> bool:
    """Write each chunk's answers to ``tmp`` as they come; True when a bad row stopped the run."""
    with open(tmp, "w", newline="", encoding="utf-8") as fh:
        writer = None
        for out, b, empty, stopped in results:
            bad += b
            counts["screened"] += len({r["row"] for r in out}) + empty
            counts["no_answer"] += empty
            counts["answers"] += len(out)
            if writer is None and (out or stopped):
                columns = list(dict.fromkeys([*LEAD_COLUMNS, *(k for r in out[:1] for k in r)]))
                writer = csv.DictWriter(fh, columns, extrasaction="ignore", lineterminator="\n")
                writer.writeheader()
            if out:
                writer.writerows(out)
            fh.flush()
            if stopped:
                return True
        if writer is None:
            csv.writer(fh, lineterminator="\n").writerow(LEAD_COLUMNS)
    return False


def _keep_partial(tmp: Path, out: Path) -> str | None:
    """Rename what a stopped run wrote to ``<stem>.partial.csv`` beside ``out`` (never to ``out``)."""
    if not tmp.exists():
        return None
    partial = out.with_name(f"{out.stem}.partial.csv")
    tmp.replace(partial)
    return str(partial)


def _parquet_module():
    try:
        import pyarrow.parquet as pq
    except ImportError:
        raise MissingExtraError("parquet", "writing a Parquet file", "pyarrow") from None
    return pq


def _csv_to_parquet(tmp: Path, out: Path) -> None:
    """The finished CSV as a Parquet file at ``out`` (written beside it, then renamed; the CSV removed)."""
    import pandas as pd

    df = pd.read_csv(tmp, dtype={"id": str, "target": str})
    tmp_pq = out.with_name(f".{out.name}.{os.getpid()}.parquet.part")
    df.to_parquet(tmp_pq, index=False)
    tmp_pq.replace(out)
    tmp.unlink()
