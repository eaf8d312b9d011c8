"""The demo scenario: a fictional drinks maker's product, used by ``solvsel demo`` and the UI.

The company, the product and every quantity in ``tables/demo_scenario.json``
are invented for the demo (source kind ``demo``); the substances are real and
carry their published values in the tables.  :func:`demo_steps` turns the
scenario into the command lines the README walks through, so the text demo,
the UI and the README show the same work.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .catalog import TABLES_DIR
from ..errors import InputError

__all__ = ["Scenario", "load_scenario", "demo_steps", "SCENARIO_PATH"]

SCENARIO_PATH = TABLES_DIR / "demo_scenario.json"


@dataclass(frozen=True)
class Scenario:
    """The demo scenario (all quantities invented for the demo)."""

    company: str
    product: str
    story: str
    target: dict[str, Any]
    carrier: dict[str, Any]
    extraction: dict[str, Any]
    emulsion: dict[str, Any]
    flavour: dict[str, Any]
    load: dict[str, Any] = field(default_factory=dict)
    source: str = "demo"
    path: str = ""

    @property
    def solute(self) -> str:
        return self.target["solute"]

    def to_dict(self) -> dict:
        return {k: getattr(self, k) for k in self.__dataclass_fields__}


def load_scenario(path: str | Path | None = None) -> Scenario:
    """Read the demo scenario (or a scenario file of the same shape)."""
    p = Path(path) if path else SCENARIO_PATH
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"scenario file '{p}' does not exist") from None
    except json.JSONDecodeError as exc:
        raise InputError(f"scenario file '{p}': not valid JSON (line {exc.lineno}: {exc.msg})") from None
    keys = ("company", "product", "story", "target", "carrier", "extraction", "emulsion", "flavour")
    missing = [k for k in keys if k not in data]
    if missing:
        raise InputError(f"scenario file '{p}': missing '{missing[0]}'")
    if data.get("source") != "demo":
        raise InputError(f"scenario file '{p}': its 'source' must be 'demo' (invented data are marked so)")
    return Scenario(**{k: data[k] for k in keys}, load=data.get("load") or {}, source="demo", path=str(p))


def _amounts(d: dict) -> str:
    return ",".join(f"{k}={v:g}" for k, v in d.items())


def _purpose(part: dict) -> list[str]:
    """The ``--purpose`` of a step whose part of the scenario states what the product is (else nothing)."""
    return ["--purpose", part["purpose"]] if part.get("purpose") else []


def _load_steps(s: Scenario) -> list[tuple[str, list[str]]]:
    """The load checks of the scenario: does each solute stay dissolved at its level over the storage range."""
    return [(f"Does {k['solute']} stay dissolved at {k['load']} in {' + '.join(k['carrier'])}, "
             f"stored at {k.get('storage', '4:25').replace(':', ' to ')} C?",
             ["dissolves", k["solute"], "--in", ",".join(k["carrier"]), "--load", k["load"],
              "--storage", k.get("storage", "4:25")]) for k in s.load.get("checks", ())]


def _later_steps(s: Scenario) -> list[tuple[str, list[str]]]:
    """The load checks, the clarity of the drink and the extraction plan (numbered after the first six)."""
    x, f = s.extraction, s.flavour
    plan = x.get("plan") or {}
    steps = _load_steps(s)
    steps.append(("Will the lemon flavour keep the drink clear (each component against its solubility in the "
                  "drink's water phase)?",
                  ["clear", "--formula", _amounts(f["formula"]), "--dose", f["dose"], "--chain", f["chain"],
                   *(["--brix", f"{f['brix']:g}"] if f.get("brix") is not None else [])]))
    if plan:
        steps.append((f"Which ethanol strength and how cold for the {s.solute} extraction, and how to strip it",
                      ["extract", "--solute", s.solute, "--reject", ",".join(x["reject"]),
                       "--liquids", ",".join(plan.get("liquids", ("ethanol", "water"))),
                       "--strengths", plan.get("strengths", "40:100:5"), f"--temps={plan.get('temps', '-40:40:5')}",
                       "--vacuum", f"{plan.get('vacuum_kPa', 10):g}", "--jurisdiction", x["jurisdiction"],
                       *_purpose(x)]))
    return [(f"{i}. {title}", argv) for i, (title, argv) in enumerate(steps, start=7)]


def demo_steps(s: Scenario) -> list[tuple[str, list[str]]]:
    """(title, argv) of each step of the walk-through, in order; a part of the scenario that states the
    product's purpose passes it on, so the step keeps only liquids allowed for it."""
    c, x, e, f = s.carrier, s.extraction, s.emulsion, s.flavour
    return [
        (f"1. Single food carriers for {s.solute}, nearest in Hansen space first",
         ["rank", "--solute", s.solute, "--food", "--use", c["use"], "--jurisdiction", c["jurisdiction"],
          *_purpose(c), "--top", str(c.get("top", 8))]),
        (f"2. Carrier blends of up to {c['max_components']} liquids ({c['jurisdiction']}, {c['use']} use)",
         ["blend", "--solute", s.solute, "--use", c["use"], "--jurisdiction", c["jurisdiction"], *_purpose(c),
          "--max-components", str(c["max_components"]), "--top", str(c.get("top", 8))]),
        (f"3. Extraction solvents at {x['temp_C']:g} C that keep {', '.join(x['reject'])} out"
         + (f", allowed for a {x['purpose'].replace('_', ' ')}" if x.get("purpose") else ""),
         ["blend", "--solute", s.solute, "--use", x["use"], "--jurisdiction", x["jurisdiction"], *_purpose(x),
          "--reject", ",".join(x["reject"]), "--temp", f"{x['temp_C']:g}",
          "--max-components", str(x["max_components"]), "--top", str(x.get("top", 8))]),
        ("4. Emulsifier pairs for the lemon oil phase",
         ["hlb", "--oil", _amounts(e.get("hlb_oil", e["oil"])), "--emulsifiers", ",".join(e["emulsifiers"])]),
        ("5. Weighting, density match and creaming of the emulsion in the drink",
         ["emulsion", "--oil", _amounts(e["oil"]), "--brix", f"{e['brix']:g}", "--dilution", f"{e['dilution']:g}",
          "--droplet-um", f"{e['droplet_um']:g}", "--jurisdiction", e["jurisdiction"]]),
        ("6. The lemon flavour's carrier against the finished-drink limits",
         ["dose", "--formula", _amounts(f["formula"]), "--dose", f["dose"], "--chain", f["chain"],
          "--category", f["category"], "--jurisdiction", f["jurisdiction"]]),
        *_later_steps(s),
    ]
