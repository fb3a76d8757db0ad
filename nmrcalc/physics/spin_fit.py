"""Least-squares fit of a spin system's shifts and couplings to measured line positions.

Model: the exact line positions of ``spin_system.simulate``.  Each measured line
is assigned to a computed transition among those with at least ``MIN_ASSIGN``
of the strongest computed intensity, keeping the order along the axis and
minimizing the summed squared distance (dynamic programming); the parameters are then
improved by Levenberg–Marquardt steps (Marquardt, J. SIAM 11 (1963) 431):
(JᵀJ + λ diag JᵀJ) δ = Jᵀ r, with the Jacobian J by central differences of the
assigned transitions (each followed to its nearest position after the step), and
the assignment is redone after each accepted step, until the parameters change
by less than ``TOL_HZ``.  Standard errors: σ² = Σ r² / (m − n) and
cov = σ² (JᵀJ)⁻¹ (the usual linearized estimate; Press et al., *Numerical
Recipes*, 3rd ed., §15.5), undefined when m ≤ n.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import replace
from typing import Any

from nmrcalc.errors import InputError
from nmrcalc.physics.spin_system import Site, problem_size, simulate

MIN_ASSIGN = 0.02
TOL_HZ = 1e-7
MAX_ASSIGNMENTS = 6   # outer passes: assign, then fit with the assignment fixed
MAX_ITER = 20         # Levenberg–Marquardt steps per pass
MAX_TRIES = 8         # damping increases (×10 each) before a step is given up
STEP_HZ = 1e-4
# A fit solves its spin system a few hundred times (passes × steps × parameters): at most this
# many states after equivalence factoring (one solve then takes well under 0.05 s in CPython).
MAX_FIT_STATES = 1024


def check_fit_size(sites: Sequence[Site], couplings: Sequence[tuple[int, int, float]], observe: str) -> None:
    """InputError (field "spins", code "too_large") for a system too large to solve a few hundred times."""
    total = problem_size(sites, couplings, observe)["total_dim"]
    if total > MAX_FIT_STATES:
        raise InputError(f"This spin system has {total:,} states after factoring; a fit solves it a few hundred "
                         f"times, so at most {MAX_FIT_STATES:,}: fit fewer spins or smaller groups of equivalent "
                         "spins, or simulate it once in the spin-system op.", "spins", "too_large")


def _solve(a: list[list[float]], b: list[float]) -> list[float] | None:
    """Gaussian elimination with partial pivoting; None if singular."""
    n = len(b)
    m = [row[:] + [b[i]] for i, row in enumerate(a)]
    for c in range(n):
        p = max(range(c, n), key=lambda r: abs(m[r][c]))
        if abs(m[p][c]) < 1e-300:
            return None
        m[c], m[p] = m[p], m[c]
        for r in range(c + 1, n):
            f = m[r][c] / m[c][c]
            for k in range(c, n + 1):
                m[r][k] -= f * m[c][k]
    x = [0.0] * n
    for r in range(n - 1, -1, -1):
        x[r] = (m[r][n] - sum(m[r][k] * x[k] for k in range(r + 1, n))) / m[r][r]
    return x


def _inverse(a: list[list[float]]) -> list[list[float]] | None:
    n = len(a)
    cols = [_solve(a, [1.0 if i == j else 0.0 for i in range(n)]) for j in range(n)]
    solved = [c for c in cols if c is not None]
    if len(solved) < n:
        return None
    return [[solved[j][i] for j in range(n)] for i in range(n)]


class _Model:
    def __init__(self, sites: Sequence[Site], couplings: Sequence[tuple[int, int, float]], observe: str,
                 shift_sites: Sequence[int], coupling_idx: Sequence[int]) -> None:
        self.sites, self.couplings, self.observe = list(sites), list(couplings), observe
        self.shift_sites, self.coupling_idx = shift_sites, coupling_idx

    def params(self) -> list[float]:
        return ([self.sites[i].offset_Hz for i in self.shift_sites]
                + [self.couplings[k][2] for k in self.coupling_idx])

    def lines(self, p: Sequence[float]) -> list[tuple[float, float]]:
        sites = list(self.sites)
        for v, i in zip(p, self.shift_sites):
            sites[i] = replace(sites[i], offset_Hz=v)
        couplings = list(self.couplings)
        for v, k in zip(p[len(self.shift_sites):], self.coupling_idx):
            a, b, _ = couplings[k]
            couplings[k] = (a, b, v)
        return simulate(sites, couplings, self.observe, merge_tol_Hz=1e-6, min_rel_intensity=0.0)


def _assign(measured: Sequence[tuple[float, float]], lines: Sequence[tuple[float, float]]) -> list[int]:
    """Index of one computed transition per measured line, in the same order along the
    axis (an order-keeping match minimizing Σ (x − ν)², by dynamic programming); lines are
    taken from those with at least MIN_ASSIGN of the strongest, and from all if too few."""
    strongest = max(i for _, i in lines)
    usable = [b for b, (_, i) in enumerate(lines) if i >= MIN_ASSIGN * strongest]
    if len(usable) < len(measured):
        usable = list(range(len(lines)))
    order = sorted(range(len(measured)), key=lambda a: measured[a][0])
    m, k = len(order), len(usable)
    if k < m:
        raise InputError(f"{m} lines given but the spin system has only {k} transitions.", "lines")
    inf = float("inf")
    # best[a][b]: least cost of matching the first a measured lines within the first b transitions
    best = [[0.0] * (k + 1)] + [[inf] * (k + 1) for _ in range(m)]
    for a in range(1, m + 1):
        x = measured[order[a - 1]][0]
        row, prev = best[a], best[a - 1]
        for b in range(a, k + 1):
            take = prev[b - 1] + (x - lines[usable[b - 1]][0]) ** 2
            row[b] = min(row[b - 1], take)
    out = [0] * m
    b = k
    for a in range(m, 0, -1):
        while best[a][b] == best[a][b - 1] and b > a:
            b -= 1
        out[order[a - 1]] = usable[b - 1]
        b -= 1
    return out


def _positions(
    lines: Sequence[tuple[float, float]], index: Sequence[int], reference: tuple[int, list[float]]
) -> list[float]:
    """Positions of the transitions ``index``; if the line count changed (lines merged),
    each is followed to the nearest line of the reference positions instead."""
    if len(lines) == reference[0]:
        return [lines[b][0] for b in index]
    return [min((f for f, _ in lines), key=lambda f: abs(f - t)) for t in reference[1]]


def fit(sites: Sequence[Site], couplings: Sequence[tuple[int, int, float]], observe: str,
        measured: Sequence[tuple[float, float]], shift_sites: Sequence[int],
        coupling_idx: Sequence[int]) -> dict[str, Any]:
    """Fit offsets (Hz) of ``shift_sites`` and J (Hz) of ``couplings[k]`` for k in ``coupling_idx``.

    ``measured``: [(position_Hz, intensity)].  Returns {"params", "errors" (None if
    undefined), "rms_Hz", "residuals_Hz", "assigned_Hz", "iterations", "converged" (the
    assignment stopped changing within MAX_ASSIGNMENTS passes)}."""
    check_fit_size(sites, couplings, observe)
    model = _Model(sites, couplings, observe, shift_sites, coupling_idx)
    p = model.params()
    n, m = len(p), len(measured)
    if n == 0:
        raise InputError("Nothing to fit: choose shifts and/or couplings in 'vary'.", "vary")
    if m < n:
        raise InputError(f"{m} lines cannot fix {n} parameters: give at least {n} lines.", "lines")
    x = [pos for pos, _ in measured]
    it = 0
    index: list[int] = []
    converged = False
    for _ in range(MAX_ASSIGNMENTS):
        lines = model.lines(p)
        new_index = _assign(measured, lines)
        if new_index == index:
            converged = True
            break
        index = new_index
        p, cost, steps = _position_fit(model, p, x, index)
        it += steps
    ref = model.lines(p)
    calc = [ref[b][0] for b in index]
    r = [xi - ci for xi, ci in zip(x, calc)]
    cost = sum(v * v for v in r)
    errors = covariance_errors(_jacobian(model, p, index, (len(ref), calc)), cost, m)
    return {"params": p, "errors": errors, "rms_Hz": math.sqrt(cost / m), "residuals_Hz": r,
            "assigned_Hz": calc, "iterations": it, "converged": converged}


def _jacobian(
    model: _Model, p: list[float], index: Sequence[int], reference: tuple[int, list[float]]
) -> list[list[float]]:
    jac = []
    for j in range(len(p)):
        up, down = p[:], p[:]
        up[j] += STEP_HZ
        down[j] -= STEP_HZ
        fu = _positions(model.lines(up), index, reference)
        fd = _positions(model.lines(down), index, reference)
        jac.append([(a - b) / (2 * STEP_HZ) for a, b in zip(fu, fd)])
    return jac


def _normal(jac: list[list[float]], m: int, n: int) -> list[list[float]]:
    return [[sum(jac[a][i] * jac[b][i] for i in range(m)) for b in range(n)] for a in range(n)]


def _position_fit(model: _Model, p: list[float], x: list[float], index: list[int]) -> tuple[list[float], float, int]:
    """Minimize Σ (x − ν_index(p))² with the assignment fixed; returns (p, cost, steps)."""
    refs: dict[tuple[float, ...], tuple[int, list[float]]] = {}

    def residuals(params: list[float]) -> list[float] | None:
        lines = model.lines(params)
        if len(lines) <= max(index):
            return None
        calc = [lines[b][0] for b in index]
        refs[tuple(params)] = (len(lines), calc)
        return [xi - ci for xi, ci in zip(x, calc)]

    def jacobian(params: list[float]) -> list[list[float]]:
        # ∂r/∂p = −∂ν/∂p
        return [[-v for v in row] for row in _jacobian(model, params, index, refs[tuple(params)])]

    return levenberg_marquardt(residuals, jacobian, p, TOL_HZ)


def levenberg_marquardt(
    residuals: Callable[[list[float]], list[float] | None],
    jacobian: Callable[[list[float]], list[list[float]]],
    p: list[float], tol: float, max_iter: int = MAX_ITER,
) -> tuple[list[float], float, int]:
    """Minimize Σ r(p)² (``residuals`` returns None where the model is undefined);
    ``jacobian(p)[j][i]`` = ∂r_i/∂p_j.  Marquardt's damping (module docstring); stops when
    no step lowers the cost or every step component is below ``tol``.  Returns (p, cost, steps)."""
    r = residuals(p)
    if r is None:
        raise InputError("The starting values give no model to fit.", "spins")
    n, m = len(p), len(r)
    cost = sum(v * v for v in r)
    lam = 1e-3
    steps = 0
    for _ in range(max_iter):
        steps += 1
        jac = jacobian(p)
        jtj = _normal(jac, m, n)
        # the model is f and r = x − f, so the Gauss–Newton step solves JᵀJ δ = −Jᵀ r in terms of ∂r/∂p
        jtr = [-sum(jac[a][i] * r[i] for i in range(m)) for a in range(n)]
        accepted: list[float] | None = None
        for _ in range(MAX_TRIES):
            damped = [[jtj[a][b] * (1 + lam) + lam * 1e-12 if a == b else jtj[a][b] for b in range(n)]
                      for a in range(n)]
            step = _solve(damped, jtr)
            if step is not None:
                trial = [pi + si for pi, si in zip(p, step)]
                t_r = residuals(trial)
                if t_r is not None and sum(v * v for v in t_r) <= cost:
                    accepted = step
                    p, r, cost = trial, t_r, sum(v * v for v in t_r)
                    lam = max(lam / 10, 1e-12)
                    break
            lam *= 10
        if accepted is None or max((abs(s) for s in accepted), default=0.0) < tol:
            break
    return p, cost, steps


def covariance_errors(jac: list[list[float]], cost: float, m: int) -> list[float] | None:
    """Standard errors √(σ² (JᵀJ)⁻¹_jj) with σ² = cost / (m − n); None when m ≤ n or JᵀJ is singular."""
    n = len(jac)
    if m <= n:
        return None
    inv = _inverse(_normal(jac, m, n))
    if inv is None:
        return None
    s2 = cost / (m - n)
    return [math.sqrt(max(0.0, s2 * inv[a][a])) for a in range(n)]
