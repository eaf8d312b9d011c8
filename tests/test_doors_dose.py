"""The dose job gives the same answer from the library, the command line and the UI.

The limits and the chain arithmetic are checked against the regulations and hand
computations in tests/test_dose.py; here the three doors are held to one answer.
"""

from __future__ import annotations

import asyncio
import json
from pathlib import Path

import pytest

import solvsel
from solvsel.cli import main
from solvsel.errors import InputError

VANILLA_CSV = str(Path(__file__).resolve().parents[1] / "examples" / "formula_vanilla_pg.csv")

CASES = [
    # a flavour file straight into a drink (no chain: the category's typical density is assumed)
    dict(formula=VANILLA_CSV, dose="0.15%", category="beverages", jurisdiction="EU"),
    # the lemon flavour of the README: dosed into a syrup, the syrup diluted 1 + 5 by volume
    dict(formula="propylene glycol=88,d-limonene=8,citral=4", dose="0.15%", chain="syrup d=1.28; drink 1+5v d=1.04",
         category="beverages", jurisdiction="EU"),
    # US limits, the dose inside the chain, what other ingredients bring and a claim (command line and library)
    dict(formula="propylene glycol=90,vanillin=10", chain="syrup 0.5% d=1.28; drink 1+5v d=1.04",
         category="flavoured drinks", jurisdiction="US", already="propylene glycol=150", claims="halal"),
    # a citrus flavour with a hexane residue, for a flavouring: 21 CFR 173.270 allows hexane for spice oleoresins
    # and hop extracts only (command line and library)
    dict(formula="d-limonene=100", dose="0.1%", category="flavoured drinks", jurisdiction="US",
         residues="n-hexane=30", purpose="flavouring"),
    # the README's lemon flavour stated as a flavouring (all three doors)
    dict(formula="propylene glycol=88,d-limonene=8,citral=4", dose="0.15%", chain="syrup d=1.28; drink 1+5v d=1.04",
         category="beverages", jurisdiction="EU", purpose="flavouring"),
]

#: The cases the UI's fields can express (it has no fields for other sources, residues or claims).
UI_CASES = CASES[:2] + CASES[4:]


def _argv(case):
    argv = ["dose", "--formula", case["formula"], "--jurisdiction", case["jurisdiction"], "--json"]
    for key, option in (("dose", "--dose"), ("chain", "--chain"), ("category", "--category"),
                        ("already", "--already"), ("claims", "--claim"), ("residues", "--residue"),
                        ("purpose", "--purpose")):
        if case.get(key):
            argv += [option, case[key]]
    return argv


def _essentials(d):
    return {
        "stages": [(s["name"], {k: round(v, 9) for k, v in s["levels"].items()}) for s in d["stages"]],
        "limits": [(c["rule"], c["substance"], round(c["level"], 9) if c["level"] is not None else None, c["limit"],
                    c["unit"], c["ok"], c["binds"], c["max_dose"]) for c in d["limits"]],
        "max_dose": d["max_dose"], "max_dose_unit": d["max_dose_unit"],
        "binding": d["binding"]["rule"] if d["binding"] else None,
        "claims": [(c["claim"], c["substance"], c["ok"]) for c in d["claims"]],
        "residues": [(r["rule"], r["status"], r["ok"], r["limit"], r["measured_in"]) for r in d["residues"]],
        "ok": d["ok"], "complete": d["complete"], "cautions": d["cautions"], "purpose": d["purpose"],
        "rules_applied": d["audit"]["rules_applied"],
    }


@pytest.mark.parametrize("case", CASES)
def test_library_and_command_line_agree(case, capsys):
    result = solvsel.dose(**case)
    lib = result.to_dict()
    assert main(_argv(case)) == 0
    cli = json.loads(capsys.readouterr().out)
    assert _essentials(cli) == _essentials(lib)
    assert cli["max_dose"] == (None if lib["max_dose"] is None else pytest.approx(lib["max_dose"], rel=1e-12))
    # the table form holds the same limits
    table = result.to_frame()
    assert list(table["rule"]) == [c["rule"] for c in cli["limits"]] and list(table["binds"]) == [c["binds"] for c in cli["limits"]]


def test_readme_lemon_flavour_max_dose_by_hand():
    # Reg. (EC) No 1333/2008 Annex III Part 4: the carrier group at most 1 000 mg/L in the drink. By hand: the syrup
    # is 1 L (1.28 kg) in 1.28 + 5 x 0.99705 kg of drink, so PG in the drink is 0.88 x 0.0015 x 0.2043015 x 1.04e6
    # = 280.46 mg/L, and the dose may rise to 0.15 % x 1000 / 280.46 = 0.5348 %.
    r = solvsel.dose(**CASES[1])
    f = 1.28 / (1.28 + 5 * 0.99705)
    level = 0.88 * 0.0015 * f * 1.04e6
    assert r.check.binding.level == pytest.approx(level, rel=1e-9) and r.check.binding.binds
    assert r.max_dose == pytest.approx(0.0015 * 1000 / level, rel=1e-9)


def test_a_dose_as_a_number_is_a_mass_fraction():
    text = solvsel.dose(**CASES[0]).to_dict()
    for dose in (0.0015, "0.0015"):
        other = solvsel.dose(**{**CASES[0], "dose": dose}).to_dict()
        assert _essentials(other) == _essentials(text)


def test_the_limits_screen_shows_the_library_answer():
    pytest.importorskip("textual")
    from textual.widgets import Input

    from solvsel.tui.app import create_app

    async def go():
        app = create_app(start="limits")
        async with app.run_test(size=(160, 45)) as pilot:
            await pilot.pause()
            for case in UI_CASES:
                screen = app.screen
                for field in ("formula", "dose", "chain", "category", "jurisdiction"):
                    screen.query_one(f"#lim-{field}", Input).value = case.get(field, "")
                screen.query_one("#lim-purpose").value = case.get("purpose", "none")
                await pilot.press("ctrl+r")
                await pilot.pause()
                assert screen.result is not None
                assert _essentials(screen.result.to_dict()) == _essentials(solvsel.dose(**case).to_dict())
                assert screen.result.check.purpose == case.get("purpose")
                assert screen.query_one("#lim-checks").row_count == len(screen.result.check.checks)
            # a mistake opens the dialog with the field's label, not an option of the command line
            app.screen.query_one("#lim-dose", Input).value = ""
            app.screen.query_one("#lim-chain", Input).value = ""
            await pilot.press("ctrl+r")
            await pilot.pause()
            assert type(app.screen).__name__ == "ErrorDialog"
            assert app.screen.error_message.startswith("dose:") and "--" not in app.screen.error_message

    asyncio.run(go())


def test_a_bad_request_names_the_field(capsys):
    with pytest.raises(InputError) as info:
        solvsel.DoseRequest(formula="propylene glycol=90", jurisdiction="EU")
    assert info.value.param == "dose"
    with pytest.raises(InputError) as info:
        solvsel.dose(formula="propylene glycol=90", dose="0.1%", jurisdiction="ICH")
    assert info.value.param == "jurisdiction"
    with pytest.raises(InputError) as info:
        solvsel.dose(formula="propylene glycol=90", dose="0.1%", jurisdiction="EU", formula_density=9)
    assert info.value.param == "formula_density"
    assert main(["dose", "--formula", "propylene glycol=90", "--jurisdiction", "EU", "--residue", "n-hexane=-1",
                 "--dose", "0.1%"]) == 2
    assert "--residue:" in capsys.readouterr().err
