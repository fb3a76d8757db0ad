"""Exact spin-system spectra: textbook cases, invariants, numpy reference, validation.

PSB 1959 = J. A. Pople, W. G. Schneider, H. J. Bernstein, *High-resolution
Nuclear Magnetic Resonance* (McGraw-Hill, 1959), ch. 6.
"""

import math
import random
from fractions import Fraction

import pytest

from nmrcalc.errors import InputError
from nmrcalc.physics.spin_system import (
    MAX_BLOCK_DIM,
    Site,
    equivalence_caveats,
    first_order_checks,
    problem_size,
    simulate,
    total_spin_multiplicities,
    transitions,
)

HALF = Fraction(1, 2)
ONE = Fraction(1)


def H1(offset_Hz, count=1):
    return Site("1H", HALF, offset_Hz, count)


def same_lines(a, b, freq_tol=1e-6, int_tol=1e-9):
    assert len(a) == len(b)
    for (fa, ia), (fb, ib) in zip(a, b):
        assert fa == pytest.approx(fb, abs=freq_tol)
        assert ia == pytest.approx(ib, abs=int_tol)


def total(lines):
    return sum(i for _, i in lines)


# ---------------------------------------------------------------- AB / AX / A2

@pytest.mark.parametrize("nu_A, nu_B, J", [(10.0, -10.0, 8.0), (0.0, 3.0, -12.0), (250.0, 244.0, 1.5)])
@pytest.mark.parametrize("use_numpy", [False, True])
def test_ab_quartet_textbook_formula(nu_A, nu_B, J, use_numpy):
    lines = simulate([H1(nu_A), H1(nu_B)], [(0, 1, J)], "1H", use_numpy=use_numpy)
    mean, C, aJ = 0.5 * (nu_A + nu_B), math.hypot(nu_A - nu_B, J), abs(J)
    # PSB 1959, AB case: lines at ν̄ ± (C ± J)/2, C = √(Δν² + J²); inner ∝ 1 + J/C, outer ∝ 1 − J/C
    expected = [(mean - (C + aJ) / 2, (1 - aJ / C) / 4), (mean - (C - aJ) / 2, (1 + aJ / C) / 4),
                (mean + (C - aJ) / 2, (1 + aJ / C) / 4), (mean + (C + aJ) / 2, (1 - aJ / C) / 4)]
    same_lines(lines, expected, 1e-9, 1e-12)
    # PSB 1959: inner/outer intensity ratio (1 + J/C)/(1 − J/C)
    assert lines[1][1] / lines[0][1] == pytest.approx((1 + aJ / C) / (1 - aJ / C), rel=1e-12)


def test_ax_limit_is_two_first_order_doublets():
    lines = simulate([H1(0.0), H1(600.0)], [(0, 1, 7.0)], "1H")
    # PSB 1959: Δν ≫ J gives doublets at ν ± J/2 of equal intensity; shifts are O(J²/Δν)
    expected = [-3.5, 3.5, 596.5, 603.5]
    assert [f for f, _ in lines] == pytest.approx(expected, abs=7.0 ** 2 / 600)
    assert [i for _, i in lines] == pytest.approx([0.25] * 4, abs=7.0 / 600)


def test_a2_gives_one_line_whatever_the_coupling():
    # PSB 1959: coupling between equivalent nuclei does not appear in the spectrum
    for lines in (simulate([H1(42.0), H1(42.0)], [(0, 1, 15.0)], "1H"),
                  simulate([H1(42.0, count=2)], [], "1H")):
        same_lines(lines, [(42.0, 1.0)], 1e-9, 1e-12)


def test_a2x_with_fluorine_is_exactly_first_order():
    sites = [H1(100.0, count=2), Site("19F", HALF, -30.0)]
    couplings = [(0, 1, 48.0)]
    # weak coupling to another nuclide is exactly first order (PSB 1959); Pascal 1:2:1 triplet
    same_lines(simulate(sites, couplings, "1H"), [(76.0, 0.5), (124.0, 0.5)], 1e-9, 1e-12)
    same_lines(simulate(sites, couplings, "19F"), [(-78.0, 0.25), (-30.0, 0.5), (18.0, 0.25)], 1e-9, 1e-12)


