"""The project's scripts outside the package (``tools/``, ``bench/``) loaded as modules for the tests."""

from __future__ import annotations

import functools
import importlib.util
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


@functools.lru_cache(maxsize=None)
def load_script(relative: str):
    """The module of the script at ``relative`` (from the project's root, e.g. ``tools/build_solvents.py``),
    loaded once."""
    path = ROOT / relative
    spec = importlib.util.spec_from_file_location(path.stem, path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod
