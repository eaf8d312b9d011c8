"""The blends' trade-off front as a picture in the terminal, beside the blend results.

Drawn from the figure data the report draws with matplotlib (:func:`solvsel.jobs.figures.pareto`: Ra
against the blend's cost class, or against its number of liquids where no cost is known), on the map's
braille widget (:class:`~solvsel.tui.widgets.BrailleMap`), whose one transform places the points, the
ticks and the tick labels alike.  The blends on the front carry their number in the table of blends and
their name; the others their number in grey, named under the cursor.  Nothing is computed here.
"""

from __future__ import annotations

from rich.text import Text

from .widgets import MapData, MapPoint, shorten

#: The y axis of the picture.
RA_LABEL = "Ra [MPa^0.5]"


def _mark(rank) -> str:
    """A blend's number in the table of blends as one character ("*" beyond 9 or for a blend not listed)."""
    return str(rank) if isinstance(rank, int) and 1 <= rank <= 9 else "*"


def front_map(figure) -> MapData:
    """The picture of a ``pareto`` :class:`~solvsel.jobs.figures.FigureData`: x as the figure gives it (cost
    class or number of liquids), y Ra; each axis fills its room (two different quantities)."""
    pts = tuple(MapPoint(float(p["x"]), float(p["ra"]), "top" if p["front"] else "other", _mark(p.get("rank")),
                         p["name"])
                for p in sorted(figure.data["points"], key=lambda p: (not p["front"], p.get("rank") or 0)))
    xs, ys = [p.x for p in pts], [p.y for p in pts]
    pad = 0.1 * (max(xs) - min(xs) or 1.0)  # room for the marks at the ends; Ra from 0, a perfect fit
    window = (min(xs) - pad, max(xs) + pad, 0.0, 1.08 * max(ys) or 1.0)
    return MapData(pts, figure.data["x_label"], RA_LABEL, title=figure.title, window=window, equal=False)


def front_legend(figure, width: int = 36) -> Text:
    """The blends of the picture by their mark: those on the front first, then the others, and how to read it."""
    d = figure.data
    by_cost = not d["x_label"].startswith("number")
    t = Text()
    t.append(f"{figure.title}\n", style="bold")
    for front, head in ((True, "On the front"), (False, "Beaten in fit, cost, hazard and size at once")):
        rows = sorted((p for p in d["points"] if p["front"] == front), key=lambda p: p.get("rank") or 0)
        if not rows:
            continue
        t.append(f"{head}\n", style="bold" if front else "dim")
        for p in rows:
            x = f"cost {p['x']:.1f}" if by_cost else f"{p['n_components']} liquid{'s' if p['n_components'] > 1 else ''}"
            rank = p.get("rank")
            t.append(f" {_mark(rank)} ", style="bold #f0c05a" if front else "#8a9bb0")
            t.append(f"Ra {p['ra']:.2f}  {x}" + (f"  #{rank}" if isinstance(rank, int) and rank > 9 else "") + "\n")
            t.append(f"   {shorten(p['name'], width - 3)}\n", style="" if front else "dim")
    t.append(f"\n{d['x_label']} across, Ra to the target up.\n", style="dim")
    t.append(figure.caption + "\n", style="dim")
    t.append("The arrow keys move a cursor that names the blend under it.\n", style="dim")
    return t
