"""The docs are derived from the code: the README's op table from the declarations, and
DEVELOPERS.md's list of error codes from the codes the package raises."""

import ast
import pathlib
import re

from nmrcalc.api.describe_ops import declarations
from nmrcalc.api.params import markdown_table

ROOT = pathlib.Path(__file__).resolve().parents[1]


def test_readme_op_table_matches_the_declarations():
    text = (ROOT / "README.md").read_text()
    start = text.index("-->", text.index("<!-- op table")) + 3
    end = text.index("<!-- end of op table -->")
    assert text[start:end].strip() == markdown_table(declarations()), \
        "README op table is stale: run `python build_scripts/op_table.py`"


def codes_in_package() -> set[str]:
    """Every literal error code: InputError's third argument or code=, and _error's first."""
    codes = set()
    for path in (ROOT / "nmrcalc").rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text())):
            if not isinstance(node, ast.Call):
                continue
            name = getattr(node.func, "id", getattr(node.func, "attr", ""))
            args = list(node.args)
            candidates = [k.value for k in node.keywords if k.arg == "code"]
            if name == "InputError" and len(args) >= 3:
                candidates.append(args[2])
            if name == "_error" and args:
                candidates.append(args[0])
            for c in candidates:
                for leaf in ast.walk(c):
                    if isinstance(leaf, ast.Constant) and isinstance(leaf.value, str):
                        codes.add(leaf.value)
    return codes


def test_developers_lists_every_error_code():
    text = (ROOT / "DEVELOPERS.md").read_text()
    start = text.index("## Errors")
    listed = set(re.findall(r"`([a-z_]+)`", text[start:text.index("##", start + 5)]))
    missing = codes_in_package() - listed
    assert not missing, f"DEVELOPERS.md's error list lacks {sorted(missing)}"


def test_one_version_everywhere():
    """nmrcalc.__version__ is the one place; the package metadata and package.json follow it."""
    import importlib.metadata
    import json

    import nmrcalc
    assert json.loads((ROOT / "package.json").read_text())["version"] == nmrcalc.__version__
    assert importlib.metadata.version("nmrcalc") == nmrcalc.__version__
    assert 'dynamic = ["version"]' in (ROOT / "pyproject.toml").read_text()


def test_panel_fields_name_declared_parameters():
    """A page field written {param: "op.key"} takes its label, unit, hint and default from that
    declaration (web/js/core.js declaredField): every such name must exist."""
    from nmrcalc.api.describe_ops import declarations as decl

    def find(path: str) -> bool:
        op, *keys = path.split(".")
        params = decl()[op].params if op in decl() else ()
        for key in keys:
            match = [p for p in params if p.key == key]
            if not match:
                return False
            params = match[0].items
        return True

    names = [m for js in (ROOT / "web" / "js").rglob("*.js")
             for m in re.findall(r'param:\s*"([\w.]+)"', js.read_text())]
    assert all(find(name) for name in names), [n for n in names if not find(n)]


def test_one_input_for_a_one_of_group_names_it():
    """A page field written {either: "op.key"} (the magnet: MHz or T) takes its label, hint and
    request keys from the op's one_of group in the declaration: every such name must be in one."""
    from nmrcalc.api.describe_ops import declarations as decl

    def group(path: str) -> tuple[str, ...] | None:
        op, key = path.split(".")
        groups = decl()[op].one_of if op in decl() else ()
        return next((g for g in groups if key in g), None)

    names = [m for js in (ROOT / "web" / "js").rglob("*.js")
             for m in re.findall(r'either:\s*"([\w.]+)"', js.read_text())]
    assert len(names) >= 6
    assert all(group(name) for name in names), [n for n in names if not group(n)]


def test_panel_fields_for_request_keys_are_declared_not_hand_labelled():
    """A field that shows a request key's errors (keys: [...]) gets its label from a declaration
    (param or either): a label written by hand beside the key would drift from the op."""
    blocks = [(js.name, b) for js in (ROOT / "web" / "js" / "panels").glob("*.js")
              for b in re.findall(r"\{[^{}]*\bid:[^{}]*\}", js.read_text())]
    hand = [(name, b[:80]) for name, b in blocks
            if re.search(r"\bkeys:\s*\[", b) and not re.search(r"\b(param|either):", b)]
    assert not hand, hand
