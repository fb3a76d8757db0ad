"""Nuclide data that a second source confirms: every Ξ beside a separately written value,
same-element Ξ ratios beside γ ratios, Ξ beside an independent moment compilation
(mendeleev), and the corrections made to the IUPAC 2001 table."""

import math
from itertools import combinations

import pytest

from nmrcalc.api import handle
from nmrcalc.nuclides import MAGNETIC, receptivity
from nmrcalc.physics.coupling import _same_compound

scipy_constants = pytest.importorskip("scipy.constants")
mendeleev_fetch = pytest.importorskip("mendeleev.fetch")

# Ξ / % written out separately from the table under test (from memory, IUPAC 2001 Tables
# 2-3; 171Yb from the 171Yb NMR literature, (C5Me5)2Yb(THF)2): a digit mistyped in either
# place shows up here.
XI_FROM_MEMORY = {
    "1H": 100.000000, "2H": 15.350609, "3H": 106.663974, "3He": 76.179437, "6Li": 14.716086,
    "7Li": 38.863797, "9Be": 14.051813, "10B": 10.743658, "11B": 32.083974, "13C": 25.145020,
    "14N": 7.226317, "15N": 10.136767, "17O": 13.556457, "19F": 94.094011, "21Ne": 7.894296,
    "23Na": 26.451900, "25Mg": 6.121635, "27Al": 26.056859, "29Si": 19.867187, "31P": 40.480742,
    "33S": 7.676000, "35Cl": 9.797909, "37Cl": 8.155725, "39K": 4.666373, "40K": 5.802018,
    "41K": 2.561305, "43Ca": 6.730029, "45Sc": 24.291747, "47Ti": 5.637534, "49Ti": 5.639037,
    "50V": 9.970309, "51V": 26.302948, "53Cr": 5.652496, "55Mn": 24.789218, "57Fe": 3.237778,
    "59Co": 23.727074, "61Ni": 8.936051, "63Cu": 26.515473, "65Cu": 28.403693, "67Zn": 6.256803,
    "69Ga": 24.001354, "71Ga": 30.496704, "73Ge": 3.488315, "75As": 17.122614, "77Se": 19.071513,
    "79Br": 25.053980, "81Br": 27.006518, "83Kr": 3.847600, "85Rb": 9.654943, "87Rb": 32.720454,
    "87Sr": 4.333822, "89Y": 4.900198, "91Zr": 9.296298, "93Nb": 24.476170, "95Mo": 6.516926,
    "97Mo": 6.653695, "99Tc": 22.508326, "99Ru": 4.605151, "101Ru": 5.161369, "103Rh": 3.186447,
    "105Pd": 4.576100, "107Ag": 4.047819, "109Ag": 4.653533, "111Cd": 21.215480, "113Cd": 22.193175,
    "113In": 21.865755, "115In": 21.912629, "115Sn": 32.718749, "117Sn": 35.632259, "119Sn": 37.290632,
    "121Sb": 23.930577, "123Sb": 12.959217, "123Te": 26.169742, "125Te": 31.549769, "127I": 20.007486,
    "129Xe": 27.810186, "131Xe": 8.243921, "133Cs": 13.116142, "135Ba": 9.934457, "137Ba": 11.112928,
    "138La": 13.194300, "139La": 14.125641, "171Yb": 17.499306, "181Ta": 11.989600, "183W": 4.166387,
    "185Re": 22.524600, "187Re": 22.751600, "187Os": 2.282331, "189Os": 7.765400, "195Pt": 21.496784,
    "199Hg": 17.910822, "201Hg": 6.611583, "203Tl": 57.123200, "205Tl": 57.683838, "207Pb": 20.920599,
    "209Bi": 16.069288,
}


def test_every_xi_beside_a_separately_written_value():
    in_table = {s: n.xi_percent for s, n in MAGNETIC.items() if n.xi_percent is not None}
    assert set(in_table) == set(XI_FROM_MEMORY)
    for sym, xi in in_table.items():
        assert xi == XI_FROM_MEMORY[sym], sym


