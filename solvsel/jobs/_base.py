"""What every job shares: building a request from keywords, checking its fields, the catalog
it runs on, the target it aims at, and the table form of a result.

A job is a function ``job(request=None, *, catalog=None, **fields) -> Result``.
The request is a frozen dataclass whose ``__post_init__`` checks every field
(raising :class:`~solvsel.errors.InputError` with ``param`` set to the field's
name), so a request that exists is a valid one; a notebook user may pass the
fields as keywords instead of building the request.  The result is a frozen
dataclass whose ``to_dict()`` is the JSON the command line prints with
``--json``; results that are tables also have ``to_frame()``.
"""

from __future__ import annotations

import math
from dataclasses import fields as dc_fields
from typing import Any, Iterable, Mapping, Sequence, TypeVar

from ..data.catalog import Catalog, load_catalog
from ..errors import InputError, OutOfRangeError, SolvselError, UnknownNameError
from ..rules.regulations import FOOD_JURISDICTIONS, resolve_category
from ..science.target import Target, target_from_hsp, target_from_smiles, target_from_solute

__all__ = [
    "build_request",
    "catalog_or_default",
    "check_number",
    "check_int",
    "check_choice",
    "check_names",
    "check_bool",
    "check_fraction",
    "check_pairs",
    "check_jurisdictions",
    "check_category",
    "target_of",
    "frame",
    "TEMP_RANGE_C",
]

R = TypeVar("R")

#: Temperatures a job accepts [C]: the range in which the tables' liquids and the
#: Hansen-Beerbower temperature rules are used in food work (freezers to hot extraction).
TEMP_RANGE_C = (-80.0, 200.0)


def build_request(cls: type[R], request: R | None, fields: dict[str, Any]) -> R:
    """``request`` itself, or a ``cls`` built from keyword ``fields`` (not both).

    An unknown keyword is an :class:`InputError` naming it and the known fields.
    """
    if request is not None:
        if fields:
            raise InputError(f"give a {cls.__name__} or keywords, not both (got {', '.join(sorted(fields))})",
                             param=next(iter(sorted(fields))))
        if not isinstance(request, cls):
            raise InputError(f"expected a {cls.__name__}, got {type(request).__name__}", param="request")
        return request
    known = {f.name for f in dc_fields(cls)}
    unknown = sorted(set(fields) - known)
    if unknown:
        raise InputError(f"{cls.__name__} has no field '{unknown[0]}'; its fields are {', '.join(sorted(known))}",
                         param=unknown[0], value=fields[unknown[0]], expected=", ".join(sorted(known)))
    return cls(**fields)


def catalog_or_default(catalog: Catalog | None) -> Catalog:
    """The catalog a job runs on: the one given, else the bundled tables."""
    return catalog if catalog is not None else load_catalog()


def check_number(value, param: str, lo: float | None = None, hi: float | None = None, unit: str = "",
                 allow_none: bool = False, lo_open: bool = False) -> float | None:
    """``value`` as a finite float within ``lo..hi`` (``lo`` excluded when ``lo_open``)."""
    if value is None and allow_none:
        return None
    span = ""
    if lo is not None and hi is not None:
        span = f" {'above' if lo_open else 'from'} {lo:g} {'up ' if lo_open else ''}to {hi:g}"
    elif lo is not None:
        span = f" {'above' if lo_open else 'of at least'} {lo:g}"
    elif hi is not None:
        span = f" of at most {hi:g}"
    expected = f"a number{span}" + (f" {unit}" if unit else "")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected) from None
    if not math.isfinite(v):
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)
    if (lo is not None and (v < lo or (lo_open and v == lo))) or (hi is not None and v > hi):
        raise OutOfRangeError(f"expected {expected}, got {v:g}", param=param, value=value, expected=expected)
    return v


def check_int(value, param: str, lo: int | None = None, hi: int | None = None, allow_none: bool = False) -> int | None:
    """``value`` as a whole number within ``lo..hi``."""
    if value is None and allow_none:
        return None
    span = f" from {lo} to {hi}" if lo is not None and hi is not None else (f" of at least {lo}" if lo is not None else "")
    expected = f"a whole number{span}"
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)
    try:
        v = int(str(value).strip()) if isinstance(value, str) else value
    except ValueError:
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected) from None
    if isinstance(v, float):
        if not v.is_integer():
            raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)
        v = int(v)
    if (lo is not None and v < lo) or (hi is not None and v > hi):
        raise OutOfRangeError(f"expected {expected}, got {v}", param=param, value=value, expected=expected)
    return v


def check_choice(value, param: str, choices: Sequence[str], allow_none: bool = False) -> str | None:
    """``value`` if it is one of ``choices`` (case as given in ``choices``; matched ignoring case)."""
    if value is None and allow_none:
        return None
    expected = "one of " + ", ".join(choices)
    if isinstance(value, str):
        for c in choices:
            if c.lower() == value.strip().lower():
                return c
    raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)


def check_names(value, param: str, allow_none: bool = True) -> tuple[str, ...] | None:
    """A tuple of non-empty names from a list, a tuple or one comma-free string.

    >>> check_names("ethanol", "only"), check_names(["water", " ethanol "], "only")
    (('ethanol',), ('water', 'ethanol'))
    """
    if value is None and allow_none:
        return None
    if isinstance(value, str):
        value = (value,)
    if isinstance(value, (bytes, Mapping)) or not isinstance(value, Iterable):
        raise InputError(f"expected a list of names, got {value!r}", param=param, value=value,
                         expected="a list of names")
    value = tuple(value)
    if not all(isinstance(v, str) for v in value):
        bad = next(v for v in value if not isinstance(v, str))
        raise InputError(f"expected names as text, got {bad!r}", param=param, value=value,
                         expected="a list of names")
    names = tuple(v.strip() for v in value)
    if not names or any(not n for n in names):
        raise InputError(f"expected a list of non-empty names, got {value!r}", param=param, value=value,
                         expected="a list of non-empty names")
    return names


