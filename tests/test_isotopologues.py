"""Tests for nmrcalc.physics.isotopologues (multinomial isotopologue shares and their spectra)."""

import math
from fractions import Fraction

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nmrcalc.errors import InputError
from nmrcalc.physics.isotopologues import (
    MAX_COMPOSITIONS,
    composition_shares,
    isotopologue_spectrum,
)
from nmrcalc.physics.multiplet import ratio_string

HALF = Fraction(1, 2)
D_FRACTION = Fraction(998, 1000)


def deuterium_site(positions, J_D_Hz, J_H_Hz):
    return (positions, [("2H", 1, D_FRACTION, J_D_Hz), ("1H", HALF, 1 - D_FRACTION, J_H_Hz)])


def species_by_label(result):
    return {s.label: s for s in result.species}


def test_cd3_shares_are_binomial():
    shares = dict(composition_shares(3, [D_FRACTION, 1 - D_FRACTION]))
    for d in range(4):
        # binomial distribution, math.comb
        assert shares[(d, 3 - d)] == math.comb(3, d) * D_FRACTION**d * (1 - D_FRACTION) ** (3 - d)
    result = isotopologue_spectrum([deuterium_site(3, 19.3, 125.0)], min_share=0)
    found = species_by_label(result)
    assert set(found) == {"2H3", "2H2 1H1", "2H1 1H2", "1H3"}
    # binomial distribution, math.comb
    assert found["2H2 1H1"].share == 3 * D_FRACTION**2 * (1 - D_FRACTION)
    assert float(found["2H3"].share) == pytest.approx(0.998**3)  # binomial distribution, math.comb
    assert sum(s.share for s in result.species) == 1
    assert result.dropped_share == 0 and result.dropped_count == 0


def test_residual_chd2_proton_is_quintet():
    # 1H of the residual CHD2 group: the observed H sees the other two positions; equivalent H do not split (J = 0)
    result = isotopologue_spectrum([deuterium_site(2, 2.0, 0.0)])
    main = result.species[0]
    assert main.label == "2H2"
    assert ratio_string(main.sticks) == "1:2:3:2:1"  # trinomial triangle row 2, OEIS A027907
    assert main.multiplet_label == "1:2:3:2:1 quintet"
    assert float(main.share) == pytest.approx(0.998**2)  # binomial distribution, math.comb


def test_cd3_carbon_is_septet():
    # 13C of CD3: three D (I = 1) give 1:3:6:7:6:3:1  # common practice, no source
    result = isotopologue_spectrum([deuterium_site(3, 19.3, 125.0)])
    main = result.species[0]
    assert ratio_string(main.sticks) == "1:3:6:7:6:3:1"
    assert main.multiplet_label == "1:3:6:7:6:3:1 septet"
    # CD2H carries a doublet (J_CH) of 1:2:3:2:1 quintets (J_CD), largest J named first
    assert species_by_label(result)["2H2 1H1"].multiplet_label == "d of 1:2:3:2:1 quint"


def test_borohydride_proton():
    J_11B = 81.0
    boron = [("11B", Fraction(3, 2), 0.801, J_11B), ("10B", 3, 0.199, J_11B * 0.3353)]
    result = isotopologue_spectrum([(1, boron)])
    found = species_by_label(result)
    assert set(found) == {"11B1", "10B1"}
    assert float(found["11B1"].share) == pytest.approx(0.80, abs=0.01)  # IUPAC 2001: 11B 80.1 %, 10B 19.9 %
    assert float(found["10B1"].share) == pytest.approx(0.20, abs=0.01)  # IUPAC 2001 (as above)
    assert ratio_string(found["11B1"].sticks) == "1:1:1:1"  # I = 3/2: 2I + 1 equal lines (Günther, NMR Spectroscopy, 3rd ed.)
    assert found["11B1"].multiplet_label == "1:1:1:1 quartet"
    assert ratio_string(found["10B1"].sticks) == "1:1:1:1:1:1:1"  # I = 3: 2I + 1 equal lines (Günther, NMR Spectroscopy, 3rd ed.)
    spacings = [b[0] - a[0] for a, b in zip(found["10B1"].lines, found["10B1"].lines[1:])]
    assert spacings == pytest.approx([J_11B * 0.3353] * 6)
    # 4 lines of 0.801/4 and 7 lines of 0.199/7, none coincident here
    assert len(result.lines) == 11
    assert math.fsum(y for _, y in result.lines) == pytest.approx(1.0)


def test_platinum_satellites():
    platinum = [("195Pt", HALF, 0.338, 1200.0), ("Pt", 0, 0.662, None)]
    result = isotopologue_spectrum([(1, platinum)])
    lines = result.lines
    assert [x for x, _ in lines] == pytest.approx([-600.0, 0.0, 600.0])
    assert lines[0][1] == pytest.approx(0.169, abs=0.001)  # half of the 33.8 % given above (arithmetic)
    assert lines[2][1] == pytest.approx(0.169, abs=0.001)  # (as above)
    assert lines[1][1] == pytest.approx(0.662)
    assert result.species[0].label == "Pt1 (no magnetic partner)"


