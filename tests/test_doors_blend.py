"""The same ``blend`` request gives the same answer from every door: the library job,
the command line (``solvsel blend --json``, in process) and the carriers screen of the UI;
and ``blend --max-components 1`` keeps and leaves out the same liquids as ``rank``.

The reference is the library job's own result; its numbers are checked against
published values in tests/test_blends.py.
"""

from __future__ import annotations

import asyncio
import csv
import json
from pathlib import Path

import numpy as np
import pytest

from solvsel.cli import main
from solvsel.cli._common import to_jsonable
from solvsel.data.catalog import load_catalog
from solvsel.jobs.blend import BlendRequest, BlendResult, blend
from solvsel.jobs.rank import rank

from _tui_helpers import settle as _settle

#: Carrier blends of two liquids for the demo's solute, warm, with a boiling window.
REQUEST = dict(solute="cannabidiol", use="carrier", jurisdiction="EU", max_components=2, temp_C=30.0,
               bp_min_C=150.0, top=10)
ARGV = ["blend", "--solute", "cannabidiol", "--use", "carrier", "--jurisdiction", "EU", "--max-components", "2",
        "--temp", "30", "--bp-range", "150:", "--top", "10", "--json"]
TABLE = Path(__file__).parents[1] / "tables" / "solvents.csv"


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


@pytest.fixture(scope="module")
def library(cat) -> BlendResult:
    return blend(BlendRequest(**REQUEST), catalog=cat)


def _cli(capsys, argv):
    code = main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def _same_blends(got, ref) -> None:
    """Same liquids, fractions, Ra and one-phase verdicts, blend by blend."""
    assert [b.names for b in got] == [b.names for b in ref]
    for g, r in zip(got, ref):
        assert [c.volume_fraction for c in g.components] == pytest.approx([c.volume_fraction for c in r.components],
                                                                           abs=1e-12)
        assert g.ra == pytest.approx(r.ra, rel=1e-12)
        assert (g.one_phase, g.phase_basis) == (r.one_phase, r.phase_basis)


def test_library_keywords_and_request_agree(library, cat):
    assert library.success and library.results
    again = blend(catalog=cat, **REQUEST)
    assert again.to_dict() == library.to_dict()
    frame = library.to_frame()
    assert list(frame["blend"]) == [b.label for b in library.results]
    assert list(frame["ra"]) == pytest.approx([b.ra for b in library.results], rel=1e-12)


def test_command_line_prints_the_library_result(library, capsys):
    code, out, _ = _cli(capsys, ARGV)
    assert code == 0
    doc = json.loads(out)
    assert doc == json.loads(json.dumps(to_jsonable(library.to_dict())))
    for got, ref in zip(doc["results"], library.results):
        assert [c["name"] for c in got["components"]] == list(ref.names)
        assert [c["volume_fraction"] for c in got["components"]] == pytest.approx(
            [c.volume_fraction for c in ref.components], abs=1e-12)
        assert got["ra"] == pytest.approx(ref.ra, rel=1e-12) and got["one_phase"] == ref.one_phase


def test_the_carriers_screen_shows_the_library_result(library, cat):
    async def go():
        from solvsel.tui.app import create_app
        from solvsel.tui.carriers import BlendDone

        app = create_app(catalog=load_catalog())
        async with app.run_test(size=(160, 45)) as pilot:
            await _settle(app, pilot)
            screen = app.screen
            form = {"#use": "carrier", "#jurisdiction": "EU", "#max-components": 2, "#temp": "30",
                    "#bp-window": "150:", "#min-flash": "", "#exclude": "", "#rejects": ""}
            for selector, value in form.items():
                screen.query_one(selector).value = value
            screen.action_search()
            await _settle(app, pilot)
            assert isinstance(screen.messages[-1], BlendDone)
            got = screen.result
            _same_blends(got.results, library.results)
            assert [(d.names, d.reason) for d in got.dropped] == [(d.names, d.reason) for d in library.dropped]
            assert [(e.name, e.reason) for e in got.excluded] == [(e.name, e.reason) for e in library.excluded]
            grid = screen.query_one("#blend-grid")
            # the label is the last column, cut with an ellipsis where the screen is narrow (whole in the pane)
            shown = [str(grid.get_row_at(i)[-1]) for i in range(grid.row_count)]
            full = [b.label + (f" (+{len(b.alternatives)} alike)" if b.alternatives else "") for b in library.results]
            assert len(shown) == len(full)
            assert all(s == f or (s.endswith("…") and f.startswith(s[:-1])) for s, f in zip(shown, full)), shown

            # the extraction preset (rejects at -20 C, for the demo's purpose: a food ingredient) gives the
            # library's answer to the same request
            await pilot.press("ctrl+g")
            await _settle(app, pilot)
            x = app.session.scenario.extraction
            assert screen.query_one("#purpose").value == x["purpose"] == "food_ingredient"
            ref = blend(solute="cannabidiol", use=x["use"], jurisdiction=x["jurisdiction"], purpose=x["purpose"],
                        temp_C=x["temp_C"], max_components=x["max_components"], rejects=tuple(x["reject"]), top=10,
                        catalog=cat)
            assert ref.results and all(b.rejects for b in ref.results)
            _same_blends(screen.result.results, ref.results)
            assert [b.selectivity for b in screen.result.results] == pytest.approx(
                [b.selectivity for b in ref.results], rel=1e-12)

    asyncio.run(go())


