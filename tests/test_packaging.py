"""Packaging: the wheel carries the tables, the engines never import the UI, the README's
test command is the one CI runs."""

from __future__ import annotations

import os
import re
import subprocess
import sys
import sysconfig
import venv
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
#: Every module below the front ends (data, science, rules, jobs).
CORE = sorted(
    ".".join(p.relative_to(ROOT).with_suffix("").parts).removesuffix(".__init__")
    for layer in ("data", "science", "rules", "jobs") for p in (ROOT / "solvsel" / layer).rglob("*.py")
)


def test_the_core_imports_no_optional_package():
    """Importing every module below the front ends loads neither Textual (the ``ui`` extra) nor
    RDKit or scikit-learn (the ``structure`` extra): they are imported where they are used."""
    assert len(CORE) > 20
    code = (
        "import sys, importlib\n"
        f"for m in {CORE!r}:\n"
        "    importlib.import_module(m)\n"
        "bad = sorted({m.split('.')[0] for m in sys.modules} & {'textual', 'rdkit', 'sklearn'})\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True)
    assert out.stdout.strip() == "", out.stdout


@pytest.mark.parametrize("blocked, call, extra", [
    ("rdkit", "import solvsel; solvsel.estimate(smiles='CCO')", "solvsel[structure]"),
    ("textual", "from solvsel.extras import need; need('textual', 'ui', 'the terminal UI')", "solvsel[ui]"),
])
def test_a_missing_extra_is_named(blocked, call, extra):
    """Without an optional package, the error names the extra to install (and is a SolvselError)."""
    code = (
        f"import sys; sys.modules[{blocked!r}] = None\n"
        "from solvsel.errors import MissingExtraError\n"
        "try:\n"
        f"    {call}\n"
        "except MissingExtraError as exc:\n"
        "    print(exc)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert extra in out.stdout, out.stdout + out.stderr


def test_cli_import_is_light():
    """`solvsel --help` must not pull in RDKit, scikit-learn or Textual (cold start under 1 s)."""
    code = (
        "import sys\nfrom solvsel.cli import build_parser\nbuild_parser()\n"
        "heavy = sorted({m.split('.')[0] for m in sys.modules} & {'rdkit', 'sklearn', 'textual', 'scipy', 'networkx'})\n"
        "print(','.join(heavy))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True)
    assert out.stdout.strip() == "", out.stdout


def test_ci_runs_the_readme_test_command():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    blocks = re.findall(r"```sh\n(.*?)\n```", readme, flags=re.S)
    test_cmds = [b.strip() for b in blocks if "pytest" in b]
    assert test_cmds, "README has no test command block"
    assert test_cmds[0] in ci


@pytest.mark.slow
def test_wheel_ships_the_tables(tmp_path):
    """Build the wheel, install it (without dependencies, which are borrowed from this
    environment) into a fresh virtual environment, and load the catalog from there."""
    dist = tmp_path / "dist"
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q", "-w", str(dist), str(ROOT)],
        check=True, capture_output=True,
    )
    wheel = next(dist.glob("solvsel-*.whl"))
    env_dir = tmp_path / "venv"
    venv.EnvBuilder(with_pip=False).create(env_dir)
    py = env_dir / ("Scripts" if os.name == "nt" else "bin") / "python"
    site = subprocess.run([str(py), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                          capture_output=True, text=True, check=True).stdout.strip()
    import zipfile

    with zipfile.ZipFile(wheel) as z:
        names = z.namelist()
        assert "solvsel/tables/solvents.csv" in names and "solvsel/tables/sources.csv" in names
        z.extractall(site)
    Path(site, "deps.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    code = (
        "from solvsel.data.catalog import load_catalog, TABLES_DIR\n"
        "c = load_catalog()\n"
        "print(TABLES_DIR.parent.name, TABLES_DIR.name, len(c.solvents), c.solvent('PG').cas)\n"
    )
    out = subprocess.run([str(py), "-c", code], capture_output=True, text=True, cwd=tmp_path, check=True)
    parent, name, n, cas = out.stdout.split()
    assert (parent, name) == ("solvsel", "tables") and int(n) >= 70 and cas == "57-55-6"


def test_readme_library_example_runs():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    code = re.findall(r"```python\n(.*?)\n```", readme, flags=re.S)
    assert code, "README has no library example"
    out = subprocess.run([sys.executable, "-c", code[0]], capture_output=True, text=True, cwd=ROOT)
    assert out.returncode == 0, out.stderr
