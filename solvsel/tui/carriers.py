"""Carriers screen: single liquids ranked for the target, and optimised blends.

The constraints on the left bound both lists (use, jurisdiction, the product's
purpose, largest blend, lowest flash point, boiling window, temperature,
liquids left out, solutes to keep out): the form becomes a request of the ``rank`` job
(:mod:`solvsel.jobs.rank`) and one of the ``blend`` job (:mod:`solvsel.jobs.blend`);
the blend search runs in a cancellable thread worker that posts
:class:`BlendProgress` (one bar over every step of the search: the combinations, the
checks, the description of the blends shown) and :class:`BlendDone` messages.  Blends
dropped by a check, and liquids left out of the pool, are listed with their reasons;
the blends' trade-off front is drawn beside them (:mod:`.tradeoff`).  For the selected
liquid or blend, a panel answers whether the target dissolves at its load and whether
the drink stays clear (the ``load`` and ``clarity`` jobs, :mod:`.carrier_checks`).
"""

from __future__ import annotations

import threading
import time

from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.message import Message
from textual.widgets import Button, DataTable, Input, Label, ProgressBar, Select, Static, TabbedContent, TabPane
from textual.worker import Worker, WorkerState, get_current_worker

from . import carrier_checks
from .base import NARROW, BenchScreen
from .limits import NO_PURPOSE, audit_text, purpose_choices, purpose_value
from .widgets import BrailleMap, CautionBox, FollowingTabs, fill_table, shorten

# Verdicts first, names last (cut first where the screen is narrow; the detail pane has them whole).
RANK_HEADERS = ("#", "Ra MPa½", "RED", "allowed", "flammable", "health", "how sure", "carries", "flash °C",
                "boils °C", "cost", "liquid")
DROPPED_HEADERS = ("Ra MPa½", "blend (volume fractions)", "why it was dropped")
EXCLUDED_HEADERS = ("why it is not in the pool", "liquid")
#: Columns shown only where some row has something in them (the load check is asked for, say).
OPTIONAL = ("carries", "how sure", "health")
#: Columns that give way to the names on a narrow screen, first to last (the detail pane has them).
SPARE = ("cost", "boils °C", "how sure", "flash °C", "health")
#: Cells a blend's liquids and fractions keep before the spare columns give way (two liquids whole).
BLEND_ROOM = 46
#: The steps of a blend search in its one bar (as the ``blend`` job reports them): where each starts on the
#: bar, its share of it (about its share of the time of a wide search), and how the status line says it.
STEPS = {
    "combinations": (0.0, 0.4, "step 1 of 3: exact fractions, {done:,} of {total:,} combinations"),
    "checks": (0.4, 0.45, "step 2 of 3: checks (one phase, limits, load), {done} of {total} blends passed"),
    "describing": (0.85, 0.15, "step 3 of 3: describing, {done} of {total} blends"),
}
#: Least time between two progress messages of a step [s] (the first and the last of each always go).
PROGRESS_EVERY = 0.05
#: One selection's checks at a time (the chemistry library behind the clarity job loads its tables on first
#: use, which two threads at once may trip over).
CHECKS_LOCK = threading.Lock()
#: The tabs whose lists a new search replaces (labelled as old while it runs).
SEARCH_TABS = {"tab-blends": "Blends", "tab-front": "Trade-off", "tab-dropped": "Dropped", "tab-excluded": "Left out"}

USE_CHOICES = [("carrier (flavour carrier)", "carrier"), ("extraction", "extraction"), ("bench", "bench"),
               ("any liquid of the table", "any")]
def jurisdiction_choices(cat) -> list[tuple[str, str]]:
    """The food-law jurisdictions of the catalog's regulations (data, not code), and no filter."""
    from ..rules.regulations import food_jurisdictions

    return [(j, j) for j in food_jurisdictions(cat)] + [("none (no legal filter)", "none")]


# ----------------------------------------------------------------- messages


class BlendProgress(Message):
    """The blend search moved on: ``done`` of ``total`` of its step ``step`` (a key of :data:`STEPS`; "" before
    the first, ``total`` None: not known)."""

    def __init__(self, done: float, total: float | None, text: str, search: int = 0, step: str = "") -> None:
        super().__init__()
        self.done, self.total, self.text, self.search, self.step = done, total, text, search, step


class BlendDone(Message):
    """The blend search finished (``result`` a BlendResult) or was cancelled (``result`` None)."""

    def __init__(self, result, cancelled: bool = False, search: int = 0) -> None:
        super().__init__()
        self.result = result
        self.cancelled = cancelled
        self.search = search


class ChecksDone(Message):
    """The load and clarity checks of selection ``key`` answered: each a result or the user's mistake."""

    def __init__(self, key: int, load, clear) -> None:
        super().__init__()
        self.key, self.load, self.clear = key, load, clear


class BlendFailed(Message):
    """The blend search stopped on a user's mistake (a SolvselError)."""

    def __init__(self, error: BaseException, search: int = 0) -> None:
        super().__init__()
        self.error = error
        self.search = search


