"""A formulation (flavour, extract or emulsion concentrate) and its dilution chain.

A :class:`Formula` is a list of components with mass fractions (given by mass,
or by volume and converted with the components' densities).  A dilution
chain is a list of :class:`Step` s, each putting the previous stage into a new
one (flavour into syrup, syrup into drink).  :func:`stage_levels` gives the
mass fraction of every substance at every stage, from which mg/kg and, with
the stage's density, mg/L follow.

Chain syntax (parsed by :func:`solvsel.jobs.parse.parse_chain`), steps separated by ``;``, each
``NAME [AMOUNT] [d=DENSITY] [dil=DENSITY]``:

=============  ==============================================================
AMOUNT         meaning (the previous stage in this one)
=============  ==============================================================
``0.15%``      0.15 g per 100 g (mass fraction, w/w; also ``0.0015``)
``0.15%v``     0.15 mL per 100 mL (volume fraction, v/v): needs both densities
``1500ppm``    1500 mg per kg (also ``1500mg/kg``, ``1.5g/kg``)
``1.5g/L``     1.5 g per litre of this stage (also ``mg/L``): needs its density
``1+5``        1 part previous + 5 parts diluent by mass
``1+5v``       1 part previous + 5 parts diluent by volume: needs the previous
               stage's density and the diluent's (``dil=``, default water)
=============  ==============================================================

``d=`` is the density of the new stage [g/cm3]; for a ``1+5v`` step without
``d=`` it is computed assuming the volumes add.  Example:
``"syrup 0.5% d=1.28; drink 1+5v d=1.04"``.

Mass balance of a step: with :math:`f` the mass fraction of the previous
stage in the new one, :math:`w_{i,k} = f_k\\,w_{i,k-1}`, and

.. math::

    f = x \\;(\\text{w/w}),\\quad
    f = \\phi\\,\\rho_{k-1}/\\rho_k \\;(\\text{v/v}),\\quad
    f = c / (1000\\,\\rho_k) \\;(\\text{g/L}),\\quad
    f = \\frac{a\\,\\rho_{k-1}}{a\\,\\rho_{k-1} + b\\,\\rho_\\mathrm{dil}} \\;(a+b\\text{ by volume})

Levels: :math:`c_{i,k}\\,[\\mathrm{mg/kg}] = 10^6 w_{i,k}`,
:math:`c_{i,k}\\,[\\mathrm{mg/L}] = 10^6 w_{i,k}\\,\\rho_k` with
:math:`\\rho_k` in g/cm3 (= kg/L).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Sequence

from ..errors import InputError, MissingDataError, TableError, UnknownNameError

__all__ = [
    "WATER_DENSITY_25C",
    "Component",
    "Formula",
    "Step",
    "Stage",
    "formula_from_amounts",
    "formula_from_csv",
    "stage_levels",
]

#: Density of water at 25 C [g/cm3] (IAPWS-95, as given by the ``chemicals``/``thermo`` libraries: 997.05 kg/m3).
WATER_DENSITY_25C = 0.99705

_ETHANOL_CAS = "64-17-5"
_WATER_CAS = "7732-18-5"


@dataclass(frozen=True)
class Component:
    """One ingredient of a formula.

    ``substances`` maps the CAS (or the name when there is none) of each
    substance the ingredient brings to its mass fraction within the
    ingredient (an ethanol-water strength brings both).
    """

    name: str
    cas: str
    mass_fraction: float
    density_g_cm3: float | None
    origin: str
    substances: tuple[tuple[str, str, float], ...]  # (key, name, mass fraction in the component)

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name, "cas": self.cas, "mass_fraction": self.mass_fraction,
            "density_g_cm3": self.density_g_cm3, "origin": self.origin,
        }


@dataclass(frozen=True)
class Formula:
    """A flavour, extract or concentrate: components with mass fractions summing to 1."""

    name: str
    components: tuple[Component, ...]
    notes: tuple[str, ...] = ()

    @property
    def density_g_cm3(self) -> float | None:
        """Density assuming the volumes add, :math:`1/\\rho = \\sum_i w_i/\\rho_i`; None if one is missing."""
        inv = 0.0
        for c in self.components:
            if c.mass_fraction == 0:
                continue
            if c.density_g_cm3 is None:
                return None
            inv += c.mass_fraction / c.density_g_cm3
        return 1.0 / inv if inv > 0 else None

    def substance_fractions(self) -> dict[str, tuple[str, str, float]]:
        """Mass fraction of each substance in the formula, summed over the components.

        Returns ``{key: (name, cas, mass_fraction)}``; the key is the CAS (or the
        name for a substance without one).
        """
        out: dict[str, list] = {}
        for c in self.components:
            for key, sname, w in c.substances:
                if key in out:
                    out[key][2] += c.mass_fraction * w
                else:
                    cas = key if re.fullmatch(r"\d{2,7}-\d\d-\d", key) else ""
                    out[key] = [sname, cas, c.mass_fraction * w]
        return {k: (v[0], v[1], v[2]) for k, v in out.items()}

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name, "components": [c.to_dict() for c in self.components],
            "density_g_cm3": self.density_g_cm3, "notes": list(self.notes),
        }


def _lookup(cat, name: str):
    """(name, cas, density, origin, mixture) of a component name through the catalog; UnknownNameError otherwise."""
    first_error = None
    try:
        s = cat.solvent(name, library=False)
        return s.name, s.cas or "", s.density_g_cm3, "solvents", s
    except UnknownNameError as exc:
        first_error = exc
    for table in ("solutes", "weighting_agents", "emulsifiers"):
        try:
            row = cat.find(table, name)
        except (UnknownNameError, InputError):  # not in this table (or a table without names)
            continue
        dens = row.get("density_g_cm3")
        try:
            dens = float(dens) if dens not in (None, "") and not math.isnan(float(dens)) else None
        except (TypeError, ValueError):
            dens = None
        return row.get("name", name), str(row.get("cas") or ""), dens, table, None
    raise first_error


def _ethanol_strength(name: str) -> float | None:
    m = re.match(r"^\s*ethanol\s+(\d+(?:\.\d+)?)\s*%\s*v/v\s*$", str(name or ""), re.I)
    return float(m.group(1)) / 100.0 if m else None


def _component(cat, name, given_cas=None, given_density=None, param="formula", path=None) -> tuple:
    """(name, cas, density, origin, substances) of one ingredient given by name or as a record."""
    if not isinstance(name, str):
        # a catalog record (e.g. a user's or library liquid): take its own identity and density
        rec = name
        cname, cas, dens = str(getattr(rec, "name", "")), str(getattr(rec, "cas", "") or ""), getattr(rec, "density_g_cm3", None)
        origin = "solvents" if hasattr(rec, "roles") else "record"
        if getattr(rec, "origin", "bundled") != "bundled":
            origin += f" ({rec.origin})"
        if not cname:
            raise InputError("a component record without a name", param=param, path=path)
    else:
        try:
            cname, cas, dens, origin, _ = _lookup(cat, name)
        except UnknownNameError as exc:
            if not given_cas:
                exc.param = param
                raise
            cname, cas, dens, origin = name, given_cas, None, "given"
    if given_cas and cas and given_cas != cas:
        raise InputError(f"'{name}' has CAS {cas} in the tables, but {given_cas} was given", param=param,
                         value=given_cas, expected=cas, path=path)
    cas = cas or (given_cas or "")
    if given_density is not None:
        dens, origin = given_density, origin + " (density given)"
    substances: tuple
    strength = _ethanol_strength(cname)
    if not cas and strength is not None:
        # v/v strength -> mass fraction of ethanol: w = phi * rho_ethanol / rho_mixture (definition of v/v)
        try:
            rho_e = cat.solvent("ethanol", library=False).density_g_cm3
        except UnknownNameError:  # a catalog without ethanol
            rho_e = None
        if rho_e is None or dens is None:
            raise MissingDataError(f"'{cname}' needs the densities of ethanol and of the mixture to convert % v/v to mass",
                                   param=param, path=path)
        w_e = strength * rho_e / dens
        substances = ((_ETHANOL_CAS, "ethanol", w_e), (_WATER_CAS, "water", 1.0 - w_e))
    else:
        substances = ((cas or cname, cname, 1.0),)
    return cname, cas, dens, origin, substances


def formula_from_amounts(
    cat,
    amounts: Sequence[tuple[str, float]],
    basis: str = "mass",
    name: str = "flavour",
    cas: dict | None = None,
    densities: dict | None = None,
    param: str = "formula",
    path: str | None = None,
) -> Formula:
    """A formula from ``[(name, percent), ...]`` by mass (default) or by volume.

    A name may also be a catalog record (a :class:`~solvsel.data.catalog.Solvent`),
    whose CAS and density are then used as they are.

    An error names ``param`` (the request field the amounts came from) and
    ``path`` (the file they were read from, if any).

    Percent amounts must not add up to more than 100; below 100 the rest is an
    unspecified component with no limits checked (and a note says so).  By
    volume, each component needs a density (from the catalog or ``densities``)
    and the mass fractions are :math:`w_i = \\phi_i\\rho_i / \\sum_j \\phi_j\\rho_j`.

    Examples
    --------
    90 % propylene glycol and 10 % vanillin by mass:

    >>> from solvsel.data.catalog import load_catalog
    >>> f = formula_from_amounts(load_catalog(), [("propylene glycol", 90), ("vanillin", 10)])
    >>> [round(c.mass_fraction, 3) for c in f.components]
    [0.9, 0.1]
    """
    if basis not in ("mass", "volume"):
        raise InputError(f"the basis must be 'mass' or 'volume', got '{basis}'", param="by", value=basis,
                         expected="mass or volume")
    if not amounts:
        raise InputError("no components given", param=param, path=path, expected="at least one component")
    cas = cas or {}
    densities = densities or {}
    total = 0.0
    for n, a in amounts:
        if a is None or not math.isfinite(a) or a < 0:
            raise InputError(f"the amount of '{n}' must be a percentage between 0 and 100, got {a}", param=param,
                             value=a, expected="a percentage between 0 and 100", path=path)
        total += a
    if total > 100.0 + 1e-6:
        raise InputError(
            f"the amounts add up to {total:g} %, more than 100 %; give percentages of the whole formula",
            param=param, expected="percentages adding up to at most 100", path=path,
        )
    if total <= 0:
        raise InputError("the amounts add up to zero", param=param, expected="percentages adding up to more than 0",
                         path=path)
    rows = []
    for n, a in amounts:
        rows.append((_component(cat, n, cas.get(n), densities.get(n), param, path), a / 100.0))
    notes = []
    if total < 100.0 - 1e-6:
        rest = (100.0 - total) / 100.0
        notes.append(f"{100 - total:g} % of the formula is not specified: no limit is checked for it")
        rows.append((("rest (unspecified)", "", None, "unspecified", (("rest (unspecified)", "rest (unspecified)", 1.0),)), rest))
    if basis == "volume":
        missing = [r[0][0] for r in rows if r[0][2] is None]
        if missing:
            raise MissingDataError(
                f"amounts by volume need the density of every component; none for: {', '.join(missing)} "
                "(give it in a formula CSV column density_g_cm3)", param=param, path=path,
            )
        mass = [phi * comp[2] for comp, phi in rows]
        tot = sum(mass)
        fractions = [m / tot for m in mass]
        notes.append("volume fractions converted to mass with the components' densities (volumes assumed additive)")
    else:
        fractions = [phi for _, phi in rows]
    comps = tuple(
        Component(name=c[0], cas=c[1], mass_fraction=w, density_g_cm3=c[2], origin=c[3], substances=c[4])
        for (c, _), w in zip(rows, fractions)
    )
    seen = set()
    for c in comps:
        if c.name in seen:
            raise InputError(f"'{c.name}' is given twice", param=param, value=c.name, path=path)
        seen.add(c.name)
    return Formula(name=name, components=comps, notes=tuple(notes))


def formula_from_csv(cat, path, name: str | None = None, param: str = "formula") -> Formula:
    """A formula from a CSV file (``"-"``: standard input).

    Columns: ``name`` and one of ``mass_percent`` / ``volume_percent``
    (percent of the whole formula); optional ``cas`` (needed for a component
    that is in none of the tables), ``density_g_cm3`` and ``note``.  The file is read by
    :func:`~solvsel.data.catalog.read_user_csv` (UTF-8 or Windows-1252, commas or semicolons with
    decimal commas).  An error names ``param`` (the request field the file was given in), the
    file, and its row and column.
    """
    from ..data.catalog import STDIN, read_user_csv

    got = read_user_csv(path, param=param)
    col = _formula_header(got, param)
    amounts, cas, dens = [], {}, {}
    for i, raw in got.rows:
        if not any(c.strip() for c in raw):
            continue
        if len(raw) != len(got.header):
            raise TableError(got.path, f"expected {len(got.header)} fields, found {len(raw)} (quote a value that "
                             "holds a comma)", row=i, param=param)
        r = {k: v.strip() for k, v in zip(got.header, raw)}
        n, a, d = _formula_row(got.path, i, r, col, param)
        amounts.append((n, a))
        if r.get("cas"):
            cas[n] = r["cas"]
        if d is not None:
            dens[n] = d
    default_name = "formula" if str(path) == STDIN else Path(path).stem
    return formula_from_amounts(
        cat, amounts, basis="mass" if col == "mass_percent" else "volume", name=name or default_name,
        cas=cas, densities=dens, param=param, path=got.path,
    )


#: Columns of a formula CSV.
FORMULA_COLUMNS = ("name", "cas", "density_g_cm3", "mass_percent", "volume_percent", "note")


def _formula_header(got, param: str) -> str:
    """The amount column of a formula file's header (mass_percent or volume_percent), the header checked."""
    header, path = got.header, got.path
    if "name" not in header:
        raise TableError(path, "missing column 'name' (component name)", row=got.header_row, column="name",
                         param=param)
    basis_cols = [c for c in ("mass_percent", "volume_percent") if c in header]
    if len(basis_cols) != 1:
        raise TableError(path, "expected exactly one of the columns 'mass_percent' or 'volume_percent'",
                         row=got.header_row, param=param)
    for h in header:
        if h not in FORMULA_COLUMNS or header.count(h) > 1:
            what = "appears twice" if h in FORMULA_COLUMNS else "is unknown"
            raise TableError(path, f"column '{h}' {what}; expected: {', '.join(sorted(FORMULA_COLUMNS))}",
                             row=got.header_row, column=h, param=param)
    return basis_cols[0]


