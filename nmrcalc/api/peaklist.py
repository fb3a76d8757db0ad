"""Reading a pasted peak list: one peak a line, a position and an intensity.

Format rules
------------
* Separators: a ``;`` if the line has one (then a comma inside a number is a
  decimal comma, refused with "did you mean 1230.5?"), else a comma, else a
  tab, else runs of spaces.  Blank lines and lines starting with ``#`` are
  skipped.
* A position may carry its unit ("1230.5 Hz", "1.23 kHz", "3.08 ppm"); every
  line that does must name the same unit (Hz or ppm), and it must agree with
  a header that names one.  A Unicode minus (−) reads as a minus.
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

The unit is what the header or the cells name (``"Hz"`` / ``"ppm"``), else ``None``: the
caller decides (see ``nmrcalc.api.identify_ops``).
"""

from __future__ import annotations

import math
import re
from typing import NamedTuple

from nmrcalc.errors import InputError
from nmrcalc.units import normalise

MAX_TEXT_CHARS = 100_000
MAX_PEAKS = 500
_INTENSITY_WORDS = ("int", "height", "area", "amp", "abs")


class PeakList(NamedTuple):
    peaks: list[tuple[int, float, float]]  # (line number from 1, position, intensity)
    unit: str | None
    intensities_given: bool
    header: list[str] | None


_DECIMAL_COMMA = re.compile(r"^[-+−]?\d+,\d+$")  # "1,5" beside other columns split by spaces or tabs


_UNIT_AFTER_NUMBER = re.compile(r"(?<=[\d.])\s+(?=(?:k?hz|ppm)\b)", re.IGNORECASE)
_WITH_UNIT = re.compile(r"(.*?\d\.?)\s*(k?hz|ppm)", re.IGNORECASE)
_UNIT_SCALE = {"hz": ("Hz", 1.0), "khz": ("Hz", 1e3), "ppm": ("ppm", 1.0)}


def _cells(line: str) -> list[str]:
    if ";" in line:
        return [c.strip() for c in line.split(";")]
    if "," in line:
        return [c.strip() for c in line.split(",")]
    if "\t" in line:
        return [c.strip() for c in line.split("\t")]
    return _UNIT_AFTER_NUMBER.sub("", line).split()  # "1230.5 Hz 1" → "1230.5Hz", "1"


def _number(cell: str) -> float | None:
    try:
        x = float(normalise(cell))
    except ValueError:
        return None
    return x if math.isfinite(x) else None


def _position(cell: str) -> tuple[float | None, str | None]:
    """A position cell as (value, unit or None); "1.2 kHz" → (1200.0, "Hz")."""
    m = _WITH_UNIT.fullmatch(cell.strip())
    if not m:
        return _number(cell), None
    unit, scale = _UNIT_SCALE[m.group(2).lower()]
    x = _number(m.group(1))
    return (None if x is None else x * scale), unit


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
        if ";" in line:
            comma = next((c for c in cells if _DECIMAL_COMMA.match(c)), None)
            if comma is not None:
                raise InputError(f"{field} line {number}: '{comma}' has a decimal comma; "
                                 f"did you mean {comma.replace(',', '.')}?", field)
        if header is None and not rows and all(_position(c)[0] is None for c in cells if c):
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
    unit_from = "the header"

    peaks = []
    for number, cells in rows:
        where = f"{field} line {number}"
        if len(cells) <= max(pos_col, int_col if given else 0):
            raise InputError(f"{where}: expected {max(pos_col, int_col) + 1} columns, found {len(cells)}.", field)
        pos, cell_unit = _position(cells[pos_col])
        if pos is None:
            raise InputError(f"{where}: '{cells[pos_col][:30]}' is not a number (the position).", field)
        if cell_unit is not None:
            if unit is not None and cell_unit != unit:
                raise InputError(f"{where}: the position is in {cell_unit}, but {unit_from} gives {unit}; "
                                 "use one unit for the whole list.", field)
            unit, unit_from = cell_unit, f"line {number}"
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
