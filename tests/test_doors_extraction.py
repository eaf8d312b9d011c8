"""The same extraction plan from the library and from the command line (the UI screen is not built yet)."""

from __future__ import annotations

import json

from solvsel.cli import main
from solvsel.jobs.extraction import extraction

FIELDS = {"solute": "cannabidiol", "strengths": "60:100:20", "temps_C": "-30:30:30", "purpose": "food_ingredient",
          "vacuum_kPa": 15.0}
ARGV = ["extract", "--solute", "cannabidiol", "--strengths", "60:100:20", "--temps=-30:30:30",
        "--purpose", "food_ingredient", "--vacuum", "15", "--json"]


def test_library_and_cli_agree(capsys):
    lib = extraction(**FIELDS).to_dict()
    assert main(ARGV) == 0
    cli = json.loads(capsys.readouterr().out)
    assert cli["strengths_pct_v"] == lib["strengths_pct_v"] == [60.0, 80.0, 100.0]
    assert cli["temps_C"] == lib["temps_C"] == [-30.0, 0.0, 30.0]
    # floats survive JSON exactly (shortest repr), so the grid, the window and stripping are equal as they are
    expected = json.loads(json.dumps(lib, default=str))
    for key in ("grid", "best", "window", "strip", "freezing_point_C", "flash_point_C", "rejects", "liquids"):
        assert cli[key] == expected[key], key
    assert [x["status"] for x in cli["legal"]] == [x["status"] for x in lib["legal"]]
    assert cli["cautions"] == lib["cautions"]


def test_cli_error_names_the_option(capsys):
    assert main(["extract", "--solute", "cannabidiol", "--vacuum", "0", "--json"]) == 2
    err = json.loads(capsys.readouterr().out)["error"]
    assert err["param"] == "--vacuum"
