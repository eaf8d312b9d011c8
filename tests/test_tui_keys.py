"""Alt+digit as terminals send it: ESC and the digit (xterm's "meta sends escape", tmux, most terminals of
Linux).  Textual's table read those two characters as macOS Option glyphs ("™" for ESC 2), so Alt+2 never
switched screens outside the test pilot, which injects keys by name; the app restores the terminal's meaning."""

from __future__ import annotations

import time

import pytest

pytest.importorskip("textual")


def _keys(data: str) -> list[str]:
    """The key names Textual's terminal parser reads from ``data`` (after its escape delay)."""
    from textual import events
    from textual._xterm_parser import XTermParser

    parser = XTermParser()
    out = list(parser.feed(data))
    time.sleep(0.25)  # longer than the delay after which a lone ESC (or ESC and a character) is reported
    out += list(parser.tick())
    return [e.key for e in out if isinstance(e, events.Key)]


def test_esc_and_a_digit_reach_the_app_as_alt_digit_and_switch_screens_with_a_field_focused():
    from solvsel.tui.app import SolvselApp, alt_digits_as_sent

    alt_digits_as_sent()
    assert _keys("\x1b2") == ["alt+2"]
    assert _keys("\x1b8") == ["alt+8"]
    assert _keys("\x1b") == ["escape"]  # Esc alone stays Esc (it cancels a search)
    assert _keys("\x1bOQ") == ["f2"]  # and the F-keys stay F-keys
    # the screen keys take Alt+digit before a text field with the cursor would type its digit
    bound = {k.strip(): b for b in SolvselApp.BINDINGS for k in b.key.split(",")}
    assert all(bound[f"alt+{i}"].priority for i in range(1, 9))


def test_no_screen_switch_under_a_dialog_or_the_command_palette():
    import asyncio

    from _tui_helpers import settle, until
    from solvsel.tui.app import create_app

    async def go():
        app = create_app(start="tables")
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(app, pilot)
            await pilot.press("ctrl+p")
            await until(pilot, lambda: type(app.screen).__name__ == "CommandPalette")
            for key in ("alt+3", "f4"):  # the palette keeps the keys (switching would leave it behind)
                await pilot.press(key)
                await pilot.pause()
                assert app.current_mode == "tables" and type(app.screen).__name__ == "CommandPalette"
            await pilot.press("escape")
            await until(pilot, lambda: type(app.screen).__name__ == "TablesScreen")
            await pilot.press("alt+3")  # and switch again once it is closed
            await until(pilot, lambda: app.current_mode == "carriers")

    asyncio.run(go())
