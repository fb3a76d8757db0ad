"""Fits to the trace itself (fit_spin_system with a region's points): round trips from the exact
engine's lines (the spin_system op, checked against numpy.linalg in tests/test_spin_system.py)
drawn as Lorentzians with Gaussian noise, fitted back from perturbed starting values.

Stated bounds: every recovered value lies within 5 of its reported standard errors of the truth
and the errors themselves are small (so a fit that reports huge errors cannot pass); the rms
residual matches the added noise.  Second reference for AB: Pople, Schneider & Bernstein,
*High-resolution NMR* (1959), §6-2 — from the fitted lines, J = f2 − f1 and Δν = √((f4 − f1)(f3 − f2))."""

import math
import random

import pytest

from nmrcalc.api import handle

MHZ = 400.0
WIDTH_HZ = 0.8
STEP_HZ = 0.1
NOISE = 0.5
SCALE = 200.0   # peak heights of order 100: a signal-to-noise ratio of a few hundred
BASE = 3.0


def _system(spins, couplings):
    return {"observe": "1H", "spectrometer": f"{MHZ} MHz",
            "spins": [{"nucleus": n, "shift": s} for n, s in spins],
            "couplings": [{"between": [i, j], "J": J} for i, j, J in couplings]}


def _trace(spins, couplings, seed, margin_hz=8.0):
    """The region (ppm, descending as spectra are stored) holding every 1H line, with noise."""
    r = handle({"op": "spin_system", **_system(spins, couplings)})
    assert r["ok"], r
    lines = [(ln["Hz"], ln["intensity"]) for ln in r["result"]["lines"]]
    hi, lo = max(x for x, _ in lines) + margin_hz, min(x for x, _ in lines) - margin_hz
    n = int((hi - lo) / STEP_HZ) + 1
    rng = random.Random(seed)
    xs = [hi - k * STEP_HZ for k in range(n)]
    h = WIDTH_HZ / 2
    # area-normalized Lorentzian (Keeler, Understanding NMR Spectroscopy, 2nd ed., §2)
    y = [BASE + SCALE * sum(a * h / math.pi / ((x - p) ** 2 + h * h) for p, a in lines) + rng.gauss(0, NOISE)
         for x in xs]
    return {"first_x": xs[0] / MHZ, "last_x": xs[-1] / MHZ, "x_unit": "ppm", "y": y, "baseline": BASE}


def _fit(spins, couplings, trace, vary=("shifts", "couplings", "linewidth"), **extra):
    r = handle({"op": "fit_spin_system", **_system(spins, couplings), **trace, "vary": list(vary), **extra})
    assert r["ok"], r
    return r["result"]


@pytest.mark.parametrize("ratio", [0.5, 1.5, 4.0, 12.0])
def test_ab_trace_round_trip(ratio):
    J = 10.0
    a, b = 7.0, 7.0 + ratio * J / MHZ
    trace = _trace([("1H", a), ("1H", b)], [(0, 1, J)], seed=int(ratio * 10))
    # starting values as a chemist would type them: shifts a few line widths off, J 10 % off; at
    # Δν/J = 0.5 the inner lines merge and a start 4 Hz off in Δν finds a false minimum (J ≈ 8.5 Hz),
    # so there the start is within 0.5 Hz (the limit the trace_fit docstring states)
    off_a, off_b = (0.3, 0.5) if ratio < 1 else (1.5, 2.5)
    res = _fit([("1H", a - off_a / MHZ), ("1H", b + off_b / MHZ)], [(0, 1, J * 0.9)], trace)
    (sa, sb), (c,) = res["spins"], res["couplings"]
    assert res["on"] == "trace"
    assert abs(c["J_Hz"] - J) < max(5 * c["error_Hz"], 1e-3) and c["error_Hz"] < 0.05
    for s, true in ((sa, a), (sb, b)):
        assert abs(s["shift_ppm"] - true) * MHZ < max(5 * s["error_ppm"] * MHZ, 1e-3)
        # at Δν/J = 0.5 the inner lines nearly merge, so the shifts are less sharp
        assert s["error_ppm"] * MHZ < (0.1 if ratio < 1 else 0.02)
    assert abs(res["linewidth_Hz"] - WIDTH_HZ) < max(5 * res["linewidth_error_Hz"], 1e-3)
    assert res["scale"] == pytest.approx(SCALE, rel=0.02)
    # the rms residual is the added noise (σ = 0.5) within sampling scatter
    assert res["rms_residual"] == pytest.approx(NOISE, rel=0.15)
    assert len(res["residual"]) == len(trace["y"]) == len(res["simulated"])
    # first-order check of the fitted pair: first order only from Δν/J ≥ 10
    delta = abs(sb["shift_ppm"] - sa["shift_ppm"]) * MHZ
    assert res["checks"][0]["first_order"] is (delta / abs(c["J_Hz"]) >= 10)
    # Pople–Schneider–Bernstein closed form on the fitted system's own lines
    lines = handle({"op": "spin_system", **_system([("1H", sa["shift_ppm"]), ("1H", sb["shift_ppm"])],
                                                   [(0, 1, c["J_Hz"])])})["result"]["lines"]
    f = sorted(ln["Hz"] for ln in lines)
    assert len(f) == 4
    assert f[1] - f[0] == pytest.approx(J, abs=5 * c["error_Hz"] + 1e-3)
    assert math.sqrt((f[3] - f[0]) * (f[2] - f[1])) == pytest.approx(ratio * J, abs=0.05)


