"""The spin_system op: exact lines, first-order checks, several fields, errors."""

import bisect
import math

import pytest

from nmrcalc.api import handle

AB = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz",
      "spins": [{"nucleus": "1H", "shift": "7.10 ppm"}, {"nucleus": "1H", "shift": "7.00 ppm"}],
      "couplings": [{"between": [0, 1], "J": "8.0 Hz"}]}


def run(request):
    r = handle(request)
    assert r["ok"], r
    return r["result"]


def test_ab_quartet_positions_and_roofing():
    # Pople, Schneider & Bernstein (1959): AB lines at ν̄ ± (C ± J)/2, C = √(Δν² + J²);
    # inner/outer intensity ratio (1 + J/C)/(1 − J/C)
    r = run(AB)
    ref = 100.0 / 100 * 400  # Ξ(1H) = 100 % (IUPAC 2001)
    dnu, J = 0.10 * ref, 8.0
    C, mean = math.hypot(dnu, J), 7.05 * ref
    expected = sorted(mean + s * (C + t * J) / 2 for s in (-1, 1) for t in (-1, 1))
    got = [l["Hz"] for l in r["lines"]]
    assert all(abs(a - b) < 1e-6 for a, b in zip(got, expected))
    inner, outer = r["lines"][1]["intensity"], r["lines"][0]["intensity"]
    assert math.isclose(inner / outer, (1 + J / C) / (1 - J / C), rel_tol=1e-9)
    assert all(math.isclose(l["ppm"], l["Hz"] / ref) for l in r["lines"])


def test_first_order_check_and_threshold_field():
    # rule of thumb Δν/J ≥ 10 for first order (common practice, no source); Δν ∝ B0, J is not
    c = run(AB)["checks"][0]
    assert math.isclose(c["delta_nu_over_J"], 40 / 8) and c["first_order"] is False
    assert math.isclose(c["first_order_from_MHz"], 800.0)


def test_several_fields_and_first_order_pattern():
    req = {**AB, "fields": ["300 MHz", "600 MHz", "1200 MHz"], "first_order": True}
    del req["spectrometer"]
    blocks = run(req)["fields"]
    assert [b["spectrometer_MHz"] for b in blocks] == [300, 600, 1200]
    ratios = [b["checks"][0]["delta_nu_over_J"] for b in blocks]
    assert ratios == sorted(ratios) and math.isclose(ratios[2] / ratios[0], 4)
    # first-order pattern: two doublets of equal intensity (Pascal, I = 1/2)
    fo = blocks[0]["first_order_lines"]
    assert len(fo) == 4 and all(math.isclose(l["intensity"], 0.25) for l in fo)


def test_mixed_nuclides_weak_coupling():
    # 1H–19F: unlike nuclides couple weakly (J I_z I_z), so the 1H is an exact doublet (PSB 1959)
    r = run({"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz",
             "spins": [{"nucleus": "1H", "shift": 4.5}, {"nucleus": "19F", "shift": -120}],
             "couplings": [{"between": [0, 1], "J": 48}]})
    assert len(r["lines"]) == 2 and math.isclose(r["lines"][1]["Hz"] - r["lines"][0]["Hz"], 48)


def test_spectrum_with_first_order_overlay():
    r = run({**AB, "spectrum": True, "first_order": True, "linewidth": "0.5 Hz"})["spectrum"]
    assert len(r["x_ppm"]) == len(r["y"]) == len(r["first_order_y"])


def test_first_order_overlay_shares_the_exact_traces_x_values_on_a_dense_spectrum():
    # the 16-nucleus molecule's thousands of exact lines make the sampler drop to its lowest density, which
    # the few first-order lines alone would not: the overlay must still be sampled on the same x values.
    # The tallest point of both traces is the methyl doublet at 0.94 ppm (first-order n+1 rule; common
    # practice, no source)
    spins, couplings = _benchmark_molecule()
    r = run({"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": spins, "couplings": couplings,
             "spectrum": True, "first_order": True, "linewidth": "0.5 Hz"})["spectrum"]
    assert len(r["x_ppm"]) == len(r["y"]) == len(r["first_order_y"])
    tallest = [r["x_ppm"][max(range(len(y)), key=y.__getitem__)] for y in (r["y"], r["first_order_y"])]
    assert all(abs(x - 0.94) < 0.02 for x in tallest), tallest


