"""Workspaces: every field round-trips, a save killed at any moment leaves the old or the new file whole,
damaged and newer files are refused and left untouched, schema 0 is migrated, and ``--workspace`` on the
command line supplies defaults and records the run."""

from __future__ import annotations

import csv
import errno
import json
import os
import random
import signal
import time
from pathlib import Path

import pytest

from solvsel.cli import main
from solvsel.data import catalog as catalog_module
from solvsel.data.workspace import (
    SCHEMA_VERSION,
    Workspace,
    backup_path,
    open_workspace,
    record_run,
    save_workspace,
    workspace_from_dict,
    workspace_to_dict,
)
from solvsel.errors import FileError, InputError

TABLES = Path(__file__).resolve().parents[1] / "tables"


def own_row(name: str = "my test liquid") -> dict:
    """A liquid of the user's own: ethanol's row of the bundled table under another name, no CAS."""
    with open(TABLES / "solvents.csv", encoding="utf-8", newline="") as fh:
        row = next(r for r in csv.DictReader(fh) if r["name"] == "ethanol")
    return {**row, "name": name, "cas": "", "synonyms": "", "hsp_source": "bench notebook p. 12"}


def full_workspace(tag: str = "A", size: int = 1) -> Workspace:
    """A workspace with every field set (``size`` repeats the history to make the file larger)."""
    return Workspace(
        name=f"citrus cloud, trial {tag} \u2013 caf\u00e9",
        target={"hsp": [17.8, 3.9, 9.9, 8.0]},
        targets=({"name": "cannabidiol", "dD": 17.8, "dP": 3.9, "dH": 9.9, "r0": None, "source": "memory_solute_hsp"},),
        constraints={"food": True, "jurisdiction": "EU", "temp_C": 40.0, "bp_min_C": 60.0, "exclude": ["ethanol"]},
        bench_results=({"name": "extract", "rows": [{"liquid": "triacetin", "result": "good", "note": ""}],
                        "fit": {"dD": 18.4, "dP": 6.8, "dH": 7.0, "r0": 8.4}},),
        blends=({"name": "carrier 1", "components": [{"name": "triacetin", "volume_fraction": 0.6},
                                                     {"name": "benzyl alcohol", "volume_fraction": 0.4}], "ra": 1.2},),
        emulsions=({"name": "cloud", "request": {"oil": [["d-limonene", 70], ["sucrose acetate isobutyrate", 30]],
                                                 "brix": 11, "dilution": 500, "droplet_um": 0.4}},),
        formulas=({"name": "vanilla", "parts": [{"name": "propylene glycol", "percent": 90},
                                                {"name": "vanillin", "percent": 10}]},),
        own_solvents=(own_row(),),
        own_solutes=({"name": "my resin", "dD_MPa05": "18.0", "dP_MPa05": "5.0", "dH_MPa05": "8.0"},),
        history=tuple({"time": "2026-12-05T10:00:00Z", "command": "rank", "argv": ["rank", "--solute", "vanillin"],
                       "request": {"solute": "vanillin", "i": i}, "result": {"results": [{"name": tag, "ra": 1.5}]}}
                      for i in range(size)),
    )


def same(a: Workspace, b: Workspace) -> bool:
    """Equal in every field but the time of saving."""
    return workspace_to_dict(a) | {"saved_at": None} == workspace_to_dict(b) | {"saved_at": None}


# ----------------------------------------------------------------------------- round trip


def test_every_field_round_trips(tmp_path):
    ws = full_workspace()
    path = tmp_path / "work.json"
    save_workspace(ws, path)
    back = open_workspace(path)
    assert same(back, ws)
    assert back.saved_at and back.saved_at.endswith("Z")
    doc = json.loads(path.read_text(encoding="utf-8"))
    assert doc["format"] == "solvsel-workspace" and doc["schema_version"] == SCHEMA_VERSION
    for field in ("targets", "bench_results", "constraints", "blends", "emulsions", "formulas", "own_solvents",
                  "own_solutes", "history", "target", "name"):
        assert doc[field] == workspace_to_dict(ws)[field], field


