"""Reading quantities typed by a user: a bare number in the field's unit, or
a number with a unit (``"117500 G"``, ``"500 MHz"``, ``"19.3 Hz"``, ``"25 °C"``,
``"1.5×10^3 Hz"``, ``"−2,5"`` refused), and lists of them (``"400, 600 MHz"``).

Every kind has one default unit, which is what the parser returns:
magnet_MHz → MHz and magnet_T → T (a magnet typed as a field or as its ¹H
frequency, either way), field → T, frequency → MHz, coupling/offset → Hz, temperature → K,
wavelength → nm, wavenumber → cm⁻¹, shift → ppm, time → µs (pulse lengths), percent → %.

Rules (SI Brochure, 9th ed., 2019, §3 and §5.4):
* Prefixes are case-sensitive: m = 10⁻³, M = 10⁶, k = 10³, µ (or u) = 10⁻⁶,
  n = 10⁻⁹, G = 10⁹; "400 mHz" is 0.4 Hz.  An unprefixed unit symbol may be
  typed in any case ("hz", "t"); a prefixed one that matches only when case is
  ignored ("mhz", "KHZ") is refused with the spellings it could mean.
* 1 G = 10⁻⁴ T; 0 °C = 273.15 K; 1 Å = 0.1 nm.
* The Unicode minus (U+2212) is a minus; thin and no-break spaces are spaces
  (and vanish between digits, the SI digit-group separator); "e", "×10^n",
  "x10^n", "·10^n", "*10^n" and "×10ⁿ" (superscript) are exponents.
* A comma is never a decimal point: "1,5 T" is refused ("did you mean 1.5 T?").
"""

from __future__ import annotations

import math
import re

from nmrcalc.errors import InputError
from nmrcalc.nuclides import MAGNETIC

_PREFIX = {"": 1.0, "m": 1e-3, "M": 1e6, "k": 1e3, "µ": 1e-6, "μ": 1e-6, "u": 1e-6, "n": 1e-9, "G": 1e9}


def _prefixed(symbol: str, factor: float, prefixes: str) -> dict[str, float]:
    """``symbol`` with each prefix letter of ``prefixes`` (and none), scaled to the default unit."""
    out = {symbol: factor}
    for p in prefixes:
        out[p + symbol] = _PREFIX[p] * factor
    return out


# kind -> (what the field is, in words; units shown in messages; {unit symbol: factor to default})
_KINDS: dict[str, tuple[str, str, dict[str, float]]] = {
    "field": ("a field strength", "T, mT, G or kG",
              {**_prefixed("T", 1.0, "mµμun"), **_prefixed("G", 1e-4, "km"), "tesla": 1.0, "gauss": 1e-4}),
    "frequency": ("a frequency", "Hz, kHz, MHz or GHz", _prefixed("Hz", 1e-6, "mkMG")),
    "coupling": ("a frequency in Hz", "Hz, mHz, kHz or MHz", _prefixed("Hz", 1.0, "mkM")),
    "temperature": ("a temperature", "K or °C", {"K": 1.0, "mK": 1e-3}),
    "wavelength": ("a wavelength", "nm, µm, mm or Å",
                   {"nm": 1.0, "µm": 1e3, "μm": 1e3, "um": 1e3, "mm": 1e6, "pm": 1e-3, "Å": 0.1, "A": 0.1}),
    "wavenumber": ("a wavenumber", "cm⁻¹ (cm-1)",
                   {"cm-1": 1.0, "cm^-1": 1.0, "1/cm": 1.0, "cm⁻¹": 1.0, "/cm": 1.0}),
    "shift": ("a chemical shift", "ppm", {"ppm": 1.0, "ppb": 1e-3}),
    "time": ("a time", "µs (us), ms, s or ns", _prefixed("s", 1e6, "mµμun")),
    "percent": ("a percentage", "%", {"%": 1.0}),
}
_DEFAULT = {"magnet_MHz": "MHz", "magnet_T": "T", "field": "T", "frequency": "MHz", "coupling": "Hz",
            "temperature": "K", "wavelength": "nm",
            "wavenumber": "cm-1", "shift": "ppm", "time": "µs", "percent": "%"}
_CELSIUS = ("°c", "℃", "degc", "c", "oc", "celsius")
_EXAMPLE = {"magnet_MHz": "'500 MHz' or '11.74 T'", "magnet_T": "'11.74 T' or '500 MHz'",
            "field": "'11.74 T' or '117400 G'", "frequency": "'500 MHz'", "coupling": "'19.3 Hz'",
            "temperature": "'298 K' or '25 °C'", "wavelength": "'254 nm'", "wavenumber": "'1700 cm-1'",
            "shift": "'77.16 ppm'", "time": "'10 µs'", "percent": "'99.8'"}
