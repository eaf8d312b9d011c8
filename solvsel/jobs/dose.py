"""A flavour along its dilution chain against the legal limits: the ``dose`` job.

The formula (components in percent, or a CSV file) goes into the first stage at
the dose, stage after stage into the food as consumed; every substance's level
is compared with the limits of the jurisdiction for that food category, summed
from all sources (what other ingredients already bring), and the largest dose
that keeps every limit is found, with the limit that sets it.  Measured solvent
residues and claim rules are checked too.  The answer carries the cautions
that go with it: the legal notes, those of every liquid of the formula, and the
closing caution.

The arithmetic and the rules are in :func:`solvsel.rules.regulations.check_dose`;
the chain and the amounts are read by :mod:`solvsel.jobs.parse`.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from typing import Any, Mapping

from ..data.catalog import STDIN, Catalog
from ..data.provenance import audit_block
from ..errors import InputError, UnknownNameError
from ..rules.cautions import DEFER, limit_cautions, solvent_cautions
from ..rules.regulations import DoseCheck, check_dose
from ..science.formulation import Formula, Step, formula_from_amounts, formula_from_csv
from ._base import build_request, catalog_or_default, check_choice, check_names, check_number, frame
from .parse import parse_amount, parse_amounts, parse_chain, parse_names
from .pool import check_jurisdiction_text, check_purpose_text

__all__ = ["DoseRequest", "DoseResult", "dose", "dose_cautions"]

#: Densities a formula may be given [g/cm3] (light hydrocarbons to dense syrups and weighting agents).
FORMULA_DENSITY_RANGE = (0.3, 2.5)


def _is_csv_path(text: str) -> bool:
    """True when a formula given as text names a CSV file (or standard input, ``-``) rather than
    ``NAME=AMOUNT`` items."""
    return text == STDIN or text.lower().endswith(".csv") or (os.path.isfile(text) and "=" not in text)


def _amount_pairs(value, param: str, unit: str, hi: float | None = None) -> tuple[tuple[str, float], ...]:
    """``(name, amount)`` pairs from ``"A=1, B=2"`` text, a mapping or a sequence of pairs."""
    if isinstance(value, str):
        return tuple(parse_amounts(value, param))
    items = value.items() if isinstance(value, Mapping) else value
    expected = f"(name, amount in {unit}) pairs"
    try:
        pairs = [(name, amount) for name, amount in items]
    except (TypeError, ValueError):
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected) from None
    out = []
    for name, amount in pairs:
        if not isinstance(name, str) or not name.strip():
            raise InputError(f"expected a name before each amount, got {name!r}", param=param, value=value,
                             expected=expected)
        out.append((name.strip(), check_number(amount, param, 0.0, hi, unit=unit)))
    if not out:
        raise InputError(f"expected {expected}, got nothing", param=param, value=value, expected=expected)
    return tuple(out)


def _formula_field(value) -> str | tuple[tuple[str, float], ...]:
    """The formula as the path of a CSV file, or ``(name, percent)`` pairs."""
    if isinstance(value, os.PathLike):
        value = os.fspath(value)
    if isinstance(value, str):
        text = value.strip()
        if _is_csv_path(text):
            if text != STDIN and not os.path.exists(text):  # a folder or a device: the reader says what it is
                raise InputError(f"formula file '{text}' does not exist", param="formula", value=text,
                                 expected="a CSV file with columns name and mass_percent (or volume_percent)")
            return text
    return _amount_pairs(value, "formula", "% of the formula", 100.0)


def _dose_field(value) -> str | None:
    """The dose as text (a number is a mass fraction), checked by the amount grammar."""
    if value is None:
        return None
    if isinstance(value, bool):
        raise InputError(f"expected an amount, got {value!r}", param="dose", value=value, expected="an amount")
    text = repr(float(value)) if isinstance(value, (int, float)) else str(value).strip()
    parse_amount(text, "dose")
    return text


def _mg_per_kg_field(value, param: str) -> tuple[tuple[str, float], ...] | None:
    """``(name, mg/kg)`` pairs, a name given twice keeping its last amount; None for nothing."""
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    return tuple(dict(_amount_pairs(value, param, "mg/kg")).items())


def _claims_field(value) -> tuple[str, ...]:
    """Claim names from ``"halal, kosher"`` or a list."""
    if isinstance(value, str):
        return tuple(parse_names(value, "claims"))
    return check_names(value, "claims", allow_none=False) if value else ()


def _optional_text(value, param: str) -> str | None:
    """Stripped text, or None for nothing."""
    if value is None:
        return None
    if not isinstance(value, str):
        raise InputError(f"expected text, got {value!r}", param=param, value=value, expected="text")
    return value.strip() or None


@dataclass(frozen=True)
class DoseRequest:
    """A formula, its dose and chain, and whose limits in which food.

    Attributes
    ----------
    formula : str or sequence of (str, float) or mapping
        the components in percent of the formula (``"propylene glycol=90, vanillin=10"``,
        ``[("propylene glycol", 90), ("vanillin", 10)]`` or a dict), or the path of a CSV file
        (``"-"``: standard input) with columns ``name`` and ``mass_percent`` (or ``volume_percent``),
        optional ``cas`` and ``density_g_cm3``; percentages adding up to less than 100 leave an unspecified rest
    jurisdiction : str
        whose limits apply: a food-law jurisdiction of the tables (EU, US)
    by : {"mass", "volume"}
        whether the percentages of ``formula`` are by mass (default) or by volume (a CSV file says
        it by its column)
    dose : str or float, optional
        dose of the formula in the first stage: ``"0.15%"`` (w/w), ``"0.15%v"``, ``"1500ppm"``,
        ``"1.5g/kg"``, ``"1.5g/L"``, or a mass fraction (``0.0015`` or ``"0.0015"``)
    chain : str, optional
        dilution chain, steps ``NAME [AMOUNT] [d=DENSITY g/cm3] [dil=DENSITY g/cm3]`` separated by
        ``;`` (``"syrup 0.5% d=1.28; drink 1+5v d=1.04"``); ``dose`` fills the first step's amount;
        without a chain the dose goes straight into the food as consumed
    category : str, optional
        food category of the food as consumed (``tables/food_categories.csv``); None: all foods
    already : str or sequence of (str, float) or mapping, optional
        what other ingredients already bring to the food as consumed [mg/kg]
    residues : str or sequence of (str, float) or mapping, optional
        measured solvent residues in the formula (extract) [mg/kg = ppm]
    claims : str or sequence of str
        claims to check with ``tables/claims.csv`` (``"halal"``, ``"kosher, organic"``)
    formula_density : float, optional
        density of the formula [g/cm3], 0.3 to 2.5; default from its components
    purpose : str, optional
        what the formula is, an id of tables/purposes.csv (``flavouring``, ``spice_oleoresin`` ...): its
        measured residues are judged by the rules that authorise that purpose only; without it every residue
        rule is shown with the purposes it applies to

    Examples
    --------
    >>> DoseRequest(formula="propylene glycol=90, vanillin=10", jurisdiction="eu", dose=0.0015).formula
    (('propylene glycol', 90.0), ('vanillin', 10.0))
    """

    formula: str | tuple[tuple[str, float], ...]
    jurisdiction: str
    by: str = "mass"
    dose: str | float | None = None
    chain: str | None = None
    category: str | None = None
    already: tuple[tuple[str, float], ...] | None = None
    residues: tuple[tuple[str, float], ...] | None = None
    claims: tuple[str, ...] = ()
    formula_density: float | None = None
    purpose: str | None = None

    def __post_init__(self) -> None:
        checked = {
            "formula": _formula_field(self.formula),
            "jurisdiction": check_jurisdiction_text(self.jurisdiction),
            "by": check_choice(self.by, "by", ("mass", "volume")),
            "dose": _dose_field(self.dose),
            "chain": _optional_text(self.chain, "chain"),
            "category": _optional_text(self.category, "category"),
            "already": _mg_per_kg_field(self.already, "already"),
            "residues": _mg_per_kg_field(self.residues, "residues"),
            "claims": _claims_field(self.claims),
            "formula_density": check_number(self.formula_density, "formula_density", *FORMULA_DENSITY_RANGE,
                                            unit="g/cm3", allow_none=True),
            "purpose": None if self.purpose is None else check_purpose_text(self.purpose),
        }
        for name, value in checked.items():
            object.__setattr__(self, name, value)
        self.steps()  # the dose and the chain must read as a chain

    def steps(self) -> list[Step]:
        """The dilution chain as steps, the dose in the first one."""
        return parse_chain(self.chain, self.dose)


def dose_cautions(cat: Catalog, check: DoseCheck) -> tuple[str, ...]:
    """The cautions that go with a dose check: its legal notes, those of every liquid of the
    formula (as a carrier), and the closing caution :data:`~solvsel.rules.cautions.DEFER`."""
    out = limit_cautions(check) + formula_liquid_cautions(cat, check.formula)
    out.append(DEFER)
    return tuple(dict.fromkeys(out))


def formula_liquid_cautions(cat: Catalog, formula) -> list[str]:
    """The cautions of every liquid of a formula from the solvents table, as a carrier (without the
    closing :data:`~solvsel.rules.cautions.DEFER`, which the caller adds once)."""
    out: list[str] = []
    for comp in formula.components:
        if comp.origin.startswith("solvents"):
            try:
                rec = cat.solvent(comp.name, library=False)
            except UnknownNameError:  # a record from outside the tables under its own name
                continue
            out += [c for c in solvent_cautions(rec, use="carrier", cat=cat) if c != DEFER]
    return out


@dataclass(frozen=True)
class DoseResult:
    """The levels along the chain, every limit checked, the maximum dose, and the cautions.

    ``check`` holds the numbers (:class:`~solvsel.rules.regulations.DoseCheck`: ``stages``,
    ``checks``, ``max_dose`` in ``max_dose_unit``, ``binding``, ``no_data``, ``residues``,
    ``claims``, ``ok``, ``complete``); ``cautions`` the notes that go with them; ``audit`` the
    version, the tables' checksum and the rules applied (:func:`~solvsel.data.provenance.audit_block`).
    """

    request: DoseRequest
    check: DoseCheck
    cautions: tuple[str, ...]
    audit: dict = field(default_factory=dict)

    @property
    def formula(self) -> Formula:
        return self.check.formula

    @property
    def max_dose(self) -> float | None:
        """The largest dose that keeps every limit with a number, in :attr:`DoseCheck.max_dose_unit`."""
        return self.check.max_dose

    @property
    def ok(self) -> bool:
        """Every limit, residue rule and claim ceiling with data is kept."""
        return self.check.ok

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel dose --json``."""
        out = self.check.to_dict()
        assumptions = out.pop("assumptions")
        return {**out, "cautions": list(self.cautions), "assumptions": assumptions, "audit": self.audit}

    def to_frame(self):
        """One row per limit: rule, substance, level, limit, unit, ok, binds, max dose."""
        cols = ["rule", "jurisdiction", "substance", "level", "limit", "unit", "ok", "binds", "max_dose", "confidence"]
        return frame(({c: getattr(x, c) for c in cols} for x in self.check.checks), cols)


