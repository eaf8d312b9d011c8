"""The one set of parsers from text to values, shared by the command line and the UI.

A user types the same kinds of value at every door: a list of names, Hansen
parameters, ``NAME=AMOUNT`` lists, an amount (``0.15%``, ``0.0015``,
``1500ppm``, ``1.5g/L``, ``1+5v``), a window ``LO:HI``, a fraction bound
(``ethanol<=0.3``), a dilution chain.  Each parser here turns one of them into
numbers or records, and a malformed value raises
:class:`~solvsel.errors.InputError` with ``param`` (the request field the text
was for), ``value`` and ``expected``; the message itself names no option or
field, so the command line and the UI each put their own name in front of it.

One amount grammar serves every amount (doses, chain steps, the oil phase of a
concentrate): a plain number from 0 to 1 is a mass fraction, ``%`` a percent
by mass, ``%v`` by volume, ``ppm`` / ``mg/kg`` / ``g/kg`` by mass, ``g/L`` /
``mg/L`` per litre of the product, ``a+b`` parts by mass and ``a+bv`` by volume.
"""

from __future__ import annotations

import csv
import io
import math
import re

from ..errors import InputError
from ..science.blends import FractionBound
from ..science.formulation import Step

__all__ = [
    "parse_names",
    "parse_name_words",
    "parse_hsp",
    "parse_amounts",
    "parse_amount",
    "parse_fraction",
    "parse_range",
    "parse_fraction_bound",
    "parse_fractions",
    "parse_chain",
    "parse_number",
    "AMOUNT_EXAMPLES",
]

#: What the amount grammar accepts, for messages and help texts.
AMOUNT_EXAMPLES = "0.15% (w/w), 0.0015 (a mass fraction), 0.15%v (v/v), 1500ppm, 1.5g/kg, 1.5g/L, 1+5 or 1+5v (parts)"


def _fail(param: str, text, message: str, expected: str) -> InputError:
    return InputError(message, param=param, value=text, expected=expected)


def parse_number(text, param: str, unit: str = "", lo: float | None = None, hi: float | None = None) -> float:
    """A finite number, optionally within ``lo..hi`` (inclusive).

    >>> parse_number("40", "temp_C", "C", -80, 200)
    40.0
    """
    expected = "a number" + (f" of {unit}" if unit else "")
    if lo is not None and hi is not None:
        expected += f" from {lo:g} to {hi:g}"
    try:
        value = float(str(text).strip())
    except ValueError:
        raise _fail(param, text, f"expected {expected}, got '{text}'", expected) from None
    if not math.isfinite(value) or (lo is not None and value < lo) or (hi is not None and value > hi):
        raise _fail(param, text, f"expected {expected}, got '{text}'", expected)
    return value


def _items(text, param: str, expected: str) -> list[str]:
    """The comma-separated items of ``text`` (quotes keep commas in an item; a line break separates too,
    as in a column pasted from a spreadsheet)."""
    try:
        rows = list(csv.reader(io.StringIO(str(text), newline=""), skipinitialspace=True))
    except csv.Error as exc:
        raise _fail(param, text, f"cannot read '{text}' as a list: {exc}", expected) from None
    return [item for row in rows for item in row]


def parse_names(text: str | None, param: str = "only") -> list[str]:
    """Split a comma-separated list of names (``"ethanol, water"``); quotes keep commas in a name.

    >>> parse_names('ethanol, "1,2-propanediol"')
    ['ethanol', '1,2-propanediol']
    """
    if text is None:
        return []
    items = _items(text, param, "names separated by commas")
    names = [i.strip() for i in items if i.strip()]
    if not names:
        raise _fail(param, text, f"expected a comma-separated list of names, got '{text}'", "names separated by commas")
    return names


_COUNT = {2: "two", 3: "three", 4: "four"}


