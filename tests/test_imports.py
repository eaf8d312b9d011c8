"""Each command imports the heavy libraries it uses and no others (a cold start is mostly imports).

Each command runs in a fresh interpreter (``python -c``), which then lists the heavy modules it
has loaded.  What each command may not load:

- scipy.stats never (the chi-square quantile of the sphere fit's intervals is in closed form);
- scipy (optimize, linalg) only for the sphere fit (the tangent-plane test of a blend polishes with
  numpy alone);
- numpy.ma not for the widest blend search in a warm cache folder (numpy loads it on the first
  ``np.unique``: the UNIFAC grid is made only when a pair is solved);
- scikit-learn, networkx, RDKit, Textual, Dask and matplotlib only where their feature is asked for (a
  refit, a miscibility graph, a structure, the UI, a cluster, a report's figures).

- pandas only where a DataFrame is asked for (``table``, ``solvents``, a result's ``to_frame()``):
  the catalog reads its tables with the csv module, so ``rank``, ``blend``, ``miscible`` and ``fit``
  never load it (pandas itself loads pyarrow where it is installed);
- the reference library's safety data (``chemicals.safety``: exposure limits, carcinogen listings)
  once per cache folder: later runs read the values the answers show from the cache file;
- RDKit and thermo for the liquids' UNIFAC miscibility once per cache folder: later runs read the
  pairs' answers from the cache file.  The commands below run in a cache folder of this module,
  warmed once by the widest blend search (which solves every pair of the catalog).

A command line with a command imports that command's module alone, not every command's.  No time
is measured here; the benchmarks time the cold starts (``bench/bench_rank.py``).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).parent
BENCH = str(HERE / "data" / "bench_c60_memory.csv")

HEAVY = ("pandas", "scipy", "scipy.optimize", "scipy.stats", "scipy.linalg", "sklearn", "networkx", "rdkit",
         "textual", "dask", "distributed", "matplotlib", "numpy.ma")
#: Never needed to compute a plain answer (matplotlib only draws a report's figures).
OPTIONAL = {"sklearn", "networkx", "rdkit", "textual", "dask", "distributed", "scipy.stats", "matplotlib"}
NO_SCIPY = OPTIONAL | {"scipy", "scipy.optimize", "scipy.linalg"}
#: Commands that need no DataFrame.
NO_FRAME = NO_SCIPY | {"pandas"}

CASES = [
    (["--version"], NO_FRAME),
    (["blend", "--help"], NO_FRAME),
    (["table", "sources", "--json"], NO_SCIPY),
    (["solvents", "--food", "--json"], NO_SCIPY),
    (["rank", "--solute", "cannabidiol", "--top", "3", "--json"], NO_SCIPY),
    (["rank", "--like", "n-hexane", "--json"], NO_FRAME),
    (["rank", "--hsp", "17,3,8,8", "--top", "5", "--json"], NO_FRAME),
    (["blend", "--hsp", "17.5,6,10", "--max-components", "2", "--json"], NO_FRAME),
    (["blend", "--hsp", "17.5,6,10", "--max-components", "3", "--only", "ethanol,water,triacetin", "--json"],
     OPTIONAL | {"pandas"}),
    # the widest search from the command line: all liquids, up to 4 (the pair matrix and the UNIFAC
    # answers are read from the cache folder; the tangent-plane polish is numpy's)
    (["blend", "--hsp", "17.8,3.9,9.9", "--max-components", "4", "--json"], NO_FRAME | {"numpy.ma"}),
    (["miscible", "water", "ethyl acetate", "--json"], NO_FRAME),
    (["fit", BENCH, "--good-at-most", "2", "--json"], OPTIONAL | {"pandas"}),
    (["hlb", "--oil", "d-limonene=70,medium-chain triglycerides=30", "--emulsifiers",
      "polysorbate 80,sorbitan monooleate", "--json"], NO_FRAME),
    (["emulsion", "--oil", "d-limonene=70,sucrose acetate isobutyrate=30", "--brix", "11", "--dilution", "500",
      "--droplet-um", "0.4", "--json"], NO_SCIPY),
    (["dose", "--formula", "propylene glycol=90,vanillin=10", "--dose", "0.15%", "--category", "beverages",
      "--jurisdiction", "EU", "--json"], NO_FRAME),
]

_RUN = """
import contextlib, io, json, sys
from solvsel.cli import main
with contextlib.redirect_stdout(io.StringIO()):
    try:
        code = main(json.loads(sys.argv[1]))
    except SystemExit as exc:  # --version and --help exit
        code = exc.code
print(json.dumps({"code": code, "loaded": [m for m in json.loads(sys.argv[2]) if m in sys.modules]}))
"""


_CACHE: dict[str, str] = {}


@pytest.fixture(scope="module", autouse=True)
def warm_cache(tmp_path_factory):
    """A cache folder for this module's commands, filled once by the widest blend search."""
    _CACHE["dir"] = str(tmp_path_factory.mktemp("cache"))
    loaded_by(["blend", "--hsp", "17.8,3.9,9.9", "--max-components", "4", "--json"])
    yield
    _CACHE.clear()