def test_aa_xx_caveat():
    # AA′XX′: chemically equivalent, magnetically inequivalent: never first order (PSB 1959)
    spins = [{"nucleus": "1H", "shift": 7.0}, {"nucleus": "1H", "shift": 7.0},
             {"nucleus": "1H", "shift": 7.5}, {"nucleus": "1H", "shift": 7.5}]
    couplings = [{"between": [0, 2], "J": 8}, {"between": [1, 3], "J": 8}, {"between": [0, 3], "J": 0.5},
                 {"between": [1, 2], "J": 0.5}, {"between": [0, 1], "J": 2}, {"between": [2, 3], "J": 2}]
    r = handle({"op": "spin_system", "observe": "1H", "spectrometer": 400, "spins": spins, "couplings": couplings})
    assert r["ok"] and any("never first order" in w for w in r["warnings"])


@pytest.mark.parametrize("change,field", [
    ({"couplings": [{"between": [0, 0], "J": 8}]}, "couplings.0.between"),
    ({"couplings": [{"between": [0, 5], "J": 8}]}, "couplings.0.between"),
    ({"couplings": [{"between": [0, 1], "J": "NaN"}]}, "couplings.0.J"),
    ({"spins": [{"nucleus": "1H", "shift": "inf"}]}, "spins.0.shift"),
    ({"spins": [{"nucleus": "12C", "shift": 1}]}, "spins.0.nucleus"),
    ({"observe": "13C"}, "observe"),
    ({"fields": ["400 MHz", "zero"]}, "fields.1"),
])
def test_errors_name_the_field(change, field):
    r = handle({**AB, **change})
    assert not r["ok"] and r["error"]["field"] == field, r


def test_too_large_is_refused_with_hint():
    spins = [{"nucleus": "1H", "shift": 1 + 0.1 * k} for k in range(14)]
    couplings = [{"between": [i, j], "J": 3} for i in range(14) for j in range(i + 1, 14)]
    r = handle({"op": "spin_system", "observe": "1H", "spectrometer": 400, "spins": spins, "couplings": couplings})
    assert not r["ok"] and r["error"]["code"] == "too_large" and "multiplet" in r["error"]["message"]


def test_factor_equivalence_off_gives_the_same_lines():
    # A2B: a group of equivalent spins may be replaced by its total-spin states without
    # changing the spectrum (composite particles, Pople, Schneider & Bernstein 1959)
    req = {"op": "spin_system", "observe": "1H", "spectrometer": 300,
           "spins": [{"nucleus": "1H", "shift": 7.00, "count": 2}, {"nucleus": "1H", "shift": 7.05}],
           "couplings": [{"between": [0, 1], "J": 8}]}
    factored, expanded = run(req)["lines"], run({**req, "factor_equivalence": False})["lines"]
    assert len(factored) == len(expanded) > 4
    for a, b in zip(factored, expanded):
        assert math.isclose(a["Hz"], b["Hz"], abs_tol=1e-6)
        assert math.isclose(a["intensity"], b["intensity"], rel_tol=1e-6, abs_tol=1e-9)
    r = handle({**req, "factor_equivalence": "no"})
    assert not r["ok"] and r["error"]["field"] == "factor_equivalence"


def test_progress_is_reported_across_fields():
    # the callback sees fractions rising to 1 over all fields (a front-end contract, no physics)
    seen = []
    req = {**AB, "fields": ["300 MHz", "600 MHz"]}
    del req["spectrometer"]
    assert handle(req, progress=seen.append)["ok"]
    assert seen and seen == sorted(seen) and seen[-1] == 1.0 and 0 < seen[0] <= 0.5


