"""The blend search gives the same blends as the search it replaced.

``tests/data/blend_search_reference.json`` holds, for each search below, the
counts and the 50 best blends (names, volume fractions, Ra) that the earlier
search (every face of every combination solved, every combination's result
kept; commit ca014de) gave.  It was written once by running this file as a
script with ``--store`` on that commit and is never rewritten by the tests.

The searches: the benchmark's random pools (``bench/bench_blends.py``: 20, 40,
60, 80 and 120 liquids), searches with fraction bounds that bind (upper bounds,
a liquid required by its lower bound, both), a smaller component minimum and
none at all, and the bundled table's liquids at 25 C (their HSP stored with the
names, so an edit of the tables does not change this test).

Order: by Ra; blends whose Ra differ by at most 1e-9 MPa^0.5 are a tie, ordered
by their liquids' names (for a target inside many tetrahedra, hundreds of
blends have Ra = 0 up to rounding).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest

from solvsel.science.blends import exact_candidates

DATA = Path(__file__).parent / "data" / "blend_search_reference.json"
TOP = 50
TIE = 1e-9
TARGET = (17.0, 6.0, 10.0)


def bench_pool(m: int, seed: int) -> np.ndarray:
    """The benchmark's random pool (bench/bench_blends.py ``pool``)."""
    rng = np.random.default_rng(seed)
    return np.column_stack([rng.uniform(14, 20, m), rng.uniform(0, 20, m), rng.uniform(0, 42, m)])


def _bounds(m: int, lower: dict, upper: dict) -> tuple[np.ndarray, np.ndarray]:
    lo, hi = np.zeros(m), np.ones(m)
    for i, v in lower.items():
        lo[int(i)] = v
    for i, v in upper.items():
        hi[int(i)] = v
    return lo, hi


#: (id, pool (m, seed), target, max_components, lower {index: bound}, upper, min_fraction)
SEARCHES = [
    ("bench60_k3", (60, 2026), TARGET, 3, {}, {}, 0.05),
    ("bench60_k4", (60, 2026), TARGET, 4, {}, {}, 0.05),
    ("bench20_k4", (20, 20), TARGET, 4, {}, {}, 0.05),
    ("bench40_k4", (40, 40), TARGET, 4, {}, {}, 0.05),
    ("bench80_k4", (80, 80), TARGET, 4, {}, {}, 0.05),
    ("bench120_k4", (120, 120), TARGET, 4, {}, {}, 0.05),
    ("bench60_k4_far", (60, 2026), (19.5, 1.0, 2.0), 4, {}, {}, 0.05),
    ("bench60_k4_upper", (60, 2026), TARGET, 4, {}, {str(i): 0.3 for i in range(0, 60, 6)}, 0.05),
    ("bench60_k4_required", (60, 2026), TARGET, 4, {"5": 0.1}, {}, 0.05),
    ("bench60_k4_both", (60, 2026), TARGET, 4, {"3": 0.2}, {"7": 0.5, "11": 0.25}, 0.05),
    ("bench60_k4_two_required", (60, 2026), TARGET, 4, {"3": 0.2, "40": 0.05}, {"7": 0.5}, 0.05),
    ("bench60_k3_no_minimum", (60, 2026), TARGET, 3, {}, {}, 0.0),
    ("bench60_k4_minimum_0.15", (60, 2026), TARGET, 4, {}, {}, 0.15),
    ("bench40_k4_upper_far", (40, 40), (15.5, 14.0, 35.0), 4, {}, {str(i): 0.4 for i in range(0, 40, 3)}, 0.05),
    ("table_k3", "table", (17.8, 3.9, 9.9), 3, {}, {}, 0.05),
    ("table_k4", "table", (17.8, 3.9, 9.9), 4, {}, {}, 0.05),
    ("table_k4_ethanol_upper", "table", (16.0, 8.0, 14.0), 4, {}, {"ethanol": 0.3}, 0.05),
    ("table_k3_water_required", "table", (15.8, 12.0, 25.0), 3, {"water": 0.2}, {}, 0.05),
]


def canonical_top(names, cands, top: int = TOP) -> list[dict]:
    """The ``top`` best blends by Ra, ties (within 1e-9) ordered by their liquids' names."""
    order = np.argsort(cands.ra, kind="stable")
    rows = []
    for j in order:
        idx, xs = cands.members(int(j))
        rows.append({"names": [names[i] for i in idx], "fractions": [float(x) for x in xs],
                     "ra": float(cands.ra[j])})
        if len(rows) > top and rows[-1]["ra"] - rows[top - 1]["ra"] > TIE:
            break
    out, group = [], []
    for r in rows:
        if group and r["ra"] - group[-1]["ra"] > TIE:
            out += sorted(group, key=lambda g: g["names"])
            group = []
        group.append(r)
    out += sorted(group, key=lambda g: g["names"])
    return out[:top]


