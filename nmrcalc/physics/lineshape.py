"""Line shapes: stick spectra (Hz offsets and intensities) sampled on an even grid.

Physics
-------
Each stick of intensity ``A`` at ``x0`` becomes a line of full width at half
height ``w`` whose AREA is ``A`` (the normalized profiles of any spectroscopy
text, e.g. P. W. Atkins & J. de Paula, *Physical Chemistry*, or J. Keeler,
*Understanding NMR Spectroscopy*, 2nd ed., Wiley 2010):

* Lorentzian: ``L(x) = (A / pi) * (w/2) / ((x - x0)**2 + (w/2)**2)``, peak
  height ``2A / (pi w)``;
* Gaussian: ``G(x) = A / (s sqrt(2 pi)) * exp(-(x - x0)**2 / (2 s**2))`` with
  ``s = w / (2 sqrt(2 ln 2))``, peak height ``A sqrt(4 ln 2 / pi) / w``.

The ordinate is intensity per Hz, so the (trapezoid) area under the samples
equals the summed stick intensity, less the part of each line's tails that
falls outside the window.

Sampling
--------
The grid is even with ``points_per_fwhm`` points per line width (default
``DEFAULT_POINTS_PER_FWHM``).  If that would need more than ``max_points``
points the step widens, but never below ``MIN_POINTS_PER_FWHM`` points per
width; past that ``InputError(code="too_large")`` is raised.  The work is
counted as the profile evaluations actually made (each line on every point, or,
for Lorentzians on a long grid, on the knots plus its near window; for
Gaussians on its ``GAUSS_CUTOFF_SIGMA`` reach); above ``MAX_EVALUATIONS`` the
density drops to ``MIN_POINTS_PER_FWHM`` first, and only then is the request
refused, with the size and the remedy in the message.  The automatic window is the stick
extent plus ``margin_fwhm`` widths on each side.  Pure Python lists, ascending
in Hz.  Gaussian tails beyond ``GAUSS_CUTOFF_SIGMA`` standard deviations (a
relative height below 1e-31) are not evaluated.

Lorentzian tails fall off slowly (``(w/2d)²`` of the peak at a distance
``d``), so every line touches every point.  On a grid long against the
line width (where it needs fewer evaluations) each line is
therefore evaluated exactly only within ``NEAR_FWHM`` widths; the sum of all
lines is evaluated on knots about ``KNOT_FWHM`` widths apart and
interpolated linearly in between, and near each line the interpolated part
of that line is replaced by its exact value.  Beyond ``NEAR_FWHM`` widths the
error of linear interpolation, ``h² |f''| / 8`` with ``f = p (w/2)² / d²``
and ``f'' ≈ 6 f / d²``, is ``(3/16) (h/w)² (w/d)⁴ p`` for a line of peak
height ``p`` (knot spacing ``h``, width ``w``, distance ``d``): at most
about 2.5e-6 ``p`` per line, so at most that times the summed peak heights.
"""

from __future__ import annotations

import math
import reprlib
from collections.abc import Iterable
from fractions import Fraction
from typing import NamedTuple

from nmrcalc.errors import InputError

DEFAULT_POINTS_PER_FWHM = 10
MIN_POINTS_PER_FWHM = 5
DEFAULT_MARGIN_FWHM = 10.0
MAX_POINTS = 100_000
MAX_EVALUATIONS = 5_000_000
GAUSS_CUTOFF_SIGMA = 12.0
NEAR_FWHM = 15
KNOT_FWHM = 0.75
SHAPES = ("lorentzian", "gaussian")

_FWHM_TO_SIGMA = 1.0 / (2.0 * math.sqrt(2.0 * math.log(2.0)))


class SampledSpectrum(NamedTuple):
    """Sampled spectrum: abscissa ``x_Hz`` (ascending), ordinate ``y`` (intensity per Hz), grid step."""

    x_Hz: list[float]
    y: list[float]
    step_Hz: float


def lorentzian(x_Hz: float, centre_Hz: float, fwhm_Hz: float, area: float = 1.0) -> float:
    """Area-normalized Lorentzian of full width at half height ``fwhm_Hz`` (formula in module docstring)."""
    half = fwhm_Hz / 2.0
    return area / math.pi * half / ((x_Hz - centre_Hz) ** 2 + half * half)


def gaussian(x_Hz: float, centre_Hz: float, fwhm_Hz: float, area: float = 1.0) -> float:
    """Area-normalized Gaussian of full width at half height ``fwhm_Hz`` (formula in module docstring)."""
    sigma = fwhm_Hz * _FWHM_TO_SIGMA
    return area / (sigma * math.sqrt(2.0 * math.pi)) * math.exp(-((x_Hz - centre_Hz) ** 2) / (2.0 * sigma * sigma))