def parse_name_words(words, param: str, known) -> list[str]:
    """Names given as separate words of a command line (``miscible ethanol water``).

    Words that hold a comma are read as one comma-separated list (``d-limonene, propylene glycol``).
    Otherwise each word is one name, and where two to four neighbouring words together are a name
    ``known`` gives (``known(text)`` returns the table's name or None) the words are refused, with
    that name as the candidate: ``d-limonene propylene glycol`` would otherwise be read as three
    liquids.

    >>> parse_name_words(["d-limonene,", "propylene", "glycol"], "liquids", lambda t: None)
    ['d-limonene', 'propylene glycol']
    >>> parse_name_words(["d-limonene", "propylene", "glycol"], "liquids",
    ...                  lambda t: "propylene glycol" if t == "propylene glycol" else None)
    Traceback (most recent call last):
    ...
    solvsel.errors.UnknownNameError: liquids: 'propylene' and 'glycol' were given as two liquids, but together they name 'propylene glycol': put a name of several words in quotes, or separate the names with commas; candidates: 'propylene glycol'
    """
    from ..data.catalog import refused_name

    words = [str(w) for w in words]
    if any("," in w for w in words):
        return parse_names(" ".join(words), param)
    for i in range(len(words)):
        for n in range(min(4, len(words) - i), 1, -1):
            joined = " ".join(words[i:i + n])
            name = known(joined)
            if name is not None:
                given = " and ".join(f"'{w}'" for w in words[i:i + n])
                raise refused_name(joined, "liquid", (name,), f"{given} were given as {_COUNT[n]} liquids, but together "
                                   f"they name '{name}': put a name of several words in quotes, or separate the "
                                   "names with commas", param=param)
    return words


def parse_hsp(text: str, param: str = "hsp", allow_r0: bool = True) -> tuple[float, ...]:
    """Parse ``"dD,dP,dH"`` or ``"dD,dP,dH,R0"`` (MPa^0.5).

    >>> parse_hsp("17.0, 3.0, 8.0, 8.0")
    (17.0, 3.0, 8.0, 8.0)
    """
    parts = [p.strip() for p in str(text).split(",")]
    want = "dD,dP,dH" + ("[,R0]" if allow_r0 else "") + " in MPa^0.5"
    if len(parts) not in ((3, 4) if allow_r0 else (3,)):
        raise _fail(param, text, f"expected {want}, got '{text}'", want)
    try:
        values = tuple(float(p) for p in parts)
    except ValueError:
        raise _fail(param, text, f"expected numbers {want}, got '{text}'", want) from None
    if not all(math.isfinite(v) for v in values):
        raise _fail(param, text, f"expected finite numbers {want}, got '{text}'", want)
    return values


def parse_amounts(text: str | None, param: str = "oil", allow_negative: bool = False) -> list[tuple[str, float]]:
    """Parse ``"d-limonene=70, medium-chain triglycerides=30"`` into ``(name, amount)`` pairs.

    Amounts are plain numbers (a trailing ``%`` is allowed); they need not sum to 100.  With
    ``allow_negative`` a number may be below zero (scores on the user's own scale).

    >>> parse_amounts("d-limonene=70, medium-chain triglycerides=30%")
    [('d-limonene', 70.0), ('medium-chain triglycerides', 30.0)]
    """
    expected = "NAME=AMOUNT items separated by commas"
    out = []
    items = _items(text or "", param, expected)
    for item in items:
        if not item.strip():
            continue
        if "=" not in item:
            raise _fail(param, text, f"expected {expected}, got '{item.strip()}'", expected)
        name, _, amount = item.rpartition("=")
        name, amount = name.strip(), amount.strip()
        try:
            value = float(amount.rstrip("%"))
        except ValueError:
            raise _fail(param, text, f"the amount of '{name}' must be a number, got '{amount}'", expected) from None
        if not math.isfinite(value) or (value < 0 and not allow_negative):
            raise _fail(param, text, f"the amount of '{name}' must be zero or positive, got {amount}", expected)
        if not name:
            raise _fail(param, text, f"an amount ({amount}) has no name before '='", expected)
        out.append((name, value))
    if not out:
        raise _fail(param, text, f"expected {expected}, got '{text}'", expected)
    return out


