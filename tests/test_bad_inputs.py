"""The bad-input corpus: every command and the library's jobs, given what a careless or hostile user gives.

Each command line is run in process through ``solvsel.cli.main`` and must

- exit with code 2 (a user's mistake), never raise (a traceback is a bug, exit code 1);
- say what was wrong in one paragraph on stderr that names the option, argument or file (and
  the row and column inside a file) and what was expected;
- with ``--json``, print ``{"error": {"kind", "param", "value", "expected", "file", "row", "column",
  "message"}}`` (the fields that apply) on stdout instead;
- leave every file of the user's as it was (hashed before and after).

The library's jobs given wrong types (None, a string where a number or True/False belongs, a
number where names belong) raise the project's own errors naming the request field, never a bare
TypeError.  Permission errors cannot happen to root (tests run as root in CI), so an unreadable
file or a read-only folder is simulated by making the open or the temporary file raise.

Cases marked ``xfail(strict=True)`` are faults found in files other than the readers and the
command-line layer (each names its file); they turn into errors once fixed there.
"""

from __future__ import annotations

import builtins
import errno
import hashlib
import json
import os
import subprocess
import sys
import tempfile
import warnings
from pathlib import Path

import pytest

import solvsel
from solvsel.cli import main
from solvsel.errors import SolvselError, SolvselNote

ROOT = Path(__file__).resolve().parents[1]
SOLVENTS = (ROOT / "tables" / "solvents.csv").read_text(encoding="utf-8").splitlines()
HEADER = SOLVENTS[0]
#: A liquid of the user's own: the ethanol row under another name, without CAS.
ROW = SOLVENTS[1].replace("ethanol,ethyl alcohol;alcohol;EtOH,64-17-5", "{name},,", 1)
SOLUTE_HEADER = "name,category,dD_MPa05,dP_MPa05,dH_MPa05,r0_MPa05,hsp_basis,hsp_source,props_source"
BENCH = "liquid,result\nethanol,bad\nacetone,good\nwater,bad\nn-hexane,bad\ntoluene,good\nbenzyl alcohol,good\n"
LONG = "x" * 5000


def own(*names: str, header: str = HEADER, sep: str = ",") -> str:
    rows = [ROW.format(name=n) for n in names]
    return "\n".join([header] + rows).replace(",", sep) + "\n"


def _own_files() -> dict[str, bytes | str]:
    """The user's own liquids tables: malformed in every way the catalog's reader checks."""
    good = ROW.format(name="house base").split(",")
    col = {h: i for i, h in enumerate(HEADER.split(","))}

    def with_cell(column, value, name="house base"):
        cells = ROW.format(name=name).split(",")
        cells[col[column]] = value
        return HEADER + "\n" + ",".join(cells) + "\n"

    return {
        "own_binary.csv": bytes(range(256)) * 8,
        "own_empty.csv": "",
        "own_blank_lines.csv": "\n\n  \n",
        "own_text.csv": "this is not a table at all\n",
        "own_semicolon_wrong.csv": own("house base", header=HEADER.replace("dD_MPa05", "dD"), sep=";"),
        "own_nan.csv": with_cell("dD_MPa05", "nan"),
        "own_inf.csv": with_cell("dP_MPa05", "inf"),
        "own_negative.csv": with_cell("dP_MPa05", "-1"),
        "own_huge_number.csv": with_cell("vm_cm3_mol", "1e308"),
        "own_dd_range.csv": with_cell("dD_MPa05", "99"),
        "own_word_number.csv": with_cell("bp_C", "hot"),
        "own_unit_in_cell.csv": with_cell("bp_C", "78 C"),
        "own_kelvin.csv": with_cell("bp_C", "351.5 K"),
        "own_bad_cas.csv": with_cell("cas", "64-17-4"),
        "own_bad_choice.csv": with_cell("flammable", "maybe"),
        "own_cost_fraction.csv": with_cell("cost_class", "2.5"),
        "own_spaces.csv": with_cell("name", " house base"),
        "own_missing_column.csv": HEADER.replace(",dD_MPa05", "") + "\n" + ",".join(
            c for i, c in enumerate(good) if i != col["dD_MPa05"]) + "\n",
        "own_unknown_column.csv": HEADER + ",colour\n" + ",".join(good) + ",red\n",
        "own_repeated_column.csv": HEADER + ",note\n" + ",".join(good) + ",again\n",
        "own_too_many_fields.csv": HEADER + "\n" + ",".join(good) + ",extra\n",
        "own_too_few_fields.csv": HEADER + "\n" + ",".join(good[:5]) + "\n",
        "own_duplicate.csv": own("house base", "House Base"),
        "own_unclosed_quote.csv": HEADER + "\n" + '"house base' + "," + ",".join(good[1:]) + "\n",
        "own_many_rows.csv": own(*(f"liquid {i}" for i in range(5001))),
    }


def _bench_files() -> dict[str, bytes | str]:
    return {
        "bench_binary.csv": b"\x00\x01liquid,result\x00\xff" * 50,
        "bench_empty.csv": "",
        "bench_comments.csv": "# nothing but a comment\n# and another\n",
        "bench_header.csv": "liquid,result\n",
        "bench_no_result.csv": "liquid\nethanol\n",
        "bench_unknown_column.csv": "liquid,outcome\nethanol,good\n",
        "bench_word.csv": "liquid,result\nethanol,maybe\nwater,bad\n",
        "bench_mixed.csv": "liquid,result\nethanol,good\nwater,3\n",
        "bench_duplicate.csv": "liquid,result\nethanol,good\n64-17-5,bad\n",
        "bench_unknown_liquid.csv": "liquid,result\nethanoll,good\nwater,bad\n",
        "bench_own_range.csv": "liquid,result,dD,dP,dH\nmine,good,37,3,4\nwater,bad,,,\n",
        "bench_own_partial.csv": "liquid,result,dD,dP,dH\nmine,good,17,3,\nwater,bad,,,\n",
        "bench_own_nan.csv": "liquid,result,dD,dP,dH\nmine,good,nan,3,4\nwater,bad,,,\n",
        "bench_nan_score.csv": "liquid,result\nethanol,nan\nwater,2\n",
        "bench_inf_score.csv": "liquid,result\nethanol,inf\nwater,2\n",
        "bench_weight_negative.csv": "liquid,result,weight\nethanol,good,-1\nwater,bad,1\n",
        "bench_weight_inf.csv": "liquid,result,weight\nethanol,good,inf\nwater,bad,1\n",
        "bench_blend_bad.csv": "liquid,result\nethanol:water=70,bad\nacetone,good\n",
        "bench_blend_negative.csv": "liquid,result\nethanol:water=-70:30,bad\nacetone,good\n",
        "bench_too_many_fields.csv": "liquid,result\nethanol,good,extra\n",
        "bench_few.csv": "liquid,result\nethanol,good\nwater,bad\n",
        "bench_all_good.csv": BENCH.replace(",bad", ",good"),
        "bench_semicolon_own.csv": "liquid;result;dD;dP;dH\nmine;good;17,5;3,2;47,5\nwater;bad;;;\n",
        "bench_huge_field.csv": "liquid,result\n" + "a" * 200_000 + ",good\n",
    }


def _formula_files() -> dict[str, bytes | str]:
    return {
        "formula_binary.csv": b"\x00\xff\xfe" * 30,
        "formula_empty.csv": "",
        "formula_header.csv": "name,mass_percent\n",
        "formula_too_many.csv": "name,mass_percent\npropylene glycol,90,extra,more\nvanillin,10\n",
        "formula_too_few.csv": "name,mass_percent,cas\npropylene glycol\nvanillin,10,121-33-5\n",
        "formula_no_name.csv": "component,mass_percent\npropylene glycol,90\n",
        "formula_both_bases.csv": "name,mass_percent,volume_percent\npropylene glycol,90,90\n",
        "formula_unknown_column.csv": "name,mass_percent,price\npropylene glycol,90,1\n",
        "formula_nan.csv": "name,mass_percent\npropylene glycol,nan\nvanillin,10\n",
        "formula_negative.csv": "name,mass_percent\npropylene glycol,-90\nvanillin,10\n",
        "formula_over.csv": "name,mass_percent\npropylene glycol,190\nvanillin,10\n",
        "formula_sum.csv": "name,mass_percent\npropylene glycol,95\nvanillin,10\n",
        "formula_word.csv": "name,mass_percent\npropylene glycol,ninety\nvanillin,10\n",
        "formula_empty_name.csv": "name,mass_percent\n,90\nvanillin,10\n",
        "formula_density.csv": "name,mass_percent,density_g_cm3\npropylene glycol,90,9.5\nvanillin,10,\n",
        "formula_unknown.csv": "name,mass_percent\npropylene glycool,90\nvanillin,10\n",
        "formula_twice.csv": "name,mass_percent\nvanillin,50\nvanillin,50\n",
        "formula_semicolon_wrong.csv": "name;percent\npropylene glycol;89,5\n",
        "formula_folder.csv/keep": "",
    }


