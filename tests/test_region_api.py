"""Region ops through api.handle: peak_at (a tap on the trace), integrate (integrals with their
noise error and relative values) and compare_region (a model drawn on the region's points,
scaled to its integral, with the residual), on sampled Lorentzians of known position and area."""

import math
import random

import pytest

from nmrcalc.api import handle

N, FIRST, LAST, MHZ = 8000, 8.0, 6.0, 400.0
DX = (LAST - FIRST) / (N - 1)
W_PPM = 1.0 / MHZ          # 1 Hz wide lines
SIGMA = 0.2
J_PPM = 7.0 / MHZ


def _lorentz(x, x0, h):
    return h / (1 + ((x - x0) / (W_PPM / 2)) ** 2)


def _spectrum(seed=1):
    """A 1:2:1 triplet (J = 7 Hz) at 7.26 ppm and a singlet at 6.50 ppm of one third of its area."""
    rng = random.Random(seed)
    xs = [FIRST + k * DX for k in range(N)]
    y = [sum(_lorentz(x, 7.26 + d * J_PPM, 30 * c) for d, c in ((-1, 1), (0, 2), (1, 1))) + _lorentz(x, 6.5, 40)
         + rng.gauss(0, SIGMA) for x in xs]
    return xs, y


def _base(y, **extra):
    return {"first_x": FIRST, "last_x": LAST, "x_unit": "ppm", "y": y, "observe_MHz": MHZ, **extra}


def test_integrate_areas_errors_and_relative():
    _, y = _spectrum()
    r = handle({"op": "integrate", **_base(y), "regions": [{"from": 7.4, "to": 7.12}, {"from": 6.6, "to": 6.4}],
                "normalize_to": 1, "nuclei": 1})
    assert r["ok"], r
    tri, single = r["result"]["regions"]
    # ∫ h/(1 + (2(x−x0)/w)²) dx = π h w / 2 over the whole axis; a window of ±a keeps (2/π) atan(2a/w)
    # of it (arithmetic)
    keep = lambda a: 2 / math.pi * math.atan(2 * a / W_PPM)  # noqa: E731
    want_single = math.pi * 40 * W_PPM / 2 * keep(0.1)
    assert single["integral"] == pytest.approx(want_single, abs=4 * single["error"] + 1e-3 * want_single)
    # σ_I = σ |Δx| √(Σ w²) for trapezoid weights (independent noise): √(N − 1.5) for N points
    assert single["error"] == pytest.approx(r["result"]["noise"] * abs(DX) * math.sqrt(single["points"] - 1.5))
    assert r["result"]["noise"] == pytest.approx(SIGMA, rel=0.2)
    assert single["relative"] == 1 and single["relative_error"] == 0
    # the triplet holds 120/40 = 3 times the singlet's area (within the windows' lost tails)
    assert tri["relative"] == pytest.approx(3.0, abs=4 * tri["relative_error"] + 0.03)
    assert 0 < tri["relative_error"] < 0.05
    assert tri["integral_Hz"] == pytest.approx(tri["integral"] * MHZ)
    assert any("lower bounds" in w for w in r["warnings"])
    bad = handle({"op": "integrate", **_base(y), "regions": [{"from": 7.4, "to": 7.4}]})
    assert not bad["ok"] and bad["error"]["field"] == "regions.0"
    bad = handle({"op": "integrate", **_base(y), "regions": [{"from": 7.4, "to": 7.1}], "normalize_to": 3})
    assert not bad["ok"] and bad["error"]["field"] == "normalize_to"


def test_peak_at_a_tap():
    _, y = _spectrum()
    k = round((6.5 + 0.004 - FIRST) / DX)   # a tap 1.6 Hz beside the singlet
    window = y[k - 40:k + 41]
    r = handle({"op": "peak_at", "first_x": FIRST + (k - 40) * DX, "last_x": FIRST + (k + 40) * DX,
                "x_unit": "ppm", "y": window, "observe_MHz": MHZ, "noise": SIGMA})
    assert r["ok"], r
    p = r["result"]["peak"]
    # three-point parabolic vertex: within a tenth of a point spacing here (arithmetic check)
    assert p["position"] == pytest.approx(6.5, abs=0.15 * abs(DX))
    assert p["height"] == pytest.approx(40, rel=0.03) and p["width_Hz"] == pytest.approx(1.0, abs=0.15)
    assert not r["warnings"]
    quiet = handle({"op": "peak_at", "first_x": 7.9, "last_x": 7.89, "x_unit": "ppm", "y": y[40:80],
                    "observe_MHz": MHZ, "noise": SIGMA})
    assert quiet["ok"] and any("3 times the noise" in w for w in quiet["warnings"])


def _region(y, a, b):
    lo, hi = round((a - FIRST) / DX), round((b - FIRST) / DX)
    return {"first_x": FIRST + lo * DX, "last_x": FIRST + hi * DX, "x_unit": "ppm", "y": y[lo:hi + 1],
            "observe_MHz": MHZ}


def test_compare_region_multiplet_and_spin_system():
    _, y = _spectrum()
    region = _region(y, 7.4, 7.12)
    triplet = handle({"op": "compare_region", **region, "model": "multiplet", "observe": "1H",
                      "groups": [{"partner": "1H", "count": 2, "J": 7}], "linewidth": "1 Hz"})
    assert triplet["ok"], triplet
    t = triplet["result"]
    assert len(t["simulated"]) == len(t["residual"]) == len(region["y"])
    # the right model leaves only the noise (σ = 0.2) and the tails beyond the region
    assert t["rms_residual"] < 2 * SIGMA
    assert t["center"] == pytest.approx(7.26, abs=0.1 / MHZ)
    assert [ln["position"] for ln in t["lines"]] == pytest.approx([7.26 - J_PPM, 7.26, 7.26 + J_PPM], abs=0.1 / MHZ)
    doublet = handle({"op": "compare_region", **region, "model": "multiplet", "observe": "1H",
                      "groups": [{"partner": "1H", "count": 1, "J": 14}], "linewidth": "1 Hz"})["result"]
    assert doublet["rms_residual"] > 10 * t["rms_residual"]
    # the same triplet as an AX2 spin system: 7.26 ppm coupled to two protons far away (first order)
    spins = handle({"op": "compare_region", **region, "model": "spin_system", "spectrometer": MHZ,
                    "spins": [{"nucleus": "1H", "shift": 7.26}, {"nucleus": "1H", "shift": 2.0, "count": 2}],
                    "couplings": [{"between": [0, 1], "J": 7}]})
    assert spins["ok"], spins
    s = spins["result"]
    assert s["linewidth_Hz"] == pytest.approx(1.0, abs=0.2)   # from the region's highest peak
    assert s["rms_residual"] < 3 * SIGMA and s["checks"][0]["first_order"]
    hz = handle({"op": "compare_region", **{**region, "x_unit": "Hz"}, "model": "spin_system",
                 "spectrometer": MHZ, "spins": [{"nucleus": "1H", "shift": 7.26}]})
    assert not hz["ok"] and hz["error"]["field"] == "x_unit"
    mixed = handle({"op": "compare_region", **region, "model": "multiplet", "observe": "1H",
                    "groups": [{"partner": "1H", "count": 2, "J": 7}], "spins": [{"nucleus": "1H", "shift": 7.26}]})
    assert not mixed["ok"] and mixed["error"]["field"] == "spins"
    none = handle({"op": "compare_region", **region, "model": "multiplet"})
    assert not none["ok"] and none["error"]["field"] == "observe"
