"""Architecture: one-way imports (data → physics → api → front ends) and a stdlib-only package."""

import ast
import pathlib
import sys

PKG = pathlib.Path(__file__).resolve().parents[1] / "nmrcalc"
RANK = {"data": 0, "physics": 1, "api": 2, "front": 3}


def layer(module: str) -> str:
    parts = module.split(".")
    if len(parts) == 1:
        return "data"
    if parts[1] in ("data", "constants", "nuclides", "errors", "units"):
        return "data"
    if parts[1] == "physics":
        return "physics"
    if parts[1] == "api":
        return "api"
    return "front"


def modules():
    for path in PKG.rglob("*.py"):
        rel = path.relative_to(PKG.parent).with_suffix("")
        name = ".".join(p for p in rel.parts if p != "__init__")
        yield name, ast.parse(path.read_text())


def imported(node) -> list[str]:
    """The nmrcalc modules an import statement names: ``from x import y`` and ``import x``."""
    if isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
        return [node.module] if node.module.startswith("nmrcalc") else []
    if isinstance(node, ast.Import):
        return [a.name for a in node.names if a.name.split(".")[0] == "nmrcalc"]
    return []


def test_imports_point_down_only():
    for name, tree in modules():
        for node in ast.walk(tree):
            for target in imported(node):
                assert RANK[layer(target)] <= RANK[layer(name)], (name, target)


def test_the_layer_check_sees_both_import_forms():
    tree = ast.parse("import nmrcalc.api\nfrom nmrcalc.physics import larmor\nimport json")
    assert [t for node in ast.walk(tree) for t in imported(node)] == ["nmrcalc.api", "nmrcalc.physics"]


def test_stdlib_only_at_run_time():
    allowed_optional = {"numpy"}  # optional speed-up on CPython, always behind try/except ImportError
    for name, tree in modules():
        for node in ast.walk(tree):
            names = [a.name for a in node.names] if isinstance(node, ast.Import) else (
                [node.module] if isinstance(node, ast.ImportFrom) and node.level == 0 and node.module else [])
            for mod in names:
                top = mod.split(".")[0]
                assert top == "nmrcalc" or top in sys.stdlib_module_names or top in allowed_optional, (name, mod)
