"""Observed-isotope equivalence, per-site enrichment, min_share in percent, isotope shifts (issue 12 §1–3)."""

import math
import re
from fractions import Fraction

import pytest

from nmrcalc.api import handle
from nmrcalc.physics.spin_system import Site, simulate

HALF = Fraction(1, 2)


def run(request):
    r = handle({"op": "multiplet", **request})
    assert r["ok"], r
    return r


def by_label(result):
    return {i["label"]: i for i in result["isotopologues"]}


def methyl(abundance_D, **extra):
    # the observed 1H of a methyl and its two other positions (element H: equivalent by default)
    return run({"observe": "1H", "groups": [{"partner": "H", "count": 2, "J": "1.9 Hz", **extra}],
                "abundance": {"2H": abundance_D}, "min_share": 0})


def test_equivalent_methyl_isotopologues():
    # First-order rule: equivalent nuclei do not split each other (H. Günther, NMR Spectroscopy,
    # 3rd ed., Wiley-VCH 2013, chapter on first-order spectra); each 2H (I = 1) splits 1:1:1.
    r = methyl(50)
    iso = by_label(r["result"])
    assert iso["1H2"]["ratio"] == "1" and iso["1H2"]["multiplet"] == "s"                      # CH3
    assert iso["2H1 1H1"]["ratio"] == "1:1:1" and iso["2H1 1H1"]["multiplet"] == "1:1:1 triplet"  # CH2D
    assert iso["2H2"]["ratio"] == "1:2:3:2:1"                                                   # CHD2
    # J given to 2H (the only other magnetic isotope), so the 1:1:1 spacing is J itself
    lines = iso["2H1 1H1"]["lines"]
    assert math.isclose(lines[1]["Hz"] - lines[0]["Hz"], 1.9)
    # binomial shares of the two other positions (math.comb): 1/4, 1/2, 1/4
    assert math.isclose(iso["2H1 1H1"]["share"], 0.5) and math.isclose(iso["2H2"]["share"], 0.25)
    assert r["result"]["rules"] and "do not split each other" in r["result"]["rules"][0]


def test_equivalence_switch_off_gives_the_old_coupling():
    # equivalent=false: the other 1H couple with J(H,H) = J(H,D) × γH/γD (J ∝ γ, IUPAC 2001 γ values)
    r = methyl(50, equivalent=False, J_isotope="2H")
    ch3 = by_label(r["result"])["1H2"]
    assert ch3["ratio"] == "1:2:1"
    gamma_ratio = 26.7522128 / 4.10662791  # IUPAC 2001 γ/10^7 of 1H and 2H
    assert math.isclose(ch3["lines"][1]["Hz"] - ch3["lines"][0]["Hz"], 1.9 * gamma_ratio, rel_tol=1e-6)
    assert r["result"]["rules"] == []


def test_explicit_equivalent_nuclide_partner():
    r = run({"observe": "1H", "groups": [{"partner": "1H", "count": 2, "J": "7 Hz", "equivalent": True}]})
    assert r["result"]["ratio"] == "1" and r["result"]["rules"]
    # a nuclide partner is a neighbour, not an equivalent position, unless said so (common practice, no source)
    r = run({"observe": "1H", "groups": [{"partner": "1H", "count": 2, "J": "7 Hz"}]})
    assert r["result"]["ratio"] == "1:2:1" and r["result"]["rules"] == []


def test_equivalence_errors():
    r = handle({"op": "multiplet", "observe": "13C",
                "groups": [{"partner": "H", "count": 2, "J": 2, "equivalent": True}]})
    assert r["error"]["field"] == "groups.0.equivalent"
    r = handle({"op": "multiplet", "observe": "1H",
                "groups": [{"partner": "H", "count": 2, "J": 2, "J_isotope": "1H"}]})
    assert r["error"]["field"] == "groups.0.J_isotope"


@pytest.mark.parametrize("n_D", [1, 2])
def test_round_trip_through_exact_engine(n_D):
    # CH(3-n)Dn observed in 1H: the exact Hamiltonian (every spin expanded, J(H,H) = 12.4 Hz
    # between the equivalent protons, 2H heteronuclear) must give the same lines as the
    # first-order equivalence rule (equivalent nuclei do not split; Günther 2013).
    J_HD, J_HH = 1.9, 12.4
    n_H = 3 - n_D
    sites = [Site("1H", HALF, 0.0) for _ in range(n_H)] + [Site("2H", Fraction(1), 0.0) for _ in range(n_D)]
    couplings = [(i, j, J_HH) for i in range(n_H) for j in range(i + 1, n_H)]
    couplings += [(i, n_H + k, J_HD) for i in range(n_H) for k in range(n_D)]
    exact = simulate(sites, couplings, "1H", factor_equivalence=False, use_numpy=False)
    total = sum(y for _, y in exact)
    iso = by_label(methyl(50)["result"])["2H1 1H1" if n_D == 1 else "2H2"]
    assert len(exact) == len(iso["lines"])
    for (x, y), line in zip(exact, iso["lines"]):
        assert math.isclose(x, line["Hz"], abs_tol=1e-6)
        assert math.isclose(y / total, line["intensity"], rel_tol=1e-6)