def _table_pool() -> tuple[list[str], np.ndarray]:
    from solvsel.data.catalog import load_catalog
    from solvsel.jobs.pool import PoolFilters, build_pool

    pool = build_pool(load_catalog(), PoolFilters())
    return list(pool.names), np.asarray(pool.hsp, dtype=float)


def _setup(spec, stored=None):
    """Names, pool HSP, target and bounds of one search."""
    _, pool, target, k, lower, upper, mf = spec
    if pool == "table":
        if stored is not None:
            names, H = stored["names"], np.asarray(stored["hsp"], dtype=float)
        else:
            names, H = _table_pool()
        pos = {n: i for i, n in enumerate(names)}
        lower = {pos[n]: v for n, v in lower.items()}
        upper = {pos[n]: v for n, v in upper.items()}
    else:
        H = bench_pool(*pool)
        names = [f"L{i:03d}" for i in range(len(H))]
    lo, hi = _bounds(len(H), lower, upper)
    return names, H, np.asarray(target, dtype=float), k, lo, hi, mf


def _run(spec, stored=None) -> dict:
    names, H, target, k, lo, hi, mf = _setup(spec, stored)
    c = exact_candidates(H, target, k, lo, hi, mf)
    out = {"counts": {"combinations": c.combinations, "bounds_not_met": c.bounds_not_met,
                      "same_as_smaller_blend": c.same_as_smaller_blend, "kept": len(c)},
           "top": canonical_top(names, c)}
    if spec[1] == "table":
        out["names"], out["hsp"] = names, H.tolist()
    return out


def store() -> None:  # pragma: no cover - run once, by hand
    data = {"note": "written by tests/test_blend_search_regression.py --store (see its docstring)",
            "searches": {spec[0]: _run(spec) for spec in SEARCHES}}
    DATA.write_text(json.dumps(data, indent=1) + "\n")


@pytest.fixture(scope="module")
def reference() -> dict:
    return json.loads(DATA.read_text())["searches"]


@pytest.mark.parametrize("spec", SEARCHES, ids=[s[0] for s in SEARCHES])
def test_same_blends_as_before(spec, reference):
    ref = reference[spec[0]]
    got = _run(spec, ref)
    assert got["counts"] == ref["counts"]
    assert len(got["top"]) == len(ref["top"])
    for pos, (a, b) in enumerate(zip(got["top"], ref["top"]), start=1):
        assert a["names"] == b["names"], f"{spec[0]}, blend {pos}"
        assert np.allclose(a["fractions"], b["fractions"], rtol=0, atol=1e-9), f"{spec[0]}, blend {pos}"
        assert a["ra"] == pytest.approx(b["ra"], rel=0, abs=1e-9)


def test_peak_memory_of_the_largest_search():
    """Every 4-liquid blend of 120 liquids (8.2 million combinations) in under 300 MB (peak RSS
    of a fresh process, imports included; the earlier search kept every combination: 1.3 GB)."""
    if not Path("/proc/self/status").is_file():
        pytest.skip("the peak resident memory is read from /proc (Linux)")
    code = textwrap.dedent("""
        import sys
        import numpy as np
        sys.path.insert(0, sys.argv[1])
        from test_blend_search_regression import bench_pool
        from solvsel.science.blends import exact_candidates
        H = bench_pool(120, 120)
        c = exact_candidates(H, [17.0, 6.0, 10.0], 4, np.zeros(120), np.ones(120), 0.05, keep=2000)
        # VmHWM: the peak RSS of this process's own memory (getrusage would report the parent's
        # peak at the fork, which Linux carries over an exec)
        hwm = [line for line in open("/proc/self/status") if line.startswith("VmHWM:")][0]
        print(c.combinations, len(c), hwm.split()[1])
    """)
    out = subprocess.run([sys.executable, "-c", code, str(Path(__file__).parent)], capture_output=True, text=True,
                         check=True, env={**os.environ, "OMP_NUM_THREADS": "1"})
    n, kept, peak_kb = (int(v) for v in out.stdout.split())
    assert n == 8214570 + 280840 + 7140 + 120
    assert kept == 2000
    assert peak_kb < 300 * 1024, f"peak {peak_kb / 1024:.0f} MB"


if __name__ == "__main__":  # pragma: no cover
    if sys.argv[1:] == ["--store"]:
        store()
