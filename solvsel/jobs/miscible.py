"""Do these liquids form one phase, and why: the ``miscible`` job.

Two or more liquids are checked pair by pair (the measured pairs of
``tables/miscibility.csv`` first; otherwise predicted, by UNIFAC from the two
liquids' structures or, for mixtures such as vegetable oils, by Flory-Huggins
from Hansen parameters; each verdict says its basis and model); with volume fractions, the blend is
checked at those fractions (pairwise, then as a whole for three or four
liquids); with ``bridge``, the liquids that mix in all proportions with both of
two liquids are listed, best evidence first (from the food carriers of the
candidate pool with ``food``).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from itertools import combinations
from typing import Any

from ..data.catalog import Catalog
from ..data.provenance import audit_block
from ..errors import InputError, UnknownNameError
from ..science.hansen import T_WINDOW_C
from ..science.miscibility import BlendPhase, Bridge, PairVerdict, blend_phase, bridges, pair
from ._base import build_request, catalog_or_default, check_bool, check_names, check_number, frame
from .pool import PoolFilters, build_pool

__all__ = ["MiscibleRequest", "MiscibleResult", "miscible", "CAUTION"]

#: The caution every miscibility answer carries.
CAUTION = (
    "Predicted miscibility (UNIFAC from the structures, or HSP for mixtures) is a screening estimate; measured "
    "pairs win. Check blends at the bench "
    "at the temperatures of use and storage (cold can split a blend)."
)

_ORDER = {"yes": 0, "partial": 1, "no": 2}


@dataclass(frozen=True)
class MiscibleRequest:
    """Which liquids, at what temperature, and what to check.

    Attributes
    ----------
    liquids : tuple of str
        two or more liquids (names, synonyms or CAS numbers)
    temp_C : float
        temperature [C], -80 to 150 (default 25)
    fractions : tuple of float, optional
        volume fractions of the liquids, one each, summing to 1: check the blend at them
    bridge : bool
        for two liquids: list the liquids that mix in all proportions with both
    food : bool
        with ``bridge``: only liquids allowed as food carriers (permitted or conditional)
    """

    liquids: tuple[str, ...]
    temp_C: float = 25.0
    fractions: tuple[float, ...] | None = None
    bridge: bool = False
    food: bool = False

    def __post_init__(self) -> None:
        liquids = check_names(self.liquids, "liquids", allow_none=False)
        if len(liquids) < 2:
            raise InputError("give at least two liquids", param="liquids", value=", ".join(liquids),
                             expected="two or more liquids")
        object.__setattr__(self, "liquids", liquids)
        object.__setattr__(self, "temp_C", check_number(self.temp_C, "temp_C", *T_WINDOW_C, unit="C"))
        object.__setattr__(self, "bridge", check_bool(self.bridge, "bridge"))
        object.__setattr__(self, "food", check_bool(self.food, "food"))
        if self.bridge and len(liquids) != 2:
            raise InputError("bridging liquids are looked for between exactly two liquids", param="bridge",
                             expected="two liquids")
        if self.bridge and self.fractions is not None:
            raise InputError("give fractions (a blend to check) or ask for bridging liquids, not both",
                             param="fractions")
        if self.food and not self.bridge:
            raise InputError("the food filter applies to the bridging liquids: ask for them too", param="food")
        if self.fractions is not None:
            object.__setattr__(self, "fractions", _check_fractions(self.fractions, len(liquids)))


def _check_fractions(values, n: int) -> tuple[float, ...]:
    expected = f"{n} volume fractions (one per liquid) summing to 1"
    try:
        vals = tuple(float(v) for v in values)
    except (TypeError, ValueError):
        raise InputError(f"expected {expected}, got {values!r}", param="fractions", value=values,
                         expected=expected) from None
    if len(vals) != n:
        raise InputError(f"expected {n} numbers (one per liquid), got {len(vals)}", param="fractions",
                         value=values, expected=expected)
    if any(not (v >= 0) for v in vals):
        raise InputError("fractions must be zero or positive", param="fractions", value=values, expected=expected)
    if abs(sum(vals) - 1.0) > 1e-6:
        raise InputError(f"fractions must sum to 1, got {sum(vals):g}", param="fractions", value=values,
                         expected=expected)
    return vals


@dataclass(frozen=True)
class MiscibleResult:
    """The verdict on the liquids together, and on each pair.

    ``one_phase`` is "yes", "partial" or "no" (for a blend at fractions: "yes"
    or "no"); ``basis`` "measured" when every pair is measured, else
    "predicted" (or the blend test's basis); ``window``, ``chi``,
    ``chi_critical`` and ``model`` (what predicted it, "" when measured) are
    those of the pair furthest from mixing.
    """

    liquids: tuple[str, ...]
    one_phase: str
    basis: str
    window: dict | None
    chi: float | None
    chi_critical: float | None
    temp_C: float
    pairs: tuple[PairVerdict, ...]
    note: str
    blend: BlendPhase | None = None
    bridges: tuple[Bridge, ...] | None = None
    model: str = ""
    cautions: tuple[str, ...] = (CAUTION,)
    #: version, tables' checksum and the food-law rules applied (to the bridging liquids, with ``food``)
    audit: dict = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The JSON of ``solvsel miscible --json``: for one pair, that pair's verdict (with
        ``pairs`` and ``cautions`` added); for more, the verdict on them together."""
        if len(self.pairs) == 1 and self.blend is None:
            out = self.pairs[0].to_dict()
            out["pairs"] = [self.pairs[0].to_dict()]
        else:
            out = {
                "liquids": list(self.liquids), "one_phase": self.one_phase, "basis": self.basis,
                "window": self.window, "chi": self.chi, "chi_critical": self.chi_critical,
                "temp_C": self.temp_C, "pairs": [p.to_dict() for p in self.pairs], "note": self.note,
                "model": self.model,
            }
        if self.blend is not None:
            out["blend"] = self.blend.to_dict()
        if self.bridges is not None:
            out["bridges"] = [b.to_dict() for b in self.bridges]
        out["cautions"] = list(self.cautions)
        out["audit"] = self.audit
        return out

    def to_frame(self):
        """One row per pair: liquids, verdict, basis, model, chi and critical chi."""
        return frame(({"a": p.liquids[0], "b": p.liquids[1], "one_phase": p.one_phase, "basis": p.basis,
                       "model": p.model, "chi": p.chi, "chi_critical": p.chi_critical} for p in self.pairs),
                     ["a", "b", "one_phase", "basis", "model", "chi", "chi_critical"])


def _together(req: MiscibleRequest, verdicts: list[PairVerdict]) -> dict[str, Any]:
    worst = max(verdicts, key=lambda v: (v.code, (v.chi or 0) / (v.chi_critical or 1)))
    one = max((v.one_phase for v in verdicts), key=_ORDER.get)
    if len(verdicts) == 1:
        return {"one_phase": one, "basis": worst.basis, "window": worst.window, "chi": worst.chi,
                "chi_critical": worst.chi_critical, "note": worst.note, "model": worst.model}
    return {
        "one_phase": one, "model": worst.model,
        "basis": "measured" if all(v.basis == "measured" for v in verdicts) else "predicted",
        "window": worst.window if one != "yes" else {"one_phase_ranges": [[0.0, 1.0]]},
        "chi": worst.chi, "chi_critical": worst.chi_critical,
        "note": "pairwise: a third liquid can bring two immiscible ones together; give fractions to check a blend",
    }


def _bridges(cat: Catalog, req: MiscibleRequest) -> tuple[tuple[Bridge, ...], tuple]:
    """The bridging liquids, and the food-law rules their pool was judged by (with ``food``)."""
    a, b = req.liquids
    if not req.food:
        return tuple(bridges(cat, a, b, req.temp_C)), ()
    pool = build_pool(cat, PoolFilters(use="carrier", food=True))
    found = tuple(replace(x, food=True) for x in bridges(cat, a, b, req.temp_C, names=pool.names))
    return found, pool.rules


def miscible(request: MiscibleRequest | None = None, *, catalog: Catalog | None = None, **fields) -> MiscibleResult:
    """Whether the liquids form one phase, pair by pair and together.

    Examples
    --------
    Water and ethyl acetate are partly miscible (a measured pair):

    >>> r = miscible(liquids=("water", "ethyl acetate"))
    >>> r.one_phase, r.basis
    ('partial', 'measured')
    """
    req = build_request(MiscibleRequest, request, fields)
    cat = catalog_or_default(catalog)
    try:
        verdicts = [pair(cat, a, b, req.temp_C) for a, b in combinations(req.liquids, 2)]
    except UnknownNameError as exc:  # name the request field the liquid came from
        exc.param = exc.param or "liquids"
        raise
    names = tuple(dict.fromkeys(n for v in verdicts for n in v.liquids))
    overall = _together(req, verdicts)
    blend = None
    if req.fractions is not None:
        blend = blend_phase(cat, list(req.liquids), list(req.fractions), req.temp_C)
        overall.update(one_phase="yes" if blend.one_phase else "no", basis=blend.basis,
                       note=blend.reason + "; " + blend.note)
    found, rules = _bridges(cat, req) if req.bridge else (None, ())
    return MiscibleResult(liquids=names, temp_C=req.temp_C, pairs=tuple(verdicts), blend=blend, bridges=found,
                          audit=audit_block(rules, cat.tables_dir), **overall)
