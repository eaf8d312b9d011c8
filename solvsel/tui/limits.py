"""Limits screen: a flavour formula along its dilution chain, against the finished-product limits.

Builds a :class:`~solvsel.jobs.dose.DoseRequest` from its fields and calls the
:func:`~solvsel.jobs.dose.dose` job; shows the level of every substance at every
stage, each limit that applies (and the one that binds), the largest dose that
keeps them, the residue rules for the formula's purpose, the audit trail (version,
tables' checksum, each rule applied with its checked-on date) and the cautions of
the result.
"""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Button, DataTable, Input, Label, Select, Static

from .base import BenchScreen
from .dialogs import field_label
from .widgets import CautionBox, fill_table

# Verdicts first (kept? binding? how much of the limit, the dose it allows), the rule's text last.
CHECK_HEADERS = ("ok", "binds", "of limit", "max dose", "substance", "level", "limit", "unit", "confidence", "rule")

#: The clarity table: the verdict first, the component last.
CLARITY_HEADERS = ("clear?", "mg/kg in drink", "dissolves mg/kg", "level / solubility", "clear up to mg/kg",
                   "component")

#: The purpose choice meaning "none given" (every residue rule shown with the purposes it applies to).
NO_PURPOSE = "none"


def purpose_choices(catalog) -> list[tuple[str, str]]:
    """(label, id) of the purposes of the catalog's tables/purposes.csv, "none given" first."""
    from ..rules.regulations import purposes

    return [("none given", NO_PURPOSE)] + [(f"{p.label} ({p.id})" if p.label != p.id else p.id, p.id)
                                           for p in purposes(catalog).values()]


def purpose_value(select: Select) -> str | None:
    """The purpose id a Select holds (None for "none given")."""
    value = select.value
    return None if value in (NO_PURPOSE, Select.BLANK) else str(value)


def audit_text(audit: dict | None) -> Text:
    """The audit trail of a result for a detail pane: version, tables' checksum, the rules applied."""
    t = Text()
    if not audit:
        return t
    rules = audit.get("rules_applied") or []
    t.append(f"\naudit: solvsel {audit.get('solvsel_version')}; tables SHA-256 {audit.get('tables_sha256', '')[:16]}...; "
             f"{len(rules)} rule(s) applied\n", style="dim")
    for r in rules:
        t.append(f"  {r['jurisdiction']} {r['rule']}: checked on {r.get('checked_on') or 'not recorded'}, "
                 f"{r['confidence']}; {', '.join(r.get('source') or [])}\n", style="dim")
    return t


def _g(x, spec=".4g") -> str:
    return "-" if x is None else format(x, spec)


