"""Field ↔ frequency, the unified chemical-shift scale, ppm ↔ Hz.

Formulas
--------
* Larmor frequency of the bare nucleus: ν = |γ| B0 / 2π.
* A spectrometer named by its 1H frequency ν_H (the 1H of TMS) has
  B0 = 2π ν_H / γ_H; the ≈ 30 ppm shielding of the TMS proton is neglected
  here, as is customary when a magnet is called "500 MHz".
* Unified scale (IUPAC 2001, eq. 8): the 0 ppm of nuclide X is at
  ν_X = Ξ_X / 100 × ν_H(TMS).
* Chemical shift: ν = ν_ref (1 + δ × 10⁻⁶) (IUPAC 2001, eq. 6), so a line at
  δ ppm lies ν_ref[MHz] × δ Hz from the reference.
* 0 ppm vs the bare nucleus: (ν_ref / ν_bare − 1) × 10⁶ ppm.  It is the
  shielding of the nucleus in its reference compound (relative to the TMS
  proton) plus the error of the tabulated moment — not a chemical shift.  It
  is known only as well as γ_X, γ_H and Ξ are: the precision used is the sum
  of one unit in the last tabulated digit of each, relative to the value
  (significant figures of γ), and the difference is rounded to that decade.
"""

from __future__ import annotations

import math
from typing import NamedTuple

from nmrcalc.nuclides import BIOMOLECULAR, MAGNETIC, Nuclide

GAMMA_1H = MAGNETIC["1H"].gamma_rad_per_s_per_T


def field_T_from_proton_MHz(proton_MHz: float) -> float:
    """B0 of a magnet whose 1H (TMS) resonance is at ``proton_MHz``."""
    return 2 * math.pi * proton_MHz * 1e6 / GAMMA_1H


def proton_MHz_from_field_T(field_T: float) -> float:
    return GAMMA_1H * field_T / (2 * math.pi) / 1e6


def larmor_MHz(nuc: Nuclide, field_T: float) -> float:
    """Bare-nucleus Larmor frequency |γ| B0 / 2π in MHz."""
    return abs(nuc.gamma_rad_per_s_per_T) * field_T / (2 * math.pi) / 1e6


def xi_percent(nuc: Nuclide, scale: str = "unified") -> tuple[float | None, str | None]:
    """Ξ and its reference on the ``unified`` (IUPAC 2001) or ``biomolecular`` (IUPAC 2008, DSS) scale."""
    if scale == "biomolecular" and nuc.symbol in BIOMOLECULAR:
        return BIOMOLECULAR[nuc.symbol]
    return nuc.xi_percent, nuc.reference


def reference_MHz(nuc: Nuclide, proton_MHz: float, scale: str = "unified") -> float | None:
    """Frequency of the nuclide's 0 ppm: Ξ/100 × ν_H(TMS); None if no Ξ is recommended."""
    xi, _ = xi_percent(nuc, scale)
    return None if xi is None else xi / 100 * proton_MHz


def offset_Hz(ref_MHz: float, shift_ppm: float) -> float:
    """Offset of a line at δ from the 0 ppm frequency: ν_ref × δ × 10⁻⁶ (in Hz)."""
    return ref_MHz * shift_ppm


def shift_ppm(ref_MHz: float, offset_from_ref_Hz: float) -> float:
    return offset_from_ref_Hz / ref_MHz


def line_MHz(ref_MHz: float, shift_ppm_: float) -> float:
    """Absolute frequency of a line at δ: ν_ref (1 + δ × 10⁻⁶)."""
    return ref_MHz * (1 + shift_ppm_ * 1e-6)


class Difference(NamedTuple):
    ppm: float          # rounded to the decade of ``precision_ppm``
    precision_ppm: float
    decimals: int       # decimals worth showing (0 when the step is 1 ppm or more)


def reference_minus_bare(nuc: Nuclide, ref_MHz: float, bare_MHz: float) -> Difference:
    """(ν_ref / ν_bare − 1) × 10⁶, to the precision the tabulated γ_X, γ_H and Ξ support."""
    precision = (nuc.gamma_precision + MAGNETIC["1H"].gamma_precision + nuc.xi_precision) * 1e6
    exponent = math.floor(math.log10(precision))
    decimals = max(0, -exponent)
    value = round((ref_MHz / bare_MHz - 1) * 1e6, -exponent)
    return Difference(value + 0.0 if value else 0.0, precision, decimals)
