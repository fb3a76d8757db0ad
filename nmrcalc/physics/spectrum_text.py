"""Two-column spectrum text: x (ppm or Hz), intensity; comma, tab, semicolon or blank separated.

An optional first line is a header; a unit found in it ("ppm", "Hz") sets the x
unit, otherwise the caller's default applies.  x must be evenly spaced (a
spectrum, not a peak list) to within 1 % of the spacing (common practice, no
source: exported spectra are sampled on a uniform grid).
"""

from __future__ import annotations

import math
import re

from nmrcalc.errors import InputError
from nmrcalc.physics.jcamp import MAX_POINTS, Spectrum

_SPLIT = re.compile(r"[,\t; ]+")


def read_two_column(text: str, default_unit: str | None = None) -> Spectrum:
    xs: list[float] = []
    ys: list[float] = []
    unit = None
    for n, line in enumerate(text.splitlines(), 1):
        line = line.strip()
        if not line or line.startswith("#"):
            continue
        parts = _SPLIT.split(line)
        try:
            x, y = float(parts[0]), float(parts[1])
        except (ValueError, IndexError):
            if not xs and unit is None:
                low = line.lower()
                unit = "ppm" if "ppm" in low else "Hz" if "hz" in low else ""
                continue
            raise InputError(f"Line {n}: expected two numbers (x and intensity), got '{line[:40]}'.", "text") from None
        if len(parts) > 2:
            raise InputError(f"Line {n}: more than two columns.", "text")
        if not (math.isfinite(x) and math.isfinite(y)):
            raise InputError(f"Line {n}: a value is not finite.", "text")
        xs.append(x)
        ys.append(y)
    if len(xs) < 3:
        raise InputError("A spectrum needs at least 3 points (x, intensity per line).", "text")
    if len(xs) > MAX_POINTS:
        raise InputError(f"At most {MAX_POINTS} points.", "text", "too_large")
    step = (xs[-1] - xs[0]) / (len(xs) - 1)
    for k, x in enumerate(xs):
        if step == 0 or abs(x - (xs[0] + k * step)) > 0.01 * abs(step):
            raise InputError(f"Point {k + 1}: x is not evenly spaced; a spectrum is needed "
                             "(for a peak list use the pattern finder).", "text")
    unit = unit or default_unit
    if unit not in ("ppm", "Hz"):
        raise InputError("Say whether x is in ppm or Hz (a header such as 'ppm,intensity', or 'x_unit').",
                         "x_unit", "missing_field")
    return Spectrum(title="", x_unit=unit, first_x=xs[0], last_x=xs[-1], y=ys,
                    checks=[f"{len(xs)} evenly spaced points"])
