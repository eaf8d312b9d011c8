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
from textual.binding import Binding
from textual.message import Message
from textual.reactive import reactive
from textual.widget import Widget
from textual.content import Content
from textual.widgets import Checkbox, Static, TabbedContent, TabPane

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
        return [(mode, f" {i} ", f"{title.split()[0]}") for i, (mode, _, title) in enumerate(self.screens, 1)]

    def render(self) -> Text:
        t = Text(no_wrap=True, overflow="ellipsis")
        t.append(self.HEAD[:-2], style="bold reverse")
        t.append("  ")
        for mode, key, title in self.parts():
            here = mode == self.current
            t.append(key, style="bold reverse" if here else "bold")
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


# ----------------------------------------------------------------- scatter map

_DOT = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))  # [row][col] inside a cell


@dataclass(frozen=True)
class MapPoint:
    x: float
    y: float
    kind: str = "liquid"  # "liquid", "top" (named on the map), "blend" (its mark only), "other" (its mark in
    # grey, named under the cursor only), "target"
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
    #: one unit as long on both axes (a map of Hansen space); False: each axis fills its room (a plot
    #: of two different quantities)
    equal: bool = True


@dataclass(frozen=True)
class Axes:
    """The one transform from data to the screen, used for the points, the circle, the ticks and their
    labels alike: ``x0`` at the left edge of cell 0, ``y1`` at the top edge of row 0, ``scale`` braille
    dots a unit across and ``yscale`` down (None: ``scale``, the same on both axes; a dot is about square,
    so circles stay round)."""

    x0: float
    y1: float
    scale: float
    cols: int
    rows: int
    yscale: float | None = None

    @property
    def ys(self) -> float:
        """Braille dots a unit down."""
        return self.scale if self.yscale is None else self.yscale

    def dot(self, x: float, y: float) -> tuple[int, int]:
        """(dot column, dot row) of a data point (2 dots a cell across, 4 down)."""
        return math.floor((x - self.x0) * self.scale), math.floor((self.y1 - y) * self.ys)

    def cell(self, x: float, y: float) -> tuple[int, int]:
        """(row, column) of the cell a data point falls in."""
        px, py = self.dot(x, y)
        return py // 4, px // 2

    def inside(self, row: int, col: int) -> bool:
        return 0 <= row < self.rows and 0 <= col < self.cols

    @property
    def x1(self) -> float:
        return self.x0 + 2 * self.cols / self.scale

    @property
    def y0(self) -> float:
        return self.y1 - 4 * self.rows / self.ys


def make_axes(bounds: tuple[float, float, float, float], cols: int, rows: int, equal: bool = True) -> Axes:
    """Axes showing ``bounds`` (x0, x1, y0, y1) in ``cols`` x ``rows`` cells: equal units, centred; or, not
    ``equal``, each axis filling its room."""
    x0, x1, y0, y1 = bounds
    w, h = max(x1 - x0, 1e-9), max(y1 - y0, 1e-9)
    if not equal:
        return Axes(x0, y1, 2 * cols / w, cols, rows, 4 * rows / h)
    scale = min(2 * cols / w, 4 * rows / h)
    x0 -= (2 * cols / scale - w) / 2
    y1 += (4 * rows / scale - h) / 2
    return Axes(x0, y1, scale, cols, rows)


