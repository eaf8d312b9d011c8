"""Cold starts of the ``solvsel`` command for the benchmarks: a new interpreter each time, as a user runs it.

Bytecode is kept in a folder of the benchmark's own (``PYTHONPYCACHEPREFIX``), as an installed package keeps
it: an environment that sets PYTHONDONTWRITEBYTECODE would otherwise compile solvsel at every start.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def cold_env(pyc: str, **extra: str) -> dict[str, str]:
    """This process's environment with bytecode written to ``pyc``, plus ``extra`` variables."""
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPYCACHEPREFIX"] = pyc
    env.update(extra)
    return env


def import_ms(argv, modules, env=None) -> dict[str, float]:
    """Cumulative import time [ms] of each of ``modules`` that ``solvsel ARGV`` loads (``python -X importtime``)."""
    err = subprocess.run([sys.executable, "-X", "importtime", "-m", "solvsel", *argv], cwd=ROOT, check=True,
                         capture_output=True, text=True, env=env).stderr
    got = {}
    for row in err.splitlines():
        parts = row.split("|")
        if len(parts) == 3 and parts[2].strip() in modules:
            got[parts[2].strip()] = int(parts[1]) / 1000.0
    return got
