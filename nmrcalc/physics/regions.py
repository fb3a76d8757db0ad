"""Regions of an evenly sampled spectrum: integrals with their noise uncertainty, and a
stick spectrum drawn on the region's own grid, scaled to the region's integral.

Integral (trapezoid rule on the points x_lo … x_hi, after subtracting a level
baseline b):  I = |Δx| Σ w_k (y_k − b), with w = ½ at both ends and 1 inside.
With independent noise of standard deviation σ on every point, its standard
deviation is σ_I = σ |Δx| √(Σ w_k²) (propagation of independent errors; e.g.
J. R. Taylor, *An Introduction to Error Analysis*, 2nd ed., §3.11).  Points of a
real spectrum are not independent when it is zero-filled or apodized (neighbours
share noise), so σ_I is then an underestimate: a lower bound, said so in results.

Relative integrals against a chosen region r holding n_r nuclei:
n_k = n_r I_k / I_r, σ(n_k) = √((n_r σ_k / I_r)² + (n_k σ_r / I_r)²) for disjoint regions
(first-order propagation with independent noise; Taylor §3.11); the reference region itself
is exact by definition.

Model on the grid: every stick (position, intensity) becomes an area-normalized
line of full width at half height w (``lineshape.lorentzian``/``gaussian``),
summed on the region's points; its trapezoid integral over the region is
matched to the measured one (scale = I_measured / I_model), and the residual is
y − b − scale·model point by point.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from nmrcalc.errors import InputError
from nmrcalc.physics.lineshape import gaussian, lorentzian

MAX_EVALUATIONS = 4_000_000   # line × point evaluations of one model trace
SEARCH_EVALUATIONS = 100_000  # the same, per trial of the centre search (best_center)


def trapezoid_weights(n: int) -> list[float]:
    """Trapezoid weights of n ≥ 2 points: ½, 1, …, 1, ½."""
    if n < 2:
        raise InputError("A region needs at least 2 points.", "y")
    return [0.5] + [1.0] * (n - 2) + [0.5]


def integral(y: Sequence[float], dx: float, baseline: float, sigma: float | None) -> tuple[float, float | None]:
    """(I, σ_I) of the samples ``y`` spaced ``dx`` above ``baseline`` (module docstring)."""
    w = trapezoid_weights(len(y))
    total = abs(dx) * sum(wk * (yk - baseline) for wk, yk in zip(w, y))
    error = None if sigma is None else sigma * abs(dx) * math.sqrt(sum(wk * wk for wk in w))
    return total, error


def relative(values: Sequence[tuple[float, float | None]], ref: int, nuclei: float) -> list[tuple[float, float | None]]:
    """Each (I, σ_I) as nuclei relative to region ``ref`` holding ``nuclei`` (module docstring)."""
    i_ref, s_ref = values[ref]
    if i_ref == 0:
        raise InputError("The reference region integrates to zero: choose another.", "normalize_to")
    out: list[tuple[float, float | None]] = []
    for k, (i, s) in enumerate(values):
        n = nuclei * i / i_ref
        if k == ref:
            out.append((nuclei, None if s_ref is None else 0.0))
        elif s is None or s_ref is None:
            out.append((n, None))
        else:
            out.append((n, math.hypot(nuclei * s / i_ref, n * s_ref / i_ref)))
    return out


def model_trace(x: Sequence[float], sticks: Sequence[tuple[float, float]], fwhm: float, shape: str) -> list[float]:
    """Σ lines of area = intensity, width ``fwhm`` (same unit as x), on the points ``x``."""
    if not fwhm > 0 or not math.isfinite(fwhm):
        raise InputError("The line width must be a positive number.", "linewidth")
    if len(x) * max(1, len(sticks)) > MAX_EVALUATIONS:
        raise InputError(f"{len(sticks)} lines on {len(x)} points is more than {MAX_EVALUATIONS} evaluations: "
                         "choose a narrower region.", "y", "too_large")
    profile = lorentzian if shape == "lorentzian" else gaussian
    out = [0.0] * len(x)
    for pos, amp in sticks:
        for k, xk in enumerate(x):
            out[k] += profile(xk, pos, fwhm, amp)
    return out


def scaled_comparison(y: Sequence[float], model: Sequence[float], dx: float, baseline: float) -> dict:
    """The model scaled to the measured integral, and the residual (module docstring).

    Returns {"scale", "model", "residual", "rms", "integral"}."""
    measured, _ = integral(y, dx, baseline, None)
    calc, _ = integral(model, dx, 0.0, None)
    if calc == 0:
        raise InputError("The simulation has no intensity inside the region: widen it or check the shifts.", "y")
    scale = measured / calc
    fitted = [scale * v for v in model]
    residual = [yk - baseline - fk for yk, fk in zip(y, fitted)]
    rms = math.sqrt(sum(r * r for r in residual) / len(residual))
    return {"scale": scale, "model": fitted, "residual": residual, "rms": rms, "integral": measured}


def best_center(x: Sequence[float], y: Sequence[float], dx: float, baseline: float,
                offsets: Sequence[tuple[float, float]], fwhm: float, shape: str, start: float) -> float:
    """The centre c (x unit) within ``start`` ± 2 ``fwhm`` that minimizes the rms residual of
    ``scaled_comparison`` for sticks at c + offset: golden-section search (Press et al., *Numerical
    Recipes*, 3rd ed., §10.2), to a thousandth of the width.  On a long region the search uses every
    k-th point, k chosen so one trial costs at most ``SEARCH_EVALUATIONS`` line × point evaluations
    (the search takes about 20 trials); the caller draws the final model on every point."""
    step = max(1, math.ceil(len(x) * max(1, len(offsets)) / SEARCH_EVALUATIONS))
    x, y, dx = x[::step], y[::step], dx * step

    def cost(c: float) -> float:
        model = model_trace(x, [(c + d, a) for d, a in offsets], fwhm, shape)
        return scaled_comparison(y, model, dx, baseline)["rms"]
    g = (math.sqrt(5) - 1) / 2
    a, b = start - 2 * fwhm, start + 2 * fwhm
    c, d = b - g * (b - a), a + g * (b - a)
    fc, fd = cost(c), cost(d)
    while b - a > 1e-3 * fwhm:
        if fc < fd:
            b, d, fd = d, c, fc
            c = b - g * (b - a)
            fc = cost(c)
        else:
            a, c, fc = c, d, fd
            d = a + g * (b - a)
            fd = cost(d)
    return (a + b) / 2