def loaded_by(argv: list[str], heavy=HEAVY) -> tuple[int, set[str]]:
    """Exit code and the modules of ``heavy`` loaded by ``solvsel ARGV`` in a fresh interpreter (in this
    module's cache folder once it is set)."""
    env = {**os.environ, **({"SOLVSEL_CACHE_DIR": _CACHE["dir"]} if "dir" in _CACHE else {})}
    out = subprocess.run([sys.executable, "-c", _RUN, json.dumps(argv), json.dumps(heavy)], capture_output=True,
                         text=True, check=True, cwd=HERE.parent, env=env)
    got = json.loads(out.stdout.strip().splitlines()[-1])
    return got["code"], set(got["loaded"])


@pytest.mark.parametrize("argv,forbidden", CASES, ids=[" ".join(c[0][:2]) for c in CASES])
def test_a_command_loads_only_what_it_uses(argv, forbidden):
    code, loaded = loaded_by(argv)
    assert code == 0
    assert not loaded & forbidden, f"solvsel {' '.join(argv)} loaded {sorted(loaded & forbidden)}"


def test_a_table_shown_whole_is_a_dataframe():
    """The check above sees imports: a command that shows a table as a DataFrame has pandas loaded."""
    assert "pandas" in loaded_by(["table", "sources", "--json"])[1]


def test_a_command_imports_only_its_own_module():
    """The parser of the command given alone is built (``--help`` still lists every command)."""
    commands = tuple(f"solvsel.cli.{c}" for c in ("blend", "fit", "estimate", "report", "extract", "demo"))
    assert loaded_by(["rank", "--hsp", "17,3,8,8", "--top", "3", "--json"], commands)[1] == set()
    assert loaded_by(["--help"], commands)[1] == set(commands)


#: Runs ``solvsel ARGV``; prints its exit code and whether the reference library's safety data were
#: loaded (``chemicals.safety`` loads them on the first value asked for and sets this flag).
_SAFETY_RUN = """
import contextlib, io, json, sys
from solvsel.cli import main
with contextlib.redirect_stdout(io.StringIO()):
    code = main(json.loads(sys.argv[1]))
print(json.dumps([code, bool(getattr(sys.modules.get("chemicals.safety"), "_safety_data_loaded", False))]))
"""


@pytest.mark.parametrize("argv", [
    ["blend", "--hsp", "17.5,6,10", "--max-components", "3", "--only", "ethanol,dichloromethane,triacetin", "--json"],
    ["rank", "--hsp", "17,3,8,8", "--top", "5", "--json"],
    ["fit", BENCH, "--good-at-most", "2", "--json"],
], ids=["blend", "rank", "fit"])
def test_the_exposure_limits_are_read_from_the_cache_after_the_first_run(argv, tmp_path):
    """The first run in a cache folder loads the reference library's safety data; the next reads the
    values its answers show from the cache file (the values themselves: tests/test_health_hazards.py)."""
    env = {**os.environ, "SOLVSEL_CACHE_DIR": str(tmp_path)}

    def run() -> list:
        out = subprocess.run([sys.executable, "-c", _SAFETY_RUN, json.dumps(argv)], capture_output=True, text=True,
                             check=True, cwd=HERE.parent, env=env)
        return json.loads(out.stdout.strip().splitlines()[-1])

    assert run() == [0, True]
    assert run() == [0, False]
    assert list(tmp_path.glob("safety_*.json"))


def test_the_sphere_fit_loads_exactly_its_optimisers():
    """``fit`` needs scipy's optimisers (linear programme, SLSQP, Nelder-Mead, L-BFGS-B), nothing else
    (the tables are read without pandas); RDKit only when a structure is given as the prior."""
    fit_modules = {"scipy", "scipy.optimize", "scipy.linalg", "numpy.ma"}  # scipy loads numpy.ma
    assert loaded_by(["fit", BENCH, "--good-at-most", "2", "--graded", "--json"]) == (0, fit_modules)
    assert loaded_by(["fit", BENCH, "--good-at-most", "2", "--graded", "--prior", "CCO", "--json"]) == (
        0, fit_modules | {"rdkit"})


#: Runs ``solvsel ARGV`` after loading numpy; prints the thread counts of the OpenBLAS libraries the
#: command loaded (numpy's excluded) and whether it left ``OPENBLAS_NUM_THREADS`` set.
_BLAS_RUN = """
import contextlib, io, json, os, sys
import numpy
from threadpoolctl import threadpool_info
os.environ.pop("OPENBLAS_NUM_THREADS", None)
before = {i["filepath"] for i in threadpool_info()}
from solvsel.cli import main
with contextlib.redirect_stdout(io.StringIO()):
    code = main(json.loads(sys.argv[1]))
print(json.dumps([code, [i["num_threads"] for i in threadpool_info()
                         if i["internal_api"] == "openblas" and i["filepath"] not in before],
                  "OPENBLAS_NUM_THREADS" in os.environ]))
"""


def test_the_fit_loads_the_optimisers_blas_on_one_thread():
    """scipy's OpenBLAS, loaded by the fit, starts with one thread (its pool would only cost the cold
    start: the fit runs its BLAS on one thread); the setting does not outlive the command."""
    pytest.importorskip("threadpoolctl")
    out = subprocess.run([sys.executable, "-c", _BLAS_RUN, json.dumps(["fit", BENCH, "--good-at-most", "2", "--json"])],
                         capture_output=True, text=True, check=True, cwd=HERE.parent,
                         env={**os.environ, "SOLVSEL_CACHE_DIR": _CACHE["dir"]})
    code, loaded, left_set = json.loads(out.stdout.strip().splitlines()[-1])
    assert code == 0 and not left_set
    if not loaded:
        pytest.skip("scipy uses numpy's BLAS library here")
    assert set(loaded) == {1}
