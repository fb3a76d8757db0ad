"""Reading request fields: presence, quantities with units, the magnet.

Shared by every op so that each error names the request key it belongs to.
"""

from __future__ import annotations

from contextvars import ContextVar
from fractions import Fraction

from nmrcalc.errors import InputError
from nmrcalc.nuclides import Nuclide, lookup, lookup_magnetic
from nmrcalc.physics import larmor
from nmrcalc.physics.larmor import field_T_from_proton_MHz, proton_MHz_from_field_T
from nmrcalc.units import parse_positive, parse_quantity

# The progress callback of the request being handled (set by api.handle), or None.
PROGRESS: ContextVar = ContextVar("progress", default=None)

STRONGEST_MAGNET_T = 30.0   # common practice: high-resolution magnets reach about 28 T (1.2 GHz)
WEAKEST_FIELD_T = 1e-5      # below Earth's field (about 5e-5 T)
# Every quantity, in its default unit (T, MHz, Hz, ppm, K, nm, cm-1, %), must be 0 or have a
# magnitude in [MIN_MAGNITUDE, MAX_MAGNITUDE]: far beyond any real sample, yet products and
# quotients of a few such numbers stay finite and nonzero, so no result overflows JSON.
MAX_MAGNITUDE = 1e12
MIN_MAGNITUDE = 1e-12


def require(req: dict, key: str, prefix: str = ""):
    if key not in req or req[key] is None or req[key] == "":
        raise InputError(f"'{key}' is missing.", prefix + key, "missing_field")
    return req[key]


def quantity(req: dict, key: str, kind: str, *, positive: bool = False, default=None, prefix: str = ""):
    if key not in req or req[key] is None or req[key] == "":
        if default is not None:
            return default
        raise InputError(f"'{key}' is missing.", prefix + key, "missing_field")
    return bounded(req[key], kind, prefix + key, positive)


def bounded(value, kind: str, field: str, positive: bool = False) -> float:
    """Parse ``value`` as a ``kind`` quantity that is 0 or has a magnitude in
    [MIN_MAGNITUDE, MAX_MAGNITUDE] (in the default unit); else InputError naming ``field``."""
    try:
        x = (parse_positive if positive else parse_quantity)(value, kind, field)
    except OverflowError:  # an integer too large for a float
        x = float("inf")
    return in_range(x, field)


def in_range(x: float, field: str) -> float:
    """``x`` if it is 0 or its magnitude lies in [MIN_MAGNITUDE, MAX_MAGNITUDE]; else InputError."""
    if x != 0 and not MIN_MAGNITUDE <= abs(x) <= MAX_MAGNITUDE:
        raise InputError(f"{field}: {x:.3g} is out of range; the size must lie between "
                         f"{MIN_MAGNITUDE:g} and {MAX_MAGNITUDE:g} in the default unit (or be 0).", field)
    return x


def nucleus(req: dict, key: str, *, magnetic: bool = True, prefix: str = "") -> Nuclide:
    query = require(req, key, prefix)
    if not isinstance(query, str):
        raise InputError(f"'{key}' must be a nuclide name such as 13C.", prefix + key)
    return (lookup_magnetic if magnetic else lookup)(query, prefix + key)


def flag(req: dict, key: str, default: bool = False) -> bool:
    value = req.get(key, default)
    if not isinstance(value, bool):
        raise InputError(f"'{key}' must be true or false.", key)
    return value


def magnet(req: dict, warnings: list[str]) -> tuple[float, float]:
    """(field_T, proton_MHz) from ``spectrometer`` (1H MHz) or ``field`` (T, G, kG)."""
    has_spec = req.get("spectrometer") not in (None, "")
    has_field = req.get("field") not in (None, "")
    if has_spec and has_field:
        raise InputError("Give either 'spectrometer' or 'field', not both.", "field")
    if not (has_spec or has_field):
        raise InputError("Give the magnet as 'spectrometer' (1H frequency, e.g. '500 MHz') or "
                         "'field' (e.g. '11.74 T').", "spectrometer", "missing_field")
    if has_spec:  # either key takes a field (T, G) or a 1H frequency (MHz): units "magnet_*" kinds
        proton_MHz = bounded(req["spectrometer"], "magnet_MHz", "spectrometer", positive=True)
        field_T = field_T_from_proton_MHz(proton_MHz)
    else:
        field_T = bounded(req["field"], "magnet_T", "field", positive=True)
        proton_MHz = proton_MHz_from_field_T(field_T)
    if field_T > STRONGEST_MAGNET_T:
        warnings.append(f"{field_T:.4g} T is above the strongest high-resolution NMR magnets "
                        "(about 28 T, 1.2 GHz); check the value.")
    if field_T < WEAKEST_FIELD_T:
        warnings.append(f"{field_T:.3g} T is below Earth's magnetic field; check the unit.")
    return field_T, proton_MHz


def spin_text(spin: Fraction) -> str:
    return str(spin)


def zero_ppm_MHz(nuc: Nuclide, field_T: float, proton_MHz: float, warnings: list[str],
                 scale: str = "unified") -> float:
    """The frequency of 0 ppm for ``nuc`` at this magnet: Ξ × the 1H frequency
    (``larmor.reference_MHz``) where a reference is recommended; else the bare Larmor
    frequency, with a warning saying so (every op uses this one helper)."""
    ref = larmor.reference_MHz(nuc, proton_MHz, scale)
    if ref is not None:
        return ref
    note = (f"{nuc.symbol} has no recommended reference (Ξ): 0 ppm is taken as the bare Larmor frequency, "
            "so shifts in ppm are only approximate.")
    if note not in warnings:
        warnings.append(note)
    return larmor.larmor_MHz(nuc, field_T)
