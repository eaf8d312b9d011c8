"""Batch screening (solvsel.jobs.batch, ``rank`` / ``blend --targets``): many targets give the answers
of the single calls, whichever way the chunks run.

The reference of every check is the library job itself (``blend`` or ``rank`` called once per
target with the same request): a batch only splits the work, so it must change no answer.  The
published values behind those jobs are checked in tests/test_blends.py and tests/test_rank.py.
"""

from __future__ import annotations

import csv
import json
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest

from solvsel.cli import main
from solvsel.data.catalog import load_catalog
from solvsel.errors import InputError, SolvselError
from solvsel.jobs.batch import BatchRequest, read_targets, screen, screen_to_file
from solvsel.jobs.blend import blend
from solvsel.jobs.rank import rank

#: A pool of food and bench liquids (small, so 200 targets stay quick); blends of up to three.
ONLY = ("ethanol", "water", "propylene glycol", "glycerol", "triacetin", "ethyl acetate", "acetone",
        "medium-chain triglycerides", "benzyl alcohol", "d-limonene", "ethyl lactate", "isopropyl alcohol")
FIELDS = {"only": ONLY, "max_components": 3}
SOLUTES = ("cannabidiol", "vanillin", "caffeine")


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def _write_targets(path, n: int, seed: int = 7, extra: tuple = ()) -> None:
    """n targets: typed HSP rows spread over food flavours, every 25th a solute of the tables."""
    rng = np.random.default_rng(seed)
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(["id", "solute", "dD", "dP", "dH", "R0"])
        for i in range(n):
            if i % 25 == 3:
                w.writerow([f"t{i}", SOLUTES[(i // 25) % len(SOLUTES)], "", "", "", ""])
            else:
                d = rng.uniform([15.0, 1.0, 3.0], [19.5, 14.0, 24.0]).round(2)
                w.writerow([f"t{i}", "", *d, "" if i % 3 else "7.5"])
        for row in extra:
            w.writerow(row)


def _single(tr, command: str, cat) -> pd.DataFrame:
    """The answers of one target by one call of the library job, as the batch lays them out."""
    if command == "blend":
        res = blend(catalog=cat, top=5, shown_only=True, **FIELDS, **tr.target)
    else:
        res = rank(catalog=cat, top=5, only=ONLY, **tr.target)
    return res.to_frame()


def _same(a: pd.DataFrame, b: pd.DataFrame, keys: tuple[str, ...]) -> None:
    assert len(a) == len(b)
    for k in keys:
        if k in ("ra", "red"):
            x, y = (pd.to_numeric(f[k], errors="coerce").to_numpy(float) for f in (a, b))
            assert np.allclose(x, y, rtol=1e-12, atol=0, equal_nan=True), k
        else:
            assert a[k].tolist() == b[k].tolist(), k


@pytest.mark.slow
def test_a_batch_of_200_equals_a_loop_of_single_calls(tmp_path, cat):
    path = tmp_path / "targets.csv"
    _write_targets(path, 200)
    df = screen(command="blend", targets=str(path), fields=FIELDS, workers=2, chunk=20, catalog=cat)
    assert df.attrs["bad_rows"] == []
    rows = read_targets(path)
    assert len(rows) == 200 and df["row"].min() == 2 and df["row"].max() == 201  # the header is row 1
    for tr in rows:
        got = df[df["row"] == tr.row].reset_index(drop=True)
        ref = _single(tr, "blend", cat)
        assert 0 < len(got) <= 5
        _same(got, ref, ("rank", "liquids", "volume_fractions", "ra", "red", "one_phase", "phase_basis"))
        assert (got["id"] == tr.id).all()


def test_rank_batch_equals_single_calls_and_one_process_equals_two(tmp_path, cat):
    path = tmp_path / "targets.csv"
    _write_targets(path, 40, seed=3)
    one = screen(command="rank", targets=str(path), fields={"only": ONLY}, workers=1, chunk=7, catalog=cat)
    two = screen(command="rank", targets=str(path), fields={"only": ONLY}, workers=2, chunk=7, catalog=cat)
    pd.testing.assert_frame_equal(one, two)
    for tr in read_targets(path):
        _same(one[one["row"] == tr.row].reset_index(drop=True), _single(tr, "rank", cat), ("name", "ra", "red"))


def test_a_local_dask_cluster_gives_the_same_answers(tmp_path, cat):
    distributed = pytest.importorskip("dask.distributed")
    path = tmp_path / "targets.csv"
    _write_targets(path, 30, seed=11)
    here = screen(command="blend", targets=str(path), fields=FIELDS, workers=1, chunk=6, catalog=cat)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cl:
        there = screen(command="blend", targets=str(path), fields=FIELDS, scheduler=cl.scheduler_address, chunk=6,
                       catalog=cat)
    pd.testing.assert_frame_equal(here, there)


def test_bad_rows_are_reported_by_row_number_and_skipped(tmp_path, cat):
    path = tmp_path / "targets.csv"
    bad = (["no-target", "", "", "", "", ""], ["two", "vanillin", "17", "5", "8", ""],
           ["word", "", "17", "five", "8", ""], ["unknown", "no such solute xyz", "", "", "", ""])
    _write_targets(path, 5, extra=bad)
    out = tmp_path / "answers.csv"
    summary = screen_to_file(command="blend", targets=str(path), fields=FIELDS, out=str(out), workers=1, catalog=cat)
    assert [r for r, _ in summary.bad_rows] == [7, 8, 9, 10]
    assert "no target" in summary.bad_rows[0][1] and "both given" in summary.bad_rows[1][1]
    assert "numbers" in summary.bad_rows[2][1] and "no such solute xyz" in summary.bad_rows[3][1]
    assert (summary.rows, summary.screened) == (9, 5)
    written = pd.read_csv(out)
    assert sorted(set(written["row"])) == [2, 3, 4, 5, 6] and len(written) == summary.answers
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []  # no temporary file left


def test_a_bad_row_can_stop_the_run_and_keeps_what_was_written(tmp_path, cat):
    path = tmp_path / "targets.csv"
    _write_targets(path, 4, extra=(["bad", "", "17", "x", "8", ""], ["after", "", "17", "5", "8", ""]))
    out = tmp_path / "answers.csv"
    with pytest.raises(InputError) as err:
        screen_to_file(command="blend", targets=str(path), fields=FIELDS, out=str(out), workers=1, chunk=2,
                       on_error="stop", catalog=cat)
    assert err.value.row == 6 and err.value.param == "targets"
    assert not out.exists()  # never half a file under the name asked for
    partial = pd.read_csv(tmp_path / "answers.partial.csv")
    assert sorted(set(partial["row"])) == [2, 3, 4, 5]
    with pytest.raises(InputError) as err:
        screen(command="rank", targets=str(path), fields={"only": ONLY}, workers=1, on_error="stop", catalog=cat)
    assert err.value.row == 6


def test_the_command_line_writes_the_library_answers(tmp_path, capsys, cat):
    path = tmp_path / "targets.csv"
    _write_targets(path, 12, seed=5)
    out = tmp_path / "answers.csv"
    argv = ["blend", "--targets", str(path), "--out", str(out), "--only", ",".join(ONLY), "--max-components", "3",
            "--workers", "1", "--json"]
    assert main(argv) == 0
    summary = json.loads(capsys.readouterr().out)
    assert summary["answers"] == len(pd.read_csv(out)) and summary["bad_rows"] == []
    ref = screen(command="blend", targets=str(path), fields=FIELDS, workers=1, catalog=cat)
    got = pd.read_csv(out, dtype={"id": str})
    _same(got, ref, ("row", "id", "rank", "liquids", "volume_fractions", "ra", "one_phase"))
    # a target option beside the file is refused, naming the option
    assert main(["rank", "--targets", str(path), "--out", str(out), "--solute", "vanillin"]) == 2
    assert "--solute" in capsys.readouterr().err


def test_parquet_in_and_out(tmp_path, cat):
    pytest.importorskip("pyarrow")
    src = tmp_path / "targets.csv"
    _write_targets(src, 10, seed=9)
    pq_in = tmp_path / "targets.parquet"
    pd.read_csv(src, dtype=str).to_parquet(pq_in, index=False)
    out = tmp_path / "answers.parquet"
    screen_to_file(command="rank", targets=str(pq_in), fields={"only": ONLY}, out=str(out), workers=1, catalog=cat)
    ref = screen(command="rank", targets=str(src), fields={"only": ONLY}, workers=1, catalog=cat)
    got = pd.read_parquet(out)
    _same(got, ref, ("row", "rank", "name", "ra"))


def test_the_request_is_checked_before_any_work(tmp_path):
    path = tmp_path / "targets.csv"
    _write_targets(path, 2)
    with pytest.raises(InputError) as err:
        BatchRequest(command="blend", targets=str(path), fields={"max_components": 9})
    assert err.value.param == "max_components"
    with pytest.raises(InputError) as err:
        BatchRequest(command="rank", targets=str(path), fields={"solute": "vanillin"})
    assert err.value.param == "solute"
    with pytest.raises(InputError) as err:
        replace(BatchRequest(command="rank", targets=str(path)), on_error="ignore")
    assert err.value.param == "on_error"
    with pytest.raises(SolvselError) as err:  # a name of the pool: checked once, not on every row
        screen(command="rank", targets=str(path), fields={"only": ("ethanol", "no such liquid")}, workers=1)
    assert err.value.param == "only"
