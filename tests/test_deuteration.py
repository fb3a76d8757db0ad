"""The deuteration op and its physics (binomial model, χ² test, residual-signal route)."""

import math

import pytest
from scipy.stats import binom, chi2

from nmrcalc.api import handle
from nmrcalc.physics.deuteration import chi2_tail


def run(request):
    r = handle({"op": "deuteration", **request})
    assert r["ok"], r
    return r


@pytest.mark.parametrize("x,dof", [(0.3, 1), (3.0, 2), (10.0, 4), (40.0, 3), (0.01, 5), (7.8, 3)])
def test_chi2_tail_against_scipy(x, dof):
    # scipy.stats.chi2.sf
    assert math.isclose(chi2_tail(x, dof), chi2.sf(x, dof), rel_tol=1e-9)


@pytest.mark.parametrize("p", [0.5, 0.9, 0.98, 0.998])
def test_round_trip_binomial_integrals(p):
    # integrals made by the binomial model (scipy.stats.binom) give back p and pass the test
    integrals = [100 * binom.pmf(k, 3, p) for k in range(4)]
    r = run({"positions": 3, "integrals": integrals, "integral_error": 0.5})["result"]
    assert math.isclose(r["D_percent"], 100 * p, rel_tol=1e-9)
    assert r["binomial"] is True
    assert all(math.isclose(a, b, abs_tol=1e-9) for a, b in zip(r["expected_integrals"], integrals))


def test_site_selective_labelling_is_not_binomial():
    # half CH3, half CD3 (no mixed species) averages to 50 % D but is far from binomial (1:3:3:1 at p = 1/2)
    r = run({"positions": 3, "integrals": [50, 0, 0, 50], "integral_error": 1})
    assert math.isclose(r["result"]["D_percent"], 50.0)
    assert r["result"]["binomial"] is False and any("not binomial" in w for w in r["warnings"])


def test_uncertainty_by_propagation():
    # p = Σ k I_k / (n Σ I_k); ∂p/∂I_k = (k − n p)/(n S): plain arithmetic of the estimate
    I, sigma, n = [10.0, 30.0, 40.0, 20.0], 2.0, 3
    S = sum(I)
    p = sum(k * x for k, x in enumerate(I)) / (n * S)
    expect = 100 * sigma * math.sqrt(sum(((k - n * p) / (n * S)) ** 2 for k in range(4)))
    r = run({"positions": n, "integrals": I, "integral_error": sigma})["result"]
    assert math.isclose(r["D_percent_uncertainty"], expect, rel_tol=1e-12)


def test_site_1H_weighting():
    # observed on the site's own 1H: the CH3 species has 3 H, CH2D 2 H, CHD2 1 H (the CD3 species is silent)
    p = 0.9
    pops = [binom.pmf(k, 3, p) for k in range(3)]  # scipy.stats.binom
    integrals = [(3 - k) * x for k, x in enumerate(pops)]
    r = run({"positions": 3, "integrals": integrals, "observed_on": "site_1H", "integral_error": 1e-4})["result"]
    assert r["binomial"] is True
    assert abs(r["D_percent"] - 100 * p) < 1e-6
    assert len(r["expected_integrals"]) == 3


def test_residual_route():
    # qNMR relation (Pauli et al., J. Med. Chem. 2014): residual 0.06 against a 3-H standard at integral 1.00,
    # 1:1 mole ratio → 0.18 H left of 3 positions → 94 % D
    r = run({"positions": 3, "residual": {"integral": 0.06, "standard_integral": 1.0, "standard_nuclei": 3,
                                          "standard_per_analyte": 1, "relative_error": "2 %"}})["result"]
    assert math.isclose(r["D_percent"], 94.0)
    assert math.isclose(r["D_percent_uncertainty"], 100 * 0.18 * math.hypot(0.02, 0.02) / 3)
    assert r["binomial"] is None and math.isclose(sum(r["expected_integrals"]), 1.0)


def test_both_routes_side_by_side():
    integrals = [100 * binom.pmf(k, 3, 0.95) for k in range(4)]  # scipy.stats.binom
    r = run({"positions": 3, "integrals": integrals, "integral_error": 0.1,
             "residual": {"integral": 0.05, "standard_integral": 1, "standard_nuclei": 3, "standard_per_analyte": 1}})
    routes = r["result"]["routes"]
    assert math.isclose(routes["integrals"]["D_percent"], 95.0) and math.isclose(routes["residual"]["D_percent"], 95.0)


@pytest.mark.parametrize("req,field", [
    ({}, "positions"),
    ({"positions": 3}, "integrals"),
    ({"positions": 3, "integrals": [1, 2]}, "integrals"),
    ({"positions": 3, "integrals": [1, 2, -1, 4]}, "integrals.2"),
    ({"positions": 3, "residual": {"integral": 1}}, "residual.standard_integral"),
    ({"positions": 3, "integrals": [1, 1, 1, 1], "observed_on": "carbon"}, "observed_on"),
])
def test_errors(req, field):
    r = handle({"op": "deuteration", **req})
    assert not r["ok"] and r["error"]["field"] == field