def test_ab2_nine_lines_and_analysis_rules():
    nu_A, nu_B, J = 0.0, 10.0, 8.0
    lines = simulate([H1(nu_A), H1(nu_B, count=2)], [(0, 1, J)], "1H", min_rel_intensity=1e-9)
    # PSB 1959, AB2: 8 lines plus one weak combination line
    assert len(lines) == 9
    f = [x for x, _ in lines]  # numbered 1..9 from the A side (A lies low here)
    assert min(lines, key=lambda x: x[1]) == lines[8]
    # from memory (AB2 analysis rules, PSB 1959): ν_A = ν3, ν_B = (ν5 + ν7)/2, J = |ν1 − ν4 + ν6 − ν8|/3
    assert f[2] == pytest.approx(nu_A, abs=1e-9)
    assert 0.5 * (f[4] + f[6]) == pytest.approx(nu_B, abs=1e-9)
    assert abs(f[0] - f[3] + f[5] - f[7]) / 3 == pytest.approx(J, abs=1e-9)


ABX_SITES = [H1(0.0), H1(12.0), H1(400.0)]
ABX_COUPLINGS = [(0, 1, 10.0), (0, 2, 7.0), (1, 2, 2.0)]


def test_abx_all_proton_fifteen_transitions():
    lines = simulate(ABX_SITES, ABX_COUPLINGS, "1H", min_rel_intensity=0.0)
    # PSB 1959, ABX: 15 transitions = 8 AB + 6 X (4 main, 2 combination) + 1 three-spin combination line
    assert len(lines) == 15
    ab = [x for x in lines if -100 < x[0] < 100]
    x_part = [x for x in lines if 300 < x[0] < 500]
    assert len(ab) == 8 and len(x_part) == 6
    (combo,) = [x for x in lines if x not in ab and x not in x_part]
    assert combo[1] < 1e-6 * max(i for _, i in lines)  # PSB 1959: forbidden in the X approximation
    assert len(simulate(ABX_SITES, ABX_COUPLINGS, "1H")) == 14


def test_abx_with_fluorine_x_is_two_ab_subquartets():
    sites = [ABX_SITES[0], ABX_SITES[1], Site("19F", HALF, 0.0)]
    lines = simulate(sites, ABX_COUPLINGS, "1H", min_rel_intensity=0.0)
    J_AB, J_AX, J_BX = 10.0, 7.0, 2.0
    expected = []
    for m_X in (0.5, -0.5):
        # PSB 1959, ABX analysis: for each m_X an AB quartet with ν_A + m_X J_AX, ν_B + m_X J_BX
        a, b = 0.0 + m_X * J_AX, 12.0 + m_X * J_BX
        mean, C = 0.5 * (a + b), math.hypot(a - b, J_AB)
        for sign in (-1, 1):
            expected += [(mean + sign * (C + J_AB) / 2, (1 - J_AB / C) / 8),
                         (mean + sign * (C - J_AB) / 2, (1 + J_AB / C) / 8)]
    same_lines(lines, sorted(expected), 1e-9, 1e-12)
    x_part = simulate(sites, ABX_COUPLINGS, "19F")
    # PSB 1959: X part of ABX has 6 lines (4 main + 2 weak combination), symmetric about ν_X,
    # the two central-pair lines at ν_X ± (J_AX + J_BX)/2 with intensity 1/4 each
    assert len(x_part) == 6
    assert [f for f, _ in x_part] == pytest.approx([-f for f, _ in reversed(x_part)], abs=1e-9)
    assert (4.5, 0.25) in [(round(f, 9), round(i, 12)) for f, i in x_part]


