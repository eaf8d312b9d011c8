"""Read a bench-results CSV for the target screen and fit the sphere with :func:`solvsel.science.sphere.fit_sphere`.

The file has a header row with a ``solvent`` (or ``name``) column naming a
liquid of the catalog, and either a ``score`` column (numbers; a liquid is
good at a score of at most the cut-off) or a ``good`` column (yes/no, 1/0).
"""

from __future__ import annotations

import csv
from pathlib import Path

from rich.text import Text

_YES = {"yes", "y", "1", "true", "good", "soluble"}
_NO = {"no", "n", "0", "false", "bad", "insoluble"}


def read_bench_csv(cat, path: str):
    """(names, hsp rows, good-or-scores, numeric) from the file; errors name the file, row and column."""
    from ..errors import InputError, SolvselError, TableError

    p = Path(path).expanduser()
    if not p.is_file():
        raise InputError(f"bench results: no file '{p}'")
    with p.open(newline="", encoding="utf-8-sig") as fh:
        rows = list(csv.reader(fh))
    if len(rows) < 2:
        raise TableError(p, "expected a header row and at least one result")
    header = [h.strip().lower() for h in rows[0]]
    name_col = next((header.index(c) for c in ("solvent", "name", "liquid") if c in header), None)
    if name_col is None:
        raise TableError(p, "no 'solvent' (or 'name') column in the header", row=1)
    if "score" in header:
        val_col, numeric = header.index("score"), True
    elif "good" in header:
        val_col, numeric = header.index("good"), False
    else:
        raise TableError(p, "no 'score' or 'good' column in the header", row=1)
    names, hsp, values = [], [], []
    for i, row in enumerate(rows[1:], start=2):
        if not any(c.strip() for c in row):
            continue
        if len(row) <= max(name_col, val_col):
            raise TableError(p, "too few cells", row=i)
        try:
            s = cat.solvent(row[name_col].strip())
        except SolvselError as exc:
            raise TableError(p, str(exc), row=i, column=rows[0][name_col]) from None
        cell = row[val_col].strip()
        if numeric:
            try:
                values.append(float(cell))
            except ValueError:
                raise TableError(p, f"expected a number, got '{cell}'", row=i, column=rows[0][val_col]) from None
        else:
            if cell.lower() not in _YES | _NO:
                raise TableError(p, f"expected yes or no, got '{cell}'", row=i, column=rows[0][val_col])
            values.append(cell.lower() in _YES)
        names.append(s.name)
        hsp.append((s.dD, s.dP, s.dH))
    if len(names) < 4:
        raise TableError(p, f"a sphere needs at least 4 liquids tested, the file has {len(names)}")
    return names, hsp, values, numeric


def fit_from_csv(cat, path: str, good_at_most: str):
    """The fitted target and a text summary of the fit."""
    from ..errors import InputError
    from ..science.sphere import fit_sphere
    from ..science.target import Target

    names, hsp, values, numeric = read_bench_csv(cat, path)
    cut = None
    if numeric:
        try:
            cut = float(good_at_most)
        except ValueError:
            raise InputError(f"good at a score of at most: expected a number, got '{good_at_most}'") from None
    fit = fit_sphere(hsp, values, names=names, good_at_most=cut)
    target = Target(
        f"bench fit ({Path(path).name})", float(fit.dD), float(fit.dP), float(fit.dH), float(fit.r0), "fitted", None,
        f"sphere fitted to {len(names)} bench results; fit {fit.fit:.2f}" + ("" if fit.success else f"; {fit.message}"),
    )
    t = Text()
    t.append(f"dD {fit.dD:.2f}  dP {fit.dP:.2f}  dH {fit.dH:.2f}  R0 {fit.r0:.2f}   fit {fit.fit:.2f}\n", style="bold")
    for k in ("dD", "dP", "dH", "r0"):
        if k in fit.interval:
            lo, hi = fit.interval[k]
            t.append(f"  {k} interval {lo:.2f} to {hi:.2f}\n")
    if fit.wrong_side:
        t.append("on the wrong side: " + ", ".join(str(getattr(w, "name", w)) for w in fit.wrong_side) + "\n")
    if fit.open:
        t.append(f"open sphere: {fit.open_note}\n", style="bold")
    return target, t