def _formula_row(path, i: int, r: dict, col: str, param: str) -> tuple[str, float, float | None]:
    """(name, percent, density or None) of one row of a formula file, checked."""
    n = r.get("name", "")
    if not n:
        raise TableError(path, "empty component name", row=i, column="name", param=param)
    try:
        a = float(r.get(col, ""))
    except ValueError:
        raise TableError(path, f"'{r.get(col, '')}' is not a number; expected a percentage 0-100", row=i,
                         column=col, param=param) from None
    if not (0 <= a <= 100):  # NaN fails too
        raise TableError(path, f"{a:g} is out of range; expected a percentage 0-100", row=i, column=col,
                         param=param)
    d = None
    if r.get("density_g_cm3"):
        try:
            d = float(r["density_g_cm3"])
        except ValueError:
            raise TableError(path, f"'{r['density_g_cm3']}' is not a number", row=i, column="density_g_cm3",
                             param=param) from None
        if not (0.3 <= d <= 2.5):
            raise TableError(path, f"{d:g} is out of range; expected 0.3-2.5 g/cm3", row=i,
                             column="density_g_cm3", param=param)
    return n, a, d


# ----------------------------------------------------------------------------- chain


@dataclass(frozen=True)
class Step:
    """One dilution step: the previous stage goes into a new stage ``name``.

    ``how`` is "w/w", "v/v", "g/L", "parts by mass" or "parts by volume";
    ``amount`` is the fraction (w/w, v/v), g/L, or the parts (a, b).
    """

    name: str
    how: str
    amount: float | tuple[float, float]
    density_g_cm3: float | None = None
    diluent_density_g_cm3: float | None = None
    text: str = ""

    @property
    def scalable(self) -> bool:
        """True when the stage level is proportional to the amount (not for a+b parts)."""
        return self.how in ("w/w", "v/v", "g/L")

    def describe(self) -> str:
        if self.how == "w/w":
            return f"{self.amount * 100:g} % w/w"
        if self.how == "v/v":
            return f"{self.amount * 100:g} % v/v"
        if self.how == "g/L":
            return f"{self.amount:g} g/L"
        a, b = self.amount
        return f"{a:g}+{b:g} {'by volume' if self.how == 'parts by volume' else 'by mass'}"

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name, "how": self.how, "amount": list(self.amount) if isinstance(self.amount, tuple) else self.amount,
            "density_g_cm3": self.density_g_cm3, "diluent_density_g_cm3": self.diluent_density_g_cm3,
            "text": self.text or self.describe(),
        }


