"""The estimate job: Hansen parameters and molar volume from a structure, or a refit of the model.

One SMILES gives one :class:`~solvsel.science.structure.Estimate` (the
project's own group-contribution model, Hoftyzer-Van Krevelen with Fedors'
volume, and the property route where the reference library has the compound),
which can be saved as a row of the user's own solutes table.  Several SMILES
(typed or read from a file) give one estimate each, a failure noted in its
place.  A refit fits the own model again on the library's HSP data sets
(:func:`solvsel.science.structure_training.refit`), so anyone can hold
compounds out and test on them.

Needs the ``structure`` extra (RDKit; scikit-learn for a refit).

>>> r = estimate(smiles="CC1=CCC(CC1)C(=C)C", lookup=False)
>>> e = r.estimates[0]
>>> e.method, e.chem_class, round(e.dD, 1)
('solvsel-gc', 'hydrocarbons', 17.2)
>>> r.target.basis
'estimated'
"""

from __future__ import annotations

import csv
import io
import os
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

from ..data.provenance import audit_block
from ..data.catalog import (
    Catalog, check_write_target, read_user_text, read_user_text_encoding, spreadsheet_safe, write_user_file,
)
from ..errors import InputError, SolvselError, SolvselNote, TableError
from ..science import structure
from ..science.target import Target, target_from_estimate
from ._base import build_request, check_bool, check_choice, check_names
from .fit import SOLUTE_CATEGORIES

__all__ = ["METHODS", "CAUTION", "EstimateRequest", "EstimateResult", "estimate"]

#: The methods an estimate can report (:data:`solvsel.science.structure.METHODS`).
METHODS = structure.METHODS

#: The caution every estimate carries.
CAUTION = (
    "Group-contribution HSP are screening estimates (see the error by class above): confirm solubility at "
    "the bench before relying on them; measured values win."
)

#: Columns of a new solutes file written by a save (the solutes table's own columns).
_SOLUTE_COLUMNS = ["name", "synonyms", "cas", "category", "dD_MPa05", "dP_MPa05", "dH_MPa05", "r0_MPa05",
                   "hsp_basis", "hsp_method", "hsp_source", "mw_g_mol", "mp_C", "dHfus_kJ_mol", "vm_cm3_mol",
                   "smiles", "props_source", "note"]


def _optional_path(value, param: str) -> str | None:
    if value is None:
        return None
    if not isinstance(value, (str, Path)) or not str(value).strip():
        raise InputError("expected a file name", param=param, value=value, expected="a file name")
    return str(value)


