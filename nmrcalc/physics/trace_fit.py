"""Least-squares fit of a spin system to a sampled trace (not to picked line positions).

Model, on the region's points x_k (Hz from the observed nucleus's 0 ppm):

    f(x_k) = b + s · Σ_i I_i(p) · L(x_k; ν_i(p), w)

with ν_i, I_i the exact lines of ``spin_system.simulate`` for the shifts and
couplings p, L the area-normalized Lorentzian of full width at half height w
(``lineshape.lorentzian``), s an intensity scale and b the level baseline
(given, not fitted).  Fitted: the chosen shifts and couplings, s always, and w
unless it is fixed.  Minimized: Σ (y_k − f(x_k))² by Levenberg–Marquardt
(``spin_fit.levenberg_marquardt``), with ∂f/∂s = f/s exact and the other
derivatives by central differences.  Standard errors: σ² (JᵀJ)⁻¹ with
σ² = Σ r² / (N − n) (Press et al., *Numerical Recipes*, 3rd ed., §15.5); they
assume independent noise on every point, so a zero-filled or apodized spectrum
(neighbouring points share noise) makes them too small by about √(points per
independent sample).

Start: s by linear least squares for the starting lines, so the first step is
already on the right scale; w as given (the op estimates it from the region when
none is given).  Narrow lines make the cost a landscape of separate minima (a
line misplaced by more than a width no longer overlaps its peak), so the fit
first fits the shifts alone with the lines broadened to ``BROADENING`` × w
(couplings and width fixed: a broad AB fitted freely runs off to J → ∞, where it
looks like one line), then everything at w: a coarse-to-fine continuation
(common practice, no source) that takes starting shifts a few widths off.  Both
that path and a direct fit from the starting values are run; the lower cost wins.
Limit: for strongly coupled pairs (Δν/J ≲ 1) the
landscape has false minima close by, so there the start must be within about a
line width in Δν (tests/test_trace_fit.py).  Parameters are kept in a box
(``_TraceModel.shape``) so that no step runs off to a degenerate limit.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace
from typing import Any

from nmrcalc.errors import InputError
from nmrcalc.physics.spin_fit import check_fit_size, covariance_errors, levenberg_marquardt
from nmrcalc.physics.spin_system import Site, simulate

TOL = 1e-7          # stop when every step component is below this (Hz, or relative for s)
COARSE_TOL = 1e-3   # the same for the broadened stages
BROADENING = (12.0, 3.0)  # widths (× the starting width) of the coarse stages
STEP_HZ = 1e-4      # central-difference step for shifts, couplings and the width
MAX_POINTS = 16_384
MAX_WORK = 6_000_000  # lines × points, one model evaluation


class _TraceModel:
    def __init__(self, sites: Sequence[Site], couplings: Sequence[tuple[int, int, float]], observe: str,
                 shift_sites: Sequence[int], coupling_idx: Sequence[int], fit_width: bool,
                 x_Hz: Sequence[float], baseline: float, width_Hz: float) -> None:
        self.sites, self.couplings, self.observe = list(sites), list(couplings), observe
        self.shift_sites, self.coupling_idx, self.fit_width = list(shift_sites), list(coupling_idx), fit_width
        self.x, self.baseline, self.width = list(x_Hz), baseline, width_Hz

    @property
    def n_spin(self) -> int:
        return len(self.shift_sites) + len(self.coupling_idx)

    def system(self, p: Sequence[float]) -> tuple[list[Site], list[tuple[int, int, float]]]:
        sites = list(self.sites)
        for v, i in zip(p, self.shift_sites):
            sites[i] = replace(sites[i], offset_Hz=v)
        couplings = list(self.couplings)
        for v, k in zip(p[len(self.shift_sites):self.n_spin], self.coupling_idx):
            a, b, _ = couplings[k]
            couplings[k] = (a, b, v)
        return sites, couplings

    def width_of(self, p: Sequence[float]) -> float:
        return p[self.n_spin] if self.fit_width else self.width

    def shape(self, p: Sequence[float]) -> list[float] | None:
        """Σ I_i L(x; ν_i, w), without scale and baseline; None outside the search box: a width
        ≤ 0 or above the region's span, |J| above twice the span, a shift beyond a span outside."""
        w = self.width_of(p)
        span = abs(self.x[-1] - self.x[0])
        lo, hi = min(self.x[0], self.x[-1]) - span, max(self.x[0], self.x[-1]) + span
        if not 0 < w < span or any(not lo <= v <= hi for v in p[:len(self.shift_sites)]) \
                or any(abs(v) > 2 * span for v in p[len(self.shift_sites):self.n_spin]):
            return None
        sites, couplings = self.system(p)
        lines = simulate(sites, couplings, self.observe, merge_tol_Hz=1e-6, min_rel_intensity=0.0)
        if len(lines) * len(self.x) > MAX_WORK:
            raise InputError(f"{len(lines)} lines on {len(self.x)} points is too much work for a trace fit: "
                             "choose a narrower region.", "y", "too_large")
        half2 = (w / 2) ** 2
        out = [0.0] * len(self.x)
        for pos, amp in lines:
            c = amp * (w / 2) / math.pi   # lineshape.lorentzian, written out: this loop is the fit's cost
            out = [o + c / ((xk - pos) ** 2 + half2) for o, xk in zip(out, self.x)]
        return out


