"""Partial collapse of a splitting by a relaxing quadrupolar partner.

Physics
-------
A spin-1/2 nucleus coupled (J) to a nucleus S of spin I >= 1 sees 2I + 1
lines, one per Zeeman state m of S, at ``J m``.  Quadrupolar relaxation of S
moves it between its states; the observed line then exchanges between the
2I + 1 positions (J. A. Pople, Mol. Phys. 1 (1958) 168 for I = 1; the same
relaxation-matrix exchange treatment for any I: M. Suzuki and R. Kubo,
Mol. Phys. 7 (1964) 201).  With the populations' rate matrix ``K`` (rates
``W(m→m')``, diagonal ``-Σ W``), the line shape is

    S(Δ) = (1/π) Re[ 1ᵀ (A)⁻¹ p ],   A = R2·1 + i(2π ν_m − 2π Δ)·δ − K

with ``ν_m = J m``, equal populations ``p_m = 1/(2I+1)`` and ``R2 = π w``
the observed spin's own line width ``w`` (FWHM, Hz).  It is normalized: its
area is 1 for any T1.

Rates: in the extreme-narrowing limit the quadrupolar transition
probabilities are ``W(m→m+q) ∝ |⟨I m+q| T_{2,q} |I m⟩|² ∝ ⟨I m; 2 q | I m+q⟩²``
(Clebsch–Gordan, q = ±1, ±2; A. Abragam, *The Principles of Nuclear
Magnetism*, Oxford 1961, ch. VIII), scaled so that ⟨S_z⟩ relaxes at 1/T1
(in extreme narrowing every rank of population order decays with one rate,
so ⟨S_z⟩ is an eigenmode of K).

Limits: T1 ≫ 1/J gives 2I+1 Lorentzians of width w and equal area; T1 ≪ 1/J
one line at the centre, broadened by about ``(2π J)² T1 × const``.
"""

from __future__ import annotations

import math
from fractions import Fraction

MAX_SPIN = Fraction(9, 2)


def _cg_squared(j1: Fraction, m1: Fraction, j2: int, m2: int, J: Fraction, M: Fraction) -> float:
    """⟨j1 m1; j2 m2 | J M⟩² from the Racah formula (exact with Fractions, then a float)."""
    if m1 + m2 != M or abs(m1) > j1 or abs(m2) > j2 or abs(M) > J:
        return 0.0
    def fi(x: Fraction | int) -> int:
        return math.factorial(int(x))

    pre = Fraction((2 * J + 1) * fi(J + j1 - j2) * fi(J - j1 + j2) * fi(j1 + j2 - J), fi(j1 + j2 + J + 1))
    pre *= fi(J + M) * fi(J - M) * fi(j1 - m1) * fi(j1 + m1) * fi(j2 - m2) * fi(j2 + m2)
    total = Fraction(0)
    k = 0
    while True:
        terms: list[Fraction] = [Fraction(k), j1 + j2 - J - k, j1 - m1 - k, Fraction(j2 + m2 - k), J - j2 + m1 + k,
                                 J - j1 - m2 + k]
        if terms[1] < 0 or terms[2] < 0 or terms[3] < 0:
            break
        if min(terms) >= 0:
            total += Fraction((-1) ** k, math.prod(fi(t) for t in terms))
        k += 1
    return float(pre * total * total)


def rate_matrix(spin: Fraction, T1_s: float) -> list[list[float]]:
    """K[m'][m] (row = to, column = from), states m = I, I-1, …, -I; columns sum to 0."""
    ms = [spin - k for k in range(int(2 * spin) + 1)]
    n = len(ms)
    W = [[0.0] * n for _ in range(n)]
    for a, m in enumerate(ms):
        for b, m2 in enumerate(ms):
            q = m2 - m
            if a != b and abs(q) <= 2:
                W[b][a] = _cg_squared(spin, m, 2, int(q), spin, m2)
    K = [[W[b][a] if a != b else -sum(W[c][a] for c in range(n)) for a in range(n)] for b in range(n)]
    # scale: the rate of the <Sz> mode v_m = m (K v = -rate v)
    v = [float(m) for m in ms]
    Kv = [sum(K[b][a] * v[a] for a in range(n)) for b in range(n)]
    rate = -sum(x * y for x, y in zip(Kv, v)) / sum(x * x for x in v)
    scale = 1.0 / (T1_s * rate)
    return [[x * scale for x in row] for row in K]


def _solve(A: list[list[complex]], b: list[complex]) -> list[complex]:
    """Gaussian elimination with partial pivoting (small dense complex systems)."""
    n = len(b)
    M = [row[:] + [b[i]] for i, row in enumerate(A)]
    for c in range(n):
        p = max(range(c, n), key=lambda r: abs(M[r][c]))
        M[c], M[p] = M[p], M[c]
        for r in range(c + 1, n):
            f = M[r][c] / M[c][c]
            if f:
                for k in range(c, n + 1):
                    M[r][k] -= f * M[c][k]
    x = [0j] * n
    for r in range(n - 1, -1, -1):
        x[r] = (M[r][n] - sum(M[r][k] * x[k] for k in range(r + 1, n))) / M[r][r]
    return x


def collapse_shape(x_Hz: list[float], J_Hz: float, spin: Fraction, T1_s: float, fwhm_Hz: float,
                   centre_Hz: float = 0.0) -> list[float]:
    """Area-normalized line shape (per Hz) at ``x_Hz`` of a line split by one relaxing spin-``spin`` partner."""
    if not Fraction(1) <= spin <= MAX_SPIN or (2 * spin).denominator != 1:
        raise ValueError("spin must be 1 … 9/2")
    if not (T1_s > 0 and fwhm_Hz > 0 and math.isfinite(J_Hz)):
        raise ValueError("T1 and the line width must be positive")
    ms = [float(spin - k) for k in range(int(2 * spin) + 1)]
    n = len(ms)
    K = rate_matrix(spin, T1_s)
    R2 = math.pi * fwhm_Hz
    p: list[complex] = [complex(1.0 / n)] * n
    out = []
    for x in x_Hz:
        A: list[list[complex]] = [
            [(R2 + 2j * math.pi * (J_Hz * ms[a] - (x - centre_Hz)) if a == b else 0j) - K[a][b] for b in range(n)]
            for a in range(n)]
        out.append(sum(_solve(A, p), 0j).real / math.pi * 2 * math.pi)  # per Hz: dΔ(rad/s) = 2π dΔ(Hz)
    return out
