"""Mixing screen: do these liquids form one phase, and why.

Builds a :class:`~solvsel.jobs.miscible.MiscibleRequest` from its fields and
shows the job's answer: the verdict on the liquids together, each pair with
its basis (measured or predicted) and one-phase window, the blend at given
fractions, and the liquids that bridge two immiscible ones.
"""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Button, DataTable, Input, Label, Static

from .base import BenchScreen
from .widgets import CautionBox, Tick, fill_table

PAIR_HEADERS = ("one phase", "basis", "chi / chi crit", "liquid a", "liquid b", "predicted by")
BRIDGE_HEADERS = ("#", "max chi / chi crit", "with a", "with b", "mixes with both")


def _ratio(chi, chi_c) -> str:
    if chi is None or not chi_c:
        return "-"
    return f"{chi / chi_c:.2f}"


class MixingScreen(BenchScreen):
    """One phase or two: liquids pair by pair, a blend at its fractions, bridging liquids."""

    MODE = "mixing"
    FORM = "mixing-form"
    BINDINGS = [Binding("ctrl+r", "compute", "Check", priority=True)]
    FIELD_LABELS = {"liquids": "liquids", "temp_C": "temperature", "fractions": "volume fractions",
                    "bridge": "bridging liquids", "food": "food carriers only"}

    def __init__(self) -> None:
        super().__init__()
        self.result = None

    def compose(self) -> ComposeResult:
        yield from self.compose_frame_top()
        with Horizontal(id="mixing-body"):
            with VerticalScroll(id="mixing-form"):
                yield Static("Liquids to mix", classes="pane-title")
                yield Label("Liquids (comma-separated)")
                yield Input(id="mix-liquids", compact=True)
                yield Label("Temperature, C")
                yield Input("25", id="mix-temp", compact=True)
                yield Label("Volume fractions (optional: 70,30)")
                yield Input(id="mix-fractions", compact=True)
                yield Tick("Bridging liquids (two liquids)", id="mix-bridge", compact=True)
                yield Tick("Food carriers only", id="mix-food", compact=True)
                yield Button("Check  ^R", id="mix-compute", variant="primary", compact=True)
            with VerticalScroll(id="mixing-results"):
                yield Static("", id="mix-summary", classes="result-block")
                yield DataTable(id="mix-pairs", cursor_type="row", zebra_stripes=True)
                yield Static("", id="mix-blend", classes="result-block")
                yield DataTable(id="mix-bridges", cursor_type="row", zebra_stripes=True)
                yield CautionBox(id="mix-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        names = self.session.scenario_part("mixing").get("liquids") or ["water", "ethanol", "d-limonene"]
        self.query_one("#mix-liquids", Input).value = ", ".join(names)
        fill_table(self.query_one("#mix-pairs", DataTable), PAIR_HEADERS, [])
        self.query_one("#mix-bridges", DataTable).display = False

    def report_of(self):
        """(job, title, text, result) for a report: the miscibility check on screen."""
        if self.result is None:
            return None
        return "miscible", "One phase or two", str(self.query_one("#mix-summary", Static).render()), self.result

    def form_summary(self) -> str:
        q = self.query_one
        parts = [q("#mix-liquids", Input).value.strip() or "-", f"{q('#mix-temp', Input).value.strip() or '25'} C"]
        if q("#mix-fractions", Input).value.strip():
            parts.append(f"fractions {q('#mix-fractions', Input).value.strip()}")
        if q("#mix-bridge", Tick).value:
            parts.append("with bridging liquids" + (" (food carriers)" if q("#mix-food", Tick).value else ""))
        return "Liquids: " + " · ".join(parts)

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "mix-compute":
            self.compute()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def action_compute(self) -> None:
        self.compute()

    def request(self):
        """The request the fields describe."""
        from ..jobs.miscible import MiscibleRequest
        from ..jobs.parse import parse_fractions, parse_names, parse_number

        q = self.query_one
        liquids = tuple(parse_names(q("#mix-liquids", Input).value, "liquids"))
        temp = parse_number(q("#mix-temp", Input).value.strip() or "25", "temp_C", "C")
        text = q("#mix-fractions", Input).value.strip()
        fractions = parse_fractions(text, len(liquids)) if text else None
        return MiscibleRequest(liquids=liquids, temp_C=temp, fractions=fractions,
                               bridge=q("#mix-bridge", Tick).value, food=q("#mix-food", Tick).value)

    def compute(self) -> None:
        from ..jobs.miscible import miscible

        request = self.guard(self.request)
        if request is None:
            return
        result = self.guard(miscible, request, catalog=self.session.catalog)
        if result is not None:
            self.result = result
            self.show(result)
            self.show_summary()

    def show(self, r) -> None:
        verdict = {"yes": "one phase in all proportions", "partial": "one phase only in part of the range",
                   "no": "two phases"}.get(r.one_phase, r.one_phase)
        t = Text()
        t.append(f"{' + '.join(r.liquids)} at {r.temp_C:g} C: ", style="bold")
        t.append(f"{verdict} ({r.basis})\n")
        if r.note:
            t.append(r.note)
        self.query_one("#mix-summary", Static).update(t)
        rows = [(p.one_phase, p.basis, _ratio(p.chi, p.chi_critical), p.liquids[0], p.liquids[1], p.model or "-")
                for p in r.pairs]
        fill_table(self.query_one("#mix-pairs", DataTable), PAIR_HEADERS, rows)
        blend = ""
        if r.blend is not None:
            fr = ", ".join(f"{n} {100 * f:.1f} %" for n, f in zip(r.blend.liquids, r.blend.volume_fractions))
            blend = f"Blend ({fr} by volume): {'one phase' if r.blend.one_phase else 'NOT one phase'}. {r.blend.reason}"
        self.query_one("#mix-blend", Static).update(blend)
        grid = self.query_one("#mix-bridges", DataTable)
        grid.display = r.bridges is not None
        if r.bridges is not None:
            fill_table(grid, BRIDGE_HEADERS, [(str(i), f"{b.closeness:.2f}", b.basis_a, b.basis_b, b.name)
                                              for i, b in enumerate(r.bridges[:15], 1)], cut=-1)
        self.query_one("#mix-cautions", CautionBox).show(r.cautions)
