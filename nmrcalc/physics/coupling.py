"""Scaling a coupling constant between isotopologues, and the reduced coupling.

* J is proportional to the product of the two magnetogyric ratios, so
  swapping one isotope for another of the same element gives
  J′ = J × γ′/γ (sign kept; flipped when γ′/γ < 0, e.g. 14N → 15N).
  Real couplings differ from this by primary isotope effects of about
  1–2 % (common practice), so the result is an estimate.
* Reduced coupling (isotope-independent), IUPAC 2001 / Pople & Santry:
  K_AB = 4π² J_AB / (h γ_A γ_B), in N A⁻² m⁻³ (= T² J⁻¹).
"""

from __future__ import annotations

import math

from nmrcalc.constants import PLANCK_J_S
from nmrcalc.errors import InputError
from nmrcalc.nuclides import Nuclide

ISOTOPE_EFFECT_NOTE = ("Scaled by the ratio of magnetogyric ratios: an estimate. Primary isotope "
                       "effects usually move the measured coupling by about 1–2 %.")


def gamma_ratio(from_nuc: Nuclide, to_nuc: Nuclide) -> float:
    """γ_to / γ_from for two isotopes of one element; refuses other pairs."""
    if from_nuc.element != to_nuc.element:
        raise InputError(f"{from_nuc.symbol} → {to_nuc.symbol} changes the element, so it is not an "
                         "isotopologue; coupling scaling only swaps isotopes of one element.",
                         "to", "not_isotopologue")
    for nuc, field in ((from_nuc, "from"), (to_nuc, "to")):
        if not nuc.magnetic:
            raise InputError(f"{nuc.symbol} has spin 0: it has no couplings.", field, "not_magnetic")
    return to_nuc.gamma_rad_per_s_per_T / from_nuc.gamma_rad_per_s_per_T


def scale_J_Hz(J_Hz: float, from_nuc: Nuclide, to_nuc: Nuclide) -> float:
    return J_Hz * gamma_ratio(from_nuc, to_nuc)


def reduced_coupling(J_Hz: float, a: Nuclide, b: Nuclide) -> float:
    """K = 4π² J / (h γ_A γ_B) in N A⁻² m⁻³."""
    return 4 * math.pi ** 2 * J_Hz / (PLANCK_J_S * a.gamma_rad_per_s_per_T * b.gamma_rad_per_s_per_T)