def axis_ticks(lo: float, hi: float, cells: int) -> list[float]:
    """Round values between ``lo`` and ``hi``, about one every 8 cells, and at least two where the range
    has room for them (a short axis would otherwise show a single label, which gives no scale).

    >>> axis_ticks(1.2, 3.5, 16)   # one label (2) at the round step of 2: the step halves
    [2.0, 3.0]
    >>> axis_ticks(0, 40, 80)
    [0, 5, 10, 15, 20, 25, 30, 35, 40]
    """
    def ticks(step: float) -> list[float]:
        v = math.ceil(lo / step) * step
        out = []
        while v <= hi + 1e-9:
            out.append(round(v, 10))
            v += step
        return out

    step = _nice_step((hi - lo) / max(2, cells // 8))
    out = ticks(step)
    for _ in range(3):
        if len(out) >= 2 or not hi > lo:
            break
        step = _nice_step(step / 2.5)  # the next smaller round step (10 -> 5 -> 2 -> 1)
        out = ticks(step)
    return out


class _Canvas:
    """Cells of characters and styles; labels keep a free cell on each side so they never run together."""

    def __init__(self, cols: int, rows: int) -> None:
        self.cols, self.rows = cols, rows
        self.bits = [[0] * cols for _ in range(rows)]
        self.kind = [[""] * cols for _ in range(rows)]
        self.text: dict[tuple[int, int], tuple[str, str]] = {}

    def dot(self, px: int, py: int, kind: str) -> None:
        r, c = py // 4, px // 2
        if 0 <= r < self.rows and 0 <= c < self.cols and px >= 0 and py >= 0:
            self.bits[r][c] |= _DOT[py % 4][px % 2]
            if self.kind[r][c] in ("", "liquid"):
                self.kind[r][c] = kind

    def free(self, r: int, c0: int, n: int) -> bool:
        return 0 <= r < self.rows and c0 >= 0 and c0 + n <= self.cols and all(
            (r, c) not in self.text for c in range(c0 - 1, c0 + n + 1))

    def put(self, r: int, c: int, text: str, style: str) -> None:
        for i, ch in enumerate(text):
            self.text[(r, c + i)] = (ch, style)

    def label(self, r: int, c: int, text: str, style: str) -> bool:
        """Write ``text`` right of cell (r, c), else left of it; False when neither has room."""
        for start in (c + 2, c - len(text) - 1):
            if self.free(r, start, len(text)):
                self.put(r, start, text, style)
                return True
        return False


class BrailleMap(Widget, can_focus=True):
    """A scatter map: liquids as braille dots, the best ones by their rank and name, the target a
    cross, the sphere's section a dotted circle.  The arrow keys (or the mouse) move a cursor that
    names the liquids under it."""

    BINDINGS = [Binding("left", "move(0, -1)", "Cursor left", show=False),
                Binding("right", "move(0, 1)", "Cursor right", show=False),
                Binding("up", "move(-1, 0)", "Cursor up", show=False),
                Binding("down", "move(1, 0)", "Cursor down", show=False)]

    data: reactive[MapData | None] = reactive(None, layout=False)
    cursor: reactive[tuple[int, int] | None] = reactive(None, layout=False)

    class CursorMoved(Message):
        """The cursor moved: ``names`` are the liquids in its cell (empty: none)."""

        def __init__(self, names: str) -> None:
            super().__init__()
            self.names = names

    STYLES = {"liquid": "#8a9bb0", "top": "bold #f0c05a", "blend": "bold #d9a441", "other": "#8a9bb0",
              "target": "bold #ff6f61", "circle": "#5fb3a8",
              "axis": "#6b7280", "name": "#f0c05a", "cursor": "reverse"}
    LEFT, BOTTOM = 6, 2  # cells of the y labels and of the x axis with its labels

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
        pad_x = 0.04 * (max(xs) - min(xs) or 1.0)
        pad_y = 0.04 * (max(ys) - min(ys) or 1.0)
        return min(xs) - pad_x, max(xs) + pad_x, min(ys) - pad_y, max(ys) + pad_y

    def axes(self) -> Axes | None:
        """The transform of the map as it is drawn now (None when there is nothing to draw)."""
        width, height = self.size.width, self.size.height
        if self.data is None or width < 20 or height < 6:
            return None
        return make_axes(self._bounds(self.data), width - self.LEFT - 1, height - self.BOTTOM, self.data.equal)

    def _draw(self, d: MapData, ax: Axes) -> _Canvas:
        cv = _Canvas(ax.cols, ax.rows)
        self._cell_labels = {}
        if d.circle:
            cx, cy, r = d.circle
            n = max(90, int(2 * math.pi * r * ax.scale))
            for i in range(n):
                a = 2 * math.pi * i / n
                cv.dot(*ax.dot(cx + r * math.cos(a), cy + r * math.sin(a)), "circle")
        for p in d.points:
            r, c = ax.cell(p.x, p.y)
            if ax.inside(r, c) and p.label:
                old = self._cell_labels.get((r, c))
                self._cell_labels[(r, c)] = p.label if not old or p.label in old.split(", ") else f"{old}, {p.label}"
            if p.kind == "liquid":  # two dots across: small, but seen
                px, py = ax.dot(p.x, p.y)
                cv.dot(px, py, "liquid")
                cv.dot(px + 1, py, "liquid")
        marked = [p for p in d.points if p.kind != "liquid"]
        marked.sort(key=lambda p: (p.kind != "target", p.kind == "other"))  # the target first: nothing covers it
        groups: dict[tuple[int, int], list[MapPoint]] = {}  # points that fall in one cell share its mark
        for p in marked:
            r, c = ax.cell(p.x, p.y)
            if ax.inside(r, c):
                groups.setdefault((r, c), []).append(p)
        for (r, c), ps in groups.items():
            cv.put(r, c, ps[0].mark or ("+" if ps[0].kind == "target" else "*"), self.STYLES[ps[0].kind])
        for (r, c), ps in groups.items():  # then the names, where they fit without touching another
            named = [p for p in ps if p.label and p.kind not in ("blend", "other")]
            if named:
                more = f" (+{len(named) - 1})" if len(named) > 1 else ""
                cv.label(r, c, shorten(named[0].label, 24) + more,
                         self.STYLES["target" if named[0].kind == "target" else "name"])
        return cv

    @staticmethod
    def y_tick_values(ax: Axes) -> list[float]:
        """The values labelled on the y axis: from one dot above the bottom edge (a value on the edge
        itself falls below the last row), at least two where the axis has room."""
        return axis_ticks(ax.y0 + 1.0 / ax.ys, ax.y1, ax.rows * 2)

    def render(self) -> Text:
        d, ax = self.data, self.axes()
        if d is None or ax is None:
            return Text("(no map)")
        cv = self._draw(d, ax)
        self._left = self.LEFT
        y_ticks = {ax.cell(ax.x0, v)[0]: f"{v:g}" for v in self.y_tick_values(ax)}
        out = Text(no_wrap=True)
        for r in range(ax.rows):
            out.append(f"{y_ticks.get(r, ''):>{self.LEFT - 1}}" + ("┤" if r in y_ticks else "│"), style=self.STYLES["axis"])
            for c in range(ax.cols):
                ch, style = cv.text.get((r, c), ("", ""))
                if not ch:
                    bits = cv.bits[r][c]
                    ch, style = (chr(0x2800 + bits), self.STYLES[cv.kind[r][c] or "liquid"]) if bits else (" ", "")
                if self.cursor == (r, c):
                    style = (style + " " if style else "") + self.STYLES["cursor"]
                out.append(ch, style=style)
            out.append("\n")
        self._x_axis(out, ax)
        return out

    def _x_axis(self, out: Text, ax: Axes) -> None:
        """The x axis: a tick where each round value falls (the same transform as the points), its
        label centred under it unless that would touch the label before."""
        line, labels = ["─"] * ax.cols, [" "] * (ax.cols + 8)
        end = -2
        for v in axis_ticks(ax.x0, ax.x1, ax.cols):
            col = ax.cell(v, ax.y1)[1]
            if not 0 <= col < ax.cols:
                continue
            line[col] = "┬"
            text = f"{v:g}"
            start = max(0, col - (len(text) - 1) // 2)
            if start > end + 1:
                labels[start:start + len(text)] = list(text)
                end = start + len(text)
        out.append(" " * (self.LEFT - 1) + "└" + "".join(line) + "\n", style=self.STYLES["axis"])
        out.append(" " * self.LEFT + "".join(labels)[:ax.cols + 2].rstrip(), style=self.STYLES["axis"])

    def watch_data(self, value) -> None:
        self.refresh()

    def watch_cursor(self, value) -> None:
        labels = getattr(self, "_cell_labels", {})
        self.post_message(self.CursorMoved(labels.get(value, "") if value else ""))
        self.refresh()

    def action_move(self, dr: int, dc: int) -> None:
        ax = self.axes()
        if ax is None:
            return
        r, c = self.cursor or (ax.rows // 2, ax.cols // 2)
        self.cursor = (max(0, min(ax.rows - 1, r + dr)), max(0, min(ax.cols - 1, c + dc)))

    def on_mouse_move(self, event) -> None:
        """Name the liquid under the pointer (or the nearest within a cell)."""
        labels = getattr(self, "_cell_labels", {})
        at = event.get_content_offset(self)
        if at is None:
            self.tooltip = None
            return
        r, c = at.y, at.x - getattr(self, "_left", self.LEFT)
        for dr, dc in ((0, 0), (0, 1), (0, -1), (1, 0), (-1, 0)):
            if (r + dr, c + dc) in labels:
                self.tooltip = labels[(r + dr, c + dc)]
                self.cursor = (r + dr, c + dc)
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


def log_bars(rows, mark: float, unit: str, width: int = 40) -> Text:
    """Horizontal bars on a log scale, one a ``(label, value)`` row, with ``mark`` drawn as ``│`` on every
    row (a bar that reaches it is green, one that falls short red), the value and ``unit`` after the bar.
    Bars and mark are placed by :func:`scale_column` on log10 of the values."""
    values = [v for _, v in rows if v > 0] + [mark]
    lo = math.floor(math.log10(min(values)))
    hi = math.ceil(math.log10(max(values)))
    hi = hi if hi > lo else lo + 1
    label_w = max((len(lab) for lab, _ in rows), default=4)
    at_mark = scale_column(math.log10(mark), lo, hi, width)
    t = Text()
    for label, v in rows:
        n = scale_column(math.log10(v), lo, hi, width) if v > 0 else 0
        cells = ["█" if i <= n else " " for i in range(width)]
        cells[at_mark] = "│" if cells[at_mark] == " " else "┃"
        t.append(f"{label:>{label_w}} ", style="bold" if "(yours)" in label else "")
        t.append("".join(cells), style="#6aa36f" if v >= mark else "#d9534f")
        t.append(f" {v:.3g} {unit}\n", style="dim")
    axis = [" "] * (width + 8)
    for e in range(lo, hi + 1):
        col = scale_column(float(e), lo, hi, width)
        for i, ch in enumerate(f"{10.0 ** e:g}"):
            axis[col + i] = ch
    t.append(" " * (label_w + 1) + "".join(axis).rstrip() + f"  {unit}\n", style="dim")
    return t


#: Colours of the heat map, low to high.
HEAT = ("#1d3b53", "#245f7a", "#2f8a8f", "#5fa37a", "#a9b45a", "#e0a030", "#e8603c")


def heat_map(data: dict) -> Text:
    """A value over strength (columns) x temperature (rows, warmest on top), from the plain data of
    :func:`solvsel.jobs.figures.extraction_heatmap`: each point a coloured cell (log scale where
    ``data["log"]``), a blank ``·`` where there is no value (frozen), the best point ``◆``; the
    colours placed by :func:`scale_column`, as on the legend under the map."""
    strengths, temps, values = data["strengths"], data["temps_C"], data["values"]
    shown = [v for row in values for v in row if v is not None]
    t = Text()
    t.append(f"{data['value_label']}\n", style="bold")
    if not shown:
        return t.append("no value to draw\n", style="dim")
    f = (lambda v: math.log10(v)) if data.get("log") else (lambda v: v)
    lo, hi = f(min(shown)), f(max(shown))
    cell = 4 if len(strengths) <= 16 else 2 if len(strengths) <= 40 else 1
    best = data.get("best")
    for i in reversed(range(len(temps))):
        t.append(f"{temps[i]:>5g} C ", style="dim")
        for j, v in enumerate(values[i]):
            mark = best is not None and [float(strengths[j]), float(temps[i])] == [float(b) for b in best]
            if v is None:
                t.append(" ·".ljust(cell), style="dim")
            else:
                colour = HEAT[scale_column(f(v), lo, hi, len(HEAT))]
                t.append(("◆" if mark else " ").center(cell), style=f"bold #ffffff on {colour}")
        t.append("\n")
    labels = [" "] * (cell * len(strengths) + 6)
    end = -2
    for j, s_ in enumerate(strengths):
        text = f"{s_:g}"
        if j * cell > end + 1:
            labels[j * cell:j * cell + len(text)] = list(text)
            end = j * cell + len(text)
    t.append(" " * 8 + "".join(labels).rstrip() + "\n", style="dim")
    t.append(" " * 8 + f"{data.get('strength_label', '')}\n", style="dim")
    t.append(" " * 8 + f"{min(shown):.3g} ", style="dim")
    for colour in HEAT:
        t.append("  ", style=f"on {colour}")
    t.append(f" {max(shown):.3g}" + ("  (log scale)" if data.get("log") else "") + "   ◆ best point   · frozen\n",
             style="dim")
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


#: Cells a cut name keeps at least before columns named as spare give way.
NAME_ROOM = 28


def fill_table(grid, headers, rows, cut: int | tuple[int, ...] | None = None, optional: tuple[str, ...] = (),
               spare: tuple[str, ...] = (), name_room: int = NAME_ROOM, *, again: bool = True) -> None:
    """Replace a DataTable's columns and rows, each column as wide as its widest cell.

    The widths are set here, from the cells, rather than left to the table's
    own measuring, which now and then kept the header widths when a table was
    filled while the screen was still being laid out (cut values such as
    "Ra 1." for 1.20).  ``cut`` names the column (a name or a reason), or the columns, whose
    text is shortened, with an ellipsis, so that the table fits the width it
    has (several share the room in proportion to their widths); every other column stays whole.
    Columns named in ``optional`` are left out when every
    row has "-" in them; those named in ``spare`` (in that order) are left out where the screen is too
    narrow to give each cut column ``name_room`` cells (the detail pane shows them).  A table not laid out
    yet (filled while its screen mounts) is measured by its nearest ancestor with a width, then filled
    ``again`` once after the screen's first layout (unless filled anew before).
    """
    grid.fills = getattr(grid, "fills", 0) + 1
    if again and not grid.size.width:
        fill, args = grid.fills, (grid, headers, list(rows), cut, optional, spare, name_room)
        grid.call_after_refresh(lambda: grid.fills == fill and fill_table(*args, again=False))
    rows, headers = [list(r) for r in rows], list(headers)
    cuts = [] if cut is None else [c % len(headers) for c in (cut if isinstance(cut, tuple) else (cut,))]
    if optional and rows:  # columns with nothing to say in any row (a check not asked for) are left out
        keep = [i for i, h in enumerate(headers) if h not in optional or any(str(r[i]) != "-" for r in rows)]
        cuts = [keep.index(k) for k in cuts]
        headers, rows = [headers[i] for i in keep], [[r[i] for i in keep] for r in rows]
    widths = [max([_cells(h)] + [_cells(r[i]) for r in rows]) for i, h in enumerate(headers)]
    room = _room(grid) - 4  # the scroll bars (the pane's may come later)
    for name in spare if cuts else ():  # columns the detail pane also shows give way to the names first
        need = min(sum(widths[k] for k in cuts), name_room * len(cuts))
        if name not in headers or _left(widths, cuts, room) >= need:
            continue
        i = headers.index(name)
        del headers[i], widths[i]
        for r in rows:
            del r[i]
        cuts = [k - (i < k) for k in cuts]
    left, need = _left(widths, cuts, room), sum(widths[k] for k in cuts)
    if cuts and left < need:
        for k in cuts:
            widths[k] = max(left * widths[k] // need, _cells(headers[k]), 8)
            for r in rows:
                r[k] = shorten(str(r[k]), widths[k])
    grid.clear(columns=True)
    for h, w in zip(headers, widths):
        grid.add_column(h, width=w)
    for r in rows:
        grid.add_row(*r)


def _cells(value) -> int:
    """Cells the widest line of a table cell takes."""
    from rich.cells import cell_len

    if isinstance(value, Text):
        return value.cell_len
    return max((cell_len(line) for line in str(value).splitlines()), default=0)


def _left(widths: list[int], cuts: list[int], room: int) -> int:
    """Cells left for the cut columns: the room less every other column, and each column's padding of 2."""
    return room - sum(w + 2 for i, w in enumerate(widths) if i not in cuts) - 2 * len(cuts)


def _room(widget) -> int:
    """The width a widget has on screen: its own, else that of its nearest shown ancestor (a table in a
    tab not in front has none of its own yet)."""
    node = widget
    while node is not None and getattr(node, "size", None) is not None:
        if node.size.width:
            return node.size.width - (0 if node is widget else node.styles.gutter.width)
        node = node.parent
    return widget.app.size.width


def shorten(text: str, width: int) -> str:
    """``text`` cut to ``width`` cells, with an ellipsis where it was cut."""
    from rich.cells import cell_len, set_cell_size

    return text if cell_len(text) <= width else set_cell_size(text, width - 1) + "…"


class FollowingTabs(TabbedContent):
    """Tabbed content that brings a tab to the front for a focused field only while the field still has
    the cursor: a focus message that arrives after the cursor has moved on (tab keys pressed quickly
    on a busy machine) would otherwise bring back the tab the user just left."""

    def _on_tab_pane_focused(self, event: TabPane.Focused) -> None:
        if event.tab_pane.id != self.active and not event.tab_pane.has_focus_within:
            event.prevent_default()  # stale: the default handler would switch tabs
            event.stop()