def test_the_previous_version_is_kept_as_a_backup(tmp_path):
    path = tmp_path / "work.json"
    save_workspace(full_workspace("A"), path)
    first = path.read_bytes()
    save_workspace(full_workspace("B"), path)
    assert backup_path(path).read_bytes() == first
    assert same(open_workspace(path), full_workspace("B"))
    assert same(open_workspace(backup_path(path)), full_workspace("A"))


# ----------------------------------------------------------------------------- saves that fail or are killed


def _child_saves_forever(path: Path, a: Workspace, b: Workspace, ready_fd: int) -> None:
    i = 0
    while True:
        save_workspace(a if i % 2 else b, path)
        if i == 0:
            os.write(ready_fd, b"x")  # one save done: the kill falls among the next ones
        i += 1


def test_a_save_killed_at_random_moments_leaves_a_whole_workspace(tmp_path):
    # a real SIGKILL of a process saving again and again, at 30 random moments (fork: no interpreter start-up)
    a, b = full_workspace("A", size=60), full_workspace("B", size=40)  # files of about 20 kB
    path = tmp_path / "work.json"
    save_workspace(a, path)
    start = time.perf_counter()
    save_workspace(a, path)  # a save over a file: read, backed up, replaced
    one_save = time.perf_counter() - start  # the kills are spread over about three saves, however busy the machine
    rng = random.Random(20)
    seen = set()
    for _ in range(30):
        r, w = os.pipe()
        pid = os.fork()
        if pid == 0:  # pragma: no cover - the child never returns
            try:
                os.close(r)
                _child_saves_forever(path, a, b, w)
            finally:
                os._exit(0)
        os.close(w)
        os.read(r, 1)
        os.close(r)
        time.sleep(rng.uniform(0.0, 3 * one_save))
        os.kill(pid, signal.SIGKILL)
        os.waitpid(pid, 0)
        now = open_workspace(path)
        assert same(now, a) or same(now, b)
        seen.add(now.name)
        if backup_path(path).exists():
            kept = open_workspace(backup_path(path))
            assert same(kept, a) or same(kept, b)
    assert seen == {a.name, b.name}  # the kills fell at different points of the saves
    # a kill may leave the hidden temporary file (.solvsel-*) of the save under way; never a damaged workspace
    assert {p.name for p in tmp_path.iterdir() if not p.name.startswith(".solvsel-")} == {"work.json", "work.json.bak"}


def _fail_at(monkeypatch, step: int, calls: list):
    """Make the ``step``-th call of the system calls a save makes raise (a full disk, an I/O error)."""
    import tempfile

    def wrap(module, name, exc):
        real = getattr(module, name)

        def flaky(*args, **kwargs):
            calls.append(name)
            if len(calls) == step:
                raise exc
            return real(*args, **kwargs)

        monkeypatch.setattr(module, name, flaky)

    wrap(tempfile, "mkstemp", OSError(errno.EACCES, "Permission denied"))
    wrap(catalog_module.os, "fsync", OSError(errno.EIO, "Input/output error"))
    wrap(catalog_module.os, "chmod", OSError(errno.EPERM, "Operation not permitted"))
    wrap(catalog_module.os, "replace", OSError(errno.ENOSPC, "No space left on device"))
    wrap(catalog_module.os, "fdopen", OSError(errno.ENOSPC, "No space left on device"))


