"""Random keys and clicks across every screen, and absurd text pasted into every field.

``python -m solvsel.tui.soak [STEPS] [SEED]`` drives the app as an impatient
person would (a fixed seed makes a run repeatable) and fails when the app
raises, shows an internal error, or does not answer within :data:`PATIENCE`
seconds; the test suite runs 300 steps, ``bench/bench_tui_soak.py`` 3,000.
"""

from __future__ import annotations

import asyncio
import random
import sys
import time

#: Seconds the app may take to answer one key or click (a search included) before the run fails.
PATIENCE = 10.0

#: Keys of the run: every screen key, the tabs, the forms, the lists, typing, Enter and Escape.
KEYS = ([f"f{i}" for i in range(1, 9)] + [f"alt+{i}" for i in range(1, 9)]
        + ["tab", "shift+tab", "ctrl+t", "ctrl+b", "ctrl+o", "ctrl+r", "ctrl+g", "ctrl+f", "escape", "enter",
           "up", "down", "left", "right", "pagedown", "pageup", "home", "end", "space", "backspace", "slash",
           "v", "z", "f9", "ctrl+p"]
        + list("aeio0123456789.,=:%-"))

#: Text a person might paste by mistake: control characters, escapes, huge numbers, formulas, emoji,
#: a path that climbs out, thousands of separators.
ABSURD = [
    "\x00\x07\x1b[2J\x1b]0;title\x07" + "x" * 300,
    "1e309, -inf, nan, 0x1F, ﹣1",
    "=HYPERLINK(\"http://x\")" + "🍋" * 60,
    "../../../../etc/passwd;" + "a=1," * 40,
    "   \t\r\n  ",
]


class SoakFailure(AssertionError):
    """The app did not survive the run: it raised, showed an internal error or stopped answering."""


async def _answer(app, pilot, what: str) -> None:
    """Wait until the app has answered (its workers done), at most :data:`PATIENCE` seconds."""
    from textual.worker import WorkerCancelled, WorkerFailed

    try:  # the key or click itself was waited for by the pilot; a search it started is waited for here
        await asyncio.wait_for(app.workers.wait_for_complete(), PATIENCE)
    except asyncio.TimeoutError:
        raise SoakFailure(f"no answer within {PATIENCE:g} s after {what}") from None
    except (WorkerCancelled, WorkerFailed):
        pass  # a search stopped by a newer one; a fault shows as an internal error, checked next
    _check_dialog(app, what)


def _check_dialog(app, what: str) -> None:
    from .dialogs import ErrorDialog

    if isinstance(app.screen, ErrorDialog) and app.screen.error_title.lower().startswith("internal"):
        raise SoakFailure(f"internal error after {what}: {app.screen.error_message}")


async def random_walk(app, pilot, steps: int, seed: int) -> dict:
    """``steps`` random keys and clicks (one in five a click somewhere on the screen); returns counts."""
    rng = random.Random(seed)
    width, height = app.size
    counts = {"keys": 0, "clicks": 0, "dialogs": 0}
    for i in range(steps):
        if rng.random() < 0.2:
            x, y = rng.randrange(width), rng.randrange(height)
            what = f"step {i}: a click at ({x}, {y}) on {type(app.screen).__name__}"
            await pilot.click(offset=(x, y))
            counts["clicks"] += 1
        else:
            key = rng.choice(KEYS)
            what = f"step {i}: key {key} on {type(app.screen).__name__}"
            await pilot.press(key)
            counts["keys"] += 1
        await _answer(app, pilot, what)
        if type(app.screen).__name__ == "ErrorDialog":
            counts["dialogs"] += 1
    return counts


async def paste_everywhere(app, pilot, texts=ABSURD) -> int:
    """Paste each of ``texts`` into every field of every screen and press Enter; returns the pastes."""
    from textual import events
    from textual.widgets import Input

    from .base import SCREENS

    pasted = 0
    for k, (mode, _, _) in enumerate(SCREENS):
        app.switch_mode(mode)
        await _answer(app, pilot, f"opening {mode}")
        screen = app.screen
        for j, field in enumerate(screen.query(Input)):
            text = texts[(k + j) % len(texts)]
            while app.screen is not screen:  # a dialog of the paste before
                await pilot.press("escape")
                await _answer(app, pilot, "closing a dialog")
            field.value = ""
            field.focus()
            await pilot.pause()
            field.post_message(events.Paste(text))
            await pilot.press("enter")
            pasted += 1
            await _answer(app, pilot, f"pasting into {mode} #{field.id}")
    return pasted


async def _main(steps: int, seed: int, size=(120, 36)) -> dict:
    from .app import create_app

    app = create_app()
    async with app.run_test(size=size) as pilot:
        await _answer(app, pilot, "opening")
        counts = await random_walk(app, pilot, steps, seed)
        counts["pasted"] = await paste_everywhere(app, pilot)
    return counts


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    steps = int(argv[0]) if argv else 300
    seed = int(argv[1]) if len(argv) > 1 else 18
    start = time.perf_counter()
    counts = asyncio.run(_main(steps, seed))
    print(f"{steps} steps (seed {seed}): {counts}, {time.perf_counter() - start:.1f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
