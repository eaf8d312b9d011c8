"""What the screens share: the catalog, the scenario and the current target.

A plain object on the app, not a widget: the target screen sets the target,
and the carriers and map screens redraw when they see its ``version`` change.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any


@dataclass
class Session:
    """Mutable state of one run of the app (the results themselves stay frozen)."""

    catalog: Any
    scenario: Any = None
    target: Any = None
    version: int = 0
    ranking: Any = None  # last single-liquid ranking (library result) for the map
    blends: Any = None  # last BlendSearch
    notes: dict = field(default_factory=dict)

    def set_target(self, target) -> None:
        self.target = target
        self.ranking = None
        self.blends = None
        self.version += 1

    def scenario_part(self, key: str) -> dict:
        """A part of the scenario (``carrier``, ``extraction``, ``emulsion``, ``flavour``) as a dict."""
        s = self.scenario
        if s is None:
            return {}
        part = getattr(s, key, None) if not isinstance(s, dict) else s.get(key)
        return dict(part or {})
