"""A small filter language over the columns of a table, for ``--where``.

Grammar (no ``eval``, no ``DataFrame.query``)::

    expr    := term ("or" term)*
    term    := factor ("and" factor)*
    factor  := "not" factor | "(" expr ")" | compare
    compare := COLUMN OP VALUE | COLUMN "has" WORD | COLUMN "is" ("empty" | "known")
    OP      := < | <= | > | >= | == | = | !=
    VALUE   := number | 'text' | "text" | word

Parentheses and ``not`` may be nested up to :data:`MAX_DEPTH` deep.
Columns are the table's own names; for the solvents and solutes tables the
short names ``dD``, ``dP``, ``dH``, ``r0``, ``vm``, ``mw``, ``density``, ``flash``,
``bp``, ``mp``, ``visc``, ``cost`` are accepted too.  ``has`` tests membership in
a list column (``roles has carrier``) or a substring of a text column.
Comparisons with an empty cell are false.

>>> import pandas as pd
>>> df = pd.DataFrame({"name": ["a", "b", "c"], "dH_MPa05": [5.0, 12.0, 20.0], "bp_C": [60.0, 100.0, 200.0]})
>>> list(df[where(df, "dH > 10 and bp_C < 120")]["name"])
['b']
>>> list(df[where(df, "not (dH >= 12) or name == 'c'")]["name"])
['a', 'c']
"""

from __future__ import annotations

import difflib
import re

from ..errors import InputError

__all__ = ["where", "resolve_column", "ALIASES", "MAX_DEPTH"]

#: Deepest nesting of parentheses and ``not`` read (far beyond any condition a person writes).
MAX_DEPTH = 50

ALIASES = {
    "dd": "dD_MPa05", "dp": "dP_MPa05", "dh": "dH_MPa05", "r0": "r0_MPa05", "vm": "vm_cm3_mol",
    "mw": "mw_g_mol", "density": "density_g_cm3", "flash": "flash_C", "bp": "bp_C", "mp": "mp_C",
    "visc": "visc_mPa_s", "viscosity": "visc_mPa_s", "cost": "cost_class", "alpha": "alpha_1_K",
}

_TOKEN = re.compile(
    r"\s*(?:(?P<num>[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)(?![\w.])"
    r"|(?P<op><=|>=|==|!=|<|>|=)"
    r"|(?P<par>[()])"
    r"|'(?P<sq>[^']*)'|\"(?P<dq>[^\"]*)\""
    r"|(?P<word>[A-Za-z_][\w%./-]*))"
)


def _tokens(text: str):
    pos, out = 0, []
    text = text.strip()
    while pos < len(text):
        m = _TOKEN.match(text, pos)
        if not m or m.end() == pos:
            raise InputError(f"cannot read '{text[pos:]}' (at character {pos + 1} of '{text}')", param="where", value=text)
        kind = m.lastgroup
        val = m.group(kind)
        if kind in ("sq", "dq"):
            kind = "str"
        out.append((kind, val))
        pos = m.end()
    return out


class _Parser:
    def __init__(self, df, text):
        self.df, self.text = df, text
        self.toks = _tokens(text)
        self.i = 0
        self.depth = 0

    def peek(self):
        return self.toks[self.i] if self.i < len(self.toks) else (None, None)

    def take(self):
        tok = self.peek()
        self.i += 1
        return tok

    def error(self, msg):
        raise InputError(f"'{self.text}': {msg}", param="where", value=self.text)

    def parse(self):
        if not self.toks:
            self.error("empty condition")
        mask = self.expr()
        if self.i != len(self.toks):
            self.error(f"unexpected '{self.peek()[1]}'")
        return mask

    def expr(self):
        mask = self.term()
        while self.peek() == ("word", "or") or self.peek()[1] == "or":
            self.take()
            mask = mask | self.term()
        return mask

    def term(self):
        mask = self.factor()
        while self.peek()[1] == "and":
            self.take()
            mask = mask & self.factor()
        return mask

    def factor(self):
        kind, val = self.peek()
        if val not in ("not", "("):
            return self.compare()
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise InputError(f"parentheses and 'not' are nested more than {MAX_DEPTH} deep", param="where",
                             value=self.text, expected=f"a condition nested at most {MAX_DEPTH} deep")
        self.take()
        if val == "not":
            mask = ~self.factor()
        else:
            mask = self.expr()
            if self.take()[1] != ")":
                self.error("missing ')'")
        self.depth -= 1
        return mask

    def column(self, name):
        try:
            return resolve_column(self.df, name)
        except InputError as exc:
            self.error(str(exc))

    def compare(self):
        kind, name = self.take()
        if kind != "word":
            self.error(f"expected a column name, got '{name}'")
        col = self.column(name)
        series = self.df[col]
        numeric = series.dtype.kind in "fiu" or str(series.dtype) == "Int64"
        kind, op = self.take()
        if op in ("has", "contains"):
            k, v = self.take()
            if v is None:
                self.error(f"expected a word after '{op}'")
            text = series.astype(str).str.casefold()
            v = str(v).casefold()
            items = text.str.split(";")
            return items.apply(lambda xs: v in xs) | text.str.contains(v, regex=False)
        if op == "is":
            k, v = self.take()
            empty = series.isna() if numeric else (series.astype(str) == "")
            if v == "empty":
                return empty
            if v == "known":
                return ~empty
            self.error("expected 'empty' or 'known' after 'is'")
        if kind != "op":
            self.error(f"expected a comparison (<, <=, >, >=, ==, !=) after '{name}', got '{op}'")
        vkind, value = self.take()
        if value is None:
            self.error(f"expected a value after '{op}'")
        if numeric:
            if vkind != "num":
                self.error(f"column '{col}' holds numbers; got '{value}'")
            x = float(value)
            s = series.astype(float)
            res = {"<": s < x, "<=": s <= x, ">": s > x, ">=": s >= x, "==": s == x, "=": s == x, "!=": s != x}[op]
            return res.fillna(False).astype(bool) & s.notna()
        if op not in ("==", "=", "!="):
            self.error(f"column '{col}' holds text: use ==, != or has")
        s = series.astype(str).str.casefold()
        res = s == str(value).casefold()
        return ~res if op == "!=" else res


def resolve_column(df, name: str, what: str | None = None) -> str:
    """The column of ``df`` that ``name`` means (exact, short alias, or case-insensitive).

    >>> import pandas as pd
    >>> resolve_column(pd.DataFrame(columns=["name", "bp_C"]), "bp")
    'bp_C'
    """
    cols = list(df.columns)
    if name in cols:
        return name
    alias = ALIASES.get(name.lower())
    if alias in cols:
        return alias
    lower = {c.lower(): c for c in cols}
    if name.lower() in lower:
        return lower[name.lower()]
    close = difflib.get_close_matches(name, cols + [a for a, c in ALIASES.items() if c in cols], n=4, cutoff=0.5)
    hint = f"; closest: {', '.join(close)}" if close else f"; columns: {', '.join(cols)}"
    raise InputError(f"unknown column '{name}'{hint}", param=what.lstrip("-") if what else "where", value=name)


def where(df, text: str):
    """Boolean mask of the rows of ``df`` that satisfy the condition ``text``."""
    return _Parser(df, text).parse().astype(bool)