def test_a_save_that_fails_at_any_step_leaves_the_old_workspace(tmp_path, monkeypatch):
    path = tmp_path / "work.json"
    save_workspace(full_workspace("A"), path)
    save_workspace(full_workspace("A2"), path)
    before = {p.name: p.read_bytes() for p in tmp_path.iterdir()}
    steps = 0
    while True:
        steps += 1
        calls: list = []
        with monkeypatch.context() as m:
            _fail_at(m, steps, calls)
            try:
                save_workspace(full_workspace("B"), path)
            except FileError as exc:
                assert exc.param == "workspace" and "left as it was" in exc.message
            else:
                break  # every step has been made to fail once: the last run went through
        now = {p.name: p.read_bytes() for p in tmp_path.iterdir()}
        assert now["work.json"] == before["work.json"], f"failure at step {steps} ({calls[-1]})"
        assert set(now) == set(before), f"a temporary file left at step {steps}"
        assert same(open_workspace(backup_path(path)), full_workspace("A")) or \
            same(open_workspace(backup_path(path)), full_workspace("A2"))
    assert steps > 8  # two files written, each: make a temporary file, open, flush, set its mode, rename
    assert same(open_workspace(path), full_workspace("B"))


# ----------------------------------------------------------------------------- refused files


DAMAGED = {
    "not JSON": b"{this is not json",
    "cut short": json.dumps(workspace_to_dict(full_workspace())).encode()[:-40],
    "empty": b"",
    "a list": b"[1, 2, 3]",
    "another format": json.dumps({"format": "something else", "schema_version": 1}).encode(),
    "no version": json.dumps({"format": "solvsel-workspace"}).encode(),
    "a text version": json.dumps({"format": "solvsel-workspace", "schema_version": "1"}).encode(),
    "targets not a list": json.dumps({"format": "solvsel-workspace", "schema_version": 1, "targets": 5}).encode(),
    "a bad target": json.dumps({"format": "solvsel-workspace", "schema_version": 1, "target": {"x": 1}}).encode(),
    "binary": bytes(range(256)) * 4,
}


@pytest.mark.parametrize("kind", list(DAMAGED))
def test_a_damaged_workspace_is_refused_and_left_untouched(tmp_path, kind):
    path = tmp_path / "work.json"
    path.write_bytes(DAMAGED[kind])
    with pytest.raises(FileError) as err:
        open_workspace(path)
    assert err.value.path == str(path) and "workspace" in (err.value.expected or "")
    with pytest.raises(FileError):
        save_workspace(full_workspace(), path)
    assert path.read_bytes() == DAMAGED[kind]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["work.json"]  # no backup, no temporary file


def test_a_workspace_of_a_newer_schema_is_refused_and_left_untouched(tmp_path):
    path = tmp_path / "work.json"
    text = json.dumps({**workspace_to_dict(full_workspace()), "schema_version": SCHEMA_VERSION + 1,
                       "something_new": [1, 2]})
    path.write_text(text, encoding="utf-8")
    with pytest.raises(FileError) as err:
        open_workspace(path)
    assert "newer" in err.value.message and str(SCHEMA_VERSION + 1) in err.value.message
    with pytest.raises(FileError):
        save_workspace(full_workspace(), path)
    assert path.read_text(encoding="utf-8") == text and not backup_path(path).exists()


# ----------------------------------------------------------------------------- migration


VERSION_0 = {
    "format": "solvsel-workspace",
    "schema_version": 0,
    "name": "old trial",
    "target": "cannabidiol",
    "filters": {"food": True, "temp_C": 30.0},
    "own_rows": [{"table": "solvents", "name": "my oil", "dD_MPa05": "16.5"},
                 {"table": "solutes", "name": "my resin", "dD_MPa05": "18.0"}],
    "formulas": [{"name": "vanilla", "parts": [{"name": "vanillin", "percent": 10}]}],
}