def check_bool(value, param: str) -> bool:
    """``value`` if it is True or False (a string such as "no" is refused: it would read as True).

    >>> check_bool(False, "food")
    False
    """
    if isinstance(value, bool):
        return value
    if type(value).__name__ == "bool_":  # a numpy bool
        return bool(value)
    raise InputError(f"expected True or False, got {value!r}", param=param, value=value, expected="True or False")


def check_fraction(value, param: str, allow_none: bool = False, allow_zero: bool = True) -> float | None:
    """A fraction from 0 to 1 (0 excluded unless ``allow_zero``)."""
    return check_number(value, param, 0.0, 1.0, allow_none=allow_none, lo_open=not allow_zero)


def check_pairs(value, param: str, *, numeric_keys: bool = False, lo: float | None = None, hi: float | None = None,
                lo_open: bool = False, unit: str = "", allow_none: bool = True) -> tuple[tuple[Any, float], ...] | None:
    """``(key, number)`` pairs from a mapping or a sequence of pairs (``NAME=AMOUNT`` lists).

    Keys are non-empty names, or numbers above 0 with ``numeric_keys`` (a
    diameter, an HLB); each number is checked against ``lo..hi``.

    >>> check_pairs({"d-limonene": 70, "medium-chain triglycerides": 30}, "oil", lo=0)
    (('d-limonene', 70.0), ('medium-chain triglycerides', 30.0))
    >>> check_pairs([("0.3", 85), ("1.5", 15)], "sizes", numeric_keys=True, lo=0)
    ((0.3, 85.0), (1.5, 15.0))
    """
    if value is None and allow_none:
        return None
    expected = ("NUMBER=" if numeric_keys else "NAME=") + "NUMBER pairs"
    items = list(value.items()) if isinstance(value, Mapping) else value
    try:
        items = [tuple(item) for item in items]
    except TypeError:
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected) from None
    if not items or any(len(item) != 2 or isinstance(item[0], bytes) for item in items):
        raise InputError(f"expected {expected}, got {value!r}", param=param, value=value, expected=expected)
    out = []
    for key, number in items:
        if numeric_keys:
            key = check_number(key, param, 0.0, None, unit=unit, lo_open=True)
        else:
            key = str(key).strip()
            if not key:
                raise InputError(f"an amount ({number}) has no name", param=param, value=value, expected=expected)
        out.append((key, check_number(number, param, lo, hi, unit=unit, lo_open=lo_open)))
    return tuple(out)


def check_jurisdictions(value, param: str = "jurisdictions", allow_none: bool = False) -> tuple[str, ...] | None:
    """Food-law jurisdictions (US, EU), upper-cased, in the order given.

    >>> check_jurisdictions(["eu", "US"])
    ('EU', 'US')
    """
    names = check_names(value, param, allow_none=allow_none)
    if names is None:
        return None
    out = tuple(n.upper() for n in names)
    bad = [j for j in out if j not in FOOD_JURISDICTIONS]
    if bad:
        expected = " and/or ".join(FOOD_JURISDICTIONS)
        raise InputError(f"expected {expected}, got '{bad[0]}'", param=param, value=bad[0], expected=expected)
    return tuple(dict.fromkeys(out))


def check_category(cat: Catalog, name: str, param: str = "category") -> str:
    """The food category ``name`` as the tables name it; an unknown one is an error about ``param``."""
    try:
        return resolve_category(cat, name).name
    except UnknownNameError as exc:
        raise UnknownNameError(exc.name, exc.kind, exc.suggestions, param=param) from None


def target_of(catalog: Catalog, *, target: Target | None = None, solute: str | None = None,
              hsp: Sequence[float] | None = None, smiles: str | None = None, required: bool = True) -> Target | None:
    """The :class:`~solvsel.science.target.Target` a request names: exactly one of a ready target,
    a solute of the tables, typed HSP ``(dD, dP, dH[, R0])`` or a SMILES."""
    given = [k for k, v in (("target", target), ("solute", solute), ("hsp", hsp), ("smiles", smiles)) if v is not None]
    if len(given) > 1:
        raise InputError(f"give one target, not {' and '.join(given)}", param=given[1],
                         expected="one of solute, hsp, smiles or target")
    if target is not None:
        return target
    try:
        if solute is not None:
            return target_from_solute(catalog, solute)
        if hsp is not None:
            return target_from_hsp(tuple(hsp))
        if smiles is not None:
            return target_from_smiles(smiles)
    except SolvselError as exc:  # name the request field the target came from
        if exc.param is None:
            exc.param = given[0]
        raise
    if required:
        raise InputError("no target: give a solute of the tables, typed HSP (dD, dP, dH[, R0]) or a SMILES",
                         param="solute", expected="one of solute, hsp, smiles or target")
    return None


def frame(rows: Iterable[dict], columns: Sequence[str] | None = None):
    """A pandas DataFrame of ``rows`` (dicts), columns in the order given (pandas at the edge)."""
    import pandas as pd

    df = pd.DataFrame(list(rows))
    if columns is not None:
        df = df.reindex(columns=list(columns))
    return df