def _text(screen, selector: str) -> str | None:
    """The stripped text of an input, or None when it is empty."""
    t = (screen.query_one(selector, Input).value or "").strip()
    return t or None


def _fmt(x, spec=".2f") -> str:
    return "-" if x is None else format(x, spec)


class CarriersScreen(BenchScreen):
    """Ranked single liquids and optimised blends for the current target."""

    MODE = "carriers"
    FORM = "constraints"
    TABS = "carrier-tabs"
    #: Below 36 rows (a laptop) the detail panes give the lists and the picture more room.
    VERTICAL_BREAKPOINTS = [(0, "-short"), (36, "-tall")]
    #: The form's labels of the request fields (an error about a field names it by its label).
    FIELD_LABELS = {
        "temp_C": "temperature", "min_flash_C": "lowest flash point", "bp_min_C": "boiling window",
        "bp_max_C": "boiling window", "exclude": "leave out", "rejects": "keep out of solution",
        "use": "use", "jurisdiction": "jurisdiction", "max_components": "largest blend (liquids)",
        "purpose": "the product is for", "load": "load of the target", **carrier_checks.FIELD_LABELS,
    }
    BINDINGS = [
        Binding("ctrl+r", "search", "Search blends", priority=True),
        Binding("escape", "cancel", "Cancel search", show=False),
        Binding("ctrl+f", "preset('carrier')", "Carrier preset", show=False, priority=True),
        Binding("ctrl+g", "preset('extraction')", "Extraction preset", show=False, priority=True),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.ranking = None  # RankResult: the single liquids
        self.result = None  # BlendResult: the blends
        self.worker: Worker | None = None
        self.messages: list[Message] = []  # typed messages seen (for the tests and the status line)
        self.search_no = 0  # the search whose messages count (those of an older one are ignored)
        self.stale = False  # the lists on screen are those of the previous search
        self.checks_no = 0  # the selection whose checks count
        self.checks = None  # ChecksDone of the selection shown (the load and clarity answers)
        self.selected = None  # the ranked liquid or blend shown in the detail pane
        self.checks_label = ""  # its name, as the checks panel heads its answers
        self.front = None  # the trade-off front's figure data (jobs.figures.pareto) of the blends shown

    def compose(self) -> ComposeResult:
        yield from self.compose_frame_top()
        with Horizontal(id="carriers-body"):
            with VerticalScroll(id="constraints"):
                yield Static("Constraints", classes="pane-title")
                with Horizontal(classes="preset-row"):
                    yield Button("Carrier ^F", id="preset-carrier", classes="preset", compact=True)
                    yield Button("Extraction ^G", id="preset-extraction", classes="preset", compact=True)
                yield Label("Use")
                yield Select(USE_CHOICES, value="carrier", allow_blank=False, id="use", compact=True)
                yield Label("Jurisdiction")
                yield Select(jurisdiction_choices(self.session.catalog), value="EU", allow_blank=False, id="jurisdiction",
                             compact=True)
                yield Label("The product is for")
                yield Select(purpose_choices(self.session.catalog), value=NO_PURPOSE, allow_blank=False,
                             id="purpose", compact=True)
                yield Label("Largest blend (liquids)")
                yield Select([(str(k), k) for k in (1, 2, 3, 4)], value=3, allow_blank=False, id="max-components", compact=True)
                yield Label("Lowest flash point, C")
                yield Input(placeholder="e.g. 60", id="min-flash", compact=True)
                yield Label("Boiling window, C (LO:HI)")
                yield Input(placeholder="e.g. 40:120 or :100", id="bp-window", compact=True)
                yield Label("Temperature, C")
                yield Input(value="25", id="temp", compact=True)
                yield Label("Leave out (names, commas)")
                yield Input(placeholder="e.g. benzyl alcohol", id="exclude", compact=True)
                yield Label("Keep out (solutes, commas)")
                yield Input(placeholder="e.g. chlorophyll a, sucrose", id="rejects", compact=True)
                yield Label("Load of the target, % mass")
                yield Input(placeholder="e.g. 5%", id="load", compact=True)
                yield from carrier_checks.compose_fields()
                yield Button("Search blends  ^R", id="run-search", variant="primary", compact=True)
            with Vertical(id="carriers-main"):
                with FollowingTabs(id="carrier-tabs", initial="tab-blends"):
                    with TabPane("Single liquids", id="tab-single"):
                        yield DataTable(id="rank-grid", cursor_type="row", zebra_stripes=True)
                    with TabPane("Blends", id="tab-blends"):
                        yield DataTable(id="blend-grid", cursor_type="row", zebra_stripes=True)
                    with TabPane("Trade-off", id="tab-front"):
                        with Horizontal(id="front-body"):
                            yield BrailleMap(id="front-map")
                            with VerticalScroll(id="front-legend-pane"):
                                yield Static("", id="front-legend")
                    with TabPane("Dropped", id="tab-dropped"):
                        yield DataTable(id="dropped-grid", cursor_type="row", zebra_stripes=True)
                    with TabPane("Left out", id="tab-excluded"):
                        yield DataTable(id="excluded-grid", cursor_type="row", zebra_stripes=True)
                with Horizontal(id="search-status-row"):
                    yield ProgressBar(total=1, show_eta=False, id="search-progress")
                    yield Static("", id="search-status")
                with Horizontal(id="carrier-lower"):
                    with VerticalScroll(id="carrier-detail-pane"):
                        yield Static("", id="carrier-detail")
                    with Vertical(id="carrier-side"):
                        with VerticalScroll(id="carrier-checks-pane"):
                            yield Static("", id="carrier-checks")
                        with VerticalScroll(id="carrier-cautions-pane"):
                            yield CautionBox(id="carrier-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        fill_table(self.query_one("#rank-grid", DataTable), RANK_HEADERS, [])
        fill_table(self.query_one("#dropped-grid", DataTable), DROPPED_HEADERS, [])
        fill_table(self.query_one("#excluded-grid", DataTable), EXCLUDED_HEADERS, [])
        self.fill_preset("carrier")

    # ---------------------------------------------------------------- target / presets
    def target_changed(self) -> None:
        self.refresh_all()

    def refresh_all(self) -> None:
        if self.session.target is None:
            self.query_one("#carrier-detail", Static).update("No target: choose one on the Target screen (F2).")
            return
        requests = self.guard(self.read_form)
        if requests is None:
            return
        self.run_ranking(requests[0])
        self.start_search(requests[1])

    def fill_preset(self, key: str) -> None:
        part = self.session.scenario_part(key)
        self.query_one("#use", Select).value = part.get("use", key)
        self.query_one("#jurisdiction", Select).value = part.get("jurisdiction", "EU")
        self.query_one("#purpose", Select).value = part.get("purpose") or NO_PURPOSE
        self.query_one("#max-components", Select).value = int(part.get("max_components", 3))
        self.query_one("#temp", Input).value = f"{float(part.get('temp_C', 25.0)):g}"
        self.query_one("#rejects", Input).value = ", ".join(part.get("reject", []))
        self.query_one("#exclude", Input).value = ", ".join(part.get("exclude", []))
        self.query_one("#min-flash", Input).value = _g(part.get("min_flash_C"))
        lo, hi = part.get("bp_min_C"), part.get("bp_max_C")
        self.query_one("#bp-window", Input).value = "" if lo is None and hi is None else f"{_g(lo)}:{_g(hi)}"
        self.query_one("#load", Input).value = "" if part.get("load") is None else f"{100 * float(part['load']):g}%"
        self.query_one("#storage", Input).value = str(part.get("storage_C") or "")

    def report_of(self):
        """(job, title, text, result) of the list in front, for a report (None before any result)."""
        single = self.query_one("#carrier-tabs", TabbedContent).active == "tab-single"
        result = self.ranking if single else self.result
        if result is None:
            return None
        name = self.session.target.name if self.session.target is not None else "the target"
        return ("rank" if single else "blend", f"{'Single liquids' if single else 'Blends'} for {name}",
                str(self.query_one("#carrier-detail", Static).render()), result)

    def form_to_session(self) -> None:
        """The constraints as the request reads them (a mistake in the form: the dialog, nothing kept)."""
        requests = self.guard(self.read_form)
        if requests is None:
            return
        b = requests[1]
        self.session.overrides["carrier"] = {
            "use": b.use or "any", "jurisdiction": b.jurisdiction or "none", "purpose": b.purpose,
            "max_components": b.max_components, "temp_C": b.temp_C, "exclude": list(b.exclude),
            "reject": list(b.rejects), "min_flash_C": b.min_flash_C, "bp_min_C": b.bp_min_C, "bp_max_C": b.bp_max_C,
            "load": b.load}
        if _text(self, "#storage"):  # the storage range of the load checks, as text the command line reads too
            self.session.overrides["carrier"]["storage_C"] = f"{b.storage_C[0]:g}:{b.storage_C[1]:g}"

    def session_to_form(self) -> None:
        self.fill_preset("carrier")
        self.refresh_all()

    def action_preset(self, key: str) -> None:
        self.fill_preset(key)
        self.refresh_all()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "run-search":
            self.action_search()
        elif event.button.id in ("preset-carrier", "preset-extraction"):
            self.action_preset(event.button.id.split("-", 1)[1])

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.action_search()

    def action_search(self) -> None:
        self.refresh_all()

    def read_form(self):
        """The ``rank`` and ``blend`` requests the form describes (text parsed by :mod:`solvsel.jobs.parse`)."""
        from ..jobs.blend import BlendRequest
        from ..jobs.parse import parse_names, parse_number, parse_range
        from ..jobs.rank import RankRequest

        use = self.query_one("#use", Select).value
        jur = self.query_one("#jurisdiction", Select).value
        flash, window = _text(self, "#min-flash"), _text(self, "#bp-window")
        exclude, rejects = _text(self, "#exclude"), _text(self, "#rejects")
        lo, hi = parse_range(window, "bp_min_C") if window else (None, None)
        common = dict(
            target=self.session.target, use=None if use == "any" else use,
            jurisdiction=None if jur == "none" else jur, purpose=purpose_value(self.query_one("#purpose", Select)),
            min_flash_C=None if flash is None else parse_number(flash, "min_flash_C", "C"),
            bp_min_C=lo, bp_max_C=hi,
            temp_C=parse_number(self.query_one("#temp", Input).value, "temp_C", "C"),
            exclude=tuple(parse_names(exclude, "exclude")) if exclude else (),
            load=_text(self, "#load"),
        )
        if _text(self, "#storage"):  # the load checks' storage range (the jobs' default without it)
            common["storage_C"] = _text(self, "#storage")
        return (
            RankRequest(**common, food=common["use"] is not None, top=15),
            BlendRequest(**common, max_components=int(self.query_one("#max-components", Select).value),
                         rejects=tuple(parse_names(rejects, "rejects")) if rejects else (), top=10),
        )

    # ---------------------------------------------------------------- single liquids
    def run_ranking(self, req) -> None:
        """Rank the single liquids (the ``rank`` job) and show them."""
        from ..jobs.rank import rank

        res = self.guard(rank, req, catalog=self.session.catalog)
        if res is None:
            return
        self.ranking = res
        self.session.ranking = res
        self.fill_ranking()
        self.show_active()

    def fill_ranking(self) -> None:
        res = self.ranking
        fill_table(self.query_one("#rank-grid", DataTable), RANK_HEADERS, [
            (str(i), _fmt(r.ra), _fmt(r.red), _allowed(r), r.hazard_code or "no", _health(r.health_hazard),
             _sure(r.how_sure), _carries(r.load), _fmt(r.flash_C, ".0f"),
             _fmt(r.bp_C, ".0f"), _fmt(r.cost_class, ".0f"), r.name + (" (yours)" if r.origin.startswith("user") else ""))
            for i, r in enumerate(res.results if res is not None else (), 1)], cut=-1, optional=OPTIONAL, spare=SPARE)

    def on_resize(self) -> None:
        """Cut the names to the new width (the verdict columns stay whole)."""
        self.fill_ranking()
        if self.result is not None:
            self.fill_blends(self.result)
            self.draw_front(self.result)

    def form_summary(self) -> str:
        q = self.query_one
        parts = [f"use {q('#use', Select).value}", f"law {q('#jurisdiction', Select).value}",
                 f"for {q('#purpose', Select).value}", f"up to {q('#max-components', Select).value} liquids",
                 f"{q('#temp', Input).value.strip() or '?'} C"]
        for label, sel in (("flash at least", "#min-flash"), ("boils", "#bp-window"), ("leaving out", "#exclude"),
                           ("keeping out", "#rejects"), ("load", "#load"), ("stored", "#storage"),
                           ("dose in the drink", "#drink-dose"), ("chain", "#drink-chain"), ("Brix", "#drink-brix")):
            if _text(self, sel):
                parts.append(f"{label} {_text(self, sel)}")
        return "Constraints: " + " · ".join(parts)

    def show_single(self, r) -> None:
        t = Text()
        t.append(f"{r.name}\n", style="bold")
        t.append(f"HSP at {self.ranking.temp_C:g} C  dD {r.dD:.2f}  dP {r.dP:.2f}  dH {r.dH:.2f} MPa^0.5   Ra {r.ra:.2f}"
                 + (f"   RED {r.red:.2f}" if r.red is not None else "") + "\n")
        t.append(f"bp {_fmt(r.bp_C, '.0f')} C   flash {_fmt(r.flash_C, '.0f')} C   {r.hazard or 'not flammable'}\n")
        t.append(f"food status: {r.food_status or 'no data'}   water: {r.water_miscibility or '-'}"
                 f"   cost class {_fmt(r.cost_class, '.0f')}\n")
        if r.solubility and r.solubility.get("g_per_L") is not None:
            t.append(f"solubility estimate {r.solubility['g_per_L']:.3g} g/L (an estimate; confirm at the bench)\n")
        t.append_text(_more_text(r.health_hazard, r.how_sure, r.load))
        for n in tuple(r.notes) + tuple(self.ranking.notes):
            t.append(f"note: {n}\n", style="dim")
        if self.ranking.dropped:
            t.append(f"{len(self.ranking.dropped)} liquids left out of the ranking (e.g. "
                     + "; ".join(f"{d.name}: {d.brief}" for d in self.ranking.dropped[:2]) + ")\n", style="dim")
        t.append_text(audit_text(self.ranking.audit))
        self.query_one("#carrier-detail", Static).update(t)
        self.selected = r
        self.show_cautions(r)
        self.check_selection(r)

    # ---------------------------------------------------------------- blends (worker)
    def start_search(self, req) -> None:
        if self.worker is not None and self.worker.state in (WorkerState.PENDING, WorkerState.RUNNING):
            self.worker.cancel()
        self.search_no += 1
        self.set_stale(self.result is not None)
        self.query_one("#search-progress", ProgressBar).update(total=100, progress=0)
        self.status("searching blends: the pool and its constraints · Esc cancels")
        self.show_summary()
        self.worker = self.search_worker(req, self.search_no)

    def set_stale(self, stale: bool) -> None:
        """Grey the blend lists and label their tabs as old while they are those of the previous search."""
        for grid_id in ("#blend-grid", "#dropped-grid", "#excluded-grid", "#front-map"):
            self.query_one(grid_id).set_class(stale, "-stale")
        tabs = self.query_one("#carrier-tabs", TabbedContent)
        for pane, label in SEARCH_TABS.items():
            tabs.get_tab(pane).label = f"{label} (old)" if stale else label
        self.stale = stale

    def status(self, text: str) -> None:
        """The status line beside the bar (saying so while the lists are the previous search's)."""
        stale = " · greyed: the previous search's lists" if self.stale else ""
        self.query_one("#search-status", Static).update(text + stale)

    def searching(self) -> bool:
        return self.worker is not None and self.worker.state in (WorkerState.PENDING, WorkerState.RUNNING)

    @work(thread=True, exclusive=True, group="blends", exit_on_error=False)
    def search_worker(self, req, search: int = 0) -> None:
        """Run the ``blend`` job off the UI thread (its name look-ups may reach the reference library)."""
        from ..errors import SolvselError
        from ..jobs import blend as blend_job

        worker = get_current_worker()
        self.post_message(BlendProgress(0, None, f"pool and constraints; blends of up to {req.max_components} liquids",
                                        search))
        last = {"step": "", "at": 0.0}

        def step_progress(step: str, done: int, total: int) -> bool:
            # the job calls this through every step of the search; False stops it at once
            if worker.is_cancelled:
                return False
            now = time.monotonic()
            if step != last["step"] or done >= total or now - last["at"] >= PROGRESS_EVERY:
                last.update(step=step, at=now)
                text = STEPS[step][2].format(done=done, total=total) + " · Esc cancels"
                self.post_message(BlendProgress(done, total, text, search, step))
            return True

        try:
            res = blend_job.blend(req, catalog=self.session.catalog, step_progress=step_progress)
        except SolvselError as exc:
            self.post_message(BlendFailed(exc, search))
            return
        if worker.is_cancelled:  # stopped by the callback (a result with success False), or just after
            self.post_message(BlendDone(None, cancelled=True, search=search))
            return
        self.post_message(BlendDone(res, search=search))

    def action_cancel(self) -> None:
        """Stop the search at whatever step it is in; the lists go back to the previous search's."""
        if self.searching():
            self.worker.cancel()
            self.search_no += 1  # whatever the cancelled search still posts is ignored
            self.stopped("search cancelled: the lists show the previous search" if self.result is not None
                         else "search cancelled")
            self.set_stale(False)

    def stopped(self, text: str) -> None:
        self.query_one("#search-progress", ProgressBar).update(total=100, progress=0)
        self.query_one("#search-status", Static).update(text)

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.worker.group == "checks" and event.state == WorkerState.ERROR:
            # not a user's mistake (those come in ChecksDone): a fault of the program, said where the answer goes
            self.query_one("#carrier-checks", Static).update(Text(
                f"the checks failed: {type(event.worker.error).__name__}: {event.worker.error} (please report it)",
                style="bold"))
            return
        # a search cancelled before its thread ran posts nothing: say so here
        if event.worker is self.worker and event.state == WorkerState.CANCELLED:
            self.stopped("search cancelled")
        elif event.worker is self.worker and event.state == WorkerState.ERROR:
            # not a user's mistake (those come as BlendFailed): a fault of the program, shown, not hidden
            from .dialogs import ErrorDialog

            self.stopped("search failed")
            self.set_stale(False)
            err = event.worker.error
            self.app.push_screen(ErrorDialog("Internal error (please report it)", f"{type(err).__name__}: {err}"))

    def on_blend_progress(self, message: BlendProgress) -> None:
        if message.search != self.search_no:
            return
        self.messages.append(message)
        start, share, _ = STEPS.get(message.step, (0.0, 0.0, ""))
        part = min(1.0, message.done / message.total) if message.total else 0.0
        self.query_one("#search-progress", ProgressBar).update(total=100, progress=100 * (start + share * part))
        self.status(message.text)

    def on_blend_failed(self, message: BlendFailed) -> None:
        if message.search != self.search_no:
            return
        self.messages.append(message)
        self.stopped("search stopped: see the message")
        self.set_stale(False)
        from .dialogs import show_error

        show_error(self.app, message.error, self.FIELD_LABELS)

    def on_blend_done(self, message: BlendDone) -> None:
        if message.search != self.search_no:
            return
        self.messages.append(message)
        self.set_stale(False)
        if message.cancelled or message.result is None:
            self.stopped("search cancelled")
            return
        self.query_one("#search-progress", ProgressBar).update(total=100, progress=100)
        res = message.result
        self.result = res
        self.session.blends = res
        c = res.counts
        self.query_one("#search-status", Static).update(
            f"{len(res.results)} blends shown · {len(res.dropped)} dropped · {len(res.excluded)} liquids left out · "
            f"{c.get('combinations', 0):,} combinations of {c.get('liquids', 0)} liquids"
            + ("" if res.success else f"; {res.message}"))
        self.fill_blends(res)
        self.draw_front(res)

    def fill_blends(self, res) -> None:
        rejects = any(b.rejects for b in res.results)
        basis = next((b.selectivity_basis for b in res.results if b.selectivity_basis), "Ra")
        cols = ["#", "Ra MPa½", "RED"]
        if rejects:
            cols += [f"keep-out {basis}", "margin"]
        cols += ["one phase", "flammable", "health", "how sure", "carries", "flash °C", "boils °C", "cost",
                 "blend (volume fractions)"]
        rows = []
        for i, b in enumerate(res.results):
            row = [str(b.rank) + ("*" if b.pareto and rejects else ""), _fmt(b.ra), _fmt(b.red)]
            if rejects:
                row += [_fmt(b.worst_reject_red if b.worst_reject_red is not None else b.worst_reject_ra),
                        _fmt(b.selectivity)]
            rows.append(row + [_phase(b, short=True), _short_hazard(b), _health(_nth(res.health, i)),
                               _sure(_nth(res.sure, i)), _carries(_nth(res.loads, i)), _fmt(b.lowest_flash_C, ".0f"), _bp(b),
                               _fmt(b.cost, ".1f"), b.label + (f" (+{len(b.alternatives)} alike)" if b.alternatives else "")])
        fill_table(self.query_one("#blend-grid", DataTable), cols, rows, cut=-1, optional=OPTIONAL, spare=SPARE,
                   name_room=BLEND_ROOM)
        fill_table(self.query_one("#dropped-grid", DataTable), DROPPED_HEADERS, [
            # the blend at most BLEND_ROOM cells, so that its reason has room (the detail pane has both whole)
            (_fmt(d.ra), shorten(" + ".join(f"{n} {x:.2f}" for n, x in zip(d.names, d.volume_fractions)), BLEND_ROOM),
             d.reason) for d in res.dropped], cut=-1)
        fill_table(self.query_one("#excluded-grid", DataTable), EXCLUDED_HEADERS,
                   [(e.reason, e.name) for e in res.excluded], cut=0)
        if res.results or self.query_one("#carrier-tabs", TabbedContent).active != "tab-blends":
            self.show_active()
        else:
            self.query_one("#carrier-detail", Static).update(f"No blend: {res.message}")
            self.show_cautions()

    def draw_front(self, res) -> None:
        """The trade-off front of the blends found, from the figure data the report draws too."""
        from ..jobs.figures import pareto

        self.front = pareto(res.to_dict()) if res.results else None
        pic = self.query_one("#front-map", BrailleMap)
        legend = self.query_one("#front-legend", Static)
        if self.front is None:
            pic.data = None
            legend.update(f"No blend to draw: {res.message}")
            return
        from .tradeoff import front_legend, front_map

        pic.data = front_map(self.front)
        pic.border_title = f"Ra against {self.front.data['x_label']}"
        legend.update(front_legend(self.front, 38 if self.app.size.width >= NARROW else 28))  # the pane's room

    def on_braille_map_cursor_moved(self, message: BrailleMap.CursorMoved) -> None:
        self.query_one("#front-map", BrailleMap).border_subtitle = (
            f"under the cursor: {message.names}" if message.names else "arrow keys: a cursor that names the blends")

    # ---------------------------------------------------------------- the load and clarity checks
    def check_selection(self, selected) -> None:
        """Ask the ``load`` and ``clarity`` jobs about the selected liquid or blend (in the worker); what the
        form lacks for them, or a mistake in it, is said in the panel."""
        from ..errors import SolvselError

        self.checks_no += 1
        self.checks = None
        carrier = carrier_checks.carrier_of(selected)
        reqs = carrier_checks.requests(self.session.target, carrier, _text(self, "#load"), _text(self, "#storage"),
                                       _text(self, "#drink-dose"), _text(self, "#drink-chain"),
                                       _text(self, "#drink-brix"))
        self.checks_label = carrier.label
        if all(isinstance(r, SolvselError) for r in reqs):  # nothing to ask: say what is missing at once
            self.on_checks_done(ChecksDone(self.checks_no, *reqs))
            return
        self.query_one("#carrier-checks", Static).update(Text("checking ...", style="dim"))
        self.checks_worker(self.checks_no, *reqs)

    @work(thread=True, exclusive=True, group="checks", exit_on_error=False)
    def checks_worker(self, key: int, load_req, clarity_req) -> None:
        """Run the ``load`` and ``clarity`` jobs off the UI thread; each answer, or the user's mistake, is posted."""
        from ..errors import SolvselError
        from ..jobs.clarity import clarity
        from ..jobs.load import load

        worker, answers = get_current_worker(), []
        with CHECKS_LOCK:
            for job, req in ((load, load_req), (clarity, clarity_req)):
                if worker.is_cancelled:  # the selection changed: its answers would be ignored
                    return
                try:  # a request the form could not build is its error, passed on as it is
                    answers.append(req if isinstance(req, SolvselError) else job(req, catalog=self.session.catalog))
                except SolvselError as exc:
                    answers.append(exc)
        self.post_message(ChecksDone(key, *answers))

    def on_checks_done(self, message: ChecksDone) -> None:
        from ..errors import SolvselError

        if message.key != self.checks_no:
            return  # the answer for a selection left since
        self.checks = message
        t = Text()
        asked = (("Dissolves?", message.load, carrier_checks.load_text),
                 ("Drink stays clear?", message.clear, carrier_checks.clarity_text))
        if message.load is message.clear:  # one thing missing for both questions (the load): said once
            asked = (("Dissolves? Drink stays clear?", message.load, None),)
        for question, answer, say in asked:
            t.append_text(carrier_checks.error_text(question, answer, self.FIELD_LABELS)
                          if isinstance(answer, SolvselError) else say(answer))
        self.query_one("#carrier-checks", Static).update(t)
        self.query_one("#carrier-checks-pane").border_title = f"in {self.checks_label}"
        self.show_cautions(self.selected)

    # ---------------------------------------------------------------- detail and cautions
    GRID_TAB = {"rank-grid": "tab-single", "blend-grid": "tab-blends", "dropped-grid": "tab-dropped",
                "excluded-grid": "tab-excluded"}

    def on_tabbed_content_tab_activated(self, event: TabbedContent.TabActivated) -> None:
        self.show_active()

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        if self.GRID_TAB.get(event.data_table.id) == self.query_one("#carrier-tabs", TabbedContent).active:
            self.show_row(event.data_table.id, event.cursor_row)

    def show_active(self) -> None:
        """Show the highlighted row of the list in front (and the cautions)."""
        active = self.query_one("#carrier-tabs", TabbedContent).active
        for grid_id, tab in self.GRID_TAB.items():
            if tab == active:
                grid = self.query_one(f"#{grid_id}", DataTable)
                if grid.row_count:
                    self.show_row(grid_id, grid.cursor_row)
                    return
        self.show_cautions()

    def show_row(self, grid_id: str, row: int) -> None:
        """Show the liquid, blend or reason behind row ``row`` of a list."""
        if grid_id == "blend-grid" and self.result is not None and 0 <= row < len(self.result.results):
            self.show_blend(self.result.results[row])
        elif grid_id == "rank-grid" and self.ranking is not None and 0 <= row < len(self.ranking.results):
            self.show_single(self.ranking.results[row])
        elif grid_id == "dropped-grid" and self.result is not None and 0 <= row < len(self.result.dropped):
            d = self.result.dropped[row]
            label = " + ".join(f"{n} {x:.2f}" for n, x in zip(d.names, d.volume_fractions))
            self.query_one("#carrier-detail", Static).update(Text.assemble(
                ("dropped: ", "bold"), (label + "\n", "bold"), f"Ra {d.ra:.2f} MPa^0.5\n", d.reason))
            self.show_cautions(None)
        elif grid_id == "excluded-grid" and self.result is not None and 0 <= row < len(self.result.excluded):
            e = self.result.excluded[row]
            self.query_one("#carrier-detail", Static).update(Text.assemble(
                ("not in the pool: ", "bold"), (e.name + "\n", "bold"), e.reason, audit_text(self.result.audit)))

    def show_blend(self, b) -> None:
        t = Text()
        t.append(f"#{b.rank}  {b.label}\n", style="bold")
        t.append(f"blend HSP  dD {b.dD:.2f}  dP {b.dP:.2f}  dH {b.dH:.2f} MPa^0.5   Ra {b.ra:.2f}"
                 + (f"   RED {b.red:.2f}" if b.red is not None else "   (no R0: RED not given)") + "\n")
        width = max(len(c.name) for c in b.components)
        t.append(f"  {'':<{width}}  volume  mass\n", style="dim")
        for c in b.components:
            mf = "-" if c.mass_fraction is None else f"{c.mass_fraction:.3f}"
            t.append(f"  {c.name:<{width}}  {c.volume_fraction:.3f}   {mf}\n")
        if len(b.components) > 1:
            t.append(f"one phase: {_phase(b)}  {b.phase_note}\n", style="dim")
        t.append(f"flash point of its most flammable liquid {_fmt(b.lowest_flash_C, '.0f')} C · boils {_bp(b)} C · "
                 f"cost class {_fmt(b.cost, '.1f')} (1 cheap .. 5 dear)\n")
        if b.alternatives:
            t.append(f"the same blend with {', '.join(b.swapped_in)} in place (same HSP; cost, hazard and food-law "
                     "status may differ)\n")
        if self.result is not None and b in self.result.results:
            i = self.result.results.index(b)
            t.append_text(_more_text(_nth(self.result.health, i), _nth(self.result.sure, i), _nth(self.result.loads, i)))
        if b.rejects:
            t.append("kept out: " + ", ".join(
                f"{r.name} Ra {r.ra:.1f}" + (f" RED {r.red:.2f}" if r.red is not None else "") for r in b.rejects) + "\n")
        if b.solubility:
            g = b.solubility.get("g_per_L")
            if g is not None:
                t.append(f"solubility estimate: {g:.3g} g/L (an estimate; confirm at the bench)\n")
        for rg in b.regulations:
            line = f"{rg.get('name', '')}: {rg.get('status_text') or rg.get('status', '')}"
            if rg.get("conditions"):
                line += " - " + "; ".join(rg["conditions"][:2])
            t.append(line + "\n", style="italic")
        t.append_text(audit_text(self.result.audit if self.result is not None else None))
        self.query_one("#carrier-detail", Static).update(t)
        self.selected = b
        self.show_cautions(b)
        self.check_selection(b)

    def show_cautions(self, selected=None) -> None:
        """The selected liquid's or blend's own cautions, then those of the list it is in that belong
        to no single row of it (all from the jobs' results): never the cautions of a liquid that is
        not in the selection."""
        res = self.result if selected is None or hasattr(selected, "components") else self.ranking
        res = res if res is not None else (self.result or self.ranking)
        cautions = list(selected.cautions) if selected is not None else []
        if selected is not None and selected is self.selected and self.checks is not None:
            cautions += [c for answer in (self.checks.load, self.checks.clear) for c in getattr(answer, "cautions", ())]
        if res is not None:
            own = {c for row in res.results for c in row.cautions} | set(getattr(res, "liquid_cautions", ()))
            cautions += [c for c in res.cautions if c not in own]
        t = self.session.target
        if t is not None and t.solute is not None and getattr(t.solute, "category", "") == "active" and t.solute.note:
            cautions.append(t.solute.note)
        # the most serious first: flammability and toxicity before the general deferral
        cautions.sort(key=lambda c: c.startswith(("Estimates", "Screening")))
        self.query_one("#carrier-cautions", CautionBox).show(cautions)


def _g(x) -> str:
    """A number of the form as typed (empty for none)."""
    return "" if x is None else f"{float(x):g}"


def _nth(items, i: int):
    return items[i] if i < len(items) else None


def _health(h: dict | None) -> str:
    """The worst health hazard of a liquid or blend in a word ("harmful"), "-" where none was looked up."""
    if not h:
        return "-"
    return str(h.get("category") or "-").replace("none", "no")


def _sure(s: dict | None) -> str:
    """How sure the place in the list is, as the job words it ("stable"), "-" where not asked."""
    return str((s or {}).get("verdict") or "-")


def _carries(load: dict | None) -> str:
    """The load check's verdict (yes / no / borderline) with the largest load, "-" without a load."""
    if not load:
        return "-"
    top = load.get("largest_load")
    return str(load.get("verdict")) + ("" if top is None else f" ≤{100 * top:.3g}%")


def _allowed(r) -> str:
    """The food-law verdict of a ranked liquid for the use in a word or two (the status in full in the pane)."""
    word = {True: "yes", False: "NO", None: "?"}[r.food_allowed]
    return word + (", if" if r.food_allowed and (r.food_status or "").startswith("conditional") else "")


def _short_hazard(b) -> str:
    if b.hazard_rank == 0:
        return "no"
    if "category" not in b.hazard:
        return "yes, class ?" if "flammable" in b.hazard else b.hazard[:16]
    return b.hazard.replace("flammable liquid, GHS ", "").replace("category ", "cat ")


def _phase(b, short: bool = False) -> str:
    """One-phase verdict of a blend with its basis ("pred." / "meas." in the table when ``short``)."""
    if len(b.components) == 1:
        return "-"
    if b.one_phase is None:
        return "?"
    basis = {"measured": "meas." if short else "measured", "predicted": "pred." if short else "predicted"}
    return ("yes" if b.one_phase else "NO") + (f" ({basis[b.phase_basis]})" if b.phase_basis in basis else "")


def _bp(b) -> str:
    if b.bp_min_C is None:
        return "-"
    if b.bp_min_C == b.bp_max_C:
        return f"{b.bp_min_C:g}"
    return f"{b.bp_min_C:g}-{b.bp_max_C:g}"


def _more_text(health: dict | None, sure: dict | None, load: dict | None) -> Text:
    """Health hazard, how sure the place in the list is, and the load check, for a detail pane."""
    t = Text()
    if health:
        label = health.get("label") or ", ".join(f"{k}: {v}" for k, v in (health.get("liquids") or {}).items())
        t.append(f"health hazard: {label or health.get('category', '-')}\n")
    if sure:
        share = sure.get("in_top_three")
        t.append(f"how sure: {sure.get('verdict', '-')}" + ("" if share is None else
                 f" (among the best three in {share:.0%} of targets drawn within the target's uncertainty)") + "\n")
    if load:
        t.append(f"load {100 * load['load']:.3g} %: {load.get('verdict')}; {load.get('reason', '')}\n")
    return t
