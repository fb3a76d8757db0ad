"""Acquisition window: textbook relations, each with its source."""

import math

import numpy as np
import pytest
from scipy.linalg import expm

from nmrcalc.api import handle
from nmrcalc.physics import acquisition


def ok(req):
    r = handle(req)
    assert r["ok"], r["error"]
    return r


def test_window_from_a_ppm_range():
    r = ok({"op": "acquisition_window", "nucleus": "13C", "spectrometer": "400 MHz", "low_ppm": "-10",
            "high_ppm": "230", "points": 65536})["result"]
    ref = 25.145020 / 100 * 400  # IUPAC 2001 eq. 8: ν(0 ppm) = Ξ/100 × ν_H
    assert math.isclose(r["reference_MHz"], ref, rel_tol=1e-12)
    # IUPAC 2001 eq. 6: ν = ν_ref (1 + δ 1e-6); carrier in the middle of the window
    assert r["carrier_ppm"] == 110 and math.isclose(r["carrier_MHz"], ref * (1 + 110e-6), rel_tol=1e-12)
    assert math.isclose(r["carrier_offset_Hz"], ref * 110, rel_tol=1e-12)
    assert math.isclose(r["spectral_width_Hz"], ref * 240, rel_tol=1e-12)
    assert math.isclose(r["spectral_width_kHz"], ref * 0.240, rel_tol=1e-12)


def test_nyquist_dwell_time():
    # Nyquist–Shannon (Keeler, Understanding NMR Spectroscopy, 2nd ed., §5.2): with quadrature
    # (complex) detection, a band SW wide around the carrier needs one complex point every 1/SW
    w = acquisition.window(100.0, 0.0, 100.0, 1024)   # SW = 10 kHz
    assert math.isclose(w.width_Hz, 1e4) and math.isclose(w.dwell_s, 1e-4)
    # a line just inside the window is not aliased: its phase advances less than π per dwell
    assert 2 * math.pi * (w.width_Hz / 2 * 0.999) * w.dwell_s < math.pi


def test_acquisition_time_is_points_times_dwell():
    # AT = N × DW, digital resolution = SW/N = 1/AT (Keeler, §5.2)
    for points in (1024, 32768, 65536):
        w = acquisition.window(150.9, -10, 230, points)
        assert math.isclose(w.acquisition_s, points * w.dwell_s, rel_tol=1e-12)
        assert math.isclose(w.resolution_Hz, 1 / w.acquisition_s, rel_tol=1e-12)
        assert math.isclose(w.resolution_ppm, w.resolution_Hz / 150.9, rel_tol=1e-12)


def test_nutation_frequency_of_a_90_degree_pulse():
    # γB₁ τ₉₀ = π/2 (Levitt, Spin Dynamics, 2nd ed., §10.7): ν₁ = 1/(4 τ₉₀)
    assert math.isclose(acquisition.nutation_Hz(10e-6), 25e3)
    r = ok({"op": "acquisition_window", "nucleus": "1H", "spectrometer": "500", "low_ppm": "0", "high_ppm": "10",
            "points": 16384, "pulse_90": "10 us"})["result"]
    gamma_h = 26.7522128e7  # IUPAC 2001
    assert math.isclose(r["B1_mT"], 2 * math.pi * 25e3 / gamma_h * 1e3, rel_tol=1e-9)


def _bloch_transverse(nu1, offset, tau):
    """|M_xy| after a rectangular pulse from M = z, by rotating M with scipy.linalg.expm
    (rotating frame: ω = 2π(ν₁ x̂ + Δ ẑ); dM/dt = ω × M, Levitt §10.7)."""
    wx, wz = 2 * np.pi * nu1, 2 * np.pi * offset
    generator = np.array([[0, -wz, 0], [wz, 0, -wx], [0, wx, 0]])
    m = expm(generator * tau) @ np.array([0.0, 0.0, 1.0])
    return math.hypot(m[0], m[1])


@pytest.mark.parametrize("ratio", [0.0, 0.3, 1.0, 1.6, 2.5, 4.0])
def test_rectangular_pulse_excitation_profile(ratio):
    # the closed form matches a direct rotation of M computed with scipy (general-purpose library)
    tau = 10e-6
    nu1 = acquisition.nutation_Hz(tau)
    assert math.isclose(acquisition.transverse_fraction(nu1, tau, ratio * nu1),
                        _bloch_transverse(nu1, ratio * nu1, tau), abs_tol=1e-9)


def test_well_excited_band_is_where_the_profile_crosses_90_percent():
    tau = 10e-6
    nu1 = acquisition.nutation_Hz(tau)
    half = acquisition.well_excited_Hz(tau)
    # scipy-computed profile: ≥ 0.9 everywhere inside, < 0.9 just outside
    assert all(_bloch_transverse(nu1, x, tau) >= 0.9 - 1e-9 for x in np.linspace(0, half, 50))
    assert _bloch_transverse(nu1, half * 1.01, tau) < 0.9
    assert 1.4 * nu1 < half < 1.7 * nu1   # about ±1.6 ν₁ for a 90° pulse (scipy profile above)


def test_platinum_window_wider_than_the_pulse_warns():
    # 195Pt over 6000 ppm at 600 MHz: SW = 6000 × Ξ/100 × 600 Hz ≈ 774 kHz, far beyond ±40 kHz
    r = ok({"op": "acquisition_window", "nucleus": "195Pt", "spectrometer": "600 MHz", "low_ppm": "-6000",
            "high_ppm": "0", "points": 32768, "pulse_90": "10"})
    assert math.isclose(r["result"]["spectral_width_Hz"], 6000 * 21.496784 / 100 * 600, rel_tol=1e-12)
    assert any("wider than this 90° pulse excites well" in w for w in r["warnings"])
    narrow = ok({"op": "acquisition_window", "nucleus": "1H", "spectrometer": "600 MHz", "low_ppm": "-1",
                 "high_ppm": "11", "points": 32768, "pulse_90": "10"})
    assert not narrow["warnings"]


@pytest.mark.parametrize("bad,field", [({"points": 1}, "points"), ({"points": "lots"}, "points"),
                                       ({"high_ppm": "-10"}, "high_ppm"), ({"pulse_90": "5 ppm"}, "pulse_90")])
def test_bad_window_inputs_name_their_field(bad, field):
    req = {"op": "acquisition_window", "nucleus": "13C", "spectrometer": "400", "low_ppm": "-10",
           "high_ppm": "230", "points": 1024, **bad}
    r = handle(req)
    assert not r["ok"] and r["error"]["field"] == field