@dataclass(frozen=True)
class EstimateRequest:
    """What to estimate (or refit).

    Attributes
    ----------
    smiles : tuple of str
        one or more SMILES strings (a single string is one SMILES)
    file : str, optional
        a text file of SMILES, one a line (text after a space is a label; ``#`` lines are comments);
        ``"-"`` reads them from standard input
    method : str, optional
        the method whose numbers are reported: "solvsel-gc" (default), "hoftyzer-van-krevelen" or "properties"
    params : str, optional
        a parameter table of the own model written by a refit (default: the bundled one)
    lookup : bool
        look the compound up in the reference library (for the property route and the liquid's molar volume)
    lookup_all : bool
        search the whole reference library, not only the part loaded by default (about 1.3 s more)
    refit : str, optional
        refit the own model and write its parameter table to this ``.csv`` file (with ``_training.csv``
        and ``_cv.csv`` beside it); no SMILES then
    exclude : str, optional
        with ``refit``: a file of CAS numbers (one a line) to hold out
    force : bool
        allow a refit to overwrite its files, and a save to add to a solutes file that exists
    save_to : str, optional
        append the estimate (one SMILES) as a row of this solutes CSV (created if missing; a file that
        exists only with ``force``, its rows kept; text a spreadsheet would run as a formula is written
        with a leading single quote)
    name : str, optional
        with ``save_to``: the solute's name
    category : str
        with ``save_to``: the solute's category, one of :data:`~solvsel.jobs.fit.SOLUTE_CATEGORIES`
    """

    smiles: tuple[str, ...] = ()
    file: str | None = None
    method: str | None = None
    params: str | None = None
    lookup: bool = True
    lookup_all: bool = False
    refit: str | None = None
    exclude: str | None = None
    force: bool = False
    save_to: str | None = None
    name: str | None = None
    category: str = "other"

    def __post_init__(self) -> None:
        put = object.__setattr__.__get__(self)
        none_given = self.smiles is None or (isinstance(self.smiles, (list, tuple)) and not self.smiles)
        put("smiles", () if none_given else check_names(self.smiles, "smiles"))
        for param in ("lookup", "lookup_all", "force"):
            put(param, check_bool(getattr(self, param), param))
        for param in ("file", "params", "refit", "exclude", "save_to"):
            put(param, _optional_path(getattr(self, param), param))
        put("method", check_choice(self.method, "method", structure.METHODS, allow_none=True))
        put("category", check_choice(self.category, "category", SOLUTE_CATEGORIES))
        if self.lookup_all and not self.lookup:
            raise InputError("searching the whole library and not looking up contradict each other: give one",
                             param="lookup_all", value=True, expected="lookup_all only with lookup")
        if self.refit is not None and (self.smiles or self.file):
            raise InputError("a refit fits the model; estimate SMILES in a separate call with its parameter table",
                             param="refit", value=self.refit, expected="a refit without SMILES")
        if self.exclude is not None and self.refit is None:
            raise InputError("the CAS numbers to hold out go with a refit", param="exclude", value=self.exclude,
                             expected="exclude together with refit")
        if self.refit is None and not self.smiles and self.file is None:
            raise InputError("give a SMILES string (e.g. CC(C)=CCCC(C)=CC=O) or a file of SMILES", param="smiles",
                             expected="a SMILES string")
        if self.save_to is not None and not (self.name and str(self.name).strip()):
            raise InputError("saving the estimate needs a name for the solute", param="name", value=self.name,
                             expected="a solute name")


@dataclass(frozen=True)
class EstimateResult:
    """The estimates (one per SMILES, or the error that SMILES raised), or a refit's summary.

    Attributes
    ----------
    request : EstimateRequest
    items : tuple of str
        the SMILES estimated, as given (typed first, then those of the file)
    estimates : tuple of Estimate or SolvselError
        one per item, in the same order
    saved_to : str or None
        the solutes file the estimate was saved to
    refit : dict or None
        for a refit: paths written, numbers of compounds, the cross-validated errors and their table
    excluded : tuple of str
        for a refit: the CAS numbers held out
    cautions : tuple of str
    """

    request: EstimateRequest
    items: tuple[str, ...] = ()
    estimates: tuple = ()
    saved_to: str | None = None
    refit: dict | None = None
    excluded: tuple[str, ...] = ()
    cautions: tuple[str, ...] = (CAUTION,)
    #: version and the tables' checksum (in the JSON of one SMILES and of a refit; a list of several
    #: SMILES keeps its shape)
    audit: dict = field(default_factory=lambda: audit_block())

    @property
    def ok(self) -> bool:
        """True when every SMILES was estimated."""
        return not any(isinstance(e, SolvselError) for e in self.estimates)

    @property
    def target(self) -> Target:
        """The (first) estimate as a target for ranking and blends (basis "estimated", no R0)."""
        e = self.estimates[0]
        if isinstance(e, SolvselError):
            raise e
        return target_from_estimate(e)

    def to_dict(self) -> dict[str, Any] | list[dict[str, Any]]:
        """The JSON of ``solvsel estimate --json``: the estimate of one SMILES (with ``saved_to`` when saved),
        a list with one entry per SMILES (``{smiles, error}`` for a failure) for several, or the refit's summary."""
        if self.refit is not None:
            return {**self.refit, "audit": self.audit}
        if len(self.items) == 1:
            d = self.estimates[0].to_dict()
            if self.saved_to:
                d["saved_to"] = self.saved_to
            d["audit"] = self.audit
            return d
        return [{"smiles": s, "error": _error_text(e)} if isinstance(e, SolvselError) else e.to_dict()
                for s, e in zip(self.items, self.estimates)]

    def to_frame(self):
        """One row per SMILES: dD, dP, dH [MPa^0.5], vm [cm^3/mol], class, method, error."""
        from ._base import frame

        rows = []
        for s, e in zip(self.items, self.estimates):
            if isinstance(e, SolvselError):
                rows.append({"smiles": s, "error": _error_text(e)})
            else:
                rows.append({"smiles": e.smiles, "dD": e.dD, "dP": e.dP, "dH": e.dH, "vm": e.vm_cm3_mol,
                             "chem_class": e.chem_class, "method": e.method, "error": None})
        return frame(rows, ["smiles", "dD", "dP", "dH", "vm", "chem_class", "method", "error"])


