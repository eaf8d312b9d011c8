"""The same sphere fit through every door: the library job, the command line and the terminal UI.

Both example bench files are fitted: ``examples/bench_extract.csv`` (good / partial /
bad, a blend by volume) and ``examples/bench_graded.csv`` (scored 1 dissolved .. 6 no
effect, read with the cut-off its header comment gives: good at a score of at most 2;
one liquid of the user's own HSP).  Each door must give the library job's centre, R0,
fit quality and wrong-side liquids.
"""

from __future__ import annotations

import asyncio
import json
from pathlib import Path

import pytest

from solvsel.cli import main
from solvsel.data.catalog import load_catalog
from solvsel.jobs.fit import FitRequest, fit

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"

#: (file, the cut-off of its scale: None for good / partial / bad)
CASES = [("bench_extract.csv", None), ("bench_graded.csv", 2.0)]


def _header_cutoff(path: Path) -> float | None:
    """The cut-off the file's own header comment names (``--good-at-most N``), None if it names none."""
    for line in path.read_text(encoding="utf-8").splitlines():
        if line.startswith("#") and "--good-at-most" in line:
            return float(line.split("--good-at-most")[1].split()[0])
    return None


def _numbers(d: dict) -> tuple:
    """Centre, R0, fit, share explained and the wrong-side names of a fit's JSON."""
    return (d["dD"], d["dP"], d["dH"], d["r0"], d["fit"], d["explained"]), [w["name"] for w in d["wrong_side"]]


def _same(a, b, where="") -> None:
    """``a`` equals ``b`` with numbers within a relative 1e-9."""
    if isinstance(b, dict):
        assert isinstance(a, dict) and list(a) == list(b), where
        for k in b:
            _same(a[k], b[k], f"{where}.{k}")
    elif isinstance(b, list):
        assert isinstance(a, list) and len(a) == len(b), where
        for i, (x, y) in enumerate(zip(a, b)):
            _same(x, y, f"{where}[{i}]")
    elif isinstance(b, float) and not isinstance(a, bool):
        assert a == pytest.approx(b, rel=1e-9, abs=1e-9), where
    else:
        assert a == b, where


@pytest.fixture(scope="module")
def library():
    """The library job's answer for each example file."""
    cat = load_catalog()
    return {name: fit(FitRequest(path=str(EXAMPLES / name), good_at_most=cut), catalog=cat) for name, cut in CASES}


@pytest.mark.parametrize("name, cut", CASES)
def test_examples_say_their_own_cutoff(name, cut):
    # the scale of each file is the one its header comment gives
    assert _header_cutoff(EXAMPLES / name) == cut


@pytest.mark.parametrize("name, cut", CASES)
def test_command_line_gives_the_library_fit(name, cut, library, capsys):
    argv = ["fit", str(EXAMPLES / name), "--json"] + ([] if cut is None else ["--good-at-most", f"{cut:g}"])
    assert main(argv) == 0
    got = json.loads(capsys.readouterr().out)
    want = library[name].to_dict()
    (g, gw), (w, ww) = _numbers(got), _numbers(want)
    assert g == pytest.approx(w, rel=1e-9, abs=1e-9)
    assert gw == ww
    # the whole document is the library result's JSON (the contract fields included); numbers agree to
    # rounding (the optimisers' last digits can differ from one run to the next in one process)
    _same(got, json.loads(json.dumps(want)))
    assert {"dD", "dP", "dH", "r0", "fit", "wrong_side", "interval"} <= set(got)


def test_terminal_ui_gives_the_library_fit(library):
    from solvsel.tui.app import create_app

    async def go():
        app = create_app(start="target")
        got = {}
        async with app.run_test(size=(160, 45)) as pilot:
            await pilot.pause()
            screen = app.screen
            screen.query_one("#target-tabs").active = "from-bench"
            await pilot.pause()
            for name, cut in CASES:
                screen.query_one("#bench-path").value = str(EXAMPLES / name)
                screen.query_one("#bench-good").value = "" if cut is None else f"{cut:g}"
                screen.press("use-bench")
                await pilot.pause()
                got[name] = (screen.bench_result, app.session.target)
        return got

    got = asyncio.run(go())
    for name, _ in CASES:
        result, target = got[name]
        want = library[name]
        (g, gw), (w, ww) = _numbers(result.to_dict()), _numbers(want.to_dict())
        assert g == pytest.approx(w, rel=1e-9, abs=1e-9)
        assert gw == ww
        # the screen's target is the fitted sphere
        assert (target.dD, target.dP, target.dH, target.r0) == pytest.approx(w[:4], rel=1e-9)
        assert target.basis == "fitted"


def test_same_error_from_every_door(capsys):
    # a score file without its cut-off: the library names the field, the command line its option
    from solvsel.errors import InputError

    path = str(EXAMPLES / "bench_graded.csv")
    with pytest.raises(InputError) as exc:
        fit(path=path, next_tests=0)
    assert exc.value.param == "good_at_most"
    assert main(["fit", path]) == 2
    err = capsys.readouterr().err
    assert err.startswith("solvsel: Bad input: --good-at-most: ") and exc.value.message in err


# paracetamol, whose structure estimate is offered as a prior to the graded fit of the example scores
PRIOR = "CC(=O)Nc1ccc(O)cc1"


def test_graded_fit_with_a_prior_from_the_library_and_the_command_line(capsys):
    path = str(EXAMPLES / "bench_graded.csv")
    want = fit(path=path, good_at_most=2.0, graded=True, prior=PRIOR, next_tests=0)
    assert want.graded is not None and want.prior is not None
    assert want.graded.prior["agree"] == want.prior["agree"]
    # the target is the graded sphere where its fitted scores reach the boundary of good results, else the
    # good/bad sphere (here the fitted score at the centre, 2.56, stays on the bad side of 2.5)
    chosen = want.sphere if want.graded.r0 is None else want.graded
    assert (want.target.dD, want.target.r0) == (chosen.dD, chosen.r0)
    assert main(["fit", path, "--good-at-most", "2", "--graded", "--prior", PRIOR, "--next", "0", "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    _same(got["graded"], json.loads(json.dumps(want.to_dict()["graded"])))
    _same(got["prior"], json.loads(json.dumps(want.to_dict()["prior"])))


def test_graded_fit_errors_name_the_field(capsys):
    from solvsel.errors import InputError

    with pytest.raises(InputError) as exc:
        fit(path=str(EXAMPLES / "bench_extract.csv"), graded=True)
    assert exc.value.param == "graded"
    with pytest.raises(InputError) as exc:
        fit(path=str(EXAMPLES / "bench_extract.csv"), prior="C1")
    assert exc.value.param == "prior"
    assert main(["fit", str(EXAMPLES / "bench_extract.csv"), "--prior", "C1"]) == 2
    assert capsys.readouterr().err.startswith("solvsel: Bad input: --prior: ")
