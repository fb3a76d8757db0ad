"""Tests for nmrcalc.physics.lineshape (sampled Lorentzian/Gaussian spectra and the ppm axis)."""

import math
import random

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nmrcalc.errors import InputError
from nmrcalc.physics.lineshape import (
    MAX_EVALUATIONS,
    MAX_POINTS,
    MIN_POINTS_PER_FWHM,
    gaussian,
    hz_to_ppm,
    lorentzian,
    sample_spectrum,
)

# Trapezoid-rule area error at >= 5 points per FWHM stays below this (relative); stated tolerance for area checks.
AREA_RTOL = 1e-3


def trapezoid(x, y):
    return math.fsum((y[i] + y[i + 1]) / 2 * (x[i + 1] - x[i]) for i in range(len(x) - 1))


def lorentzian_cdf(x, x0, w):
    # integral of the normalized Lorentzian (any spectroscopy text): 1/2 + arctan(2(x - x0)/w)/pi
    return 0.5 + math.atan(2 * (x - x0) / w) / math.pi


def gaussian_cdf(x, x0, w):
    # integral of the normalized Gaussian (any spectroscopy text) with sigma = w / (2 sqrt(2 ln 2))
    sigma = w / (2 * math.sqrt(2 * math.log(2)))
    return 0.5 * (1 + math.erf((x - x0) / (sigma * math.sqrt(2))))


CDF = {"lorentzian": lorentzian_cdf, "gaussian": gaussian_cdf}


@settings(max_examples=60, deadline=None)
@given(
    st.sampled_from(["lorentzian", "gaussian"]),
    st.lists(
        st.tuples(st.floats(-50, 50), st.floats(0.01, 10)),
        min_size=1,
        max_size=5,
    ),
    st.floats(0.2, 5),
    st.sampled_from([MIN_POINTS_PER_FWHM, 8, 10]),
)
def test_area_matches_stick_intensity_inside_window(shape, sticks, fwhm, density):
    spectrum = sample_spectrum(sticks, fwhm, shape=shape, points_per_fwhm=density)
    low, high = spectrum.x_Hz[0], spectrum.x_Hz[-1]
    # expected: each stick's intensity times the fraction of its normalized profile inside the window
    expected = math.fsum(a * (CDF[shape](high, x0, fwhm) - CDF[shape](low, x0, fwhm)) for x0, a in sticks)
    assert trapezoid(spectrum.x_Hz, spectrum.y) == pytest.approx(expected, rel=AREA_RTOL)


def test_total_area_with_wide_windows():
    # normalized Gaussian: the whole area lies within +-10 FWHM (any spectroscopy text)
    g = sample_spectrum([(0.0, 3.0)], 1.0, shape="gaussian")
    assert trapezoid(g.x_Hz, g.y) == pytest.approx(3.0, rel=1e-6)
    # normalized Lorentzian: the fraction within +-k FWHM is (2/pi) arctan(2k) (any spectroscopy text)
    lor = sample_spectrum([(0.0, 3.0)], 1.0, margin_fwhm=2000)
    assert trapezoid(lor.x_Hz, lor.y) == pytest.approx(3.0 * 2 / math.pi * math.atan(4000), rel=AREA_RTOL)
    assert trapezoid(lor.x_Hz, lor.y) == pytest.approx(3.0, rel=AREA_RTOL)


@pytest.mark.parametrize("w, area", [(1.0, 1.0), (0.3, 2.5), (4.0, 0.01)])
def test_peak_heights_and_half_widths(w, area):
    # Lorentzian of FWHM w and area A peaks at 2A/(pi w) (normalized Lorentzian definition, any spectroscopy text)
    assert lorentzian(0.0, 0.0, w, area) == pytest.approx(2 * area / (math.pi * w))
    assert lorentzian(w / 2, 0.0, w, area) == pytest.approx(area / (math.pi * w))
    # Gaussian of FWHM w and area A peaks at A sqrt(4 ln 2 / pi) / w (normalized Gaussian definition)
    assert gaussian(0.0, 0.0, w, area) == pytest.approx(area * math.sqrt(4 * math.log(2) / math.pi) / w)
    assert gaussian(-w / 2, 0.0, w, area) == pytest.approx(gaussian(0.0, 0.0, w, area) / 2)
    # sampled: the grid point at the centre carries the peak height
    spectrum = sample_spectrum([(0.0, area)], w, window_Hz=(-10 * w, 10 * w))
    centre = min(range(len(spectrum.x_Hz)), key=lambda i: abs(spectrum.x_Hz[i]))
    assert spectrum.x_Hz[centre] == pytest.approx(0.0, abs=1e-9 * w)
    assert spectrum.y[centre] == pytest.approx(2 * area / (math.pi * w), rel=1e-9)


