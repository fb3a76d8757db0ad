"""Scaling a coupling constant between isotopologues, and the reduced coupling.

* J is proportional to the product of the two magnetogyric ratios, so
  swapping one isotope for another of the same element gives
  J′ = J × γ′/γ (sign kept; flipped when γ′/γ < 0, e.g. 14N → 15N).
  Real couplings differ from this by primary isotope effects of about
  1–2 % (common practice), so the result is an estimate.
* When both isotopes have Ξ on the same reference compound (isotopologues of
  it count as the same: Si(CD3)4 for 2H beside Si(CH3)4 for 1H), Ξ′/Ξ is
  their measured resonance-frequency ratio in one sample, which equals γ′/γ
  (shielding does not depend on the isotope, to about 1 ppm), and is known
  better than the ratio of tabulated γ (moments measured by different
  methods, off by up to a few 10⁻⁴): it is used instead, with γ's sign.
  (IUPAC 2001, eq. 8: Ξ is a ratio of observed frequencies.)
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
XI_RATIO_NOTE = ("The ratio used is Ξ(to)/Ξ(from), the measured ratio of their resonance frequencies in one "
                 "reference compound (same as the γ ratio, but known more precisely).")
GAMMA_RATIO_NOTE = "The ratio used is γ(to)/γ(from) from the tabulated magnetogyric ratios."


def _same_compound(a: str | None, b: str | None) -> bool:
    """Same reference compound, treating its 2H/3H isotopologues as the same (Si(CD3)4 ~ Si(CH3)4)."""
    if a is None or b is None:
        return False
    return a.replace("CD3", "CH3").replace("CT3", "CH3") == b.replace("CD3", "CH3").replace("CT3", "CH3")


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


def isotope_ratio(from_nuc: Nuclide, to_nuc: Nuclide) -> tuple[float, str]:
    """(γ_to/γ_from, "xi" or "gamma"): from Ξ when both share a reference compound, else from γ."""
    ratio = gamma_ratio(from_nuc, to_nuc)
    if from_nuc.xi_percent and to_nuc.xi_percent and _same_compound(from_nuc.reference, to_nuc.reference):
        return math.copysign(to_nuc.xi_percent / from_nuc.xi_percent, ratio), "xi"
    return ratio, "gamma"


def scale_J_Hz(J_Hz: float, from_nuc: Nuclide, to_nuc: Nuclide) -> float:
    return J_Hz * isotope_ratio(from_nuc, to_nuc)[0]


def reduced_coupling(J_Hz: float, a: Nuclide, b: Nuclide) -> float:
    """K = 4π² J / (h γ_A γ_B) in N A⁻² m⁻³."""
    return 4 * math.pi ** 2 * J_Hz / (PLANCK_J_S * a.gamma_rad_per_s_per_T * b.gamma_rad_per_s_per_T)