_NUM = r"\d+(?:\.\d*)?(?:e-?\d+)?|\.\d+(?:e-?\d+)?"
_AMOUNT_RE = re.compile(
    rf"^(?:(?P<a>{_NUM})\+(?P<b>{_NUM})(?P<pv>v)?"
    rf"|(?P<x>{_NUM})(?P<unit>%v|%|ppm|mg/kg|g/kg|g/l|mg/l)?)$",
    re.I,
)


def is_amount(token: str) -> bool:
    """True when ``token`` reads as an amount (used to find the amount inside a chain step)."""
    return bool(_AMOUNT_RE.match(str(token).strip().replace(" ", "")))


def parse_amount(text, param: str = "dose") -> tuple[str, float | tuple[float, float]]:
    """Parse an amount into ``(how, amount)``; ``how`` is "w/w", "v/v", "g/L",
    "parts by mass" or "parts by volume" (see the module docstring).

    >>> parse_amount("0.15%")
    ('w/w', 0.0015)
    >>> parse_amount("0.0015")
    ('w/w', 0.0015)
    >>> parse_amount("1+5v")
    ('parts by volume', (1.0, 5.0))
    """
    t = str(text).strip().replace(" ", "")
    m = _AMOUNT_RE.match(t)
    if not m:
        raise _fail(param, text, f"'{text}' is not an amount; expected e.g. {AMOUNT_EXAMPLES}", AMOUNT_EXAMPLES)
    if m.group("a") is not None:
        a, b = float(m.group("a")), float(m.group("b"))
        if not (0 < a < math.inf and 0 < b < math.inf):
            raise _fail(param, text, f"'{text}': parts a+b must both be positive numbers (1+0 would not dilute; "
                        "leave such a step out)", "parts a+b with a > 0 and b > 0")
        return ("parts by volume" if m.group("pv") else "parts by mass"), (a, b)
    x = float(m.group("x"))
    unit = (m.group("unit") or "").lower()
    if unit == "":
        if x > 1:
            raise _fail(param, text, f"'{text}': a plain number is a mass fraction (0 to 1); for a percent write {x:g}%",
                        "a mass fraction from 0 to 1, or a percent such as 0.15%")
        how, val = "w/w", x
    elif unit in ("%", "%v"):
        how, val = ("v/v" if unit == "%v" else "w/w"), x / 100.0
    elif unit in ("ppm", "mg/kg"):
        how, val = "w/w", x * 1e-6
    elif unit == "g/kg":
        how, val = "w/w", x * 1e-3
    elif unit == "g/l":
        how, val = "g/L", x
    else:  # mg/l
        how, val = "g/L", x / 1000.0
    if how in ("w/w", "v/v") and not (0 < val <= 1):
        raise _fail(param, text, f"'{text}' must be more than 0 and at most 100 %", "more than 0 and at most 100 %")
    if how == "g/L" and not (0 < val <= 2500):
        raise _fail(param, text, f"'{text}' must be more than 0 and at most 2500 g/L", "more than 0 and at most 2500 g/L")
    return how, val


def parse_fraction(text, param: str = "oil_phase", allow_zero: bool = False) -> float:
    """A mass fraction from the amount grammar (``10%``, ``0.1``, ``1500ppm``, ``1.5g/kg``).

    >>> parse_fraction("10%")
    0.1
    >>> parse_fraction("0.1")
    0.1
    """
    if allow_zero and str(text).strip().rstrip("%").strip() in ("0", "0.0"):
        return 0.0
    how, value = parse_amount(text, param)
    if how != "w/w":
        raise _fail(param, text, f"expected a mass fraction (0.1, 10%, 1500ppm), got '{text}'",
                    "a mass fraction: 0.1, 10% or 1500ppm")
    return float(value)


