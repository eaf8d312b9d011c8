"""The blend search's one bar over every step, Esc at any step, the trade-off picture beside the blends,
and the load and clarity panel of the carriers screen.

The bar and the cancelling are checked against the ``blend`` job's own reports (``step_progress``); the
picture against the figure data the report draws (:func:`solvsel.jobs.figures.pareto`) and its own
ticks; the panel against the ``load`` and ``clarity`` jobs run on the same requests (the same answer
from every door).
"""

from __future__ import annotations

import asyncio
import threading

import pytest

pytest.importorskip("textual")

from solvsel.data.catalog import load_catalog  # noqa: E402
from solvsel.jobs.blend import blend  # noqa: E402
from solvsel.tui.app import create_app  # noqa: E402

from _tui_helpers import screen_text, settle, until  # noqa: E402

STEPS = ("combinations", "checks", "describing")
#: The demo's carrier search, two liquids at most (quick).
SMALL = dict(solute="cannabidiol", use="carrier", jurisdiction="EU", max_components=2, top=8)


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def test_the_job_reports_every_step_in_order_and_stops_at_any(cat):
    seen = []
    res = blend(catalog=cat, step_progress=lambda step, done, total: seen.append((step, done, total)), **SMALL)
    assert res.success
    # the steps in order, each counted up to no more than its total
    order = [s for i, (s, _, _) in enumerate(seen) if i == 0 or seen[i - 1][0] != s]
    assert order == list(STEPS)
    for step in STEPS:
        counts = [(d, t) for s, d, t in seen if s == step]
        assert all(0 <= d <= t for d, t in counts) and [d for d, _ in counts] == sorted(d for d, _ in counts)
    # the count of the combinations ends at every combination searched; the checks at the blends kept of the
    # blends wanted (5 x top, at least 50); the description at the last blend described
    assert seen[[s for s, _, _ in seen].index("checks") - 1][1:] == (res.counts["combinations"],) * 2
    last_check = [(d, t) for s, d, t in seen if s == "checks"][-1]
    assert last_check == (res.counts["kept"], max(5 * SMALL["top"], 50))
    assert seen[-1][0] == "describing" and seen[-1][1] == seen[-1][2] >= len(res.results)
    # reporting does not change the answer
    plain = blend(catalog=cat, **SMALL)
    assert [b.label for b in plain.results] == [b.label for b in res.results]
    # False at any step stops the search there: no blends, a message saying where
    for step in STEPS:
        stopped = blend(catalog=cat, step_progress=lambda s, d, t, step=step: s != step, **SMALL)
        assert not stopped.success and not stopped.results
        assert stopped.message.startswith(f"cancelled: stopped in the {step} step")


def _gate(monkeypatch, wanted: str):
    """Hold the UI's blend search at the first report of step ``wanted`` until released; record what the
    UI's own callback answers afterwards (False: it asked the job to stop)."""
    import solvsel.jobs.blend as blend_module

    reached, release, answers = threading.Event(), threading.Event(), []
    real = blend_module.blend

    def held(request=None, *, step_progress=None, **kwargs):
        def gated(step, done, total):
            ok = step_progress(step, done, total)
            if step == wanted and not reached.is_set():
                reached.set()
                release.wait(10)
                ok = step_progress(step, done, total)
                answers.append(ok)
            return ok

        return real(request, step_progress=gated, **kwargs)

    monkeypatch.setattr(blend_module, "blend", held)
    return reached, release, answers


def test_one_bar_over_every_step_old_lists_greyed_and_esc_cancels_at_any_step(monkeypatch):
    async def go():
        from solvsel.tui.carriers import STEPS as BAR

        app = create_app()
        async with app.run_test(size=(160, 45)) as pilot:
            await settle(app, pilot)
            screen = app.screen
            grid = screen.query_one("#blend-grid")
            before = [str(c) for c in grid.get_row_at(0)]
            tabs = screen.query_one("#carrier-tabs")
            for k, step in enumerate(STEPS, 1):
                reached, release, answers = _gate(monkeypatch, step)
                screen.action_search()
                await until(pilot, reached.is_set)
                await until(pilot, lambda: screen.messages and getattr(screen.messages[-1], "step", "") == step)
                # the one bar stands within this step's share, the line says which step of three
                start, share, _ = BAR[step]
                bar = screen.query_one("#search-progress")
                assert 100 * start <= bar.progress <= 100 * (start + share)
                assert f"step {k} of 3" in str(screen.query_one("#search-status").render())
                # the previous search's lists stay, greyed, their tabs labelled old
                assert grid.has_class("-stale") and str(tabs.get_tab("tab-blends").label) == "Blends (old)"
                assert [str(c) for c in grid.get_row_at(0)] == before
                await pilot.press("escape")
                release.set()
                await settle(app, pilot)
                assert answers == [False], step  # the job was told to stop in this step
                assert "search cancelled" in str(screen.query_one("#search-status").render())
                assert not grid.has_class("-stale") and str(tabs.get_tab("tab-blends").label) == "Blends"
                assert [str(c) for c in grid.get_row_at(0)] == before
                monkeypatch.undo()

    asyncio.run(go())