def _finite(value: object, field: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float, Fraction)) or not math.isfinite(value):
        raise InputError(f"{field} must be a finite number, got {value!r}", field=field)
    return float(value)


def _check_sticks(sticks: Iterable) -> list[tuple[float, float]]:
    try:
        items = list(sticks)
    except TypeError:
        raise InputError("sticks must be a list of (offset_Hz, intensity)", field="sticks") from None
    if not items:
        raise InputError("at least one stick is needed", field="sticks")
    out = []
    for i, item in enumerate(items):
        try:
            x, a = item
        except (TypeError, ValueError):
            raise InputError("each stick must be (offset_Hz, intensity)", field=f"sticks.{i}") from None
        x, a = _finite(x, f"sticks.{i}.offset_Hz"), _finite(a, f"sticks.{i}.intensity")
        if a < 0:
            raise InputError(f"intensity must not be negative, got {a}", field=f"sticks.{i}.intensity")
        out.append((x, a))
    return out


def _positive(value: object, field: str) -> float:
    value = _finite(value, field)
    if value <= 0:
        raise InputError(f"{field} must be greater than 0, got {value}", field=field)
    return value


def sample_spectrum(
    sticks: Iterable,
    fwhm_Hz: float,
    shape: str = "lorentzian",
    points_per_fwhm: float = DEFAULT_POINTS_PER_FWHM,
    margin_fwhm: float = DEFAULT_MARGIN_FWHM,
    window_Hz: tuple[float, float] | None = None,
    max_points: int = MAX_POINTS,
) -> SampledSpectrum:
    """Sample ``sticks`` = ``[(offset_Hz, intensity), ...]`` as Lorentzian or Gaussian lines.

    ``window_Hz = (low, high)`` overrides the automatic window (stick extent
    +- ``margin_fwhm * fwhm_Hz``); ``max_points`` may lower, not raise,
    ``MAX_POINTS``.  Returns ``SampledSpectrum(x_Hz, y, step_Hz)`` with ``x_Hz``
    ascending and evenly spaced, first and last points on the window edges.
    """
    lines = _check_sticks(sticks)
    fwhm = _positive(fwhm_Hz, "fwhm_Hz")
    if shape not in SHAPES:
        raise InputError(f"shape must be one of {', '.join(SHAPES)}, got {reprlib.repr(shape)}", field="shape")
    density = _finite(points_per_fwhm, "points_per_fwhm")
    if density < MIN_POINTS_PER_FWHM:
        raise InputError(f"points_per_fwhm must be at least {MIN_POINTS_PER_FWHM}, got {density}",
                         field="points_per_fwhm")
    if isinstance(max_points, bool) or not isinstance(max_points, int) or not 2 <= max_points <= MAX_POINTS:
        raise InputError(f"max_points must be a whole number from 2 to {MAX_POINTS}", field="max_points")
    if window_Hz is None:
        margin = _finite(margin_fwhm, "margin_fwhm")
        if margin < 0:
            raise InputError("margin_fwhm must not be negative", field="margin_fwhm")
        low = min(x for x, _ in lines) - margin * fwhm
        high = max(x for x, _ in lines) + margin * fwhm
        if high - low < fwhm:
            low, high = low - fwhm / 2, high + fwhm / 2
    else:
        try:
            low, high = window_Hz
        except (TypeError, ValueError):
            raise InputError("window_Hz must be (low, high)", field="window_Hz") from None
        low, high = _finite(low, "window_Hz.0"), _finite(high, "window_Hz.1")
        if not low < high:
            raise InputError("window_Hz must have low < high", field="window_Hz")
    span = high - low
    count = math.ceil(span / fwhm * density) + 1
    if count > max_points:
        count = max_points
        if span / (count - 1) > fwhm / MIN_POINTS_PER_FWHM:
            needed = math.ceil(span / fwhm * MIN_POINTS_PER_FWHM) + 1
            raise InputError(
                f"{needed} points would be needed for {MIN_POINTS_PER_FWHM} points per line width; "
                f"the limit is {max_points}: use a wider line or a narrower window",
                field="fwhm_Hz",
                code="too_large",
            )
    work = _evaluations(len(lines), count, span / (count - 1), fwhm, shape)
    if work > MAX_EVALUATIONS and density > MIN_POINTS_PER_FWHM:
        # fewer points per line width before refusing (never below MIN_POINTS_PER_FWHM)
        count = min(count, math.ceil(span / fwhm * MIN_POINTS_PER_FWHM) + 1)
        work = _evaluations(len(lines), count, span / (count - 1), fwhm, shape)
    if work > MAX_EVALUATIONS:
        raise InputError(
            f"{len(lines)} lines on {count} points need about {work} evaluations, above the limit of "
            f"{MAX_EVALUATIONS}: use a wider line width or a narrower window (the line list is complete)",
            field="sticks",
            code="too_large",
        )
    step = span / (count - 1)
    x_Hz = [low + i * step for i in range(count)]
    x_Hz[-1] = high
    y = [0.0] * count
    if shape == "lorentzian":
        y = _lorentzian_sum(lines, fwhm, x_Hz, step)
    else:
        sigma = fwhm * _FWHM_TO_SIGMA
        reach = GAUSS_CUTOFF_SIGMA * sigma
        inv = 1.0 / (2.0 * sigma * sigma)
        for x0, a in lines:
            peak = a / (sigma * math.sqrt(2.0 * math.pi))
            first = max(0, math.floor((x0 - reach - low) / step))
            last = min(count - 1, math.ceil((x0 + reach - low) / step))
            for i in range(first, last + 1):
                d = x_Hz[i] - x0
                y[i] += peak * math.exp(-d * d * inv)
    return SampledSpectrum(x_Hz, y, step)