def _pairs():
    """Same-element pairs whose Ξ share a reference compound (2H/3H isotopologues of TMS count)."""
    withxi = [n for n in MAGNETIC.values() if n.xi_percent is not None]
    return [(a, b) for a, b in combinations(withxi, 2)
            if a.element == b.element and _same_compound(a.reference, b.reference)]


# Ξ(b)/Ξ(a) is the ratio of two resonance frequencies in one compound, so it equals |γ_b/γ_a|
# up to the isotope dependence of shielding (≲ 1 ppm, common practice, no source).  Tabulated
# γ come from moments measured by different methods (atomic-beam values carry hyperfine
# anomalies of up to ~1e-3 for heavy atoms), and for H, Li, B, N both columns come from NMR.
# Tolerances: 5 ppm for Z ≤ 10; 5e-4 elsewhere (largest seen: 117Sn/119Sn 3.4e-4, 115Sn 3.9e-4).
# Both catch any typo in the first four significant figures of Ξ or γ (and 65Cu's 0.18 %).
def _pair_tolerance(z: int) -> float:
    return 5e-6 if z <= 10 else 5e-4


def test_same_element_xi_ratio_matches_gamma_ratio():
    pairs = _pairs()
    assert len(pairs) >= 30
    for a, b in pairs:
        xi_ratio = b.xi_percent / a.xi_percent
        gamma_ratio = abs(b.gamma_rad_per_s_per_T / a.gamma_rad_per_s_per_T)
        assert abs(xi_ratio / gamma_ratio - 1) <= _pair_tolerance(a.Z), (a.symbol, b.symbol)


@pytest.fixture(scope="module")
def mendeleev_gamma():
    iso = mendeleev_fetch.fetch_table("isotopes")
    symbols = mendeleev_fetch.fetch_table("elements")[["atomic_number", "symbol"]]
    mu_n_over_hbar = scipy_constants.physical_constants["nuclear magneton"][0] / scipy_constants.hbar
    return {f"{int(r.mass_number)}{r.symbol}": r.g_factor * mu_n_over_hbar
            for r in iso.merge(symbols, on="atomic_number").itertuples() if r.g_factor == r.g_factor}


def test_same_element_xi_ratio_matches_mendeleev_moments(mendeleev_gamma):
    # mendeleev (PyPI) moments, an independent compilation: the same ratio within 1e-3
    # (largest seen: 99Ru/101Ru 5.9e-4, whose moments are known to 3-4 figures)
    for a, b in _pairs():
        if a.symbol in mendeleev_gamma and b.symbol in mendeleev_gamma:
            ratio = abs(mendeleev_gamma[b.symbol] / mendeleev_gamma[a.symbol])
            assert abs(b.xi_percent / a.xi_percent / ratio - 1) <= 1e-3, (a.symbol, b.symbol)


def test_every_xi_against_mendeleev_gamma(mendeleev_gamma):
    # Ξ/100 = (γ_X/γ_H)(1 + σ_H(TMS) − σ_X(ref)) (IUPAC 2001, eq. 8 with shielding): with
    # mendeleev's γ, the implied shielding of X must lie below the Lamb-type atomic diamagnetic
    # bound 100 + 250·Z ppm and above −2000 ppm, or −10 000 ppm for d-block metals, whose
    # references are strongly deshielded by the paramagnetic term (59Co, 99/101Ru, 103Rh:
    # −3200 to −8000 ppm; their shift ranges span ~10⁴ ppm, common practice, no source).
    g_h = mendeleev_gamma["1H"]
    d_block = set(range(21, 31)) | set(range(39, 49)) | set(range(72, 81))
    for nuc in MAGNETIC.values():
        if nuc.xi_percent is None or nuc.symbol not in mendeleev_gamma:
            continue
        shielding_ppm = (1 - nuc.xi_percent / 100 / abs(mendeleev_gamma[nuc.symbol] / g_h)) * 1e6
        lowest = -10000 if nuc.Z in d_block else -2000
        assert lowest <= shielding_ppm <= 100 + 250 * nuc.Z, (nuc.symbol, shielding_ppm)


