"""Rewrite the "Limits" table of DEVELOPERS.md from the ops' declarations (each op's ``limits`` and the
size bounds of its keys, as ``{"op": "describe"}`` gives them); tests/test_limits_docs.py checks it."""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from nmrcalc import units  # noqa: E402
from nmrcalc.api import MAX_REQUEST_CHARS, handle  # noqa: E402
from nmrcalc.api.params import MAX_LIST_ITEMS  # noqa: E402

START, END = "<!-- limits table", "<!-- end of limits table -->"


def key_bounds(params: list[dict], prefix: str = "") -> list[str]:
    """The size bounds of described parameters: text length, list length, the top of a whole number."""
    out = []
    for p in params:
        name = f"`{prefix}{p['key']}`"
        if "max_chars" in p:
            out.append(f"{name} ≤ {p['max_chars']:,} characters")
        if "max_items" in p:
            out.append(f"{name} ≤ {p['max_items']:,} items")
        if p["kind"] == "integer" and p.get("bounds", [None, None])[1] is not None:
            low, high = p["bounds"]
            out.append(f"{name} {low:,}–{high:,}")
        out += key_bounds(p.get("items", []), f"{prefix}{p['key']}[].")
    return out


def limits_table() -> str:
    """The generated part of the Limits section: the bounds every request shares, then one row an op."""
    ops = handle({"op": "describe"})["result"]["ops"]
    lines = [
        f"Every request: at most {MAX_REQUEST_CHARS:,} characters of JSON; a list at most {MAX_LIST_ITEMS:,} items "
        f"unless its row says fewer; one quantity at most {units.MAX_TEXT} characters of text and a list typed as "
        f"one text at most {units.MAX_LIST_TEXT:,}; a nuclide name at most 200 characters.",
        "",
        "| op | worst case it is bounded to | declared bounds of its keys |",
        "|---|---|---|",
    ]
    for op in ops:
        lines.append(f"| `{op['op']}` | {op.get('limits', '')} | {'; '.join(key_bounds(op['params'])) or '—'} |")
    return "\n".join(lines)


def main() -> int:
    path = ROOT / "DEVELOPERS.md"
    text = path.read_text()
    start = text.index("-->", text.index(START)) + 3
    end = text.index(END)
    path.write_text(text[:start] + "\n" + limits_table() + "\n" + text[end:])
    return 0


if __name__ == "__main__":
    sys.exit(main())
