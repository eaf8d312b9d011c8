"""The usual cautions beside a liquid: flammability, hydrocarbon and gas extraction, toxic or
restricted solvents (ICH Q3C classes), ethanol; the cautions that go with a check of legal
limits; and the closing caution of every result.

They repeat what practitioners and the regulations already say; they do not replace local
codes, the regulations in force or licensed practice.
"""

from __future__ import annotations

from typing import Any, Mapping

from ..data.catalog import number_or_none as _number
from ..errors import InputError, SolvselError, UnknownNameError
from .hazards import HEALTH_LEVELS, HEALTH_STATEMENTS, hazard_class, health_hazard
from .regulations import USES, _ETHANOL_CAS, DoseCheck, _ethanol_strength, _get, _text, limits

__all__ = ["DEFER", "solvent_cautions", "limit_cautions", "row_cautions"]

#: The closing caution of every result.
DEFER = (
    "Estimates for planning bench work, not a safety or regulatory sign-off: defer to local codes, "
    "the regulations in force and licensed practice."
)


# CAS numbers of the families that carry their own cautions.
_HYDROCARBONS = {
    "74-98-6": "propane", "106-97-8": "n-butane", "75-28-5": "isobutane", "109-66-0": "n-pentane",
    "110-54-3": "n-hexane", "142-82-5": "n-heptane", "110-82-7": "cyclohexane", "108-87-2": "methylcyclohexane",
    "8032-32-4": "petroleum ether",
}
_LIQUEFIED_GASES = {"74-98-6", "106-97-8", "75-28-5", "115-10-6", "124-38-9", "10024-97-2", "811-97-2"}
_CHLORINATED = {
    "75-09-2", "67-66-3", "56-23-5", "79-01-6", "127-18-4", "107-06-2", "71-55-6", "75-35-4", "540-59-0", "108-90-7",
}
_NONFLAMMABLE_GASES = {"124-38-9", "10024-97-2", "811-97-2"}


def solvent_cautions(solvent, use: str | None = None, cat=None) -> list[str]:
    """The usual cautions for a liquid, most serious first, ending with :data:`DEFER`.

    Parameters
    ----------
    solvent : Solvent or mapping
        Needs ``name`` and ``cas``; uses ``flash_C``, ``bp_C`` and ``flammable``
        where present.
    use : {"carrier", "extraction", "bench"}, optional
        The intended use; extraction adds the equipment and room cautions.
    cat : Catalog, optional
        Used to look up the ICH Q3C class of the solvent.

    Examples
    --------
    >>> c = solvent_cautions({"name": "n-hexane", "cas": "110-54-3", "flash_C": -22, "bp_C": 68.7}, use="extraction")
    >>> any("gas detection" in x for x in c) and c[-1] == DEFER
    True
    """
    if use is not None and use not in USES:
        raise InputError(f"expected one of {', '.join(USES)}, got '{use}'", param="use", value=use,
                         expected="one of " + ", ".join(USES))
    name = _text(_get(solvent, "name")) or "this liquid"
    cas = _text(_get(solvent, "cas"))
    out = (_fire_and_pressure_cautions(solvent, name, cas, use) + _health_cautions(solvent, name, cat)
           + _toxicity_cautions(name, cas, cat))
    if cas == _ETHANOL_CAS or _ethanol_strength(name) is not None:
        out.append(
            "ethanol: denatured ethanol may not remain in food or flavour extracts and its denaturant (e.g. "
            "heptane) leaves a residue; excise rules apply to tax-paid ethanol."
        )
        if use in (None, "extraction"):
            out.append("ethanol: never chill it in a household freezer; cold extraction needs rated equipment.")
    if use == "bench":
        out.append(_bench_caution(solvent, name))
    out.append(DEFER)
    return list(dict.fromkeys(out))


