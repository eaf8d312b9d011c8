"""How sure an answer is: the target's HSP sampled within their uncertainty, and how often each of
the top answers stays among the three best.

A ranking or a blend search answers for one point, the target's (dD, dP, dH).  Where that point
is uncertain, the order of the answers may not survive a small move of it.  This module draws
the target ``n`` times (normal errors, seeded, so the same request gives the same answer), scores
the fixed answers (the ranked liquids, or the found blends at their fixed fractions) by their
Hansen distance Ra to every sample at once (one vectorised array, no new search), and reports
for each answer the share of samples in which it is among the three nearest.

The target's uncertainty (one standard deviation per parameter, :func:`target_spread`):

- an estimate from structure: its stated error (``Target.uncertainty`` of kind ``cv_mae``, the
  cross-validated mean absolute errors of its chemical class), as a standard deviation
  ``sqrt(pi/2) x MAE`` (the mean absolute value of a normal error is ``sd x sqrt(2/pi)``);
- a fitted sphere's interval (``Target.uncertainty`` of kind ``interval``: ``[lo, hi]`` per
  parameter at ``level``): standard deviation ``(hi - lo) / (2 z)``, ``z`` the normal quantile
  of ``(1 + level) / 2``;
- a value recalled, not checked (a solute whose HSP source is of kind ``memory``), or a table
  value estimated by a group method with no stated error (``hsp_basis`` "estimated"): our
  stated default, :data:`RECALLED_SD`;
- typed numbers and checked table values: no uncertainty, every answer "stable".

Verdict (threshold :data:`STABLE_SHARE`, 0.8): an answer ranked in the top three is "stable"
when it stays in the top three in at least 80 % of the samples, else "sensitive"; an answer
ranked below is "stable" when it enters the top three in at most 20 % of them, else
"sensitive" (it may move up).  With no uncertainty every answer is "stable".
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import UnknownNameError

__all__ = ["RECALLED_SD", "STABLE_SHARE", "SAMPLES", "TOP", "Spread", "HowSure", "target_spread", "how_sure",
           "spread_from_interval"]

#: Standard deviations [MPa^0.5] of dD, dP, dH taken for a recalled value: a recalled value is
#: taken to be as uncertain as an estimate from structure, i.e. sqrt(pi/2) times the structure
#: model's cross-validated mean absolute errors over all compounds (0.491, 1.497, 1.148 MPa^0.5,
#: DEVELOPERS.md, "Structure").
RECALLED_SD = tuple(round(math.sqrt(math.pi / 2) * e, 2) for e in (0.491, 1.497, 1.148))
#: Share of samples at which an answer counts as stable (see the module docstring).
STABLE_SHARE = 0.8
#: Samples drawn, and the seed.
SAMPLES = 500
SEED = 0
#: "Top" means among this many best.
TOP = 3

_KEYS = ("dD", "dP", "dH")


@dataclass(frozen=True)
class Spread:
    """The target's uncertainty: one standard deviation of dD, dP, dH [MPa^0.5] and where it comes from."""

    sd: tuple[float, float, float]
    basis: str

    def to_dict(self) -> dict[str, Any]:
        return {"sd": dict(zip(_KEYS, self.sd)), "basis": self.basis}


def spread_from_interval(interval: dict, level: float = 0.90) -> tuple[float, float, float] | None:
    """Standard deviations from ``{"dD": [lo, hi], ...}`` intervals at ``level`` (normal errors).

    >>> spread_from_interval({"dD": [16.0, 18.0], "dP": [5.0, 9.0], "dH": [7.0, 9.0]}, 0.90)
    (0.608, 1.216, 0.608)
    """
    from statistics import NormalDist

    z = NormalDist().inv_cdf((1.0 + float(level)) / 2.0)
    out = []
    for k in _KEYS:
        lo_hi = interval.get(k)
        if lo_hi is None or len(lo_hi) != 2 or lo_hi[0] is None or lo_hi[1] is None:
            return None
        out.append(round(abs(float(lo_hi[1]) - float(lo_hi[0])) / (2.0 * z), 3))
    return tuple(out)


