"""Tests for nmrcalc.physics.multiplet (first-order stick patterns, labels, limits)."""

import math
from fractions import Fraction
from itertools import permutations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.polynomial import polynomial as npoly

from nmrcalc.errors import InputError
from nmrcalc.physics.multiplet import (
    MAX_GROUPS,
    MAX_LINES,
    MAX_WEIGHT_BITS,
    SpinGroup,
    group_coefficients,
    multiplet,
    multiplet_label,
    normalized,
    ratio_string,
    validate_groups,
)

HALF = Fraction(1, 2)


def reference_coefficients(spin, count):
    """Exact (object dtype) coefficients of (1 + x + ... + x^(2I))^n from numpy.polynomial."""
    ones = np.array([1] * (int(2 * spin) + 1), dtype=object)
    return [int(c) for c in npoly.polypow(ones, count, maxpower=count + 1)]


@pytest.mark.parametrize(
    "spin, count, expected",
    [
        (Fraction(1), 2, "1:2:3:2:1"),  # trinomial triangle row 2, OEIS A027907; numpy.polynomial.polypow below
        (Fraction(1), 3, "1:3:6:7:6:3:1"),  # trinomial triangle row 3, OEIS A027907; numpy.polynomial.polypow below
        (Fraction(3, 2), 2, "1:2:3:4:3:2:1"),  # quadrinomial coefficients, OEIS A008287; numpy.polynomial.polypow below
        (Fraction(3), 1, "1:1:1:1:1:1:1"),  # (1 + x + ... + x^6)^1; numpy.polynomial.polypow below
        (HALF, 6, "1:6:15:20:15:6:1"),  # Pascal's triangle row 6 (binomial coefficients, math.comb)
    ],
)
def test_known_patterns(spin, count, expected):
    sticks = multiplet([(spin, count, 7.0)])
    assert ratio_string(sticks) == expected
    # numpy.polynomial.polynomial.polypow as an independent reference
    assert [w for _, w in sticks] == reference_coefficients(spin, count)
    assert [x for x, _ in sticks] == pytest.approx([7.0 * (k - count * spin) for k in range(len(sticks))])


@pytest.mark.parametrize("spin, count", [(HALF, 50), (Fraction(9, 2), 20), (Fraction(1), 17), (Fraction(5, 2), 9)])
def test_large_groups_exact(spin, count):
    # numpy.polynomial.polynomial.polypow with exact object integers
    assert group_coefficients(spin, count) == reference_coefficients(spin, count)


def test_pascal_fifty_spin_half_exact():
    # binomial coefficients, math.comb
    assert [w for _, w in multiplet([(HALF, 50, 1.0)])] == [math.comb(50, k) for k in range(51)]


spins = st.sampled_from([Fraction(k, 2) for k in range(1, 10)])
couplings = st.one_of(
    st.integers(-20, 20).map(lambda k: k / 2),
    st.floats(min_value=-50, max_value=50, allow_nan=False).map(lambda x: round(x, 1)),
)


def _raw_lines(groups):
    return math.prod(int(2 * n * s) + 1 for s, n, _ in groups)


groups_strategy = st.lists(st.tuples(spins, st.integers(1, 4), couplings), min_size=1, max_size=4).filter(
    lambda groups: _raw_lines(groups) <= 1500
)


@settings(max_examples=150, deadline=None)
@given(spins, st.integers(1, 12), st.floats(min_value=0.05, max_value=100))
def test_single_group_line_count_and_spacing(spin, count, J):
    # first-order rule: 2nI + 1 lines spaced J (Günther, NMR Spectroscopy, 3rd ed., first-order spectra)
    sticks = multiplet([(spin, count, J)])
    assert len(sticks) == 2 * count * spin + 1
    gaps = [b[0] - a[0] for a, b in zip(sticks, sticks[1:])]
    assert gaps == pytest.approx([J] * len(gaps))


