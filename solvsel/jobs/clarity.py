"""Will the drink stay clear? The ``clarity`` job.

A flavour formula (the same formula, dose and dilution chain as the ``dose``
job reads) goes into a finished drink; for each oil-soluble component of the
formula on record in ``tables/water_solubility.csv`` (an essential oil by its
main component), its level in the drink is set against its solubility in the
drink's water phase, with the co-solvents the flavour itself brings (ethanol,
propylene glycol, glycerol at their levels in the drink) by the log-linear
model of :mod:`solvsel.science.clarity`.  The answer gives a verdict per
component (clear / haze risk / separates), the largest dose that keeps every
judged component clear, and the ways out with their numbers: less of the
component (a folded or terpene-reduced oil), a solubiliser at a ratio to the
oil (common practice), or the emulsion route with the oil phase the emulsion
designer would start from.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..data.catalog import Catalog, number_or_none
from ..data.provenance import audit_block
from ..rules.cautions import DEFER
from ..science.clarity import (
    CLEAR_BELOW,
    COSOLVENT_POWER,
    COSOLVENT_POWER_SOURCE,
    NEGLIGIBLE_GAIN,
    ComponentClarity,
    clarity_verdict,
    cosolvency_power,
    gain_text,
    largest_clear_factor,
    log_p,
    volume_fractions,
)
from ..science.formulation import WATER_DENSITY_25C, Formula, Stage, Step, stage_levels
from ._base import build_request, catalog_or_default, check_choice, check_number, frame
from .dose import (FORMULA_DENSITY_RANGE, _dose_field, _formula, _formula_field, _optional_text,
                   formula_liquid_cautions)
from .parse import parse_chain

__all__ = ["ClarityRequest", "ClarityResult", "clarity", "SOLUBILISER", "SOLUBILISER_RATIO"]

_WATER_CAS = "7732-18-5"
#: The usual solubiliser of flavour oils in clear drinks and its ratio to the oil [g/g] (common practice:
#: source ``clarity_solubiliser_practice``).
SOLUBILISER = "polysorbate 80"
SOLUBILISER_RATIO = (3.0, 10.0)
#: Worst first.
_VERDICT_ORDER = ("separates", "haze risk", "clear")


@dataclass(frozen=True)
class ClarityRequest:
    """A flavour, its dose and chain into a finished drink, and the drink's water phase.

    Attributes
    ----------
    formula : str or sequence of (str, float) or mapping
        the flavour, as the ``dose`` job reads it: components in percent (``"ethanol=60, d-limonene=2,
        water=38"``), pairs, a dict, or the path of a CSV file with columns ``name`` and ``mass_percent``
        (or ``volume_percent``), optional ``cas`` and ``density_g_cm3``
    by : {"mass", "volume"}
        whether the percentages of ``formula`` are by mass (default) or by volume
    dose : str or float, optional
        dose of the flavour in the first stage (``"0.1%"``, ``"1000ppm"``, ``"1g/L"``, a mass fraction)
    chain : str, optional
        dilution chain as the ``dose`` job takes it (``"syrup 0.5% d=1.28; drink 1+5v d=1.04"``); without
        it the dose goes straight into the drink
    brix : float
        sugar content of the finished drink [degrees Brix], 0 to 70 (default 0: a plain water phase); the
        sugar's share of the drink holds no oil
    temp_C : float
        storage temperature of the drink [C], -5 to 60 (default 20); the solubilities on record are at
        20-25 C and are not corrected for it (a caution says so when it differs by more than 5 C)
    formula_density : float, optional
        density of the flavour [g/cm3], 0.3 to 2.5; default from its components

    >>> ClarityRequest(formula="ethanol=60, d-limonene=2, water=38", dose="0.1%").brix
    0.0
    """

    formula: str | tuple[tuple[str, float], ...]
    by: str = "mass"
    dose: str | float | None = None
    chain: str | None = None
    brix: float = 0.0
    temp_C: float = 20.0
    formula_density: float | None = None

    def __post_init__(self) -> None:
        checked = {
            "formula": _formula_field(self.formula),
            "by": check_choice(self.by, "by", ("mass", "volume")),
            "dose": _dose_field(self.dose),
            "chain": _optional_text(self.chain, "chain"),
            "brix": check_number(self.brix, "brix", 0.0, 70.0, unit="degrees Brix"),
            "temp_C": check_number(self.temp_C, "temp_C", -5.0, 60.0, unit="C"),
            "formula_density": check_number(self.formula_density, "formula_density", *FORMULA_DENSITY_RANGE,
                                            unit="g/cm3", allow_none=True),
        }
        for name, value in checked.items():
            object.__setattr__(self, name, value)
        self.steps()

    def steps(self) -> list[Step]:
        """The dilution chain as steps, the dose in the first one."""
        return parse_chain(self.chain, self.dose, final_name="drink")


@dataclass(frozen=True)
class ClarityResult:
    """Each oil-soluble component against its solubility in the drink, the verdict and the ways out.

    ``components`` holds one :class:`~solvsel.science.clarity.ComponentClarity` per judged component;
    ``not_judged`` the ingredients with no water solubility on record; ``cosolvents`` the flavour's
    co-solvents in the drink (mg/kg and volume fraction of the water phase); ``verdict`` the worst
    component's; ``largest_clear_dose`` the largest dose (in ``dose_unit``, the first stage's) that keeps
    every judged component clear; ``emulsion_oil_phase`` the oil-soluble ingredients in percent of the oil
    phase, where the emulsion designer would start (``emulsion_oil_in_drink_mg_kg`` in the drink).
    """

    request: ClarityRequest
    formula: Formula
    stages: tuple[Stage, ...]
    cosolvents: tuple[dict, ...]
    components: tuple[ComponentClarity, ...]
    not_judged: tuple[dict, ...]
    verdict: str
    largest_clear_dose: float | None
    dose_unit: str
    emulsion_oil_phase: tuple[tuple[str, float], ...]
    emulsion_oil_in_drink_mg_kg: float
    notes: tuple[str, ...]
    cautions: tuple[str, ...]
    audit: dict = field(default_factory=dict)

    @property
    def ok(self) -> bool:
        """Every judged component stays clear."""
        return self.verdict == "clear"

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel clear --json``."""
        last = self.stages[-1]
        return {
            "formula": self.formula.to_dict(), "steps": [s.step.to_dict() for s in self.stages[1:]],
            "drink": {"name": last.name, "brix": self.request.brix, "temp_C": self.request.temp_C,
                      "density_g_cm3": last.density_g_cm3, "fraction_of_formula": last.fraction_of_formula},
            "cosolvents": [dict(c) for c in self.cosolvents],
            "components": [c.to_dict() for c in self.components],
            "not_judged": [dict(n) for n in self.not_judged], "verdict": self.verdict, "ok": self.ok,
            "largest_clear_dose": self.largest_clear_dose, "dose_unit": self.dose_unit,
            "emulsion_oil_phase": [list(p) for p in self.emulsion_oil_phase],
            "emulsion_oil_in_drink_mg_kg": self.emulsion_oil_in_drink_mg_kg,
            "thresholds": {"clear_below": CLEAR_BELOW, "model_sources": list(COSOLVENT_POWER_SOURCE)},
            "notes": list(self.notes), "cautions": list(self.cautions), "audit": self.audit,
        }

    def to_frame(self):
        """One row per judged component."""
        cols = ["name", "cas", "level_mg_kg", "water_solubility_mg_L", "cosolvent_gain", "solubility_mg_kg", "ratio",
                "verdict", "max_clear_level_mg_kg", "largest_clear_dose"]
        return frame(({c: getattr(x, c) for c in cols} for x in self.components), cols)


