"""Suite-wide settings: the longest tests first, so that the workers of a parallel run
(pytest-xdist, ``--numprocesses`` in pyproject.toml) finish together rather than one of them
starting a minute-long test last."""

from __future__ import annotations

import pytest


def pytest_collection_modifyitems(config, items):
    slow = [i for i in items if i.get_closest_marker("slow")]
    if slow:
        rest = [i for i in items if not i.get_closest_marker("slow")]
        items[:] = slow + rest
