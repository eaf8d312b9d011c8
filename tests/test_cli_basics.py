"""The shared CLI pieces: solvents, table, report, the --where grammar, exit codes."""

from __future__ import annotations

import json

import pandas as pd
import pytest

from solvsel.cli import main
from solvsel.errors import InputError
from solvsel.data.query import where


def run_json(capsys, argv):
    assert main(argv + ["--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_solvents_json_contract(capsys):
    rows = run_json(capsys, ["solvents"])
    assert len(rows) >= 70
    for key in ("name", "cas", "dD", "dP", "dH", "vm", "bp_C", "flash_C", "density", "sources"):
        assert key in rows[0]


def test_solvents_where_and_sort(capsys):
    rows = run_json(capsys, ["solvents", "--where", "dH > 10 and bp_C < 120", "--sort", "bp_C"])
    assert rows and all(r["dH"] > 10 and r["bp_C"] < 120 for r in rows)
    assert [r["bp_C"] for r in rows] == sorted(r["bp_C"] for r in rows)
    food = run_json(capsys, ["solvents", "--food"])
    assert "n-hexane" in {r["name"] for r in food} and "dimethyl sulfoxide" not in {r["name"] for r in food}


def test_where_grammar():
    df = pd.DataFrame({"name": ["a", "b", "c"], "roles": ["carrier;bench", "bench", "extraction"],
                       "flash_C": [10.0, float("nan"), 80.0]})
    assert list(df[where(df, "roles has carrier or flash > 50")]["name"]) == ["a", "c"]
    assert list(df[where(df, "flash is empty")]["name"]) == ["b"]
    assert list(df[where(df, "not flash < 50")]["name"]) == ["b", "c"]  # an empty cell fails every comparison
    for bad in ("flash >", "flash > 'x'", "(flash > 1", "nosuch > 1", "flash > 1 and", "__import__('os')"):
        with pytest.raises(InputError):
            where(df, bad)


def test_bad_input_exits_2_without_traceback(capsys):
    assert main(["solvents", "--where", "dQ > 1"]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and "unknown column 'dQ'" in err
    assert main(["table", "nonesuch"]) == 2


def test_table_json_keeps_column_names(capsys):
    rows = run_json(capsys, ["table", "solutes"])
    assert {"name", "cas", "dD_MPa05", "hsp_source"} <= set(rows[0])


def test_report_writes_three_files_and_never_overwrites(tmp_path, capsys):
    out = tmp_path / "carriers.md"
    assert main(["report", str(out), "solvents", "--where", "dH > 20"]) == 0
    md = out.read_text(encoding="utf-8")
    assert "## Sources" in md and "Diaz de los Rios" in md and "## Caution" in md
    assert json.loads(out.with_suffix(".json").read_text())[0]["name"]
    assert out.with_suffix(".csv").read_text().startswith("name,cas,")
    before = md
    assert main(["report", str(out), "solvents"]) == 2  # exists: refused
    assert out.read_text(encoding="utf-8") == before


def test_demo_scenario_is_marked_demo():
    from solvsel.data.catalog import load_catalog
    from solvsel.data.scenario import demo_steps, load_scenario

    s = load_scenario()
    assert s.source == "demo" and "fictional" in s.company
    load_catalog().solute(s.solute, library=False)
    assert len(demo_steps(s)) == 10


# The JSON contract of ../DESIGN.md: the documented examples, with the fields other tools rely on.
CONTRACT = [
    (["rank", "--hsp", "17.0,3.0,8.0,8.0", "--temp", "40"], {"target", "results"},
     ("results", {"name", "cas", "ra", "red"})),
    (["rank", "--like", "n-hexane", "--food"], {"target", "results"}, ("results", {"name", "cas", "ra", "red"})),
    (["blend", "--hsp", "17.5,6.0,10.0", "--max-components", "3", "--only", "ethanol,water,triacetin"],
     {"target", "results"}, ("results", {"components", "dD", "dP", "dH", "ra", "red", "one_phase", "cautions"})),
    (["miscible", "water", "ethyl acetate"], {"liquids", "one_phase", "basis", "window", "chi", "chi_critical"}, None),
    (["estimate", "CC1=CCC(CC1)C(=C)C"], {"smiles", "dD", "dP", "dH", "vm", "method", "groups", "uncertainty"}, None),
    (["fit", "examples/bench_graded.csv", "--good-at-most", "2"], {"dD", "dP", "dH", "r0", "fit", "wrong_side", "interval"}, None),
    (["hlb", "--oil", "d-limonene=70,medium-chain triglycerides=30", "--emulsifiers", "polysorbate 80,sorbitan monooleate"],
     {"required_hlb", "pairs"}, ("pairs", {"a", "b", "fraction_a", "fraction_b", "hlb"})),
    (["emulsion", "--oil", "d-limonene=70,sucrose acetate isobutyrate=30", "--brix", "11", "--dilution", "500",
      "--droplet-um", "0.4"],
     {"beverage_density", "oil_phase_density", "agent_level_ppm", "agent_limit_ppm", "creaming_mm_per_day"}, None),
    (["dose", "--formula", "propylene glycol=90,vanillin=10", "--dose", "0.15%", "--category", "beverages",
      "--jurisdiction", "EU"], {"stages", "limits", "max_dose"},
     ("limits", {"rule", "substance", "level", "limit", "unit", "binds", "ok"})),
]


@pytest.mark.parametrize("argv,top,inner", CONTRACT, ids=[c[0][0] + "-" + c[0][1] for c in CONTRACT])
def test_json_contract(capsys, monkeypatch, argv, top, inner):
    from pathlib import Path

    monkeypatch.chdir(Path(__file__).resolve().parents[1])
    doc = run_json(capsys, argv)
    assert top <= set(doc), top - set(doc)
    if inner:
        key, fields = inner
        assert doc[key], f"{key} is empty"
        assert fields <= set(doc[key][0]), fields - set(doc[key][0])
    if argv[0] == "dose":
        assert {"name", "levels"} <= set(doc["stages"][0])
    if argv[0] == "blend":
        assert {"name", "cas", "volume_fraction", "mass_fraction"} <= set(doc["results"][0]["components"][0])
    if argv[0] == "miscible":
        assert doc["one_phase"] in ("yes", "no", "partial") and doc["basis"] in ("measured", "predicted")


def test_the_installed_command_exits_with_mains_code_and_freezes_the_collector_only_there(monkeypatch, capsys):
    # `solvsel` (pyproject's script) and `python -m solvsel` run cli.console: main's exit code, the
    # collector frozen just before the process ends; main(argv) itself leaves the collector alone
    import gc
    import sys
    import tomllib
    from pathlib import Path

    from solvsel.cli import console

    project = tomllib.loads((Path(__file__).resolve().parent.parent / "pyproject.toml").read_text("utf-8"))
    assert project["project"]["scripts"]["solvsel"] == "solvsel.cli:console"
    gc.unfreeze()
    before = gc.get_freeze_count()
    assert main(["rank", "--hsp", "17,3"]) == 2 and gc.get_freeze_count() == before == 0
    for argv, code in ((["solvsel", "rank", "--hsp", "17,3,8,8", "--top", "1"], 0),
                       (["solvsel", "rank", "--hsp", "17,3"], 2)):
        monkeypatch.setattr(sys, "argv", argv)
        try:
            with pytest.raises(SystemExit) as end:
                console()
            assert end.value.code == code
            assert gc.get_freeze_count() > 0
        finally:
            gc.unfreeze()
    assert "Ra" in capsys.readouterr().out


def test_installed_stamp_names_the_installed_version_without_importing():
    # the cache keys' name of an installed package: its dist-info folder (pip's layout), None when absent
    import importlib.metadata as md

    from solvsel.data.catalog import installed_stamp

    assert f"numpy-{md.version('numpy')}.dist-info" in installed_stamp("numpy")
    assert installed_stamp("no_such_package_of_this_name") is None
