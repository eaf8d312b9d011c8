"""The carriers screen's panel for the selected liquid or blend: does the target dissolve at its load,
and will the drink stay clear?

The panel's formula is the target at the form's load in the selected carrier (the carrier's share split
by the mass fractions the ``rank`` or ``blend`` job gave it).  Two requests are built from the form: one
of the ``load`` job (:mod:`solvsel.jobs.load`: the target in the carrier over the storage range) and one
of the ``clarity`` job (:mod:`solvsel.jobs.clarity`: the formula at its dose, along the dilution chain,
into a drink of the given sugar content).  The jobs run in the screen's worker; this module builds the
requests and words the answers.
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual.app import ComposeResult
from textual.widgets import Input, Label

#: The form's fields of the two checks: (input id, label, placeholder).
FIELDS = (
    ("storage", "Storage, C (LO:HI)", "4:25 (fridge to warm room)"),
    ("drink-dose", "Dose in the 1st stage", "e.g. 0.1% or 1000ppm"),
    ("drink-chain", "Dilution chain to the drink", "e.g. syrup d=1.28; drink 1+5v"),
    ("drink-brix", "Sugar in the drink, Brix", "e.g. 10.5"),
)

#: Labels of the checks' request fields (an error about a field names it by its label).
FIELD_LABELS = {"storage_C": "storage", "dose": "dose in the 1st stage", "chain": "dilution chain to the drink",
                "brix": "sugar in the drink", "solute": "target", "carrier": "selected carrier",
                "fractions": "selected carrier", "formula": "formula (the target at its load in the carrier)"}


def compose_fields() -> ComposeResult:
    """The checks' fields of the form (folded with it)."""
    for key, label, hint in FIELDS:
        yield Label(label)
        yield Input(placeholder=hint, id=key, compact=True)


@dataclass(frozen=True)
class Carrier:
    """The selected liquid or blend: its liquids with their volume and mass fractions (None: unknown)."""

    label: str
    names: tuple[str, ...]
    volume: tuple[float, ...]
    mass: tuple[float | None, ...]


def carrier_of(selected) -> Carrier:
    """The carrier of a ranked liquid or of a blend, as the ``rank`` or ``blend`` job gave it."""
    comps = getattr(selected, "components", None)
    if comps is None:
        return Carrier(selected.name, (selected.name,), (1.0,), (1.0,))
    return Carrier(selected.label, tuple(c.name for c in comps), tuple(c.volume_fraction for c in comps),
                   tuple(c.mass_fraction for c in comps))


def requests(target, carrier: Carrier, load: str | None, storage: str | None, dose: str | None,
             chain: str | None, brix: str | None) -> tuple:
    """(the ``load`` request, the ``clarity`` request) of the form, each in its place the
    :class:`~solvsel.errors.SolvselError` (with its ``param``) of a field its check needs and lacks, or of
    a mistake in one."""
    from ..errors import SolvselError

    try:
        lq = _load_request(target, carrier, load, storage)
    except SolvselError as exc:
        return exc, exc
    try:
        return lq, _clarity_request(lq, carrier, dose, chain, brix)
    except SolvselError as exc:
        return lq, exc


def _load_request(target, carrier: Carrier, load: str | None, storage: str | None):
    from ..errors import InputError
    from ..jobs.load import DEFAULT_STORAGE_C, LoadRequest

    solute = getattr(getattr(target, "solute", None), "name", None)
    if solute is None:
        raise InputError("the target is not a solute of the tables (typed numbers, a structure or a bench fit): "
                         "its load cannot be judged", param="solute", expected="a solute of the tables as the target")
    if load is None:
        raise InputError("not given: type one (% by mass, e.g. 5%) to check the target in this carrier",
                         param="load", expected="a load such as 5%")
    return LoadRequest(solute=solute, carrier=carrier.names, load=load, storage_C=storage or DEFAULT_STORAGE_C,
                       fractions=carrier.volume if len(carrier.names) > 1 else None)


def _clarity_request(lq, carrier: Carrier, dose: str | None, chain: str | None, brix: str | None):
    """The clarity request of the target at the load request's load in the carrier (by mass)."""
    from ..errors import InputError
    from ..jobs.clarity import ClarityRequest
    from ..jobs.parse import parse_number

    if any(w is None for w in carrier.mass):
        raise InputError("a density of the carrier's liquids is missing, so its mass fractions are unknown",
                         param="formula", expected="liquids with densities on record")
    formula = ((lq.solute, 100.0 * lq.load),) + tuple(
        (n, 100.0 * (1.0 - lq.load) * w) for n, w in zip(carrier.names, carrier.mass))
    return ClarityRequest(formula=formula, dose=dose, chain=chain,
                          brix=parse_number(brix, "brix", "degrees Brix") if brix else 0.0)


def load_text(res) -> Text:
    """The ``load`` job's answer in a few lines."""
    c = res.check
    t = Text()
    t.append(f"Dissolves at {100 * c.load:.3g} %: ", style="bold")
    t.append(c.verdict, style="bold #6aa36f" if c.verdict == "yes" else "bold #e0a030")
    largest = "not known" if c.largest_load is None else f"{100 * c.largest_load:.3g} %"
    where = "" if c.limiting_temp_C is None else f", least at {c.limiting_temp_C:g} C"
    t.append(f" · one phase up to {largest} from {c.temps_C[0]:g} to {c.temps_C[1]:g} C{where}\n")
    t.append(f"basis: {c.basis}\n", style="dim")
    return t


def clarity_text(res) -> Text:
    """The ``clarity`` job's answer: the verdict, each judged component, what was not judged."""
    t = Text()
    t.append("Drink stays clear: ", style="bold")
    t.append(f"{res.verdict}\n", style="bold #6aa36f" if res.verdict == "clear" else "bold #e0a030")
    t.append("formula: " + ", ".join(f"{c.name} {100 * c.mass_fraction:.3g} %" for c in res.formula.components)
             + "\n", style="dim")
    if res.largest_clear_dose is not None:
        dose = (f"{100 * res.largest_clear_dose:.3g} %" if res.dose_unit.endswith("fraction")
                else f"{res.largest_clear_dose:.4g} {res.dose_unit}")
        t.append(f"largest dose that stays clear: {dose}\n")
    for c in res.components:
        t.append(f"{c.name}: {c.verdict}, {c.level_mg_kg:.3g} mg/kg in the drink, dissolves "
                 f"{c.solubility_mg_kg:.3g}\n")
        for w in c.ways_out if c.verdict != "clear" else ():
            t.append(f"  {w['text']}\n", style="dim")
    for n in res.not_judged:
        t.append(f"not judged: {n.get('name', '')} ({n.get('reason', '')})\n", style="dim")
    return t


def error_text(question: str, exc, labels: dict[str, str]) -> Text:
    """A check the form cannot ask yet (or asks wrongly), said in the panel with the field's label."""
    from .dialogs import field_label

    t = Text()
    t.append(f"{question} ", style="bold")
    t.append(exc.describe(lambda p: field_label(p, labels)) + "\n", style="dim")
    return t
