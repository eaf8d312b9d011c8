"""Each command imports the heavy libraries it uses and no others (a cold start is mostly imports).

Each command runs in a fresh interpreter (``python -c``), which then lists the heavy modules it
has loaded.  What each command may not load:

- scipy.stats never (the chi-square quantile of the sphere fit's intervals is in closed form);
- scipy (optimize, linalg) only for the sphere fit and for the tangent-plane test of a blend of
  three or more liquids (its local polish);
- scikit-learn, networkx, RDKit, Textual, Dask and matplotlib only where their feature is asked for (a
  refit, a miscibility graph, a structure, the UI, a cluster, a report's figures).

pandas is loaded by every command that reads the tables (the catalog keeps them as DataFrames),
but not by ``--version`` or ``--help``; pandas itself loads pyarrow where it is installed.  No time is measured here; the benchmarks time the cold
starts.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).parent
BENCH = str(HERE / "data" / "bench_c60_memory.csv")

HEAVY = ("pandas", "scipy", "scipy.optimize", "scipy.stats", "scipy.linalg", "sklearn", "networkx", "rdkit",
         "textual", "dask", "distributed", "matplotlib")
#: Never needed to compute a plain answer (matplotlib only draws a report's figures).
OPTIONAL = {"sklearn", "networkx", "rdkit", "textual", "dask", "distributed", "scipy.stats", "matplotlib"}
NO_SCIPY = OPTIONAL | {"scipy", "scipy.optimize", "scipy.linalg"}

CASES = [
    (["--version"], NO_SCIPY | {"pandas"}),
    (["blend", "--help"], NO_SCIPY | {"pandas"}),
    (["table", "sources", "--json"], NO_SCIPY),
    (["solvents", "--food", "--json"], NO_SCIPY),
    (["rank", "--solute", "cannabidiol", "--top", "3", "--json"], NO_SCIPY),
    (["rank", "--like", "n-hexane", "--json"], NO_SCIPY),
    (["blend", "--hsp", "17.5,6,10", "--max-components", "2", "--json"], NO_SCIPY),
    (["blend", "--hsp", "17.5,6,10", "--max-components", "3", "--only", "ethanol,water,triacetin", "--json"],
     OPTIONAL),
    # the widest search from the command line: all liquids, up to 4 (the pair matrix is read from the
    # cache folder or solved with numpy; scipy.optimize only for the tangent-plane polish)
    (["blend", "--hsp", "17.8,3.9,9.9", "--max-components", "4", "--json"], OPTIONAL),
    (["miscible", "water", "ethyl acetate", "--json"], NO_SCIPY),
    (["fit", BENCH, "--good-at-most", "2", "--json"], OPTIONAL),
    (["hlb", "--oil", "d-limonene=70,medium-chain triglycerides=30", "--emulsifiers",
      "polysorbate 80,sorbitan monooleate", "--json"], NO_SCIPY),
    (["emulsion", "--oil", "d-limonene=70,sucrose acetate isobutyrate=30", "--brix", "11", "--dilution", "500",
      "--droplet-um", "0.4", "--json"], NO_SCIPY),
    (["dose", "--formula", "propylene glycol=90,vanillin=10", "--dose", "0.15%", "--category", "beverages",
      "--jurisdiction", "EU", "--json"], NO_SCIPY),
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


def loaded_by(argv: list[str]) -> tuple[int, set[str]]:
    """Exit code and the heavy modules loaded by ``solvsel ARGV`` in a fresh interpreter."""
    out = subprocess.run([sys.executable, "-c", _RUN, json.dumps(argv), json.dumps(HEAVY)], capture_output=True,
                         text=True, check=True, cwd=HERE.parent)
    got = json.loads(out.stdout.strip().splitlines()[-1])
    return got["code"], set(got["loaded"])


@pytest.mark.parametrize("argv,forbidden", CASES, ids=[" ".join(c[0][:2]) for c in CASES])
def test_a_command_loads_only_what_it_uses(argv, forbidden):
    code, loaded = loaded_by(argv)
    assert code == 0
    assert not loaded & forbidden, f"solvsel {' '.join(argv)} loaded {sorted(loaded & forbidden)}"


def test_the_tables_are_read_with_pandas():
    """The check above sees imports: a command that reads the tables shows pandas loaded."""
    assert "pandas" in loaded_by(["table", "sources", "--json"])[1]


def test_a_batch_on_this_machine_loads_no_cluster(tmp_path):
    targets = tmp_path / "targets.csv"
    targets.write_text("id,dD,dP,dH\na,17,3,8\nb,15.8,8.8,19.4\n", encoding="utf-8")
    code, loaded = loaded_by(["rank", "--targets", str(targets), "--out", str(tmp_path / "answers.csv"),
                              "--workers", "1", "--json"])
    assert code == 0
    assert not loaded & NO_SCIPY, sorted(loaded & NO_SCIPY)


def test_the_sphere_fit_loads_exactly_its_optimisers_and_the_tables():
    """``fit`` needs scipy's optimisers (linear programme, SLSQP, Nelder-Mead, L-BFGS-B) and the tables
    (pandas), nothing else; RDKit only when a structure is given as the prior."""
    fit_modules = {"pandas", "scipy", "scipy.optimize", "scipy.linalg"}
    assert loaded_by(["fit", BENCH, "--good-at-most", "2", "--graded", "--json"]) == (0, fit_modules)
    assert loaded_by(["fit", BENCH, "--good-at-most", "2", "--graded", "--prior", "CCO", "--json"]) == (
        0, fit_modules | {"rdkit"})