def _error_text(exc: SolvselError) -> str:
    """The error of one SMILES of several, in words for any door (the SMILES itself is named beside it)."""
    return exc.describe(lambda param: "")


def estimate(request: EstimateRequest | None = None, *, catalog: Catalog | None = None,
             progress: Callable[[int, int, str], None] | None = None, **fields) -> EstimateResult:
    """Estimate HSP from SMILES, or refit the model (see :class:`EstimateRequest`).

    ``catalog`` is not used (an estimate needs no table); ``progress(done, total, message)`` is told
    the steps of a refit (``done`` of ``total`` finished, the next one named).  A refit takes the
    settings the nested cross-validation chose once (recorded in the bundled parameter table), so
    it reproduces the bundled tables from the bundled data, in about a minute
    (:func:`solvsel.science.structure_training.refit`).
    One SMILES raises its error; of several, each failure is kept in its place.
    """
    q = build_request(EstimateRequest, request, fields)
    if q.refit is not None:
        return _refit(q, progress)
    items = list(q.smiles)
    if q.file is not None:
        items += [ln.split()[0] for ln in _read_lines(q.file, "file")]
    if not items:
        raise InputError(f"no SMILES in {q.file}", param="file", value=q.file, expected="SMILES, one a line")
    if q.save_to is not None and len(items) != 1:
        raise InputError("a save holds one estimate: give exactly one SMILES", param="save_to", value=q.save_to,
                         expected="one SMILES")
    kw = dict(method=q.method, params=q.params, properties=q.lookup, full_lookup=q.lookup_all)
    if len(items) == 1:
        old = _save_target(q) if q.save_to is not None else None
        est = structure.estimate(items[0], **kw)
        saved = _save(q, est, old) if q.save_to is not None else None
        return EstimateResult(q, tuple(items), (est,), saved)
    out = []
    for s in items:
        try:
            out.append(structure.estimate(s, **kw))
        except SolvselError as exc:
            out.append(exc)
    return EstimateResult(q, tuple(items), tuple(out))


def _refit(q: EstimateRequest, progress) -> EstimateResult:
    from ..science import structure_training

    exclude = _read_lines(q.exclude, "exclude") if q.exclude is not None else []
    res = structure_training.refit(q.refit, exclude=exclude, force=q.force, progress=progress)
    return EstimateResult(q, refit=res, excluded=tuple(exclude), cautions=())


def _read_lines(path: str, param: str) -> list[str]:
    """The lines of a text file (``"-"``: standard input) that are neither blank nor comments (``#``)."""
    lines = [ln.strip() for ln in read_user_text(path, param=param).splitlines()]
    return [ln for ln in lines if ln and not ln.startswith("#")]