def _from_uncertainty(unc: dict) -> Spread | None:
    kind = unc.get("kind")
    if kind == "cv_mae" and all(unc.get(k) is not None for k in _KEYS):
        sd = tuple(round(math.sqrt(math.pi / 2) * float(unc[k]), 3) for k in _KEYS)
        return Spread(sd, f"estimate from structure: its cross-validated error ({unc.get('basis', 'all')}), "
                          "sd = sqrt(pi/2) x mean absolute error")
    if kind == "interval":
        sd = spread_from_interval(unc, unc.get("level", 0.90))
        if sd is not None:
            return Spread(sd, f"fitted sphere: its {100 * float(unc.get('level', 0.90)):g} % intervals")
    if kind == "sd" and all(unc.get(k) is not None for k in _KEYS):
        return Spread(tuple(float(unc[k]) for k in _KEYS), str(unc.get("basis", "stated standard deviations")))
    return None


def _recalled(target, cat) -> bool:
    """True when the target is a solute whose HSP source is a recalled value (kind ``memory``)."""
    sol = getattr(target, "solute", None)
    if sol is None or cat is None:
        return False
    kinds = []
    for sid in (v for v in str(getattr(sol, "hsp_source", "") or "").split(";") if v):
        try:
            kinds.append(cat.source(sid)["kind"])
        except UnknownNameError:
            kinds.append("")
    return "memory" in kinds


def target_spread(target, cat=None) -> Spread | None:
    """The uncertainty of ``target``'s HSP (see the module docstring), or None when it has none.

    >>> from solvsel.data.catalog import load_catalog
    >>> from solvsel.science.target import target_from_solute, target_from_hsp
    >>> cat = load_catalog()
    >>> target_spread(target_from_solute(cat, "cannabidiol"), cat).sd == RECALLED_SD
    True
    >>> target_spread(target_from_hsp((17.0, 3.0, 8.0)), cat) is None
    True
    """
    unc = getattr(target, "uncertainty", None)
    if isinstance(unc, dict):
        found = _from_uncertainty(unc)
        if found is not None:
            return found
    if _recalled(target, cat):
        return Spread(RECALLED_SD, "recalled value (not checked): our default, as uncertain as an estimate "
                                   "from structure")
    if getattr(getattr(target, "solute", None), "hsp_basis", "") == "estimated":
        return Spread(RECALLED_SD, "table value estimated by a group method, no error stated: our default, the "
                                   "structure model's cross-validated error")
    return None


@dataclass(frozen=True)
class HowSure:
    """How often each answer is among the :data:`TOP` best when the target is sampled.

    ``shares[i]`` is the share of samples in which answer ``i`` (in the order given, best first)
    is among the three nearest; ``verdicts[i]`` "stable" or "sensitive"; ``spread`` the target's
    uncertainty used (None: none, every answer stable); ``moving`` the names of the answers whose
    verdict is "sensitive"; ``summary`` one line in words.
    """

    names: tuple[str, ...]
    shares: tuple[float, ...]
    verdicts: tuple[str, ...]
    spread: Spread | None
    samples: int
    moving: tuple[str, ...]
    summary: str
    scope: str = ""

    @property
    def verdict(self) -> str:
        return "sensitive" if self.moving else "stable"

    def row(self, i: int) -> dict[str, Any]:
        """The per-answer part (JSON key ``how_sure`` of a row)."""
        return {"in_top_three": self.shares[i], "verdict": self.verdicts[i]}

    def to_dict(self) -> dict[str, Any]:
        return {"verdict": self.verdict, "summary": self.summary, "moving": list(self.moving),
                "samples": self.samples, "seed": SEED, "stable_share": STABLE_SHARE, "top": TOP,
                "spread": None if self.spread is None else self.spread.to_dict(), "scope": self.scope}