def _other_files() -> dict[str, bytes | str]:
    return {
        "solutes_noeol.csv": SOLUTE_HEADER + "\nmy thing,other,17,5,5,,estimated,lab,lab",
        "solutes_not_a_table.csv": "a,b\n1,2\n",
        "smiles_binary.txt": b"\x00CCO\x00" * 20,
        "smiles_empty.txt": "# only a comment\n\n",
        "smiles_bad.txt": "C1CC\n",
        "adir/keep": "",
    }


@pytest.fixture(scope="module")
def corpus():
    """A folder of the user's files (cleaned up by the tmp folder machinery)."""
    base = Path(tempfile.mkdtemp(prefix="solvsel-corpus-"))
    for name, content in {**_own_files(), **_bench_files(), **_formula_files(), **_other_files()}.items():
        path = base / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(content if isinstance(content, bytes) else content.encode("utf-8"))
    with open(base / "own_oversized.csv", "wb") as fh:  # sparse: 21 MB on paper, nothing on disk
        fh.truncate(21 * 2**20)
    yield base


def snapshot(folder: Path) -> dict[str, str]:
    """Every file under ``folder`` by its hash (a large file by its size and first megabyte)."""
    out = {}
    for p in sorted(folder.rglob("*")):
        if p.is_file():
            with open(p, "rb") as fh:
                out[str(p.relative_to(folder))] = f"{p.stat().st_size}:" + hashlib.sha256(fh.read(2**20)).hexdigest()
    return out


def fill(argv, folder: Path) -> list[str]:
    return [a.replace("{d}", str(folder)).replace("{long}", LONG) for a in argv]


def case(*argv, says=(), xfail=None):
    """One bad command line; ``says``: texts the paragraph must hold (the option or file, what was expected)."""
    marks = [pytest.mark.xfail(strict=True, reason=xfail)] if xfail else []
    name = " ".join(a if len(a) < 40 else a[:20] + "..." for a in argv).replace("{d}/", "")
    return pytest.param(list(argv), tuple(says), id=name, marks=marks)


FORMULA = ["--formula", "propylene glycol=90,vanillin=10"]
DOSE = ["dose", *FORMULA, "--dose", "0.1%", "--jurisdiction", "EU"]
EMULSION = ["emulsion", "--oil", "d-limonene=100", "--brix", "11"]
HLB = ["hlb", "--oil", "d-limonene=70,medium-chain triglycerides=30"]
BLEND = ["blend", "--hsp", "17,5,8", "--only", "ethanol,water,triacetin,propylene glycol"]
RANK = ["rank", "--solute", "cannabidiol"]
FIT = ["fit", str(ROOT / "examples" / "bench_extract.csv"), "--next", "0"]

OWN_SOLVENTS_CASES = [
    case("--own-solvents", "{d}/own_binary.csv", "solvents", says=("--own-solvents", "own_binary.csv", "not a text file")),
    case("--own-solvents", "{d}/own_empty.csv", "solvents", says=("--own-solvents", "the file is empty", "header")),
    case("--own-solvents", "{d}/own_blank_lines.csv", "solvents", says=("own_blank_lines.csv", "empty")),
    case("--own-solvents", "{d}/own_text.csv", "solvents", says=("own_text.csv", "row 1", "missing column 'name'")),
    case("--own-solvents", "{d}/own_semicolon_wrong.csv", "solvents", says=("own_semicolon_wrong.csv", "row 1", "dD")),
    case("--own-solvents", "{d}/own_nan.csv", "solvents", says=("own_nan.csv", "row 2", "dD_MPa05", "finite")),
    case("--own-solvents", "{d}/own_inf.csv", "rank", "--hsp", "17,5,8", says=("own_inf.csv", "row 2", "dP_MPa05")),
    case("--own-solvents", "{d}/own_negative.csv", "solvents", says=("row 2", "dP_MPa05", "out of range", "0 <=")),
    case("--own-solvents", "{d}/own_huge_number.csv", "solvents", says=("row 2", "vm_cm3_mol", "out of range")),
    case("--own-solvents", "{d}/own_dd_range.csv", "solvents", says=("row 2", "dD_MPa05", "10 <= dD_MPa05 <= 25")),
    case("--own-solvents", "{d}/own_word_number.csv", "solvents", says=("row 2", "bp_C", "'hot' is not a number")),
    case("--own-solvents", "{d}/own_unit_in_cell.csv", "solvents", says=("row 2", "bp_C", "'78 C' is not a number")),
    case("--own-solvents", "{d}/own_kelvin.csv", "solvents", says=("row 2", "bp_C", "not a number")),
    case("--own-solvents", "{d}/own_bad_cas.csv", "solvents", says=("row 2", "column 'cas'", "check digit")),
    case("--own-solvents", "{d}/own_bad_choice.csv", "solvents", says=("row 2", "flammable", "not one of")),
    case("--own-solvents", "{d}/own_cost_fraction.csv", "solvents", says=("row 2", "cost_class", "whole number")),
    case("--own-solvents", "{d}/own_spaces.csv", "solvents", says=("row 2", "column 'name'", "spaces")),
    case("--own-solvents", "{d}/own_missing_column.csv", "solvents", says=("row 1", "missing column 'dD_MPa05'")),
    case("--own-solvents", "{d}/own_unknown_column.csv", "solvents", says=("row 1", "unknown column 'colour'")),
    case("--own-solvents", "{d}/own_repeated_column.csv", "solvents", says=("row 1", "'note' appears twice")),
    case("--own-solvents", "{d}/own_too_many_fields.csv", "solvents", says=("row 2", "expected 25 fields, found 26")),
    case("--own-solvents", "{d}/own_too_few_fields.csv", "solvents", says=("row 2", "found 5")),
    case("--own-solvents", "{d}/own_duplicate.csv", "solvents", says=("row 3", "column 'name'", "duplicate")),
    case("--own-solvents", "{d}/own_unclosed_quote.csv", "solvents", says=("own_unclosed_quote.csv",)),
    case("--own-solvents", "{d}/own_many_rows.csv", "solvents", says=("own_many_rows.csv", "5,001 rows", "at most 5,000")),
    case("--own-solvents", "{d}/own_oversized.csv", "solvents", says=("own_oversized.csv", "21 MB", "over 20 MB")),
    case("--own-solvents", "{d}/missing.csv", "solvents", says=("--own-solvents", "missing.csv", "no such file")),
    case("--own-solvents", "{d}/adir", "solvents", says=("--own-solvents", "adir", "is a folder")),
    case("--own-solvents", "/dev/zero", "solvents", says=("--own-solvents", "/dev/zero", "a device")),
    case("--own-solvents", "/proc/self/mem", "solvents", says=("--own-solvents", "/proc/self/mem", "cannot be read")),
    case("--own-solvents", "{d}/{long}.csv", "solvents", says=("--own-solvents", "...", "name too long")),
    case("--own-solvents", "", "solvents", says=("--own-solvents",)),
    case("--own-solutes", "{d}/own_binary.csv", "rank", "--solute", "x", says=("--own-solutes", "not a text file")),
    case("--own-solutes", "{d}/solutes_not_a_table.csv", "rank", "--solute", "x",
         says=("--own-solutes", "row 1", "missing column 'name'")),
    case("--own-solutes", "{d}/adir", "rank", "--solute", "x", says=("--own-solutes", "is a folder")),
]