def test_a_purpose_gives_the_same_blends_from_the_library_and_the_command_line(cat, capsys):
    # extraction blends for a food ingredient (the carriers screen's extraction preset holds the UI to the same)
    ref = blend(solute="cannabidiol", use="extraction", jurisdiction="EU", purpose="food_ingredient",
                max_components=2, top=5, catalog=cat)
    code, out, _ = _cli(capsys, ["blend", "--solute", "cannabidiol", "--use", "extraction", "--jurisdiction", "EU",
                                 "--purpose", "food_ingredient", "--max-components", "2", "--top", "5", "--json"])
    assert code == 0
    doc = json.loads(out)
    assert doc == json.loads(json.dumps(to_jsonable(ref.to_dict())))
    assert doc["constraints"]["purpose"] == "food_ingredient" and doc["audit"]["rules_applied"]


def test_cancelled_search_is_a_result_not_an_error(cat):
    res = blend(catalog=cat, progress=lambda done, total: False, **REQUEST)
    assert not res.success and res.message.startswith("cancelled") and not res.results


# --------------------------------------------------------------- one pool for rank and blend


def _own_row_without_alpha(tmp_path, name: str) -> Path:
    """A user's solvents file with the bundled row of ``name`` less its expansion coefficient."""
    with TABLE.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    row = dict(next(r for r in rows if r["name"] == name), alpha_1_K="")
    out = tmp_path / "own_solvents.csv"
    with out.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=list(rows[0]))
        w.writeheader()
        w.writerow(row)
    return out


def test_single_liquid_blends_and_the_ranking_use_one_pool_at_60_C(tmp_path, capsys):
    # At 60 C diethyl ether, acetone, dichloromethane ... boil (CRC Handbook boiling points): both
    # jobs leave them out with the same reason; the user's triacetin row has no expansion
    # coefficient: both keep it at its 25 C values, with the same note.
    own = _own_row_without_alpha(tmp_path, "triacetin")
    mine = load_catalog(own={"solvents": [str(own)]})
    fields = dict(hsp=(17.8, 3.9, 9.9), temp_C=60.0, food=True, max_cost=4)
    ranked = rank(all=True, catalog=mine, **fields)
    singles = blend(max_components=1, top=200, catalog=mine, **fields)
    assert {b.names[0] for b in singles.results} == {r.name for r in ranked.results}
    left = [(d.name, d.filter, d.reason) for d in ranked.dropped]
    assert [(e.name, e.filter, e.reason) for e in singles.excluded] == left
    assert any(f == "temperature" and "boil" in why for _, f, why in left)
    assert {"food law", "temperature"} <= {f for _, f, _ in left}
    by_name = {r.name: r for r in ranked.results}
    for b in singles.results:
        r = by_name[b.names[0]]
        assert b.ra == pytest.approx(r.ra, rel=1e-12)
        np.testing.assert_allclose([b.dD, b.dP, b.dH], [r.dD, r.dP, r.dH], rtol=1e-12)
    tri = next(b for b in singles.results if b.names == ("triacetin",))
    assert tri.notes == ("triacetin: no expansion coefficient: HSP kept at 25 C",)
    assert "no expansion coefficient: HSP kept at 25 C" in by_name["triacetin"].notes
    np.testing.assert_allclose([tri.dD, tri.dP, tri.dH], mine.solvent("triacetin").hsp)

    # the same through the command line
    common = ["--own-solvents", str(own)]
    opts = ["--hsp", "17.8,3.9,9.9", "--temp", "60", "--food", "--max-cost", "4", "--json"]
    code, out, _ = _cli(capsys, common + ["rank", *opts, "--all"])
    assert code == 0
    rank_doc = json.loads(out)
    code, out, _ = _cli(capsys, common + ["blend", *opts, "--max-components", "1", "--top", "200"])
    assert code == 0
    blend_doc = json.loads(out)
    assert {b["components"][0]["name"] for b in blend_doc["results"]} == {r["name"] for r in rank_doc["results"]}
    assert blend_doc["excluded"] == rank_doc["dropped"]
