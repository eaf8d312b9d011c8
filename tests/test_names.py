"""One name, one substance, in every command.

Table-driven: each case names what it gives and the commands it is given to; every command is
run through its library job and the name it resolved to is read back from the answer.  The
expected names are the rows of the bundled tables (tables/solvents.csv: the ethanol-water
strengths are named "ethanol NN% v/v"; tables/oils.csv: "orange oil, cold-pressed", whose
``hsp_as`` is d-limonene).  A name only splitting words or a synonym list could match is refused
with the candidates in ``expected``.
"""

from __future__ import annotations

import json

import pytest

from solvsel.errors import UnknownNameError
from solvsel.jobs.blend import blend
from solvsel.jobs.dose import dose
from solvsel.jobs.emulsion import emulsion
from solvsel.jobs.hlb import hlb
from solvsel.jobs.miscible import miscible
from solvsel.jobs.rank import rank


# ----------------------------------------------------------------------------- how each command resolves a name


def _rank_solute(name):
    return rank(solute=name, top=1).target.name


def _rank_only(name):
    return rank(hsp=(17.0, 5.0, 10.0), only=(name,), top=1).results[0].name


def _blend_only(name):
    return blend(hsp=(17.0, 5.0, 10.0), only=(name,), max_components=1, top=1).results[0].names[0]


def _miscible(name):
    return miscible(liquids=(name, "triacetin")).pairs[0].liquids[0]


def _dose(name):
    r = dose(formula=((name, 100.0),), dose="0.1%", jurisdiction="EU", category="non-alcoholic beverages")
    return r.to_dict()["formula"]["components"][0]["name"]


def _hlb(name):
    return hlb(oil=((name, 100.0),)).to_dict()["oil_phase"][0]["name"]


def _emulsion(name):
    return emulsion(oil=((name, 100.0),), brix=10.5, dilution=5).to_dict()["oil_phase"][0]["name"]


COMMANDS = {"rank solute": _rank_solute, "rank only": _rank_only, "blend only": _blend_only,
            "miscible": _miscible, "dose": _dose, "hlb": _hlb, "emulsion": _emulsion}
LIQUID_COMMANDS = ("rank solute", "rank only", "blend only", "miscible", "dose")

#: (name given, the table's name expected, the commands it is given to)
RESOLVED = [
    ("orange oil", "orange oil, cold-pressed", tuple(COMMANDS)),
    ("sweet orange oil", "orange oil, cold-pressed", tuple(COMMANDS)),
    ("lemon oil", "lemon oil, cold-pressed", tuple(COMMANDS)),
    ("ethanol 96%", "ethanol 96% v/v", LIQUID_COMMANDS),
    ("96% ethanol", "ethanol 96% v/v", LIQUID_COMMANDS),
    ("ethanol 96 % v/v", "ethanol 96% v/v", LIQUID_COMMANDS),
    ("Ethanol 40 %vol", "ethanol 40% v/v", LIQUID_COMMANDS),
    ("ethanol 96% v/v", "ethanol 96% v/v", LIQUID_COMMANDS),
    ("PG", "propylene glycol", LIQUID_COMMANDS),
    ("1,2-propanediol", "propylene glycol", LIQUID_COMMANDS),
    ("hexane", "n-hexane", LIQUID_COMMANDS),
    ("limonene", "d-limonene", tuple(COMMANDS)),
]

#: (name given, a candidate the refusal must list, the commands it is given to)
REFUSED = [
    # only the reference library's synonym list reads these (as propene and as racemic limonene)
    ("propylene", "propylene glycol", ("rank solute", "rank only", "blend only", "miscible", "dose")),
    ("limonen", "d-limonene", ("rank solute", "rank only", "blend only", "miscible", "dose")),
    # a strength by mass: the strength rows are by volume
    ("ethanol 96% w/w", "ethanol 96% v/v", ("rank only", "miscible", "dose")),
]


@pytest.mark.parametrize("name, expected, command",
                         [(n, e, c) for n, e, cmds in RESOLVED for c in cmds])
def test_a_name_resolves_the_same_in_every_command(name, expected, command):
    assert COMMANDS[command](name) == expected


@pytest.mark.parametrize("name, candidate, command",
                         [(n, e, c) for n, e, cmds in REFUSED for c in cmds])
def test_a_loose_name_is_refused_with_candidates(name, candidate, command):
    with pytest.raises(UnknownNameError) as exc:
        COMMANDS[command](name)
    assert candidate in exc.value.suggestions
    if command != "dose":  # the dose job rebuilds the error from its name, kind and suggestions
        assert f"'{candidate}'" in exc.value.expected


# ----------------------------------------------------------------------------- words of a command line


def _cli_json(capsys, *argv):
    from solvsel.cli import main

    code = main([*argv, "--json"])
    return code, json.loads(capsys.readouterr().out)


@pytest.mark.parametrize("words, candidate", [
    (("d-limonene", "propylene", "glycol"), "propylene glycol"),
    (("ethanol", "96%", "water"), "ethanol 96% v/v"),
    (("medium-chain", "triglycerides", "ethanol"), "medium-chain triglycerides"),
])
def test_words_that_together_name_a_liquid_are_refused(capsys, words, candidate):
    code, doc = _cli_json(capsys, "miscible", *words)
    assert code == 2
    assert doc["error"]["kind"] == "unknown_name" and doc["error"]["suggestions"] == [candidate]
    assert candidate in doc["error"]["expected"]


@pytest.mark.parametrize("words, liquids", [
    (("d-limonene", "propylene glycol"), ["d-limonene", "propylene glycol"]),
    (("d-limonene,", "propylene", "glycol"), ["d-limonene", "propylene glycol"]),
    (("ethanol 96%", "water"), ["ethanol 96% v/v", "water"]),
])
def test_quoted_or_comma_separated_names_give_the_library_answer(capsys, words, liquids):
    code, doc = _cli_json(capsys, "miscible", *words)
    want = miscible(liquids=tuple(liquids)).to_dict()
    assert code == 0
    assert [p["liquids"] for p in doc["pairs"]] == [p["liquids"] for p in want["pairs"]]
    assert doc["pairs"][0]["liquids"] == liquids


def test_the_oil_taken_as_its_liquid_keeps_its_own_identity():
    """'orange oil' as a liquid: the oils table's CAS and density, d-limonene's HSP (tables/oils.csv)."""
    from solvsel.data.catalog import load_catalog

    cat = load_catalog()
    oil, lim = cat.solvent("orange oil"), cat.solvent("d-limonene")
    row = cat.find("oils", "orange oil")
    assert (oil.cas, oil.density_g_cm3) == (row["cas"], row["density_g_cm3"])
    assert (oil.dD, oil.dP, oil.dH) == (lim.dD, lim.dP, lim.dH)
    assert oil.roles == ()  # not listed for a food use: the solvents table lists d-limonene, not the oil