def test_labels_name_spins_in_couplings_checks_and_transitions():
    req = {**AB, "spins": [{**AB["spins"][0], "label": "H-3"}, AB["spins"][1]],
           "couplings": [{"between": ["H-3", "B"], "J": "8.0 Hz"}]}
    r = run(req)
    assert r["lines"] == run(AB)["lines"]  # same system, spins named by label instead of index
    assert r["checks"][0]["labels"] == ["H-3", "B"] and r["first_order_threshold"] == 10.0
    # AB: the lower pair belongs mostly to the lower-shift spin B (PSB 1959: mixing sin²θ < 1/2)
    assert [t["label"] for t in r["transitions"]] == ["B", "B", "H-3", "H-3"]
    assert [t["Hz"] for t in r["transitions"]] == [line["Hz"] for line in r["lines"]]
    bad = handle({**req, "couplings": [{"between": ["H-3", "H-9"], "J": 1}]})
    assert bad["error"]["field"] == "couplings.0.between" and "H-9" in bad["error"]["message"]
    assert "0 to" not in bad["error"]["message"]
    dup = handle({**req, "spins": [{**AB["spins"][0], "label": "B"}, AB["spins"][1]]})
    assert dup["error"]["field"] == "spins.1.label"


def test_disconnected_clusters_sum_exactly():
    # sites with no coupling path have commuting Hamiltonians: the spectrum is the exact sum
    # of each cluster's spectrum, weighted by its share of Σ I(I+1) (PSB 1959, ch. 6)
    ethyl = [{"nucleus": "1H", "shift": 1.2, "count": 3}, {"nucleus": "1H", "shift": 3.6, "count": 2}]
    vinyl = [{"nucleus": "1H", "shift": 6.1}, {"nucleus": "1H", "shift": 5.9}]
    both = run({"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": ethyl + vinyl,
                "couplings": [{"between": [0, 1], "J": 7}, {"between": [2, 3], "J": 12}]})
    alone = [run({"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": part,
                  "couplings": [{"between": [0, 1], "J": J}]}) for part, J in ((ethyl, 7), (vinyl, 12))]
    assert [(c["spins"], c["method"], c["error_Hz"]) for c in both["clusters"]] == [
        ([0, 1], "exact", 0.0), ([2, 3], "exact", 0.0)]
    expected = sorted([(l["Hz"], l["intensity"] * 5 / 7) for l in alone[0]["lines"]]
                      + [(l["Hz"], l["intensity"] * 2 / 7) for l in alone[1]["lines"]])
    got = [(l["Hz"], l["intensity"]) for l in both["lines"]]
    assert len(got) == len(expected)
    # equal to rounding (the merge's weighted mean and the 6/(D Σ I(I+1)) scale round differently)
    assert all(abs(a[0] - b[0]) < 1e-9 and math.isclose(a[1], b[1], rel_tol=1e-12) for a, b in zip(got, expected))


def test_seven_coupled_protons_with_narrow_lines_are_drawn():
    # the sampled spectrum counts the evaluations it makes, so 0.8 Hz lines of seven coupled 1H draw
    spins = [{"nucleus": "1H", "shift": 7.0 - 0.15 * k} for k in range(7)]
    couplings = [{"between": [i, j], "J": 7.5 - (j - i)} for i in range(7) for j in range(i + 1, 7)]
    r = run({"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": spins,
             "couplings": couplings, "spectrum": True, "linewidth": "0.8 Hz"})
    assert len(r["lines"]) > 1000 and len(r["spectrum"]["y"]) == len(r["spectrum"]["x_ppm"])


