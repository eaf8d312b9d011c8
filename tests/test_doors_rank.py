"""The same ``rank`` request gives the same answer from every door: the library job,
the command line (``solvsel rank --json``, in process) and the carriers screen of the UI.

The reference is the library job's own result; the numbers it gives are checked
against published values in tests/test_rank.py.
"""

from __future__ import annotations

import asyncio
import json

import pytest

from solvsel.cli import main
from solvsel.cli._common import to_jsonable
from solvsel.data.catalog import load_catalog
from solvsel.errors import OutOfRangeError
from solvsel.jobs.rank import RankRequest, RankResult, rank

from _tui_helpers import settle as _settle

#: A carrier ranking for the demo's solute, warm and with a flash-point limit.
REQUEST = dict(solute="cannabidiol", food=True, use="carrier", jurisdiction="EU", temp_C=40.0, min_flash_C=60.0,
               top=15)
ARGV = ["rank", "--solute", "cannabidiol", "--food", "--use", "carrier", "--jurisdiction", "EU", "--temp", "40",
        "--min-flash", "60", "--top", "15", "--json"]


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


@pytest.fixture(scope="module")
def library(cat) -> RankResult:
    return rank(RankRequest(**REQUEST), catalog=cat)


def _cli(capsys, argv):
    code = main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_library_keywords_and_request_agree(library, cat):
    again = rank(catalog=cat, **REQUEST)
    assert again.to_dict() == library.to_dict()
    assert library.results and library.sorted_by == "ra"
    frame = library.to_frame()
    assert list(frame["name"]) == [r.name for r in library.results]
    assert list(frame["ra"]) == pytest.approx([r.ra for r in library.results], rel=1e-12)


def test_command_line_prints_the_library_result(library, capsys):
    code, out, _ = _cli(capsys, ARGV)
    assert code == 0
    doc = json.loads(out)
    assert doc == json.loads(json.dumps(to_jsonable(library.to_dict())))
    assert [r["name"] for r in doc["results"]] == [r.name for r in library.results]
    assert [r["ra"] for r in doc["results"]] == pytest.approx([r.ra for r in library.results], rel=1e-12)
    assert [d["name"] for d in doc["dropped"]] == [d.name for d in library.dropped]


def test_substitutes_from_the_library_and_the_command_line(cat, capsys):
    ref = rank(like="ethanol", food=True, top=5, temp_C=30.0, catalog=cat)
    code, out, _ = _cli(capsys, ["rank", "--like", "ethanol", "--food", "--top", "5", "--temp", "30", "--json"])
    assert code == 0
    doc = json.loads(out)
    assert [r["name"] for r in doc["results"]] == [r.name for r in ref.results]
    assert [r["ra"] for r in doc["results"]] == pytest.approx([r.ra for r in ref.results], rel=1e-12)


def test_the_carriers_screen_shows_the_library_result(library):
    async def go():
        from solvsel.tui.app import create_app

        app = create_app(catalog=load_catalog())
        async with app.run_test(size=(160, 45)) as pilot:
            await _settle(app, pilot)
            screen = app.screen
            assert app.session.target.name == REQUEST["solute"]
            screen.query_one("#use").value = "carrier"
            screen.query_one("#jurisdiction").value = "EU"
            screen.query_one("#temp").value = "40"
            screen.query_one("#min-flash").value = "60"
            screen.query_one("#bp-window").value = ""
            screen.query_one("#exclude").value = ""
            screen.action_search()
            await _settle(app, pilot)
            got = screen.ranking
            assert [r.name for r in got.results] == [r.name for r in library.results]
            assert [r.ra for r in got.results] == pytest.approx([r.ra for r in library.results], rel=1e-12)
            assert [r.food_status for r in got.results] == [r.food_status for r in library.results]
            assert [d.name for d in got.dropped] == [d.name for d in library.dropped]
            grid = screen.query_one("#rank-grid")
            # the name is the last column, cut with an ellipsis where the screen is narrow (whole in the pane)
            shown = [str(grid.get_row_at(i)[-1]) for i in range(grid.row_count)]
            assert len(shown) == len(library.results)
            assert all(s == r.name or (s.endswith("…") and r.name.startswith(s[:-1]))
                       for s, r in zip(shown, library.results)), shown
            assert app.session.ranking is got  # what the map draws

            # a temperature out of range: the same error, named by the screen's field label
            from solvsel.tui.dialogs import ErrorDialog

            screen.query_one("#temp").value = "500"
            screen.action_search()
            await pilot.pause()
            assert isinstance(app.screen, ErrorDialog)
            assert app.screen.error_message.startswith("temperature:")

    asyncio.run(go())


#: Extraction solvents for a cannabinoid extract for food (a food ingredient), EU.
PURPOSE_REQUEST = dict(solute="cannabidiol", food=True, use="extraction", jurisdiction="EU", purpose="food_ingredient",
                       top=15)
PURPOSE_ARGV = ["rank", "--solute", "cannabidiol", "--food", "--use", "extraction", "--jurisdiction", "EU",
                "--purpose", "food_ingredient", "--top", "15", "--json"]


def test_a_purpose_gives_the_same_answer_from_every_door(cat, capsys):
    ref = rank(catalog=cat, **PURPOSE_REQUEST)
    assert ref.results and all("for food_ingredient" in r.food_status for r in ref.results)
    code, out, _ = _cli(capsys, PURPOSE_ARGV)
    assert code == 0
    doc = json.loads(out)
    assert doc == json.loads(json.dumps(to_jsonable(ref.to_dict())))

    async def go():
        from solvsel.tui.app import create_app

        app = create_app(catalog=load_catalog())
        async with app.run_test(size=(160, 45)) as pilot:
            await _settle(app, pilot)
            screen = app.screen
            for selector, value in {"#use": "extraction", "#jurisdiction": "EU", "#purpose": "food_ingredient",
                                    "#temp": "25", "#min-flash": "", "#bp-window": "", "#exclude": ""}.items():
                screen.query_one(selector).value = value
            screen.action_search()
            await _settle(app, pilot)
            got = screen.ranking
            assert [(r.name, r.food_status) for r in got.results] == [(r.name, r.food_status) for r in ref.results]
            assert [r.ra for r in got.results] == pytest.approx([r.ra for r in ref.results], rel=1e-12)
            assert [(d.name, d.reason) for d in got.dropped] == [(d.name, d.reason) for d in ref.dropped]
            assert got.audit == ref.audit
            # the detail pane shows the audit trail
            assert "tables SHA-256" in str(screen.query_one("#carrier-detail").render())

    asyncio.run(go())


def test_a_bad_field_is_named_by_each_door(cat, capsys):
    with pytest.raises(OutOfRangeError) as err:
        rank(catalog=cat, **{**REQUEST, "temp_C": 500.0})
    assert err.value.param == "temp_C"
    code, _, stderr = _cli(capsys, ["rank", "--solute", "cannabidiol", "--temp", "500"])
    assert code == 2 and "--temp:" in stderr