def test_a_workspace_of_schema_0_is_migrated(tmp_path):
    path = tmp_path / "old.json"
    path.write_text(json.dumps(VERSION_0), encoding="utf-8")
    ws = open_workspace(path)
    assert ws.target == {"solute": "cannabidiol"}
    assert ws.constraints == {"food": True, "temp_C": 30.0}
    assert ws.own_solvents == ({"name": "my oil", "dD_MPa05": "16.5"},)
    assert ws.own_solutes == ({"name": "my resin", "dD_MPa05": "18.0"},)
    assert ws.formulas == tuple(VERSION_0["formulas"]) and ws.name == "old trial"
    save_workspace(ws, path)  # saved in the current schema; the old file kept as the backup
    assert json.loads(path.read_text(encoding="utf-8"))["schema_version"] == SCHEMA_VERSION
    assert json.loads(backup_path(path).read_text(encoding="utf-8")) == VERSION_0
    assert same(open_workspace(path), ws)


def test_migration_and_refusal_of_documents_in_memory():
    assert workspace_from_dict(VERSION_0).constraints == {"food": True, "temp_C": 30.0}
    with pytest.raises(FileError):
        workspace_from_dict({**VERSION_0, "schema_version": -1})
    for bad in ({"own_rows": ["not a row"]}, {"own_rows": 5}, {"filters": [1, 2]}):
        with pytest.raises(FileError) as err:
            workspace_from_dict({**VERSION_0, **bad})
        assert "damaged" in err.value.message


# ----------------------------------------------------------------------------- the command line


def test_the_command_line_records_the_request_and_its_result(tmp_path, capsys):
    path = tmp_path / "work.json"
    argv = ["--workspace", str(path), "rank", "--solute", "cannabidiol", "--top", "3", "--json"]
    assert main(argv) == 0
    printed = json.loads(capsys.readouterr().out)
    entry = open_workspace(path).history[-1]
    assert entry["command"] == "rank" and entry["result"] == printed
    assert entry["request"]["solute"] == "cannabidiol" and entry["request"]["top"] == 3
    assert entry["argv"] == ["rank", "--solute", "cannabidiol", "--top", "3", "--json"]
    assert entry["time"].endswith("Z")
    # a text answer is recorded the same, and the history grows
    assert main(["rank", "--solute", "cannabidiol", "--top", "3", "--workspace", str(path)]) == 0
    assert "Target: cannabidiol" in capsys.readouterr().out
    history = open_workspace(path).history
    assert len(history) == 2 and history[1]["result"]["results"] == printed["results"]


