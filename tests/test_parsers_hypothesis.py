"""Every parser of solvsel.jobs.parse, fed generated text: a value or an InputError, nothing else.

A user types these values at the command line and into the UI's fields, so any text may
arrive; a parser either returns its value (checked here against what it promises) or refuses
with the project's own error naming the request field it was given.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from solvsel.errors import InputError
from solvsel.jobs import parse

SETTINGS = settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])

#: Text close to what the parsers read (digits, units, separators) mixed with anything at all.
PIECES = st.sampled_from(["0", "1", "5", "9", ".", ",", ";", ":", "=", "+", "-", "%", "%v", "e", "e-", "ppm", "mg/kg",
                          "g/kg", "g/L", "mg/L", "v", "<=", ">=", "<", ">", " ", "d=", "dil=", "nan", "inf", "1e999",
                          "ethanol", "water", '"', "'", "\n", "\r", "\t", "\x00", "\u00e9", "\u2212", "syrup", "drink"])
TEXT = st.one_of(st.text(max_size=60), st.lists(PIECES, max_size=14).map("".join))


def refused_or(fn, *args, **kwargs):
    """``fn(*args, **kwargs)``, or None when it refuses with an InputError naming its field."""
    try:
        return fn(*args, **kwargs)
    except InputError as exc:
        assert exc.param, f"{fn.__name__} refused {args!r} without naming its field"
        assert "\n" not in exc.describe() and "\r" not in exc.describe(), "one paragraph"
        return None


@SETTINGS
@given(TEXT)
def test_parse_number(text):
    v = refused_or(parse.parse_number, text, "temp_C", "C", -80, 200)
    assert v is None or (math.isfinite(v) and -80 <= v <= 200)


@SETTINGS
@given(TEXT)
def test_parse_names(text):
    names = refused_or(parse.parse_names, text, "only")
    assert names is None or (names and all(n and n == n.strip() for n in names))


@SETTINGS
@given(TEXT, st.booleans())
def test_parse_hsp(text, allow_r0):
    v = refused_or(parse.parse_hsp, text, "hsp", allow_r0)
    assert v is None or (len(v) in ((3, 4) if allow_r0 else (3,)) and all(math.isfinite(x) for x in v))


@SETTINGS
@given(TEXT, st.booleans())
def test_parse_amounts(text, allow_negative):
    pairs = refused_or(parse.parse_amounts, text, "oil", allow_negative)
    assert pairs is None or all(name and math.isfinite(a) and (allow_negative or a >= 0) for name, a in pairs)


@SETTINGS
@given(TEXT)
def test_parse_amount(text):
    got = refused_or(parse.parse_amount, text, "dose")
    if got is None:
        return
    how, amount = got
    if how.startswith("parts"):
        assert all(math.isfinite(x) and x > 0 for x in amount)
    elif how == "g/L":
        assert 0 < amount <= 2500
    else:
        assert 0 < amount <= 1


@SETTINGS
@given(TEXT, st.booleans())
def test_parse_fraction(text, allow_zero):
    v = refused_or(parse.parse_fraction, text, "oil_phase", allow_zero)
    assert v is None or 0 <= v <= 1


@SETTINGS
@given(TEXT)
def test_parse_range(text):
    got = refused_or(parse.parse_range, text, "bp_range")
    if got is not None:
        lo, hi = got
        assert (lo is not None or hi is not None) and (lo is None or hi is None or lo <= hi)
        assert all(v is None or math.isfinite(v) for v in got)


@SETTINGS
@given(TEXT)
def test_parse_fraction_bound(text):
    b = refused_or(parse.parse_fraction_bound, text, "fraction")
    assert b is None or (b.name and 0 <= b.lower <= b.upper <= 1)


@SETTINGS
@given(TEXT, st.integers(min_value=1, max_value=4))
def test_parse_fractions(text, n):
    v = refused_or(parse.parse_fractions, text, n)
    assert v is None or (len(v) == n and abs(sum(v) - 1) < 1e-6 and all(x >= 0 for x in v))


@SETTINGS
@given(TEXT, st.one_of(st.none(), TEXT))
def test_parse_chain(text, dose):
    steps = refused_or(parse.parse_chain, text, dose)
    assert steps is None or len(steps) >= 1


@SETTINGS
@given(TEXT)
def test_is_amount_never_raises(text):
    assert parse.is_amount(text) in (True, False)


@pytest.mark.parametrize("fn, args", [
    (parse.parse_number, (None, "temp_C")), (parse.parse_names, (5, "only")), (parse.parse_hsp, (None,)),
    (parse.parse_amounts, (3.5,)), (parse.parse_amount, (None,)), (parse.parse_fraction, (None,)),
    (parse.parse_range, (7,)), (parse.parse_fraction_bound, (None,)), (parse.parse_fractions, (None, 2)),
    (parse.parse_chain, (5,)),
])
def test_parsers_refuse_values_that_are_not_text(fn, args):
    """A value of another type where text belongs (a notebook user's None or number) is refused or read as its text."""
    refused_or(fn, *args)