@settings(max_examples=60, deadline=None)
@given(
    st.floats(-1000, 1000),
    st.floats(0.05, 20),
    st.sampled_from(["lorentzian", "gaussian"]),
    st.floats(0.3, 40),
    st.floats(0.3, 40),
)
def test_no_line_is_missed(x0, fwhm, shape, below, above):
    # with a step <= w/5, some point is within w/10 of the centre: Lorentzian >= 1/(1 + 0.2**2) of the peak,
    # Gaussian >= 2**(-0.04) of the peak (normalized profile definitions)
    spectrum = sample_spectrum([(x0, 1.0)], fwhm, shape=shape, window_Hz=(x0 - below * fwhm, x0 + above * fwhm))
    assert spectrum.step_Hz <= fwhm / MIN_POINTS_PER_FWHM * (1 + 1e-12)
    peak = (lorentzian if shape == "lorentzian" else gaussian)(x0, x0, fwhm)
    assert max(spectrum.y) >= peak * min(1 / 1.04, 2**-0.04) * (1 - 1e-9)


def test_grid_and_window():
    spectrum = sample_spectrum([(-5.0, 1.0), (5.0, 2.0)], 1.0, points_per_fwhm=10, margin_fwhm=3)
    assert spectrum.x_Hz[0] == -8.0 and spectrum.x_Hz[-1] == 8.0
    assert len(spectrum.x_Hz) == 161
    assert spectrum.step_Hz == pytest.approx(0.1)
    assert all(b > a for a, b in zip(spectrum.x_Hz, spectrum.x_Hz[1:]))


def test_spectrum_is_linear_in_sticks():
    window = (-20.0, 20.0)
    both = sample_spectrum([(-3.0, 1.0), (4.0, 0.5)], 0.8, window_Hz=window)
    one = sample_spectrum([(-3.0, 1.0)], 0.8, window_Hz=window)
    two = sample_spectrum([(4.0, 0.5)], 0.8, window_Hz=window)
    assert both.y == pytest.approx([a + b for a, b in zip(one.y, two.y)])


def test_step_widens_down_to_minimum_density_then_refuses():
    # 199 Hz at 0.01 Hz: 10 points per width would need 199001 > MAX_POINTS points; 5 per width needs 99501
    spectrum = sample_spectrum([(0.0, 1.0), (199.0, 1.0)], 0.01, window_Hz=(0.0, 199.0), points_per_fwhm=10)
    assert len(spectrum.x_Hz) == MAX_POINTS
    assert spectrum.step_Hz <= 0.01 / MIN_POINTS_PER_FWHM
    with pytest.raises(InputError) as info:
        sample_spectrum([(0.0, 1.0), (1000.0, 1.0)], 0.01)
    assert info.value.code == "too_large" and info.value.field == "fwhm_Hz"
    assert str(MAX_POINTS) in info.value.message
    with pytest.raises(InputError) as info:
        sample_spectrum([(k * 0.02, 1.0) for k in range(9900)], 0.01, margin_fwhm=0)
    assert info.value.code == "too_large" and info.value.field == "sticks"
    assert str(MAX_EVALUATIONS) in info.value.message and "9900 lines" in info.value.message


def test_many_lines_on_a_long_grid_are_drawn():
    # 2100 lines of 0.8 Hz over 427 Hz (the size of seven coupled 1H at 400 MHz): counted as the
    # evaluations made (knots + near windows), not lines x points, so it is drawn, not refused
    sticks = [(k * 0.2, 1.0) for k in range(2100)]
    spectrum = sample_spectrum(sticks, 0.8)
    area = sum((a + b) / 2 * spectrum.step_Hz for a, b in zip(spectrum.y, spectrum.y[1:]))
    assert area == pytest.approx(2100, rel=0.02)  # plain arithmetic: area of unit-area lines, tails outside


