"""Target screen: say what must dissolve, in one of four ways.

From the solutes table (:func:`solvsel.science.target.target_from_solute`), typed
numbers (:func:`~solvsel.science.target.target_from_hsp`), a structure (the
estimate job :func:`solvsel.jobs.estimate.estimate`, with the groups shown), or a
sphere fitted from a file of bench results (the fit job :func:`solvsel.jobs.fit.fit`,
which reads every bench-file format the command line reads).  The chosen target
drives the carriers and map screens.
"""

from __future__ import annotations

import warnings

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.widgets import Button, Input, Label, OptionList, Static, TabPane
from textual.widgets.option_list import Option

from .base import BenchScreen
from .widgets import CautionBox, FollowingTabs, shorten

#: Labels of the error keys of an estimate (Ra is the trade's name of the distance).
_LABEL = {"dD": "dD", "dP": "dP", "dH": "dH", "ra": "Ra"}


class TargetScreen(BenchScreen):
    """Choose the target: a solute, typed HSP, a SMILES string or a bench fit."""

    MODE = "target"
    FIELD_LABELS = {"smiles": "SMILES", "path": "bench results file", "good_at_most": "good at a score of at most",
                    "hsp": "dD, dP, dH, R0"}
    TABS = "target-tabs"
    #: The field that takes the cursor when a way opens (a typed path or SMILES lands where it belongs).
    FIRST_FIELD = {"from-table": "#solute-filter", "from-typed": "#typed-hsp", "from-smiles": "#smiles",
                   "from-bench": "#bench-path"}

    def compose(self) -> ComposeResult:
        yield from self.compose_frame_top()
        with Horizontal(id="target-body"):
            with FollowingTabs(id="target-tabs"):
                with TabPane("Solutes table", id="from-table"):
                    yield Input(placeholder="type to narrow the list; Enter on a name uses it", id="solute-filter", compact=True)
                    yield Static(f"  {'solute':<28} {'kind':<8} {'dD':>5} {'dP':>5} {'dH':>5}  basis of the HSP  (MPa^0.5)",
                                 classes="list-header")
                    yield OptionList(id="solute-list")
                with TabPane("Typed numbers", id="from-typed"):
                    with Vertical(classes="form"):
                        yield Label("Name")
                        yield Input(value="typed target", id="typed-name", compact=True)
                        yield Label("dD, dP, dH in MPa^0.5, and R0 if known (e.g. 17.0, 3.0, 8.0, 8.0)")
                        yield Input(placeholder="dD, dP, dH[, R0]", id="typed-hsp", compact=True)
                        yield Button("Use these numbers", id="use-typed", variant="primary", compact=True)
                with TabPane("Structure", id="from-smiles"):
                    with Vertical(classes="form"):
                        yield Label("SMILES (the HSP are estimated by group contribution)")
                        yield Input(placeholder="e.g. CC1=CCC(CC1)C(=C)C", id="smiles", compact=True)
                        yield Button("Estimate and use", id="use-smiles", variant="primary", compact=True)
                        yield Static("", id="smiles-detail")
                with TabPane("Bench results", id="from-bench"):
                    with Vertical(classes="form"):
                        yield Label("CSV of bench tests (one row a liquid: good / partial / bad, or a score)")
                        yield Input(placeholder="path/to/bench.csv", id="bench-path", compact=True)
                        yield Label("for scores: a liquid counts as a good solvent at a score of at most")
                        yield Input(placeholder="e.g. 2 (leave empty for good / partial / bad)", id="bench-good",
                                    compact=True)
                        yield Button("Fit the sphere and use it", id="use-bench", variant="primary", compact=True)
                        yield Static("", id="bench-detail")
            with VerticalScroll(id="target-summary-pane"):
                yield Static("", id="target-summary")
                yield CautionBox(id="target-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        self.fill_solutes("")
        self.query_one("#solute-filter", Input).focus()

    def target_changed(self) -> None:
        self.show_target()

    # ---------------------------------------------------------------- table
    def fill_solutes(self, text: str) -> None:
        ol = self.query_one("#solute-list", OptionList)
        ol.clear_options()
        key = text.strip().casefold()
        for s in self.session.catalog.solute_records():
            hay = " ".join((s.name, s.cas, *s.synonyms, s.category)).casefold()
            if key and key not in hay:
                continue
            r0 = f" R0 {s.r0:.1f}" if s.r0 else ""
            mine = "  (yours)" if s.is_user else ""
            line = f"{shorten(s.name, 28):<28} {s.category:<8} {s.dD:5.1f} {s.dP:5.1f} {s.dH:5.1f}{r0}  {s.hsp_basis}{mine}"
            ol.add_option(Option(Text(line, no_wrap=True, overflow="ellipsis"), id=s.cas or s.name))
        t = self.session.target
        if t is not None and t.solute is not None:
            for i in range(ol.option_count):
                if ol.get_option_at_index(i).id == (t.solute.cas or t.solute.name):
                    ol.highlighted = i
                    break

    def on_input_changed(self, event: Input.Changed) -> None:
        if event.input.id == "solute-filter":
            self.fill_solutes(event.value)

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        from ..science.target import target_from_solute

        self.set_target(self.guard(target_from_solute, self.session.catalog, event.option.id))

    # ---------------------------------------------------------------- typed, structure, bench
    def on_input_submitted(self, event: Input.Submitted) -> None:
        ids = {"typed-hsp": "use-typed", "typed-name": "use-typed", "smiles": "use-smiles",
               "bench-path": "use-bench", "bench-good": "use-bench"}
        if event.input.id in ids:
            self.press(ids[event.input.id])
        elif event.input.id == "solute-filter":
            ol = self.query_one("#solute-list", OptionList)
            if ol.option_count:
                ol.highlighted = 0
                ol.action_select()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        self.press(event.button.id)

    def press(self, which: str) -> None:
        if which == "use-typed":
            self.set_target(self.guard(self.typed_target))
        elif which == "use-smiles":
            self.set_target(self.guard(self.smiles_target))
        elif which == "use-bench":
            self.set_target(self.guard(self.bench_target))

    def typed_target(self):
        from ..jobs.parse import parse_hsp
        from ..science.target import target_from_hsp

        name = self.query_one("#typed-name", Input).value.strip() or "typed target"
        return target_from_hsp(parse_hsp(self.query_one("#typed-hsp", Input).value, "hsp"), name=name)

    #: The last results of the structure and bench ways (what the screen shows).
    smiles_result = None
    bench_result = None

    def smiles_target(self):
        from ..jobs.estimate import estimate

        self.smiles_result = estimate(smiles=self.query_one("#smiles", Input).value.strip())
        est = self.smiles_result.estimates[0]
        t = Text()
        t.append(f"{est.formula}  {est.chem_class}  method {est.method}\n", style="bold")
        t.append(f"dD {est.dD:.2f}  dP {est.dP:.2f}  dH {est.dH:.2f} MPa^0.5   Vm "
                 + ("-" if est.vm_cm3_mol is None else f"{est.vm_cm3_mol:.1f}") + f" cm3/mol ({est.vm_method})\n")
        u = est.uncertainty or {}
        if u:
            t.append("typical error (cross-validated, " + str(u.get("basis", "")) + "): "
                     + "  ".join(f"{_LABEL[k]} {u[k]:.2f}" for k in ("dD", "dP", "dH", "ra") if k in u) + " MPa^0.5\n")
        t.append("groups: " + ", ".join(f"{g.name} x{g.count}" for g in est.groups) + "\n")
        if est.uncovered_atoms:
            t.append(f"atoms no group covers: {len(est.uncovered_atoms)}\n", style="bold")
        for n in est.notes:
            t.append(f"note: {n}\n", style="dim")
        self.query_one("#smiles-detail", Static).update(t)
        return self.smiles_result.target

    def bench_target(self):
        from ..data.catalog import STDIN
        from ..errors import InputError, SolvselNote
        from ..jobs.fit import fit

        path = self.query_one("#bench-path", Input).value
        if path.strip() == STDIN:  # the terminal is the UI's own input
            raise InputError("give the name of a bench-results file; standard input is read by the command line only",
                             param="path", value=path, expected="a file name")
        with warnings.catch_warnings(record=True) as caught:  # notes on the file (read as Windows-1252 ...)
            warnings.simplefilter("always", SolvselNote)
            self.bench_result = fit(path=path, good_at_most=self.query_one("#bench-good", Input).value.strip() or None,
                                    catalog=self.session.catalog)
        text = _fit_text(self.bench_result)
        for note in caught:
            if issubclass(note.category, SolvselNote):
                text.append(f"note: {note.message}\n", style="dim")
        self.query_one("#bench-detail", Static).update(text)
        return self.bench_result.target

    def report_of(self):
        """(job, title, text, result) for a report: the bench fit, when it made the current target."""
        r = self.bench_result
        if r is None or self.session.target != r.target:
            return None
        return "fit", f"Bench fit: {r.target.name}", str(_fit_text(r)), r

    # ---------------------------------------------------------------- show
    def set_target(self, target) -> None:
        if target is None:
            return
        self.session.set_target(target)
        self._seen_version = self.session.version
        self.on_screen_resume()
        self.show_target()
        self.notify(f"target: {target.name}", timeout=3)

    def show_target(self) -> None:
        t = self.session.target
        box = self.query_one("#target-summary", Static)
        if t is None:
            box.update("No target yet.")
            return
        txt = Text()
        txt.append("Current target\n", style="bold")
        txt.append(f"{t.name}\n", style="bold")
        txt.append(f"dD {t.dD:.2f}   dP {t.dP:.2f}   dH {t.dH:.2f}  MPa^0.5\n")
        txt.append(f"R0 {t.r0:.2f}\n" if t.r0 else "R0 unknown: results rank by Ra, not RED\n")
        txt.append(f"basis: {t.basis}\n")
        if t.vm_cm3_mol:
            txt.append(f"molar volume {t.vm_cm3_mol:.1f} cm3/mol\n")
        if t.uncertainty:
            txt.append("typical error: " + ", ".join(f"{_LABEL[k]} {v:.2f}" for k, v in t.uncertainty.items()
                                                   if isinstance(v, (int, float)) and k in _LABEL) + " MPa^0.5\n")
        txt.append(f"\n{t.note}\n", style="dim")
        if t.solute is not None and t.solute.note:
            txt.append(f"\n{t.solute.note}\n", style="italic")
        box.update(txt)
        cautions = []
        if self.bench_result is not None and t == self.bench_result.target:
            cautions += self.bench_result.cautions  # the fit's, and those of the liquids proposed for tests
        if t.basis in ("estimated", "typed"):
            cautions.append("The target's HSP are " + ("estimated" if t.basis == "estimated" else "typed")
                            + ": rankings are screening results; fit a sphere from bench tests before relying on them.")
        if t.solute is not None and t.solute.category == "active":
            cautions.append("The legal status of actives in foods differs by jurisdiction and use: "
                            "check the regulations in force before formulating.")
        from ..rules.cautions import DEFER

        cautions.append(DEFER)
        self.query_one("#target-cautions", CautionBox).show(cautions)


def _fit_text(result) -> Text:
    """The fitted sphere in a few lines: centre, R0, how well it sorts the bench results, intervals,
    the results it misplaces, the open side, next tests, and a picture of every liquid's RED."""
    from .widgets import red_strip

    fit = result.sphere
    t = Text()
    t.append(f"dD {fit.dD:.2f}  dP {fit.dP:.2f}  dH {fit.dH:.2f}  R0 {fit.r0:.2f} MPa^0.5\n", style="bold")
    t.append(f"agreement with the bench {fit.fit:.2f} of 1 (Hansen's desirability); "
             f"{fit.explained:.0%} of the weighted results on their side\n")
    t.append(f"{fit.n_liquids} liquids ({fit.n_good} good): {result.liquids_summary()}\n", style="dim")
    for k in ("dD", "dP", "dH", "r0"):
        lo, hi = fit.interval.get(k, (None, None))
        if lo is not None:
            t.append(f"  {'R0' if k == 'r0' else k} between {lo:.2f} and {hi:.2f}\n")
    if fit.wrong_side:
        t.append("misplaced by the sphere: " + ", ".join(
            f"{w.name} ({'good, outside' if w.good else 'bad, inside'} at RED {w.red:.2f})" for w in fit.wrong_side)
            + "\n")
    if fit.open:
        t.append(f"{fit.open_note}\n", style="bold")
    if result.suggestions:
        t.append("worth testing next: " + ", ".join(f"{s.name} (RED {s.red:.2f})" for s in result.suggestions) + "\n")
    t.append("\nEvery liquid's distance from the centre, in R0 (RED): inside the sphere left of the bar\n", style="bold")
    t.append_text(red_strip(fit.names, fit.good, fit.red, {w.name for w in fit.wrong_side}))
    return t