@dataclass(frozen=True)
class Stage:
    """One stage of the chain: its density, the fraction of the previous stage in it, and the levels."""

    name: str
    step: Step | None
    density_g_cm3: float | None
    density_basis: str  # "given", "computed", "assumed (category)", "unknown"
    fraction_of_previous: float | None  # mass fraction of the previous stage in this one
    fraction_of_formula: float  # mass fraction of the formula in this stage
    mass_fractions: dict  # key -> mass fraction

    @property
    def mg_per_kg(self) -> dict:
        return {k: w * 1e6 for k, w in self.mass_fractions.items()}

    @property
    def mg_per_L(self) -> dict:
        if self.density_g_cm3 is None:
            return {k: None for k in self.mass_fractions}
        return {k: w * 1e6 * self.density_g_cm3 for k, w in self.mass_fractions.items()}


def _step_fraction(step: Step, rho_prev: float | None, rho_this: float | None, prev_name: str) -> tuple[float, float | None, str]:
    """(f, density of the new stage, basis of that density) for one step."""
    need = []
    if step.how == "w/w":
        return step.amount, rho_this, "given" if rho_this is not None else "unknown"
    if step.how == "parts by mass":
        a, b = step.amount
        return a / (a + b), rho_this, "given" if rho_this is not None else "unknown"
    if step.how == "v/v":
        if rho_prev is None:
            need.append(f"of '{prev_name}'")
        if rho_this is None:
            need.append(f"of '{step.name}' (d=)")
        if need:
            raise MissingDataError(
                f"step '{step.name}' ({step.describe()}) is by volume and needs the density " + " and ".join(need),
                param="chain",
            )
        return step.amount * rho_prev / rho_this, rho_this, "given"
    if step.how == "g/L":
        if rho_this is None:
            raise MissingDataError(
                f"step '{step.name}' ({step.describe()}) is per litre and needs the density of '{step.name}' (d=)",
                param="chain",
            )
        return step.amount / (1000.0 * rho_this), rho_this, "given"
    # parts by volume
    a, b = step.amount
    if rho_prev is None:
        raise MissingDataError(
            f"step '{step.name}' ({step.describe()}) is by volume and needs the density of '{prev_name}'",
            param="chain",
        )
    rho_dil = step.diluent_density_g_cm3 or WATER_DENSITY_25C
    f = a * rho_prev / (a * rho_prev + b * rho_dil)
    if rho_this is None:
        return f, (a * rho_prev + b * rho_dil) / (a + b), "computed (volumes additive)"
    return f, rho_this, "given"