def _formula(cat: Catalog, req: DoseRequest) -> Formula:
    if isinstance(req.formula, str):
        return formula_from_csv(cat, req.formula)
    return formula_from_amounts(cat, list(req.formula), basis=req.by, name="flavour")


def dose(request: DoseRequest | None = None, *, catalog: Catalog | None = None, **fields) -> DoseResult:
    """Levels of a formula along its dilution chain, the limits that apply, the maximum dose.

    Examples
    --------
    A vanilla flavour in 90 % propylene glycol at 0.15 % in an EU drink (density 1.04 for the
    category): the carrier group's 1 000 mg/L (Reg. (EC) No 1333/2008 Annex III Part 4)
    allows at most 1000 / 1.04 / 0.9 mg/kg of flavour, 0.1068 %.

    >>> r = dose(formula="propylene glycol=90, vanillin=10", dose="0.15%", category="beverages", jurisdiction="EU")
    >>> round(r.max_dose * 100, 4), r.check.binding.unit
    (0.1068, 'mg/L')
    """
    req = build_request(DoseRequest, request, fields)
    cat = catalog_or_default(catalog)
    check = check_dose(
        cat, _formula(cat, req), req.steps(), req.jurisdiction, req.category or "food",
        already=dict(req.already) if req.already else None, residues=dict(req.residues) if req.residues else None,
        claims=list(req.claims), formula_density=req.formula_density, purpose=req.purpose,
    )
    return DoseResult(request=req, check=check, cautions=dose_cautions(cat, check),
                      audit=audit_block(check.rules, cat.tables_dir))