@settings(max_examples=150, deadline=None)
@given(groups_strategy)
def test_sum_symmetry_normalization(groups):
    sticks = multiplet(groups)
    # total weight = prod (2I+1)^n: number of spin-state combinations (product rule of counting)
    assert sum(w for _, w in sticks) == math.prod(int(2 * s + 1) ** n for s, n, _ in groups)
    # the pattern is symmetric about its centre (each state has a mirror state with -M)
    offsets = [x for x, _ in sticks]
    weights = [w for _, w in sticks]
    assert weights == weights[::-1]
    scale = max([1.0] + [abs(J) for _, _, J in groups])
    assert offsets == pytest.approx([-x for x in offsets[::-1]], abs=1e-9 * scale)
    assert all(isinstance(w, int) for w in weights)
    # normalization: intensities sum to 1
    assert math.fsum(y for _, y in normalized(sticks)) == pytest.approx(1.0, rel=1e-12)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(spins, st.integers(1, 3), couplings), min_size=2, max_size=3).filter(lambda g: _raw_lines(g) <= 1500))
def test_group_order_does_not_matter(groups):
    # convolution is commutative: the successive splitting order is irrelevant
    reference = multiplet(groups)
    scale = max([1.0] + [abs(J) for _, _, J in groups])
    for order in permutations(groups):
        other = multiplet(order)
        assert [w for _, w in other] == [w for _, w in reference]
        assert [x for x, _ in other] == pytest.approx([x for x, _ in reference], abs=1e-9 * scale)
        assert multiplet_label(order) == multiplet_label(groups)


def test_dd_with_equal_couplings_merges_to_triplet():
    # two equal spin-1/2 couplings: Pascal 1:2:1 (Günther, NMR Spectroscopy, 3rd ed., first-order spectra)
    groups = [(HALF, 1, 0.1 + 0.2), (HALF, 1, 0.3)]  # J values differ by one float ulp
    sticks = multiplet(groups)
    assert ratio_string(sticks) == "1:2:1"
    assert multiplet_label(groups) == "t"


def test_dd_with_double_coupling_gives_partial_overlap():
    # J1 = 2 J2: a dd of four equal, evenly spaced lines (1:1:1:1, not a 1:3:3:1 quartet); first-order rule, Günther
    sticks = multiplet([(HALF, 1, 10.0), (HALF, 1, 5.0)])
    assert [x for x, _ in sticks] == pytest.approx([-7.5, -2.5, 2.5, 7.5])
    assert ratio_string(sticks) == "1:1:1:1"
    # J1 = J2 + J3 gives a triple coincidence at the centre
    sticks = multiplet([(HALF, 1, 3.0), (HALF, 1, 2.0), (HALF, 1, 1.0)])
    assert ratio_string(sticks) == "1:1:1:2:1:1:1"


def test_zero_coupling_does_not_split():
    sticks = multiplet([(HALF, 2, 7.0), (Fraction(1), 3, 0.0)])
    assert [x for x, _ in sticks] == pytest.approx([-7.0, 0.0, 7.0])
    assert ratio_string(sticks) == "1:2:1"
    assert sum(w for _, w in sticks) == 4 * 27
    assert multiplet_label([(HALF, 2, 7.0), (Fraction(1), 3, 0.0)]) == "t"
    assert multiplet([]) == [(0.0, 1)]
    assert multiplet_label([]) == "s"


def test_negative_coupling_same_pattern():
    negative, positive = multiplet([(HALF, 3, -6.5)]), multiplet([(HALF, 3, 6.5)])
    assert [w for _, w in negative] == [w for _, w in positive]
    assert [x for x, _ in negative] == pytest.approx([x for x, _ in positive])


