"""Small widgets of our own: the screen strip, the target line, the cautions box
and a braille scatter map.

They only lay out what a screen hands them (library results, or plain
coordinates the screen got from the library); none of them computes a
property of a substance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from rich.text import Text
from textual.message import Message
from textual.reactive import reactive
from textual.widget import Widget
from textual.content import Content
from textual.widgets import Checkbox, Static

# ----------------------------------------------------------------- screen strip


class ScreenStrip(Static):
    """One line naming every screen with its key; the current one stands out.

    Where the full line does not fit, the keys are shown as digits (Alt+digit)
    and the titles by their first word.  A click on a name posts
    :class:`ScreenStrip.Chosen`.
    """

    class Chosen(Message):
        def __init__(self, mode: str) -> None:
            super().__init__()
            self.mode = mode

    def __init__(self, screens: list[tuple[str, str, str]], current: str, **kw) -> None:
        # screens: (mode, key label, title)
        super().__init__(**kw)
        self.screens = screens
        self.current = current

    HEAD = " solvsel  "

    def parts(self) -> list[tuple[str, str, str]]:
        """(mode, key, title) as drawn: in full where it fits, else digits and short titles."""
        full = [(mode, f" {key} ", f"{title} ") for mode, key, title in self.screens]
        width = len(self.HEAD) + sum(len(k) + len(t) + 1 for _, k, t in full)
        if width <= max(self.size.width, 1) or not self.size.width:
            return full
        return [(mode, f" {i} ", f"{title.split()[0]} ") for i, (mode, _, title) in enumerate(self.screens, 1)]

    def render(self) -> Text:
        t = Text(no_wrap=True, overflow="ellipsis")
        t.append(self.HEAD[:-2], style="bold reverse")
        t.append("  ")
        for mode, key, title in self.parts():
            here = mode == self.current
            t.append(key, style="bold " + ("reverse" if here else "underline"))
            t.append(title, style="bold reverse" if here else "")
            t.append(" ")
        return t

    def on_click(self, event) -> None:
        pos = len(self.HEAD)
        for mode, key, title in self.parts():
            width = len(key) + len(title) + 1
            if pos <= event.x < pos + width:
                self.post_message(self.Chosen(mode))
                return
            pos += width


# ----------------------------------------------------------------- target line


class TargetLine(Static):
    """The current target as one line (name, dD/dP/dH, R0 and its basis)."""

    def show(self, target) -> None:
        if target is None:
            self.update("No target yet: choose one on the Target screen (F2).")
            return
        r0 = f"R0 {target.r0:.1f}" if target.r0 else "R0 unknown (no RED)"
        # a visible separator between the parts: they never run together, even where spaces are lost
        self.update(
            Text.assemble(
                ("Target: ", "bold"),
                (target.name, "bold"),
                " · ",
                f"dD {target.dD:.1f}  dP {target.dP:.1f}  dH {target.dH:.1f} MPa^0.5 · {r0}",
                (" · basis: ", "dim"),
                (target.basis, "italic"),
                no_wrap=True, overflow="ellipsis",
            )
        )


# ----------------------------------------------------------------- cautions


class CautionBox(Static):
    """The cautions that go with what is on screen, most serious first, each once."""

    def show(self, cautions) -> None:
        seen: list[str] = []
        for c in cautions or ():
            c = str(c).strip()
            if c and c not in seen:
                seen.append(c)
        self.display = bool(seen)
        t = Text()
        t.append("Cautions\n", style="bold")
        for i, c in enumerate(seen):
            t.append(" ! ", style="bold")
            t.append(c)
            if i < len(seen) - 1:
                t.append("\n")
        self.update(t)
        self.cautions = tuple(seen)


# ----------------------------------------------------------------- braille map

_DOT = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))  # [row][col] inside a cell


@dataclass(frozen=True)
class MapPoint:
    x: float
    y: float
    kind: str = "liquid"  # "liquid", "top", "target"
    mark: str = ""  # a character drawn instead of a dot (e.g. the rank)
    label: str = ""


@dataclass(frozen=True)
class MapData:
    """What to draw: points, an optional circle (centre, radius), axis names."""

    points: tuple[MapPoint, ...]
    x_label: str
    y_label: str
    circle: tuple[float, float, float] | None = None
    title: str = ""
    window: tuple[float, float, float, float] | None = None  # x0, x1, y0, y1 to show (None: everything)
    extra: dict = field(default_factory=dict)


class BrailleMap(Widget):
    """A scatter map drawn with braille dots, equal units on both axes.

    Liquids are dots, highlighted liquids their mark (their rank), the target a
    cross, the sphere's section a dotted circle.
    """

    data: reactive[MapData | None] = reactive(None, layout=False)

    STYLES = {"liquid": "#8a9bb0", "top": "bold #f0c05a", "target": "bold #ff6f61", "circle": "#5fb3a8",
              "axis": "#6b7280"}

    def _bounds(self, d: MapData):
        if d.window is not None:
            return d.window
        xs = [p.x for p in d.points]
        ys = [p.y for p in d.points]
        if d.circle:
            cx, cy, r = d.circle
            xs += [cx - r, cx + r]
            ys += [cy - r, cy + r]
        if not xs:
            return 0.0, 1.0, 0.0, 1.0
        x0, x1 = min(xs), max(xs)
        y0, y1 = min(ys), max(ys)
        pad_x = 0.04 * (x1 - x0 or 1.0)
        pad_y = 0.04 * (y1 - y0 or 1.0)
        return x0 - pad_x, x1 + pad_x, y0 - pad_y, y1 + pad_y

    def _frame(self, d: MapData, pw: int, ph: int) -> tuple[float, float, float, float, float]:
        """(x0, x1, y0, y1, scale): the window drawn, with equal units on both axes (a braille
        dot is about square, so circles stay round), the data centred in the spare room."""
        x0, x1, y0, y1 = self._bounds(d)
        scale = min(pw / (x1 - x0), ph / (y1 - y0))
        x0 -= (pw / scale - (x1 - x0)) / 2
        y0 -= (ph / scale - (y1 - y0)) / 2
        return x0, x0 + pw / scale, y0, y0 + ph / scale, scale

    def _plot(self, d: MapData, cw: int, ch: int, frame) -> tuple[list, list, dict]:
        """Braille bits, the kind of each cell and the marks (characters drawn in a cell)."""
        x0, _, _, y1, scale = frame
        pw, ph = cw * 2, ch * 4
        bits = [[0] * cw for _ in range(ch)]
        kinds = [[""] * cw for _ in range(ch)]
        marks: dict[tuple[int, int], tuple[str, str]] = {}

        def pix(x, y):
            return int((x - x0) * scale), int((y1 - y) * scale)

        def dot(px, py, kind):
            if 0 <= px < pw and 0 <= py < ph:
                r, c = py // 4, px // 2
                bits[r][c] |= _DOT[py % 4][px % 2]
                kinds[r][c] = kind if kinds[r][c] == "liquid" else (kinds[r][c] or kind)

        if d.circle:
            cx, cy, r = d.circle
            n = max(90, int(2 * math.pi * r * scale))
            for i in range(n):
                a = 2 * math.pi * i / n
                dot(*pix(cx + r * math.cos(a), cy + r * math.sin(a)), "circle")
        for p in d.points:
            px, py = pix(p.x, p.y)
            inside = 0 <= px < pw and 0 <= py < ph
            if inside and p.label:
                key = (py // 4, px // 2)
                old = self._cell_labels.get(key)
                self._cell_labels[key] = p.label if not old or p.label in old else f"{old}, {p.label}"
            if p.kind == "liquid":
                for ddx, ddy in ((0, 0), (1, 0), (0, 1), (1, 1)):
                    dot(px + ddx, py + ddy, "liquid")
            elif inside:
                r, c = py // 4, px // 2
                for dc in (0, 1, -1, 2, -2):  # two marks on one cell: the later one moves aside
                    if (r, c + dc) not in marks and 0 <= c + dc < cw:
                        marks[(r, c + dc)] = (p.mark or ("+" if p.kind == "target" else "*"), p.kind)
                        break
        return bits, kinds, marks

    def _x_axis(self, out: Text, left: int, cw: int, frame) -> None:
        x0, x1, _, _, scale = frame
        axis = [" "] * cw
        labels = [" "] * (cw + 8)
        xstep = _nice_step((x1 - x0) / max(2, cw // 10))
        v = math.ceil(x0 / xstep) * xstep
        while v <= x1:
            col = int((v - x0) * scale) // 2
            if 0 <= col < cw:
                axis[col] = "┬"
                for i, chr_ in enumerate(f"{v:g}"):
                    if col + i < len(labels):
                        labels[col + i] = chr_
            v += xstep
        out.append(" " * (left - 1) + "└" + "".join(axis).replace(" ", "─") + "\n", style=self.STYLES["axis"])
        out.append(" " * left + "".join(labels)[:cw], style=self.STYLES["axis"])

    def render(self) -> Text:
        d = self.data
        width, height = self.size.width, self.size.height
        if d is None or width < 20 or height < 6:
            return Text("(no map)")
        left, bottom = 6, 2
        cw, ch = width - left - 1, height - bottom
        frame = self._frame(d, cw * 2, ch * 4)
        _, _, y0, y1, scale = frame
        self._cell_labels: dict[tuple[int, int], str] = {}
        self._left = left
        bits, kinds, marks = self._plot(d, cw, ch, frame)
        # y ticks every 'step' units
        step = _nice_step((y1 - y0) / max(2, ch // 4))
        y_ticks = {}
        v = math.ceil(y0 / step) * step
        while v <= y1:
            row = int((y1 - v) * scale) // 4
            if 0 <= row < ch:
                y_ticks[row] = f"{v:g}"
            v += step
        out = Text(no_wrap=True)
        for r in range(ch):
            out.append(f"{y_ticks.get(r, ''):>{left - 1}}", style=self.STYLES["axis"])
            out.append("┤" if r in y_ticks else "│", style=self.STYLES["axis"])
            for c in range(cw):
                if (r, c) in marks:
                    m, kind = marks[(r, c)]
                    out.append(m, style=self.STYLES[kind])
                elif bits[r][c]:
                    out.append(chr(0x2800 + bits[r][c]), style=self.STYLES[kinds[r][c] or "liquid"])
                else:
                    out.append(" ")
            out.append("\n")
        self._x_axis(out, left, cw, frame)
        return out

    def watch_data(self, value) -> None:
        self.refresh()

    def on_mouse_move(self, event) -> None:
        """Name the liquid under the pointer (or the nearest within a cell)."""
        labels = getattr(self, "_cell_labels", {})
        at = event.get_content_offset(self)
        if at is None:
            self.tooltip = None
            return
        r, c = at.y, at.x - getattr(self, "_left", 6)
        for dr, dc in ((0, 0), (0, 1), (0, -1), (1, 0), (-1, 0)):
            if (r + dr, c + dc) in labels:
                self.tooltip = labels[(r + dr, c + dc)]
                return
        self.tooltip = None


def _nice_step(raw: float) -> float:
    if raw <= 0 or not math.isfinite(raw):
        return 1.0
    exp = math.floor(math.log10(raw))
    for m in (1, 2, 5, 10):
        if m * 10 ** exp >= raw:
            return m * 10 ** exp
    return 10 ** (exp + 1)


# ----------------------------------------------------------------- bench fit picture


def red_strip(names, good, red, misplaced=(), width: int = 36, rows: int = 24) -> Text:
    """One line a liquid: its name, then a mark at its RED on a common scale with the sphere's surface
    (RED 1) drawn as a bar; good liquids ``●``, bad ``○``; those the fit names in ``misplaced`` in bold.  Placed by
    :func:`scale_column`, the same transform for the marks and the tick labels."""
    items = sorted(zip(names, good, red), key=lambda x: x[2])[:rows]
    top = 3.0  # farther liquids are drawn at the end of the scale, their RED written beside them
    name_w = min(22, max((len(n) for n, _, _ in items), default=4))
    t = Text()
    surface = scale_column(1.0, 0.0, top, width)
    for name, is_good, r in items:
        line = [" "] * width
        line[surface] = "│"
        line[scale_column(min(r, top), 0.0, top, width)] = ("●" if is_good else "○") if r <= top else "→"
        wrong = name in misplaced
        t.append(f"{shorten(name, name_w):<{name_w}} ", style="bold" if wrong else "")
        t.append("".join(line), style="bold #ff6f61" if wrong else ("#6aa36f" if is_good else "#8a9bb0"))
        t.append(f" {r:.2f}" + ("  misplaced" if wrong else "") + "\n", style="bold" if wrong else "dim")
    axis = [" "] * (width + 4)
    for v in (0.0, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0):
        col = scale_column(v, 0.0, top, width)
        for i, ch in enumerate(f"{v:g}"):
            axis[col + i] = ch
    t.append(" " * (name_w + 1) + "".join(axis).rstrip() + "  RED\n", style="dim")
    t.append(" " * (name_w + 1) + "● good  ○ bad\n", style="dim")
    return t


def scale_column(value: float, lo: float, hi: float, cells: int) -> int:
    """The cell (0 .. cells-1) of ``value`` on an axis from ``lo`` to ``hi`` drawn in ``cells`` cells."""
    if not hi > lo:
        return 0
    return max(0, min(cells - 1, round((value - lo) / (hi - lo) * (cells - 1))))


# ----------------------------------------------------------------- tables


class Tick(Checkbox):
    """A checkbox drawn ``[x]`` when ticked and ``[ ]`` when not (Textual's own shows an X in both
    states, told apart by colour only)."""

    @property
    def _button(self) -> Content:
        style = self.get_visual_style("toggle--button")
        return Content.assemble(("[", style), ("x" if self.value else " ", style), ("]", style))


def fill_table(grid, headers, rows, cut: int | None = None) -> None:
    """Replace a DataTable's columns and rows, each column as wide as its widest cell.

    The widths are set here, from the cells, rather than left to the table's
    own measuring, which now and then kept the header widths when a table was
    filled while the screen was still being laid out (cut values such as
    "Ra 1." for 1.20).  ``cut`` names the one column (a name or a reason) whose
    text is shortened, with an ellipsis, so that the table fits the width it
    has; every other column stays whole.
    """
    from rich.cells import cell_len

    def width(v) -> int:
        if isinstance(v, Text):
            return v.cell_len
        return max((cell_len(line) for line in str(v).splitlines()), default=0)

    rows = [list(r) for r in rows]
    widths = [max([width(h)] + [width(r[i]) for r in rows]) for i, h in enumerate(headers)]
    if cut is not None and headers:
        k = cut % len(headers)
        room = (grid.size.width or grid.app.size.width) - 2  # the scroll bar
        left = room - sum(w + 2 for i, w in enumerate(widths) if i != k) - 2  # 2: the cell's padding
        if left < widths[k]:
            widths[k] = max(left, width(headers[k]), 8)
            for r in rows:
                r[k] = shorten(str(r[k]), widths[k])
    grid.clear(columns=True)
    for h, w in zip(headers, widths):
        grid.add_column(h, width=w)
    for r in rows:
        grid.add_row(*r)


def shorten(text: str, width: int) -> str:
    """``text`` cut to ``width`` cells, with an ellipsis where it was cut."""
    from rich.cells import cell_len, set_cell_size

    return text if cell_len(text) <= width else set_cell_size(text, width - 1) + "…"
