"""The emulsion job gives the same answer from the library, the command line and the UI.

Densities, Stokes creaming, weighting fractions and the legal limits are checked
against published tables, worked examples and the regulations in
tests/test_emulsion.py; here the three doors are held to one answer.
"""

from __future__ import annotations

import asyncio
import json

import pytest

import solvsel
from solvsel.cli import main
from solvsel.errors import InputError

CASES = [
    # the README's lemon emulsion: 15 % SAIB in the oil phase, 1 in 500 into a 10.5 Brix drink, EU limits
    dict(oil=(("lemon oil", 55.0), ("medium-chain triglycerides", 30.0), ("sucrose acetate isobutyrate", 15.0)),
         brix=10.5, dilution=500.0, droplet_um=0.35, jurisdictions=("EU",)),
    # the example of the design: both jurisdictions, the oil phase of the concentrate at 12 %
    dict(oil=(("d-limonene", 70.0), ("sucrose acetate isobutyrate", 30.0)), brix=11.0, dilution=500.0,
         droplet_um=0.4, oil_phase=0.12, jurisdictions=("US", "EU")),
    # ester gum over its US limit at a strong dose (the command line exits with 2)
    dict(oil=(("d-limonene", 70.0), ("glycerol ester of wood rosin", 30.0)), brix=11.0, dilution=200.0,
         droplet_um=0.4, jurisdictions=("US",)),
    # the product's purpose: SAIB is authorised for the finished drink (21 CFR 172.833; Reg. (EC) No 1333/2008
    # Annex II), not as part of a flavouring, where the rules refuse it by name
    dict(oil=(("d-limonene", 70.0), ("sucrose acetate isobutyrate", 30.0)), brix=11.0, dilution=500.0,
         droplet_um=0.4, jurisdictions=("US", "EU"), purpose="finished_food"),
    dict(oil=(("d-limonene", 70.0), ("sucrose acetate isobutyrate", 30.0)), brix=11.0, dilution=500.0,
         droplet_um=0.4, jurisdictions=("US", "EU"), purpose="flavouring"),
]

#: Only the command line and the library: a size distribution, a given density and viscosity, the emulsifier.
MORE_CASES = [
    dict(oil=(("d-limonene", 100.0),), density=1.04, sizes=((0.3, 85.0), (0.8, 10.0), (1.5, 5.0)),
         viscosity_mPa_s=1.5, height_mm=150.0, shelf_days=90.0),
    dict(oil=(("d-limonene", 80.0), ("medium-chain triglycerides", 20.0)), brix=11.0, dilution=500.0,
         emulsifier="gum arabic", emulsifier_ratio=1.5, oil_phase=0.12, nano=True),
    # the drink's viscosity from the sucrose table at a storage temperature; the concentrate judged at its own
    dict(oil=(("orange oil", 100.0),), brix=10.5, dilution=250.0, droplet_um=0.4, temp_C=4.0,
         emulsifier="starch sodium octenyl succinate", concentrate_viscosity_mPa_s=35.0),
]


def _text(pairs) -> str:
    return ",".join(f"{k:g}={v:g}" if not isinstance(k, str) else f"{k}={v:g}" for k, v in pairs)


def _argv(case):
    argv = ["emulsion", "--oil", _text(case["oil"]), "--json"]
    options = {"brix": "--brix", "density": "--density", "dilution": "--dilution", "droplet_um": "--droplet-um",
               "viscosity_mPa_s": "--viscosity", "height_mm": "--height-mm", "shelf_days": "--shelf-days",
               "emulsifier_ratio": "--emulsifier-ratio", "temp_C": "--temp",
               "concentrate_viscosity_mPa_s": "--concentrate-viscosity"}
    for key, option in options.items():
        if key in case:
            argv += [option, f"{case[key]:g}"]
    if "oil_phase" in case:
        argv += ["--oil-phase", f"{case['oil_phase'] * 100:g}%"]
    if "jurisdictions" in case:
        argv += ["--jurisdiction", ",".join(case["jurisdictions"])]
    if "sizes" in case:
        argv += ["--sizes", _text(case["sizes"])]
    if "emulsifier" in case:
        argv += ["--emulsifier", case["emulsifier"]]
    if case.get("nano"):
        argv += ["--nano"]
    if case.get("purpose"):
        argv += ["--purpose", case["purpose"]]
    return argv


def _essentials(d):
    keys = ("beverage_density", "oil_phase_density", "density_difference", "oil_in_concentrate", "oil_in_drink_ppm",
            "agent_level_ppm", "agent_limit_ppm", "creaming_mm_per_day", "time_to_cream_days", "max_droplet_um",
            "ok", "refusals", "cautions", "viscosity_mPa_s", "viscosity_basis", "temp_C", "concentrate_viscosity_mPa_s",
            "concentrate_water_phase_density", "concentrate_creaming_mm_per_day", "concentrate_max_droplet_um")
    out = {k: d[k] for k in keys}
    out["agents"] = [(a["agent"], a["jurisdiction"], a["level_ppm"], a["limit_ppm"], a["rule"], a["ok"])
                     for a in d["agents"]]
    out["weighting"] = {j: [(o["agents"], o["fractions"], o["levels_ppm"], o["density"], o["matched"], o["legal"])
                            for o in opts] for j, opts in d["weighting"].items()}
    out["ripening"] = (d["ripening"]["warn"], d["ripening"]["reason"])
    out["distribution"] = d["distribution"]
    out["emulsifier"] = d["emulsifier"]
    out["purpose"] = d["purpose"]
    out["rules_applied"] = d["audit"]["rules_applied"]
    return json.loads(json.dumps(out))


