"""The multiplet op: nuclide, element and bare-spin partners, mixtures, errors, spectrum."""

import math

import pytest

from nmrcalc.api import handle


def run(request):
    r = handle({"op": "multiplet", **request})
    assert r["ok"], r
    return r


def test_cd3_carbon_septet_with_ppm():
    # common practice, no source: 13C of a CD3 group is a 1:3:6:7:6:3:1 septet, J(C,D) ≈ 19–21 Hz
    r = run({"observe": "13C", "spectrometer": "500 MHz", "center": "29.84 ppm",
             "groups": [{"partner": "2H", "count": 3, "J": "19.3 Hz"}]})["result"]
    assert r["ratio"] == "1:3:6:7:6:3:1" and "septet" in r["label"]
    # ppm = centre + Hz / ν_ref(13C), ν_ref = Ξ/100 × 500 MHz (IUPAC 2001)
    ref = 25.145020 / 100 * 500
    assert all(math.isclose(l["ppm"], 29.84 + l["Hz"] / ref) for l in r["lines"])
    assert math.isclose(sum(l["intensity"] for l in r["lines"]), 1.0)


def test_cdcl3_one_to_one_to_one():
    # common practice, no source: 13C of CDCl3 is a 1:1:1 triplet at ≈ 77 ppm, J(C,D) ≈ 32 Hz
    r = run({"observe": "13C", "spectrometer": "400 MHz", "center": 77.16,
             "groups": [{"partner": "D", "count": 1, "J": 32}]})["result"]
    assert r["ratio"] == "1:1:1" and r["label"] == "1:1:1 triplet"


def test_partial_deuteration_shares():
    # binomial distribution (math.comb): CD3 at 99.8 % D → CD3 : CD2H : CDH2 : CH3
    r = run({"observe": "13C", "groups": [{"partner": "2H", "count": 3, "J": "19.3 Hz"}],
             "abundance": {"2H": 99.8}, "min_share": 0})["result"]
    shares = {iso["label"]: iso["share"] for iso in r["isotopologues"]}
    p = 0.998
    assert math.isclose(shares["2H3"], p ** 3, rel_tol=1e-9)
    assert math.isclose(shares["2H2 1H1"], 3 * p ** 2 * (1 - p), rel_tol=1e-6)
    assert math.isclose(shares["2H1 1H2"], 3 * p * (1 - p) ** 2, rel_tol=1e-6)
    assert math.isclose(shares["1H3"], (1 - p) ** 3, rel_tol=1e-6)


def test_residual_chd2_quintet_with_scaled_J():
    # from memory: residual CHD2 of acetone-d6 in 1H is a 1:2:3:2:1 quintet, J(H,D) ≈ 2.2 Hz;
    # J(H,D) = J(H,H) × γD/γH (IUPAC 2001 γ values)
    scaled = handle({"op": "scale_coupling", "J": "14.3 Hz", "from": "1H", "to": "2H"})["result"]["J_Hz"]
    assert abs(scaled - 2.2) < 0.1
    r = run({"observe": "1H", "groups": [{"partner": "2H", "count": 2, "J": scaled}]})["result"]
    assert r["ratio"] == "1:2:3:2:1"


def test_borohydride_both_isotopes():
    # from memory: 1H of BH4- is an 11B (I = 3/2, ≈ 80 %) 1:1:1:1 quartet, J ≈ 81 Hz, plus a 10B
    # (I = 3, ≈ 20 %) septet with J scaled by γ(10B)/γ(11B) ≈ 0.335
    r = run({"observe": "1H", "groups": [{"partner": "B", "count": 1, "J": "81 Hz", "J_isotope": "11B"}]})
    iso = {i["label"]: i for i in r["result"]["isotopologues"]}
    assert iso["11B1"]["ratio"] == "1:1:1:1" and abs(iso["11B1"]["share"] - 0.801) < 1e-9
    assert iso["10B1"]["ratio"] == "1:1:1:1:1:1:1" and abs(iso["10B1"]["share"] - 0.199) < 1e-9
    spacing = iso["10B1"]["lines"][1]["Hz"] - iso["10B1"]["lines"][0]["Hz"]
    assert abs(spacing / 81 - 0.335) < 0.001
    assert any("quadrupolar" in w for w in r["warnings"])


def test_platinum_satellites():
    # from memory: 195Pt (I = 1/2, ≈ 33.8 %): each satellite ≈ 16.9 % of the total signal
    r = run({"observe": "1H", "groups": [{"partner": "Pt", "count": 1, "J": "1200 Hz"}]})["result"]
    lines = {round(l["Hz"]): l["intensity"] for l in r["lines"]}
    assert abs(lines[-600] - 0.169) < 0.001 and abs(lines[600] - 0.169) < 0.001


def test_chcl3_carbon_satellites():
    # common practice, no source: each 13C satellite of CHCl3 in 1H is ≈ 0.55 % of the central line
    r = run({"observe": "1H", "groups": [{"partner": "C", "count": 1, "J": "209 Hz"}]})["result"]
    lines = sorted(r["lines"], key=lambda l: l["Hz"])
    centre = max(l["intensity"] for l in lines)
    assert abs(lines[0]["intensity"] / centre - 0.0054) < 0.0003


def test_rhodium_single_isotope_gives_ratio():
    # IUPAC 2001: 103Rh is 100 % abundant, I = 1/2 → a plain doublet
    r = run({"observe": "1H", "groups": [{"partner": "Rh", "count": 1, "J": "15 Hz"}]})["result"]
    assert r["ratio"] == "1:1"


