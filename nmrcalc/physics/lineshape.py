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
for Lorentzians on a long grid, the knots and bins below; for Gaussians on its
``GAUSS_CUTOFF_SIGMA`` reach).  It is first counted at ``MIN_POINTS_PER_FWHM``;
when the requested density would take more than ``DENSE_EVALUATIONS`` (the
count at the minimum density times their ratio) the minimum density is used,
and above ``MAX_EVALUATIONS`` at that density the request is refused, with the
size and the remedy in the message.  The
automatic window is the stick extent plus ``margin_fwhm`` widths on each side.
Pure Python lists, ascending in Hz.  Gaussian tails beyond
``GAUSS_CUTOFF_SIGMA`` standard deviations (a relative height below 1e-31) are
not evaluated.

Lorentzian tails fall off slowly (``(w/2d)²`` of the peak at a distance
``d``), so every line touches every point.  On a grid long against the line
width (more than ``DIRECT_FWHM`` widths; shorter grids are summed directly) the
sum is evaluated on knots and interpolated linearly in between:

* Knots.  A knot at distance ``D`` from the nearest line is followed by the
  next one ``h = min(KNOT_SPREAD D, c (0.75 D)² / w)`` later (at least one grid
  step), ``c = sqrt(16 INTERP_ERROR / 3)``; near lines every point is a knot.
  Every line is then at least ``0.75 D`` from the interval, and the error of
  linear interpolation, ``h² |f''| / 8`` with ``f = p (w/2)² / d²`` and
  ``f'' ≈ 6 f / d²``, i.e. ``(3/16) (h/w)² (w/d)⁴ p`` for a line of peak height
  ``p``, is at most ``INTERP_ERROR p`` (1.5e-6 p) per line.
* Bins.  Sorted lines are joined into bins of at most ``BIN_FWHM`` widths, those
  into bins ``BIN_GROWTH`` (2) times wider, and so on (a tree).  Each level of
  the tree then splits a bin into few parts, which keeps the region where those
  parts are evaluated one by one small (a fifth fewer evaluations than with four).  Far from a bin its lines are
  one line of their summed area at their centroid ``c``: the first moment cancels
  and the error is at most ``(1/2) Σ a (x − c)² |f''|``, ``(3/4) (var/w²) (w/d)⁴ p``
  for a bin of variance ``var`` (of its line positions, weighted by area) at
  distance ``d`` and ``p`` its peak height.  A bin is used only beyond
  ``d = w (0.75 (var/w²) / BIN_ERROR)^(1/4)`` (6.6 widths for two equal lines 0.1
  w apart), where that is at most ``BIN_ERROR p`` (1e-6 p); nearer, its parts are
  used, down to each line evaluated exactly (a bin of one line is exact at any
  distance).
So every point is within (INTERP_ERROR + BIN_ERROR) = 2.5e-6 times the summed
peak heights of the direct sum, and the work is about the lines times the
points within a few widths of them plus the knots times the bins of each size:
a spectrum of thousands of lines spread over kHz is drawn, not refused.
"""

from __future__ import annotations

import bisect
import math
import reprlib
from collections.abc import Iterable
from fractions import Fraction
from typing import NamedTuple

from nmrcalc.errors import InputError
from nmrcalc.physics.numeric import all_finite

DEFAULT_POINTS_PER_FWHM = 10
MIN_POINTS_PER_FWHM = 5
DEFAULT_MARGIN_FWHM = 10.0
MAX_POINTS = 100_000
MAX_EVALUATIONS = 5_000_000
DENSE_EVALUATIONS = 500_000  # the requested density needing more evaluations gives way to MIN_POINTS_PER_FWHM
GAUSS_CUTOFF_SIGMA = 12.0
KNOT_SPREAD = 0.25  # knot spacing at most this fraction of the distance to the nearest line
INTERP_ERROR = 1.5e-6  # linear-interpolation error per line, relative to its peak height
DIRECT_FWHM = 100  # grids up to this many widths are summed directly (exactly linear in the sticks)
BIN_FWHM = 0.02  # extent of the finest bins (line widths)
BIN_GROWTH = 2  # each coarser level of bins is this many times wider
BIN_ERROR = 1e-6  # error of a bin at its centroid per line, relative to its peak height
# h <= c (0.75 d)² / w with c = sqrt(16 INTERP_ERROR / 3) keeps (3/16) (h/w)² (w/d_min)⁴ <= INTERP_ERROR
_KNOT_CURVE = math.sqrt(16 * INTERP_ERROR / 3) * (1 - KNOT_SPREAD) ** 2
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
    if all([type(item) is tuple and len(item) == 2 for item in items]):  # the usual case, checked in C
        offsets, heights = zip(*items)
        if (all([type(v) is float for v in offsets + heights]) and all_finite(offsets + heights)
                and min(heights) >= 0.0):
            return items
    out = []  # entry by entry, for the message that names the first bad one
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
    points: int | None = None,
) -> SampledSpectrum:
    """Sample ``sticks`` = ``[(offset_Hz, intensity), ...]`` as Lorentzian or Gaussian lines.

    ``window_Hz = (low, high)`` overrides the automatic window (stick extent
    +- ``margin_fwhm * fwhm_Hz``); ``max_points`` may lower, not raise,
    ``MAX_POINTS``; ``points`` (with ``window_Hz``) takes exactly that many points,
    the grid of another spectrum sampled over the same window, so that two traces
    share their x values.  Returns ``SampledSpectrum(x_Hz, y, step_Hz)`` with ``x_Hz``
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
    if points is not None:
        if (window_Hz is None or isinstance(points, bool) or not isinstance(points, int)
                or not 2 <= points <= MAX_POINTS):
            raise InputError(f"points must be a whole number from 2 to {MAX_POINTS}, with window_Hz", field="points")
        count = points
    if shape == "lorentzian":
        lines = sorted((x0, a * fwhm / (2.0 * math.pi)) for x0, a in lines)  # L = scale / (d² + (w/2)²)
    least = min(count, math.ceil(span / fwhm * MIN_POINTS_PER_FWHM) + 1)
    # every line on every point bounds the work: below DENSE_EVALUATIONS one plan at the density asked
    if points is None and least < count and len(lines) * count > DENSE_EVALUATIONS:
        # planned at MIN_POINTS_PER_FWHM first: the requested density takes about density / MIN as many
        # evaluations, and above DENSE_EVALUATIONS it is not used (fewer points per width before refusing)
        work, plan = _evaluations(lines, least, low, span / (least - 1), fwhm, shape)
        if work * density / MIN_POINTS_PER_FWHM > DENSE_EVALUATIONS:
            count = least
        else:
            work, plan = _evaluations(lines, count, low, span / (count - 1), fwhm, shape, plan)
    else:
        work, plan = _evaluations(lines, count, low, span / (count - 1), fwhm, shape)
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
    if plan is not None:
        y = _lorentzian_sum(lines, fwhm, x_Hz, plan)
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


