"""Helpers of the terminal UI's tests: let the app finish its work, wait for a condition, read the screen."""

from __future__ import annotations

import time


async def settle(app, pilot) -> None:
    """Wait for the app's workers (a search cancelled by the user or a newer search, or a fault the screen
    shows, ends the wait too), then give the messages they posted from their threads a turn or two."""
    from textual.worker import WorkerCancelled, WorkerFailed

    try:
        await app.workers.wait_for_complete()
    except (WorkerCancelled, WorkerFailed):
        pass
    await pilot.pause()
    await pilot.pause()


async def until(pilot, condition, seconds: float = 10.0) -> None:
    """Let the app run until ``condition()`` holds (focus changes and dialogs take a few turns of the event
    loop, more on a loaded machine); fail with a clear message if it does not within ``seconds``."""
    end = time.monotonic() + seconds
    while not condition():
        if time.monotonic() > end:
            raise AssertionError(f"condition not reached within {seconds} s")
        await pilot.pause(0.05)


def screen_text(app) -> list[str]:
    """The lines of text on screen, as the app's SVG screenshot draws them."""
    from solvsel.tui.screenshots import svg_text

    return svg_text(app.export_screenshot())