MAX_TEXT = 100          # longest text read as one quantity
MAX_LIST_TEXT = 2000    # longest text read as a list

_SUPERSCRIPT = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
_SPACES = re.compile(r"[\u00a0\u2002-\u200a\u202f\u205f\u3000]")
_EXPONENT = re.compile(r"\s*[×x·*]\s*10\s*(?:\^\s*([-+]?\d+)|([⁻⁺]?[⁰¹²³⁴⁵⁶⁷⁸⁹]+))")
_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_ONE = re.compile(rf"\s*({_NUMBER})\s*(.*?)\s*")
_DECIMAL_COMMA = re.compile(r"\s*([-+]?\d+),(\d+)\s*(.*?)\s*")


def normalise(text: str) -> str:
    """Unicode minus → '-', odd spaces → ' ' (removed between digits), ×10^n → e n."""
    text = text.replace("\u2212", "-")
    text = re.sub(rf"(?<=\d){_SPACES.pattern}(?=\d)", "", text)
    text = _SPACES.sub(" ", text)
    return _EXPONENT.sub(lambda m: "e" + (m.group(1) or m.group(2).translate(_SUPERSCRIPT)), text)


def _too_long(field: str):
    return InputError(f"{field}: this text is too long to be a quantity.", field, "too_large")


def split_number(value, kind: str, field: str) -> tuple[float, str]:
    """(number, unit text as typed) from a number or a string; the unit may be ''."""
    if isinstance(value, bool) or value is None:
        raise InputError(f"{field}: give a number (in {_DEFAULT[kind]}) or a number with a unit.", field)
    if isinstance(value, (int, float)):
        number, unit = float(value), ""
    elif isinstance(value, str):
        if len(value) > MAX_TEXT:
            raise _too_long(field)
        text = normalise(value)
        comma = _DECIMAL_COMMA.fullmatch(text)
        if comma:
            guess = f"{comma.group(1)}.{comma.group(2)}" + (f" {comma.group(3)}" if comma.group(3) else "")
            raise InputError(f"{field}: '{value.strip()}' has a comma, which is not read as a decimal point. "
                             f"Did you mean {guess}? (Write thousands without separators.)", field)
        m = _ONE.fullmatch(text)
        if not m:
            raise InputError(f"{field}: '{value.strip()[:30]}' is not a number; write e.g. {_EXAMPLE[kind]}.", field)
        number, unit = float(m.group(1)), m.group(2).strip()
        if unit[:1].isdigit():
            raise InputError(f"{field}: '{value.strip()[:30]}': write the number without spaces inside it "
                             f"(or with thin spaces), e.g. {_EXAMPLE[kind]}.", field)
    else:
        raise InputError(f"{field}: give a number or a string such as {_EXAMPLE[kind]}.", field)
    if not math.isfinite(number):
        raise InputError(f"{field}: the number must be finite.", field)
    return number, unit


def unit_factor(unit: str, kind: str) -> float | None:
    """Factor from ``unit`` to the default unit of ``kind``, or None.

    Symbols match exactly; one without a prefix also in any case ("hz", "t")."""
    table = _KINDS[kind][2]
    compact = unit.replace(" ", "")
    if compact in table:
        return table[compact]
    plain = {s.lower(): f for s, f in table.items() if not (len(s) > 1 and s[0] in _PREFIX and s[1:] in table)}
    return plain.get(compact.lower())


def _unit_error(value, unit: str, kind: str, field: str) -> InputError:
    what, allowed, table = _KINDS[kind]
    typed = value.strip() if isinstance(value, str) else f"{value} {unit}"
    close = sorted({s for s in table if s.lower() == unit.replace(" ", "").lower()})
    if close:
        return InputError(f"{field}: '{unit}' is not a unit here (prefixes are case-sensitive: m is milli, "
                          f"M is mega); did you mean {' or '.join(close)}?", field)
    return InputError(f"{field}: '{typed}' for {what}: give {allowed}.", field)


def parse_quantity(value, kind: str, field: str) -> float:
    """Return ``value`` as a finite float in the default unit of ``kind``."""
    if kind in ("magnet_MHz", "magnet_T"):
        return _magnet_as(value, kind, field)
    number, unit = split_number(value, kind, field)
    if unit == "":
        return number
    if kind == "temperature" and unit.replace(" ", "").lower() in _CELSIUS:
        return number + 273.15
    factor = unit_factor(unit, kind)
    if factor is None:
        raise _unit_error(value, unit, kind, field)
    return scaled(number, factor)


def scaled(number: float, factor: float) -> float:
    """number × factor, dividing by 1/factor when that is a whole number (10 µs is 1e-05 s, not 9.99…e-06)."""
    inverse = round(1 / factor)
    return number / inverse if factor < 1 and abs(inverse * factor - 1) < 1e-12 else number * factor