def parse_range(text: str | None, param: str = "bp_range", unit: str = "C") -> tuple[float | None, float | None]:
    """Parse ``"LO:HI"`` (either side may be empty) into two numbers or None.

    >>> parse_range("40:100")
    (40.0, 100.0)
    >>> parse_range(":120")
    (None, 120.0)
    """
    if text is None:
        return None, None
    t = str(text).strip()
    expected = f"LO:HI in {unit}, either side may be empty (40:100, :120, 150:)"
    if ":" not in t:
        raise _fail(param, text, f"expected {expected}, got '{text}'", expected)
    lo, _, hi = t.partition(":")
    try:
        lo_v = float(lo) if lo.strip() else None
        hi_v = float(hi) if hi.strip() else None
    except ValueError:
        raise _fail(param, text, f"expected numbers as LO:HI in {unit}, got '{text}'", expected) from None
    if lo_v is None and hi_v is None:
        raise _fail(param, text, "give at least one side, e.g. 40:100, :120 or 150:", expected)
    if any(v is not None and not math.isfinite(v) for v in (lo_v, hi_v)):
        raise _fail(param, text, f"expected finite numbers, got '{text}'", expected)
    if lo_v is not None and hi_v is not None and lo_v > hi_v:
        raise _fail(param, text, f"the low end {lo_v:g} is above the high end {hi_v:g}", expected)
    return lo_v, hi_v


def parse_fraction_bound(text: str, param: str = "fraction") -> FractionBound:
    """Parse ``"ethanol<=0.3"``, ``"water>=10%"``, ``"0.1<=water<=0.5"`` or ``"water=0.2"``.

    Fractions are by volume, as numbers in 0..1 or percents.

    >>> parse_fraction_bound("ethanol<=0.3")
    FractionBound(name='ethanol', lower=0.0, upper=0.3)
    >>> parse_fraction_bound("0.1 <= water <= 50%")
    FractionBound(name='water', lower=0.1, upper=0.5)
    """
    raw = str(text).strip()
    expected = "NAME<=X, NAME>=X, NAME=X or LO<=NAME<=HI (volume fractions, 0.3 or 30%)"

    def number(s):
        s = s.strip()
        pct = s.endswith("%")
        try:
            v = float(s.rstrip("%").strip()) * (0.01 if pct else 1.0)
        except ValueError:
            return None
        return v if math.isfinite(v) else None

    m = re.fullmatch(r"\s*([^<>=]+?)\s*<=\s*([^<>=]+?)\s*<=\s*([^<>=]+?)\s*", raw)
    if m:
        lo, name, hi = number(m.group(1)), m.group(2).strip(), number(m.group(3))
    else:
        m = re.fullmatch(r"\s*([^<>=]+?)\s*(<=|>=|=)\s*([^<>=]+?)\s*", raw)
        if not m:
            raise _fail(param, text, f"expected {expected}, got '{text}'", expected)
        name, op, v = m.group(1).strip(), m.group(2), number(m.group(3))
        if v is None and number(name) is not None:
            raise _fail(param, text, f"put the liquid's name on the left, e.g. 'ethanol<=0.3', got '{text}'", expected)
        lo, hi = {"<=": (0.0, v), ">=": (v, 1.0), "=": (v, v)}[op]
    if lo is None or hi is None or not name:
        raise _fail(param, text, f"expected a liquid's name and volume fractions as numbers (0.3 or 30%), got '{text}'",
                    expected)
    if not (0 <= lo <= 1 and 0 <= hi <= 1):
        raise _fail(param, text, f"volume fractions must be between 0 and 1 (0 and 100 %), got '{text}'", expected)
    if lo > hi:
        raise _fail(param, text, f"the lower bound {lo:g} is above the upper bound {hi:g} in '{text}'", expected)
    return FractionBound(name=name, lower=float(lo), upper=float(hi))