def test_deuterium_and_methyl_multiplets():
    # 2I+1 rule: two spin-1 neighbours give 1:2:3:2:1 (counting total-M states; PSB 1959)
    lines = simulate([H1(50.0), Site("2H", ONE, 0.0, count=2)], [(0, 1, 2.0)], "1H")
    same_lines(lines, [(46.0 + 2 * k, w / 9) for k, w in enumerate([1, 2, 3, 2, 1])], 1e-9, 1e-12)
    # Pascal 1:3:3:1 for 13C coupled to three equivalent protons (PSB 1959)
    lines = simulate([Site("13C", HALF, 0.0), H1(0.0, count=3)], [(0, 1, 125.0)], "13C")
    same_lines(lines, [(-187.5, 1 / 8), (-62.5, 3 / 8), (62.5, 3 / 8), (187.5, 1 / 8)], 1e-9, 1e-12)


# ---------------------------------------------------------- numpy reference

def random_system(seed, n, nuclei=(("1H", HALF),)):
    rng = random.Random(seed)
    sites = [Site(*rng.choice(nuclei), rng.uniform(-150, 150)) for _ in range(n)]
    couplings = [(i, j, rng.uniform(-18, 18)) for i in range(n) for j in range(i + 1, n)]
    return sites, couplings


@pytest.mark.parametrize("seed, n", [(1, 3), (2, 4), (3, 5), (4, 6), (5, 7), (6, 8)])
def test_pure_python_matches_numpy_eigh(seed, n):
    sites, couplings = random_system(seed, n)
    pure = simulate(sites, couplings, "1H", use_numpy=False)
    # reference: numpy.linalg.eigh for every block
    same_lines(pure, simulate(sites, couplings, "1H", use_numpy=True))
    assert total(pure) == pytest.approx(1.0, abs=1e-4)


@pytest.mark.parametrize("seed", [11, 12])
@pytest.mark.parametrize("observe", ["1H", "2H", "19F", "31P"])
def test_mixed_nuclides_match_numpy(seed, observe):
    nuclei = (("1H", HALF), ("2H", ONE), ("19F", HALF), ("31P", HALF))
    sites, couplings = random_system(seed, 6, nuclei)
    sites[0], sites[1], sites[2] = (Site("1H", HALF, 10.0), Site("2H", ONE, -20.0, 2), Site("19F", HALF, 5.0))
    sites[3] = Site("31P", HALF, 1.0)
    pure = simulate(sites, couplings, observe, use_numpy=False, min_rel_intensity=1e-7)
    same_lines(pure, simulate(sites, couplings, observe, use_numpy=True, min_rel_intensity=1e-7))  # numpy.linalg.eigh


# --------------------------------------------------------------- invariants

@pytest.mark.parametrize("seed", [21, 22, 23])
def test_intensity_sum_rule(seed):
    nuclei = (("1H", HALF), ("2H", ONE), ("19F", HALF))
    sites, couplings = random_system(seed, 5, nuclei)
    for observe in {s.nucleus for s in sites}:
        lines = simulate(sites, couplings, observe, min_rel_intensity=0.0)
        # Σ_{ΔM=+1} |<f|F_x|i>|² = Tr(F_x²)/2 = D Σ I(I+1)/6 (angular-momentum trace identity,
        # A. Abragam, Principles of Nuclear Magnetism, 1961, ch. IV method of moments)
        assert total(lines) == pytest.approx(1.0, abs=1e-12)


def test_first_order_total_per_site():
    # weak coupling leaves each observed site's share at count·I(I+1)/Σ (PSB 1959 first-order rules)
    sites = [H1(0.0, count=3), H1(900.0, count=1), Site("19F", HALF, 0.0)]
    lines = simulate(sites, [(0, 1, 7.0), (0, 2, 3.0), (1, 2, 40.0)], "1H")
    assert total([x for x in lines if x[0] < 450]) == pytest.approx(0.75, abs=1e-3)


