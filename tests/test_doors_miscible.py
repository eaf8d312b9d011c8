"""The miscible job gives the same answer from the library, the command line and the UI.

The verdicts themselves are checked against published mutual solubilities in
tests/test_miscibility.py; here the three doors are held to one answer.
"""

from __future__ import annotations

import asyncio
import json

import pytest

import solvsel
from solvsel.cli import main
from solvsel.errors import InputError

CASES = [
    # a measured partial pair (water / ethyl acetate), a three-liquid blend at fractions,
    # and the bridging liquids between a citrus terpene and water among food carriers
    dict(liquids=("water", "ethyl acetate")),
    dict(liquids=("water", "ethanol", "d-limonene"), fractions=(0.3, 0.6, 0.1)),
    dict(liquids=("d-limonene", "water"), bridge=True, food=True),
    # a predicted split named both ways round (the window flips, nothing else changes), and a
    # predicted split of a glycol and an oil (Flory-Huggins from HSP: the oil is a mixture)
    dict(liquids=("sunflower oil", "ethylene glycol")),
    dict(liquids=("ethylene glycol", "sunflower oil")),
    dict(liquids=("propylene glycol", "olive oil")),
    # pairs predicted by UNIFAC-LLE from the structures: a window, and a decisive "no" (both
    # predicted solubilities under the stated level)
    dict(liquids=("glycerol", "ethyl acetate")),
    dict(liquids=("ethylene glycol", "toluene")),
]


def _argv(case):
    argv = ["miscible", *case["liquids"], "--json"]
    if case.get("fractions"):
        argv += ["--fractions", ",".join(str(f) for f in case["fractions"])]
    if case.get("bridge"):
        argv.append("--bridge")
    if case.get("food"):
        argv.append("--food")
    return argv


def _essentials(d):
    out = {"one_phase": d["one_phase"], "basis": d["basis"], "model": d["model"],
           "pairs": [(tuple(p["liquids"]), p["one_phase"], p["basis"], p["model"], p["chi"],
                      None if not p["window"] else (p["window"].get("b_in_a_max"), p["window"].get("a_in_b_max")))
                     for p in d["pairs"]]}
    if "blend" in d:
        out["blend"] = (d["blend"]["one_phase"], d["blend"]["reason"])
    if "bridges" in d:
        out["bridges"] = [(b["name"], b["basis_a"], b["basis_b"], round(b["closeness"], 12)) for b in d["bridges"]]
    return out


@pytest.mark.parametrize("case", CASES)
def test_library_and_command_line_agree(case, capsys):
    lib = solvsel.miscible(**case).to_dict()
    assert main(_argv(case)) == 0
    cli = json.loads(capsys.readouterr().out)
    assert _essentials(cli) == _essentials(lib)
    assert cli["cautions"] == lib["cautions"]


def test_the_mixing_screen_shows_the_library_answer():
    pytest.importorskip("textual")
    from textual.widgets import Input

    from solvsel.tui.app import create_app
    from solvsel.tui.widgets import Tick

    async def go():
        app = create_app(start="mixing")
        async with app.run_test(size=(160, 48)) as pilot:
            await pilot.pause()
            for case in CASES:
                screen = app.screen
                screen.query_one("#mix-liquids", Input).value = ", ".join(case["liquids"])
                screen.query_one("#mix-fractions", Input).value = ",".join(str(f) for f in case.get("fractions") or ())
                screen.query_one("#mix-bridge", Tick).value = bool(case.get("bridge"))
                screen.query_one("#mix-food", Tick).value = bool(case.get("food"))
                await pilot.press("ctrl+r")
                await pilot.pause()
                assert _essentials(screen.result.to_dict()) == _essentials(solvsel.miscible(**case).to_dict())
                assert screen.query_one("#mix-pairs").row_count == len(screen.result.pairs)
            # a mistake opens the dialog with the field's label, not an option of the command line
            app.screen.query_one("#mix-fractions", Input).value = "50,60"
            app.screen.query_one("#mix-bridge", Tick).value = False
            app.screen.query_one("#mix-food", Tick).value = False
            app.screen.query_one("#mix-liquids", Input).value = "water, ethanol"
            await pilot.press("ctrl+r")
            await pilot.pause()
            assert type(app.screen).__name__ == "ErrorDialog"
            assert app.screen.error_message.startswith("volume fractions:") and "--" not in app.screen.error_message

    asyncio.run(go())


def test_a_bad_request_names_the_field():
    with pytest.raises(InputError) as info:
        solvsel.MiscibleRequest(liquids=("water",))
    assert info.value.param == "liquids"
    with pytest.raises(InputError) as info:
        solvsel.miscible(liquids=("water", "ethanol"), temp_C=400)
    assert info.value.param == "temp_C"


def test_the_entry_point_gives_the_same_json():
    # one subprocess run of the installed program, the way a script calls it
    import subprocess
    import sys
    from pathlib import Path

    exe = Path(sys.executable).with_name("solvsel")
    argv = [str(exe)] if exe.exists() else [sys.executable, "-m", "solvsel"]
    out = subprocess.run(argv + _argv(CASES[1]), capture_output=True, text=True, check=True)
    assert _essentials(json.loads(out.stdout)) == _essentials(solvsel.miscible(**CASES[1]).to_dict())


def test_the_window_of_a_pair_named_both_ways_round():
    ab = solvsel.miscible(liquids=("sunflower oil", "ethylene glycol")).to_dict()
    ba = solvsel.miscible(liquids=("ethylene glycol", "sunflower oil")).to_dict()
    assert ab["one_phase"] == ba["one_phase"] == "no" and ab["window"] and ba["window"]
    assert ab["window"]["b_in_a_max"] == ba["window"]["a_in_b_max"]
    assert ab["window"]["a_in_b_max"] == ba["window"]["b_in_a_max"]
    # a decisive predicted "no": both predicted mutual solubilities under the stated level
    from solvsel.science.miscibility import IMMISCIBLE_BELOW_WT

    no = solvsel.miscible(liquids=("ethylene glycol", "toluene"))
    assert no.one_phase == "no" and no.basis == "predicted" and no.model.startswith("UNIFAC-LLE")
    assert 100 * max(no.window["b_in_a_max"], no.window["a_in_b_max"]) < IMMISCIBLE_BELOW_WT
