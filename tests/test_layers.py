"""The import contract: layers import only downwards, and no module imports itself in a circle.

Layers, top to bottom (DEVELOPERS.md, "Architecture"):

    cli, tui  ->  jobs  ->  rules  ->  science  ->  data  ->  (errors, extras)

A module may import its own layer and any layer below; ``tui`` never imports
``cli``; ``solvsel/__init__.py`` (the public API) may name the jobs. Every
import counts, at the top of a module or inside a function, so a lazy import
cannot hide an upward edge. The check reads the source (ast), so it needs
nothing installed and cannot be fooled by import order.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "solvsel"

#: Rank of each layer; a module may import modules of the same or a lower rank.
RANKS = {"errors": 0, "extras": 0, "_version": 0, "data": 1, "science": 2, "rules": 3, "jobs": 4, "cli": 5, "tui": 5, "__main__": 6}
#: Pairs of layers of the same rank that must not import each other (the command line may open
#: the UI, its entry point being the program's; the UI never uses the command line's code).
FORBIDDEN = {("tui", "cli")}


def module_name(path: Path, root: Path = PACKAGE) -> str:
    parts = list(path.relative_to(root.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def imports_of(path: Path, root: Path = PACKAGE) -> set[str]:
    """Every solvsel module ``path`` imports (absolute names), wherever the import statement is."""
    name = module_name(path, root)
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    out = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            out |= {a.name for a in node.names if a.name.split(".")[0] == "solvsel"}
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] != "solvsel":
                continue
            out.add(target)
            out |= {f"{target}.{a.name}" for a in node.names}
    return out


def graph(root: Path = PACKAGE) -> dict[str, set[str]]:
    """Module -> the solvsel modules (and packages) it imports, as they exist under ``root``."""
    files = {module_name(p, root): p for p in root.rglob("*.py")}
    known = set(files)
    return {m: {d for d in imports_of(p, root) if d in known and d != m} for m, p in files.items()}


def layer(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else "solvsel"


def violations(g: dict[str, set[str]]) -> list[str]:
    """Upward and forbidden imports, as 'a -> b (why)'."""
    out = []
    for a, deps in sorted(g.items()):
        la = layer(a)
        if la == "solvsel":  # the public API names the jobs
            continue
        for b in sorted(deps):
            lb = layer(b)
            if lb == "solvsel":
                if la not in ("cli", "tui", "__main__"):
                    out.append(f"{a} -> {b} (only front ends import the public API)")
                continue
            if (la, lb) in FORBIDDEN:
                out.append(f"{a} -> {b} ({la} never imports {lb})")
            elif RANKS[lb] > RANKS[la]:
                out.append(f"{a} -> {b} ({la} is below {lb})")
    return out


def cycles(g: dict[str, set[str]]) -> list[list[str]]:
    """Import circles between modules (a package importing its own parent does not count)."""
    found, state = [], {}

    def visit(u, stack):
        state[u] = 1
        stack.append(u)
        for v in sorted(g.get(u, ())):
            if u.startswith(v + "."):
                continue
            if state.get(v) == 1:
                found.append(stack[stack.index(v):] + [v])
            elif not state.get(v):
                visit(v, stack)
        stack.pop()
        state[u] = 2

    for m in sorted(g):
        if not state.get(m):
            visit(m, [])
    return found


def test_every_module_is_in_a_known_layer():
    unknown = sorted({layer(m) for m in graph()} - set(RANKS) - {"solvsel"})
    assert not unknown, f"modules outside the layers of DEVELOPERS.md: {unknown}"


def test_imports_point_down_only():
    bad = violations(graph())
    assert not bad, "imports against the layers:\n  " + "\n  ".join(bad)


def test_no_import_circles():
    found = cycles(graph())
    assert not found, "import circles:\n  " + "\n  ".join(" -> ".join(c) for c in found)


def _package_copy(tmp_path: Path) -> Path:
    import shutil

    dst = tmp_path / "solvsel"
    shutil.copytree(PACKAGE, dst, ignore=shutil.ignore_patterns("__pycache__", "tables"))
    return dst


@pytest.mark.parametrize("where, line, expect", [
    ("science/hansen.py", "from ..rules import regulations", "science is below rules"),
    ("tui/mixing.py", "from ..cli import _common", "tui never imports cli"),
    ("data/catalog.py", "    from ..jobs import pool", "data is below jobs"),
])
def test_the_contract_catches_a_forbidden_import(tmp_path, where, line, expect):
    # a deliberate upward import, even one inside a function, in a copy of the package
    root = _package_copy(tmp_path)
    path = root / where
    text = path.read_text(encoding="utf-8")
    if line.startswith("    "):
        text += "\n\ndef _deliberate():\n" + line + "\n"
    else:
        text = line + "\n" + text
    path.write_text(text, encoding="utf-8")
    assert any(expect in v for v in violations(graph(root)))


def test_the_contract_catches_a_circle(tmp_path):
    root = _package_copy(tmp_path)
    for a, b in (("science/hansen.py", "from . import formulation"), ("science/formulation.py", "from . import hansen")):
        p = root / a
        p.write_text(b + "\n" + p.read_text(encoding="utf-8"), encoding="utf-8")
    assert any({"solvsel.science.hansen", "solvsel.science.formulation"} <= set(c) for c in cycles(graph(root)))