def _stage(model: _TraceModel, y: Sequence[float], p0: list[float], tol: float
           ) -> tuple[list[float], float, list[float] | None, int]:
    """One least-squares run from ``p0`` (spin parameters, then the width if fitted);
    returns (params with the scale last, cost, errors, steps)."""
    baseline = model.baseline
    g0 = model.shape(p0)
    if g0 is None:
        raise InputError("The line width must be positive.", "linewidth")
    gg = sum(v * v for v in g0)
    if gg == 0:
        raise InputError("The starting spin system has no intensity in the region: check the shifts.", "spins")
    s0 = sum(v * (yk - baseline) for v, yk in zip(g0, y)) / gg   # linear least squares for s alone
    if not s0 > 0:
        raise InputError("The region's intensity does not match the starting spin system: check the shifts "
                         "and the baseline.", "spins")
    ns = len(p0)   # the scale is fitted as s/s0, so every parameter is of order one or in Hz

    def residuals(p: list[float]) -> list[float] | None:
        g = model.shape(p[:ns])
        if g is None:
            return None
        return [yk - baseline - p[ns] * s0 * gk for yk, gk in zip(y, g)]

    def jacobian(p: list[float]) -> list[list[float]]:
        rows = []
        for j in range(ns):
            up, down = p[:ns], p[:ns]
            up[j] += STEP_HZ
            down[j] -= STEP_HZ
            gu, gd = model.shape(up), model.shape(down)
            if gu is None or gd is None:
                raise InputError("The line width went to zero during the fit: fix it instead.", "linewidth")
            rows.append([-p[ns] * s0 * (a - b) / (2 * STEP_HZ) for a, b in zip(gu, gd)])
        rows.append([-s0 * gk for gk in model.shape(p[:ns]) or []])
        return rows

    p, cost, steps = levenberg_marquardt(residuals, jacobian, p0 + [1.0], tol)
    errors = covariance_errors(jacobian(p), cost, len(y))
    if errors is not None:
        errors = errors[:ns] + [errors[ns] * s0]
    return p[:ns] + [p[ns] * s0], cost, errors, steps


def fit_trace(sites: Sequence[Site], couplings: Sequence[tuple[int, int, float]], observe: str,
              x_Hz: Sequence[float], y: Sequence[float], baseline: float, width_Hz: float,
              shift_sites: Sequence[int], coupling_idx: Sequence[int], fit_width: bool) -> dict[str, Any]:
    """Fit (module docstring).  Returns {"params" (shifts, couplings in Hz, then the width if
    fitted, then the scale), "errors" (same order; None if undefined), "rms", "residual",
    "model" (fitted trace without baseline), "width_Hz", "scale", "iterations"}."""
    if len(x_Hz) != len(y) or len(y) < 3:
        raise InputError("A trace fit needs at least 3 points.", "y")
    if len(y) > MAX_POINTS:
        raise InputError(f"At most {MAX_POINTS} points in a trace fit: choose a narrower region.", "y", "too_large")
    check_fit_size(sites, couplings, observe)
    model = _TraceModel(sites, couplings, observe, shift_sites, coupling_idx, fit_width, x_Hz, baseline, width_Hz)
    start = [sites[i].offset_Hz for i in shift_sites] + [couplings[k][2] for k in coupling_idx]
    best = _stage(model, y, start + ([width_Hz] if fit_width else []), TOL)
    if shift_sites:
        shifts, steps = start[:len(shift_sites)], best[3]
        for factor in BROADENING:   # coarse to fine: shifts only, width fixed at factor × w
            wide = _TraceModel(sites, couplings, observe, shift_sites, (), False, x_Hz, baseline, factor * width_Hz)
            params, _, _, k = _stage(wide, y, shifts, COARSE_TOL)
            shifts, steps = params[:len(shifts)], steps + k
        p = shifts + start[len(shift_sites):] + ([width_Hz] if fit_width else [])
        try:
            other = _stage(model, y, p, TOL)
        except InputError:   # the coarse path lost the signal: keep the direct fit
            other = best
        best = min(best, other, key=lambda b: b[1])
        best = (best[0], best[1], best[2], steps + other[3])
    params, cost, errors, total = best
    g = model.shape(params[:-1]) or []
    fitted = [params[-1] * v for v in g]
    return {"params": params, "errors": errors, "rms": math.sqrt(cost / len(y)),
            "residual": [yk - baseline - f for yk, f in zip(y, fitted)], "model": fitted,
            "width_Hz": model.width_of(params[:-1]), "scale": params[-1], "iterations": total}
