"""The measured-spectrum ops through api.handle: read_spectrum (JCAMP-DX and two-column text,
referencing) and pick_peaks on sampled Lorentzians of known position, height and width."""

import math
import random

import pytest
from jcamp_writer import write_xydata

from nmrcalc.api import handle


def _lorentz(x, x0, fwhm, h):
    return h / (1 + ((x - x0) / (fwhm / 2)) ** 2)


def _trace(n=4096, first=10.0, last=0.0, peaks=((7.26, 0.004, 100.0), (2.1734, 0.003, 40.0)), sigma=0.2, seed=1):
    rng = random.Random(seed)
    dx = (last - first) / (n - 1)
    xs = [first + k * dx for k in range(n)]
    return [sum(_lorentz(x, *p) for p in peaks) + rng.gauss(0, sigma) for x in xs]


def test_read_spectrum_contract_jcamp():
    ys = [round(v * 100) for v in _trace()]
    text = write_xydata(ys, "DIFDUP", first_x=4000.0, last_x=0.0, x_factor=4000.0 / 4095, y_factor=0.01,
                        observe_MHz=400.13)
    r = handle({"op": "read_spectrum", "text": text, "filename": "invented.jdx"})
    assert r["ok"], r
    res = r["result"]
    for key in ("nucleus", "observe_MHz", "npoints", "x_unit", "first_x", "last_x", "y", "checks", "title"):
        assert key in res
    assert (res["nucleus"], res["observe_MHz"], res["npoints"], res["x_unit"]) == ("1H", 400.13, 4096, "Hz")
    assert res["y"] == pytest.approx([v * 0.01 for v in ys])
    assert res["reference"] is None and any("no reference" in w for w in r["warnings"])
    # a typed reference: the point at x = 2904.9 Hz is 7.26 ppm → δ = 7.26 + (x − x_ref)/ν_obs
    r = handle({"op": "read_spectrum", "text": text, "reference": {"x": 2904.9, "shift_ppm": 7.26}})
    assert r["result"]["first_ppm"] == pytest.approx(7.26 + (4000 - 2904.9) / 400.13)
    assert r["result"]["last_ppm"] == pytest.approx(7.26 - 2904.9 / 400.13)


def test_read_spectrum_text_and_refusals():
    text = "ppm,intensity\n" + "".join(f"{5 - k * 0.01},{k % 7}\n" for k in range(300))
    r = handle({"op": "read_spectrum", "text": text, "filename": "x.csv"})
    assert r["ok"] and r["result"]["x_unit"] == "ppm" and r["result"]["npoints"] == 300
    assert r["result"]["first_ppm"] == 5.0
    r = handle({"op": "read_spectrum", "text": "##TITLE=t\n##DATA TYPE=NMR FID\n##XUNITS=SECONDS\n"
                "##FIRSTX=0\n##LASTX=1\n##NPOINTS=2\n##XYDATA=(X++(Y..Y))\n0 1 2\n##END="})
    assert not r["ok"] and "FID" in r["error"]["message"] and r["error"]["field"] == "text"
    r = handle({"op": "read_spectrum", "text": 5})
    assert not r["ok"] and r["error"]["field"] == "text"


def test_pick_peaks_lorentzians():
    y = _trace()
    r = handle({"op": "pick_peaks", "first_x": 10.0, "last_x": 0.0, "x_unit": "ppm", "y": y, "observe_MHz": 400.0,
                "threshold": "5 sigma"})
    assert r["ok"], r
    res = r["result"]
    assert res["noise"] == pytest.approx(0.2, rel=0.25)  # the added Gaussian noise, σ = 0.2
    peaks = sorted(res["peaks"], key=lambda p: -p["height"])[:2]
    big, small = sorted(peaks, key=lambda p: -p["position"])
    dx = 10.0 / 4095
    # three-point parabolic vertex: within a tenth of a point spacing for these widths (arithmetic check)
    assert big["position"] == pytest.approx(7.26, abs=0.1 * dx)
    assert small["position"] == pytest.approx(2.1734, abs=0.1 * dx)
    assert big["height"] == pytest.approx(100.0, rel=0.03) and small["height"] == pytest.approx(40.0, rel=0.03)
    # full width at half height, in Hz: 0.004 ppm × 400 MHz = 1.6 Hz (linear interpolation, ≈ 1 point)
    assert big["width_Hz"] == pytest.approx(1.6, abs=0.3) and small["width_Hz"] == pytest.approx(1.2, abs=0.3)
    # integral of a Lorentzian over its peak region, against π h w / 2 (the tails beyond are lost)
    assert big["integral"] == pytest.approx(math.pi * 100 * 0.004 / 2, rel=0.15)
    # everything else is noise: no other peak above 5 σ except chance
    assert len(res["peaks"]) <= 4


def test_pick_peaks_refusals():
    y = _trace()
    r = handle({"op": "pick_peaks", "first_x": 10.0, "last_x": 0.0, "x_unit": "ppm", "y": y})
    assert not r["ok"] and r["error"]["field"] == "observe_MHz"
    r = handle({"op": "pick_peaks", "first_x": 10.0, "last_x": 0.0, "x_unit": "Hz", "y": y, "threshold": "lots"})
    assert not r["ok"] and r["error"]["field"] == "threshold"
    r = handle({"op": "pick_peaks", "first_x": 10.0, "last_x": 0.0, "x_unit": "Hz", "y": [1, "a"]})
    assert not r["ok"] and r["error"]["field"] == "y"


def test_noise_on_a_strong_line_tail_is_not_a_peak():
    # one line 10⁴ σ high: its tails stay above 5 σ for about 440 points, where noise makes over 100
    # local maxima; a maximum counts only if it also stands out by the threshold on both sides
    # (prominence), which leaves the line and the rare > 4.5 σ noise spikes on its tails
    rng = random.Random(4)
    y = [_lorentz(k, 4000.3, 10.0, 1e4) + rng.gauss(0, 1.0) for k in range(8192)]
    r = handle({"op": "pick_peaks", "first_x": 0.0, "last_x": 8191.0, "x_unit": "Hz", "y": y, "threshold": "5 sigma"})
    assert r["ok"], r
    found = [round(p["position"]) for p in r["result"]["peaks"]]
    assert 4000 in found and len(found) <= 5
    tails = sum(1 for k in range(1, 8191) if y[k] > 5 and y[k] >= y[k - 1] and y[k] > y[k + 1])
    assert tails > 25 * len(found)  # the local maxima a bare threshold would have taken (118 here)
    # two resolved lines both survive
    y2 = [v + _lorentz(k, 4060.0, 10.0, 5e3) for k, v in enumerate(y)]
    r = handle({"op": "pick_peaks", "first_x": 0.0, "last_x": 8191.0, "x_unit": "Hz", "y": y2, "threshold": "5 sigma"})
    found = [round(p["position"]) for p in r["result"]["peaks"]]
    assert 4000 in found and 4060 in found and len(found) <= 6