@pytest.mark.parametrize("size", [(160, 45), (100, 30)])
def test_the_trade_off_front_is_drawn_from_the_reports_data_with_its_points_on_their_ticks(size):
    async def go():
        from solvsel.jobs.figures import pareto
        from solvsel.tui.widgets import axis_ticks

        app = create_app()
        async with app.run_test(size=size) as pilot:
            await settle(app, pilot)
            screen = app.screen
            screen.query_one("#carrier-tabs").active = "tab-front"
            await settle(app, pilot)
            # the picture holds the points of the report's figure, no more, no fewer
            fig = pareto(screen.result.to_dict())
            m = screen.query_one("#front-map")
            assert sorted((p.label, p.x, p.y) for p in m.data.points) == sorted(
                (p["name"], p["x"], p["ra"]) for p in fig.data["points"])
            assert m.data.x_label == fig.data["x_label"]
            # a blend at a round cost (a single liquid's cost class) sits on the tick of that value
            ax = m.axes()
            ticks = [v for v in axis_ticks(ax.x0, ax.x1, ax.cols) if v == int(v)]
            on_tick = [p for p in m.data.points if p.x in ticks]
            assert on_tick, "the demo's blends include single liquids of a whole cost class"
            text = screen_text(app)
            top, left = m.content_region.y, m.content_region.x + m.LEFT
            for p in on_tick:
                row, col = ax.cell(p.x, p.y)
                here = {q.mark for q in m.data.points if ax.cell(q.x, q.y) == (row, col)}
                assert text[top + row][left + col] in here
                assert text[top + ax.rows][left + col] == "┬"
                assert text[top + ax.rows + 1][left + col:].startswith(f"{p.x:g}")
            # and at the height of its Ra: the tick labels of the y axis stand where the same transform puts them
            # (every labelled value inside the plot, at least two of them: one label gives no scale)
            assert len(m.y_tick_values(ax)) >= 2
            for v in m.y_tick_values(ax):
                r = ax.cell(ax.x0, v)[0]
                assert 0 <= r < ax.rows
                assert text[top + r][left - m.LEFT:left].strip() == f"{v:g}┤"

    asyncio.run(go())


def test_the_load_and_clarity_panel_gives_the_jobs_answers_for_the_selection():
    async def go():
        from solvsel.jobs.clarity import clarity
        from solvsel.jobs.load import load
        from solvsel.science.target import target_from_solute

        cat = load_catalog()
        app = create_app(catalog=cat)
        async with app.run_test(size=(160, 45)) as pilot:
            await settle(app, pilot)
            screen = app.screen
            panel = screen.query_one("#carrier-checks")
            # nothing to ask yet: the panel names the field it needs, in the form's words
            assert "load of the target" in str(panel.render())
            # d-limonene (its water solubility on record) at 8 % in the best blend; 0.15 % in a syrup, 1+5 to
            # the drink of 10.5 Brix (the demo's lemon flavour's dose and chain)
            app.session.set_target(target_from_solute(cat, "d-limonene"))
            for field, value in (("#load", "8%"), ("#drink-dose", "0.15%"), ("#storage", "4:25"),
                                 ("#drink-chain", "syrup d=1.28; drink 1+5v d=1.04"), ("#drink-brix", "10.5")):
                screen.query_one(field).value = value
            screen.on_screen_resume()
            await settle(app, pilot)
            b = screen.result.results[0]
            assert screen.selected is b
            await until(pilot, lambda: screen.checks is not None)  # the checks run in their own worker
            names = tuple(c.name for c in b.components)
            ref_load = load(solute="d-limonene", carrier=names, load="8%", storage_C="4:25", catalog=cat,
                            fractions=tuple(c.volume_fraction for c in b.components) if len(names) > 1 else None)
            got = screen.checks.load
            assert (got.verdict, got.largest_load, got.basis) == (ref_load.verdict, ref_load.largest_load,
                                                                    ref_load.basis)
            formula = (("d-limonene", 8.0),) + tuple((c.name, 92.0 * c.mass_fraction) for c in b.components)
            ref_clear = clarity(formula=formula, dose="0.15%", chain="syrup d=1.28; drink 1+5v d=1.04", brix=10.5,
                                catalog=cat)
            got = screen.checks.clear
            assert got.verdict == ref_clear.verdict and got.largest_clear_dose == pytest.approx(
                ref_clear.largest_clear_dose)
            assert [(c.name, c.verdict) for c in got.components] == [(c.name, c.verdict)
                                                                       for c in ref_clear.components]
            assert any(c.name == "d-limonene" for c in got.components)  # judged: its solubility is on record
            said = str(panel.render())
            assert f"Dissolves at 8 %: {ref_load.verdict}" in said and f"Drink stays clear: {ref_clear.verdict}" in said
            # the checks' cautions join those of the selection
            box = screen.query_one("#carrier-cautions").cautions
            assert all(c in box for c in ref_clear.cautions)
            # a mistake in a field is said in the panel with the field's label, no dialog
            screen.query_one("#drink-brix").value = "sweet"
            screen.show_blend(b)
            await until(pilot, lambda: screen.checks is not None)
            assert type(app.screen).__name__ == "CarriersScreen"
            assert "sugar in the drink" in str(panel.render())

    asyncio.run(go())