class LimitsScreen(BenchScreen):
    """Levels along the dilution chain and the limits of the finished product."""

    MODE = "limits"
    FORM = "limits-form"
    BINDINGS = [Binding("ctrl+r", "compute", "Compute", priority=True)]
    FIELD_LABELS = {"formula": "formula", "dose": "dose", "chain": "dilution chain", "category": "food category",
                    "jurisdiction": "jurisdiction", "purpose": "the formula is for",
                    "brix": "sugar in the drink"}

    def __init__(self) -> None:
        super().__init__()
        self.result = None
        self.clarity = None  # the clarity check of the same formula, dose and chain

    def compose(self) -> ComposeResult:
        yield from self.compose_frame_top()
        with Horizontal(id="limits-body"):
            with VerticalScroll(id="limits-form"):
                yield Static("Flavour and use", classes="pane-title")
                yield Label("Formula, % by mass (NAME=AMOUNT)")
                yield Input(id="lim-formula", compact=True)
                yield Label("Dose in the first stage (0.15%, 1500ppm)")
                yield Input(id="lim-dose", compact=True)
                yield Label("Dilution chain (syrup d=1.28; drink 1+5v)")
                yield Input(id="lim-chain", compact=True)
                yield Label("Food category as consumed")
                yield Input(id="lim-category", compact=True)
                yield Label("Jurisdiction (EU or US)")
                yield Input(id="lim-jurisdiction", compact=True)
                yield Label("Sugar in the drink, degrees Brix (for clarity)")
                yield Input(id="lim-brix", compact=True)
                yield Label("The formula is for (its residues are judged for it)")
                yield Select(purpose_choices(self.session.catalog), value=NO_PURPOSE, allow_blank=False,
                             id="lim-purpose", compact=True)
                yield Button("Check  ^R", id="lim-compute", variant="primary", compact=True)
            with VerticalScroll(id="limits-results"):
                yield Static("", id="lim-summary", classes="result-block")
                yield DataTable(id="lim-checks", cursor_type="row", zebra_stripes=True)
                yield Static("", id="lim-stages-title", classes="result-block")
                yield DataTable(id="lim-stages", cursor_type="row", zebra_stripes=True)
                yield Static("", id="lim-notes", classes="result-block")
                yield Static("", id="lim-clarity-title", classes="result-block")
                yield DataTable(id="lim-clarity", cursor_type="row", zebra_stripes=True)
                yield Static("", id="lim-clarity-notes", classes="result-block")
                yield CautionBox(id="lim-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        self.fill_form()
        fill_table(self.query_one("#lim-checks", DataTable), CHECK_HEADERS, [])
        self.compute(interactive=False)

    def fill_form(self) -> None:
        """The fields from the scenario's flavour (or an opened workspace's)."""
        f = self.session.scenario_part("flavour")
        self.query_one("#lim-formula", Input).value = ", ".join(f"{k}={v:g}" for k, v in f.get("formula", {}).items())
        self.query_one("#lim-dose", Input).value = str(f.get("dose", ""))
        self.query_one("#lim-chain", Input).value = str(f.get("chain", ""))
        self.query_one("#lim-category", Input).value = str(f.get("category", "food"))
        self.query_one("#lim-jurisdiction", Input).value = str(f.get("jurisdiction", "EU"))
        self.query_one("#lim-brix", Input).value = str(f.get("brix", 0))
        if f.get("purpose"):
            self.query_one("#lim-purpose", Select).value = f["purpose"]

    def report_of(self):
        """(job, title, text, result) for a report: the dose check on screen."""
        if self.result is None:
            return None
        return "dose", "Limits along the dilution chain", str(self.query_one("#lim-summary", Static).render()), self.result

    def form_to_session(self) -> None:
        from ..jobs.parse import parse_amounts

        def text(name: str) -> str:
            return self.query_one(f"#lim-{name}", Input).value.strip()

        formula = self.guard(parse_amounts, text("formula"), "formula")
        if formula is None:
            return
        self.session.overrides["flavour"] = {"formula": dict(formula), "dose": text("dose"), "chain": text("chain"),
                                             "category": text("category"), "jurisdiction": text("jurisdiction"),
                                             "brix": text("brix") or 0}

    def session_to_form(self) -> None:
        self.fill_form()
        self.compute(interactive=False)

    def form_summary(self) -> str:
        def text(name: str) -> str:
            return self.query_one(f"#lim-{name}", Input).value.strip() or "-"

        return (f"Formula {text('formula')} · dose {text('dose')} · chain {text('chain')} · food {text('category')} · "
                f"law {text('jurisdiction')} · for {self.query_one('#lim-purpose', Select).value}")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "lim-compute":
            self.compute()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def on_select_changed(self, event: Select.Changed) -> None:
        if event.select.id == "lim-purpose" and self.is_mounted:
            self.compute(interactive=False)

    def action_compute(self) -> None:
        self.compute()

    def request(self):
        """The :class:`~solvsel.jobs.dose.DoseRequest` the fields ask for (empty fields: the defaults)."""
        from ..jobs.dose import DoseRequest

        def text(name: str) -> str:
            return self.query_one(f"#lim-{name}", Input).value.strip()

        return DoseRequest(formula=text("formula"), dose=text("dose") or None, chain=text("chain") or None,
                           category=text("category") or None, jurisdiction=text("jurisdiction") or "EU",
                           purpose=purpose_value(self.query_one("#lim-purpose", Select)))

    def compute(self, interactive: bool = True) -> None:
        """Run the ``dose`` job on the fields and show its result (an error: the dialog when ``interactive``)."""
        from ..errors import SolvselError
        from ..jobs.dose import dose
        from .dialogs import show_error

        try:
            result = dose(self.request(), catalog=self.session.catalog)
        except SolvselError as exc:
            # no stale numbers under an error: clear what the last check showed
            self.result = None
            fill_table(self.query_one("#lim-checks", DataTable), CHECK_HEADERS, [])
            self.query_one("#lim-stages", DataTable).clear(columns=True)
            self.query_one("#lim-stages-title", Static).update("")
            self.query_one("#lim-notes", Static).update("")
            self.clarity = None
            fill_table(self.query_one("#lim-clarity", DataTable), CLARITY_HEADERS, [])
            self.query_one("#lim-clarity-title", Static).update("")
            self.query_one("#lim-clarity-notes", Static).update("")
            said = exc.describe(lambda p: field_label(p, self.FIELD_LABELS))
            self.query_one("#lim-summary", Static).update(Text.assemble((f"{exc.title}: ", "bold"), said))
            if interactive:
                show_error(self.app, exc, self.FIELD_LABELS)
            return
        self.result = result
        self.show(result)
        self.check_clarity()
        self.show_summary()

    def check_clarity(self) -> None:
        """The ``clarity`` job on the same formula, dose and chain: will the drink stay clear?  A mistake
        in the Brix field is said in the block (the limits above stand)."""
        from ..errors import SolvselError
        from ..jobs.clarity import ClarityRequest, clarity
        from ..jobs.parse import parse_number

        def text(name: str) -> str:
            return self.query_one(f"#lim-{name}", Input).value.strip()

        title = self.query_one("#lim-clarity-title", Static)
        grid = self.query_one("#lim-clarity", DataTable)
        self.clarity = None
        try:
            req = ClarityRequest(formula=text("formula"), dose=text("dose") or None, chain=text("chain") or None,
                                 brix=parse_number(text("brix") or "0", "brix", "degrees Brix"))
            self.clarity = clarity(req, catalog=self.session.catalog)
        except SolvselError as exc:
            fill_table(grid, CLARITY_HEADERS, [])
            said = exc.describe(lambda p: field_label(p, self.FIELD_LABELS))
            title.update(Text.assemble(("\nWill the drink stay clear?\n", "bold"), (f"{exc.title}: ", "bold"), said))
            self.query_one("#lim-clarity-notes", Static).update("")
            return
        self.show_clarity(self.clarity)

    def show_clarity(self, r) -> None:
        """Show a :class:`~solvsel.jobs.clarity.ClarityResult`: the verdict, each component, the ways out."""
        t = Text("\nWill the drink stay clear? ", style="bold")
        t.append(f"{r.verdict}\n", style="bold")
        if r.largest_clear_dose is not None:
            dose = (f"{100 * r.largest_clear_dose:.3g} %" if r.dose_unit.endswith("fraction")
                    else f"{r.largest_clear_dose:.4g} {r.dose_unit}")
            t.append(f"largest dose that keeps every judged component clear: {dose}\n")
        self.query_one("#lim-clarity-title", Static).update(t)
        fill_table(self.query_one("#lim-clarity", DataTable), CLARITY_HEADERS, [
            (c.verdict, _g(c.level_mg_kg), _g(c.solubility_mg_kg), _g(c.ratio, ".2f"), _g(c.max_clear_level_mg_kg),
             c.name) for c in r.components], cut=-1)
        notes = Text()
        for c in r.components:
            for w in c.ways_out if c.verdict != "clear" else ():
                notes.append(f"{c.name}: {w['text']}\n")
        for n in r.not_judged:
            notes.append(f"not judged: {n.get('name', '')}: {n.get('reason', n)}\n", style="dim")
        for n in r.notes:
            notes.append(f"note: {n}\n", style="dim")
        self.query_one("#lim-clarity-notes", Static).update(notes)
        self.query_one("#lim-cautions", CautionBox).show(list(self.result.cautions if self.result else ())
                                                         + list(r.cautions))

    @staticmethod
    def _notes(result) -> Text:
        """No data, the residue rules (where each is measured, what it allows the solvent for), the
        assumptions and the audit trail."""
        r = result.check
        notes = Text()
        for d in r.no_data:
            notes.append(f"no data: {d['message']}\n", style="dim")
        for x in r.residues:
            where = f", {x.measured_in}" if x.measured_in else ""
            verdict = {True: "ok", False: "NO", None: "?"}[x.ok]
            notes.append(f"residue {x.substance} {x.measured_ppm:g} ppm: {x.jurisdiction} {x.rule} ({x.status}{where}): "
                         f"{verdict}" + (f"; {x.note}" if x.note and x.status != "limit" else "") + "\n")
        for a in r.assumptions:
            notes.append(f"assumed: {a}\n", style="dim")
        notes.append_text(audit_text(result.audit))
        return notes

    def show(self, result) -> None:
        """Show a :class:`~solvsel.jobs.dose.DoseResult`."""
        r = result.check
        frac = r.max_dose_unit.endswith("fraction")
        t = Text()
        t.append(f"Formula '{r.formula.name}': " + ", ".join(f"{c.name} {c.mass_fraction * 100:.4g} %" for c in r.formula.components) + "\n")
        t.append(f"limits of {r.jurisdiction}; food as consumed: {r.category}\n")
        if r.max_dose is not None:
            shown = f"{r.max_dose * 100:.4g} %" if frac else f"{r.max_dose:.4g} {r.max_dose_unit}"
            b = r.binding
            t.append(f"largest dose {shown} in '{r.stages[1].name}'", style="bold")
            t.append(f", bound by {b.jurisdiction} {b.rule} on {b.substance} ({b.limit:g} {b.unit})\n")
        else:
            t.append("largest dose: no numeric limit of the table applies\n", style="bold")
        over = sum(not c.ok for c in r.checks)
        t.append(("every limit with data is kept" if not over else f"{over} limit(s) exceeded")
                 + ("" if r.complete else "; some substances have no data (not a permission)") + "\n",
                 style="bold" if over else "")
        self.query_one("#lim-summary", Static).update(t)
        check_rows = []
        for c in r.checks:
            md = None if c.max_dose is None else c.max_dose * (100 if frac else 1)
            check_rows.append(("ok" if c.ok else "OVER", "binds" if c.binds else "",
                               "-" if not c.limit or c.level is None else f"{100 * c.level / c.limit:.0f} %", _g(md),
                               c.substance, _g(c.level), _g(c.limit) if c.limit is not None else c.status, c.unit,
                               c.confidence, c.rule))
        headers = list(CHECK_HEADERS)
        headers[3] = "max dose " + ("%" if frac else r.max_dose_unit)
        # the substance and the rule share the room left; on a narrow screen the confidence gives way first
        fill_table(self.query_one("#lim-checks", DataTable), headers, check_rows, cut=(4, -1), spare=("confidence",))
        rows = [r.stage_table(i) for i in range(len(r.stages))]
        subs = list(dict.fromkeys(row["substance"] for tab in rows for row in tab))
        stage_rows = []
        for s in subs:
            cells = [s]
            for tab in rows:
                hit = next((row for row in tab if row["substance"] == s), None)
                cells.append(_g(hit["mg_per_kg"], ".6g") if hit else "-")
            stage_rows.append(cells)
        fill_table(self.query_one("#lim-stages", DataTable), ["substance, mg/kg", *[st.name for st in r.stages]],
                   stage_rows)
        self.query_one("#lim-stages-title", Static).update(Text("\nLevels along the chain", style="bold"))
        self.query_one("#lim-notes", Static).update(self._notes(result))
        self.query_one("#lim-cautions", CautionBox).show(result.cautions)