def stage_levels(formula: Formula, steps: Sequence[Step], formula_density: float | None = None) -> list[Stage]:
    """Mass fractions of every substance at every stage (stage 0 is the formula itself).

    Examples
    --------
    Hand-computed: a flavour of 90 % PG dosed at 0.5 % w/w into a syrup
    (1.28 g/cm3), the syrup diluted 1+5 by volume with water (0.99705 g/cm3):
    f = 1.28 / (1.28 + 5 x 0.99705) = 0.204301, so PG in the drink is
    0.9 x 0.005 x 0.204301 = 919.36 mg/kg.

    >>> from solvsel.data.catalog import load_catalog
    >>> f = formula_from_amounts(load_catalog(), [("propylene glycol", 90), ("vanillin", 10)])
    >>> from solvsel.jobs.parse import parse_chain
    >>> st = stage_levels(f, parse_chain("syrup 0.5% d=1.28; drink 1+5v"))
    >>> round(st[-1].mg_per_kg["57-55-6"], 1)
    919.4
    """
    if not steps:
        raise InputError("a dilution chain needs at least one step", param="chain", expected="at least one step")
    subs = formula.substance_fractions()
    rho0 = formula_density if formula_density is not None else formula.density_g_cm3
    stages = [
        Stage(formula.name, None, rho0, "given" if formula_density is not None else ("computed" if rho0 else "unknown"),
              None, 1.0, {k: v[2] for k, v in subs.items()})
    ]
    for step in steps:
        prev = stages[-1]
        f, rho, basis = _step_fraction(step, prev.density_g_cm3, step.density_g_cm3, prev.name)
        if not (0 < f <= 1):
            raise InputError(f"step '{step.name}' gives a fraction of {f:g} of the previous stage; expected 0-1",
                             param="chain", value=step.text or step.describe(), expected="a fraction from 0 to 1")
        stages.append(
            Stage(step.name, step, rho, basis, f, prev.fraction_of_formula * f,
                  {k: w * f for k, w in prev.mass_fractions.items()})
        )
    return stages
