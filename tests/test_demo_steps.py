"""The demo walks through the load check, the clarity check and the extraction plan, and each of those steps
gives the library's answer (the scenario's data are invented for the demo; the checks of the values are in
tests/test_loading.py and tests/test_extraction.py)."""

from __future__ import annotations

import json

from solvsel.cli import main
from solvsel.data.scenario import demo_steps, load_scenario
from solvsel.jobs.load import load


def _step(name: str):
    return [(t, argv) for t, argv in demo_steps(load_scenario()) if argv[0] == name]


def test_the_demo_has_the_new_steps_in_order():
    names = [argv[0] for _, argv in demo_steps(load_scenario())]
    assert names[:6] == ["rank", "blend", "blend", "hlb", "emulsion", "dose"]
    assert names[6:] == ["dissolves", "dissolves", "clear", "extract"]


def test_load_steps_give_the_library_answer(capsys):
    s = load_scenario()
    for (title, argv), check in zip(_step("dissolves"), s.load["checks"]):
        assert main([*argv, "--json"]) == 0
        cli = json.loads(capsys.readouterr().out)
        lib = load(solute=check["solute"], carrier=tuple(check["carrier"]), load=check["load"],
                   storage_C=check["storage"])
        assert (cli["verdict"], cli["largest_load"]) == (lib.verdict, lib.largest_load)


def test_clarity_and_extraction_steps_run(capsys):
    for _, argv in _step("clear") + _step("extract"):
        assert main([*argv, "--json"]) == 0
        out = json.loads(capsys.readouterr().out)
        assert "error" not in out
    assert out["liquids"] == ["ethanol", "water"] and len(out["strengths_pct_v"]) == 13