@pytest.mark.parametrize("seed", [31, 32])
def test_mirror_under_reversed_shifts(seed):
    sites, couplings = random_system(seed, 5, (("1H", HALF), ("19F", HALF)))
    sites[0] = Site("1H", HALF, sites[0].offset_Hz)
    mirrored = [Site(s.nucleus, s.spin, -s.offset_Hz, s.count) for s in sites]
    # a π rotation about x maps I_z → −I_z, keeps I_x and I_i·I_j (angular-momentum algebra, from memory)
    expected = sorted((-f, i) for f, i in simulate(sites, couplings, "1H"))
    same_lines(simulate(mirrored, couplings, "1H"), expected, 1e-9, 1e-12)


def test_zero_couplings_give_singlets_weighted_by_count():
    sites = [H1(-5.0, count=3), H1(20.0, count=2), H1(70.0), Site("2H", ONE, 3.0, count=2)]
    # uncoupled spins: one line at each shift, intensity ∝ number of spins (PSB 1959)
    expected = [(-5.0, 0.5), (20.0, 1 / 3), (70.0, 1 / 6)]
    same_lines(simulate(sites, [(0, 1, 0.0), (1, 3, 0.0)], "1H"), expected, 1e-12, 1e-12)
    same_lines(simulate(sites, [], "2H"), [(3.0, 1.0)], 1e-12, 1e-12)


@pytest.mark.parametrize("sites, couplings, observe", [
    ([H1(24.0, count=3), H1(72.0, count=2)], [(0, 1, 7.0)], "1H"),  # ethyl A3B2 at 20 MHz
    ([H1(0.0, count=2), H1(9.0), Site("19F", HALF, 0.0, count=2)], [(0, 1, 6.0), (0, 2, 20.0), (1, 2, 3.0)], "1H"),
    ([Site("2H", ONE, 0.0, count=2), Site("2H", ONE, 2.0), H1(0.0)], [(0, 1, 1.2), (0, 2, 2.0)], "2H"),
    ([H1(0.0, count=4), H1(15.0)], [(0, 1, -9.0)], "1H"),
    ([Site("7Li", Fraction(3, 2), 0.0, count=2), Site("7Li", Fraction(3, 2), 4.0), H1(0.0)],
     [(0, 1, 3.0), (1, 2, 1.0)], "7Li"),
])
def test_equivalence_factoring_equals_expanded_spins(sites, couplings, observe):
    factored = simulate(sites, couplings, observe, use_numpy=False)
    # the expanded calculation is the unfactored Hamiltonian (PSB 1959 sec. 6-4 composite particles)
    same_lines(factored, simulate(sites, couplings, observe, use_numpy=False, factor_equivalence=False))


def test_coupling_inside_an_equivalent_group_is_invisible():
    # ethyl as five separate spins with geminal J inside CH3 and CH2, versus two equivalent groups:
    # intra-group couplings commute with H and F_x and drop out (PSB 1959 sec. 6-4)
    spins = [H1(24.0)] * 3 + [H1(72.0)] * 2
    couplings = [(0, 1, -12.0), (0, 2, -12.0), (1, 2, -12.0), (3, 4, -14.0)]
    couplings += [(a, b, 7.0) for a in range(3) for b in (3, 4)]
    same_lines(simulate(spins, couplings, "1H"), simulate([H1(24.0, 3), H1(72.0, 2)], [(0, 1, 7.0)], "1H"))


@pytest.mark.parametrize("seed", [61, 62, 63])
def test_random_groups_factor_like_expanded(seed):
    rng = random.Random(seed)
    nuclei = (("1H", HALF), ("19F", HALF), ("2H", ONE))
    sites = [Site(*rng.choice(nuclei), rng.uniform(-60, 60), rng.choice([1, 1, 2, 3])) for _ in range(4)]
    sites[0] = Site("1H", HALF, 0.0, 2)
    couplings = [(i, j, rng.uniform(-15, 15)) for i in range(4) for j in range(i + 1, 4) if rng.random() < 0.8]
    # reference: the same Hamiltonian over individual spins, diagonalized by numpy.linalg.eigh
    expanded = simulate(sites, couplings, "1H", use_numpy=True, factor_equivalence=False)
    same_lines(simulate(sites, couplings, "1H", use_numpy=False), expanded)