def test_abx_trace_round_trip():
    # AB part of an ABX system with X = 31P (a CH2 beside phosphorus): J_AB = −14, J_AX = 8, J_BX = 3 Hz
    spins = [("1H", 3.20), ("1H", 3.25), ("31P", 25.0)]
    couplings = [(0, 1, -14.0), (0, 2, 8.0), (1, 2, 3.0)]
    trace = _trace(spins, couplings, seed=7)
    start = [("1H", 3.20 + 0.4 / MHZ), ("1H", 3.25 - 0.4 / MHZ), ("31P", 25.0)]
    res = _fit(start, [(0, 1, -13.5), (0, 2, 8.4), (1, 2, 2.7)], trace)
    for s, (_, true) in zip(res["spins"][:2], spins):
        assert s["fitted"] and abs(s["shift_ppm"] - true) * MHZ < max(5 * s["error_ppm"] * MHZ, 1e-3)
        assert s["error_ppm"] * MHZ < 0.02
    assert not res["spins"][2]["fitted"]  # 31P is not observed: its shift stays as given
    for c, (_, _, true) in zip(res["couplings"], couplings):
        assert abs(c["J_Hz"] - true) < max(5 * c["error_Hz"], 1e-3) and c["error_Hz"] < 0.05
    assert res["rms_residual"] == pytest.approx(NOISE, rel=0.15)
    assert res["linewidth_fitted"] and abs(res["linewidth_Hz"] - WIDTH_HZ) < 0.02


def test_fixed_width_and_refusals():
    J = 7.0
    spins, couplings = [("1H", 2.0), ("1H", 2.1)], [(0, 1, J)]
    trace = _trace(spins, couplings, seed=3)
    res = _fit(spins, couplings, trace, vary=("couplings",), linewidth=f"{WIDTH_HZ} Hz")
    assert not res["linewidth_fitted"] and res["linewidth_Hz"] == WIDTH_HZ and res["linewidth_error_Hz"] is None
    assert not res["spins"][0]["fitted"] and res["couplings"][0]["J_Hz"] == pytest.approx(J, abs=0.02)
    both = handle({"op": "fit_spin_system", **_system(spins, couplings), **trace,
                   "lines": [{"position": 2.0}, {"position": 2.1}]})
    assert not both["ok"] and both["error"]["field"] == "y"
    stray = handle({"op": "fit_spin_system", **_system(spins, couplings), "baseline": 1,
                    "lines": [{"position": 2.0}, {"position": 2.1}]})
    assert not stray["ok"] and stray["error"]["field"] == "baseline"
    bad = handle({"op": "fit_spin_system", **_system(spins, couplings), "lines": [{"position": 2.0}, {"position": 2.1}],
                  "vary": ["linewidth"]})
    assert not bad["ok"] and bad["error"]["field"] == "vary"
