"""What the screens share: the catalog, the scenario and the current target.

A plain object on the app, not a widget: the target screen sets the target,
and the carriers and map screens redraw when they see its ``version`` change.
A workspace opened in the app puts its forms' values in ``overrides`` (by part of
the scenario), which every screen's form reads before the scenario's own.
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
    overrides: dict = field(default_factory=dict)  # part -> form values (an opened workspace's, or saved)
    screens: dict = field(default_factory=dict)  # mode -> the screen, once it has been shown

    def set_target(self, target) -> None:
        self.target = target
        self.ranking = None
        self.blends = None
        self.version += 1

    def scenario_part(self, key: str) -> dict:
        """A part of the scenario (``carrier``, ``extraction``, ``emulsion``, ``flavour``) as a dict, with the
        values of an opened workspace over it."""
        s = self.scenario
        part = {} if s is None else (getattr(s, key, None) if not isinstance(s, dict) else s.get(key))
        return {**dict(part or {}), **self.overrides.get(key, {})}
