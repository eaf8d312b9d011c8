"""Emulsion screen: emulsifiers for the oil phase, weighting and creaming in the drink.

Builds an :class:`~solvsel.jobs.hlb.HlbRequest` (the required HLB of the oil
phase and the emulsifier pairs that hit it) and an
:class:`~solvsel.jobs.emulsion.EmulsionRequest` (density match, weighting-agent
levels against their legal limits, Stokes creaming, the ripening check) from
its fields, calls the two jobs and shows their results.  The form opens on the
demo scenario's oil, Brix, dilution and droplet size; every field is editable.
"""

from __future__ import annotations

import math

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Button, DataTable, Input, Label, Select, Static

from .base import BenchScreen
from .dialogs import field_label
from .limits import NO_PURPOSE, purpose_choices, purpose_value
from .widgets import CautionBox, fill_table

PAIR_HEADERS = ("blend HLB", "same tail", "share A", "share B", "emulsifier A", "emulsifier B")
WEIGHTING_HEADERS = ("verdict", "law", "mg/kg in drink", "limit mg/kg", "oil g/cm³", "share of oil phase",
                     "weighting agent(s)")
#: Droplet diameters of the creaming picture [um] (the curve's nearest points; the form's own size is added).
PICTURE_SIZES = (0.1, 0.2, 0.3, 0.5, 1.0, 2.0, 5.0)
#: Pairs shown in the table (the text above it counts all that hit the required HLB).
PAIRS_SHOWN = 12


def _amounts(text: str) -> list:
    from ..jobs.parse import parse_amounts

    return parse_amounts(text, "oil") if text else []


def _amounts_text(d: dict) -> str:
    return ", ".join(f"{k}={v:g}" for k, v in d.items())