def _verdict(rank: int, share: float) -> str:
    if rank < TOP:
        return "stable" if share >= STABLE_SHARE else "sensitive"
    return "stable" if share <= 1.0 - STABLE_SHARE else "sensitive"


def how_sure(target_hsp, spread: Spread | None, answers_hsp, names, report=None,
             scope: str = "", n: int = SAMPLES, seed: int = SEED) -> HowSure:
    """Sample the target within ``spread`` and say how often each answer stays among the three best.

    Parameters
    ----------
    target_hsp : array (3,)
        the target's dD, dP, dH [MPa^0.5]
    spread : Spread or None
        its uncertainty (:func:`target_spread`); None: every answer "stable"
    answers_hsp : array (m, 3)
        the HSP of every answer considered [MPa^0.5], best first (the nominal order)
    names : sequence of str
        their names
    report : int or sequence of int, optional
        the answers to report on: the first ``report`` ones, or their positions in the nominal
        order (default all)
    scope : str
        what was re-scored, in words (shown in the summary)

    Examples
    --------
    Two liquids far apart and one near the target: the near one stays first whatever the sample.

    >>> h = how_sure([17, 5, 8], Spread((0.5, 1.0, 1.0), "test"), [[17, 5, 8.5], [15, 15, 15], [20, 0, 0],
    ...              [14, 20, 25]], ["a", "b", "c", "d"])
    >>> h.verdicts[0], h.shares[0]
    ('stable', 1.0)
    """
    H = np.asarray(answers_hsp, dtype=float).reshape(-1, 3)
    names = tuple(names)
    if report is None or isinstance(report, (int, np.integer)):
        report = range(len(names) if report is None else min(int(report), len(names)))
    report = [int(i) for i in report]
    shown = tuple(names[i] for i in report)
    if spread is None or len(names) <= TOP:
        shares = tuple(1.0 if i < TOP else 0.0 for i in report)
        why = "the target's HSP carry no uncertainty" if spread is None else f"only {len(names)} answers"
        return HowSure(shown, shares, ("stable",) * len(report), spread, 0, (), f"stable: {why}", scope)
    rng = np.random.default_rng(seed)
    T = np.asarray(target_hsp, dtype=float)[None, :] + rng.standard_normal((n, 3)) * np.asarray(spread.sd)[None, :]
    d = H[None, :, :] - T[:, None, :]
    ra2 = 4.0 * d[..., 0] ** 2 + d[..., 1] ** 2 + d[..., 2] ** 2  # (n, m); Ra squared
    best = np.argpartition(ra2, TOP - 1, axis=1)[:, :TOP]
    counts = np.bincount(best.ravel(), minlength=len(names))
    shares = tuple(round(float(counts[i]) / n, 3) for i in report)
    verdicts = tuple(_verdict(i, s) for i, s in zip(report, shares))
    moving = tuple(nm for nm, v in zip(shown, verdicts) if v == "sensitive")
    return HowSure(shown, shares, verdicts, spread, n, moving, _summary(shown, shares, moving, spread, n, scope), scope)


def _summary(names, shares, moving, spread: Spread, n: int, scope: str) -> str:
    sd = "/".join(f"{v:g}" for v in spread.sd)
    head = f"target sampled {n} times (sd dD/dP/dH {sd} MPa^0.5; {spread.basis})"
    if scope:
        head += f"; {scope}"
    if not moving:
        return f"stable: the {TOP} nearest to the target (Ra) stay the {TOP} nearest under its uncertainty ({head})"
    parts = [f"{nm} {100 * s:.0f} %" for nm, s in zip(names, shares) if nm in moving]
    return f"sensitive: these answers move in or out of the {TOP} nearest to the target (Ra; share of samples " \
        "among them): " + ", ".join(parts) \
        + f" ({head})"