def test_quadrupolar_default_collapsed_and_choice():
    # common practice, no source: 14N splittings are usually collapsed by relaxation
    r = run({"observe": "1H", "groups": [{"partner": "14N", "count": 1, "J": "52 Hz"}]})
    assert r["result"]["ratio"] == "1" and any("collapsed" in w for w in r["warnings"])
    r = run({"observe": "1H", "groups": [{"partner": "14N", "count": 1, "J": "52 Hz", "quadrupolar": "resolved"}]})
    assert r["result"]["ratio"] == "1:1:1"


def test_bare_spin_and_tree():
    # trinomial coefficients (OEIS A027907): 2 × I=1 → 1:2:3:2:1
    r = run({"observe": "1H", "groups": [{"spin": "1", "count": 2, "J": "7 Hz"}, {"spin": "1/2", "count": 1, "J": "12 Hz"}]})["result"]
    assert r["tree"][0] == [0.0] and len(r["tree"]) == 3
    assert len(r["tree"][1]) == 2 and len(r["tree"][2]) == 10  # d (12 Hz) then quintets (7 Hz)


def test_spectrum_traces_sum_to_total():
    r = run({"observe": "1H", "spectrometer": "400 MHz", "center": 2.0, "linewidth": "1 Hz", "spectrum": True,
             "groups": [{"partner": "Pt", "count": 1, "J": "80 Hz"}]})["result"]["spectrum"]
    assert len(r["x_ppm"]) == len(r["y"]) and r["x_ppm"] == sorted(r["x_ppm"])
    assert all(len(t["y"]) == len(r["y"]) for t in r["traces"])  # one x axis for every trace
    total = [sum(t["y"][i] for t in r["traces"]) for i in range(len(r["y"]))]
    assert max(abs(a - b) for a, b in zip(total, r["y"])) < 1e-12 * max(r["y"]) + 1e-15


@pytest.mark.parametrize("group,field", [
    ({"spin": "1/3", "count": 1, "J": 7}, "groups.0.spin"),
    ({"partner": "1H", "count": 0, "J": 7}, "groups.0.count"),
    ({"partner": "1H", "count": 1, "J": "seven"}, "groups.0.J"),
    ({"partner": "12C", "count": 1, "J": 7}, "groups.0.partner"),
    ({"partner": "Xx", "count": 1, "J": 7}, "groups.0.partner"),
])
def test_errors_name_the_field(group, field):
    r = handle({"op": "multiplet", "observe": "1H", "groups": [group]})
    assert not r["ok"] and r["error"]["field"] == field


def test_abundance_errors():
    r = handle({"op": "multiplet", "observe": "1H", "groups": [{"partner": "2H", "count": 1, "J": 2}], "abundance": {"2H": -1}})
    assert r["error"]["field"] == "abundance.2H"
    r = handle({"op": "multiplet", "observe": "1H", "groups": [{"partner": "2H", "count": 1, "J": 2}],
                "abundance": {"2H": 70, "1H": 40}})
    assert not r["ok"] and r["error"]["field"].startswith("abundance.")


def test_size_limit_is_an_error_not_a_hang():
    r = handle({"op": "multiplet", "observe": "1H", "groups": [{"spin": "9/2", "count": 64, "J": 1.0 + k / 7} for k in range(10)]})
    assert not r["ok"] and r["error"]["code"] == "too_large"


def test_T1_partial_collapse_in_the_spectrum():
    # 14N (I = 1) partner with T1: the spectrum follows the exchange line shape (Pople 1958), area kept
    from nmrcalc.physics.quadrupolar_relaxation import collapse_shape
    base = {"observe": "1H", "spectrometer": "400 MHz", "center": "7 ppm", "spectrum": True, "linewidth": "1 Hz"}
    r = run({**base, "groups": [{"partner": "14N", "count": 1, "J": "52 Hz", "T1": "2 ms"}]})
    res = r["result"]
    assert res["ratio"] == "1:1:1" and res["partial_collapse"]["T1_s"] == 0.002
    s = res["spectrum"]
    assert max(abs(a - b) for a, b in zip(s["y"], collapse_shape(s["x_Hz"], 52.0, 1, 0.002, 1.0))) < 1e-12
    long_T1 = run({**base, "groups": [{"partner": "14N", "count": 1, "J": "52 Hz", "T1": "10000 s"}]})["result"]
    resolved = run({**base, "groups": [{"partner": "14N", "count": 1, "J": "52 Hz", "quadrupolar": "resolved"}]})["result"]
    assert max(abs(a - b) for a, b in zip(long_T1["spectrum"]["y"], resolved["spectrum"]["y"])) < 1e-3 * max(resolved["spectrum"]["y"])


@pytest.mark.parametrize("group,field", [
    ({"partner": "1H", "count": 1, "J": 7, "T1": "2 ms"}, "groups.0.T1"),
    ({"partner": "14N", "count": 2, "J": 52, "T1": "2 ms"}, "groups.0.count"),
    ({"partner": "14N", "count": 1, "J": 52, "T1": "soon"}, "groups.0.T1"),
    ({"partner": "14N", "count": 1, "J": 52, "T1": "2 ms", "quadrupolar": "resolved"}, "groups.0.quadrupolar"),
])
def test_T1_errors(group, field):
    r = handle({"op": "multiplet", "observe": "1H", "spectrum": True, "groups": [group]})
    assert not r["ok"] and r["error"]["field"] == field