FIT_CASES = [
    case("fit", "{d}/missing.csv", says=("BENCH_CSV", "missing.csv", "no such file")),
    case("fit", "{d}/adir", says=("BENCH_CSV", "is a folder")),
    case("fit", "/dev/zero", says=("BENCH_CSV", "/dev/zero", "a device")),
    case("fit", "/proc/self/mem", says=("BENCH_CSV", "/proc/self/mem", "cannot be read")),
    case("fit", "{d}/{long}", says=("BENCH_CSV", "name too long")),
    case("fit", "", says=("BENCH_CSV", "bench-results CSV")),
    case("fit", "{d}/bench_binary.csv", says=("bench_binary.csv", "not a text file")),
    case("fit", "{d}/bench_empty.csv", says=("bench_empty.csv", "empty")),
    case("fit", "{d}/bench_comments.csv", says=("bench_comments.csv", "empty")),
    case("fit", "{d}/bench_header.csv", says=("bench_header.csv", "no liquids")),
    case("fit", "{d}/bench_no_result.csv", says=("row 1", "missing column 'result'")),
    case("fit", "{d}/bench_unknown_column.csv", says=("row 1", "unknown column 'outcome'")),
    case("fit", "{d}/bench_word.csv", says=("row 2", "column 'result'", "'maybe' is not a result")),
    case("fit", "{d}/bench_mixed.csv", says=("row 3", "mix words")),
    case("fit", "{d}/bench_duplicate.csv", says=("row 3", "column 'liquid'", "same liquid as row 2")),
    case("fit", "{d}/bench_unknown_liquid.csv", says=("row 2", "column 'liquid'", "no liquid named 'ethanoll'")),
    case("fit", "{d}/bench_own_range.csv", says=("row 2", "column 'dD'", "outside 10-25")),
    case("fit", "{d}/bench_own_partial.csv", says=("row 2", "column 'dH'", "all three")),
    case("fit", "{d}/bench_own_nan.csv", says=("row 2", "column 'dD'")),
    case("fit", "{d}/bench_nan_score.csv", says=("row 2", "column 'result'", "finite")),
    case("fit", "{d}/bench_inf_score.csv", says=("row 2", "column 'result'", "finite")),
    case("fit", "{d}/bench_weight_negative.csv", says=("row 2", "column 'weight'", "positive")),
    case("fit", "{d}/bench_weight_inf.csv", says=("row 2", "column 'weight'", "positive")),
    case("fit", "{d}/bench_blend_bad.csv", says=("row 2", "column 'liquid'", "a blend is written")),
    case("fit", "{d}/bench_blend_negative.csv", says=("row 2", "column 'liquid'", "zero or positive")),
    case("fit", "{d}/bench_too_many_fields.csv", says=("row 2", "expected 2 fields, found 3")),
    case("fit", "{d}/bench_few.csv", says=("BENCH_CSV", "only 2 liquids")),
    case("fit", "{d}/bench_all_good.csv", says=("all 6 liquids are good",)),
    case("fit", "{d}/bench_semicolon_own.csv", says=("row 2", "column 'dH'", "47.5 is outside")),
    case("fit", "{d}/bench_huge_field.csv", says=("bench_huge_field.csv", "row 2")),
    case(*FIT, "--good-at-most", "nan", says=("--good-at-most", "expected a number")),
    case(*FIT, "--good-at-most", "1", "--good-at-least", "5", says=("--good-at-least", "not allowed with")),
    case(*FIT, "--partial-weight", "0", says=("--partial-weight", "above 0")),
    case(*FIT, "--partial-weight", "-inf", says=("--partial-weight",)),
    case(*FIT, "--lapse", "1", says=("--lapse", "not including) 1")),
    case(*FIT, "--lapse", "-0.1", says=("--lapse", "from 0")),
    case(*FIT, "--level", "0", says=("--level", "above 0")),
    case(*FIT, "--level", "1.5", says=("--level",)),
    case(*FIT, "--next", "-1", says=("--next", "at least 0")),
    case(*FIT, "--next", "2.5", says=("--next", "invalid int value")),
    case(*FIT, "--partial", "half", says=("--partial", "invalid choice")),
    case(*FIT, "--save-as", "x", says=("--into", "give both")),
    case(*FIT, "--into", "{d}/my.csv", says=("--save-as", "give both")),
    case(*FIT, "--save-as", " ", "--into", "{d}/my.csv", says=("--save-as", "a name")),
    case(*FIT, "--save-as", "x", "--into", "{d}/adir", says=("--into", "is a folder")),
    case(*FIT, "--save-as", "x", "--into", "{d}/nofolder/my.csv", says=("--into", "does not exist")),
    case(*FIT, "--save-as", "x", "--into", "{d}/own_binary.csv", says=("--into",)),
    case(*FIT, "--save-as", "my thing", "--into", "{d}/solutes_noeol.csv", says=("--save-as", "my thing")),
    case(*FIT, "--category", "snack", says=("--category", "invalid choice")),
]

ESTIMATE_CASES = [
    case("estimate", says=("SMILES", "give a SMILES")),
    case("estimate", "", says=("SMILES", "non-empty")),
    case("estimate", "C1CC", "--no-lookup", says=("SMILES", "'C1CC' could not be read")),
    case("estimate", "[Na+].[Cl-]", "--no-lookup", says=("SMILES", "2 separate components")),
    case("estimate", "CCO", "--method", "guess", says=("--method", "invalid choice")),
    case("estimate", "CCO", "--no-lookup", "--lookup-all", says=("--lookup-all", "contradict")),
    case("estimate", "CCO", "--exclude", "{d}/smiles_bad.txt", says=("--exclude", "go with a refit")),
    case("estimate", "CCO", "--refit", "{d}/p.csv", says=("--refit", "separate call")),
    case("estimate", "--refit", "{d}/nofolder/p.csv", says=("--refit", "does not exist")),
    case("estimate", "--refit", "{d}/p.txt", says=("--refit", ".csv")),
    case("estimate", "CCO", "--save-to", "{d}/s.csv", says=("--name", "needs a name")),
    case("estimate", "CCO", "--save-to", "{d}/adir", "--name", "x", "--no-lookup", says=("--save-to", "is a folder")),
    case("estimate", "CCO", "--save-to", "{d}/nofolder/s.csv", "--name", "x", "--no-lookup",
         says=("--save-to", "does not exist")),
    case("estimate", "CCO", "--save-to", "/dev/zero", "--name", "x", "--no-lookup", says=("--save-to", "a device")),
    case("estimate", "CCO", "--save-to", "-", "--name", "x", "--no-lookup", says=("--save-to", "name of a file")),
    case("estimate", "CCO", "--save-to", "{d}/{long}.csv", "--name", "x", "--no-lookup",
         says=("--save-to", "name too long")),
    case("estimate", "CCO", "--save-to", "{d}/solutes_noeol.csv", "--name", "x", "--no-lookup",
         says=("--save-to", "solutes_noeol.csv", "exists", "force")),
    case("estimate", "CCO", "--save-to", "{d}/solutes_noeol.csv", "--name", "my thing", "--no-lookup", "--force",
         says=("--name", "already has a solute named 'my thing'")),
    case("estimate", "CCO", "--save-to", "{d}/solutes_not_a_table.csv", "--name", "x", "--no-lookup", "--force",
         says=("--save-to", "not a solutes table")),
    case("estimate", "CCO", "--save-to", "{d}/own_binary.csv", "--name", "x", "--no-lookup", "--force",
         says=("--save-to", "not a text file")),
    case("estimate", "CCO", "Oc1ccccc1", "--save-to", "{d}/s.csv", "--name", "x", "--no-lookup",
         says=("--save-to", "exactly one SMILES")),
    case("estimate", "--file", "{d}/missing.txt", "--no-lookup", says=("--file", "no such file")),
    case("estimate", "--file", "{d}/adir", "--no-lookup", says=("--file", "is a folder")),
    case("estimate", "--file", "/dev/zero", "--no-lookup", says=("--file", "a device")),
    case("estimate", "--file", "{d}/smiles_binary.txt", "--no-lookup", says=("--file", "not a text file")),
    case("estimate", "--file", "{d}/smiles_empty.txt", "--no-lookup", says=("--file", "no SMILES")),
    case("estimate", "--file", "{d}/smiles_bad.txt", "--no-lookup", says=("SMILES", "'C1CC' could not be read")),
    case("estimate", "CCO", "--params", "{d}/missing.csv", "--no-lookup", says=("--params", "not found")),
    case("estimate", "CCO", "--params", "{d}/own_binary.csv", "--no-lookup", says=("--params",)),
    case("estimate", "CCO", "--category", "snack", says=("--category", "invalid choice")),
]