def _evaluations(n_lines: int, count: int, step: float, fwhm: float, shape: str) -> int:
    """Profile evaluations the sampling will make (the same near/far decision as ``_lorentzian_sum``)."""
    if shape == "gaussian":
        return n_lines * min(count, 2 * math.ceil(GAUSS_CUTOFF_SIGMA * fwhm * _FWHM_TO_SIGMA / step) + 1)
    reach = math.ceil(NEAR_FWHM * fwhm / step)
    every = max(1, round(KNOT_FWHM * fwhm / step))
    return n_lines * min(count, count // every + 3 * (2 * reach + 1))


def _lorentzian_sum(lines: list[tuple[float, float]], fwhm: float, x_Hz: list[float], step: float) -> list[float]:
    """Sum of area-normalized Lorentzians on the even grid ``x_Hz`` (near/far split: module docstring)."""
    half2 = (fwhm / 2.0) ** 2
    lines = [(x0, a * fwhm / (2.0 * math.pi)) for x0, a in lines]  # L = scale / (d² + (w/2)²)
    count, reach = len(x_Hz), math.ceil(NEAR_FWHM * fwhm / step)
    every = max(1, round(KNOT_FWHM * fwhm / step))
    # evaluations per line: every point, against the knots plus a near window (about 3 x dearer per point);
    # decided by the grid alone, so that spectra summed line by line equal the spectrum of all lines
    if count <= count // every + 3 * (2 * reach + 1):
        y = [0.0] * count
        for x0, scale in lines:
            y = [v + scale / ((x - x0) * (x - x0) + half2) for v, x in zip(y, x_Hz)]
        return y
    knots = list(range(0, count, every))
    if knots[-1] != count - 1:
        knots.append(count - 1)
    xk = [x_Hz[k] for k in knots]
    total = [0.0] * len(knots)
    for x0, scale in lines:
        total = [v + scale / ((x - x0) * (x - x0) + half2) for v, x in zip(total, xk)]
    y = []
    for s in range(len(knots) - 1):
        k0, v0 = knots[s], total[s]
        slope = (total[s + 1] - v0) / (knots[s + 1] - k0)
        y.extend(v0 + slope * (i - k0) for i in range(k0, knots[s + 1]))
    y.append(total[-1])
    low = x_Hz[0]
    for x0, scale in lines:
        # near the line: its exact value instead of its interpolated one (the two agree at the knots)
        centre = round((x0 - low) / step)
        first, last = max(0, centre - reach), min(count - 1, centre + reach)
        for s in range(first // every, min(last // every, len(knots) - 2) + 1):
            k0, k1 = knots[s], knots[s + 1]
            d0, d1 = xk[s] - x0, xk[s + 1] - x0
            at0 = scale / (d0 * d0 + half2)
            slope = (scale / (d1 * d1 + half2) - at0) / (k1 - k0)
            a, b = max(k0 + 1, first), min(k1, last + 1)
            y[a:b] = [v + scale / ((x - x0) * (x - x0) + half2) - at0 - slope * (i - k0)
                      for i, v, x in zip(range(a, b), y[a:b], x_Hz[a:b])]
    return y


def hz_to_ppm(offsets_Hz: Iterable[float], observe_freq_MHz: float, centre_ppm: float = 0.0) -> list[float]:
    """Chemical shift of each offset: ``centre_ppm + offset_Hz / observe_freq_MHz`` (Hz per MHz is ppm).

    ``observe_freq_MHz`` is the spectrometer frequency of the observed
    nucleus.  Order is kept, so an ascending Hz axis gives an ascending ppm
    axis; drawing ppm decreasing to the right is the display's job.  The
    ordinate needs no change for shape, but per ppm it is ``y *
    observe_freq_MHz``.
    """
    freq = _positive(observe_freq_MHz, "observe_freq_MHz")
    centre = _finite(centre_ppm, "centre_ppm")
    return [centre + _finite(x, "offsets_Hz") / freq for x in offsets_Hz]
