"""Receptivity and the acquisition time needed for equal signal-to-noise.

* Receptivity (IUPAC 2001): D ∝ |γ|³ I(I+1) × abundance, here relative to a
  reference nuclide at natural abundance.
* At equal conditions (same number of molecules, field, line width,
  probe), signal-to-noise grows as √(time), so matching the reference's
  S/N takes time_factor = 1 / D² times as long (common practice).
"""

from __future__ import annotations

from nmrcalc.errors import InputError
from nmrcalc.nuclides import Nuclide


def relative_receptivity(nuc: Nuclide, ref: Nuclide, abundance_percent: float | None = None) -> float:
    raw_ref = ref.receptivity_raw()
    if raw_ref == 0:
        raise InputError(f"{ref.symbol} has no natural abundance or no spin; choose another reference.",
                         "relative_to", "not_magnetic")
    raw = nuc.receptivity_raw(abundance_percent)
    if raw == 0:
        raise InputError(f"{nuc.symbol} does not occur naturally: give an enrichment in percent.",
                         "enrichment_percent", "missing_field")
    return raw / raw_ref


def time_factor(receptivity: float) -> float:
    """Acquisition time relative to the reference for equal S/N: 1 / D²."""
    return 1.0 / receptivity ** 2