def _evaluations(lines: list[tuple[float, float]], count: int, low: float, step: float, fwhm: float,
                 shape: str, earlier: _LorentzianPlan | None = None) -> tuple[int, _LorentzianPlan | None]:
    """Profile evaluations the sampling will make, and the Lorentzian plan that makes them
    (reusing the bin tree of an ``earlier`` plan of the same lines on another grid)."""
    if shape == "gaussian":
        return len(lines) * min(count, 2 * math.ceil(GAUSS_CUTOFF_SIGMA * fwhm * _FWHM_TO_SIGMA / step) + 1), None
    plan = _LorentzianPlan(lines, count, low, step, fwhm, None if earlier is None else earlier.levels)
    return plan.work, plan


class _Bin(NamedTuple):
    """Lines ``first:end`` of one level below (level 0: the lines) joined at their centroid.

    ``spread`` = Σ scale (x − centre)²; ``reach`` = the distance beyond which the centroid is used.
    """

    lo: float
    hi: float
    centre: float
    scale: float
    spread: float
    reach: float
    first: int
    end: int


class _LorentzianPlan:
    """Knots, the bin tree and the evaluation count of one Lorentzian sampling (module docstring).

    ``lines`` = sorted (position, scale) with L = scale / (d² + (w/2)²).  ``direct`` is True
    on grids of at most ``DIRECT_FWHM`` widths: every line on every point.  ``levels``: the bin
    tree of the same lines and width (``_bin_levels``), which does not depend on the grid;
    ``tasks``: the walk of that tree over the knots, made once, which gives ``work`` and which
    ``_lorentzian_sum`` evaluates.
    """

    def __init__(self, lines: list[tuple[float, float]], count: int, low: float, step: float, fwhm: float,
                 levels: list[list[_Bin]] | None = None):
        positions = [x for x, _ in lines]
        n = len(positions)
        # every point is a knot where the spacing rule gives under 2 steps: within D of a line
        D = max(2 * step / KNOT_SPREAD, math.sqrt(2 * step * fwhm / _KNOT_CURVE))
        dense: list[list[int]] = []
        for x in positions:
            lo, hi = max(0, math.ceil((x - D - low) / step)), min(count - 1, math.floor((x + D - low) / step))
            if lo > hi:
                continue
            if dense and lo <= dense[-1][1] + 1:
                dense[-1][1] = max(dense[-1][1], hi)
            else:
                dense.append([lo, hi])
        knots, k, run = [0], 0, 0
        while k < count - 1:
            while run < len(dense) and dense[run][1] <= k:
                run += 1
            if run < len(dense) and dense[run][0] <= k:
                knots.extend(range(k + 1, dense[run][1] + 1))
                k = dense[run][1]
                continue
            x = low + k * step
            j = bisect.bisect_left(positions, x)
            d = min(x - positions[j - 1] if j else math.inf, positions[j] - x if j < n else math.inf)
            h = min(KNOT_SPREAD * d, _KNOT_CURVE * d * d / fwhm)
            k = min(count - 1, k + max(1, int(h / step)))
            knots.append(k)
        self.knots = knots
        self.xk = [low + k * step for k in knots]
        self.levels = _bin_levels(lines, fwhm) if levels is None else levels
        # (first, end, centre, scale): knots first:end take the line or bin at centre, of that scale
        self.tasks: list[tuple[int, int, float, float]] = []
        top = len(self.levels) - 1
        for b in self.levels[-1]:
            self._walk(top, b, 0, len(knots))
        self.work = sum(end - first for first, end, _, _ in self.tasks)
        # decided by the grid alone, so that spectra summed line by line equal the spectrum of all lines
        self.direct = (count - 1) * step <= DIRECT_FWHM * fwhm
        if self.direct:
            self.work = n * count

    def _walk(self, level: int, b: _Bin, first: int, end: int) -> None:
        """Plan bin ``b`` on knots ``first:end``: at its centroid beyond its reach, else through its parts
        (the lines of a level-1 bin each on all its near knots)."""
        if level == 0:
            self.tasks.append((first, end, b.centre, b.scale))
            return
        a = max(first, bisect.bisect_left(self.xk, b.lo - b.reach, first, end))
        z = min(end, bisect.bisect_right(self.xk, b.hi + b.reach, a, end))
        if a > first:
            self.tasks.append((first, a, b.centre, b.scale))
        if end > z:
            self.tasks.append((z, end, b.centre, b.scale))
        if z > a:
            parts = self.levels[level - 1][b.first:b.end]
            if level == 1:
                self.tasks.extend((a, z, part.centre, part.scale) for part in parts)
            else:
                for part in parts:
                    self._walk(level - 1, part, a, z)