@pytest.mark.parametrize(
    "sticks, kwargs, field",
    [
        ([], {}, "sticks"),
        ([(0.0, -1.0)], {}, "sticks.0.intensity"),
        ([(0.0, 1.0), (float("nan"), 1.0)], {}, "sticks.1.offset_Hz"),
        ([(0.0,)], {}, "sticks.0"),
        ([(0.0, 1.0)], {"fwhm_Hz": 0.0}, "fwhm_Hz"),
        ([(0.0, 1.0)], {"fwhm_Hz": float("inf")}, "fwhm_Hz"),
        ([(0.0, 1.0)], {"shape": "voigt"}, "shape"),
        ([(0.0, 1.0)], {"points_per_fwhm": 2}, "points_per_fwhm"),
        ([(0.0, 1.0)], {"window_Hz": (5.0, 1.0)}, "window_Hz"),
        ([(0.0, 1.0)], {"margin_fwhm": -1}, "margin_fwhm"),
        ([(0.0, 1.0)], {"max_points": MAX_POINTS + 1}, "max_points"),
    ],
)
def test_validation(sticks, kwargs, field):
    kwargs = {"fwhm_Hz": 1.0, **kwargs}
    with pytest.raises(InputError) as info:
        sample_spectrum(sticks, **kwargs)
    assert info.value.field == field


def test_ppm_axis():
    # delta = offset / spectrometer frequency: Hz per MHz is ppm (IUPAC, Harris et al., Pure Appl. Chem. 2001, 73, 1795)
    assert hz_to_ppm([-400.0, 0.0, 800.0], 400.0, centre_ppm=7.26) == pytest.approx([6.26, 7.26, 9.26])
    spectrum = sample_spectrum([(0.0, 1.0)], 1.0)
    ppm = hz_to_ppm(spectrum.x_Hz, 100.6, centre_ppm=77.0)
    assert all(b > a for a, b in zip(ppm, ppm[1:]))
    with pytest.raises(InputError) as info:
        hz_to_ppm([0.0], 0.0)
    assert info.value.field == "observe_freq_MHz"



def test_long_lorentzian_grid_matches_direct_sum():
    # reference: direct numpy evaluation of the Lorentzian formula at every point; the bound is the
    # linear-interpolation error (3/16)(h/w)^2 (w/d)^4 per line beyond NEAR_FWHM widths (module docstring)
    numpy = pytest.importorskip("numpy")
    rng = random.Random(20261202)
    for _ in range(25):
        sticks = [(rng.uniform(-300, 300), rng.uniform(0.1, 2.0)) for _ in range(rng.randint(1, 40))]
        w, density = rng.choice([0.2, 0.5, 1.3, 7.0]), rng.choice([5, 6, 7, 10, 25])
        spectrum = sample_spectrum(sticks, w, points_per_fwhm=density)
        x = numpy.array(spectrum.x_Hz)
        direct = sum(a * w / (2 * numpy.pi) / ((x - x0) ** 2 + (w / 2) ** 2) for x0, a in sticks)
        peaks = sum(2 * a / (math.pi * w) for _, a in sticks)
        assert numpy.abs(numpy.array(spectrum.y) - direct).max() <= 3e-6 * peaks


def test_thousands_of_clustered_lines_over_khz_match_direct_sum():
    # a second-order spectrum's shape: 3000 lines in five multiplets over 2.6 kHz, drawn at 0.5 Hz (not
    # refused); reference: direct numpy evaluation of the Lorentzian formula at every point; the bound is the
    # knots' interpolation error plus the bins' centroid error, 2.5e-6 of the summed peak heights (module docstring)
    numpy = pytest.importorskip("numpy")
    rng = random.Random(14)
    centres = [370.0, 600.0, 650.0, 1050.0, 2880.0]
    sticks = [(rng.choice(centres) + rng.gauss(0.0, 12.0), rng.uniform(0.0, 1.0) ** 3) for _ in range(3000)]
    for w in (0.5, 2.0):
        spectrum = sample_spectrum(sticks, w)
        x = numpy.array(spectrum.x_Hz)
        direct = numpy.zeros_like(x)
        for x0, a in sticks:
            direct += a * w / (2 * numpy.pi) / ((x - x0) ** 2 + (w / 2) ** 2)
        peaks = sum(2 * a / (math.pi * w) for _, a in sticks)
        assert numpy.abs(numpy.array(spectrum.y) - direct).max() <= 2.5e-6 * peaks
