"""Acquisition window: spectral width, carrier, dwell and acquisition time, and
what a rectangular 90° pulse excites.

Formulas
--------
* A window δ_low … δ_high ppm of a nuclide whose 0 ppm is at ν_ref MHz has
  the carrier in its middle, δ_c = (δ_low + δ_high)/2, at ν_ref (1 + δ_c 10⁻⁶)
  MHz (IUPAC 2001, eq. 6), ν_ref δ_c Hz from 0 ppm; its spectral width is
  SW = ν_ref (δ_high − δ_low) Hz.
* Quadrature (complex) detection samples every dwell time DW; the band it
  records without folding is 1/DW wide, centred on the carrier (Nyquist–
  Shannon sampling theorem; J. Keeler, *Understanding NMR Spectroscopy*,
  2nd ed., Wiley 2010, §5.2): DW = 1/SW.
* N complex points take AT = N × DW (Keeler, §5.2); the digital resolution
  (point spacing of the spectrum without zero filling) is SW/N = 1/AT Hz per
  point, i.e. SW/(N ν_ref) ppm per point.
* A 90° pulse of length τ₉₀ rotates by π/2 on resonance, so its nutation
  frequency is ν₁ = γB₁/2π = 1/(4 τ₉₀) (M. H. Levitt, *Spin Dynamics*, 2nd ed.,
  Wiley 2008, §10.7), and B₁ = 2π ν₁ / |γ|.
* Off resonance by Δ (Hz) the same pulse rotates about the effective field,
  tilted from z by α with tan α = ν₁/Δ, by θ = 2π τ₉₀ √(ν₁² + Δ²); starting
  from M along z, M_z = cos²α + sin²α cos θ and |M_xy| = √(1 − M_z²) (Levitt,
  §10.7; Keeler, §3.8).  The band "excited well" is the offset range around
  the carrier where |M_xy| stays at or above ``WELL_EXCITED`` of its on-resonance
  value of 1.
"""

from __future__ import annotations

import math
from typing import NamedTuple

WELL_EXCITED = 0.9   # fraction of full transverse magnetisation (common practice, no source)


class Window(NamedTuple):
    carrier_ppm: float
    carrier_MHz: float
    carrier_offset_Hz: float   # from 0 ppm
    width_Hz: float
    dwell_s: float
    acquisition_s: float
    resolution_Hz: float       # per point
    resolution_ppm: float      # per point


def window(ref_MHz: float, low_ppm: float, high_ppm: float, points: int) -> Window:
    """The acquisition window for ``low_ppm``…``high_ppm`` with ``points`` complex points."""
    carrier = (low_ppm + high_ppm) / 2
    width_Hz = ref_MHz * (high_ppm - low_ppm)
    dwell = 1 / width_Hz
    resolution = width_Hz / points
    return Window(carrier, ref_MHz * (1 + carrier * 1e-6), ref_MHz * carrier, width_Hz, dwell,
                  points * dwell, resolution, resolution / ref_MHz)


def nutation_Hz(pulse90_s: float) -> float:
    """ν₁ = 1/(4 τ₉₀)."""
    return 1 / (4 * pulse90_s)


def transverse_fraction(nu1_Hz: float, pulse_s: float, offset_Hz: float) -> float:
    """|M_xy| after a rectangular pulse (nutation ν₁, length τ) at ``offset_Hz`` from the carrier, M₀ = 1."""
    nu_eff = math.hypot(nu1_Hz, offset_Hz)
    sin2 = (nu1_Hz / nu_eff) ** 2
    mz = (1 - sin2) + sin2 * math.cos(2 * math.pi * nu_eff * pulse_s)
    return math.sqrt(max(0.0, 1 - mz * mz))


def well_excited_Hz(pulse90_s: float, threshold: float = WELL_EXCITED) -> float:
    """Half-width of the band around the carrier where a 90° pulse leaves |M_xy| ≥ ``threshold``:
    the first offset where the profile falls below it (stepped in ν₁/200, then bisected)."""
    nu1 = nutation_Hz(pulse90_s)
    step = nu1 / 200
    lo = 0.0
    while transverse_fraction(nu1, pulse90_s, lo + step) >= threshold:
        lo += step
    hi = lo + step
    for _ in range(50):
        mid = (lo + hi) / 2
        if transverse_fraction(nu1, pulse90_s, mid) >= threshold:
            lo = mid
        else:
            hi = mid
    return lo


def b1_T(nu1_Hz: float, gamma_rad_per_s_per_T: float) -> float:
    """B₁ = 2π ν₁ / |γ|."""
    return 2 * math.pi * nu1_Hz / abs(gamma_rad_per_s_per_T)