@pytest.mark.parametrize(
    "groups, label",
    [
        ([(HALF, 1, 7)], "d"),
        ([(HALF, 2, 7)], "t"),
        ([(HALF, 3, 7)], "q"),
        ([(HALF, 4, 7)], "quint"),
        ([(HALF, 5, 7)], "sext"),
        ([(HALF, 6, 7)], "sept"),
        ([(HALF, 7, 7)], "8-line multiplet"),
        ([(HALF, 2, 2), (HALF, 1, 10)], "dt"),
        ([(HALF, 2, 2), (HALF, 3, 7)], "qt"),
        ([(HALF, 1, 2), (HALF, 1, 5), (HALF, 1, 11)], "ddd"),
        ([(HALF, 1, 10), (HALF, 4, 2)], "d of quint"),
        ([(Fraction(1), 1, 20)], "1:1:1 triplet"),
        ([(Fraction(1), 2, 20)], "1:2:3:2:1 quintet"),
        ([(Fraction(3, 2), 1, 20)], "1:1:1:1 quartet"),
        ([(HALF, 1, 50), (Fraction(1), 1, 20)], "d of 1:1:1 t"),
        ([(HALF, 1, 50), (HALF, 1, 40), (Fraction(1), 1, 20)], "dd of 1:1:1 t"),
        ([(HALF, 2, 5), (Fraction(3, 2), 1, 20)], "1:1:1:1 q of t"),
        ([(Fraction(9, 2), 20, 3)], "181-line multiplet (20 × I=9/2)"),
        ([(HALF, 1, 5), (HALF, 1, 5), (HALF, 1, 2)], "td"),
    ],
)
def test_labels(groups, label):
    # naming convention of this module (docstring of multiplet_label); d/t/q codes are common practice, no source
    assert multiplet_label(groups) == label


@pytest.mark.parametrize(
    "groups, field",
    [
        ([(HALF, 1, 7), (Fraction(1, 3), 1, 7)], "groups.1.spin"),
        ([(0, 1, 7)], "groups.0.spin"),
        ([(-1, 1, 7)], "groups.0.spin"),
        ([("x", 1, 7)], "groups.0.spin"),
        ([(True, 1, 7)], "groups.0.spin"),
        ([(HALF, 0, 7)], "groups.0.count"),
        ([(HALF, 1.5, 7)], "groups.0.count"),
        ([(HALF, 1, float("nan"))], "groups.0.J_Hz"),
        ([(HALF, 1, float("inf"))], "groups.0.J_Hz"),
        ([(HALF, 1, "seven")], "groups.0.J_Hz"),
        ([(HALF, 1)], "groups.0"),
        (5, "groups"),
    ],
)
def test_validation_fields(groups, field):
    with pytest.raises(InputError) as info:
        multiplet(groups)
    assert info.value.field == field
    assert info.value.code == "invalid_value"


def test_spin_input_forms():
    assert validate_groups([("3/2", 2, 1), (1.5, 2.0, 1), (1, 1, 2)]) == [
        SpinGroup(Fraction(3, 2), 2, 1.0),
        SpinGroup(Fraction(3, 2), 2, 1.0),
        SpinGroup(Fraction(1), 1, 2.0),
    ]


@pytest.mark.parametrize(
    "groups, limit",
    [
        ([(HALF, MAX_WEIGHT_BITS + 1, 1.0)], str(MAX_WEIGHT_BITS)),
        ([(Fraction(9, 2), 600, 1.0)], str(MAX_LINES)),
        ([(HALF, 1, 2.0**k) for k in range(13)], str(MAX_LINES)),
        ([(HALF, 1, 1.0)] * (MAX_GROUPS + 1), str(MAX_GROUPS)),
    ],
)
def test_too_large(groups, limit):
    with pytest.raises(InputError) as info:
        multiplet(groups)
    assert info.value.code == "too_large"
    assert info.value.field == "groups"
    assert limit in info.value.message


def test_performance_sanity_cases():
    # integer sums: prod (2I+1)^n (product rule of counting)
    sticks = multiplet([(HALF, 12, 7.1), (Fraction(1), 6, 2.3), (Fraction(3, 2), 3, 0.9)])
    assert sum(w for _, w in sticks) == 2**12 * 3**6 * 4**3
    sticks = multiplet([(Fraction(9, 2), 20, 3.0)])
    assert sum(w for _, w in sticks) == 10**20
    assert len(sticks) == 181