# ----------------------------------------------------------------------------- the water phase


def _solubility_rows(cat: Catalog) -> dict[str, dict]:
    """The rows of tables/water_solubility.csv by CAS and by lower-case name and synonym."""
    out: dict[str, dict] = {}
    for row in cat.table("water_solubility").to_dict("records"):
        keys = [str(row.get("cas") or ""), str(row["name"])] + str(row.get("synonyms") or "").split(";")
        for k in keys:
            if k.strip():
                out.setdefault(k.strip().lower(), row)
    return out


def _cosolvents(cat: Catalog, last: Stage, brix: float) -> tuple[dict, float, tuple[dict, ...]]:
    """The co-solvents' volume fractions in the drink's water phase, its volume [L/kg of drink] and a
    description of each."""
    mass = {cas: last.mass_fractions[cas] for cas in COSOLVENT_POWER if last.mass_fractions.get(cas)}
    dens = {cas: cat.solvent(cas, library=False).density_g_cm3 for cas in mass}
    others = sum(w for k, w in last.mass_fractions.items() if k != _WATER_CAS)
    fractions, volume = volume_fractions(mass, dens, 1.0 - brix / 100.0 - others, WATER_DENSITY_25C)
    shown = tuple({"name": COSOLVENT_POWER[cas][0], "cas": cas, "mg_per_kg": mass[cas] * 1e6,
                   "volume_fraction": fractions[cas]} for cas in mass)
    return fractions, volume, shown


