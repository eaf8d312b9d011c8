"""Emulsion screen: emulsifiers for the oil phase, weighting and creaming in the drink.

The required HLB of the oil phase and the emulsifier pairs that hit it come
from :mod:`solvsel.science.hlb` (``oil_phase_required_hlb``, ``emulsifier_systems``);
density match, weighting-agent levels against their legal limits, Stokes
creaming and the ripening check from
:func:`solvsel.science.emulsion.design_beverage_emulsion`.  The form opens on the demo
scenario's oil, Brix, dilution and droplet size; every field is editable.
"""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Button, DataTable, Input, Label, Static

from .base import BenchScreen
from .dialogs import plain_message
from .widgets import CautionBox, fill_table

PAIR_HEADERS = ("emulsifier A", "share A", "emulsifier B", "share B", "blend HLB", "same tail")
WEIGHTING_HEADERS = ("where", "weighting agent(s)", "in oil phase", "mg/kg in drink", "limit mg/kg", "oil g/cm3",
                     "verdict")


def _amounts_text(d: dict) -> str:
    return ", ".join(f"{k}={v:g}" for k, v in d.items())


def _num(text: str, what: str, default=None):
    from ..errors import InputError

    t = (text or "").strip()
    if not t:
        return default
    try:
        return float(t)
    except ValueError:
        raise InputError(f"{what}: expected a number, got '{text}'") from None


