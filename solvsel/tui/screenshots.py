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

#: Two runs of the app a size, each a list of (file stem or "" for no picture, keys pressed before it).
#: The keys are those a person would press; "typed" and "smiles" fill the target screen's fields.
#: The first run starts on the tables and runs no blend search (a quick check of its pictures is in
#: the test suite); the second starts on the carriers.
RUNS = {
    "tables": [
        ("tables", ()),
        ("emulsion", ("f5",)),
        ("limits", ("f6",)),
        ("mixing", ("f7", "ctrl+r")),
        ("target", ("f2",)),
        ("error", ("smiles",)),
    ],
    "carriers": [
        ("carriers", ()),
        ("tradeoff", ("ctrl+t",)),
        ("dropped", ("ctrl+t",)),
        ("single", ("ctrl+t", "ctrl+t")),
        ("", ("ctrl+t",)),
        ("map", ("f4",)),
        ("map-side", ("v",)),
        ("", ("v",)),
        ("extraction", ("f3", "ctrl+g")),
        ("map-sphere", ("f2", "typed", "f3", "f4")),
        ("extraction-plan", ("f8",)),
    ],
}

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
        app.screen.query_one("#target-tabs").active = "from-smiles"
        await pilot.pause()
        app.screen.query_one("#smiles").value = "C1CC(("
        app.screen.press("use-smiles")
    elif key == "typed":  # a typed target with a radius: the map draws its sphere's section
        app.screen.query_one("#target-tabs").active = "from-typed"
        await pilot.pause()
        app.screen.query_one("#typed-hsp").value = "17.8, 3.9, 9.9, 6.0"
        app.screen.press("use-typed")
    else:
        await pilot.press(key)
    await pilot.pause()
    await app.workers.wait_for_complete()
    await pilot.pause()


async def shoot(run: str, size: tuple[int, int]) -> dict[str, str]:
    """The SVG of every picture of run ``run`` of :data:`RUNS` at ``size`` (columns, rows), by file stem."""
    from .app import create_app

    app = create_app(start=run)
    app.animation_level = "none"  # no sliding underline caught half way: the same picture every time
    shots = {}
    async with app.run_test(size=size) as pilot:
        await app.workers.wait_for_complete()
        await pilot.pause()
        for stem, keys in RUNS[run]:
            for key in keys:
                await _press(app, pilot, key)
            if stem:
                app.clear_notifications()
                await pilot.pause()
                # spaces kept as drawn by every SVG renderer (some drop a text run's leading blanks, so
                # "Target cannabidiol" and "dD" ran together in the pictures)
                shots[stem] = app.export_screenshot().replace("<svg ", '<svg xml:space="preserve" ', 1)
    return shots


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    out = Path(argv[0]) if argv else Path(__file__).resolve().parents[2] / "screens"
    out.mkdir(parents=True, exist_ok=True)
    for width, height, suffix in SIZES:
        for run in RUNS:
            for stem, svg in asyncio.run(shoot(run, (width, height))).items():
                path = out / f"{stem}{suffix}.svg"
                path.write_text(svg, encoding="utf-8")
                print(path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