@pytest.mark.parametrize("case", CASES + MORE_CASES)
def test_library_and_command_line_agree(case, capsys):
    lib = solvsel.emulsion(**case)
    code = main(_argv(case))
    captured = capsys.readouterr()
    assert code == (0 if lib.ok else 2)
    cli = json.loads(captured.out)
    assert _essentials(cli) == _essentials(lib.to_dict())
    # over a legal maximum: the command line names each refusal of the library on stderr
    assert all(r in captured.err for r in lib.refusals)


def test_the_over_limit_case_is_refused_by_the_rule():
    # 30 % ester gum in a 10 % oil phase dosed 1 in 200: 0.3 x 0.1 x 1e6 / 200 = 150 mg/kg in the drink, over the
    # US maximum of 100 ppm of the finished beverage (21 CFR 172.735)
    r = solvsel.emulsion(**CASES[2])
    assert r.agent_level_ppm == pytest.approx(150.0) and not r.ok
    assert any("21 CFR 172.735" in m for m in r.refusals)


def test_the_emulsion_screen_shows_the_library_answer():
    pytest.importorskip("textual")
    from textual.widgets import Input

    from solvsel.tui.app import create_app

    async def go():
        app = create_app(start="emulsion")
        async with app.run_test(size=(160, 45)) as pilot:
            await pilot.pause()
            for case in CASES:
                screen = app.screen
                fields = {"oil": _text(case["oil"]), "brix": f"{case['brix']:g}", "dilution": f"{case['dilution']:g}",
                          "oil-pct": f"{case.get('oil_phase', 0.10) * 100:g}%", "droplet": f"{case['droplet_um']:g}",
                          "jurisdiction": ", ".join(case["jurisdictions"])}
                for name, value in fields.items():
                    screen.query_one(f"#em-{name}", Input).value = value
                screen.query_one("#em-purpose").value = case.get("purpose", "none")
                await pilot.press("ctrl+r")
                await pilot.pause()
                assert screen.design is not None
                lib = solvsel.emulsion(**case).to_dict()
                assert _essentials(screen.design.to_dict()) == _essentials(lib)
                rows = sum(len(opts) for opts in lib["weighting"].values())
                assert screen.query_one("#em-weighting").row_count == rows
                assert set(lib["cautions"]) <= set(screen.query_one("#em-cautions").cautions)
            # a mistake opens the dialog with the field's label, not an option of the command line
            app.screen.query_one("#em-oil-pct", Input).value = "12"
            await pilot.press("ctrl+r")
            await pilot.pause()
            assert type(app.screen).__name__ == "ErrorDialog"
            assert app.screen.error_message.startswith("oil phase in the concentrate:")
            assert "--" not in app.screen.error_message

    asyncio.run(go())


def test_a_purpose_refuses_an_agent_its_rules_allow_only_for_another():
    # SAIB: 21 CFR 172.833 and Reg. (EC) No 1333/2008 Annex II allow it in the finished drink only
    drink, flavour = (solvsel.emulsion(**case) for case in CASES[3:5])
    assert drink.ok and not flavour.ok
    assert all("allows it for finished_food only" in m for m in flavour.refusals) and len(flavour.refusals) == 2


def test_a_bad_request_names_the_field(capsys):
    oil = (("d-limonene", 70.0), ("sucrose acetate isobutyrate", 30.0))
    with pytest.raises(InputError) as info:
        solvsel.EmulsionRequest(oil=oil, brix=11, density=1.04)
    assert info.value.param == "brix" and "one of the two" in info.value.message
    with pytest.raises(InputError) as info:
        solvsel.emulsion(oil=oil, brix=11, jurisdictions=("UK",))
    assert info.value.param == "jurisdictions"
    with pytest.raises(InputError) as info:
        solvsel.emulsion(oil=(("d-limonene", 70.0), ("d-limonene", 30.0)), brix=11)
    assert info.value.param == "oil" and "--" not in info.value.message
    with pytest.raises(InputError) as info:
        solvsel.emulsion(oil=oil, brix=90)
    assert info.value.param == "brix" and "sucrose density table" in info.value.message
    assert main(["emulsion", "--oil", _text(oil), "--brix", "11", "--viscosity", "-1"]) == 2
    assert "--viscosity: expected" in capsys.readouterr().err
    assert main(["emulsion", "--oil", _text(oil), "--brix", "11", "--sizes", "a=1"]) == 2
    assert "--sizes:" in capsys.readouterr().err