def parse_fractions(text: str, n: int, param: str = "fractions") -> tuple[float, ...]:
    """``n`` volume fractions ``"0.7,0.3"`` summing to 1, or percents ``"70,30"`` summing to 100.

    >>> parse_fractions("70, 30", 2)
    (0.7, 0.3)
    """
    expected = f"{n} numbers separated by commas, summing to 1 (or to 100 %)"
    parts = [p.strip().rstrip("%") for p in str(text).split(",") if p.strip()]
    try:
        vals = [float(p) for p in parts]
    except ValueError:
        raise _fail(param, text, f"expected {expected}, got '{text}'", expected) from None
    if len(vals) != n:
        raise _fail(param, text, f"expected {n} numbers (one per liquid), got {len(vals)}", expected)
    if not all(math.isfinite(v) and v >= 0 for v in vals):
        raise _fail(param, text, "fractions must be zero or positive numbers", expected)
    total = sum(vals)
    if n > 1 and abs(total - 100.0) < 1e-6:
        vals = [v / 100.0 for v in vals]
    elif abs(total - 1.0) > 1e-6:
        raise _fail(param, text, f"fractions must sum to 1 (or to 100 %), got {total:g}", expected)
    return tuple(vals)


def _density(text: str, step: str, param: str) -> float:
    expected = "a density in g/cm3 from 0.3 to 2.5"
    try:
        d = float(text)
    except ValueError:
        raise _fail(param, step, f"step '{step}': density '{text}' is not a number (g/cm3)", expected) from None
    if not (0.3 <= d <= 2.5):
        raise _fail(param, step, f"step '{step}': density {d:g} g/cm3 is out of range (0.3-2.5)", expected)
    return d


def parse_chain(text: str | None, dose: str | None = None, final_name: str = "food as consumed",
                param: str = "chain", dose_param: str = "dose") -> list[Step]:
    """Parse a dilution chain (see :mod:`solvsel.science.formulation`); ``dose`` fills the first step's amount.

    Without a chain, the dose puts the formula straight into the food as consumed.

    >>> [s.describe() for s in parse_chain("syrup 0.5% d=1.28; drink 1+5v d=1.04")]
    ['0.5 % w/w', '1+5 by volume']
    >>> [s.describe() for s in parse_chain("syrup d=1.28; drink 1+5v", dose="0.5%")]
    ['0.5 % w/w', '1+5 by volume']
    """
    expected = "steps 'NAME AMOUNT [d=DENSITY] [dil=DENSITY]' separated by ';'"
    if text is None or not str(text).strip():
        if dose is None:
            raise _fail(dose_param, None, "give the dose of the formula in the product (e.g. 0.15%), or a dilution chain",
                        AMOUNT_EXAMPLES)
        how, amount = parse_amount(dose, dose_param)
        return [Step(final_name, how, amount, text=str(dose))]
    steps = []
    parts = [p.strip() for p in str(text).split(";")]
    if any(not p for p in parts):
        raise _fail(param, text, f"empty step in '{text}' (steps are separated by ';')", expected)
    for i, part in enumerate(parts):
        name_tokens, how, amount, dens, dil = [], None, None, None, None
        for tok in part.split():
            low = tok.lower()
            if low.startswith("d="):
                dens = _density(tok[2:], part, param)
            elif low.startswith("dil="):
                dil = _density(tok[4:], part, param)
            elif how is None and is_amount(tok) and (not re.fullmatch(_NUM, tok) or "+" in tok):
                how, amount = parse_amount(tok, param)
            else:
                name_tokens.append(tok)
        name = " ".join(name_tokens) or f"stage {i + 1}"
        if how is None:
            if i == 0 and dose is not None:
                how, amount = parse_amount(dose, dose_param)
            else:
                raise _fail(param, text, f"step '{part}' has no amount (e.g. 0.15%, 1+5v)"
                            + ("" if i else "; or give the dose for the first step"), expected)
        elif i == 0 and dose is not None:
            raise _fail(param, text, f"the first step '{part}' has its own amount and a dose is also given; give one",
                        expected)
        if dil is not None and how != "parts by volume":
            raise _fail(param, text, f"step '{part}': dil= applies only to parts by volume (e.g. 1+5v)", expected)
        steps.append(Step(name, how, amount, dens, dil, text=part))
    return steps