def _fire_and_pressure_cautions(solvent, name: str, cas: str, use: str | None) -> list[str]:
    """Flammability (GHS class), the rooms and equipment of solvent and gas extraction, pressure."""
    flammable = _get(solvent, "flammable")
    if isinstance(flammable, str):
        flammable = {"yes": True, "no": False}.get(flammable.lower())
    if cas in _NONFLAMMABLE_GASES:
        flammable = False
    out: list[str] = []
    hz = hazard_class(_number(_get(solvent, "flash_C")), _number(_get(solvent, "bp_C")), flammable=flammable,
                      gas=cas in _LIQUEFIED_GASES or None)
    if hz is not None:
        if hz.kind == "gas under pressure":
            out.append(f"{name}: {hz.label}.")
        elif hz.category == 4:
            out.append(f"{name}: {hz.label}; it burns when heated above its flash point: keep hot work and heated "
                       "vessels away from ignition sources.")
        else:
            out.append(
                f"{name}: {hz.label}; keep from ignition sources, ground and bond containers, store and ship "
                "as a flammable under the local fire code."
            )
    if cas in _HYDROCARBONS or cas == "115-10-6":
        if use in (None, "extraction"):
            out.append(
                f"{name}: hydrocarbon or ether extraction belongs in a code-compliant room (hazardous-location "
                "classification, ventilation) with listed or engineer-reviewed closed-loop equipment and gas "
                "detection; permits and quantity limits of the local fire and building codes apply."
            )
    elif use == "extraction" and hz is not None and hz.kind != "gas under pressure" and (hz.category or 4) <= 3:
        out.append(
            f"{name}: extraction with a flammable solvent belongs in equipment and rooms built for it "
            "(ventilation, no ignition sources, rated electrics, quantity limits) under the local fire and "
            "building codes."
        )
    if cas in _LIQUEFIED_GASES and cas != "124-38-9":
        out.append(f"{name}: liquefied gas; vessels, hoses and fittings must be rated for its vapour pressure.")
    if cas == "124-38-9":
        out.append(
            "carbon dioxide: pressure and asphyxiation hazard; rated vessels with relief devices, CO2 monitoring "
            "and ventilation in the room; never in unrated or household equipment."
        )
    return out


#: Health hazards from this level of :data:`~solvsel.rules.hazards.HEALTH_LEVELS` up ("harmful") carry a caution.
HEALTH_CAUTION_LEVEL = 2


def _health_cautions(solvent, name: str, cat) -> list[str]:
    """The liquid's health hazard statements (harmonised classification) from "harmful" up, with the
    reference library's exposure limit."""
    try:
        hh = health_hazard(cat, solvent)
    except SolvselError:  # a broken health table: the caution must never hide the result
        return []
    if hh is None or hh.level < HEALTH_CAUTION_LEVEL:
        return []
    said = "; ".join(f"{h} {HEALTH_STATEMENTS.get(h[:4], '')}".strip() for h in hh.statements)
    where = ("harmonised classification, Regulation (EC) No 1272/2008 Annex VI" if hh.basis == "harmonised"
             else "published safety data compilation")
    if hh.confidence != "checked":
        where += ", recalled: verify"
    text = f"{name}: health hazard '{HEALTH_LEVELS[hh.level]}' ({where}): {said}."
    limits = hh.exposure_limits or {}
    if "TWA" in limits:
        text += f" Occupational exposure limit {limits['TWA'][0]:g} {limits['TWA'][1]} (8-hour TWA, {limits['source']})."
    return [text]


def _toxicity_cautions(name: str, cas: str, cat) -> list[str]:
    """Toxic or restricted solvents: n-hexane, methanol, chlorinated solvents, ICH Q3C class 1 and 2."""
    out: list[str] = []
    if cas == "110-54-3":
        out.append("n-hexane: neurotoxic on repeated exposure; occupational exposure limits and residue limits apply.")
    if cas == "67-56-1":
        out.append(
            "methanol: toxic by ingestion, inhalation and skin contact; not a food carrier; occupational exposure "
            "limits and strict residue limits apply."
        )
    if cas in _CHLORINATED:
        out.append(
            f"{name}: chlorinated solvent; toxic, several are known or suspected carcinogens; exposure limits and "
            "strict residue limits apply; use only where the rules in force allow it, with fume extraction."
        )
    if cas and cas not in _CHLORINATED and cas != "67-56-1":
        try:
            ich = [r for r in limits(cat, cas=cas, jurisdiction="ICH") if r.status in ("class 1", "class 2")]
        except SolvselError:  # a broken regulations table: the caution must never hide the result
            ich = []
        for r in ich[:1]:
            out.append(
                f"{name}: ICH Q3C {r.status} solvent (residual limit {r.limit:g} {r.unit} in pharmaceuticals); "
                "toxic or restricted: exposure limits apply and residues must be measured."
            )
    return out