def parse_positive(value, kind: str, field: str) -> float:
    """Like :func:`parse_quantity`, but the value must be greater than zero."""
    x = parse_quantity(value, kind, field)
    if x <= 0:
        raise InputError(f"{field}: must be greater than zero.", field)
    return x


def parse_magnet(value, field: str) -> tuple[str, float]:
    """A magnet as typed: ``("T", field in T)`` or ``("MHz", ¹H frequency in MHz)``.

    T, mT, G, kG give the field; Hz, kHz, MHz, GHz the ¹H frequency.  A bare
    number is left to the caller (``("", number)``), which knows the key's unit."""
    number, unit = split_number(value, "field", field)
    if unit == "":
        return "", number
    for kind, tag in (("field", "T"), ("frequency", "MHz")):
        factor = unit_factor(unit, kind)
        if factor is not None:
            return tag, scaled(number, factor)
    close = sorted({s for k in ("field", "frequency") for s in _KINDS[k][2] if s.lower() == unit.lower()})
    hint = f" Did you mean {' or '.join(close)}? (prefixes are case-sensitive)" if close else ""
    raise InputError(f"{field}: '{value.strip() if isinstance(value, str) else value}' for a magnet: give the "
                     f"field in T, mT, G or kG, or the ¹H frequency in MHz.{hint}", field)


def _magnet_as(value, kind: str, field: str) -> float:
    """A magnet typed either way, as its ¹H frequency (``magnet_MHz``) or field (``magnet_T``):
    ν_H = γ_H B0 / 2π with the tabulated γ(¹H) (IUPAC 2001; the TMS proton's shielding is
    neglected, as when a magnet is called "500 MHz"; nmrcalc.physics.larmor does the same)."""
    tag, x = parse_magnet(value, field)
    want = "MHz" if kind == "magnet_MHz" else "T"
    if tag in ("", want):
        return x
    gamma_h = MAGNETIC["1H"].gamma_rad_per_s_per_T
    return gamma_h * x / (2 * math.pi) / 1e6 if want == "MHz" else 2 * math.pi * x * 1e6 / gamma_h


_ITEM = re.compile(rf"({_NUMBER})\s*([^\d\s,;+\-.][^\s,;]*(?:\s[^\d\s,;+\-.][^\s,;]*)?)?")


def split_list(value, field: str = "list") -> list[str | float]:
    """Items of a list typed as text ("400, 500, 600 MHz", "7.26 ppm; 1.2 ppm").

    Items are separated by commas, semicolons or spaces.  A unit may follow
    each item, or only some: when every item that has a unit has the same one,
    the bare items take it ("400, 600 MHz" is 400 MHz and 600 MHz); bare items
    beside several different units are refused as ambiguous.  A list (JSON
    array) is returned as it is."""
    if isinstance(value, list):
        return value
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return [value]
    if not isinstance(value, str):
        raise InputError(f"{field}: give a list such as '400, 600 MHz'.", field)
    if len(value) > MAX_LIST_TEXT:
        raise InputError(f"{field}: this list is too long ({len(value)} characters; at most {MAX_LIST_TEXT}).",
                         field, "too_large")
    text, items, pos = normalise(value), [], 0
    for m in _ITEM.finditer(text):
        gap = text[pos:m.start()]
        if gap.strip(" ,;\t\n") != "":
            raise InputError(f"{field}: cannot read '{gap.strip()[:30]}' in this list; separate the numbers "
                             "with commas, each with or without a unit.", field)
        items.append((m.group(1), (m.group(2) or "").strip()))
        pos = m.end()
    if text[pos:].strip(" ,;\t\n") != "" or not items:
        raise InputError(f"{field}: cannot read '{text[pos:].strip()[:30] or value[:30]}' as a list of numbers.", field)
    units = {u for _, u in items if u}
    if len(units) > 1 and any(not u for _, u in items):
        raise InputError(f"{field}: some items have different units ({', '.join(sorted(units))}) and some none; "
                         "give every item its unit, or one unit for all.", field)
    common = units.pop() if len(units) == 1 else ""
    return [f"{n} {u or common}".strip() for n, u in items]


def parse_list(value, kind: str, field: str) -> list[float]:
    """:func:`split_list`, each item read by :func:`parse_quantity` (in the default unit)."""
    return [parse_quantity(item, kind, f"{field}.{k}") for k, item in enumerate(split_list(value, field))]


def default_unit(kind: str) -> str:
    """The unit a bare number of ``kind`` is read in (``"frequency"`` → ``"MHz"``)."""
    return _DEFAULT[kind]
