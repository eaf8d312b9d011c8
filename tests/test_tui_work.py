"""The work on screen saved as a workspace and opened again, and the result on screen exported as a
report, through the UI's own keys and dialogs (the formats belong to solvsel.data.workspace and
solvsel.jobs.report; here: the UI hands them what is on screen, and reads back what was saved)."""

from __future__ import annotations

import asyncio
import json

import pytest

pytest.importorskip("textual")

from solvsel.tui.app import create_app  # noqa: E402

from _tui_helpers import settle as _settle  # noqa: E402


async def _answer(app, pilot, key: str, text: str):
    """Press ``key`` (a command asking for a file name) and type ``text`` into its dialog."""
    await pilot.press(key)
    await _settle(app, pilot)
    assert type(app.screen).__name__ == "PathDialog"
    app.screen.query_one("#path-input").value = text
    await pilot.press("enter")
    await _settle(app, pilot)


def test_save_open_and_export_through_the_ui(tmp_path):
    from solvsel.data.workspace import open_workspace
    from solvsel.science.target import target_from_hsp

    async def go():
        app = create_app()
        async with app.run_test(size=(160, 45)) as pilot:
            await _settle(app, pilot)
            screen = app.screen
            screen.query_one("#temp").value = "30"
            screen.query_one("#exclude").value = "ethanol"
            screen.query_one("#load").value = "5%"
            screen.query_one("#storage").value = "2:30"
            screen.action_search()
            await _settle(app, pilot)
            app.session.set_target(target_from_hsp((17.5, 4.0, 9.0, 7.0), name="typed"))
            screen.on_screen_resume()
            await _settle(app, pilot)
            path = tmp_path / "trial.json"
            await _answer(app, pilot, "ctrl+s", str(path))
            ws = open_workspace(path)
            assert ws.target == {"hsp": [17.5, 4.0, 9.0, 7.0]}
            assert ws.constraints["temp_C"] == 30.0 and ws.constraints["exclude"] == ["ethanol"]
            assert ws.constraints["load"] == pytest.approx(0.05) and ws.constraints["storage_C"] == "2:30"
            assert ws.formulas and ws.emulsions  # the flavour's and the drink's fields, as the forms hold them

            # the result on screen as a report: the blend search's JSON document, with its figures named
            out = tmp_path / "blends.md"
            await _answer(app, pilot, "f10", str(out))
            assert out.exists() and out.with_suffix(".html").exists()
            data = json.loads(out.with_suffix(".json").read_text(encoding="utf-8"))
            assert [r["rank"] for r in data["results"]] == [b.rank for b in screen.result.results]

        other = create_app()
        async with other.run_test(size=(160, 45)) as pilot:
            await _settle(other, pilot)
            await _answer(other, pilot, "ctrl+l", str(path))
            await _settle(other, pilot)
            t = other.session.target
            assert (t.dD, t.dP, t.dH, t.r0) == (17.5, 4.0, 9.0, 7.0)
            assert other.screen.query_one("#temp").value == "30"
            assert other.screen.query_one("#exclude").value == "ethanol"
            assert other.screen.query_one("#load").value == "5%"
            assert other.screen.query_one("#storage").value == "2:30"
            # a file that is not a workspace: the dialog, and the work on screen stays
            bad = tmp_path / "bad.json"
            bad.write_text("{not json", encoding="utf-8")
            await _answer(other, pilot, "ctrl+l", str(bad))
            assert type(other.screen).__name__ == "ErrorDialog"
            assert other.session.target is t

    asyncio.run(go())
