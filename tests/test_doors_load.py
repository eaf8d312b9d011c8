"""The load check gives the same answer from the library and the command line, alone and inside ``rank``
(the UI view is not built yet).

``rank --load``: a carrier that splits at the load is marked with its largest load, for a liquid pair with a
measured window (tables/miscibility.csv: triacetin in the medium-chain triglycerides up to about 20 % by mass,
source practice_triacetin_mct); triacetin is given as the user's own solute, as a formulator would.
"""

from __future__ import annotations

import csv
import json

import pytest

from solvsel.cli import main
from solvsel.data.catalog import TABLES_DIR, load_catalog
from solvsel.jobs.load import load
from solvsel.jobs.rank import rank


@pytest.fixture(scope="module")
def own_solutes(tmp_path_factory):
    """A user's solutes file with triacetin (its HSP and properties as in the solvents table)."""
    t = load_catalog().solvent("triacetin")
    header = (TABLES_DIR / "solutes.csv").read_text(encoding="utf-8").splitlines()[0].split(",")
    row = dict.fromkeys(header, "")
    row.update(name="triacetin", cas=t.cas, category="other", dD_MPa05=t.dD, dP_MPa05=t.dP, dH_MPa05=t.dH,
               hsp_basis="measured", hsp_source="my bench", mw_g_mol=t.mw_g_mol, mp_C=t.mp_C,
               vm_cm3_mol=t.vm_cm3_mol, props_source="my bench")
    path = tmp_path_factory.mktemp("own") / "my_solutes.csv"
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=header)
        w.writeheader()
        w.writerow(row)
    return path


def test_load_job_and_cli_agree(capsys):
    lib = load(solute="triacetin", carrier=("medium-chain triglycerides",), load="30%").to_dict()
    assert main(["dissolves", "triacetin", "--in", "medium-chain triglycerides", "--load", "30%", "--json"]) == 0
    cli = json.loads(capsys.readouterr().out)
    for key in ("verdict", "basis", "largest_load", "limiting_temp_C", "points", "reason", "cautions"):
        assert cli[key] == json.loads(json.dumps(lib[key])), key
    assert cli["verdict"] == "no" and cli["largest_load"] == pytest.approx(0.20)


def test_rank_marks_a_carrier_that_splits_at_the_load(own_solutes, capsys):
    cat = load_catalog({"solutes": [own_solutes]})
    only = ("medium-chain triglycerides", "ethanol")
    lib = rank(solute="triacetin", only=only, load="30%", catalog=cat)
    mct = next(r for r in lib.results if r.name == "medium-chain triglycerides")
    assert mct.load["verdict"] == "no" and mct.load["largest_load"] == pytest.approx(0.20)
    assert mct.load["basis"] == "measured pair"
    assert any("cannot carry 30 %" in n and "20 %" in n for n in mct.notes)
    argv = ["--own-solutes", str(own_solutes), "rank", "--solute", "triacetin", "--only", ",".join(only),
            "--load", "30%", "--json"]
    assert main(argv) == 0
    cli = json.loads(capsys.readouterr().out)
    by_name = {r["name"]: r for r in cli["results"]}
    assert by_name["medium-chain triglycerides"]["load"] == json.loads(json.dumps(mct.load))
    # dropped instead of marked when asked
    dropped = rank(solute="triacetin", only=only, load="30%", drop_over_load=True, catalog=cat)
    assert "medium-chain triglycerides" not in [r.name for r in dropped.results]
    assert any(d.name == "medium-chain triglycerides" for d in dropped.dropped)


def test_blend_marks_blends_that_cannot_carry_the_load(capsys):
    from solvsel.jobs.blend import blend

    fields = dict(solute="cannabidiol", use="carrier", food=True, max_components=2, top=3, load="30%")
    lib = blend(**fields)
    assert len(lib.loads) == len(lib.results)
    for b, info in zip(lib.results, lib.loads):
        assert info["basis"].startswith("solid solubility")
        assert (info["verdict"] == "no") == any(n.startswith("cannot carry 30 %") for n in b.notes)
    argv = ["blend", "--solute", "cannabidiol", "--use", "carrier", "--food", "--max-components", "2", "--top", "3",
            "--load", "30%", "--json"]
    assert main(argv) == 0
    cli = json.loads(capsys.readouterr().out)
    assert [r["load"] for r in cli["results"]] == json.loads(json.dumps(list(lib.loads)))
