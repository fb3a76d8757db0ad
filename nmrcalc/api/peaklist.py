"""Reading a pasted peak list: one peak a line, a position and an intensity.

Format rules
------------
* Separators: a comma if the line has one, else a tab, else runs of spaces;
  a ``;`` line separator is accepted like a comma.  Blank lines and lines
  starting with ``#`` are skipped.
* A header is the first line in which no cell is a number (so a data line is never taken for one).  Its
  cells name the columns: one containing ``hz`` is a position in Hz, one
  containing ``ppm`` a position in ppm; one containing ``int``, ``height``,
  ``area``, ``amp`` or ``abs`` is the intensity.  With both a Hz and a ppm
  column (as in the multiplet op's CSV export ``ppm,Hz,intensity``) the Hz
  column is used.  Unnamed position: the first column; unnamed intensity:
  the last column.
* Without a header: the first column is the position and the last the
  intensity; with three or more columns whose first column counts 1, 2, 3,
  …, that first column is a peak number and is skipped.
* A single column gives positions only; every intensity is then 1 (and the
  caller says so).

The unit is what the header names (``"Hz"`` / ``"ppm"``), else ``None``: the
caller decides (see ``nmrcalc.api.identify_ops``).
"""

from __future__ import annotations

import math
import re
from typing import NamedTuple

from nmrcalc.errors import InputError

MAX_TEXT_CHARS = 100_000
MAX_PEAKS = 500
_INTENSITY_WORDS = ("int", "height", "area", "amp", "abs")


class PeakList(NamedTuple):
    peaks: list[tuple[int, float, float]]  # (line number from 1, position, intensity)
    unit: str | None
    intensities_given: bool
    header: list[str] | None


_DECIMAL_COMMA = re.compile(r"^[-+−]?\d+,\d+$")  # "1,5" beside other columns split by spaces or tabs


def _cells(line: str) -> list[str]:
    if "," in line or ";" in line:
        return [c.strip() for c in re.split(r"[,;]", line)]
    if "\t" in line:
        return [c.strip() for c in line.split("\t")]
    return line.split()


def _number(cell: str) -> float | None:
    try:
        x = float(cell)
    except ValueError:
        return None
    return x if math.isfinite(x) else None


def _column(header: list[str], words: tuple[str, ...]) -> int | None:
    for i, name in enumerate(header):
        low = name.lower()
        if any(w in low for w in words):
            return i
    return None


def parse_peaklist(text: object, field: str = "peaklist") -> PeakList:
    """Parse pasted text by the rules above; errors name ``field`` and the line number."""
    if not isinstance(text, str) or not text.strip():
        raise InputError("Paste a peak list: one peak a line, position and intensity.", field, "missing_field")
    if len(text) > MAX_TEXT_CHARS:
        raise InputError(f"The peak list is longer than {MAX_TEXT_CHARS} characters.", field, "too_large")
    rows: list[tuple[int, list[str]]] = []
    header: list[str] | None = None
    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        comma = next((t for t in line.split() if _DECIMAL_COMMA.match(t)), None)
        if comma is not None and len(line.split()) > 1:
            raise InputError(f"{field} line {number}: '{comma}' has a decimal comma; "
                             f"did you mean {comma.replace(',', '.')}?", field)
        cells = _cells(raw.rstrip("\r\n "))  # keep a leading empty cell (e.g. an empty ppm column)
        if header is None and not rows and all(_number(c) is None for c in cells if c):
            header = cells
            continue
        rows.append((number, cells))
    if not rows:
        raise InputError("The peak list has no peaks (only a header or comments).", field, "missing_field")
    if len(rows) > MAX_PEAKS:
        raise InputError(f"At most {MAX_PEAKS} peaks can be read, got {len(rows)}.", field, "too_large")

    unit = None
    width = max(len(c) for _, c in rows)
    pos_col, int_col = 0, width - 1
    if header is not None:
        hz, ppm = _column(header, ("hz",)), _column(header, ("ppm",))
        named_int = _column(header, _INTENSITY_WORDS)
        if hz is not None:
            pos_col, unit = hz, "Hz"
        elif ppm is not None:
            pos_col, unit = ppm, "ppm"
        if named_int is not None:
            int_col = named_int
        elif int_col == pos_col or len(header) <= int_col:
            int_col = len(header) - 1
    elif width >= 3:
        firsts = [_number(c[0]) for _, c in rows]
        if firsts == [float(k) for k in range(1, len(rows) + 1)]:
            pos_col = 1
    given = int_col != pos_col

    peaks = []
    for number, cells in rows:
        where = f"{field} line {number}"
        if len(cells) <= max(pos_col, int_col if given else 0):
            raise InputError(f"{where}: expected {max(pos_col, int_col) + 1} columns, found {len(cells)}.", field)
        pos = _number(cells[pos_col])
        if pos is None:
            raise InputError(f"{where}: '{cells[pos_col][:30]}' is not a number (the position).", field)
        if given:
            y = _number(cells[int_col])
            if y is None:
                raise InputError(f"{where}: '{cells[int_col][:30]}' is not a number (the intensity).", field)
            if y <= 0:
                raise InputError(f"{where}: the intensity must be greater than zero, got {cells[int_col]}.", field)
        else:
            y = 1.0
        peaks.append((number, pos, y))
    return PeakList(peaks, unit, given, header)