def _judged(cat: Catalog, formula: Formula, last: Stage) -> tuple[dict, list[dict], dict[str, float]]:
    """The judged components with their levels in the drink [mg/kg] and the ingredients they come from; the
    ingredients not judged; the oil-soluble ingredients with their formula mass fractions."""
    rows = _solubility_rows(cat)
    subs = formula.substance_fractions()
    judged: dict[str, dict] = {}
    not_judged, oil = [], {}
    for key, (name, cas, w) in subs.items():
        if key in COSOLVENT_POWER or key == _WATER_CAS or name == "rest (unspecified)":
            continue
        row = rows.get(key.lower()) or rows.get(name.lower())
        if row is None:
            not_judged.append({"name": name, "cas": cas, "level_mg_kg": last.mass_fractions[key] * 1e6,
                               "reason": "no water solubility on record: not judged"})
            continue
        share = 1.0
        if row.get("as_component"):
            share = float(row["component_fraction"])
            row = rows[str(row["as_component"]).lower()]
        entry = judged.setdefault(row["name"], {"row": row, "level": 0.0, "oil": 0.0, "from": []})
        entry["level"] += last.mass_fractions[key] * 1e6 * share
        entry["oil"] += last.mass_fractions[key] * 1e6
        entry["from"].append(name)
        oil[name] = oil.get(name, 0.0) + w
    return judged, not_judged, oil


# ----------------------------------------------------------------------------- the verdicts


def _ways_out(name: str, entry: dict, max_level: float, emulsion_phase) -> tuple[dict, ...]:
    """Less of the component, a solubiliser at a ratio to the oil it comes in (common practice), or the
    emulsion route."""
    level, oil_level = entry["level"], entry["oil"]
    keep = max_level / level
    oils = [n for n in entry["from"] if n != name]
    less = (f"bring {name} down to {max_level:.3g} mg/kg in the drink ({keep:.0%} of today's level"
            + (f": a {1 / keep:.2g}-fold or terpene-reduced {' / '.join(oils)}" if oils else "") + ")")
    lo, hi = SOLUBILISER_RATIO
    return (
        {"way": "less of the component", "max_level_mg_kg": max_level, "keep_fraction": keep, "fold": 1.0 / keep,
         "text": less},
        {"way": "solubiliser", "solubiliser": SOLUBILISER, "ratio_to_oil": [lo, hi],
         "level_mg_kg": [lo * oil_level, hi * oil_level], "basis": "common practice",
         "source": "clarity_solubiliser_practice",
         "text": f"{SOLUBILISER} at {lo:g}-{hi:g} g per g of oil (common practice): {lo * oil_level:.3g}-"
                 f"{hi * oil_level:.3g} mg/kg in the drink, an additive with its own limits"},
        {"way": "emulsion", "oil_phase": [list(p) for p in emulsion_phase],
         "text": "make a beverage emulsion of the oil phase instead (the emulsion designer, with this oil phase)"},
    )


def _component(name: str, entry: dict, fractions: dict, volume: float, step: Step, emulsion_phase) -> ComponentClarity:
    """One judged component: its solubility in the drink, the verdict, the largest clear dose, the ways out."""
    row = entry["row"]
    lp, basis = log_p(str(row.get("cas") or ""), str(row.get("smiles") or ""), str(row.get("log_p_as_cas") or ""))
    exponent = sum(cosolvency_power(lp, cas) * f for cas, f in fractions.items())
    s_w = float(row["water_solubility_mg_L"])
    gain = 10.0 ** exponent
    solubility = s_w * gain * volume
    ratio = entry["level"] / solubility
    verdict = clarity_verdict(ratio)
    # the dose cannot pass the whole first stage (a fraction of 1); per litre, a kilogram per litre
    cap = 1000.0 / float(step.amount) if step.how == "g/L" else 1.0 / float(step.amount) if step.scalable else 1e6
    k = largest_clear_factor(entry["level"], CLEAR_BELOW * s_w * volume, exponent, cap)
    dose = None if k is None or not step.scalable else k * float(step.amount)
    max_level = CLEAR_BELOW * solubility
    return ComponentClarity(
        name=name, cas=str(row.get("cas") or ""), from_ingredients=tuple(entry["from"]), level_mg_kg=entry["level"],
        water_solubility_mg_L=s_w, solubility_temp_C=number_or_none(row.get("temp_C")),
        solubility_source=tuple(x for x in str(row.get("source") or "").split(";") if x), log_p=lp,
        log_p_basis=basis, cosolvent_gain=gain, gain_negligible=gain - 1.0 < NEGLIGIBLE_GAIN, solubility_mg_kg=solubility,
        ratio=ratio, verdict=verdict, max_clear_level_mg_kg=max_level, largest_clear_dose=dose,
        ways_out=() if verdict == "clear" else _ways_out(name, entry, max_level, emulsion_phase),
    )


