"""Weighting, density match, creaming, ripening and legal checks of a beverage emulsion: the ``emulsion`` job.

For an oil phase (flavour oils and weighting agents) in a drink of given
sugar content or density: the oil phase's density, the Stokes creaming rate
of a droplet size or a size distribution, the largest droplet that stays put
for the shelf life, the ways to weight the flavour oil to the drink's density
within the legal maxima (one agent, or a pair when one alone would break its
limit), the level in the drink of every weighting agent and of the
emulsifier against the rules on record (none on record is never taken as
allowed), and the Ostwald ripening check.  The physics is
:mod:`solvsel.science.emulsion`; the legal limits come from
:mod:`solvsel.rules.regulations` and are checked here.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Sequence

import numpy as np

from ..data.catalog import Catalog
from ..data.provenance import audit_block
from ..errors import InputError, OutOfRangeError
from ..rules.cautions import DEFER
from ..rules.regulations import Limit, check_purpose, limits, not_for_purpose, rows_for_purpose
from ..science.emulsion import (
    DRINK_DENSITY_RANGE,
    AgentCheck,
    AgentLimit,
    DistributionCreaming,
    EmulsifierUse,
    OilComponent,
    RipeningCheck,
    WeightingOption,
    agent_level_ppm,
    check_agent,
    creaming_mm_per_day,
    creaming_of_distribution,
    drink_density,
    drink_viscosity,
    emulsifier_use,
    max_droplet_diameter_um,
    oil_phase_components,
    oil_phase_density,
    ripening_check,
    solution_density,
    time_to_cream_days,
    weighting_options,
)
from ..science.formulation import WATER_DENSITY_25C
from ..science.hlb import normalize_fractions
from ._base import (
    build_request,
    catalog_or_default,
    check_bool,
    check_category,
    check_fraction,
    check_jurisdictions,
    check_names,
    check_number,
    check_pairs,
    frame,
)
from .pool import check_purpose_text

__all__ = ["EmulsionRequest", "EmulsionResult", "emulsion", "agent_limits", "EMULSION_CAUTIONS"]

#: Densities [g/cm3] an oil of the oil phase may be given: the oils, flavour liquids and weighting
#: agents of food work lie well inside it (about 0.8 for terpenes to about 1.35 for the heaviest
#: weighting agents); a value outside is a typing slip or a wrong unit.
OIL_DENSITY_RANGE = (0.5, 2.5)

#: Storage temperatures of a drink the viscosity table covers [C].
STORAGE_TEMP_RANGE = (0.0, 60.0)

#: Cautions every emulsion result carries (common practice).
EMULSION_CAUTIONS = (
    "Weighting-agent and emulsifier limits apply to the drink as consumed, from all sources, and differ by "
    "jurisdiction and product category: check the regulations in force where the drink is sold.",
    "Stokes' law gives the creaming rate of single droplets in a still liquid: accelerated tests (centrifuge, "
    "heat) rank formulas only; real-time storage of the finished drink decides shelf life.",
    "A formula density-matched for a sugared drink is mismatched in its diet version (near the density of "
    "water): check each version.",
)


def _agent_rows(cat: Catalog, agent: str, cas: str, jurisdiction: str, category: str, use: str) -> list[Limit]:
    """The rows in force for ``agent`` used as ``use`` in a drink of ``category``."""
    return limits(cat, cas=cas or None, substance=None if cas else agent, jurisdiction=jurisdiction,
                  category=category, use=use)


def _as_agent_limits(agent: str, jurisdiction: str, use: str, rows: Sequence[Limit],
                     purpose: str | None) -> list[AgentLimit]:
    """Rows as the engine's :class:`AgentLimit`; with a ``purpose``, only the rows that authorise it, and
    an agent whose rows allow it only for other purposes is refused, the rules named."""
    judged = rows_for_purpose(rows, purpose)
    if rows and not judged:
        status, message = not_for_purpose(agent, use, jurisdiction, purpose, rows)
        if status != "no data":  # rules naming no purpose: no limit on record, never allowed
            return [AgentLimit(agent, jurisdiction, "; ".join(dict.fromkeys(r.rule for r in rows)), None, None,
                               "not permitted", any(r.flagged for r in rows), message)]
    return [AgentLimit(agent, r.jurisdiction, r.rule, r.limit_mg, r.basis, r.status, r.flagged, r.note) for r in judged]


def agent_limits(cat: Catalog, agent: str, cas: str, jurisdiction: str, category: str,
                 use: str = "weighting", purpose: str | None = None) -> list[AgentLimit]:
    """The rules in force for ``agent`` used as ``use`` ("weighting" or "emulsifier") in a drink of
    ``category`` (for the product's ``purpose`` when given), from
    :func:`solvsel.rules.regulations.limits`, as the engine's :class:`AgentLimit`.

    >>> [(r.rule, r.limit_mg, r.basis) for r in agent_limits(None, "glycerol ester of wood rosin", "8050-30-4",
    ...                                                       "US", "flavoured drinks")]
    [('21 CFR 172.735', 100.0, 'mass')]
    """
    rows = _agent_rows(cat, agent, cas, jurisdiction, category, use)
    return _as_agent_limits(agent, jurisdiction, use, rows, check_purpose(cat, purpose))


# ----------------------------------------------------------------------------- request


@dataclass(frozen=True)
class EmulsionRequest:
    """A beverage emulsion to check: its oil phase, the drink, the dose and the droplets.

    Attributes
    ----------
    oil : tuple of (name, amount)
        the oil phase: oils, weighting agents or flavour solvents with their
        mass fractions (summing to 1) or percent (summing to 100)
    brix : float, optional
        sugar content of the finished drink [degrees Brix, sucrose]; or give ``density``
    density : float, optional
        density of the finished drink [g/cm3], 0.95 to 1.4
    dilution : float, optional
        parts of finished drink made from one part of concentrate, by mass [-],
        at least 1; needed for the levels in the drink and the legal checks
    oil_phase : float
        mass fraction of the oil phase in the concentrate [-] (default 0.10)
    droplet_um : float, optional
        droplet diameter [um]
    sizes : tuple of (diameter, volume share), optional
        droplet size distribution: diameters [um] with volume fractions (sum 1)
        or percent (sum 100)
    viscosity_mPa_s : float, optional
        viscosity of the drink [mPa s]; default: a sucrose solution of the drink's Brix at ``temp_C``
        (tables/sucrose_viscosity.csv), or water at ``temp_C`` when only the density is given
    temp_C : float
        storage temperature of the drink for its viscosity [C], 0 to 60 (default 20)
    concentrate_viscosity_mPa_s : float, optional
        measured viscosity of the emulsion concentrate [mPa s]: judges creaming in the concentrate
        itself during its storage (its water phase holds the emulsifier)
    height_mm : float
        liquid height the droplets must not cross in the shelf life [mm] (default 100)
    shelf_days : float
        target shelf life [days] (default 180)
    jurisdictions : tuple of str
        US and/or EU (default both)
    category : str
        food category of the finished drink (default "flavoured drinks")
    oil_density : tuple of (name, density), optional
        densities [g/cm3] for oils with none on record (or to replace it)
    nano : bool
        the emulsion is a nanoemulsion (stricter ripening warning)
    emulsifier : str, optional
        emulsifier of the concentrate (e.g. gum arabic): its amount from its use
        ratio to oil, its level in the drink checked against the rules on record
    emulsifier_ratio : float, optional
        grams of emulsifier per gram of oil phase [g/g] (default the usual ratio: tables/hydrocolloids.csv
        for gum arabic and octenyl-succinate starch, tables/emulsifiers.csv otherwise)
    purpose : str, optional
        what the product is, an id of tables/purposes.csv (e.g. ``finished_food``): an agent or
        emulsifier is legal only where a rule authorises it for that purpose

    >>> EmulsionRequest(oil={"d-limonene": 70, "sucrose acetate isobutyrate": 30}, brix=11).oil_phase
    0.1
    """

    oil: tuple[tuple[str, float], ...]
    brix: float | None = None
    density: float | None = None
    dilution: float | None = None
    oil_phase: float = 0.10
    droplet_um: float | None = None
    sizes: tuple[tuple[float, float], ...] | None = None
    viscosity_mPa_s: float | None = None
    height_mm: float = 100.0
    shelf_days: float = 180.0
    jurisdictions: tuple[str, ...] = ("US", "EU")
    category: str = "flavoured drinks"
    oil_density: tuple[tuple[str, float], ...] | None = None
    nano: bool = False
    emulsifier: str | None = None
    emulsifier_ratio: float | None = None
    purpose: str | None = None
    temp_C: float = 20.0
    concentrate_viscosity_mPa_s: float | None = None

    def __post_init__(self) -> None:
        put = object.__setattr__
        put(self, "oil", check_pairs(self.oil, "oil", lo=0.0, allow_none=False))
        normalize_fractions([a for _, a in self.oil], param="oil")
        self._check_drink()
        put(self, "dilution", check_number(self.dilution, "dilution", 1.0, None, allow_none=True,
                                           unit="parts of drink per part of concentrate"))
        put(self, "oil_phase", check_fraction(self.oil_phase, "oil_phase", allow_zero=False))
        put(self, "droplet_um", check_number(self.droplet_um, "droplet_um", 0.0, None, unit="um", lo_open=True,
                                             allow_none=True))
        put(self, "sizes", check_pairs(self.sizes, "sizes", numeric_keys=True, lo=0.0, unit="um"))
        if self.sizes is not None:
            normalize_fractions([f for _, f in self.sizes], param="sizes")
        for name, unit in (("height_mm", "mm"), ("shelf_days", "days")):
            put(self, name, check_number(getattr(self, name), name, 0.0, None, unit=unit, lo_open=True))
        for name in ("viscosity_mPa_s", "concentrate_viscosity_mPa_s"):
            put(self, name, check_number(getattr(self, name), name, 0.0, None, unit="mPa s", lo_open=True,
                                         allow_none=True))
        put(self, "temp_C", check_number(self.temp_C, "temp_C", *STORAGE_TEMP_RANGE, unit="C"))
        put(self, "jurisdictions", check_jurisdictions(self.jurisdictions))
        put(self, "category", check_names(self.category, "category", allow_none=False)[0])
        put(self, "oil_density", check_pairs(self.oil_density, "oil_density", lo=OIL_DENSITY_RANGE[0],
                                             hi=OIL_DENSITY_RANGE[1], unit="g/cm3"))
        put(self, "nano", check_bool(self.nano, "nano"))
        if self.emulsifier is not None:
            put(self, "emulsifier", check_names(self.emulsifier, "emulsifier", allow_none=False)[0])
        put(self, "emulsifier_ratio", check_number(self.emulsifier_ratio, "emulsifier_ratio", 0.0, None, unit="g/g",
                                                   lo_open=True, allow_none=True))
        put(self, "purpose", None if self.purpose is None else check_purpose_text(self.purpose))

    def _check_drink(self) -> None:
        if (self.brix is None) == (self.density is None):
            raise InputError("give the drink's sugar content (Brix) or its density, one of the two", param="brix",
                             expected="a Brix or a density")
        if self.brix is not None:
            object.__setattr__(self, "brix", check_number(self.brix, "brix", 0.0, None, unit="degrees Brix"))
            return
        d = check_number(self.density, "density", 0.0, None, unit="g/cm3", lo_open=True)
        lo, hi = DRINK_DENSITY_RANGE
        if not (lo <= d <= hi):
            raise OutOfRangeError(f"{d!r} g/cm3 is not the density of a drink (expected {lo:g}-{hi:g})",
                                  param="density", value=self.density, expected=f"{lo:g} to {hi:g} g/cm3")
        object.__setattr__(self, "density", d)


# ----------------------------------------------------------------------------- result


@dataclass(frozen=True)
class EmulsionResult:
    """Densities, levels and legal checks, creaming and ripening of the emulsion.

    ``agent_level_ppm`` is the weighting agents' total in the drink [mg/kg],
    ``agent_limit_ppm`` the limit with the least headroom [mg/kg of this drink];
    ``agents`` one check per agent and jurisdiction (and the emulsifier's failed
    checks); ``ok`` is False when a level is over a legal maximum (or has no
    rule on record), with the messages in ``refusals``.  ``weighting`` holds,
    per jurisdiction, the ways to weight the flavour part of the oil phase to
    the drink's density; ``weighting_excluded`` the agents with no legal use.
    ``viscosity_mPa_s`` is the drink's viscosity used by Stokes' law and
    ``viscosity_basis`` where it comes from.  With a measured concentrate
    viscosity, ``concentrate_*`` judge creaming in the concentrate: the density
    of its water phase [g/cm3] (water and the hydrocolloid, volumes additive),
    the creaming rate of the droplet size [mm/day] and the largest droplet that
    stays put for the shelf life [um].
    """

    beverage_density: float
    beverage_density_basis: str
    oil_phase: tuple[OilComponent, ...]
    oil_phase_density: float
    density_difference: float
    oil_in_concentrate: float
    dilution: float | None
    oil_in_drink_ppm: float | None
    agent_level_ppm: float | None
    agent_limit_ppm: float | None
    agents: tuple[AgentCheck, ...]
    droplet_diameter_um: float | None
    viscosity_mPa_s: float
    viscosity_basis: str
    temp_C: float
    creaming_mm_per_day: float | None
    height_mm: float
    shelf_days: float
    time_to_cream_days: float | None
    max_droplet_um: float
    distribution: DistributionCreaming | None
    weighting: dict[str, tuple[WeightingOption, ...]]
    weighting_excluded: dict[str, tuple[str, ...]]
    emulsifier: EmulsifierUse | None
    emulsifier_checks: tuple[AgentCheck, ...]
    ripening: RipeningCheck
    jurisdictions: tuple[str, ...]
    category: str
    ok: bool
    refusals: tuple[str, ...]
    cautions: tuple[str, ...]
    purpose: str | None = None
    audit: dict = field(default_factory=dict)
    concentrate_viscosity_mPa_s: float | None = None
    concentrate_water_phase_density: float | None = None
    concentrate_creaming_mm_per_day: float | None = None
    concentrate_max_droplet_um: float | None = None

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel emulsion --json``."""
        d = {f: getattr(self, f) for f in self.__dataclass_fields__ if f != "emulsifier_checks"}
        d["oil_phase"] = [c.to_dict() for c in self.oil_phase]
        d["agents"] = [a.to_dict() for a in self.agents]
        d["distribution"] = self.distribution.to_dict() if self.distribution else None
        d["weighting"] = {j: [o.to_dict() for o in opts] for j, opts in self.weighting.items()}
        d["weighting_excluded"] = {j: list(msgs) for j, msgs in self.weighting_excluded.items()}
        d["emulsifier"] = None if self.emulsifier is None else (
            self.emulsifier.to_dict() | {"checks": [c.to_dict() for c in self.emulsifier_checks]})
        d["ripening"] = self.ripening.to_dict()
        for key in ("refusals", "cautions", "jurisdictions"):
            d[key] = list(getattr(self, key))
        return d

    def to_frame(self):
        """The weighting options, one row per jurisdiction and option."""
        cols = ["jurisdiction", "agents", "fractions", "levels_ppm", "limits_ppm", "density", "matched", "legal"]
        return frame(({"jurisdiction": j, **{k: o.to_dict()[k] for k in cols[1:]}}
                      for j, opts in self.weighting.items() for o in opts), cols)


# ----------------------------------------------------------------------------- the job


class _Rules:
    """The rules on record for the drink's category (and the product's purpose), each substance and
    jurisdiction looked up once; ``rows`` keeps every row consulted (the answer's audit)."""

    def __init__(self, cat: Catalog, category: str, purpose: str | None = None) -> None:
        self.cat, self.category, self.purpose, self._seen = cat, category, check_purpose(cat, purpose), {}
        self.rows: dict[Limit, None] = {}

    def check(self, name: str, cas: str, jurisdiction: str, level_ppm: float, rho: float,
              use: str = "weighting") -> AgentCheck:
        key = (name, cas, jurisdiction, use)
        if key not in self._seen:
            rows = _agent_rows(self.cat, name, cas, jurisdiction, self.category, use)
            self.rows.update(dict.fromkeys(rows))
            self._seen[key] = _as_agent_limits(name, jurisdiction, use, rows, self.purpose)
        return check_agent(name, cas, jurisdiction, level_ppm, rho, self._seen[key])


def _agent_checks(req: EmulsionRequest, comps, oil_ppm, rho_b: float, rules: _Rules) -> dict:
    """Each weighting agent of the oil phase in the drink against each jurisdiction's rules."""
    checks, notes, total, binding = [], [], None, None
    for c in (c for c in comps if c.is_agent):
        if oil_ppm is None:
            notes.append(f"{c.name} is a weighting agent: give the dilution of the concentrate to check its level "
                         "in the drink against the legal maximum")
            continue
        level = c.mass_fraction * oil_ppm
        total = (total or 0.0) + level
        for j in req.jurisdictions:
            chk = rules.check(c.name, c.cas, j, level, rho_b)
            checks.append(chk)
            if chk.limit_ppm is not None and (binding is None or chk.limit_ppm - chk.level_ppm < binding[0]):
                binding = (chk.limit_ppm - chk.level_ppm, chk.limit_ppm)
    return {"agents": checks, "notes": notes, "agent_level_ppm": total,
            "agent_limit_ppm": None if binding is None else binding[1]}


def _creaming(req: EmulsionRequest, rho_b: float, rho_o: float, eta: float) -> dict:
    """Stokes creaming of the droplet size and of the size distribution in a drink of viscosity ``eta``
    [mPa s]; the largest droplet that stays put."""
    h, days = req.height_mm, req.shelf_days
    v = None if req.droplet_um is None else creaming_mm_per_day(req.droplet_um, rho_b, rho_o, eta)
    dist = None
    if req.sizes:
        dist = creaming_of_distribution([s for s, _ in req.sizes], [f for _, f in req.sizes], rho_b, rho_o, eta, h,
                                        days)
    return {"creaming_mm_per_day": v, "time_to_cream_days": None if v is None else time_to_cream_days(h, v),
            "max_droplet_um": max_droplet_diameter_um(h, days, rho_b, rho_o, eta), "distribution": dist}


def _weighting(cat: Catalog, req: EmulsionRequest, comps, oil_ppm, rho_b: float, rules: _Rules) -> dict:
    """Ways to weight the flavour part of the oil phase (its agents taken out) to the drink's density,
    per jurisdiction, with the agents that have no legal use left out (and said)."""
    base = [c for c in comps if not c.is_agent]
    weighting, excluded = {}, {}
    if base and oil_ppm is not None:
        wb = np.array([c.mass_fraction for c in base])
        rho_base = oil_phase_density(wb / wb.sum(), [c.density for c in base])
        agents = cat.table("weighting_agents").to_dict("records")
        for j in req.jurisdictions:
            cands = []
            for r in agents:
                chk = rules.check(r["name"], str(r.get("cas") or ""), j, 1.0, rho_b)
                cands.append((r["name"], float(r["density_g_cm3"]), chk.limit_ppm))
                if chk.limit_ppm is None:
                    excluded.setdefault(j, []).append(chk.message)
            weighting[j] = tuple(weighting_options(rho_base, rho_b, oil_ppm, cands))
    return {"weighting": weighting, "weighting_excluded": {j: tuple(m) for j, m in excluded.items()}}


def _concentrate(req: EmulsionRequest, use: EmulsifierUse | None, rho_o: float) -> dict:
    """Creaming in the concentrate itself at its measured viscosity: its water phase is water with the
    emulsifier (when a hydrocolloid's density is on record), volumes additive."""
    if req.concentrate_viscosity_mPa_s is None:
        return {}
    rho_w = WATER_DENSITY_25C
    if use is not None and use.density is not None:
        rho_w = solution_density(use.in_concentrate / (1.0 - req.oil_phase), use.density, WATER_DENSITY_25C)
    eta = req.concentrate_viscosity_mPa_s
    v = None if req.droplet_um is None else creaming_mm_per_day(req.droplet_um, rho_w, rho_o, eta)
    return {"concentrate_viscosity_mPa_s": eta, "concentrate_water_phase_density": rho_w,
            "concentrate_creaming_mm_per_day": v,
            "concentrate_max_droplet_um": max_droplet_diameter_um(req.height_mm, req.shelf_days, rho_w, rho_o, eta)}


def _emulsifier(cat: Catalog, req: EmulsionRequest, oil_ppm, rho_b: float, rules: _Rules) -> dict:
    """The emulsifier's share of the concentrate and its level in the drink against each jurisdiction's rules."""
    if req.emulsifier is None:
        return {"emulsifier": None, "emulsifier_checks": ()}
    use = emulsifier_use(cat, req.emulsifier, req.oil_phase, req.emulsifier_ratio, oil_ppm)
    checks = () if use.level_ppm is None else tuple(
        rules.check(use.name, use.cas, j, use.level_ppm, rho_b, use="emulsifier") for j in req.jurisdictions)
    return {"emulsifier": use, "emulsifier_checks": checks}


def _cautions(req: EmulsionRequest, notes, checks, drho: float, ripe: RipeningCheck,
              use: EmulsifierUse | None) -> tuple[str, ...]:
    cautions = list(notes) + list(EMULSION_CAUTIONS)
    if req.brix is not None:
        cautions.append("Drink density is that of a pure sucrose solution at 20 C: acids, other sugars, "
                        "sweeteners and carbonation shift it; measure the finished drink where it matters.")
    if req.viscosity_mPa_s is None and req.brix is not None:
        cautions.append(f"Creaming uses the viscosity of a pure sucrose solution of the drink's Brix at {req.temp_C:g} C; "
                        "other sugars, acids and thickeners change it (give the measured viscosity where known).")
    elif req.viscosity_mPa_s is None:
        cautions.append(f"Creaming uses the viscosity of water at {req.temp_C:g} C; a sugared drink is more viscous, "
                        "so the true rate is lower (give the drink's Brix or viscosity).")
    if use is not None and use.usual_ratio is not None and use.ratio_to_oil < use.usual_ratio[0]:
        cautions.append(f"{use.name} at {use.ratio_to_oil:g} g per g of oil is below its usual use level "
                        f"({use.usual_ratio[0]:g}-{use.usual_ratio[1]:g} g/g): too little to cover the droplets, "
                        "they may coalesce or ring.")
    if any("verify" in chk.message for chk in checks):
        cautions.append("Some legal limits on record are not confirmed against the official text: verify them "
                        "in the regulations in force before relying on the check.")
    if abs(drho) < 0.01:
        cautions.append("The oil phase is within 0.01 g/cm3 of the drink: oil densities on record are mostly at 25 C "
                        "and the sucrose table at 20 C, and oils expand about twice as fast as water with heat; "
                        "measure both at the storage temperature before trusting a close match.")
    if ripe.warn:
        cautions.append("Ostwald ripening: " + ripe.reason + ". " + ripe.remedy + ".")
    return tuple(cautions) + (DEFER,)


def emulsion(request: EmulsionRequest | None = None, *, catalog: Catalog | None = None, **fields) -> EmulsionResult:
    """Density match, legal check of the weighting agents and the emulsifier, creaming and ripening.

    Over-limit levels are data (``ok`` False, ``refusals``), not exceptions.

    Examples
    --------
    70 % d-limonene with 30 % sucrose acetate isobutyrate, 10 % oil phase dosed
    1 in 500 into an 11 Brix drink: 0.3 x 0.1 x 1e6 / 500 = 60 mg/kg of the agent:

    >>> r = emulsion(oil=[("d-limonene", 70), ("sucrose acetate isobutyrate", 30)], brix=11, dilution=500,
    ...              droplet_um=0.4)
    >>> round(r.agent_level_ppm, 6), r.ok
    (60.0, True)
    """
    req = build_request(EmulsionRequest, request, fields)
    cat = catalog_or_default(catalog)
    rules = _Rules(cat, check_category(cat, req.category), req.purpose)
    rho_b, basis = drink_density(cat, req.brix, req.density)
    comps = oil_phase_components(cat, req.oil, dict(req.oil_density or ()))
    rho_o = oil_phase_density([c.mass_fraction for c in comps], [c.density for c in comps])
    oil_ppm = None if req.dilution is None else agent_level_ppm(1.0, req.oil_phase, req.dilution)
    agents = _agent_checks(req, comps, oil_ppm, rho_b, rules)
    emul = _emulsifier(cat, req, oil_ppm, rho_b, rules)
    checks = agents["agents"] + [c for c in emul["emulsifier_checks"] if not c.ok]
    ripe = ripening_check(comps, nano=req.nano)
    eta, eta_basis = ((req.viscosity_mPa_s, "given") if req.viscosity_mPa_s is not None
                      else drink_viscosity(cat, req.brix, req.temp_C))
    return EmulsionResult(
        beverage_density=rho_b, beverage_density_basis=basis, oil_phase=comps, oil_phase_density=rho_o,
        density_difference=rho_b - rho_o, oil_in_concentrate=req.oil_phase, dilution=req.dilution,
        oil_in_drink_ppm=oil_ppm, agent_level_ppm=agents["agent_level_ppm"], agent_limit_ppm=agents["agent_limit_ppm"],
        agents=tuple(checks), droplet_diameter_um=req.droplet_um, viscosity_mPa_s=eta, viscosity_basis=eta_basis,
        temp_C=req.temp_C, height_mm=req.height_mm, shelf_days=req.shelf_days, **_creaming(req, rho_b, rho_o, eta),
        **_weighting(cat, req, comps, oil_ppm, rho_b, rules), **emul, ripening=ripe,
        jurisdictions=req.jurisdictions, category=req.category, ok=all(c.ok for c in checks),
        refusals=tuple(c.message for c in checks if not c.ok),
        cautions=_cautions(req, agents["notes"], checks, rho_b - rho_o, ripe, emul["emulsifier"]),
        purpose=rules.purpose, audit=audit_block(rules.rows, cat.tables_dir),
        **_concentrate(req, emul["emulsifier"], rho_o),
    )
