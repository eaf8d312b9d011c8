"""Map screen: the liquids of the table around the target, drawn in the terminal.

Two views: dP against dH, and 2 dD against dH (the scaled coordinates of
:func:`solvsel.science.hansen.scaled`, in which distance is Ra).  The target is a
cross; where its R0 is known, the section of its sphere through the target
is drawn as a circle; the best single liquids of the last ranking carry their
rank, the best blends of the last search a letter.  Both are the results the
``rank`` and ``blend`` jobs gave the carriers screen (kept in the session): the
map draws them and computes nothing of its own.
"""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Static

from .base import BenchScreen
from .widgets import BrailleMap, CautionBox, MapData, MapPoint

VIEWS = {
    "dP-dH": ("dH [MPa^0.5]", "dP [MPa^0.5]", 2, 1),  # x label, y label, x index, y index in scaled()
    "2dD-dH": ("dH [MPa^0.5]", "2 dD [MPa^0.5]", 2, 0),
}
_LETTERS = "abcdefgh"


class MapScreen(BenchScreen):
    """Where the liquids sit around the target."""

    MODE = "map"
    BINDINGS = [Binding("v", "toggle_view", "Other view"), Binding("z", "toggle_zoom", "Zoom in/out")]

    def __init__(self) -> None:
        super().__init__()
        self.view = "dP-dH"
        self.zoom = True  # around the target and the highlighted liquids
        self.map_data: MapData | None = None

    def compose(self) -> ComposeResult:
        yield from self.compose_frame_top()
        with Horizontal(id="map-body"):
            yield BrailleMap(id="hsp-map")
            with VerticalScroll(id="map-legend-pane"):
                yield Static("", id="map-legend")
                yield CautionBox(id="map-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        self.query_one("#hsp-map", BrailleMap).focus()

    def on_screen_resume(self) -> None:
        self.redraw()  # the ranking or the blends may have changed on the carriers screen

    def on_braille_map_cursor_moved(self, message: BrailleMap.CursorMoved) -> None:
        self.query_one("#hsp-map", BrailleMap).border_subtitle = (
            f"under the cursor: {message.names}" if message.names else "arrow keys: a cursor that names the liquids")

    def report_of(self):
        """(job, title, text, result) for a report: the ranking the map draws, with its map."""
        r = self.session.ranking
        if r is None:
            return None
        return "rank", f"Liquids around {r.target.name}", str(self.query_one("#map-legend", Static).render()), r

    def action_toggle_view(self) -> None:
        self.view = "2dD-dH" if self.view == "dP-dH" else "dP-dH"
        self.redraw()

    def action_toggle_zoom(self) -> None:
        self.zoom = not self.zoom
        self.redraw()

    def redraw(self) -> None:
        import numpy as np

        from ..science.hansen import scaled

        s = self.session
        cat = s.catalog
        xl, yl, xi, yi = VIEWS[self.view]
        recs = cat.solvent_records()
        ranked = [r.name for r in (s.ranking.results if s.ranking is not None else ())][:9]
        pts = []
        if recs:
            xyz = scaled(np.array([r.hsp for r in recs], dtype=float))
            for r, p in zip(recs, xyz):
                if r.name not in ranked:
                    pts.append(MapPoint(float(p[xi]), float(p[yi]), "liquid", label=r.name))
        legend = Text()
        legend.append(f"{yl.split(' [')[0]} against {xl.split(' [')[0]}", style="bold")
        legend.append("   (v: other view)\n", style="dim")
        if ranked:
            legend.append("Best single liquids (Carriers screen)\n", style="bold")
            for i, r in enumerate(s.ranking.results[:9], 1):
                p = scaled(np.array([r.dD, r.dP, r.dH], dtype=float))
                pts.append(MapPoint(float(p[xi]), float(p[yi]), "top", str(i), r.name))
                legend.append(f" {i} ", style="bold #f0c05a")
                legend.append(f"{r.name}  Ra {r.ra:.2f}" + (f"  RED {r.red:.2f}" if r.red is not None else "") + "\n")
        if not ranked:
            legend.append("No ranking for this target yet: the Carriers screen (F3) ranks the liquids.\n", style="dim")
        if s.blends is not None and s.blends.results:
            legend.append("\nBest blends\n", style="bold")
            for letter, b in zip(_LETTERS, s.blends.results):
                p = scaled(np.array([b.dD, b.dP, b.dH], dtype=float))
                pts.append(MapPoint(float(p[xi]), float(p[yi]), "blend", letter, b.label))
                legend.append(f" {letter} ", style="bold #f0c05a")
                legend.append(f"{b.label}  Ra {b.ra:.2f}\n")
        circle = None
        t = s.target
        if t is not None:
            p = scaled(np.array([t.dD, t.dP, t.dH], dtype=float))
            pts.append(MapPoint(float(p[xi]), float(p[yi]), "target", "+", t.name))
            legend.append("\n + ", style="bold #ff6f61")
            legend.append(f"target: {t.name}\n")
            if t.r0:
                circle = (float(p[xi]), float(p[yi]), float(t.r0))
                cut = "dD" if self.view == "dP-dH" else "dP"
                legend.append(f" ○ section of the sphere (R0 {t.r0:.1f}) at the target's {cut}\n", style="#5fb3a8")
            else:
                legend.append(" R0 unknown: no sphere drawn\n", style="dim")
        legend.append(f"\n ⠿ other liquids of the table ({len(recs)} in all)\n", style="#8a9bb0")
        legend.append("\nThe arrow keys move a cursor over the map; the line under it names the liquids there.\n",
                      style="dim")
        legend.append("\nA liquid drawn inside the circle can still be outside the sphere: "
                      "the third parameter is not shown. Ra in the list is the true distance.\n", style="dim")
        window = None
        near = [p for p in pts if p.kind != "liquid"]
        if self.zoom and near:
            xs = [p.x for p in near] + ([circle[0] - circle[2], circle[0] + circle[2]] if circle else [])
            ys = [p.y for p in near] + ([circle[1] - circle[2], circle[1] + circle[2]] if circle else [])
            window = (min(xs) - 3, max(xs) + 3, min(ys) - 3, max(ys) + 3)
        legend.append(("zoomed on the target (z: whole table)" if window else "whole table (z: zoom on the target)") + "\n",
                      style="dim")
        self.map_data = MapData(tuple(pts), xl, yl, circle, title=self.view, window=window)
        self.query_one("#hsp-map", BrailleMap).data = self.map_data
        self.query_one("#hsp-map", BrailleMap).border_title = f"{yl} against {xl}"
        self.query_one("#map-legend", Static).update(legend)
        cautions = list(s.ranking.cautions) if s.ranking is not None else []
        cautions.sort(key=lambda c: c.startswith(("Estimates", "Screening")))
        self.query_one("#map-cautions", CautionBox).show(cautions)