def _dose_unit(step: Step) -> str:
    return {"w/w": "mass fraction", "v/v": "volume fraction", "g/L": "g/L"}.get(step.how, step.how)


def _cautions(cat: Catalog, formula: Formula, comps, temp_C: float) -> tuple[str, ...]:
    """What the verdicts rest on, the cautions of the formula's liquids, and the closing caution."""
    out = ["Water solubilities are those of each pure component in water at 20-25 C (several recalled, marked from "
           "memory in the tables); sugar, acids, the other flavour components and the storage temperature change "
           "them: confirm clarity at the bench at the coldest storage temperature."]
    far = [c.name for c in comps if c.solubility_temp_C is not None and abs(c.solubility_temp_C - temp_C) > 5]
    if far:
        out.append(f"The drink is judged at {temp_C:g} C with solubilities measured at other temperatures "
                   f"({', '.join(far)}): not corrected for temperature.")
    if any(c.verdict != "clear" for c in comps):
        out.append("A solubiliser is a food additive with its own limits in drinks: check its level like any "
                   "additive, for the drink's category and jurisdiction.")
    out += formula_liquid_cautions(cat, formula)
    out.append(DEFER)
    return tuple(dict.fromkeys(out))


def clarity(request: ClarityRequest | None = None, *, catalog: Catalog | None = None, **fields) -> ClarityResult:
    """Will the drink stay clear? Each oil-soluble component of a flavour against its solubility in the drink.

    Examples
    --------
    2 % d-limonene in a flavour dosed at 0.1 % gives 20 mg/kg in the drink, over the 13.8 mg/L that dissolve
    in water (Massaldi and King 1973, as on record); at 0.04 % the 8 mg/kg stay dissolved:

    >>> r = clarity(formula="ethanol=60, d-limonene=2, water=38", dose="0.1%")
    >>> c = r.components[0]
    >>> c.name, round(c.level_mg_kg, 6), c.verdict
    ('d-limonene', 20.0, 'haze risk')
    >>> clarity(formula="ethanol=60, d-limonene=2, water=38", dose="0.04%").verdict
    'clear'
    """
    req = build_request(ClarityRequest, request, fields)
    cat = catalog_or_default(catalog)
    formula = _formula(cat, req)
    steps = req.steps()
    stages = stage_levels(formula, steps, req.formula_density)
    last = stages[-1]
    fractions, volume, shown = _cosolvents(cat, last, req.brix)
    judged, not_judged, oil = _judged(cat, formula, last)
    total = sum(oil.values())
    phase = tuple((n, 100.0 * w / total) for n, w in oil.items()) if total > 0 else ()
    comps = tuple(_component(name, e, fractions, volume, steps[0], phase) for name, e in judged.items())
    verdict = min((c.verdict for c in comps), key=_VERDICT_ORDER.index) if comps else "not judged"
    doses = [c.largest_clear_dose for c in comps if c.largest_clear_dose is not None]
    notes = tuple(f"{c.name}: solubility {c.solubility_mg_kg:.3g} mg/kg of drink; {gain_text(c.cosolvent_gain)}"
                  for c in comps)
    if comps and not steps[0].scalable:
        notes += ("the first step is in parts: no largest clear dose is given",)
    return ClarityResult(
        request=req, formula=formula, stages=tuple(stages), cosolvents=shown, components=comps,
        not_judged=tuple(not_judged), verdict=verdict, largest_clear_dose=min(doses) if doses else None,
        dose_unit=_dose_unit(steps[0]), emulsion_oil_phase=phase,
        emulsion_oil_in_drink_mg_kg=sum(last.mass_fractions[k] for k, v in formula.substance_fractions().items()
                                        if v[0] in oil) * 1e6,
        notes=notes + formula.notes, cautions=_cautions(cat, formula, comps, req.temp_C),
        audit=audit_block((), cat.tables_dir),
    )
