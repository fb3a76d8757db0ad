"""Deuteration level of one site, from isotopologue integrals or from a residual signal.

Binomial model
--------------
If each of the ``n`` positions of a site carries D independently with
probability ``p`` (random labelling), the share of molecules with ``k`` D is
the binomial probability ``C(n, k) p^k (1 - p)^(n - k)`` (W. Feller, *An
Introduction to Probability Theory and Its Applications*, vol. 1, 3rd ed.,
ch. VI).  Integrals ``I_k`` of the isotopologue signals (index = number of D)
are proportional to those shares when observed on a nucleus that every
isotopologue carries once (e.g. 13C); observed on the site's own 1H, each
molecule contributes ``n - k`` protons, so ``I_k ∝ (n - k) P_k`` (weighting
``"per_H"``; the CDn isotopologue is then invisible).

* Level, all species seen: ``p = Σ k P_k / (n Σ P_k)`` with ``P_k = I_k`` (the
  method-of-moments estimate; for the binomial model it is also the
  maximum-likelihood estimate).  With ``per_H`` the CDn species is unseen, so
  the mean is biased; ``p`` is then the least-squares fit of
  ``I_k = s (n - k) C(n,k) p^k (1-p)^(n-k)`` (``s`` solved in closed form for
  each ``p``; ``p`` by a grid of ``FIT_GRID`` points, then golden-section search).
* Uncertainty: first-order propagation of an absolute integral error ``σ``
  on every integral, ``σ_p² = Σ_k (∂p/∂I_k)² σ²`` (the derivative analytic for
  the mean, by central differences for the fit).
* Binomial check: ``χ² = Σ (I_k - E_k)² / σ²`` against the integrals ``E_k``
  the binomial model with the same ``p`` and total gives; with ``m`` integrals
  there are ``m - 2`` degrees of freedom; the set counts as binomial when the
  χ² tail probability is at least ``ALPHA`` (0.05), the regularised upper
  incomplete gamma function ``Q(ν/2, χ²/2)`` (series and continued fraction of
  W. H. Press et al., *Numerical Recipes*, 3rd ed., §6.2).

Residual route
--------------
Protons left at the site per molecule ``h = (I_res / I_std) × N_std × r``
with ``N_std`` the nuclei behind the standard's integral and ``r`` the moles
of standard per mole of analyte (the qNMR relation, e.g. G. F. Pauli et al.,
*J. Med. Chem.* 57 (2014) 9220); ``D = 1 - h / n``.  Relative errors of the
two integrals add in quadrature.
"""

from __future__ import annotations

import math
from typing import NamedTuple

ALPHA = 0.05
FIT_GRID = 400
FIT_STEPS = 80


class IntegralsResult(NamedTuple):
    D_fraction: float
    D_fraction_uncertainty: float
    expected: list[float]
    chi2: float
    dof: int
    p_value: float | None


def _upper_gamma_q(a: float, x: float) -> float:
    """Regularised upper incomplete gamma Q(a, x) (Numerical Recipes §6.2)."""
    if x <= 0:
        return 1.0
    if x < a + 1:
        term = total = 1.0 / a
        k = a
        for _ in range(1000):
            k += 1
            term *= x / k
            total += term
            if abs(term) < abs(total) * 1e-15:
                break
        return max(0.0, 1.0 - total * math.exp(-x + a * math.log(x) - math.lgamma(a)))
    tiny = 1e-300
    b = x + 1 - a
    c, d = 1 / tiny, 1 / b
    h = d
    for i in range(1, 1000):
        an = -i * (i - a)
        b += 2
        d = an * d + b
        d = tiny if abs(d) < tiny else d
        c = b + an / c
        c = tiny if abs(c) < tiny else c
        d = 1 / d
        delta = d * c
        h *= delta
        if abs(delta - 1) < 1e-15:
            break
    return math.exp(-x + a * math.log(x) - math.lgamma(a)) * h


def chi2_tail(chi2: float, dof: int) -> float:
    """P(χ² ≥ chi2) for ``dof`` degrees of freedom."""
    return _upper_gamma_q(dof / 2, chi2 / 2)