def test_weak_links_split_unless_exact():
    # made-up 4-ethylphenyl fragment at 400 MHz: the 0.6 Hz benzylic links (Δν = 1800 Hz) are weak
    spins = [{"nucleus": "1H", "shift": s, "label": name} for s, name in
             ((7.10, "H-2"), (7.10, "H-6"), (7.00, "H-3"), (7.00, "H-5"))]
    spins += [{"nucleus": "1H", "shift": 2.60, "count": 2, "label": "CH2"},
              {"nucleus": "1H", "shift": 1.20, "count": 3, "label": "CH3"}]
    couplings = [{"between": a, "J": J} for a, J in ((["H-2", "H-3"], 8.2), (["H-6", "H-5"], 8.2),
                                                      (["H-2", "H-5"], 0.4), (["H-6", "H-3"], 0.4),
                                                      (["H-2", "H-6"], 2.1), (["H-3", "H-5"], 2.6),
                                                      (["CH2", "CH3"], 7.6), (["H-2", "CH2"], 0.6),
                                                      (["H-6", "CH2"], 0.6))]
    req = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": spins, "couplings": couplings}
    split, exact = run(req), run({**req, "exact": True})
    assert [(c["labels"], c["method"]) for c in split["clusters"]] == [
        (["H-2", "H-6", "H-3", "H-5"], "weak-link"), (["CH2", "CH3"], "weak-link")]
    assert [c["method"] for c in exact["clusters"]] == ["exact"] and exact["weak_link_tol_Hz"] is None
    bound = max(c["error_Hz"] for c in split["clusters"])
    assert bound < 0.01
    exact_Hz = [l["Hz"] for l in exact["lines"]]
    for line in split["lines"]:
        if line["intensity"] > 1e-3:
            assert min(abs(line["Hz"] - x) for x in exact_Hz) <= bound + 2e-3  # 2e-3: merge tolerances


def _benchmark_molecule() -> tuple[list, list]:
    """The benchmark's 16-nucleus molecule (build_scripts/benchmark.py), loaded from there: one definition."""
    import importlib.util
    from pathlib import Path

    spec = importlib.util.spec_from_file_location(
        "benchmark", Path(__file__).resolve().parent.parent / "build_scripts" / "benchmark.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module._phenyl_isopentyl()


def test_sixteen_nuclei_in_two_weakly_linked_clusters_are_drawn_at_half_a_hertz():
    # made-up (3-methylbutyl)phenyl fragment (the benchmark's 16-nucleus molecule): five ring H and an
    # 11-H chain joined by 0.6 Hz benzylic links; too large to solve in one piece, so weak links, and its
    # 0.5 Hz spectrum over 2.6 kHz is drawn, not refused
    spins, couplings = _benchmark_molecule()
    req = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": spins,
           "couplings": couplings, "spectrum": True, "linewidth": "0.5 Hz"}
    r = run(req)
    assert sum(s.get("count", 1) for s in spins) == 16
    assert [c["method"] for c in r["clusters"]] == ["weak-link", "weak-link"]
    assert len(r["lines"]) > 1000 and len(r["spectrum"]["y"]) == len(r["spectrum"]["x_ppm"]) > 20000
    # every 1H is counted once: the intensities sum to 1 (sum rule, module docstring of spin_system), less
    # the thousands of lines below 1e-6 of the strongest, which are dropped
    assert math.isclose(sum(l["intensity"] for l in r["lines"]), 1.0, rel_tol=1e-4)
    assert handle({**req, "exact": True})["error"]["code"] == "too_large"
    # the ring H at 7.17/7.16 ppm (4 Hz apart, J 1.2 Hz) have nearly degenerate levels that the links' I_z I_z
    # part mixes (second-order bound, spin_system.clusters): the ring is re-solved in each field of the chain's
    # eigenstates, which brings its own bound under 0.01 Hz; the chain's bound keeps the ring's mixing and is
    # stated and warned
    full = handle(req)
    ring, chain = r["clusters"]
    assert ring["partner_field"] and ring["error_Hz"] < 0.01
    assert not chain["partner_field"] and chain["error_Hz"] > 0.01
    stated = [w for w in full["warnings"] if "split from its weakly coupled partners only approximately" in w]
    assert len(stated) == 1 and f"up to {chain['error_Hz']:.2g} Hz" in stated[0]


