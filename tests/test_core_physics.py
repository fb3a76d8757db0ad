"""Field ↔ frequency, ppm ↔ Hz, coupling scaling, energies and sensitivity through the API."""

import math

import pytest

from nmrcalc.api import handle


def ok(request):
    response = handle(request)
    assert response["ok"], response
    return response["result"]


def test_500_MHz_magnet():
    r = ok({"op": "frequency", "nucleus": "13C", "spectrometer": "500 MHz"})
    # common practice, no source: a "500 MHz" magnet is ≈ 11.74 T (≈ 117,400–117,500 G)
    assert 11.73 < r["field_T"] < 11.75 and 117_400 <= r["field_G"] <= 117_500
    # common practice, no source: 13C ≈ 125.7 MHz at 500 MHz
    assert abs(r["larmor_MHz"] - 125.7) < 0.1 and abs(r["reference_MHz"] - 125.7) < 0.1


@pytest.mark.parametrize("nuc,lo,hi", [("19F", 469.5, 470.8), ("31P", 202.4, 202.6), ("2H", 76.7, 76.8)])
def test_other_nuclides_at_500(nuc, lo, hi):
    # common practice, no source: at 500 MHz 19F ≈ 470 MHz, 31P ≈ 202.4–202.6 MHz, 2H ≈ 76.7–76.8 MHz
    r = ok({"op": "frequency", "nucleus": nuc, "spectrometer": "500 MHz"})
    assert lo <= r["reference_MHz"] <= hi


def test_xi_route_is_xi_times_proton_frequency():
    # IUPAC 2001 eq. 8: ν_X = Ξ_X/100 × ν_H(TMS)
    r = ok({"op": "frequency", "nucleus": "31P", "spectrometer": "400.13 MHz"})
    assert math.isclose(r["reference_MHz"], 40.480742 / 100 * 400.13, rel_tol=1e-12)
    # rounded to the precision of the tabulated γ (31P: 10.8394, 6 significant figures → ±9 ppm, step 1 ppm)
    assert abs(r["difference_ppm"] - (r["reference_MHz"] / r["larmor_MHz"] - 1) * 1e6) <= 0.5
    assert r["difference_decimals"] == 0 and 9 < r["difference_precision_ppm"] < 10


def test_field_units_agree():
    # SI: 1 T = 10^4 G, 1 kG = 0.1 T
    a = ok({"op": "frequency", "nucleus": "1H", "field": "117500 G"})
    b = ok({"op": "frequency", "nucleus": "1H", "field": "11.75 T"})
    c = ok({"op": "frequency", "nucleus": "1H", "field": "117.5 kG"})
    assert math.isclose(a["larmor_MHz"], b["larmor_MHz"]) and math.isclose(b["larmor_MHz"], c["larmor_MHz"])
    # Larmor: ν = γB/2π with γ_H = 26.7522128e7 (IUPAC 2001)
    assert math.isclose(b["larmor_MHz"], 26.7522128e7 * 11.75 / (2 * math.pi) / 1e6, rel_tol=1e-12)


def test_table_filters():
    r = ok({"op": "frequency", "spectrometer": "400 MHz", "spin_half_only": True, "min_abundance_percent": 5})
    symbols = {row["symbol"] for row in r["table"]}
    assert "1H" in symbols and "31P" in symbols and "13C" not in symbols and "2H" not in symbols
    r = ok({"op": "frequency", "spectrometer": "400 MHz", "min_MHz": 100, "max_MHz": 200})
    assert all(100 <= row["larmor_MHz"] <= 200 for row in r["table"]) and r["count"] > 0
    full = ok({"op": "frequency", "spectrometer": "400 MHz"})["table"]
    freqs = [row["larmor_MHz"] for row in full]
    assert freqs == sorted(freqs, reverse=True) and len(full) >= 110


def test_ppm_hz_round_trip():
    # IUPAC 2001 eq. 6: ν = ν_ref (1 + δ 10^-6); offset = ν_ref[MHz] × δ Hz
    r = ok({"op": "ppm_hz", "nucleus": "13C", "spectrometer": "500.13 MHz", "ppm": 77.16})
    ref = 25.145020 / 100 * 500.13
    assert math.isclose(r["offset_Hz"], ref * 77.16, rel_tol=1e-12)
    back = ok({"op": "ppm_hz", "nucleus": "13C", "spectrometer": "500.13 MHz", "Hz": r["offset_Hz"]})
    assert math.isclose(back["ppm"], 77.16, rel_tol=1e-12)
    c = ok({"op": "ppm_hz", "nucleus": "1H", "spectrometer": "400 MHz", "ppm": 7.26, "carrier_ppm": 4.7})
    assert math.isclose(c["offset_from_carrier_Hz"], 400 * (7.26 - 4.7), rel_tol=1e-12)


