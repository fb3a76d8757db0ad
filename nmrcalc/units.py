"""Reading quantities typed by a user: a number in the default unit, or a
string with a unit (``"117500 G"``, ``"500 MHz"``, ``"19.3 Hz"``, ``"25 °C"``).

Every kind has one default unit, which is what the parser returns:
field → T, frequency → MHz, coupling/offset → Hz, temperature → K,
wavelength → nm, wavenumber → cm⁻¹, shift → ppm, linewidth → Hz.
Conversions: 1 G = 10⁻⁴ T; 0 °C = 273.15 K (SI Brochure, 9th ed.).
"""

from __future__ import annotations

import math
import re

from nmrcalc.errors import InputError

_UNITS: dict[str, dict[str, float]] = {
    "field": {"t": 1.0, "tesla": 1.0, "mt": 1e-3, "g": 1e-4, "gauss": 1e-4, "kg": 0.1},
    "frequency": {"mhz": 1.0, "hz": 1e-6, "khz": 1e-3, "ghz": 1e3},
    "coupling": {"hz": 1.0, "khz": 1e3, "mhz": 1e6},
    "temperature": {"k": 1.0},
    "wavelength": {"nm": 1.0, "um": 1e3, "µm": 1e3, "μm": 1e3, "a": 0.1, "å": 0.1, "mm": 1e6},
    "wavenumber": {"cm-1": 1.0, "cm^-1": 1.0, "1/cm": 1.0, "cm⁻¹": 1.0},
    "shift": {"ppm": 1.0},
    "percent": {"%": 1.0},
}
_DEFAULT = {"field": "T", "frequency": "MHz", "coupling": "Hz", "temperature": "K",
            "wavelength": "nm", "wavenumber": "cm-1", "shift": "ppm", "percent": "%"}
_CELSIUS = ("°c", "c", "degc", "℃")
_NUMBER = re.compile(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*")


def parse_quantity(value, kind: str, field: str) -> float:
    """Return ``value`` as a finite float in the default unit of ``kind``."""
    if isinstance(value, bool) or value is None:
        raise InputError(f"{field}: give a number (in {_DEFAULT[kind]}) or a number with a unit.", field)
    if isinstance(value, (int, float)):
        number, unit = float(value), ""
    elif isinstance(value, str):
        if len(value) > 100:
            raise InputError(f"{field}: this text is too long to be a quantity.", field)
        m = _NUMBER.fullmatch(value)
        if not m:
            raise InputError(f"{field}: '{value.strip()[:30]}' is not a number; write e.g. "
                             f"{_example(kind)}.", field)
        number, unit = float(m.group(1)), m.group(2).strip().lower().replace(" ", "")
    else:
        raise InputError(f"{field}: give a number or a string such as {_example(kind)}.", field)
    if not math.isfinite(number):
        raise InputError(f"{field}: the number must be finite.", field)
    if unit == "":
        return number
    if kind == "temperature" and unit in _CELSIUS:
        return number + 273.15
    factor = _UNITS[kind].get(unit)
    if factor is None:
        allowed = ", ".join(sorted({u for u in _UNITS[kind] if u.isascii()}))
        raise InputError(f"{field}: unknown unit '{unit}' for a {kind}; use one of: {allowed}.", field)
    return number * factor


def parse_positive(value, kind: str, field: str) -> float:
    """Like :func:`parse_quantity`, but the value must be greater than zero."""
    x = parse_quantity(value, kind, field)
    if x <= 0:
        raise InputError(f"{field}: must be greater than zero.", field)
    return x


def _example(kind: str) -> str:
    return {"field": "'11.74 T' or '117400 G'", "frequency": "'500 MHz'", "coupling": "'19.3 Hz'",
            "temperature": "'298 K' or '25 °C'", "wavelength": "'254 nm'",
            "wavenumber": "'1700 cm-1'", "shift": "'77.16 ppm'", "percent": "'99.8'"}[kind]


def default_unit(kind: str) -> str:
    """The unit a bare number of ``kind`` is read in (``"frequency"`` → ``"MHz"``)."""
    return _DEFAULT[kind]


def split_list(text: str) -> list[str]:
    """One typed list (``"300, 600 MHz"``) → its items, split at commas and semicolons."""
    return [item.strip() for item in re.split(r"[;,]", text) if item.strip()]