def test_the_workspace_supplies_defaults_the_command_line_leaves_out(tmp_path, capsys):
    from solvsel import rank

    path = tmp_path / "work.json"
    save_workspace(Workspace(target={"solute": "cannabidiol"}, own_solvents=(own_row(),),
                             constraints={"food": True, "jurisdiction": "EU", "temp_C": 40.0, "bp_min_C": 60.0,
                                          "exclude": ["ethanol"], "max_components": 2}), path)
    assert main(["--workspace", str(path), "rank", "--top", "5", "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    want = rank(solute="cannabidiol", food=True, jurisdiction="EU", temp_C=40.0, bp_min_C=60.0,
                exclude=("ethanol",), top=5).to_dict()
    assert got["target"]["name"] == "cannabidiol" and got["temp_C"] == 40.0
    assert [r["name"] for r in got["results"]] == [r["name"] for r in want["results"]]
    assert [r["ra"] for r in got["results"]] == pytest.approx([r["ra"] for r in want["results"]], abs=1e-12)
    # what the command line gives wins over the workspace
    assert main(["--workspace", str(path), "rank", "--hsp", "15.8,8.8,19.4", "--temp", "25", "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    assert got["temp_C"] == 25.0 and got["target"]["dH"] == 19.4
    assert open_workspace(path).history[-1]["argv"][:3] == ["rank", "--bp-range=60:", "--exclude=ethanol"]
    # the workspace's own liquid (ethanol's values under another name, not in the food law) is in the pool
    save_workspace(Workspace(own_solvents=(own_row(),)), path)
    assert main(["--workspace", str(path), "rank", "--hsp", "15.8,8.8,19.4", "--only", "my test liquid,triacetin",
                 "--json"]) == 0
    first = json.loads(capsys.readouterr().out)["results"][0]
    assert first["name"] == "my test liquid" and first["origin"].startswith("user")
    assert first["ra"] == pytest.approx(0.0, abs=1e-9)


def test_the_command_line_refuses_a_damaged_workspace_and_leaves_it(tmp_path, capsys):
    path = tmp_path / "work.json"
    path.write_bytes(DAMAGED["cut short"])
    assert main(["--workspace", str(path), "rank", "--solute", "cannabidiol", "--json"]) == 2
    err = json.loads(capsys.readouterr().out)["error"]
    assert err["param"] == "--workspace" and err["file"] == str(path) and "damaged" in err["message"]
    assert path.read_bytes() == DAMAGED["cut short"] and not backup_path(path).exists()


def test_a_failed_command_records_nothing(tmp_path, capsys):
    path = tmp_path / "work.json"
    save_workspace(Workspace(name="x"), path)
    before = path.read_bytes()
    assert main(["--workspace", str(path), "rank", "--solute", "cannabidiol", "--top=-1"]) == 2
    assert path.read_bytes() == before


def test_record_run_keeps_the_newest_entries(monkeypatch):
    from solvsel.data import workspace as module

    monkeypatch.setattr(module, "MAX_HISTORY", 20)
    ws = Workspace()
    for i in range(23):
        ws = record_run(ws, "rank", [], {"i": i}, None, time="t")
    assert len(ws.history) == 20 and ws.history[0]["request"] == {"i": 3} and ws.history[-1]["request"] == {"i": 22}


def test_a_report_in_a_workspace_gives_the_command_its_defaults(tmp_path, capsys):
    path, out = tmp_path / "work.json", tmp_path / "r.md"
    save_workspace(Workspace(target={"solute": "cannabidiol"}, constraints={"temp_C": 30.0}), path)
    assert main(["report", "--workspace", str(path), str(out), "rank", "--top", "2"]) == 0
    data = json.loads(out.with_suffix(".json").read_text(encoding="utf-8"))
    assert data["target"]["name"] == "cannabidiol" and data["temp_C"] == 30.0
    assert open_workspace(path).history[-1]["command"] == "report"
    # given among the options of the command reported on, the same
    out = tmp_path / "s.md"
    assert main(["report", str(out), "rank", "--workspace", str(path), "--top", "2"]) == 0
    assert json.loads(out.with_suffix(".json").read_text(encoding="utf-8"))["temp_C"] == 30.0
    assert len(open_workspace(path).history) == 2


def test_a_workspace_default_that_the_command_refuses_is_said_to_come_from_the_workspace(tmp_path, capsys):
    path = tmp_path / "work.json"
    save_workspace(Workspace(constraints={"temp_C": 500.0}), path)
    assert main(["--workspace", str(path), "miscible", "water", "ethanol", "--json"]) == 2
    err = json.loads(capsys.readouterr().out)["error"]
    assert err["param"] == "--temp" and f"a default of the workspace {path}" in err["message"]
    # a value needed by the command (dose needs the jurisdiction) is supplied by the workspace
    save_workspace(Workspace(constraints={"jurisdiction": "EU"}), path)
    assert main(["--workspace", str(path), "dose", "--formula", "propylene glycol=90,vanillin=10", "--dose",
                 "0.15%", "--category", "beverages", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["formula"]
    assert open_workspace(path).history[-1]["request"]["jurisdiction"] == "EU"


def test_a_workspace_holding_what_json_cannot_hold_is_refused_before_writing(tmp_path):
    path = tmp_path / "work.json"
    save_workspace(Workspace(name="x"), path)
    before = path.read_bytes()
    with pytest.raises(InputError) as err:
        save_workspace(Workspace(constraints={"temp_C": float("nan")}), path)
    assert err.value.param == "workspace"
    with pytest.raises(InputError):
        Workspace(targets=5)
    with pytest.raises(InputError):
        save_workspace({"name": "x"}, path)
    assert path.read_bytes() == before and not backup_path(path).exists()


def test_a_command_that_writes_a_file_runs_once(tmp_path, capsys):
    # fit --into adds the sphere to the user's solutes file: a second run for the record would add it again
    bench, into, path = str(Path(__file__).parent / "data" / "bench_c60_memory.csv"), tmp_path / "mine.csv", tmp_path / "w.json"
    assert main(["--workspace", str(path), "fit", bench, "--good-at-most", "2", "--save-as", "my sphere",
                 "--into", str(into)]) == 0
    assert into.read_text(encoding="utf-8").count("my sphere") == 1
    entry = open_workspace(path).history[-1]
    assert entry["command"] == "fit" and entry["result"] is None and entry["request"]["into"] == str(into)


def test_the_history_stays_far_below_the_largest_file_read(monkeypatch):
    from solvsel.data import workspace as module

    monkeypatch.setattr(module, "MAX_HISTORY_BYTES", 20_000)
    monkeypatch.setattr(module, "MAX_ENTRY_BYTES", 5_000)
    ws = Workspace()
    for i in range(40):
        ws = record_run(ws, "blend", [], {"i": i}, {"results": ["x" * 900]}, time="t")
    assert sum(len(json.dumps(e)) for e in ws.history) <= 20_000 and ws.history[-1]["request"] == {"i": 39}
    ws = record_run(ws, "blend", [], {"i": "big"}, {"results": ["x" * 10_000]}, time="t")
    assert "not_kept" in ws.history[-1]["result"] and ws.history[-1]["request"] == {"i": "big"}


def test_any_json_document_is_read_or_refused_as_damaged():
    from hypothesis import given, settings
    from hypothesis import strategies as st

    scalars = st.none() | st.booleans() | st.integers(-3, 3) | st.floats(allow_nan=False) | st.text(max_size=5)
    values = st.recursive(scalars, lambda inner: st.lists(inner, max_size=3)
                          | st.dictionaries(st.text(max_size=6), inner, max_size=3), max_leaves=8)
    fields = st.sampled_from(["name", "target", "targets", "constraints", "filters", "own_rows", "history",
                              "own_solvents", "formulas", "blends"])
    docs = st.fixed_dictionaries({"format": st.just("solvsel-workspace"), "schema_version": st.sampled_from([0, 1])},
                                 optional={f: values for f in ("name", "target", "targets", "constraints", "filters",
                                                               "own_rows", "history", "own_solvents", "formulas")})

    @settings(max_examples=100, deadline=None)
    @given(docs | st.dictionaries(fields, values))
    def check(doc):
        try:
            ws = workspace_from_dict(doc, path="w.json")
        except FileError as exc:
            assert exc.path == "w.json"
        else:
            assert isinstance(ws, Workspace)

    check()


def test_a_killed_saves_temporary_file_is_removed_by_the_next_save(tmp_path):
    # A SIGKILL between write and rename leaves the hidden temporary file; the next save of the same
    # file removes it once it is older than a save can take, and leaves other files alone.
    import os
    import time

    from solvsel.data.catalog import STALE_TEMPORARY_S, write_user_file

    target = tmp_path / "work.json"
    left = tmp_path / ".solvsel-work.json-abc123.json"
    young = tmp_path / ".solvsel-work.json-def456.json"
    other = tmp_path / ".solvsel-other.json-xyz.json"
    for f in (left, young, other):
        f.write_bytes(b"{")
    old = time.time() - STALE_TEMPORARY_S - 60
    os.utime(left, (old, old))
    os.utime(other, (old, old))
    write_user_file(target, b"{}")
    assert target.read_bytes() == b"{}"
    assert not left.exists() and young.exists() and other.exists()