def test_nitrogen_abundances_and_receptivity_as_iupac_2001():
    # IUPAC 2001 Table 1: 14N 99.632 %, 15N 0.368 %; D_H(15N) = 3.84e-6
    assert MAGNETIC["14N"].abundance_percent == 99.632 and MAGNETIC["15N"].abundance_percent == 0.368
    assert math.isclose(receptivity(MAGNETIC["15N"], "1H"), 3.84e-6, rel_tol=2e-3)


def test_copper_65_gamma_from_the_xi_ratio(mendeleev_gamma):
    cu63, cu65 = MAGNETIC["63Cu"], MAGNETIC["65Cu"]
    # same compound [Cu(CH3CN)4]ClO4 (IUPAC 2001): γ65/γ63 = Ξ65/Ξ63 to the 6 figures of γ65
    assert math.isclose(cu65.gamma_rad_per_s_per_T / cu63.gamma_rad_per_s_per_T,
                        cu65.xi_percent / cu63.xi_percent, rel_tol=2e-6)
    # mendeleev's 65/63 moment ratio agrees within 1e-5
    assert math.isclose(mendeleev_gamma["65Cu"] / mendeleev_gamma["63Cu"], cu65.xi_percent / cu63.xi_percent,
                        rel_tol=1e-5)


def test_lead_207_gamma_kept_from_mendeleev(mendeleev_gamma):
    pb, hg, tl = MAGNETIC["207Pb"], MAGNETIC["199Hg"], MAGNETIC["205Tl"]
    assert math.isclose(pb.gamma_rad_per_s_per_T, mendeleev_gamma["207Pb"], rel_tol=1e-4)
    g_h = MAGNETIC["1H"].gamma_rad_per_s_per_T

    def shielding(n):
        return (1 - n.xi_percent / 100 / abs(n.gamma_rad_per_s_per_T / g_h)) * 1e6
    # the IUPAC 2001 value 5.58046 would give −2900 ppm (bare nucleus below 0 ppm); kept value:
    # a shielding of the same sign and size as its neighbours Hg and Tl in the same table
    assert 5000 < shielding(pb) < 20000 and shielding(hg) > 5000 and shielding(tl) > 0
    assert (1 - MAGNETIC["207Pb"].xi_percent / 100 / (5.58046e7 / g_h)) * 1e6 < 0


def test_ytterbium_171_has_a_reference():
    r = handle({"op": "frequency", "nucleus": "171Yb", "spectrometer": "500 MHz"})
    assert r["ok"] and math.isclose(r["result"]["reference_MHz"], 17.499306 / 100 * 500, rel_tol=1e-12)


@pytest.mark.parametrize("a,b", [("63Cu", "65Cu"), ("117Sn", "119Sn"), ("10B", "11B"), ("35Cl", "37Cl"),
                                 ("14N", "15N"), ("1H", "2H")])
def test_coupling_scaling_uses_the_xi_ratio_on_a_shared_reference(a, b):
    r = handle({"op": "scale_coupling", "J": "10", "from": a, "to": b})["result"]
    na, nb = MAGNETIC[a], MAGNETIC[b]
    sign = math.copysign(1, na.gamma_rad_per_s_per_T * nb.gamma_rad_per_s_per_T)
    # IUPAC 2001 eq. 8: Ξ is a ratio of observed frequencies, so J′/J = Ξ′/Ξ (with γ's sign)
    assert r["ratio_source"] == "xi" and "Ξ" in r["ratio_note"]
    assert math.isclose(r["J_Hz"], 10 * sign * nb.xi_percent / na.xi_percent, rel_tol=1e-12)


def test_coupling_scaling_uses_gamma_without_a_shared_reference():
    # 191Ir/193Ir have no Ξ: J′/J = γ′/γ (IUPAC 2001 γ values)
    r = handle({"op": "scale_coupling", "J": "10", "from": "191Ir", "to": "193Ir"})["result"]
    assert r["ratio_source"] == "gamma" and math.isclose(r["ratio"], 0.5227 / 0.4812, rel_tol=1e-12)