class EmulsionScreen(BenchScreen):
    """Design a beverage emulsion concentrate for the drink."""

    MODE = "emulsion"
    BINDINGS = [Binding("ctrl+r", "compute", "Compute", priority=True)]

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
                yield Label("Oil phase in the concentrate, %")
                yield Input(value="10", id="em-oil-pct", compact=True)
                yield Label("Droplet diameter, um")
                yield Input(id="em-droplet", compact=True)
                yield Label("Jurisdictions (EU, US)")
                yield Input(id="em-jurisdiction", compact=True)
                yield Button("Compute  ^R", id="em-compute", variant="primary", compact=True)
            with VerticalScroll(id="emulsion-results"):
                yield Static("", id="em-hlb", classes="result-block")
                yield DataTable(id="em-pairs", cursor_type="row", zebra_stripes=True)
                yield Static("", id="em-design", classes="result-block")
                yield DataTable(id="em-weighting", cursor_type="row", zebra_stripes=True)
                yield Static("", id="em-ripening", classes="result-block")
                yield CautionBox(id="em-cautions", classes="cautions")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        e = self.session.scenario_part("emulsion")
        self.query_one("#em-oil", Input).value = _amounts_text(e.get("oil", {}))
        self.query_one("#em-hlb-oil", Input).value = _amounts_text(e.get("hlb_oil", e.get("oil", {})))
        self.query_one("#em-hlb-note", Static).update(e.get("hlb_note", "") or
                                                      "a weighting agent has no required HLB: leave it out here")
        self.query_one("#em-emulsifiers", Input).value = ", ".join(e.get("emulsifiers", []))
        self.query_one("#em-brix", Input).value = f"{e.get('brix', 10):g}"
        self.query_one("#em-dilution", Input).value = f"{e.get('dilution', 500):g}"
        self.query_one("#em-droplet", Input).value = f"{e.get('droplet_um', 0.4):g}"
        self.query_one("#em-jurisdiction", Input).value = e.get("jurisdiction", "EU")
        fill_table(self.query_one("#em-pairs", DataTable), PAIR_HEADERS, [])
        fill_table(self.query_one("#em-weighting", DataTable), WEIGHTING_HEADERS, [])
        self.compute(interactive=False)

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "em-compute":
            self.compute()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def action_compute(self) -> None:
        self.compute()

    # ---------------------------------------------------------------- work
    def compute(self, interactive: bool = True) -> None:
        """Run both engines; a user's mistake shows in its block (and in a dialog when asked for)."""
        from ..errors import SolvselError
        from .dialogs import show_error

        errors = []
        for part in (self.compute_hlb, self.compute_design):
            try:
                part()
            except SolvselError as exc:
                errors.append(exc)
        self.show_cautions()
        if errors and interactive:
            show_error(self.app, errors[0])

    def compute_hlb(self) -> None:
        from ..science import hlb as H
        from ..jobs.parse import parse_amounts, parse_names

        cat = self.session.catalog
        box = self.query_one("#em-hlb", Static)
        grid = self.query_one("#em-pairs", DataTable)
        fill_table(grid, PAIR_HEADERS, [])
        self.hlb_result, self.pairs = None, ()
        try:
            rhlb = self.query_one("#em-rhlb", Input).value
            overrides = dict(parse_amounts(rhlb, "your required HLB")) if rhlb.strip() else None
            oils = self.query_one("#em-hlb-oil", Input).value
            phase = H.oil_phase_required_hlb(cat, parse_amounts(oils, "oils whose required HLB counts"), overrides)
            self.hlb_result = phase
            names = parse_names(self.query_one("#em-emulsifiers", Input).value, "emulsifiers")
            pairs = H.emulsifier_systems(H.pool_from_catalog(cat, names), phase.required_hlb, 2, 0.0)
        except Exception as exc:
            box.update(Text.assemble(("Emulsifiers (HLB)\n", "bold"), (f"{getattr(exc, 'title', 'Error')}: ", "bold"), plain_message(str(exc))))
            raise
        self.pairs = tuple(pairs)
        t = Text()
        t.append("Emulsifiers (HLB)\n", style="bold")
        t.append(f"required HLB of the oil phase {phase.required_hlb:.1f}\n")
        for c in phase.components:
            t.append(f"  {c['name']:<32} {c['mass_fraction']:.3f}  HLB {c['rhlb']:.1f}  {c.get('basis', '')}\n", style="dim")
        t.append(f"{len(pairs)} pairs of the chosen emulsifiers hit it:" if pairs else "no pair of the chosen emulsifiers hits it")
        box.update(t)
        fill_table(grid, PAIR_HEADERS, [
            (p.names[0], f"{p.fractions[0]:.2f}", p.names[1], f"{p.fractions[1]:.2f}", f"{p.hlb:.1f}",
             "yes" if p.same_tail else "no") for p in pairs[:12]])

    def compute_design(self) -> None:
        from ..jobs.parse import parse_amounts, parse_names
        from ..science.emulsion import design_beverage_emulsion

        cat = self.session.catalog
        box = self.query_one("#em-design", Static)
        wgrid = self.query_one("#em-weighting", DataTable)
        fill_table(wgrid, WEIGHTING_HEADERS, [])
        self.design = None
        try:
            q = self.query_one
            oil_pct = _num(q("#em-oil-pct", Input).value, "oil phase in the concentrate", 10.0)
            r = design_beverage_emulsion(
                cat, parse_amounts(q("#em-oil", Input).value, "oil phase"),
                brix=_num(q("#em-brix", Input).value, "Brix"),
                dilution=_num(q("#em-dilution", Input).value, "dilution"),
                oil_in_concentrate=oil_pct / 100.0,
                droplet_um=_num(q("#em-droplet", Input).value, "droplet diameter"),
                jurisdictions=tuple(j.upper() for j in parse_names(q("#em-jurisdiction", Input).value, "jurisdictions")),
            )
        except Exception as exc:
            box.update(Text.assemble(("Weighting and creaming\n", "bold"), (f"{getattr(exc, 'title', 'Error')}: ", "bold"), plain_message(str(exc))))
            self.query_one("#em-ripening", Static).update("")
            raise
        self.design = r
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
        if r.creaming_mm_per_day is not None:
            word = "cream" if r.creaming_mm_per_day >= 0 else "settle"
            t.append(f"droplets of {r.droplet_diameter_um:g} um {word} at {abs(r.creaming_mm_per_day):.3g} mm/day: "
                     f"{r.time_to_cream_days:.4g} days to cross {r.height_mm:g} mm\n")
        t.append(f"largest droplet that crosses less than {r.height_mm:g} mm in {r.shelf_days:g} days: {r.max_droplet_um:.3g} um\n")
        t.append("\nWays to weight the oil phase to the drink's density:", style="bold")
        box.update(t)
        fill_table(wgrid, WEIGHTING_HEADERS, [
            (j, " + ".join(o.agents) or "none needed", " + ".join(f"{x:.1%}" for x in o.fractions),
             " + ".join(f"{x:.4g}" for x in o.levels_ppm),
             " / ".join("-" if x is None else f"{x:.4g}" for x in o.limits_ppm), f"{o.density:.4f}",
             ("matched" if o.matched else "partial") + ("" if o.legal else ", OVER"))
            for j, opts in r.weighting.items() for o in opts])
        rp = Text()
        for j, msgs in r.weighting_excluded.items():
            for m in msgs:
                rp.append(f"left out ({j}): {m}\n", style="dim")
        rp.append(f"\nOstwald ripening: {'WARNING' if r.ripening.warn else 'no warning'}. ", style="bold")
        rp.append(r.ripening.reason + "\n")
        if r.ripening.remedy:
            rp.append(f"remedy: {r.ripening.remedy}\n", style="italic")
        for ref in r.refusals:
            rp.append(f"over the legal maximum: {ref}\n", style="bold")
        self.query_one("#em-ripening", Static).update(rp)

    def show_cautions(self) -> None:
        cautions = []
        if self.design is not None:
            cautions += list(self.design.cautions)
        if self.hlb_result is not None:
            cautions += list(self.hlb_result.cautions)
        from ..jobs.hlb import HLB_CAUTIONS

        cautions += list(HLB_CAUTIONS)
        self.query_one("#em-cautions", CautionBox).show(cautions)
