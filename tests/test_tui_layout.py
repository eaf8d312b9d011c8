"""The terminal UI as a person sees it, at a laptop's 100x30 and at 160x45.

Each check reads the screen's text (the SVG the app exports, read back with
:func:`solvsel.tui.screenshots.svg_text`), so it sees what is on screen and not
what a widget holds: the verdict columns of every result table, the map's ticks
against its points, the cautions of the selection, the keys.  One app a test
(an app costs about a second).
"""

from __future__ import annotations

import asyncio
import re
from pathlib import Path

import pytest

pytest.importorskip("textual")

from solvsel.tui.app import create_app  # noqa: E402
from solvsel.tui.screenshots import svg_text  # noqa: E402

from _tui_helpers import screen_text as _screen_text, settle as _settle, until as _until  # noqa: E402

SCREENS_DIR = Path(__file__).resolve().parents[1] / "screens"

#: Result tables by screen: (table id, tab to open first or None, the verdict headers that must be on screen).
VERDICTS = {
    "carriers": [("rank-grid", "tab-single", ("Ra MPa½", "RED", "allowed", "flammable")),
                 ("blend-grid", "tab-blends", ("Ra MPa½", "RED", "one phase", "flammable")),
                 ("dropped-grid", "tab-dropped", ("Ra MPa½", "why it was dropped")),
                 ("excluded-grid", "tab-excluded", ("why it is not in the pool",))],
    "limits": [("lim-checks", None, ("ok", "binds", "of limit", "max dose")),
               ("lim-clarity", None, ("clear?", "mg/kg in drink", "dissolves mg/kg"))],
    "emulsion": [("em-pairs", None, ("blend HLB", "same tail")), ("em-weighting", None, ("verdict", "mg/kg in drink"))],
    "mixing": [("mix-pairs", None, ("one phase", "basis", "chi / chi crit"))],
    "tables": [("table-grid", None, ("name", "dD MPa½", "dP MPa½", "dH MPa½"))],
}


def run(coro):
    return asyncio.run(coro)


async def _verdicts_on_screen(app, pilot):
    """Every result table shows its verdict columns on screen; the form folds at 100 columns."""
    size = app.size
    await _settle(app, pilot)
    for mode, tables in VERDICTS.items():
        app.switch_mode(mode)
        await _settle(app, pilot)
        if mode == "mixing":
            await pilot.press("ctrl+r")
            await _settle(app, pilot)
        for grid_id, tab, headers in tables:
            if tab:
                app.screen.query_one("#carrier-tabs").active = tab
                await _settle(app, pilot)
            grid = app.screen.query_one(f"#{grid_id}")
            grid.scroll_visible(animate=False)
            await _settle(app, pilot)
            text = _screen_text(app)
            line = next((ln for ln in text if headers[0] in ln and headers[-1] in ln), None)
            assert line is not None, (size, mode, grid_id, "\n".join(text))
            # in the order given, each header whole
            assert [line.index(h) for h in headers] == sorted(line.index(h) for h in headers)
            assert grid.row_count > 0, (mode, grid_id)
    # a screen opens with its form folded into one line at 100 columns, and Ctrl+O shows the form
    narrow = size[0] < 120
    app.switch_mode("limits")
    await _settle(app, pilot)
    assert app.screen.has_class("-form-folded") == narrow
    summary = app.screen.query_one("#form-summary")
    assert summary.display == narrow
    await pilot.press("ctrl+o")
    await _settle(app, pilot)
    assert app.screen.has_class("-form-folded") != narrow
    if narrow:
        await _until(pilot, lambda: app.screen.focused is app.screen.query_one("#lim-formula"))


def test_the_verdict_columns_of_every_result_table_are_on_screen_at_160x45():
    async def go():
        app = create_app()
        async with app.run_test(size=(160, 45)) as pilot:
            await _verdicts_on_screen(app, pilot)

    run(go())