def _bin_levels(lines: list[tuple[float, float]], fwhm: float) -> list[list[_Bin]]:
    """The bin tree of sorted Lorentzian ``lines``: level 0 the lines, each level above joins bins
    spanning up to ``BIN_FWHM`` line widths times ``BIN_GROWTH`` per level (module docstring)."""
    levels = [[_Bin(x, x, x, a, 0.0, 0.0, i, i + 1) for i, (x, a) in enumerate(lines)]]
    extent = BIN_FWHM * fwhm
    while len(levels[-1]) > 1 and extent < BIN_GROWTH * (lines[-1][0] - lines[0][0] + fwhm):
        below, level, start = levels[-1], [], 0
        for i in range(1, len(below) + 1):
            if i == len(below) or below[i].hi - below[start].lo > extent:
                if i == start + 1:  # a bin of one part: the same lines, moments and reach
                    b = below[start]
                    level.append(_Bin(b.lo, b.hi, b.centre, b.scale, b.spread, b.reach, start, i))
                    start = i
                    continue
                part = below[start:i]
                total = sum(b.scale for b in part)
                centre = sum(b.centre * b.scale for b in part) / total if total > 0 else part[0].centre
                spread = sum(b.spread + b.scale * (b.centre - centre) ** 2 for b in part)
                # (3/4) (var/w²) (w/d)⁴ <= BIN_ERROR with var = spread / total
                reach = fwhm * (0.75 * spread / (total * fwhm * fwhm) / BIN_ERROR) ** 0.25 if total > 0 else 0.0
                level.append(_Bin(part[0].lo, part[-1].hi, centre, total, spread, reach, start, i))
                start = i
        levels.append(level)
        extent *= BIN_GROWTH
    return levels


def _lorentzian_sum(lines: list[tuple[float, float]], fwhm: float, x_Hz: list[float],
                    plan: _LorentzianPlan) -> list[float]:
    """Lorentzians (sorted (position, scale), L = scale / (d² + (w/2)²)) on the even grid ``x_Hz``.

    Evaluated on ``plan``'s knots through its bin tree and interpolated linearly (module docstring).
    """
    half2 = (fwhm / 2.0) ** 2
    count = len(x_Hz)
    y = [0.0] * count
    if plan.direct:
        for x0, scale in lines:
            y = [v + scale / ((x - x0) * (x - x0) + half2) for v, x in zip(y, x_Hz)]
        return y
    knots = plan.knots
    xk = [x_Hz[k] for k in knots]
    total = [0.0] * len(knots)
    for a, z, c, s in plan.tasks:
        total[a:z] = [v + s / ((x - c) * (x - c) + half2) for v, x in zip(total[a:z], xk[a:z])]
    y = []
    for s in range(len(knots) - 1):
        k0, v0 = knots[s], total[s]
        if knots[s + 1] == k0 + 1:
            y.append(v0)
            continue
        slope = (total[s + 1] - v0) / (knots[s + 1] - k0)
        y += [v0 + slope * i for i in range(knots[s + 1] - k0)]
    y.append(total[-1])
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
