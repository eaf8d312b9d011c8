"""The terminal UI survives an impatient person: 300 random keys and clicks across every screen with a
fixed seed (no exception, no internal error, no step unanswered for 10 s), then absurd text pasted into
every field (a dialog or a quiet refusal, never a crash).  3,000 steps: ``bench/bench_tui_soak.py``."""

from __future__ import annotations

import asyncio

import pytest

pytest.importorskip("textual")


@pytest.mark.slow
def test_300_random_keys_and_clicks_then_absurd_text_in_every_field():
    from solvsel.tui.app import create_app
    from solvsel.tui.dialogs import ErrorDialog
    from solvsel.tui.soak import _answer, paste_everywhere, random_walk

    async def go():
        app = create_app()
        async with app.run_test(size=(100, 30)) as pilot:
            await _answer(app, pilot, "opening")
            counts = await random_walk(app, pilot, 300, seed=18)
            assert counts["keys"] + counts["clicks"] == 300 and counts["clicks"] > 30
            pasted = await paste_everywhere(app, pilot)
            assert pasted >= 25  # every field of every screen
            # the last paste (absurd text in a field) leaves a dialog in the user's words, or the screen
            assert isinstance(app.screen, ErrorDialog) or app.screen.MODE

    asyncio.run(go())
