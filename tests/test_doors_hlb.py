"""The hlb job gives the same answer from the library, the command line and the UI.

Required HLB values and emulsifier fractions are checked against Griffin's
arithmetic and published series in tests/test_hlb.py; here the three doors are
held to one answer.
"""

from __future__ import annotations

import asyncio
import json

import pytest

import solvsel
from solvsel.cli import main
from solvsel.errors import InputError

README_POOL = ("polysorbate 80", "sorbitan monooleate", "polysorbate 60", "sorbitan monostearate",
               "sucrose esters of fatty acids")

CASES = [
    # the README's lemon oil phase against five emulsifiers
    dict(oil=(("lemon oil", 65.0), ("medium-chain triglycerides", 35.0)), emulsifiers=README_POOL),
    # the example of the design: an estimated required HLB (d-limonene from its HSP), one oleate pair
    dict(oil=(("d-limonene", 70.0), ("medium-chain triglycerides", 30.0)),
         emulsifiers=("polysorbate 80", "sorbitan monooleate")),
    # the user's own required HLB for one oil, the default pool
    dict(oil=(("d-limonene", 70.0), ("medium-chain triglycerides", 30.0)), rhlb=(("d-limonene", 13.0),)),
]


def _text(pairs) -> str:
    return ",".join(f"{k}={v:g}" for k, v in pairs)


def _argv(case, *extra):
    argv = ["hlb", "--oil", _text(case["oil"]), *extra, "--json"]
    if case.get("emulsifiers"):
        argv += ["--emulsifiers", ",".join(case["emulsifiers"])]
    if case.get("rhlb"):
        argv += ["--rhlb", _text(case["rhlb"])]
    return argv


def _essentials(d):
    return {
        "required_hlb": d["required_hlb"],
        "oil_phase": [(c["name"], c["mass_fraction"], c["rhlb"], c["basis"]) for c in d["oil_phase"]],
        "pairs": [(p["a"], p["b"], p["fraction_a"], p["fraction_b"], p["hlb"], p["same_tail"]) for p in d["pairs"]],
        "pairs_found": d["pairs_found"],
        "cautions": d["cautions"],
        # the required HLB's range where an oil's value has one, and the pairs at both of its ends
        "range": d.get("required_hlb_range"),
        "range_ends": [(e["required_hlb"], [(p["a"], p["b"], p["fraction_a"]) for p in e["pairs"]])
                       for e in d.get("range_ends") or ()],
    }


@pytest.mark.parametrize("case", CASES)
def test_library_and_command_line_agree(case, capsys):
    lib = solvsel.hlb(**case).to_dict()
    assert main(_argv(case)) == 0
    cli = json.loads(capsys.readouterr().out)
    assert _essentials(cli) == _essentials(lib)
    # every pair hits the required HLB (Griffin: the blend's HLB is the mass-weighted mean)
    for p in cli["pairs"]:
        assert p["hlb"] == pytest.approx(cli["required_hlb"], abs=1e-9)
        assert p["fraction_a"] + p["fraction_b"] == pytest.approx(1.0, abs=1e-12)


def test_every_mode_at_once_agrees(capsys):
    # triples, the rules on record, a structure, a bench series and a fit back from its scores, in one request
    scores = ((5.37, 0), (6.44, 0), (7.51, 0), (8.58, 0), (9.65, 1), (10.72, 1), (11.79, 1), (12.86, 0), (13.93, 0))
    lib = solvsel.hlb(target=12, triples=True, top=4, jurisdictions=("EU",), smiles="CCCCCCCCCCCCOCCO",
                      series=("sorbitan monooleate", "polysorbate 80"), span=(5.37, 13.93), scores=scores).to_dict()
    argv = ["hlb", "--target", "12", "--triples", "--top", "4", "--jurisdiction", "EU", "--smiles",
            "CCCCCCCCCCCCOCCO", "--series", "sorbitan monooleate,polysorbate 80", "--span", "5.37:13.93",
            "--scores", _text(scores), "--json"]
    assert main(argv) == 0
    cli = json.loads(capsys.readouterr().out)
    assert cli == json.loads(json.dumps(lib))
    assert set(cli) >= {"required_hlb", "pairs", "triples", "emulsifier_rules", "structure", "series", "fit"}