def binomial_shares(positions: int, p: float) -> list[float]:
    return [math.comb(positions, k) * p ** k * (1 - p) ** (positions - k) for k in range(positions + 1)]


def _site_1H_misfit(positions: int, integrals: list[float], p: float) -> float:
    model = [(positions - k) * b for k, b in enumerate(binomial_shares(positions, p)[:positions])]
    norm = sum(m * m for m in model)
    scale = sum(i * m for i, m in zip(integrals, model)) / norm if norm > 0 else 0.0
    return sum((i - scale * m) ** 2 for i, m in zip(integrals, model))


def _fit_p(positions: int, integrals: list[float]) -> float:
    """Least-squares ``p`` for integrals seen on the site's own 1H (k = 0 … n-1)."""
    grid = [j / FIT_GRID for j in range(FIT_GRID + 1)]
    best = min(range(len(grid)), key=lambda j: _site_1H_misfit(positions, integrals, grid[j]))
    lo, hi = grid[max(0, best - 1)], grid[min(FIT_GRID, best + 1)]
    ratio = (math.sqrt(5) - 1) / 2
    for _ in range(FIT_STEPS):
        a, b = hi - ratio * (hi - lo), lo + ratio * (hi - lo)
        if _site_1H_misfit(positions, integrals, a) <= _site_1H_misfit(positions, integrals, b):
            hi = b
        else:
            lo = a
    return (lo + hi) / 2


def from_integrals(positions: int, integrals: list[float], sigma: float, per_H: bool = False) -> IntegralsResult:
    """Deuteration from isotopologue integrals ``integrals[k]`` (k D atoms), each with absolute error ``sigma``.

    ``per_H``: integrals observed on the site's own 1H (weight ``n - k``); then
    ``integrals`` has ``n`` entries (k = 0 … n-1), else ``n + 1``.
    """
    if positions < 1:
        raise ValueError("positions must be at least 1")
    ks = list(range(len(integrals)))
    weights = [positions - k if per_H else 1 for k in ks]
    if len(integrals) != (positions if per_H else positions + 1) or min(weights) <= 0:
        raise ValueError("wrong number of integrals")
    if per_H:
        p = _fit_p(positions, integrals)
        h = max(1e-9, 1e-6 * max(integrals))
        grads = []
        for k in ks:
            up, down = list(integrals), list(integrals)
            up[k] += h
            down[k] = max(0.0, down[k] - h)
            grads.append((_fit_p(positions, up) - _fit_p(positions, down)) / (up[k] - down[k]))
        var = sum(g * g for g in grads) * sigma ** 2
    else:
        total = sum(integrals)
        if total <= 0:
            raise ValueError("the integrals add up to zero")
        p = sum(k * x for k, x in zip(ks, integrals)) / (positions * total)
        # ∂p/∂I_k = (k - n p) / (n total)
        var = sum(((k - positions * p) / (positions * total)) ** 2 for k in ks) * sigma ** 2
    shares = binomial_shares(positions, p)
    # the binomial prediction with the same total visible signal
    visible = sum(s * w for s, w in zip(shares, weights))
    scale = sum(integrals) / visible if visible > 0 else 0.0
    expected = [scale * shares[k] * weights[k] for k in ks]
    chi2 = sum((i - e) ** 2 for i, e in zip(integrals, expected)) / sigma ** 2 if sigma > 0 else 0.0
    dof = len(integrals) - 2
    p_value = chi2_tail(chi2, dof) if dof > 0 and sigma > 0 else None
    return IntegralsResult(p, math.sqrt(var), expected, chi2, dof, p_value)


def from_residual(positions: int, residual: float, standard: float, standard_nuclei: float,
                  standard_per_analyte: float, rel_sigma_residual: float = 0.0,
                  rel_sigma_standard: float = 0.0) -> tuple[float, float, float]:
    """(D fraction, its uncertainty, protons left per molecule) from a residual 1H integral."""
    if standard <= 0 or standard_nuclei <= 0 or standard_per_analyte <= 0 or positions < 1:
        raise ValueError("standard integral, nuclei and mole ratio must be positive")
    h = residual / standard * standard_nuclei * standard_per_analyte
    rel = math.hypot(rel_sigma_residual, rel_sigma_standard)
    return 1 - h / positions, h * rel / positions, h