@pytest.mark.slow
def test_at_100x30_verdicts_keys_map_ticks_cautions_and_wording():
    async def go():
        from solvsel.science.target import target_from_hsp
        from solvsel.tui.widgets import axis_ticks

        app = create_app()
        async with app.run_test(size=(100, 30)) as pilot:
            await _verdicts_on_screen(app, pilot)
            await pilot.press("f3")
            await _settle(app, pilot)
            screen = app.screen
            screen.query_one("#carrier-tabs").active = "tab-blends"
            await _settle(app, pilot)

            # the cautions pane never names a liquid the selected blend does not hold
            names = {r.name for r in app.session.catalog.solvent_records()}
            for b in screen.result.results:
                screen.show_blend(b)
                held = {c.name for c in b.components}
                for caution in screen.query_one("#carrier-cautions").cautions:
                    named = caution.split(":")[0]
                    assert named not in names or named in held, (b.label, caution)
            # the target line keeps its parts apart even where spaces are lost
            line = _screen_text(app)[1]
            assert re.search(r"Target: cannabidiol · dD 17\.8", line), line

            # screens by Alt+digit and by the command palette's commands
            for key, mode in (("alt+1", "tables"), ("alt+6", "limits"), ("alt+3", "carriers")):
                await pilot.press(key)
                await _until(pilot, lambda: app.current_mode == mode)
            titles = [c.title for c in app.get_system_commands(app.screen)]
            assert {"Go to Tables", "Go to Map", "Go to Mixing"} <= set(titles)

            # the tables screen speaks in words with units, never a table's column id
            await pilot.press("f1")
            await _settle(app, pilot)
            text = "\n".join(_screen_text(app))
            assert "dD MPa½" in text and "_MPa05" not in text

            # previous tab: from the first way of giving a target back to the last, the path field focused
            await pilot.press("f2")
            await _settle(app, pilot)
            target = app.screen
            await pilot.press("ctrl+b")
            await _until(pilot, lambda: target.query_one("#target-tabs").active == "from-bench")
            await _until(pilot, lambda: target.focused is target.query_one("#bench-path"))

            # a typed target at dH 20 sits on the map's tick of 20 (the same transform for points and ticks)
            app.session.set_target(target_from_hsp((17.0, 3.0, 20.0), name="typed"))
            await pilot.press("f3")  # the carriers rank the liquids for it
            await _settle(app, pilot)
            await pilot.press("f4")
            await _settle(app, pilot)
            m = app.screen.query_one("#hsp-map")
            ax = m.axes()
            assert 20.0 in axis_ticks(ax.x0, ax.x1, ax.cols)
            text = _screen_text(app)
            row, col = ax.cell(20.0, 3.0)
            top = 2 + 1  # the strip and the target line, then the map's border
            assert text[top + row][1 + m.LEFT + col] == "+"
            axis_line, labels = text[top + ax.rows], text[top + ax.rows + 1]
            assert axis_line[1 + m.LEFT + col] == "┬"
            assert labels[1 + m.LEFT + col:].startswith("20")
            # the best liquids are named on the map, and no two labels touch
            ranked = [r.name for r in app.session.ranking.results[:9]]
            body = "\n".join(text[top:top + ax.rows])
            assert any(name in body for name in ranked)
            # the cursor names the liquid under it
            (r, c) = next(k for k, v in m._cell_labels.items() if "typed" in v)
            m.cursor = (r, c)
            await _settle(app, pilot)
            assert "typed" in str(m.border_subtitle)

            # ripening: held back by an insoluble share at or above the published threshold, said without
            # a contradiction (Ostwald ripening needs a water-soluble oil; 20 % inhibitor, McClements 2012)
            await pilot.press("f5")
            await _settle(app, pilot)
            em = app.screen
            em.query_one("#em-oil").value = "d-limonene=70, sucrose acetate isobutyrate=30"
            em.compute()
            await _settle(app, pilot)
            said = str(em.query_one("#em-ripening").render())
            assert em.design.ripening.warn is False and "held back" in said and "no warning" not in said
            # a hydrocolloid emulsifier has its own field and level: no dialog, its level in the drink shown
            em.query_one("#em-emulsifier").value = "gum arabic"
            em.query_one("#em-emulsifier-level").value = "1.2"
            em.compute()
            await _settle(app, pilot)
            assert type(app.screen).__name__ == "EmulsionScreen"
            assert em.design.emulsifier.name == "gum arabic" and em.design.emulsifier.ratio_to_oil == 1.2
            assert "emulsifier gum arabic" in str(em.query_one("#em-design").render())

            # limits: one way of writing numbers along the chain (no thousands separator beside a decimal point)
            await pilot.press("f6")
            await _settle(app, pilot)
            grid = app.screen.query_one("#lim-stages")
            cells = [str(c) for i in range(grid.row_count) for c in grid.get_row_at(i)[1:]]
            assert cells and not any("," in c for c in cells)

    run(go())


def test_the_screenshots_say_what_the_app_draws_now():
    """The stored pictures of the screens that need no search match the app's text at 100x30 (all of them:
    ``python -m solvsel.tui.screenshots`` regenerates every picture at both sizes)."""
    from solvsel.tui.screenshots import shoot

    def text(svg: str) -> list[str]:
        # the audit line's checksum of the tables changes with any edit of a table, not with what the app draws
        return [re.sub(r"SHA-256 [0-9a-f]+", "SHA-256 (checksum)", line) for line in svg_text(svg)]

    shots = run(shoot("tables", (100, 30)))
    for stem, svg in shots.items():
        stored = SCREENS_DIR / f"{stem}-100x30.svg"
        assert stored.exists(), f"{stored} missing: run python -m solvsel.tui.screenshots"
        old, new = text(stored.read_text(encoding="utf-8")), text(svg)
        assert old == new, f"{stored.name} is out of date: run python -m solvsel.tui.screenshots"