def test_sixteen_nuclei_split_lines_lie_within_a_hundredth_of_a_hertz_of_the_exact_ones(monkeypatch):
    # the issue-14 target on the benchmark's 16-nucleus molecule: the exact answer, with the size limits raised
    # for this check, uses numpy.linalg.eigh for its blocks (reference library); every split line of more than
    # 1e-3 of the strongest lies within 0.01 Hz of an exact line, and the intensities in each run of lines agree
    pytest.importorskip("numpy")
    from nmrcalc.physics import spin_system

    spins, couplings = _benchmark_molecule()
    req = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": spins, "couplings": couplings}
    split = run(req)["lines"]
    monkeypatch.setattr(spin_system, "MAX_BLOCK_DIM", 4096)
    monkeypatch.setattr(spin_system, "MAX_TOTAL_DIM", 100_000)
    monkeypatch.setattr(spin_system, "MAX_WORK", 10**10)
    exact = sorted(l["Hz"] for l in run({**req, "exact": True})["lines"])
    strongest = max(l["intensity"] for l in split)
    for line in split:
        if line["intensity"] > 1e-3 * strongest:
            k = bisect.bisect(exact, line["Hz"])
            assert min(abs(line["Hz"] - exact[j]) for j in (k - 1, k) if 0 <= j < len(exact)) <= 0.01, line


def test_nearly_degenerate_ring_is_joined_and_solved_exactly():
    # made-up ethylbenzene-like fragment (10 nuclei) with the para H 4 Hz from the ortho H: the weak links'
    # second-order mixing bound exceeds the 0.01 Hz tolerance, and the joined system fits, so it is exact
    ring = ((7.17, "H-2"), (7.17, "H-6"), (7.27, "H-3"), (7.27, "H-5"), (7.16, "H-4"))
    spins = [{"nucleus": "1H", "shift": s, "label": n} for s, n in ring]
    spins += [{"nucleus": "1H", "shift": 2.64, "count": 2, "label": "CH2"},
              {"nucleus": "1H", "shift": 1.23, "count": 3, "label": "CH3"}]
    J = [(("H-2", "H-3"), 7.6), (("H-6", "H-5"), 7.6), (("H-3", "H-4"), 7.4), (("H-5", "H-4"), 7.4),
         (("H-2", "H-4"), 1.2), (("H-6", "H-4"), 1.2), (("H-2", "H-6"), 1.8), (("H-3", "H-5"), 1.4),
         (("H-2", "H-5"), 0.6), (("H-6", "H-3"), 0.6), (("CH2", "CH3"), 7.6), (("H-2", "CH2"), 0.6),
         (("H-6", "CH2"), 0.6)]
    req = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": spins,
           "couplings": [{"between": list(p), "J": j} for p, j in J]}
    full = handle(req)
    assert [(c["method"], c["error_Hz"]) for c in full["result"]["clusters"]] == [("exact", 0.0)]
    assert not any("approximately" in w for w in full["warnings"])
    # the same lines as "exact": true (the exact engine, checked against numpy.linalg.eigh in test_spin_clusters)
    assert full["result"]["lines"] == handle({**req, "exact": True})["result"]["lines"]


def test_a_thirteen_proton_chain_is_computed_and_drawn_not_refused():
    # made-up CH3(CH2)5 chain, methylenes 0.05 ppm apart at 400 MHz (second order throughout): 6144 states after
    # equivalence factoring, within the eigensolver work limit (spin_system.MAX_WORK), so it is solved exactly
    # and drawn at 0.8 Hz.  Sum rule (spin_system module docstring, Tr(F_x²)): the intensities add up to 1, less
    # the tens of thousands of lines below 1e-6 of the strongest (2e-4 of the total here)
    spins = [{"nucleus": "1H", "shift": 0.90, "count": 3}]
    spins += [{"nucleus": "1H", "shift": round(1.20 + 0.05 * g, 3), "count": 2} for g in range(5)]
    couplings = [{"between": [g, g + 1], "J": round(7.0 + 0.2 * g, 2)} for g in range(5)]
    r = run({"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spins": spins, "couplings": couplings,
             "spectrum": True, "linewidth": "0.8 Hz"})
    assert sum(s["count"] for s in spins) == 13 and [c["method"] for c in r["clusters"]] == ["exact"]
    assert math.isclose(sum(l["intensity"] for l in r["lines"]), 1.0, rel_tol=1e-3)
    assert len(r["spectrum"]["y"]) > 1000
