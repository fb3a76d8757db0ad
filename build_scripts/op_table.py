"""Rewrite the README's op table from the ops' declarations (``python -m nmrcalc describe --markdown``)."""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from nmrcalc.api.describe_ops import declarations  # noqa: E402
from nmrcalc.api.params import markdown_table  # noqa: E402

START, END = "<!-- op table", "<!-- end of op table -->"


def main() -> int:
    readme = ROOT / "README.md"
    text = readme.read_text()
    start = text.index("-->", text.index(START)) + 3
    end = text.index(END)
    readme.write_text(text[:start] + "\n" + markdown_table(declarations()) + "\n" + text[end:])
    return 0


if __name__ == "__main__":
    sys.exit(main())