def test_chloroform_carbon_satellites():
    carbon = [("13C", HALF, 0.0107, 209.0), ("12C", 0, 0.9893, 0.0)]
    result = isotopologue_spectrum([(1, carbon)])
    satellites = [y for x, y in result.lines if x != 0]
    assert satellites == pytest.approx([0.00535, 0.00535], abs=1e-5)  # common practice, no source
    assert species_by_label(result)["12C1 (no magnetic partner)"].multiplet_label == "s"


def test_two_elements_multiply_and_cutoff_reports_drop():
    platinum = [("195Pt", HALF, Fraction(338, 1000), 1200.0), ("Pt", 0, Fraction(662, 1000), None)]
    carbon = [("13C", HALF, Fraction(107, 10000), 60.0), ("12C", 0, Fraction(9893, 10000), None)]
    everything = isotopologue_spectrum([(1, platinum), (2, carbon)], min_share=0)
    assert len(everything.species) == 2 * 3
    assert sum(s.share for s in everything.species) == 1  # multinomial theorem
    found = species_by_label(everything)
    # independent elements: product of the binomial shares (math.comb)
    assert found["195Pt1, 13C1 12C1"].share == Fraction(338, 1000) * 2 * Fraction(107, 10000) * Fraction(9893, 10000)
    assert found["Pt1, 12C2 (no magnetic partner)"].share == Fraction(662, 1000) * Fraction(9893, 10000) ** 2
    assert found["195Pt1, 13C1 12C1"].multiplet_label == "dd"
    cut = isotopologue_spectrum([(1, platinum), (2, carbon)], min_share=1e-3)
    small = [s for s in everything.species if s.share < Fraction(1, 1000)]
    assert cut.dropped_count == len(small) == 2
    assert cut.dropped_share == sum(s.share for s in small)
    assert cut.kept_share + cut.dropped_share == 1
    assert math.fsum(y for _, y in cut.lines) == pytest.approx(1.0)


def test_plain_groups_apply_to_every_species():
    platinum = [("195Pt", HALF, 0.338, 1200.0), ("Pt", 0, 0.662, None)]
    result = isotopologue_spectrum([(1, platinum)], groups=[(HALF, 2, 7.0)])
    found = species_by_label(result)
    assert found["195Pt1"].multiplet_label == "dt"
    assert found["Pt1 (no magnetic partner)"].multiplet_label == "t"
    assert len(result.lines) == 9


@settings(max_examples=60, deadline=None)
@given(
    st.integers(1, 6),
    st.lists(st.integers(1, 1000), min_size=1, max_size=4),
)
def test_shares_sum_to_one(positions, raw):
    abundances = [Fraction(r, sum(raw)) for r in raw]
    shares = composition_shares(positions, abundances)
    assert sum(s for _, s in shares) == 1  # multinomial theorem
    assert len(shares) == math.comb(positions + len(raw) - 1, len(raw) - 1)  # stars and bars
    assert all(sum(counts) == positions for counts, _ in shares)


@pytest.mark.parametrize(
    "sites, kwargs, field, code",
    [
        ([(1, [("13C", HALF, 0.0107, 1.0), ("12C", 0, 0.5, 0.0)])], {}, "sites.0.isotopes", "invalid_value"),
        ([(1, [("2H", 1, 99.8, 1.0), ("1H", HALF, 0.2, 0.0)])], {}, "sites.0.isotopes.0.abundance", "invalid_value"),
        ([(1, [("2H", 1, 1.0, 1.0), ("X", Fraction(1, 3), 0.0, 0.0)])], {}, "sites.0.isotopes.1.spin", "invalid_value"),
        ([(1, [("2H", 1, 1.0, float("nan"))])], {}, "sites.0.isotopes.0.J_Hz", "invalid_value"),
        ([(1, [("", 1, 1.0, 1.0)])], {}, "sites.0.isotopes.0.label", "invalid_value"),
        ([(1, [("2H", 1, 1.0)])], {}, "sites.0.isotopes.0", "invalid_value"),
        ([(0, [("2H", 1, 1.0, 1.0)])], {}, "sites.0.positions", "invalid_value"),
        ([(1, [])], {}, "sites.0.isotopes", "invalid_value"),
        ([], {}, "sites", "invalid_value"),
        ([(1, [("2H", 1, 1.0, 1.0)])], {"min_share": 1.5}, "min_share", "invalid_value"),
        ([(1, [("2H", 1, 1.0, 1.0)])], {"groups": [(HALF, 0, 1.0)]}, "groups.0.count", "invalid_value"),
        (
            [(200, [(f"X{k}", HALF, Fraction(1, 4), 1.0) for k in range(4)])],
            {},
            "sites",
            "too_large",
        ),
    ],
)
def test_validation(sites, kwargs, field, code):
    with pytest.raises(InputError) as info:
        isotopologue_spectrum(sites, **kwargs)
    assert info.value.field == field
    assert info.value.code == code
    if code == "too_large":
        assert str(MAX_COMPOSITIONS) in info.value.message


def test_abundances_rescaled_when_nearly_one():
    result = isotopologue_spectrum([(1, [("11B", Fraction(3, 2), 0.8, 1.0), ("10B", 3, 0.1999, 0.3)])])
    assert sum(s.share for s in result.species) == 1
