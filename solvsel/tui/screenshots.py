"""Regenerate the SVG screenshots of every screen: ``python -m solvsel.tui.screenshots [DIR]``.

Deterministic: a fixed terminal size, the demo scenario, the bundled tables,
no clock in the frame; each screen is shown once its work is done.  Writes
``<DIR>/<screen>.svg`` (default ``screens/`` of the project).
"""

from __future__ import annotations

import asyncio
import sys
from pathlib import Path

SIZE = (160, 48)

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


async def _shoot(stem: str, mode: str, keys, out: Path) -> Path:
    from .app import create_app

    app = create_app(start="carriers")
    async with app.run_test(size=SIZE) as pilot:
        await app.workers.wait_for_complete()
        await pilot.pause()
        if mode != "carriers":
            app.switch_mode(mode)
            await pilot.pause()
        for key in keys:
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
        await pilot.pause(0.2)
        path = out / f"{stem}.svg"
        app.save_screenshot(filename=path.name, path=str(out))
    return path


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    out = Path(argv[0]) if argv else Path(__file__).resolve().parents[2] / "screens"
    out.mkdir(parents=True, exist_ok=True)
    for stem, mode, keys in SHOTS:
        path = asyncio.run(_shoot(stem, mode, keys, out))
        print(path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