def test_scale_cd_to_ch():
    # common practice, no source: 1J(C,D) in CDCl3 ≈ 32 Hz, 1J(C,H) in CHCl3 ≈ 209 Hz; γH/γD ≈ 6.51
    r = handle({"op": "scale_coupling", "J": "32 Hz", "from": "2H", "to": "1H", "partner": "13C"})
    assert r["ok"] and abs(r["result"]["ratio"] - 6.51) < 0.01
    assert abs(r["result"]["J_Hz"] - 208) <= 3
    assert any("estimate" in w for w in r["warnings"])
    # reduced coupling K = 4π² J / (h γ_C γ_D) (IUPAC 2001): isotope independent
    k_h = ok({"op": "scale_coupling", "J": r["result"]["J_Hz"], "from": "1H", "to": "1H", "partner": "13C"})["reduced_coupling"]
    # J was scaled with Ξ(1H)/Ξ(2H) (same reference compound), which agrees with the γ ratio in K to < 1 ppm
    assert r["result"]["ratio_source"] == "xi"
    assert math.isclose(r["result"]["reduced_coupling"], k_h, rel_tol=1e-6)
    assert 6e20 < k_h < 8e20  # from memory: 1K(C,H) ≈ 7e20 N A^-2 m^-3


def test_sign_flips_for_negative_gamma():
    # IUPAC 2001: γ(15N) < 0 < γ(14N), so J(15N,H) = J(14N,H) × γ15/γ14 changes sign
    r = handle({"op": "scale_coupling", "J": "52 Hz", "from": "14N", "to": "15N"})
    assert r["ok"] and r["result"]["J_Hz"] < 0 and r["result"]["sign_flipped"]
    # both on CH3NO2, so the magnitude is Ξ(15N)/Ξ(14N) (IUPAC 2001: 10.136767 / 7.226317), the sign γ's
    assert math.isclose(r["result"]["J_Hz"], -52 * 10.136767 / 7.226317, rel_tol=1e-12)
    assert r["result"]["ratio_source"] == "xi"
    assert math.isclose(r["result"]["J_Hz"], 52 * -2.71261804 / 1.9337792, rel_tol=5e-6)  # γ ratio agrees


@pytest.mark.parametrize("a,b", [("10B", "11B"), ("117Sn", "119Sn"), ("107Ag", "109Ag"), ("6Li", "7Li")])
def test_isotope_pairs_scale(a, b):
    # J′ = J γ′/γ; round trip must be exact (common practice, no source)
    there = ok({"op": "scale_coupling", "J": 10, "from": a, "to": b})["J_Hz"]
    assert math.isclose(ok({"op": "scale_coupling", "J": there, "from": b, "to": a})["J_Hz"], 10, rel_tol=1e-12)


def test_cross_element_refused():
    r = handle({"op": "scale_coupling", "J": "10 Hz", "from": "13C", "to": "15N"})
    assert not r["ok"] and r["error"]["code"] == "not_isotopologue" and r["error"]["field"] == "to"


def test_energies():
    # common practice, no source: ΔE at 500 MHz ≈ 0.0477 cal/mol
    r = ok({"op": "energy", "nucleus": "1H", "spectrometer": "500 MHz", "temperature": "298 K"})
    assert abs(r["cal_per_mol"] - 0.0477) < 0.0002
    # Boltzmann, spin 1/2: excess = tanh(hν/2kT) ≈ hν/2kT ≈ 4.03e-5 at 500 MHz, 298 K (common practice, no source)
    assert abs(r["population_excess"] - 4.03e-5) < 0.02e-5
    assert math.isclose(sum(p["fraction"] for p in r["populations"]), 1.0)
    # common practice, no source: a 254 nm photon ≈ 113 kcal/mol; 1700 cm-1 ≈ 4.86 kcal/mol
    assert abs(ok({"op": "energy", "wavelength": "254 nm"})["kcal_per_mol"] - 113) < 0.6
    assert abs(ok({"op": "energy", "wavenumber": "1700 cm-1"})["kcal_per_mol"] - 4.86) < 0.01


def test_populations_spin_one_against_boltzmann():
    # Boltzmann law by hand: E_m = -m γ ħ B, p_m ∝ exp(-E_m/kT)  (scipy.constants for ħ and k)
    sc = pytest.importorskip("scipy.constants")
    r = ok({"op": "energy", "nucleus": "2H", "field": "14.1 T", "temperature": "4 K"})
    g = 4.10662791e7
    w = {m: math.exp(m * g * sc.hbar * 14.1 / (sc.k * 4)) for m in (1, 0, -1)}
    z = sum(w.values())
    got = {p["m"]: p["fraction"] for p in r["populations"]}
    for m in (1, 0, -1):
        assert math.isclose(got[str(m)], w[m] / z, rel_tol=1e-9)
    assert math.isclose(r["population_excess"], (w[1] - w[0]) / z, rel_tol=1e-9)


def test_sensitivity():
    # IUPAC 2001 (from memory): D_C(15N) ≈ 0.0225; equal S/N needs 1/D² ≈ 2000× the time
    r = ok({"op": "sensitivity", "nucleus": "15N", "relative_to": "13C"})
    assert abs(r["receptivity"] - 0.0225) < 0.0005 and 1900 < r["time_factor"] < 2100
    # receptivity scales linearly with abundance (definition of D)
    e = ok({"op": "sensitivity", "nucleus": "15N", "relative_to": "13C", "enrichment_percent": 98})
    assert math.isclose(e["receptivity"] / r["receptivity"], 98 / 0.368, rel_tol=1e-12)