class EmulsionScreen(BenchScreen):
    """Design a beverage emulsion concentrate for the drink."""

    MODE = "emulsion"
    FORM = "emulsion-form"
    BINDINGS = [Binding("ctrl+r", "compute", "Compute", priority=True)]
    #: Labels of the fields by the field of the emulsion request they fill.
    FIELD_LABELS = {"oil": "oil phase", "oil_density": "oil phase", "brix": "sugar, degrees Brix",
                    "dilution": "dilution", "oil_phase": "oil phase in the concentrate",
                    "droplet_um": "droplet diameter", "jurisdictions": "jurisdictions", "purpose": "the product is for",
                    "emulsifier": "emulsifier of the concentrate", "emulsifier_ratio": "emulsifier level"}
    #: The same for the HLB request (its oil phase is the oils whose required HLB counts).
    HLB_FIELD_LABELS = {"oil": "oils for the required HLB", "emulsifiers": "emulsifiers to pair",
                        "rhlb": "your own required HLB"}

    def __init__(self) -> None:
        super().__init__()
        self.hlb_result = None
        self.pairs = ()
        self.design = None

    def compose(self) -> ComposeResult:
        yield from self.compose_frame_top()
        with Horizontal(id="emulsion-body"):
            with VerticalScroll(id="emulsion-form"):
                yield Static("Oil phase and drink", classes="pane-title")
                yield Label("Oil phase, parts by mass (NAME=AMOUNT)")
                yield Input(id="em-oil", compact=True)
                yield Label("Oils for the required HLB (NAME=AMOUNT)")
                yield Input(id="em-hlb-oil", compact=True)
                yield Static("", id="em-hlb-note", classes="hint")
                yield Label("Emulsifiers to pair (names, commas)")
                yield Input(id="em-emulsifiers", compact=True)
                yield Label("Your own required HLB (NAME=HLB)")
                yield Input(placeholder="e.g. lemon oil=14", id="em-rhlb", compact=True)
                yield Label("Sugar, degrees Brix")
                yield Input(id="em-brix", compact=True)
                yield Label("Dilution, 1 part in")
                yield Input(id="em-dilution", compact=True)
                yield Label("Oil phase in the concentrate (10% or 0.1)")
                yield Input(value="10%", id="em-oil-pct", compact=True)
                yield Label("Droplet diameter, um")
                yield Input(id="em-droplet", compact=True)
                yield Label("Emulsifier of the concentrate (gum arabic, OSA starch ...)")
                yield Input(placeholder="e.g. gum arabic (empty: none)", id="em-emulsifier", compact=True)
                yield Label("Emulsifier level, g per g of oil phase")
                yield Input(placeholder="empty: its usual level", id="em-emulsifier-level", compact=True)
                yield Label("Jurisdictions (EU, US)")
                yield Input(id="em-jurisdiction", compact=True)
                yield Label("The product is for (agents are legal only for it)")
                yield Select(purpose_choices(self.session.catalog), value=NO_PURPOSE, allow_blank=False,
                             id="em-purpose", compact=True)
                yield Button("Compute  ^R", id="em-compute", variant="primary", compact=True)
            with VerticalScroll(id="emulsion-results"):
                yield Static("", id="em-hlb", classes="result-block")
                yield DataTable(id="em-pairs", cursor_type="row", zebra_stripes=True)
                yield Static("", id="em-design", classes="result-block")
                yield DataTable(id="em-weighting", cursor_type="row", zebra_stripes=True)
                yield Static("", id="em-ripening", classes="result-block")
                yield Static("", id="em-picture", classes="result-block")
                yield CautionBox(id="em-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        self.fill_form()
        fill_table(self.query_one("#em-pairs", DataTable), PAIR_HEADERS, [])
        fill_table(self.query_one("#em-weighting", DataTable), WEIGHTING_HEADERS, [])
        self.compute(interactive=False)

    def fill_form(self) -> None:
        """The fields from the scenario's emulsion (or an opened workspace's)."""
        e = self.session.scenario_part("emulsion")
        self.query_one("#em-oil", Input).value = _amounts_text(e.get("oil", {}))
        self.query_one("#em-hlb-oil", Input).value = _amounts_text(e.get("hlb_oil") or e.get("oil", {}))
        self.query_one("#em-hlb-note", Static).update(e.get("hlb_note", "") or
                                                      "a weighting agent has no required HLB: leave it out here")
        self.query_one("#em-emulsifiers", Input).value = ", ".join(e.get("emulsifiers") or [])
        self.query_one("#em-brix", Input).value = f"{e.get('brix', 10):g}"
        self.query_one("#em-dilution", Input).value = f"{e.get('dilution', 500):g}"
        self.query_one("#em-droplet", Input).value = f"{e.get('droplet_um', 0.4):g}"
        self.query_one("#em-jurisdiction", Input).value = e.get("jurisdiction", "EU")
        self.query_one("#em-purpose", Select).value = e.get("purpose") or NO_PURPOSE
        self.query_one("#em-emulsifier", Input).value = e.get("emulsifier") or ""
        ratio = e.get("emulsifier_ratio")
        self.query_one("#em-emulsifier-level", Input).value = "" if ratio is None else f"{ratio:g}"
        if e.get("oil_phase") is not None:
            self.query_one("#em-oil-pct", Input).value = f"{100 * float(e['oil_phase']):g}%"

    def report_of(self):
        """(job, title, text, result) for a report: the emulsion design on screen."""
        if self.design is None:
            return None
        return "emulsion", "Beverage emulsion", str(self.query_one("#em-design", Static).render()), self.design

    def form_to_session(self) -> None:
        """The fields as the emulsion request reads them (a mistake: the dialog, nothing kept)."""
        req = self.guard(self.emulsion_request)
        if req is None:
            return
        self.session.overrides["emulsion"] = {
            "oil": {k: v for k, v in req.oil}, "brix": req.brix, "dilution": req.dilution, "droplet_um": req.droplet_um,
            "jurisdiction": ", ".join(req.jurisdictions), "purpose": req.purpose, "emulsifier": req.emulsifier,
            "emulsifier_ratio": req.emulsifier_ratio, "oil_phase": req.oil_phase,
            "hlb_oil": dict(self.guard(_amounts, self._text("hlb-oil")) or {}),
            "emulsifiers": [n.strip() for n in self._text("emulsifiers").split(",") if n.strip()]}

    def session_to_form(self) -> None:
        self.fill_form()
        self.compute(interactive=False)

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "em-compute":
            self.compute()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def action_compute(self) -> None:
        self.compute()

    # ---------------------------------------------------------------- requests
    def _text(self, name: str) -> str:
        return self.query_one(f"#em-{name}", Input).value.strip()

    def hlb_request(self):
        """The :class:`~solvsel.jobs.hlb.HlbRequest` of the HLB fields (no emulsifiers named: the default pool)."""
        from ..jobs.hlb import HlbRequest
        from ..jobs.parse import parse_amounts, parse_names

        rhlb, names = self._text("rhlb"), self._text("emulsifiers")
        return HlbRequest(oil=parse_amounts(self._text("hlb-oil"), "oil"),
                          rhlb=parse_amounts(rhlb, "rhlb") if rhlb else None,
                          emulsifiers=parse_names(names, "emulsifiers") if names else None,
                          min_fraction=0.0, top=PAIRS_SHOWN)

    def emulsion_request(self):
        """The :class:`~solvsel.jobs.emulsion.EmulsionRequest` of the oil phase and drink fields."""
        from ..jobs.emulsion import EmulsionRequest
        from ..jobs.parse import parse_amounts, parse_fraction, parse_names, parse_number

        def number(name: str, param: str, unit: str):
            text = self._text(name)
            return parse_number(text, param, unit) if text else None

        fields = {"oil": parse_amounts(self._text("oil"), "oil"), "brix": number("brix", "brix", "degrees Brix"),
                  "dilution": number("dilution", "dilution", "parts of drink per part of concentrate"),
                  "droplet_um": number("droplet", "droplet_um", "um"),
                  "jurisdictions": parse_names(self._text("jurisdiction"), "jurisdictions"),
                  "purpose": purpose_value(self.query_one("#em-purpose", Select))}
        if self._text("emulsifier"):
            fields["emulsifier"] = self._text("emulsifier")
            fields["emulsifier_ratio"] = number("emulsifier-level", "emulsifier_ratio", "g per g of oil phase")
        if self._text("oil-pct"):  # else the request's default
            fields["oil_phase"] = parse_fraction(self._text("oil-pct"), "oil_phase")
        return EmulsionRequest(**fields)

    # ---------------------------------------------------------------- work
    def compute(self, interactive: bool = True) -> None:
        """Run both jobs; a user's mistake shows in its block (and in a dialog when asked for)."""
        from ..errors import SolvselError
        from .dialogs import show_error

        errors = []
        for part, labels in ((self.compute_design, self.FIELD_LABELS), (self.compute_hlb, self.HLB_FIELD_LABELS)):
            try:
                part()
            except SolvselError as exc:
                errors.append((exc, labels))
        self.show_cautions()
        self.show_summary()
        if not errors or not interactive:
            return
        if self.design is None:  # the drink's answer failed: the dialog
            show_error(self.app, *errors[0])
        else:  # only the HLB part failed: its block says why, the rest of the answer stays in view
            self.notify(f"Emulsifiers (HLB): {errors[0][0].title}; see the HLB block", severity="warning", timeout=4)

    @staticmethod
    def _error_text(title: str, exc, labels: dict) -> Text:
        said = exc.describe(lambda p: field_label(p, labels))
        return Text.assemble((title, "bold"), (f"{exc.title}: ", "bold"), said)

    def compute_hlb(self) -> None:
        """The ``hlb`` job on the HLB fields: the required HLB and the pairs that hit it."""
        from ..errors import SolvselError
        from ..jobs.hlb import hlb

        box = self.query_one("#em-hlb", Static)
        grid = self.query_one("#em-pairs", DataTable)
        fill_table(grid, PAIR_HEADERS, [])
        self.hlb_result, self.pairs = None, ()
        try:
            r = hlb(self.hlb_request(), catalog=self.session.catalog)
        except SolvselError as exc:
            box.update(self._error_text("Emulsifiers (HLB)\n", exc, self.HLB_FIELD_LABELS))
            raise
        self.hlb_result, self.pairs = r, r.pairs
        t = Text()
        t.append("Emulsifiers (HLB)\n", style="bold")
        t.append(f"required HLB of the oil phase {r.required_hlb:.1f}\n")
        for c in r.oil_phase:
            t.append(f"  {c['name']:<32} {c['mass_fraction']:.3f}  HLB {c['rhlb']:.1f}  {c.get('basis', '')}\n", style="dim")
        t.append(f"{r.pairs_found} pairs of the chosen emulsifiers hit it:" if r.pairs_found
                 else "no pair of the chosen emulsifiers hits it")
        box.update(t)
        fill_table(grid, PAIR_HEADERS, [
            (f"{p.hlb:.1f}", "yes" if p.same_tail else "no", f"{p.fractions[0]:.2f}", f"{p.fractions[1]:.2f}",
             p.names[0], p.names[1]) for p in r.pairs])

    def compute_design(self) -> None:
        """The ``emulsion`` job on the oil phase and drink fields."""
        from ..errors import SolvselError
        from ..jobs.emulsion import emulsion

        box = self.query_one("#em-design", Static)
        wgrid = self.query_one("#em-weighting", DataTable)
        fill_table(wgrid, WEIGHTING_HEADERS, [])
        self.design = None
        try:
            r = emulsion(self.emulsion_request(), catalog=self.session.catalog)
        except SolvselError as exc:
            box.update(self._error_text("Weighting and creaming\n", exc, self.FIELD_LABELS))
            self.query_one("#em-ripening", Static).update("")
            raise
        self.design = r
        box.update(self._design_text(r))
        self.query_one("#em-picture", Static).update(self._picture(r))
        fill_table(wgrid, WEIGHTING_HEADERS, [
            (("matched" if o.matched else "partial") + ("" if o.legal else ", OVER"), j,
             " + ".join(f"{x:.4g}" for x in o.levels_ppm),
             " / ".join("-" if x is None else f"{x:.4g}" for x in o.limits_ppm), f"{o.density:.4f}",
             " + ".join(f"{x:.1%}" for x in o.fractions), " + ".join(o.agents) or "none needed")
            for j, opts in r.weighting.items() for o in opts], cut=-1)
        self.query_one("#em-ripening", Static).update(self._ripening_text(r))

    def form_summary(self) -> str:
        parts = [f"oil {self._text('oil') or '-'}", f"Brix {self._text('brix') or '-'}",
                 f"1 in {self._text('dilution') or '-'}", f"oil phase {self._text('oil-pct') or '-'}",
                 f"droplets {self._text('droplet') or '-'} um", f"law {self._text('jurisdiction') or '-'}"]
        if self._text("emulsifier"):
            parts.append(f"emulsifier {self._text('emulsifier')} {self._text('emulsifier-level') or 'usual level'}")
        return "Drink: " + " · ".join(parts)

    @staticmethod
    def _picture(r) -> Text:
        """Days to cream against droplet diameter, from the creaming figure data of the result
        (:func:`solvsel.jobs.figures.creaming`): a bar a diameter on a log scale, the shelf life marked."""
        from ..jobs.figures import figures_of
        from .widgets import log_bars

        fig = next((f for f in figures_of("emulsion", r.to_dict()) if f.kind == "creaming"), None)
        if fig is None:
            return Text()
        d = fig.data
        pairs = list(zip(d["diameter_um"], d["days"]))
        rows = []
        for nice in PICTURE_SIZES:  # the curve's point nearest each round diameter
            um, days = min(pairs, key=lambda p: abs(math.log(p[0] / nice)))
            rows.append((f"{um:.2g} um", abs(days)))
        if d.get("chosen_um") and d.get("chosen_days") is not None:
            rows.append((f"{d['chosen_um']:g} um (yours)", abs(d["chosen_days"])))
            rows.sort(key=lambda row: float(row[0].split()[0]))
        t = Text(f"\n{fig.title}: days to {d['direction']} {d['height_mm']:g} mm (log scale; │ the shelf life, "
                 f"{d['shelf_days']:g} days)\n", style="bold")
        t.append_text(log_bars(rows, d["shelf_days"], "days"))
        return t

    @staticmethod
    def _design_text(r) -> Text:
        t = Text()
        t.append("\nWeighting and creaming\n", style="bold")
        t.append(f"drink density {r.beverage_density:.4f} g/cm3 ({r.beverage_density_basis})\n")
        side = "below" if r.density_difference >= 0 else "above"
        t.append(f"oil phase density {r.oil_phase_density:.4f} g/cm3, {abs(r.density_difference):.4f} g/cm3 {side} the drink's\n")
        if r.oil_in_drink_ppm is not None:
            t.append(f"oil phase in the drink {r.oil_in_drink_ppm:.4g} mg/kg ({r.oil_in_concentrate:.1%} of the concentrate, "
                     f"1 part in {r.dilution:g})\n")
        for a in r.agents:
            t.append(f"  {a.agent} ({a.jurisdiction}): {a.level_ppm:.4g} mg/kg, legal maximum {a.limit_text}: ",
                     style="")
            t.append("within\n" if a.ok else "OVER THE LIMIT\n", style="bold" if not a.ok else "")
        if r.emulsifier is not None:
            u = r.emulsifier
            level = "" if u.level_ppm is None else f", {u.level_ppm:.4g} mg/kg in the drink"
            t.append(f"emulsifier {u.name}: {u.ratio_to_oil:g} g per g of oil phase ({u.ratio_basis}), "
                     f"{u.in_concentrate:.1%} of the concentrate{level}\n")
            for a in r.emulsifier_checks:
                t.append(f"  {a.jurisdiction}: {a.limit_text}: ", style="")
                t.append(("within" if a.ok else "OVER THE LIMIT") + f" ({a.rule})\n", style="" if a.ok else "bold")
        if r.creaming_mm_per_day is not None:
            word = "cream" if r.creaming_mm_per_day >= 0 else "settle"
            t.append(f"droplets of {r.droplet_diameter_um:g} um {word} at {abs(r.creaming_mm_per_day):.3g} mm/day: "
                     f"{r.time_to_cream_days:.4g} days to cross {r.height_mm:g} mm\n")
        t.append(f"largest droplet that crosses less than {r.height_mm:g} mm in {r.shelf_days:g} days: {r.max_droplet_um:.3g} um\n")
        t.append("\nWays to weight the oil phase to the drink's density:", style="bold")
        return t

    @staticmethod
    def _ripening_text(r) -> Text:
        rp = Text()
        for j, msgs in r.weighting_excluded.items():
            for m in msgs:
                rp.append(f"left out ({j}): {m}\n", style="dim")
        rp.append_text(_ripening_words(r.ripening))
        if r.ripening.remedy:
            rp.append(f"remedy: {r.ripening.remedy}\n", style="italic")
        for ref in r.refusals:
            rp.append(f"over the legal maximum: {ref}\n", style="bold")
        return rp

    def show_cautions(self) -> None:
        """The cautions of both results (those of HLB work even when the HLB part failed)."""
        from ..jobs.hlb import HLB_CAUTIONS

        cautions = list(self.design.cautions) if self.design is not None else []
        cautions += list(self.hlb_result.cautions) if self.hlb_result is not None else list(HLB_CAUTIONS)
        self.query_one("#em-cautions", CautionBox).show(cautions)


def _ripening_words(rp) -> Text:
    """The ripening check in words that do not contradict themselves: a risk, held back, or not expected."""
    t = Text()
    if rp.warn:
        t.append("\nOstwald ripening: a risk. ", style="bold")
        t.append(rp.reason + "\n")
    elif rp.prone_fraction > 0:
        t.append("\nOstwald ripening: held back ", style="bold")
        t.append(f"by the insoluble part of the oil phase ({rp.inhibitor_fraction:.0%} of it). Without it: "
                 f"{rp.reason}\n")
    else:
        t.append("\nOstwald ripening: not expected. ", style="bold")
        t.append(rp.reason + "\n")
    return t