@pytest.mark.parametrize("seed, factor", [(71, True), (72, False), (73, False)])
def test_pure_python_names_the_same_spin_as_numpy(seed, factor):
    # the pure path takes <Σ I_z> per site from its own eigenvectors (dot products);
    # reference: the same changes from numpy matrix products of numpy.linalg.eigh's eigenvectors
    rng = random.Random(seed)
    sites = [H1(rng.uniform(0, 40), rng.choice([1, 1, 2])) for _ in range(4)] + [Site("19F", HALF, 300.0)]
    couplings = [(i, j, rng.uniform(-12, 12)) for i in range(5) for j in range(i + 1, 5) if rng.random() < 0.9]
    kwargs = {"factor_equivalence": factor, "merge_tol_Hz": 1e-6}
    pure = transitions(sites, couplings, "1H", use_numpy=False, **kwargs)
    ref = transitions(sites, couplings, "1H", use_numpy=True, **kwargs)
    assert len(pure) == len(ref) > 20
    same_lines([(f, i) for f, i, _ in pure], [(f, i) for f, i, _ in ref])
    assert [site for *_, site in pure] == [site for *_, site in ref]


def test_total_spin_multiplicities():
    # Clebsch–Gordan counting (PSB 1959 sec. 6-4): 3 × ½ → 3/2 + 2 × ½; 2 × 1 → 2 + 1 + 0
    assert total_spin_multiplicities(3, HALF) == [(Fraction(3, 2), 1), (HALF, 2)]
    assert total_spin_multiplicities(2, ONE) == [(2, 1), (1, 1), (0, 1)]
    for n, spin in [(6, HALF), (3, Fraction(3, 2)), (4, ONE)]:
        multiplicities = total_spin_multiplicities(n, spin)
        assert sum(m * (2 * F + 1) for F, m in multiplicities) == (2 * spin + 1) ** n  # dimension count


# ----------------------------------------------------- limits and progress

def test_too_large_is_refused_quickly():
    sites, couplings = random_system(41, 12)
    with pytest.raises(InputError) as info:
        simulate(sites, couplings, "1H")
    assert (info.value.code, info.value.field) == ("too_large", "spins")
    assert str(MAX_BLOCK_DIM) in info.value.message and "first-order multiplet" in info.value.message
    assert problem_size(sites, couplings, "1H")["largest_block"] == 924  # C(12, 6)
    chain = [H1(float(k)) for k in range(20)]
    with pytest.raises(InputError) as info:
        simulate(chain, [(k, k + 1, 5.0) for k in range(19)], "1H")
    assert info.value.code == "too_large"
    huge = [Site("1H", HALF, float(k), 64) for k in range(200)]
    with pytest.raises(InputError) as info:
        simulate(huge, [(k, k + 1, 1.0) for k in range(199)], "1H", factor_equivalence=False)
    assert "more than 10^3853 states" in info.value.message  # 2^12800 states


def test_large_equivalent_group_is_cheap_when_factored():
    sites = [H1(0.0, count=12), Site("19F", HALF, 0.0)]
    assert problem_size(sites, [(0, 1, 7.0)], "19F")["largest_block"] == 1
    assert problem_size(sites, [(0, 1, 7.0)], "19F", factor_equivalence=False)["largest_block"] == 924
    lines = simulate(sites, [(0, 1, 7.0)], "19F", min_rel_intensity=0.0)
    # n+1 rule with binomial (Pascal) intensities C(12, k)/2^12 for weak coupling (PSB 1959)
    expected = [(7.0 * (k - 6), math.comb(12, k) / 4096) for k in range(13)]
    same_lines(lines, expected, 1e-9, 1e-12)


def test_progress_is_reported_between_blocks():
    seen = []
    simulate(*random_system(51, 5), "1H", progress=seen.append)
    assert len(seen) > 5 and seen == sorted(seen) and seen[-1] == 1.0 and 0.0 < seen[0] < 1.0


# ----------------------------------------------------------- diagnostics

