"""solvsel: solvent, carrier-blend and emulsifier selection for foods and drinks.

The public API is one function per question a user asks (a *job*), each with
its request and result types, and the catalog of sourced tables:

>>> import solvsel
>>> r = solvsel.miscible(liquids=("water", "ethyl acetate"))
>>> r.one_phase, r.basis
('partial', 'measured')

=================  =====================================================
``rank``           single liquids ranked for a solute (or substitutes)
``blend``          the best blends of up to four liquids, exact fractions
``fit``            a solute's Hansen sphere from bench results
``estimate``       HSP and molar volume from a structure (SMILES)
``miscible``       do these liquids form one phase, and why
``hlb``            required HLB of an oil phase, emulsifier pairs
``emulsion``       weighting, density match and creaming of a drink
``dose``           levels along a dilution chain against the legal limits
``clarity``        will the drink stay clear: flavour components against their solubility
``screen``         many targets at once through rank or blend (a DataFrame)
``load_catalog``   the bundled tables, with a user's own rows
``open_workspace`` a saved piece of work (``Workspace``); ``save_workspace`` writes one
=================  =====================================================

Each job takes its request (``solvsel.RankRequest(...)``) or the request's
fields as keywords, and an optional ``catalog``; its result is a frozen
dataclass whose ``to_dict()`` is the JSON of the matching command
(``solvsel rank --json``), with ``to_frame()`` where it is a table.  Every
result is an estimate for planning bench work, not a safety, regulatory or
stability sign-off.

The layers below (``solvsel.data``, ``solvsel.science``, ``solvsel.rules``)
are importable too; the jobs are the stable surface.
"""

from __future__ import annotations

from importlib import import_module
from typing import TYPE_CHECKING, Any

from ._version import __version__

#: Public name -> module that defines it (imported on first use, so ``import solvsel`` stays light).
_API = {
    "load_catalog": "solvsel.data.catalog",
    "Catalog": "solvsel.data.catalog",
    "rank": "solvsel.jobs.rank", "RankRequest": "solvsel.jobs.rank", "RankResult": "solvsel.jobs.rank",
    "blend": "solvsel.jobs.blend", "BlendRequest": "solvsel.jobs.blend", "BlendResult": "solvsel.jobs.blend",
    "fit": "solvsel.jobs.fit", "FitRequest": "solvsel.jobs.fit", "FitResult": "solvsel.jobs.fit",
    "estimate": "solvsel.jobs.estimate", "EstimateRequest": "solvsel.jobs.estimate",
    "EstimateResult": "solvsel.jobs.estimate",
    "miscible": "solvsel.jobs.miscible", "MiscibleRequest": "solvsel.jobs.miscible",
    "MiscibleResult": "solvsel.jobs.miscible",
    "hlb": "solvsel.jobs.hlb", "HlbRequest": "solvsel.jobs.hlb", "HlbResult": "solvsel.jobs.hlb",
    "emulsion": "solvsel.jobs.emulsion", "EmulsionRequest": "solvsel.jobs.emulsion",
    "EmulsionResult": "solvsel.jobs.emulsion",
    "dose": "solvsel.jobs.dose", "DoseRequest": "solvsel.jobs.dose", "DoseResult": "solvsel.jobs.dose",
    "clarity": "solvsel.jobs.clarity", "ClarityRequest": "solvsel.jobs.clarity", "ClarityResult": "solvsel.jobs.clarity",
    "load": "solvsel.jobs.load", "LoadRequest": "solvsel.jobs.load", "LoadResult": "solvsel.jobs.load",
    "extraction": "solvsel.jobs.extraction", "ExtractionRequest": "solvsel.jobs.extraction",
    "ExtractionResult": "solvsel.jobs.extraction",
    "screen": "solvsel.jobs.batch", "BatchRequest": "solvsel.jobs.batch",
    "SolvselError": "solvsel.errors", "InputError": "solvsel.errors",
    "Workspace": "solvsel.data.workspace", "open_workspace": "solvsel.data.workspace",
    "save_workspace": "solvsel.data.workspace",
}

__all__ = ["__version__", *_API]


def __getattr__(name: str) -> Any:
    module = _API.get(name)
    if module is None:
        raise AttributeError(f"module 'solvsel' has no attribute '{name}'")
    value = getattr(import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(__all__)


if TYPE_CHECKING:  # pragma: no cover - for type checkers and editors
    from .data.catalog import Catalog, load_catalog
    from .data.workspace import Workspace, open_workspace, save_workspace
    from .errors import InputError, SolvselError
    from .jobs.blend import BlendRequest, BlendResult, blend
    from .jobs.batch import BatchRequest, screen
    from .jobs.dose import DoseRequest, DoseResult, dose
    from .jobs.emulsion import EmulsionRequest, EmulsionResult, emulsion
    from .jobs.estimate import EstimateRequest, EstimateResult, estimate
    from .jobs.extraction import ExtractionRequest, ExtractionResult, extraction
    from .jobs.fit import FitRequest, FitResult, fit
    from .jobs.hlb import HlbRequest, HlbResult, hlb
    from .jobs.load import LoadRequest, LoadResult, load
    from .jobs.miscible import MiscibleRequest, MiscibleResult, miscible
    from .jobs.rank import RankRequest, RankResult, rank