def _save_target(q: EstimateRequest) -> tuple[str, str] | None:
    """The solutes file to save into, checked before the estimate: writable, and if it exists, added to
    only with force, a solutes table without the name.  Its text and codec, or None for a new file."""
    check_write_target(q.save_to, param="save_to")
    if not os.path.exists(q.save_to):
        return None
    text, encoding = read_user_text_encoding(q.save_to, param="save_to")
    if not text.strip():
        return None
    if not q.force:
        raise InputError("the file exists; add the estimate to it with force (its rows are kept), or save to a "
                         "new file", param="save_to", value=q.save_to, path=q.save_to,
                         expected="a new file, or force to add to this one")
    _existing_columns(q, text)
    return text, encoding


def _save(q: EstimateRequest, est, old: tuple[str, str] | None) -> str:
    """Add the estimate to the user's solutes CSV (created if missing): the file's rows are kept byte for
    byte, a missing final newline is added, and the whole is checked as a solutes table before it
    replaces the old file.  Text a spreadsheet would run as a formula is written with a leading quote."""
    path = q.save_to
    u = est.uncertainty
    values = {
        "name": q.name.strip(), "category": q.category,
        "dD_MPa05": f"{est.dD:.2f}", "dP_MPa05": f"{est.dP:.2f}", "dH_MPa05": f"{est.dH:.2f}",
        "hsp_basis": "estimated", "hsp_method": est.method,
        "hsp_source": "derived_gc_fit" if est.method == structure.OWN_METHOD else est.method,
        "mw_g_mol": f"{est.mw_g_mol:.3f}" if est.mw_g_mol else "",
        "vm_cm3_mol": f"{est.vm_cm3_mol:.1f}" if est.vm_cm3_mol else "", "smiles": est.smiles,
        "props_source": "derived_gc_fit",
        "note": f"estimated from structure by solvsel estimate ({est.method}); expected error for "
                f"{u.get('basis')}: dD {u.get('dD') or 0:.2f}, dP {u.get('dP') or 0:.2f}, dH {u.get('dH') or 0:.2f} MPa^0.5",
    }
    text, encoding = old if old is not None else ("", "utf-8")
    newline = "\r\n" if "\r\n" in text else "\n"
    columns = next(csv.reader([text.splitlines()[0]])) if text else _SOLUTE_COLUMNS
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator=newline)
    if not text:
        w.writerow(columns)
    w.writerow([spreadsheet_safe(values.get(c.strip(), "")) for c in columns])
    if text and not text.endswith(("\n", "\r")):
        text += newline
    try:
        data = (text + buf.getvalue()).encode(encoding)
    except UnicodeEncodeError:
        raise InputError(f"the name cannot be written in the file's encoding ({encoding}); nothing was written",
                         param="name", value=q.name, expected=f"a name in {encoding}") from None
    write_user_file(path, data, param="save_to", check=lambda tmp: _check_solutes(tmp, path))
    return path


def _check_solutes(tmp, path: str) -> None:
    """Refuse a file that would not load as a solutes table, naming the user's file."""
    from ..data.catalog import read_table

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", SolvselNote)  # its encoding was noted when it was read
            read_table(tmp, "solutes", user=True)
    except TableError as exc:
        raise TableError(path, f"would not be a valid solutes table ({exc.message}); nothing was written",
                         row=exc.row, column=exc.column, param="save_to") from None


def _existing_columns(q: EstimateRequest, text: str) -> list[str]:
    """The header of the user's solutes file, checked: the solute columns are there, the name is new
    (two rows of one name would make the table unreadable)."""
    rows = list(csv.reader(io.StringIO(text, newline="")))
    header = [h.strip() for h in rows[0]] if rows else []
    path = q.save_to
    missing = [c for c in ("name", "dD_MPa05", "dP_MPa05", "dH_MPa05") if c not in header]
    if missing:
        raise InputError(f"'{path}' is not a solutes table (no column {', '.join(missing)}); nothing was written",
                         param="save_to", value=path, path=path)
    names = {r[header.index("name")].strip().lower() for r in rows[1:] if len(r) > header.index("name")}
    if q.name.strip().lower() in names:
        raise InputError(f"'{path}' already has a solute named '{q.name}'; choose another name", param="name",
                         value=q.name, expected="a name not in the file")
    return header
