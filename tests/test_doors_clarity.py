"""The clarity job gives the same answer from the library and the command line.

The model and the verdicts are checked against published values in tests/test_clarity.py; here the doors
are held to one answer.  The UI has no clarity screen yet (the screen is built separately), so the third
door is not driven here.
"""

from __future__ import annotations

import json

import pytest

import solvsel
from solvsel.cli import main

CASES = [
    # the lemonade: 2 % limonene in an alcoholic flavour at 0.1 % into a 10.5 Brix drink, stored cold
    dict(formula="ethanol=60, d-limonene=2, citral=1, linalool=1, water=36", dose="0.1%", brix=10.5, temp_C=4.0),
    # through a syrup, diluted by volume; propylene glycol as the carrier
    dict(formula="propylene glycol=90, d-limonene=6, citral=2, alpha-pinene=2", dose="0.5%",
         chain="syrup d=1.28; drink 1+5v d=1.04", brix=11.0),
    # a dose low enough to stay clear
    dict(formula="ethanol=95, d-limonene=2, water=3", dose="0.03%"),
]


def _argv(case):
    argv = ["clear", "--formula", case["formula"], "--dose", case["dose"], "--json"]
    if "chain" in case:
        argv += ["--chain", case["chain"]]
    if "brix" in case:
        argv += ["--brix", f"{case['brix']:g}"]
    if "temp_C" in case:
        argv += ["--temp", f"{case['temp_C']:g}"]
    return argv


def _essentials(d):
    keys = ("verdict", "ok", "largest_clear_dose", "dose_unit", "cosolvents", "components", "not_judged",
            "emulsion_oil_phase", "emulsion_oil_in_drink_mg_kg", "notes", "cautions", "drink", "steps")
    return json.loads(json.dumps({k: d[k] for k in keys}))


@pytest.mark.parametrize("case", CASES)
def test_library_and_command_line_agree(case, capsys):
    lib = solvsel.clarity(**case)
    assert main(_argv(case)) == 0
    cli = json.loads(capsys.readouterr().out)
    assert _essentials(cli) == _essentials(lib.to_dict())
    assert [c["verdict"] for c in cli["components"]] == [c.verdict for c in lib.components]


def test_a_bad_field_names_its_option(capsys):
    assert main(["clear", "--formula", "d-limonene=2, propylene glycol=98", "--dose", "0.1%", "--temp", "99"]) == 2
    assert "--temp:" in capsys.readouterr().err
    assert main(["clear", "--formula", "d-limonene=2, propylene glycol=98", "--dose", "0.1%", "--brix", "-1",
                 "--json"]) == 2
    err = json.loads(capsys.readouterr().out)["error"]
    assert err["param"] == "--brix"