def _bench_caution(solvent, name: str) -> str:
    """The fume hood and the lab's exposure limits, for a food liquid or a lab liquid."""
    roles = _get(solvent, "roles") or ()
    if isinstance(roles, str):
        roles = tuple(r for r in roles.split(";") if r)
    if "carrier" in roles or "extraction" in roles:
        return f"{name}: in bench tests, use a fume hood and the exposure limits of the lab."
    return f"{name}: a lab liquid, not for food; use a fume hood and the exposure limits of the lab."


def limit_cautions(check: DoseCheck) -> list[str]:
    """The cautions that go with a check of legal limits (:func:`~solvsel.rules.regulations.check_dose`):
    limits from all sources, where the rules come from, unconfirmed rows, substances with no data,
    residues and claims.  The cautions of the formula's liquids and :data:`DEFER` are added by the
    caller (the ``dose`` job).

    Examples
    --------
    >>> from solvsel.science.formulation import Step
    >>> from solvsel.rules.regulations import carrier_dose_check
    >>> chk = carrier_dose_check(None, "propylene glycol", [Step("sweet", "w/w", 0.002)], "EU", "confectionery")
    >>> limit_cautions(chk)[1][:44]
    "Jurisdiction EU, category 'confectionery': t"
    """
    jur, category = check.jurisdiction, check.category
    out = [
        "Limits apply to the food as consumed and from all sources: add what the other ingredients already bring to the food.",
        f"Jurisdiction {jur}, category '{category}': the rules, sources and checked-on dates are listed with each limit; "
        "rows marked 'secondary, verify' or 'from memory' are not confirmed against the official text.",
    ]
    if any(c.flagged for c in check.checks) or any(r.confidence != "checked" for r in check.residues):
        out.append("Some limits used here are unconfirmed (secondary source or recalled): verify them before relying on the result.")
    if check.no_data:
        out.append(
            "No data for " + ", ".join(d["substance"] for d in check.no_data)
            + f" in {jur}: the tool found no rule, which is not a permission."
        )
    if check.residues:
        out.append(
            "Residual solvents: measured residues come from headspace GC of the actual lot; limits differ by jurisdiction "
            "and use, and a prediction never replaces the measurement."
        )
        if check.purpose is None:
            out.append(
                "No purpose given: every residue rule of the solvents is shown, but each applies only to the purposes "
                "it names (spice oleoresins, hop extracts, flavourings ...); give the purpose of the formula to judge "
                "its residues."
            )
    if check.claims:
        out.append("Claim rules are examples from tables/claims.csv: verify with your certifier.")
    return out


def row_cautions(cat, table: str, row: Mapping[str, Any]) -> list[str]:
    """The cautions beside one row of a bundled table: a liquid's own (:func:`solvent_cautions`),
    an active solute's note, and :data:`DEFER` beside rules, weighting agents and emulsifiers.

    Examples
    --------
    >>> from solvsel.data.catalog import load_catalog
    >>> c = row_cautions(load_catalog(), "solvents", {"name": "ethanol", "cas": "64-17-5"})
    >>> any("flammable" in x for x in c), c[-1] == DEFER
    (True, True)
    """
    if table == "solvents":
        try:
            return solvent_cautions(cat.solvent(row.get("cas") or row.get("name"), library=False), cat=cat)
        except (UnknownNameError, InputError):  # a row the look-up cannot find again: no caution to add
            return []
    if table in ("regulations", "weighting_agents", "emulsifiers"):
        return [DEFER]
    if table == "solutes" and str(row.get("category")) == "active":
        return [str(row.get("note") or ""), DEFER]
    return []
