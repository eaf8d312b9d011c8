"""Extraction screen: which strength of the solvent pair, how cold, for the current target.

Builds an :class:`~solvsel.jobs.extraction.ExtractionRequest` from its fields and
the session's target, runs the :func:`~solvsel.jobs.extraction.extraction` job in a
thread worker (a grid of a few hundred points takes a second or more), and draws
the plan's heat map from the figure data the job's result carries
(:func:`solvsel.jobs.figures.figures_of`): the value the best point is chosen by
over strength x temperature, frozen points blank, the best point marked; then
the best window in words, the stripping temperatures, the legal status of each
liquid with its residue limits, the notes and the cautions.
"""

from __future__ import annotations

from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Button, Input, Label, Select, Static

from .base import BenchScreen
from .carriers import jurisdiction_choices
from .limits import NO_PURPOSE, audit_text, purpose_choices, purpose_value
from .widgets import CautionBox, heat_map


class ExtractionScreen(BenchScreen):
    """An extraction plan over solvent strength x temperature."""

    MODE = "extraction"
    FORM = "extraction-form"
    BINDINGS = [Binding("ctrl+r", "compute", "Plan", priority=True)]
    FIELD_LABELS = {"liquids": "solvent pair", "strengths": "strengths", "temps_C": "temperatures",
                    "rejects": "keep out of the extract", "vacuum_kPa": "evaporator vacuum",
                    "finish_C": "finishing temperature", "jurisdiction": "jurisdiction", "purpose": "the product is for"}

    def __init__(self) -> None:
        super().__init__()
        self.result = None
        self.figure = None

    def compose(self) -> ComposeResult:
        from ..jobs.extraction import DEFAULT_REJECTS

        yield from self.compose_frame_top()
        with Horizontal(id="extraction-body"):
            with VerticalScroll(id="extraction-form"):
                yield Static("Solvent pair and grid", classes="pane-title")
                yield Label("Solvent pair (the strength is of the first)")
                yield Input("ethanol, water", id="ex-liquids", compact=True)
                yield Label("Strengths, % v/v (LO:HI:STEP or a list)")
                yield Input("40:100:5", id="ex-strengths", compact=True)
                yield Label("Temperatures, C (LO:HI:STEP or a list)")
                yield Input("-40:40:5", id="ex-temps", compact=True)
                yield Label("Keep out of the extract (solutes)")
                yield Input(", ".join(DEFAULT_REJECTS), id="ex-rejects", compact=True)
                yield Label("Evaporator vacuum, kPa absolute")
                yield Input("10", id="ex-vacuum", compact=True)
                yield Label("Finishing temperature, C")
                yield Input("60", id="ex-finish", compact=True)
                yield Label("Jurisdiction")
                yield Select([c for c in jurisdiction_choices(self.session.catalog) if c[1] != "none"], value="EU",
                             allow_blank=False, id="ex-jurisdiction", compact=True)
                yield Label("The product is for")
                yield Select(purpose_choices(self.session.catalog), value=NO_PURPOSE, allow_blank=False,
                             id="ex-purpose", compact=True)
                yield Button("Plan  ^R", id="ex-compute", variant="primary", compact=True)
            with VerticalScroll(id="extraction-results"):
                yield Static("", id="ex-status", classes="dim-line")
                yield Static("", id="ex-map", classes="result-block")
                yield Static("", id="ex-plan", classes="result-block")
                yield CautionBox(id="ex-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def target_changed(self) -> None:
        self.compute(interactive=False)

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "ex-compute":
            self.compute()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def action_compute(self) -> None:
        self.compute()

    def report_of(self):
        """(job, title, text, result) for a report: the extraction plan on screen, with its heat map."""
        if self.result is None:
            return None
        return "extraction", f"Extraction plan for {self.result.target.name}", self.result.window, self.result

    def form_summary(self) -> str:
        def text(name: str) -> str:
            return self.query_one(f"#ex-{name}", Input).value.strip() or "-"

        return (f"Pair {text('liquids')} · strengths {text('strengths')} % · {text('temps')} C · keep out "
                f"{text('rejects')} · {text('vacuum')} kPa · law {self.query_one('#ex-jurisdiction', Select).value}")

    def request(self):
        """The :class:`~solvsel.jobs.extraction.ExtractionRequest` of the fields and the current target."""
        from ..jobs.extraction import ExtractionRequest
        from ..jobs.parse import parse_names, parse_number

        def text(name: str) -> str:
            return self.query_one(f"#ex-{name}", Input).value.strip()

        rejects = text("rejects")
        return ExtractionRequest(
            target=self.session.target, liquids=tuple(parse_names(text("liquids"), "liquids")),
            strengths=text("strengths") or "40:100:5", temps_C=text("temps") or "-40:40:5",
            rejects=tuple(parse_names(rejects, "rejects")) if rejects else (),
            vacuum_kPa=parse_number(text("vacuum") or "10", "vacuum_kPa", "kPa"),
            finish_C=parse_number(text("finish") or "60", "finish_C", "C"),
            jurisdiction=str(self.query_one("#ex-jurisdiction", Select).value),
            purpose=purpose_value(self.query_one("#ex-purpose", Select)))

    def compute(self, interactive: bool = True) -> None:
        """Build the request (a mistake: the dialog) and plan in the worker."""
        if self.session.target is None:
            self.query_one("#ex-status", Static).update("No target: choose one on the Target screen (F2).")
            return
        req = self.guard(self.request) if interactive else self._quiet(self.request)
        if req is None:
            return
        self.query_one("#ex-status", Static).update("planning over the grid ... (the previous plan stays until then)")
        self.show_summary()
        self.plan_worker(req, interactive)

    def _quiet(self, fn):
        from ..errors import SolvselError

        try:
            return fn()
        except SolvselError as exc:
            self.query_one("#ex-status", Static).update(f"{exc.title}: {exc}")
            return None

    @work(thread=True, exclusive=True, group="extraction", exit_on_error=False)
    def plan_worker(self, req, interactive: bool) -> None:
        from ..errors import SolvselError
        from ..jobs.extraction import extraction

        try:
            result = extraction(req, catalog=self.session.catalog)
        except SolvselError as exc:
            self.app.call_from_thread(self.failed, exc, interactive)
            return
        self.app.call_from_thread(self.show, result)

    def failed(self, exc, interactive: bool) -> None:
        from .dialogs import show_error

        self.query_one("#ex-status", Static).update(f"no plan: {exc.title}")
        if interactive:
            show_error(self.app, exc, self.FIELD_LABELS)

    def show(self, result) -> None:
        """Show an :class:`~solvsel.jobs.extraction.ExtractionResult` (its heat map from its figure data)."""
        from ..jobs.figures import figures_of

        self.result = result
        figs = figures_of("extraction", result.to_dict())
        self.figure = figs[0] if figs else None
        self.query_one("#ex-status", Static).update(
            f"{' + '.join(result.liquids)} for {result.target.name}: {len(result.strengths)} strengths x "
            f"{len(result.temps_C)} temperatures")
        self.query_one("#ex-map", Static).update(heat_map(self.figure.data) if self.figure else Text())
        self.query_one("#ex-plan", Static).update(self._plan_text(result))
        self.query_one("#ex-cautions", CautionBox).show(result.cautions)

    @staticmethod
    def _plan_text(r) -> Text:
        t = Text()
        t.append("\nBest window\n", style="bold")
        t.append(f"{r.window}\n")
        strip = r.strip or {}
        if strip.get("note"):
            t.append("\nStripping the solvent\n", style="bold")
            t.append(f"at {strip.get('vacuum_kPa', '-')} kPa: {strip['note']}\n")
        if r.legal:
            t.append("\nLegal status for the purpose\n", style="bold")
            for g in r.legal:
                t.append(f"{g['name']}: ", style="bold")
                t.append(f"{g.get('status_text') or g.get('status')}\n")
                for lim in g.get("residue_limits") or ():
                    over = "-" if lim.get("over") is None else ("OVER" if lim["over"] else "within")
                    value = f"{lim['limit']:g} {lim.get('unit', '')}" if lim.get("limit") is not None else lim.get("status")
                    t.append(f"  residue {lim.get('rule')}: {value} ({over})\n", style="dim")
        for n in r.notes:
            t.append(f"note: {n}\n", style="dim")
        t.append_text(audit_text(r.audit))
        return t
