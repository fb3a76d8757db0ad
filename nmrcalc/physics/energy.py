"""Transition energies, Boltzmann populations and optical photons.

* ΔE = h ν per nucleus; per mole × N_A; in eV ÷ e; as a wavenumber ν / c.
* Zeeman levels E_m = −m γ ħ B0 (m = −I … I); populations
  p_m = exp(−E_m / kT) / Σ exp(−E_m / kT) (Boltzmann).  For I = 1/2 the
  fractional excess (N_α − N_β)/(N_α + N_β) = tanh(h ν / 2kT).
* Photon: ν = c / λ, or ν = c σ for a wavenumber σ.
Constants: CODATA 2022 (``nmrcalc.constants``).
"""

from __future__ import annotations

import math
from fractions import Fraction

from nmrcalc.constants import (
    AVOGADRO_PER_MOL,
    BOLTZMANN_J_PER_K,
    CALORIE_J,
    ELEMENTARY_CHARGE_C,
    HBAR_J_S,
    PLANCK_J_S,
    SPEED_OF_LIGHT_M_PER_S,
)


def energy_units(freq_Hz: float) -> dict[str, float]:
    """The energy of a quantum of frequency ``freq_Hz`` in the units chemists use."""
    e_J = PLANCK_J_S * freq_Hz
    j_mol = e_J * AVOGADRO_PER_MOL
    return {"J": e_J, "J_per_mol": j_mol, "cal_per_mol": j_mol / CALORIE_J,
            "kcal_per_mol": j_mol / CALORIE_J / 1000, "eV": e_J / ELEMENTARY_CHARGE_C,
            "wavenumber_cm-1": freq_Hz / SPEED_OF_LIGHT_M_PER_S / 100, "frequency_Hz": freq_Hz}


def photon_freq_Hz(wavelength_nm: float | None = None, wavenumber_cm: float | None = None) -> float:
    if wavelength_nm is not None:
        return SPEED_OF_LIGHT_M_PER_S / (wavelength_nm * 1e-9)
    if wavenumber_cm is None:  # the same TypeError the product with None raised before
        raise TypeError("photon_freq_Hz needs wavelength_nm or wavenumber_cm")
    return SPEED_OF_LIGHT_M_PER_S * wavenumber_cm * 100


def populations(
    spin: Fraction, gamma_rad_per_s_per_T: float, field_T: float, temperature_K: float
) -> list[tuple[Fraction, float]]:
    """Boltzmann fraction of each Zeeman level m, lowest energy first."""
    ms = [spin - k for k in range(int(2 * spin) + 1)]
    energies = {m: -float(m) * gamma_rad_per_s_per_T * HBAR_J_S * field_T for m in ms}
    e0 = min(energies.values())
    weights = {m: math.exp(-(e - e0) / (BOLTZMANN_J_PER_K * temperature_K)) for m, e in energies.items()}
    total = sum(weights.values())
    return sorted(((m, w / total) for m, w in weights.items()), key=lambda mw: energies[mw[0]])


def adjacent_excess(spin: Fraction, gamma_rad_per_s_per_T: float, field_T: float, temperature_K: float) -> float:
    """Population difference of the two lowest levels as a fraction of all nuclei.

    For I = 1/2 this is computed as tanh(h ν / 2kT), which keeps full
    precision where 1 − exp(−x) would cancel.
    """
    x = abs(gamma_rad_per_s_per_T) * HBAR_J_S * field_T / (BOLTZMANN_J_PER_K * temperature_K)
    if spin == Fraction(1, 2):
        return math.tanh(x / 2)
    n = int(2 * spin) + 1
    # levels k = 0..n-1 with weight exp(-k x); (w0 - w1)/Σw = (1 - e^-x)(1 - e^-x)/(1 - e^-nx)
    em1 = -math.expm1(-x)
    return em1 * em1 / -math.expm1(-n * x)