def test_a_purpose_gives_the_same_rules_from_the_library_and_the_command_line(capsys):
    # the emulsifiers' rules judged for a product added to the finished drink; an emulsifier with no rule on record
    # stays "no data", never allowed (the emulsion screen has no rules part, so two doors here)
    lib = solvsel.hlb(target=12, top=3, jurisdictions=("US", "EU"), purpose="finished_food").to_dict()
    argv = ["hlb", "--target", "12", "--top", "3", "--jurisdiction", "US,EU", "--purpose", "finished_food", "--json"]
    assert main(argv) == 0
    cli = json.loads(capsys.readouterr().out)
    assert cli == json.loads(json.dumps(lib))
    assert cli["emulsifier_rules"] and all(r["status"] != "GMP" or r["purposes"] for r in cli["emulsifier_rules"])
    assert cli["audit"]["tables_sha256"]


def test_the_emulsion_screen_shows_the_library_answer():
    pytest.importorskip("textual")
    from textual.widgets import Input

    from solvsel.tui.app import create_app
    from solvsel.tui.emulsion import PAIR_HEADERS, PAIRS_SHOWN

    async def go():
        app = create_app(start="emulsion")
        async with app.run_test(size=(160, 45)) as pilot:
            await pilot.pause()
            for case in CASES:
                screen = app.screen
                screen.query_one("#em-hlb-oil", Input).value = _text(case["oil"])
                screen.query_one("#em-emulsifiers", Input).value = ", ".join(case.get("emulsifiers", ()))
                screen.query_one("#em-rhlb", Input).value = _text(case.get("rhlb", ()))
                await pilot.press("ctrl+r")
                await pilot.pause()
                assert screen.hlb_result is not None
                # the screen pairs with no smallest fraction and shows its first rows
                lib = solvsel.hlb(**case, min_fraction=0.0, top=PAIRS_SHOWN).to_dict()
                assert _essentials(screen.hlb_result.to_dict()) == _essentials(lib)
                grid = screen.query_one("#em-pairs")
                assert grid.row_count == len(lib["pairs"])
                if lib["pairs"]:  # the columns by their headings
                    row = dict(zip(PAIR_HEADERS, (str(c) for c in grid.get_row_at(0))))
                    first = lib["pairs"][0]
                    assert [row["emulsifier A"], row["share A"], row["emulsifier B"], row["share B"]] == [
                        first["a"], f"{first['fraction_a']:.2f}", first["b"], f"{first['fraction_b']:.2f}"]
            # a mistake in the HLB fields is told in the HLB block with the field's label, not an option
            # of the command line (the drink's answer stays in view)
            app.screen.query_one("#em-hlb-oil", Input).value = "d-limonene=70, medium-chain triglycerides=20"
            await pilot.press("ctrl+r")
            await pilot.pause()
            said = str(app.screen.query_one("#em-hlb").render())
            assert app.screen.hlb_result is None and "oils for the required HLB" in said
            assert "sum to 90" in said and "--" not in said

    asyncio.run(go())


def test_a_bad_request_names_the_field(capsys):
    with pytest.raises(InputError) as info:
        solvsel.HlbRequest(oil=(("d-limonene", 100),), target=12)
    assert info.value.param == "target"
    with pytest.raises(InputError) as info:
        solvsel.hlb(target=12, jurisdictions=("UK",))
    assert info.value.param == "jurisdictions"
    with pytest.raises(InputError) as info:
        solvsel.hlb(series=("polysorbate 80",))
    assert info.value.param == "series" and "--" not in info.value.message
    with pytest.raises(InputError) as info:
        solvsel.hlb(target=12, emulsifiers=("polysorbate 80", "gum arabic"))
    assert info.value.param == "emulsifiers" and "biopolymer" in info.value.message
    assert main(["hlb", "--target", "12", "--jurisdiction", "UK"]) == 2
    assert "--jurisdiction: expected" in capsys.readouterr().err
    assert main(["hlb", "--series", "polysorbate 80"]) == 2
    assert "--series: expected two emulsifiers" in capsys.readouterr().err
