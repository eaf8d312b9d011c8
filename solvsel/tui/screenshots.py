"""Regenerate the SVG screenshots of every screen: ``python -m solvsel.tui.screenshots [DIR]``.

Deterministic: two fixed terminal sizes (160x45 and a laptop's 100x30), the demo
scenario, the bundled tables, no clock in the frame; each screen is shown once
its work is done.  Writes ``<DIR>/<screen>.svg`` at 160x45 and
``<DIR>/<screen>-100x30.svg`` at 100x30 (default ``screens/`` of the project).
:func:`svg_text` reads the text back out of a screenshot, so a test can compare
what a stored picture says with what the app draws now.
"""

from __future__ import annotations

import asyncio
import html
import re
import sys
from pathlib import Path

#: (width, height, file suffix) of the screenshots.
SIZES = [(160, 45, ""), (100, 30, "-100x30")]

#: (file stem, screen, keys pressed after the screen shows)
SHOTS = [
    ("tables", "tables", ()),
    ("target", "target", ()),
    ("carriers", "carriers", ()),
    ("single", "carriers", ("ctrl+t", "ctrl+t", "ctrl+t")),
    ("extraction", "carriers", ("ctrl+g",)),
    ("dropped", "carriers", ("ctrl+g", "ctrl+t")),
    ("map", "map", ()),
    ("map-sphere", "target", ("typed", "f3", "f4")),
    ("map-side", "map", ("v",)),
    ("emulsion", "emulsion", ()),
    ("limits", "limits", ()),
    ("mixing", "mixing", ("ctrl+r",)),
    ("error", "target", ("smiles",)),
]

_CELL = 12.2  # width of one cell in Textual's SVG, in its units
_TEXT = re.compile(r'<text class="[^"]*" x="([0-9.]+)" y="([0-9.]+)"[^>]*>(.*?)</text>', re.S)


def svg_text(svg: str) -> list[str]:
    """The lines of text of a Textual SVG screenshot (each cell at its column, trailing blanks dropped)."""
    rows: dict[float, dict[int, str]] = {}
    for x, y, body in _TEXT.findall(svg):
        text = html.unescape(re.sub(r"<[^>]+>", "", body)).replace("\xa0", " ")
        cells = rows.setdefault(float(y), {})
        col = round(float(x) / _CELL)
        for i, ch in enumerate(text):
            cells[col + i] = ch
    out = []
    for y in sorted(rows):
        cells = rows[y]
        out.append("".join(cells.get(i, " ") for i in range(max(cells) + 1)).rstrip() if cells else "")
    return out


async def _press(app, pilot, key: str) -> None:
    if key == "smiles":  # a bad structure: the error dialog
        for _ in range(2):
            await pilot.press("ctrl+t")
            await pilot.pause()
        app.screen.query_one("#smiles").value = "C1CC(("
        app.screen.press("use-smiles")
    elif key == "typed":  # a typed target with a radius: the map draws its sphere's section
        await pilot.press("ctrl+t")
        await pilot.pause()
        app.screen.query_one("#typed-hsp").value = "17.8, 3.9, 9.9, 6.0"
        app.screen.press("use-typed")
    else:
        await pilot.press(key)
    await pilot.pause()
    await app.workers.wait_for_complete()
    await pilot.pause()


async def shoot(mode: str, keys, size: tuple[int, int]) -> str:
    """The SVG of screen ``mode`` after ``keys``, at ``size`` (columns, rows)."""
    from .app import create_app

    app = create_app(start="carriers")
    async with app.run_test(size=size) as pilot:
        await app.workers.wait_for_complete()
        await pilot.pause()
        if mode != "carriers":
            app.switch_mode(mode)
            await pilot.pause()
        for key in keys:
            await _press(app, pilot, key)
        await pilot.pause(0.2)
        return app.export_screenshot()


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    out = Path(argv[0]) if argv else Path(__file__).resolve().parents[2] / "screens"
    out.mkdir(parents=True, exist_ok=True)
    for width, height, suffix in SIZES:
        for stem, mode, keys in SHOTS:
            path = out / f"{stem}{suffix}.svg"
            path.write_text(asyncio.run(shoot(mode, keys, (width, height))), encoding="utf-8")
            print(path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