def test_first_order_checks():
    sites = [H1(0.0), H1(20.0), Site("19F", HALF, 0.0), H1(0.0)]
    checks = first_order_checks(sites, [(0, 1, 8.0), (0, 2, 50.0), (0, 3, 3.0)], spectrometer_1H_MHz=400.0)
    by_pair = {c["pair"]: c for c in checks}
    assert set(by_pair) == {(0, 1), (0, 3)}  # unlike pair (0, 2) is always weak
    ab = by_pair[(0, 1)]
    # Δν/J = 20/8; Δν grows linearly with B0 while J does not (PSB 1959)
    assert ab["delta_nu_over_J"] == pytest.approx(2.5) and ab["first_order"] is False
    assert ab["threshold_scale"] == pytest.approx(4.0) and ab["threshold_1H_MHz"] == pytest.approx(1600.0)
    assert by_pair[(0, 3)]["threshold_scale"] is None and by_pair[(0, 3)]["same_shift"]
    assert first_order_checks([H1(0.0), H1(100.0)], [(0, 1, 5.0)])[0]["first_order"] is True


def test_equivalence_caveat_for_aa_xx():
    sites = [H1(0.0), H1(0.0), H1(1000.0), H1(1000.0)]
    couplings = [(0, 1, 2.0), (2, 3, 1.5), (0, 2, 8.0), (1, 3, 8.0), (0, 3, 0.5), (1, 2, 0.5)]
    caveats = equivalence_caveats(sites, couplings)
    assert len(caveats) == 2 and all("magnetically inequivalent (AA′XX′-type): never first order" in c
                                     for c in caveats)
    # and indeed, at Δν/J = 125 the A half still has 10 lines (from memory: AA′XX′ A part, PSB 1959),
    # not the first-order 1:2:1 triplet
    a_part = [x for x in simulate(sites, couplings, "1H", merge_tol_Hz=0.01) if x[0] < 500]
    assert len(a_part) == 10
    a2x2 = [(0, 1, 2.0), (2, 3, 1.5), (0, 2, 8.0), (1, 3, 8.0), (0, 3, 8.0), (1, 2, 8.0)]
    assert equivalence_caveats(sites, a2x2) == []


# --------------------------------------------------------------- validation

@pytest.mark.parametrize("sites, couplings, observe, field", [
    ([H1(0.0), H1(1.0)], [(0, 0, 5.0)], "1H", "couplings.0.between"),
    ([H1(0.0), H1(1.0)], [(0, 1, 1.0), (1, 2, 5.0)], "1H", "couplings.1.between"),
    ([H1(0.0), H1(1.0)], [(0, 1, 1.0), (1, 0, 5.0)], "1H", "couplings.1.between"),
    ([H1(0.0), H1(1.0)], [(0, 1, float("inf"))], "1H", "couplings.0.J_Hz"),
    ([H1(0.0), H1(1.0)], [(0, 1)], "1H", "couplings.0"),
    ([H1(float("nan"))], [], "1H", "sites.0.offset_Hz"),
    ([H1(0.0), Site("1H", Fraction(1, 3), 0.0)], [], "1H", "sites.1.spin"),
    ([H1(0.0), Site("1H", ONE, 0.0)], [], "1H", "sites.1.spin"),
    ([H1(0.0), H1(3.0, count=0)], [], "1H", "sites.1.count"),
    ([H1(0.0)], [], "13C", "observe"),
    ([], [], "1H", "sites"),
])
def test_bad_input_names_the_field(sites, couplings, observe, field):
    with pytest.raises(InputError) as info:
        simulate(sites, couplings, observe)
    assert info.value.field == field


def test_bad_options_name_the_field():
    for kwargs, field in [({"merge_tol_Hz": -1.0}, "merge_tol_Hz"), ({"min_rel_intensity": 1.0}, "min_rel_intensity"),
                          ({"progress": 3}, "progress")]:
        with pytest.raises(InputError) as info:
            simulate([H1(0.0)], [], "1H", **kwargs)
        assert info.value.field == field
    with pytest.raises(InputError) as info:
        first_order_checks([H1(0.0)], [], threshold=0.0)
    assert info.value.field == "threshold"
