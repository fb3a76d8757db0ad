"""Partial quadrupolar collapse: limits, spin-1 closed form, areas, the transition rates."""

import math
from fractions import Fraction

import pytest
import sympy
from sympy.physics.quantum.cg import CG

from nmrcalc.physics.lineshape import lorentzian
from nmrcalc.physics.quadrupolar_relaxation import _cg_squared, collapse_shape, rate_matrix

GRID = [-150 + 0.05 * i for i in range(6001)]


@pytest.mark.parametrize("spin", [Fraction(1), Fraction(3, 2), Fraction(5, 2), Fraction(7, 2)])
def test_clebsch_gordan_against_sympy(spin):
    # sympy.physics.quantum.cg.CG
    ms = [spin - k for k in range(int(2 * spin) + 1)]
    for m in ms:
        for q in (-2, -1, 1, 2):
            if abs(m + q) <= spin:
                R = sympy.Rational
                ref = CG(R(spin), R(m), 2, q, R(spin), R(m + q)).doit()
                assert math.isclose(_cg_squared(spin, m, 2, q, spin, m + q), float(ref ** 2), abs_tol=1e-12)


@pytest.mark.parametrize("spin", [Fraction(1), Fraction(3, 2), Fraction(5, 2)])
def test_sz_relaxes_at_one_over_T1(spin):
    # definition of T1: d<Sz>/dt = -<Sz>/T1 (the rates are scaled to it); columns conserve population
    K = rate_matrix(spin, 0.002)
    ms = [float(spin - k) for k in range(int(2 * spin) + 1)]
    Kv = [sum(K[b][a] * ms[a] for a in range(len(ms))) for b in range(len(ms))]
    assert all(math.isclose(x, -m / 0.002, rel_tol=1e-9, abs_tol=1e-6) for x, m in zip(Kv, ms))
    assert all(abs(sum(K[b][a] for b in range(len(ms)))) < 1e-9 for a in range(len(ms)))


@pytest.mark.parametrize("spin", [Fraction(1), Fraction(3, 2)])
def test_slow_limit_is_resolved_multiplet(spin):
    # T1 → ∞: 2I + 1 Lorentzians of equal area at J m (first-order pattern, Günther 2013)
    J, w = 20.0, 1.0
    ms = [float(spin - k) for k in range(int(2 * spin) + 1)]
    y = collapse_shape(GRID, J, spin, 1e4, w)
    ref = [sum(lorentzian(x, J * m, w, 1 / len(ms)) for m in ms) for x in GRID]
    assert max(abs(a - b) for a, b in zip(y, ref)) < 1e-3 * max(ref)


def test_fast_limit_is_one_line():
    # T1 → 0: one line at the centre with the natural width (motional narrowing; Pople 1958)
    y = collapse_shape(GRID, 20.0, Fraction(1), 1e-8, 1.0)
    ref = [lorentzian(x, 0.0, 1.0) for x in GRID]
    assert max(abs(a - b) for a, b in zip(y, ref)) < 1e-3 * max(ref)


@pytest.mark.parametrize("T1", [1.0, 0.02, 0.005, 0.001, 1e-4])
@pytest.mark.parametrize("spin", [Fraction(1), Fraction(3, 2), Fraction(5, 2)])
def test_area_conserved(T1, spin):
    # the normalized shape integrates to 1 for any T1: integrated over the whole line with Δ = s tan θ
    # (midpoint rule in θ; the Lorentzian tails become smooth), a change of variable of plain calculus
    s, n = 40.0, 6000
    thetas = [-math.pi / 2 + (k + 0.5) * math.pi / n for k in range(n)]
    y = collapse_shape([s * math.tan(t) for t in thetas], 15.0, spin, T1, 1.0)
    area = sum(v * s / math.cos(t) ** 2 for v, t in zip(y, thetas)) * math.pi / n
    assert abs(area - 1) < 1e-4


def test_spin_one_against_closed_form():
    # Closed form of the spin-1 exchange line shape (Pople 1958), derived here with sympy from the
    # three-site equations with W(±1↔0) = 1/(5 T1), W(1↔−1) = 2/(5 T1) (extreme narrowing, W ∝ CG²):
    # S(Δ) = (1/π) Re Σ (A⁻¹ p), A = R2 + i(2π J m − 2π Δ) − K
    d, J, T1, R2 = sympy.symbols("d J T1 R2", real=True)
    W1, W2 = 1 / (5 * T1), 2 / (5 * T1)
    K = sympy.Matrix([[-(W1 + W2), W1, W2], [W1, -2 * W1, W1], [W2, W1, -(W1 + W2)]])
    A = sympy.diag(*[R2 + sympy.I * 2 * sympy.pi * (J * m - d) for m in (1, 0, -1)]) - K
    expr = sympy.simplify((sympy.ones(1, 3) * A.LUsolve(sympy.Matrix([1, 1, 1]) / 3))[0])
    for T1_value in (0.05, 0.008, 0.002):
        f = sympy.lambdify(d, sympy.re(expr.subs({J: 12.0, T1: T1_value, R2: math.pi * 0.8})) * 2, "math")
        xs = [-30 + 0.5 * i for i in range(121)]
        ours = collapse_shape(xs, 12.0, Fraction(1), T1_value, 0.8)
        assert all(math.isclose(a, f(x), rel_tol=1e-9, abs_tol=1e-12) for a, x in zip(ours, xs))