def test_per_site_enrichment():
    # A CD3 site at 99.8 % D beside a natural-abundance CH2 (13C observed); shares are binomial per site
    # (math.comb), the two sites independent; natural 2H = 0.0115 % (IUPAC 2001).
    r = run({"observe": "13C", "min_share": 0, "groups": [
        {"partner": "H", "count": 3, "J": "19.3 Hz", "J_isotope": "2H", "abundance": {"2H": 99.8}},
        {"partner": "H", "count": 2, "J": "4 Hz", "J_isotope": "1H"}]})["result"]
    shares = {i["label"]: i["share"] for i in r["isotopologues"]}
    p, q = 0.998, 0.000115
    assert math.isclose(shares["2H3, 1H2"], p ** 3 * (1 - q) ** 2, rel_tol=1e-4)
    assert math.isclose(shares["2H2 1H1, 1H2"], 3 * p ** 2 * (1 - p) * (1 - q) ** 2, rel_tol=1e-4)
    assert math.isclose(shares["2H3, 1H1 2H1"], p ** 3 * 2 * q * (1 - q), rel_tol=1e-4)


def test_group_abundance_overrides_request_default():
    req = {"observe": "13C", "min_share": 0, "abundance": {"2H": 50},
           "groups": [{"partner": "H", "count": 1, "J": "20 Hz", "J_isotope": "2H", "abundance": {"2H": 90}},
                      {"partner": "H", "count": 1, "J": "3 Hz", "J_isotope": "2H"}]}
    shares = {i["label"]: i["share"] for i in run(req)["result"]["isotopologues"]}
    assert math.isclose(shares["2H1, 2H1"], 0.9 * 0.5) and math.isclose(shares["1H1, 2H1"], 0.1 * 0.5)
    bad = handle({"op": "multiplet", **req, "groups": [{**req["groups"][0], "abundance": {"2H": 101}}]})
    assert bad["error"]["field"] == "groups.0.abundance.2H"


def test_min_share_percent_means_percent():
    # 2.0 % CH2D-type species at 1 % D over 2 positions: 2 × 0.01 × 0.99 = 1.98 % (binomial)
    req = {"observe": "1H", "groups": [{"partner": "H", "count": 2, "J": "2 Hz"}], "abundance": {"2H": 1}}
    kept = run({**req, "min_share": "0.1 %"})["result"]
    assert "2H1 1H1" in by_label(kept) and "2H2" not in by_label(kept)
    assert math.isclose(kept["dropped_share"], 0.0001)
    kept = run({**req, "min_share": "5 %"})["result"]
    assert list(by_label(kept)) == ["1H2"]
    assert not handle({"op": "multiplet", **req, "min_share": "120 %"})["ok"]


def test_isotope_shift_moves_each_isotopologue():
    # 13C of a CH3/CD3 mixture, one-bond 2H isotope shift −0.25 ppm per D (value given by the user);
    # centres add per atom (additivity: P. E. Hansen, Prog. NMR Spectrosc. 20 (1988) 207).
    r = run({"observe": "13C", "spectrometer": "400 MHz", "center": "30 ppm", "spectrum": True, "min_share": 0,
             "groups": [{"partner": "H", "count": 3, "J": "19.3 Hz", "J_isotope": "2H",
                         "abundance": {"2H": 50}, "isotope_shift": {"2H": "-0.25 ppm"}}]})["result"]
    ref_MHz = 25.145020 / 100 * 400  # Ξ(13C), IUPAC 2001
    for iso in r["isotopologues"]:
        found = re.search(r"2H(\d)", iso["label"])
        n_D = int(found.group(1)) if found else 0
        assert math.isclose(iso["center_Hz"], -0.25 * ref_MHz * n_D, rel_tol=1e-9)
        assert math.isclose(iso["center_ppm"], 30 - 0.25 * n_D, rel_tol=1e-9)
        mean = sum(l["Hz"] * l["intensity"] for l in iso["lines"])
        assert math.isclose(mean, iso["center_Hz"], abs_tol=1e-9)  # lines are offsets from the common centre
    assert len(r["spectrum"]["traces"]) == 4
    peaks = [max(range(len(t["y"])), key=t["y"].__getitem__) for t in r["spectrum"]["traces"]]
    assert len(set(peaks)) == 4  # four separate multiplets


def test_isotope_shift_errors():
    base = {"observe": "13C", "groups": [{"partner": "H", "count": 3, "J": 19, "J_isotope": "2H",
                                          "isotope_shift": {"2H": "-0.25 ppm"}}]}
    assert handle({"op": "multiplet", **base})["error"]["field"] == "groups.0.isotope_shift.2H"  # ppm needs magnet
    assert run({**base, "groups": [{**base["groups"][0], "isotope_shift": {"2H": "-25 Hz"}}]})
    wrong = {**base["groups"][0], "isotope_shift": {"13C": "-25 Hz"}}
    assert handle({"op": "multiplet", **base, "groups": [wrong]})["error"]["field"] == "groups.0.isotope_shift.13C"


def test_typical_isotope_shifts_offered_never_applied():
    r = run({"observe": "13C", "spectrometer": "400 MHz", "center": "30 ppm", "min_share": 0,
             "groups": [{"partner": "H", "count": 3, "J": "19.3 Hz", "J_isotope": "2H", "abundance": {"2H": 60}}]})
    offers = r["result"]["isotope_shift_suggestions"]
    assert {o["bonds"] for o in offers} == {1, 2} and all("from memory" in o["source"] for o in offers)
    assert all(i["center_Hz"] == 0 for i in r["result"]["isotopologues"])  # not applied
    given = run({"observe": "13C", "spectrometer": "400 MHz", "center": "30 ppm",
                 "groups": [{"partner": "H", "count": 3, "J": "19.3 Hz", "J_isotope": "2H", "abundance": {"2H": 60},
                             "isotope_shift": {"2H": "-0.3 ppm"}}]})
    assert given["result"]["isotope_shift_suggestions"] == []
    atoms = {i["label"]: i["atoms"] for i in given["result"]["isotopologues"]}
    assert atoms["2H2 1H1"] == [{"2H": 2, "1H": 1}]
