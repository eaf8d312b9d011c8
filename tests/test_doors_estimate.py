"""The same structure estimate through every door: the library job, the command line and the terminal UI.

The molecule is d-limonene, ``CC1=CCC(CC1)C(=C)C``; each door must give the
library job's parameters, molar volume, groups, class and uncertainty.  The
estimate itself is checked against the tabulated value in ``tests/test_structure.py``
(17.2, 1.8, 4.3 MPa^0.5, Hansen 2007 Appendix A).
"""

from __future__ import annotations

import asyncio
import json

import pytest

pytest.importorskip("rdkit")

from solvsel.cli import main  # noqa: E402
from solvsel.jobs.estimate import EstimateRequest, estimate  # noqa: E402

SMILES = "CC1=CCC(CC1)C(=C)C"


@pytest.fixture(scope="module")
def library():
    return estimate(EstimateRequest(smiles=SMILES))


def _key(d: dict) -> tuple:
    return (d["smiles"], d["method"], d["chem_class"], [(g["name"], g["count"]) for g in d["groups"]],
            d["uncertainty"]["basis"])


def test_command_line_gives_the_library_estimate(library, capsys):
    assert main(["estimate", SMILES, "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    want = library.to_dict()
    assert (got["dD"], got["dP"], got["dH"], got["vm"]) == pytest.approx(
        (want["dD"], want["dP"], want["dH"], want["vm"]), rel=1e-12)
    assert _key(got) == _key(want)
    assert got == json.loads(json.dumps(want))


def test_terminal_ui_gives_the_library_estimate(library):
    from solvsel.tui.app import create_app

    async def go():
        app = create_app(start="target")
        async with app.run_test(size=(160, 45)) as pilot:
            await pilot.pause()
            screen = app.screen
            screen.query_one("#target-tabs").active = "from-smiles"
            await pilot.pause()
            screen.query_one("#smiles").value = SMILES
            screen.press("use-smiles")
            await pilot.pause()
            return screen.smiles_result, app.session.target

    result, target = asyncio.run(go())
    got, want = result.to_dict(), library.to_dict()
    assert (got["dD"], got["dP"], got["dH"], got["vm"]) == pytest.approx(
        (want["dD"], want["dP"], want["dH"], want["vm"]), rel=1e-12)
    assert _key(got) == _key(want)
    # the screen's target is the estimate, without a radius
    assert (target.dD, target.dP, target.dH) == pytest.approx((want["dD"], want["dP"], want["dH"]), rel=1e-12)
    assert target.basis == "estimated" and target.r0 is None


def test_same_error_from_every_door(capsys):
    from solvsel.errors import InputError

    with pytest.raises(InputError) as exc:
        estimate(smiles="C1CC((")
    assert exc.value.param == "smiles"
    assert main(["estimate", "C1CC(("]) == 2
    err = capsys.readouterr().err
    assert exc.value.message in err and "could not be read" in err