DOSE_CASES = [
    case("dose", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula", "required")),
    case("dose", *FORMULA, "--dose", "0.1%", says=("--jurisdiction", "required")),
    case(*DOSE[:-2], "--jurisdiction", "XX", says=("--jurisdiction", "invalid choice", "EU")),
    case("dose", "--formula", "", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula",)),
    case("dose", "--formula", "vanillin", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula", "NAME=AMOUNT")),
    case("dose", "--formula", "vanillin=abc", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula", "number")),
    case("dose", "--formula", "vanillin=nan", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula",)),
    case("dose", "--formula", "vanillin=-5", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula",)),
    case("dose", "--formula", "vanillin=150", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula", "100")),
    case("dose", "--formula", "vanillin=60,ethanol=60", "--dose", "0.1%", "--jurisdiction", "EU",
         says=("--formula", "more than 100")),
    case("dose", "--formula", "vanillinn=10", "--dose", "0.1%", "--jurisdiction", "EU",
         says=("--formula", "no", "vanillinn")),
    case("dose", "--formula", "=10", "--dose", "0.1%", "--jurisdiction", "EU", says=("--formula", "no name")),
    case(*DOSE[:4], "150%", *DOSE[5:], says=("--dose", "at most 100 %")),
    case(*DOSE[:4], "-1%", *DOSE[5:], says=("--dose",)),
    case(*DOSE[:4], "5", *DOSE[5:], says=("--dose", "mass fraction", "5%")),
    case(*DOSE[:4], "abc", *DOSE[5:], says=("--dose", "not an amount")),
    case(*DOSE[:4], "1e999%", *DOSE[5:], says=("--dose",)),
    case(*DOSE[:4], "0.1 kg", *DOSE[5:], says=("--dose", "not an amount")),
    case(*DOSE[:4], "3000g/L", *DOSE[5:], says=("--dose", "2500 g/L")),
    case("dose", *FORMULA, "--jurisdiction", "EU", says=("--dose", "give the dose")),
    case("dose", *FORMULA, "--chain", "drink 1+0", "--jurisdiction", "EU", says=("--chain", "1+0")),
    case("dose", *FORMULA, "--chain", ";;", "--jurisdiction", "EU", says=("--chain", "empty step")),
    case("dose", *FORMULA, "--chain", "syrup 0.5% d=9", "--jurisdiction", "EU", says=("--chain", "density")),
    case("dose", *FORMULA, "--chain", "syrup 0.5% d=x", "--jurisdiction", "EU", says=("--chain", "not a number")),
    case("dose", *FORMULA, "--chain", "syrup; drink 1+5v", "--jurisdiction", "EU", says=("--chain", "no amount")),
    case("dose", *FORMULA, "--chain", "syrup 0.5% dil=1.2", "--jurisdiction", "EU", says=("--chain", "dil=")),
    case(*DOSE, "--chain", "syrup 0.5%", says=("--chain", "a dose is also given")),
    case(*DOSE, "--category", "snacks of the moon", says=("--category", "no food category")),
    case(*DOSE, "--claim", "vegan-ish", says=("--claim", "no claim")),
    case(*DOSE, "--already", "x", says=("--already", "NAME=AMOUNT")),
    case(*DOSE, "--residue", "n-hexane=abc", says=("--residue", "number")),
    case(*DOSE, "--formula-density", "nan", says=("--formula-density", "0.3 to 2.5")),
    case(*DOSE, "--formula-density", "0", says=("--formula-density",)),
    case(*DOSE, "--by", "volume", says=("--formula", "density")),
    case(*DOSE, "--by", "weight", says=("--by", "invalid choice")),
    case("dose", "--formula", "{d}/formula_binary.csv", *DOSE[3:], says=("--formula", "not a text file")),
    case("dose", "--formula", "{d}/formula_empty.csv", *DOSE[3:], says=("--formula", "empty")),
    case("dose", "--formula", "{d}/formula_header.csv", *DOSE[3:], says=("--formula", "no components")),
    case("dose", "--formula", "{d}/formula_too_many.csv", *DOSE[3:], says=("--formula", "row 2", "found 4")),
    case("dose", "--formula", "{d}/formula_too_few.csv", *DOSE[3:], says=("--formula", "row 2", "found 1")),
    case("dose", "--formula", "{d}/formula_no_name.csv", *DOSE[3:], says=("--formula", "row 1", "'name'")),
    case("dose", "--formula", "{d}/formula_both_bases.csv", *DOSE[3:], says=("--formula", "row 1", "exactly one")),
    case("dose", "--formula", "{d}/formula_unknown_column.csv", *DOSE[3:], says=("--formula", "'price'")),
    case("dose", "--formula", "{d}/formula_nan.csv", *DOSE[3:], says=("--formula", "row 2", "mass_percent")),
    case("dose", "--formula", "{d}/formula_negative.csv", *DOSE[3:], says=("--formula", "row 2", "0-100")),
    case("dose", "--formula", "{d}/formula_over.csv", *DOSE[3:], says=("--formula", "row 2", "0-100")),
    case("dose", "--formula", "{d}/formula_sum.csv", *DOSE[3:], says=("--formula", "more than 100")),
    case("dose", "--formula", "{d}/formula_word.csv", *DOSE[3:], says=("--formula", "row 2", "'ninety'")),
    case("dose", "--formula", "{d}/formula_empty_name.csv", *DOSE[3:], says=("--formula", "row 2", "column 'name'")),
    case("dose", "--formula", "{d}/formula_density.csv", *DOSE[3:], says=("--formula", "row 2", "density_g_cm3")),
    case("dose", "--formula", "{d}/formula_unknown.csv", *DOSE[3:], says=("--formula", "propylene glycool")),
    case("dose", "--formula", "{d}/formula_twice.csv", *DOSE[3:], says=("--formula", "given twice")),
    case("dose", "--formula", "{d}/formula_semicolon_wrong.csv", *DOSE[3:], says=("--formula", "row 1")),
    case("dose", "--formula", "{d}/formula_folder.csv", *DOSE[3:], says=("--formula", "is a folder")),
    case("dose", "--formula", "{d}/missing.csv", *DOSE[3:], says=("--formula", "does not exist")),
]

RANK_CASES = [
    case("rank", says=("--solute", "no target")),
    case("rank", "--solute", "cannabidiool", says=("--solute", "no solute named 'cannabidiool'")),
    case("rank", "--solute", "", says=("--solute",)),
    case("rank", "--solute", "cannabidiol", "--hsp", "17,5,8", says=("--hsp", "not allowed with")),
    case("rank", "--hsp", "17,5", says=("--hsp", "dD,dP,dH")),
    case("rank", "--hsp", "a,b,c", says=("--hsp", "numbers")),
    case("rank", "--hsp", "nan,5,8", says=("--hsp", "finite")),
    case("rank", "--hsp", "99,0,0", says=("--hsp", "dD = 99")),
    case("rank", "--hsp", "17,5,8,-3", says=("--hsp",)),
    case("rank", "--smiles", "C1CC", says=("--smiles", "could not be read")),
    case("rank", "--like", "nosuch liquid", says=("--like", "no liquid named")),
    case(*RANK, "--temp", "nan", says=("--temp", "expected a number")),
    case(*RANK, "--temp", "inf", says=("--temp",)),
    case(*RANK, "--temp", "-300", says=("--temp", "-80")),
    case(*RANK, "--temp", "1e9", says=("--temp",)),
    case(*RANK, "--temp", "warm", says=("--temp", "invalid")),
    case(*RANK, "--temp", "40C", says=("--temp",)),
    case(*RANK, "--bp-range", "nan:nan", says=("--bp-range", "finite")),
    case(*RANK, "--bp-range", "100:40", says=("--bp-range", "low end")),
    case(*RANK, "--bp-range", "hot", says=("--bp-range", "LO:HI")),
    case(*RANK, "--bp-range", ":", says=("--bp-range", "at least one side")),
    case(*RANK, "--min-flash", "nan", says=("--min-flash",)),
    case(*RANK, "--max-cost", "0", says=("--max-cost", "1 to 5")),
    case(*RANK, "--max-cost", "99", says=("--max-cost", "1 to 5")),
    case(*RANK, "--top", "-1", says=("--top", "at least 1")),
    case(*RANK, "--top", "0", says=("--top",)),
    case(*RANK, "--top", "x", says=("--top", "invalid int value")),
    case(*RANK, "--only", "ethanol", "--exclude", "ethanol", says=("--exclude", "both")),
    case(*RANK, "--only", "ethanol,nosuch liquid", says=("--only", "nosuch liquid")),
    case(*RANK, "--only", "", says=("--only",)),
    case(*RANK, "--use", "cooking", says=("--use", "invalid choice")),
    case(*RANK, "--jurisdiction", "XX", says=("--jurisdiction", "invalid choice")),
    case(*RANK, "--worst-hazard", "9", says=("--worst-hazard", "invalid choice")),
    case(*RANK, "--dose", "0.1%", says=("--category",)),
    case(*RANK, "--dose", "150%", "--category", "beverages", "--jurisdiction", "EU", says=("--dose", "100 %")),
    case(*RANK, "--category", "moon food", "--dose", "0.1%", "--jurisdiction", "EU", says=("--category", "no food")),
]

BLEND_CASES = [
    case(*BLEND, "--max-components", "0", says=("--max-components", "1 to 4")),
    case(*BLEND, "--max-components", "5", says=("--max-components", "1 to 4")),
    case(*BLEND, "--max-components", "2.7", says=("--max-components", "invalid int")),
    case(*BLEND, "--min-fraction", "2", says=("--min-fraction",)),
    case(*BLEND, "--min-fraction", "-1", says=("--min-fraction",)),
    case(*BLEND, "--fraction", "ethanol<=2", says=("--fraction", "between 0 and 1")),
    case(*BLEND, "--fraction", "0.3>=ethanol", says=("--fraction", "name on the left")),
    case(*BLEND, "--fraction", "ethanol", says=("--fraction", "NAME<=X")),
    case(*BLEND, "--fraction", "water>=0.6", "--fraction", "ethanol>=0.6", says=("--fraction", "add up to 1.2")),
    case(*BLEND, "--reject", "nosuch solute", says=("--reject", "no solute named")),
    case(*BLEND, "--reject-hsp", "1,2", says=("--reject-hsp",)),
    case(*BLEND, "--temp", "500", says=("--temp",)),
    case(*BLEND, "--top", "0", says=("--top", "at least 1")),
    case(*BLEND, "--sort", "price", says=("--sort", "invalid choice")),
    case("blend", "--hsp", "17,5,8", "--only", "ethanol", "--exclude", "ethanol", says=("--exclude", "both")),
    case("blend", "--hsp", "17,5,8", "--only", "", says=("--only",)),
]

MISCIBLE_CASES = [
    case("miscible", says=("LIQUID", "required")),
    case("miscible", "water", says=("LIQUID", "at least two")),
    case("miscible", "water", "nosuch liquid", says=("LIQUID", "no liquid named 'nosuch liquid'")),
    case("miscible", "water", "", says=("LIQUID",)),
    case("miscible", "water", "ethanol", "--temp", "nan", says=("--temp",)),
    case("miscible", "water", "ethanol", "--temp", "1e9", says=("--temp",)),
    case("miscible", "water", "ethanol", "--fractions", "nan,1", says=("--fractions",)),
    case("miscible", "water", "ethanol", "--fractions", "0.5", says=("--fractions", "2 numbers")),
    case("miscible", "water", "ethanol", "--fractions", "0.5,0.6", says=("--fractions", "sum to 1")),
    case("miscible", "water", "ethanol", "--fractions", "-0.5,1.5", says=("--fractions",)),
    case("miscible", "water", "ethanol", "--bridge", "--fractions", "0.5,0.5", says=("--fractions", "not both")),
    case("miscible", "water", "ethanol", "acetone", "--bridge", says=("--bridge", "two liquids")),
    case("miscible", "water", "ethanol", "--food", says=("--food", "bridging")),
]

HLB_CASES = [
    case("hlb", says=("--oil", "nothing to do")),
    case("hlb", "--oil", "d-limonene", says=("--oil", "NAME=AMOUNT")),
    case("hlb", "--oil", "nosuch oil=100", says=("--oil", "nosuch oil")),
    case("hlb", "--oil", "d-limonene=-70", says=("--oil",)),
    case(*HLB, "--min-fraction", "-1", says=("--min-fraction", "0 to 1")),
    case(*HLB, "--top", "-1", says=("--top", "at least 0")),
    case(*HLB, "--emulsifiers", "nosuch emulsifier", says=("--emulsifiers", "nosuch emulsifier")),
    case(*HLB, "--jurisdiction", "XX", says=("--jurisdiction", "EU")),
    case("hlb", "--target", "99", says=("--target", "0 to 40")),
    case("hlb", "--target", "nan", says=("--target",)),
    case("hlb", "--smiles", "C1CC", says=("--smiles", "not a valid SMILES")),
    case("hlb", "--series", "polysorbate 80", says=("--series", "two emulsifiers")),
    case("hlb", "--series", "sorbitan monooleate,polysorbate 80", "--n", "0", says=("--n",)),
    case("hlb", "--series", "sorbitan monooleate,polysorbate 80", "--span", "x", says=("--span",)),
    case("hlb", "--series", "sorbitan monooleate,polysorbate 80", "--batch-g", "-5", says=("--batch-g",)),
    case("hlb", "--scores", "5=x", says=("--scores", "number")),
]

EMULSION_CASES = [
    case("emulsion", "--oil", "d-limonene=100", says=("--brix", "required")),
    case("emulsion", "--oil", "d-limonene=100", "--brix", "11", "--density", "1.04", says=("--density", "not allowed")),
    case(*EMULSION[:4], "-5", says=("--brix", "at least 0")),
    case(*EMULSION[:4], "95", says=("--brix", "0 to 60")),
    case(*EMULSION[:4], "nan", says=("--brix",)),
    case(*EMULSION[:4], "11Bx", says=("--brix", "invalid float")),
    case("emulsion", "--oil", "d-limonene=100", "--density", "5", says=("--density", "0.95-1.4")),
    case("emulsion", "--oil", "nosuch oil=100", "--brix", "11", says=("--oil", "nosuch oil")),
    case(*EMULSION, "--dilution", "0", says=("--dilution", "at least 1")),
    case(*EMULSION, "--dilution", "-500", says=("--dilution",)),
    case(*EMULSION, "--oil-phase", "150%", says=("--oil-phase", "100 %")),
    case(*EMULSION, "--oil-phase", "0", says=("--oil-phase",)),
    case(*EMULSION, "--droplet-um", "-1", says=("--droplet-um", "above 0")),
    case(*EMULSION, "--droplet-um", "nan", says=("--droplet-um",)),
    case(*EMULSION, "--sizes", "0.3=x", says=("--sizes",)),
    case(*EMULSION, "--viscosity", "0", says=("--viscosity",)),
    case(*EMULSION, "--height-mm", "-1", says=("--height-mm",)),
    case(*EMULSION, "--shelf-days", "0", says=("--shelf-days", "above 0")),
    case(*EMULSION, "--jurisdiction", "XX", says=("--jurisdiction", "EU and/or US")),
    case(*EMULSION, "--category", "moon food", says=("--category", "no food category")),
    case(*EMULSION, "--oil-density", "d-limonene=9", says=("--oil-density",)),
    case(*EMULSION, "--emulsifier", "nosuch gum", says=("--emulsifier", "nosuch gum")),
    case(*EMULSION, "--emulsifier-ratio", "-1", says=("--emulsifier-ratio",)),
]

SOLVENTS_TABLE_CASES = [
    case("solvents", "--where", "(" * 3000 + "dH > 1" + ")" * 3000, says=("--where", "nested more than 50")),
    case("solvents", "--where", "not " * 3000 + "dH > 1", says=("--where", "nested more than 50")),
    case("solvents", "--where", "(dH > 1", says=("--where", "missing ')'")),
    case("solvents", "--where", "dQ > 1", says=("--where", "unknown column 'dQ'")),
    case("solvents", "--where", "dH >", says=("--where", "value after")),
    case("solvents", "--where", "dH > 'x'", says=("--where", "holds numbers")),
    case("solvents", "--where", "name < 5", says=("--where", "holds text")),
    case("solvents", "--where", "__import__('os').system('true')", says=("--where",)),
    case("solvents", "--where", "dH > 1 and", says=("--where",)),
    case("solvents", "--where", "dH ~ 1", says=("--where", "cannot read")),
    case("solvents", "--where", "", says=("--where", "expected some text")),
    case("solvents", "--where", "x" * 5000, says=("--where", "unknown column")),
    case("solvents", "--sort", "", says=("--sort", "expected some text")),
    case("solvents", "--sort", "-", says=("--sort",)),
    case("solvents", "--sort", "colour", says=("--sort", "unknown column 'colour'")),
    case("solvents", "--top", "0", says=("--top", "at least 1")),
    case("solvents", "--top", "-1", says=("--top", "at least 1")),
    case("solvents", "--search", "", says=("--search", "expected some text")),
    case("solvents", "--role", "cooking", says=("--role", "invalid choice")),
    case("table", "nonesuch", says=("no table named 'nonesuch'",)),
    case("table", "", says=("no table named",)),
    case("table", "solvents", "--width", "0", says=("--width", "at least 2")),
    case("table", "solvents", "--width", "-5", says=("--width",)),
    case("table", "solvents", "--columns", "zz", says=("--columns", "no column 'zz'")),
    case("table", "solvents", "--columns", "", says=("--columns", "names")),
]

REPORT_DEMO_CASES = [
    case("report", says=("OUT.md", "required")),
    case("report", "{d}/r.md", says=("COMMAND", "give the command")),
    case("report", "", "solvents", says=("OUT.md", "name of a file")),
    case("report", "{d}/adir", "solvents", says=("OUT.md", "is a folder")),
    case("report", "{d}/nofolder/r.md", "solvents", says=("OUT.md", "does not exist")),
    case("report", "{d}/{long}.md", "solvents", says=("OUT.md", "name too long")),
    case("report", "/dev/zero", "solvents", says=("OUT.md", "a device")),
    case("report", "{d}/r.md", "report", "{d}/s.md", "solvents", says=("COMMAND", "give the command")),
    case("report", "{d}/r.md", "demo", says=("COMMAND",)),
    case("report", "{d}/r.md", "rank", "--solute", "nosuch solute", says=("--solute", "no solute named")),
    case("report", "{d}/r.md", "--force", "rank", "--top", "x", says=("--top", "invalid int")),
    case("report", "{d}/r.md", "nosuch", says=("COMMAND", "invalid choice")),
    case("rnk", says=("COMMAND", "invalid choice: 'rnk'")),
    case("rank", "--nosuch", says=("unknown argument --nosuch", "solvsel rank --help")),
    case("--own-solvents", says=("--own-solvents", "expected one argument")),
]

#: Commands without --json (the JSON form of their errors is that of the unknown argument --json).
TEXT_ONLY_CASES = [
    case("demo", "--step", "0", says=("--step", "1 to 10")),
    case("demo", "--step", "99", says=("--step", "1 to 10")),
    case("demo", "--step", "-1", says=("--step", "1 to 10")),
    case("demo", "--step", "x", says=("--step", "invalid int")),
]

CLI_CASES = (OWN_SOLVENTS_CASES + FIT_CASES + ESTIMATE_CASES + DOSE_CASES + RANK_CASES + BLEND_CASES
             + MISCIBLE_CASES + HLB_CASES + EMULSION_CASES + SOLVENTS_TABLE_CASES + REPORT_DEMO_CASES)


def _run(argv, corpus, capsys):
    before = snapshot(corpus)
    rc = main(fill(argv, corpus))
    out, err = capsys.readouterr()
    assert snapshot(corpus) == before, "a file of the user's was changed"
    return rc, out, err


@pytest.mark.parametrize("argv, says", CLI_CASES + TEXT_ONLY_CASES)
def test_refused_in_one_paragraph(corpus, capsys, argv, says):
    rc, out, err = _run(argv, corpus, capsys)
    assert rc == 2
    said = [ln for ln in err.splitlines() if ln.strip() and not ln.startswith(("solvsel: note:", "..."))]
    assert len(said) == 1 and said[0].startswith("solvsel: "), err
    for text in says:
        assert text in said[0], f"{text!r} not in {said[0]!r}"
    assert "Traceback" not in err


@pytest.mark.parametrize("argv, says", CLI_CASES)
def test_refused_as_json(corpus, capsys, argv, says):
    rc, out, err = _run(argv + ["--json"], corpus, capsys)
    assert rc == 2
    error = json.loads(out)["error"]
    assert set(error) <= {"kind", "param", "value", "expected", "file", "row", "column", "message", "suggestions"}
    assert error["kind"] and error["message"] and "\n" not in error["message"]
    for text in says:
        assert text in error["message"], f"{text!r} not in {error['message']!r}"
    if error["kind"] != "usage":  # an unknown argument names no option
        assert error.get("param") or error.get("file"), error
    if "param" in error:
        assert error["param"].startswith("--") or error["param"][0].isupper(), "named by its option or metavar"
    assert not err.strip() or all(ln.startswith("solvsel: note:") for ln in err.strip().splitlines())


# ----------------------------------------------------------------------------- the library's jobs

def lib(job, param, xfail=None, **fields):
    """A job called with a field of the wrong type or value: its own error, naming ``param``."""
    marks = [pytest.mark.xfail(strict=True, reason=xfail)] if xfail else []
    name = f"{job}(" + ", ".join(f"{k}={v!r}"[:40] for k, v in fields.items()) + ")"
    return pytest.param(job, fields, param, id=name, marks=marks)


CBD = {"solute": "cannabidiol"}
TYPED = {"hsp": (17.5, 6.0, 10.0), "only": ("ethanol", "water", "triacetin")}
OIL = {"oil": {"d-limonene": 70, "medium-chain triglycerides": 30}}
DRINK = {"oil": {"d-limonene": 100}, "brix": 11}
FORMULA_EU = {"formula": "propylene glycol=90,vanillin=10", "dose": "0.15%", "jurisdiction": "EU"}
BENCH_FILE = {"path": str(ROOT / "examples" / "bench_extract.csv"), "next_tests": 0}
LIQUIDS = {"liquids": ("water", "ethanol")}

LIBRARY_CASES = [
    lib("rank", "solute", solute=5),
    lib("rank", "hsp", hsp="17,5,8"),
    lib("rank", "hsp", hsp=-1),
    lib("rank", "solute", hsp=None, solute=None),
    lib("rank", "temp_C", temp_C=None, **CBD),
    lib("rank", "temp_C", temp_C="warm", **CBD),
    lib("rank", "temp_C", temp_C=float("nan"), **CBD),
    lib("rank", "top", top="ten", **CBD),
    lib("rank", "top", top=2.7, **CBD),
    lib("rank", "jurisdiction", jurisdiction="XX", **CBD),
    lib("rank", "only", only=("ethanol", None), **CBD),
    lib("rank", "only", only=5, **CBD),
    lib("rank", "max_cost", max_cost=0, **CBD),
    lib("rank", "food", food="no", **CBD),
    lib("rank", "nosuch", nosuch=1, **CBD),
    lib("blend", "max_components", max_components=2.7, **TYPED),
    lib("blend", "max_components", max_components="three", **TYPED),
    lib("blend", "jurisdiction", jurisdiction="XX", **TYPED),
    lib("blend", "min_fraction", min_fraction=-1, **TYPED),
    lib("blend", "hsp", **{**TYPED, "hsp": -1}),
    lib("blend", "bounds", bounds=2.7, **TYPED),
    lib("blend", "reject_hsp", reject_hsp=2.7, **TYPED),
    lib("blend", "already", already=2.7, dose="0.1%", category="beverages", jurisdiction="EU", **TYPED),
    lib("miscible", "liquids", liquids="water"),
    lib("miscible", "liquids", liquids=None),
    lib("miscible", "liquids", liquids=("water", None)),
    lib("miscible", "liquids", liquids=("water", 7)),
    lib("miscible", "liquids", liquids=("water", "nosuch liquid")),
    lib("miscible", "temp_C", temp_C=None, **LIQUIDS),
    lib("miscible", "temp_C", temp_C="hot", **LIQUIDS),
    lib("miscible", "fractions", fractions="0.5,0.5", **LIQUIDS),
    lib("miscible", "fractions", fractions=(0.5, None), **LIQUIDS),
    lib("miscible", "bridge", bridge="yes", **LIQUIDS),
    lib("miscible", "food", food=1, bridge=True, **LIQUIDS),
    lib("hlb", "oil", oil=None),
    lib("hlb", "target", target="x"),
    lib("hlb", "oil", target=None, oil="d-limonene=70"),
    lib("hlb", "top", top="x", target=12),
    lib("hlb", "min_fraction", min_fraction=-1, **OIL),
    lib("hlb", "jurisdictions", jurisdictions="XX", **OIL),
    lib("emulsion", "brix", **{**DRINK, "brix": None}),
    lib("emulsion", "brix", **{**DRINK, "brix": "x"}),
    lib("emulsion", "oil", **{**DRINK, "oil": None}),
    lib("emulsion", "jurisdictions", jurisdictions="XX", **DRINK),
    lib("emulsion", "dilution", dilution=-5, **DRINK),
    lib("emulsion", "nano", nano="no", **DRINK),
    lib("dose", "jurisdiction", **{**FORMULA_EU, "jurisdiction": "XX"}),
    lib("dose", "formula", **{**FORMULA_EU, "formula": None}),
    lib("dose", "formula", **{**FORMULA_EU, "formula": 5}),
    lib("dose", "dose", **{**FORMULA_EU, "dose": None}),
    lib("dose", "dose", **{**FORMULA_EU, "dose": 5}),
    lib("dose", "dose", **{**FORMULA_EU, "dose": "abc"}),
    lib("dose", "chain", chain="drink 1+0", **{**FORMULA_EU, "dose": None}),
    lib("dose", "formula_density", formula_density="heavy", **FORMULA_EU),
    lib("fit", "path", path=None),
    lib("fit", "path", path=5),
    lib("fit", "path", path=str(ROOT / "nosuch.csv")),
    lib("fit", "next_tests", **{**BENCH_FILE, "next_tests": "x"}),
    lib("fit", "next_tests", **{**BENCH_FILE, "next_tests": 2.7}),
    lib("fit", "lapse", lapse=None, **BENCH_FILE),
    lib("fit", "food", food="no", **BENCH_FILE),
    lib("fit", "two_spheres", two_spheres="yes", **BENCH_FILE),
    lib("fit", "good_at_most", good_at_most="low", **BENCH_FILE),
    lib("estimate", "smiles", smiles=5),
    lib("estimate", "smiles", smiles=("CCO", None)),
    lib("estimate", "smiles", smiles=b"CCO"),
    lib("estimate", "lookup", smiles="CCO", lookup="no"),
    lib("estimate", "force", smiles="CCO", force="yes"),
    lib("estimate", "method", smiles="CCO", method="guess"),
    lib("estimate", "file", file=5),
    lib("estimate", "save_to", smiles="CCO", save_to="", name="x"),
]


@pytest.mark.parametrize("job, fields, param", LIBRARY_CASES)
def test_library_jobs_raise_their_own_errors(job, fields, param):
    with pytest.raises(SolvselError) as caught:
        getattr(solvsel, job)(**fields)
    assert caught.value.param == param
    assert "\n" not in caught.value.describe()


# ----------------------------------------------------------------------------- what a reader accepts, with a note

def _own_search(capsys, path, name="house base"):
    """``solvsel --own-solvents PATH solvents --search NAME --json``: the rows found and the notes on stderr."""
    rc = main(["--own-solvents", str(path), "solvents", "--search", name, "--json"])
    out, err = capsys.readouterr()
    assert rc == 0, err
    return [r["name"] for r in json.loads(out)], err


@pytest.mark.parametrize("encoding, newline, bom, note", [
    ("utf-8", "\n", b"", None),
    ("utf-8", "\r\n", b"\xef\xbb\xbf", None),  # Excel's "CSV UTF-8": a byte-order mark, CRLF
    ("utf-16", "\r\n", b"", None),  # Excel's "Unicode text" (with its byte-order mark)
    ("cp1252", "\r\n", b"", "Windows-1252"),  # Excel's plain "CSV" on Windows
    ("latin-1", "\n", b"", "Windows-1252"),  # the same bytes for these characters
])
def test_own_table_in_every_encoding_a_spreadsheet_saves(tmp_path, capsys, encoding, newline, bom, note):
    path = tmp_path / "mine.csv"
    path.write_bytes(bom + own("crème brûlée base").replace("\n", newline).encode(encoding))
    names, err = _own_search(capsys, path, "brûlée")
    assert names == ["crème brûlée base"]
    if note:
        assert f"solvsel: note: {path} is not UTF-8 text; it was read as {note}" in err
    else:
        assert "note" not in err


def test_semicolons_and_decimal_commas_are_read_with_a_note(tmp_path, capsys):
    """A spreadsheet set to a decimal comma saves ';' between fields (fields holding ';' are quoted)."""
    import csv
    import io

    buf = io.StringIO()
    w = csv.writer(buf, delimiter=";", lineterminator="\r\n")
    for row in csv.reader([HEADER, ROW.format(name="house base")]):
        w.writerow([c.replace(".", ",") if c.replace(".", "", 1).lstrip("-").isdigit() else c for c in row])
    path = tmp_path / "mine.csv"
    path.write_text(buf.getvalue(), encoding="utf-8")
    assert "15,8" in buf.getvalue() and '"carrier;extraction;bench"' in buf.getvalue()
    rc = main(["--own-solvents", str(path), "solvents", "--search", "house base", "--json"])
    out, err = capsys.readouterr()
    assert rc == 0, err
    assert json.loads(out)[0]["dD"] == 15.8 and json.loads(out)[0]["density"] == 0.7852
    assert "decimal commas" in err and str(path) in err


def test_header_only_own_table_adds_nothing(corpus, capsys):
    path = corpus / "own_header_only.csv"
    path.write_text(HEADER + "\n", encoding="utf-8")
    try:
        assert main(["--own-solvents", str(path), "solvents", "--json"]) == 0
        assert len(json.loads(capsys.readouterr().out)) == len(SOLVENTS) - 1
    finally:
        path.unlink()


# ----------------------------------------------------------------------------- stdin and stdout

@pytest.fixture
def stdin(monkeypatch):
    def feed(data: bytes | str):
        raw = data if isinstance(data, bytes) else data.encode("utf-8")
        monkeypatch.setattr(sys, "stdin", __import__("io").TextIOWrapper(__import__("io").BytesIO(raw)))
    return feed


def test_fit_reads_the_bench_file_from_stdin(stdin, capsys):
    stdin(BENCH.replace("ethanol,bad", "ethanol,bad,trüb").replace("liquid,result", "liquid,result,note")
          .replace(",good\n", ",good,\n").replace(",bad\n", ",bad,\n").encode("cp1252"))
    assert main(["fit", "-", "--next", "0", "--json"]) == 0
    out, err = capsys.readouterr()
    assert json.loads(out)["input"]["file"] == "standard input"
    assert "standard input is not UTF-8 text" in err


def test_own_solvents_and_smiles_from_stdin(stdin, capsys):
    stdin(own("house base"))
    assert _own_search(capsys, "-")[0] == ["house base"]
    stdin("CCO ethanol\n# a comment\nOc1ccccc1\n")
    assert main(["estimate", "-", "--no-lookup", "--json"]) == 0
    assert [d["smiles"] for d in json.loads(capsys.readouterr().out)] == ["CCO", "Oc1ccccc1"]
    stdin("CCO\n")
    assert main(["estimate", "--file", "-", "--no-lookup", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["smiles"] == "CCO"


def test_stdin_that_never_ends_is_refused(stdin, capsys, monkeypatch):
    monkeypatch.setattr(sys, "stdin", open("/dev/zero", "rb"))
    try:
        assert main(["fit", "-"]) == 2
    finally:
        sys.stdin.close()
    assert "standard input: holds more than 20 MB" in capsys.readouterr().err


def test_dose_formula_from_stdin(stdin, capsys):
    stdin("name,mass_percent\npropylene glycol,90\nvanillin,10\n")
    assert main(["dose", "--formula", "-", "--dose", "0.1%", "--jurisdiction", "EU", "--json"]) == 0


def test_report_to_stdout_writes_no_file(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(["report", "-", "solvents", "--top", "2"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("# solvsel solvents --top 2") and "## Sources" in out and "ethanol" in out
    assert list(tmp_path.iterdir()) == []


# ----------------------------------------------------------------------------- saving into the user's files

def _save(path, name, *more):
    return main(["estimate", "CCO", "--save-to", str(path), "--name", name, "--no-lookup", "--category", "other",
                 *more])


@pytest.mark.parametrize("newline, encoding", [("\n", "utf-8"), ("\r\n", "utf-8-sig"), ("\r\n", "cp1252")])
def test_save_to_a_file_without_final_newline_adds_a_whole_row(tmp_path, capsys, newline, encoding):
    path = tmp_path / "mine.csv"
    old = (SOLUTE_HEADER + newline + "my thing,other,17,5,5,,estimated,labo café,lab").replace("\n", newline)
    path.write_bytes(old.encode(encoding))
    assert _save(path, "ethanol estimate") == 2  # exists: not without force
    assert path.read_bytes() == old.encode(encoding)
    assert "exists" in capsys.readouterr().err
    assert _save(path, "ethanol estimate", "--force") == 0
    capsys.readouterr()
    new = path.read_bytes()
    assert new.startswith((old + newline).encode(encoding))  # the old rows byte for byte
    assert new.count(newline.encode()) == 3 and new.endswith(newline.encode())
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SolvselNote)  # the Windows-1252 file, noted when read
        cat = solvsel.load_catalog(own={"solutes": [str(path)]})
        assert cat.solute("my thing").dD == 17 and cat.solute("ethanol estimate").dD == pytest.approx(15.8, abs=0.1)


def test_text_a_spreadsheet_would_run_is_written_as_text(tmp_path, capsys):
    path = tmp_path / "mine.csv"
    assert _save(path, "=cmd|' /C calc'!A0") == 0
    capsys.readouterr()
    assert "\n'=cmd|' /C calc'!A0," in path.read_text(encoding="utf-8")
    assert solvsel.load_catalog(own={"solutes": [str(path)]}).solute("'=cmd|' /C calc'!A0")


def test_save_into_a_read_only_folder_is_refused_before_the_estimate(tmp_path, capsys, monkeypatch):
    from solvsel.science import structure

    def read_only(*args, **kwargs):
        raise PermissionError(errno.EACCES, "Permission denied")

    def never(*args, **kwargs):
        raise AssertionError("the estimate ran before the write target was checked")

    monkeypatch.setattr(tempfile, "mkstemp", read_only)
    monkeypatch.setattr(structure, "estimate", never)
    assert _save(tmp_path / "mine.csv", "x") == 2
    assert "--save-to: " in (err := capsys.readouterr().err) and "Permission denied" in err
    assert list(tmp_path.iterdir()) == []


def test_fit_into_a_read_only_folder_is_refused_before_the_fit(tmp_path, capsys, monkeypatch):
    import solvsel.jobs.fit as fit_job

    monkeypatch.setattr(tempfile, "mkstemp", lambda *a, **k: (_ for _ in ()).throw(PermissionError(13, "Permission denied")))
    monkeypatch.setattr(fit_job, "read_bench", lambda *a, **k: pytest.fail("the fit ran first"))
    assert main([*FIT, "--save-as", "x", "--into", str(tmp_path / "mine.csv")]) == 2
    assert "--into: " in (err := capsys.readouterr().err) and "Permission denied" in err


def test_a_full_disk_leaves_the_file_and_no_temporary_file(tmp_path, capsys, monkeypatch):
    path = tmp_path / "mine.csv"
    path.write_text(SOLUTE_HEADER + "\nmy thing,other,17,5,5,,estimated,lab,lab\n", encoding="utf-8")
    before = path.read_bytes()

    def full(fd):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "fsync", full)
    assert _save(path, "x", "--force") == 2
    assert "No space left on device" in capsys.readouterr().err
    assert path.read_bytes() == before and [p.name for p in tmp_path.iterdir()] == ["mine.csv"]


def test_an_unreadable_file_is_named(corpus, capsys, monkeypatch):
    bench = str(corpus / "bench_few.csv")
    real_open = builtins.open

    def guarded(file, *args, **kwargs):
        if str(file) == bench:
            raise PermissionError(errno.EACCES, "Permission denied", bench)
        return real_open(file, *args, **kwargs)

    monkeypatch.setattr(builtins, "open", guarded)
    for argv in (["fit", bench], ["--own-solvents", bench, "solvents"], ["estimate", "--file", bench]):
        assert main(argv) == 2
        err = capsys.readouterr().err
        assert f"{bench}: cannot be read: Permission denied" in err and err.count("\n") == 1


# ----------------------------------------------------------------------------- the report's set of files

def _report(out, *more):
    return main(["report", str(out), *more, "solvents", "--top", "2"])


def test_report_force_after_the_file_name(tmp_path, capsys):
    out = tmp_path / "r.md"
    assert _report(out) == 0
    assert _report(out) == 2 and "exists already" in capsys.readouterr().err
    assert main(["report", str(out), "--force", "--title", "Second", "solvents", "--top", "3"]) == 0
    assert out.read_text(encoding="utf-8").startswith("# Second")


@pytest.mark.parametrize("fail_at", ["write", "rename"])
def test_report_set_replaced_as_a_whole_or_not_at_all(tmp_path, capsys, monkeypatch, fail_at):
    out = tmp_path / "r.md"
    assert _report(out) == 0
    before = snapshot(tmp_path)
    calls = []
    if fail_at == "rename":
        real = os.replace

        def flaky(src, dst):
            calls.append(dst)
            if len(calls) == 2:
                raise OSError(errno.EIO, "Input/output error")
            return real(src, dst)

        monkeypatch.setattr(os, "replace", flaky)
    else:
        real = Path.write_text

        def flaky(self, *args, **kwargs):
            calls.append(self)
            if len(calls) == 2:
                raise OSError(errno.ENOSPC, "No space left on device")
            return real(self, *args, **kwargs)

        monkeypatch.setattr(Path, "write_text", flaky)
    assert _report(out, "--force") == 2
    err = capsys.readouterr().err
    assert "OUT.md: " in err and "left as they were" in err
    assert snapshot(tmp_path) == before  # the old set whole, no temporary file or folder left


def test_report_csv_cells_are_not_formulas(tmp_path, capsys):
    mine = tmp_path / "mine.csv"
    mine.write_text(own("=cmd|' /C calc'!A0"), encoding="utf-8")
    assert main(["--own-solvents", str(mine), "report", str(tmp_path / "r.md"), "solvents", "--search", "calc"]) == 0
    assert "\n'=cmd" in (tmp_path / "r.csv").read_text(encoding="utf-8")


def test_fit_into_writes_formula_like_names_as_text(tmp_path, capsys):
    into = tmp_path / "mine.csv"
    assert main([*FIT, "--save-as", "@SUM(1+1)", "--into", str(into)]) == 0
    assert "\n'@SUM(1+1)," in into.read_text(encoding="utf-8")


def test_refit_into_a_read_only_folder_is_refused_before_the_fit(tmp_path, capsys, monkeypatch):
    from solvsel.science import structure_training

    monkeypatch.setattr(tempfile, "mkstemp", lambda *a, **k: (_ for _ in ()).throw(PermissionError(13, "Permission denied")))
    monkeypatch.setattr(structure_training, "training_data", lambda *a, **k: pytest.fail("the refit ran first"))
    assert main(["estimate", "--refit", str(tmp_path / "p.csv")]) == 2


# ----------------------------------------------------------------------------- the JSON error and the entry point

def test_json_error_names_file_row_column_and_option(corpus, capsys):
    assert main(["--own-solvents", str(corpus / "own_dd_range.csv"), "solvents", "--json"]) == 2
    error = json.loads(capsys.readouterr().out)["error"]
    assert error == {
        "kind": "table", "param": "--own-solvents", "file": str(corpus / "own_dd_range.csv"), "row": 2,
        "column": "dD_MPa05", "message": error["message"],
    }
    assert main(["rank", "--use", "cooking", "--json"]) == 2
    error = json.loads(capsys.readouterr().out)["error"]
    assert (error["kind"], error["param"], error["value"]) == ("usage", "--use", "cooking")
    assert error["expected"] == "one of carrier, extraction, bench"


def _entry(args, stdin=None):
    return subprocess.run([sys.executable, "-m", "solvsel", *args], input=stdin, capture_output=True, timeout=120,
                          cwd=ROOT)


def test_entry_point_refuses_bad_input_without_a_traceback():
    """A few of the corpus as a user runs them: the real stdin, stdout, stderr and exit code."""
    p = _entry(["rank", "--top", "x", "--json"])
    assert p.returncode == 2 and json.loads(p.stdout)["error"]["param"] == "--top" and p.stderr == b""
    p = _entry(["solvents", "--where", "(" * 3000 + "dH > 1" + ")" * 3000])
    assert p.returncode == 2 and b"Traceback" not in p.stderr and p.stderr.count(b"\n") == 1
    p = _entry(["fit", "-", "--next", "0"], stdin=BENCH.encode("utf-16"))
    assert p.returncode == 0 and b"from standard input" in p.stdout
    p = _entry(["fit", "-"], stdin=b"\x00\x01\x02" * 100)
    assert p.returncode == 2 and b"standard input: is not a text file" in p.stderr


# ----------------------------------------------------------------------------- the terminal UI

def test_ui_survives_absurd_bench_paths_and_filters(corpus):
    """Pasted into the UI's fields: the error dialog names the field; the app stays up, the target stays."""
    pytest.importorskip("textual")
    import asyncio

    from solvsel.tui.app import create_app
    from solvsel.tui.dialogs import ErrorDialog

    latin = corpus / "bench_latin1.csv"
    latin.write_bytes(BENCH.replace("liquid,result", "liquid,result,note").replace(",good\n", ",good,\n")
                      .replace(",bad\n", ",bad,trüb\n").encode("cp1252"))

    async def go():
        app = create_app(start="target")
        async with app.run_test(size=(160, 48)) as pilot:
            await pilot.pause()
            screen = app.screen
            before = app.session.target
            for path in (f"{corpus}/{LONG}", "/proc/self/mem", "/dev/zero", "-", str(corpus / "adir"),
                         str(corpus / "bench_binary.csv"), "[bold red]x[/]", ""):
                screen.query_one("#bench-path").value = path
                screen.press("use-bench")
                await pilot.pause()
                assert isinstance(app.screen, ErrorDialog), path[:40]
                assert app.screen.error_message.startswith("bench results file: "), app.screen.error_message
                assert "\n" not in app.screen.error_message
                await pilot.press("escape")
                await pilot.pause()
                assert app.screen is screen and app.session.target is before
            screen.query_one("#bench-path").value = str(latin)
            screen.press("use-bench")
            await pilot.pause()
            assert app.session.target.basis == "fitted"
            assert "read as Windows-1252" in str(screen.query_one("#bench-detail").render())
            await pilot.press("f1")  # the tables: a filter nested 3,000 deep
            await pilot.pause()
            tables = app.screen
            tables.load_table("solvents", "(" * 3000 + "dH > 1" + ")" * 3000)
            await pilot.pause()
            assert isinstance(app.screen, ErrorDialog) and "nested more than 50" in app.screen.error_message
        latin.unlink()

    asyncio.run(go())
