"""The measured-spectrum panel in the offline single file: open an official JCAMP-DX test file
(TESTSPEC.DX, a public 13C test file), pick peaks, set the reference on the CDCl3
triplet (a chosen peak and the solvent table's shift), and send that multiplet to the pattern finder.

Expected numbers come from nmrcalc.api.handle on CPython: the page must show what the package computes."""

from __future__ import annotations

from playwright.sync_api import expect
from test_jcamp_official import SETS, data_dir  # noqa: F401  (the fixture that fetches the files)

from nmrcalc.api import handle

CDCL3_PPM = 77.16  # 13C of CDCl3, centre line (common practice, no source)


def test_open_reference_pick_and_find(dist, open_page, data_dir):  # noqa: F811
    path = data_dir / SETS[0] / "TESTSPEC.DX"
    text = path.read_text(encoding="latin-1")
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    page = rec.page
    page.click("#tab-spectrum")
    page.set_input_files("#spec-file", str(path))
    want = handle({"op": "read_spectrum", "text": text, "filename": path.name})["result"]
    expect(page.locator("#spec-status")).to_contain_text(f"{want['npoints']} points")
    expect(page.locator("#spec-checks li")).to_have_count(len(want["checks"]))

    page.fill("#spec-threshold", "20")
    page.click("#spec-pick")
    picked = handle({"op": "pick_peaks", "first_x": want["first_x"], "last_x": want["last_x"], "x_unit": "Hz",
                     "y": want["y"], "threshold": "20 sigma", "observe_MHz": want["observe_MHz"]})["result"]["peaks"]
    rows = page.locator("#spec-peaks tbody tr")
    expect(rows).to_have_count(len(picked))
    # the centre line of the CDCl3 triplet (about 8660 Hz in this file)
    trip = sorted((p for p in picked if 8550 < p["position"] < 8750), key=lambda p: p["position"])
    centre = picked.index(trip[1])
    rows.nth(centre).click()
    # the solvent table (solvents op) offers CDCl3: choosing it fills the shift
    table = handle({"op": "solvents", "nucleus": "13C"})["result"]["solvents"]
    solvent = next(x for x in table if x["name"] == "CDCl3")
    assert solvent["shift_ppm"] == CDCL3_PPM
    expect(page.locator("#spec-solvent")).to_be_visible()
    page.select_option("#spec-solvent", label=f"CDCl3 {CDCL3_PPM} ppm")
    expect(page.locator("#spec-ref-shift")).to_have_value(str(CDCL3_PPM))
    page.click("#spec-ref-set")
    ref = handle({"op": "read_spectrum", "text": text, "reference": {"x": trip[1]["position"], "shift_ppm": CDCL3_PPM}})
    expect(page.locator("#spec-ref-note")).to_contain_text(f"is {CDCL3_PPM} ppm (request)")
    expect(page.locator("#spec-plot")).to_contain_text("δ / ppm")
    # δ = δ_ref + (x − x_ref)/ν_obs (arithmetic); the aromatic CH lines then fall near 128 ppm
    assert abs(ref["result"]["first_ppm"] - (CDCL3_PPM + (want["first_x"] - trip[1]["position"]) / 100.4)) < 1e-9

    page.locator("#card-spectrum").screenshot(path=str(dist / "spectrum-panel.png"))
    page.fill("#spec-from", "76.5")
    page.fill("#spec-to", "77.8")
    page.click("#spec-send")
    expect(page.locator("#spec-send-note")).to_have_text("3 peaks sent.")
    expect(page.locator("#ident-pick-0")).to_be_visible(timeout=60_000)
    sent = page.input_value("#ident-peaklist")
    found = handle({"op": "identify", "observe": "13C", "peaklist": sent, "unit": "Hz"})["result"]
    expect(page.locator("#ident-pick-0")).to_have_text(found["candidates"][0]["label"])
    page.screenshot(path=str(dist / "spectrum-to-finder.png"))
    # nothing but the file itself (and data: / blob: URLs) was requested
    assert all(u.startswith(("file:", "data:", "blob:")) for u in rec.requests), rec.requests
    assert not rec.errors, rec.errors


def _invented_spectrum(path):
    """An invented 1H spectrum (x in ppm, 400 MHz): a 1:2:1 triplet (J = 7 Hz) at 1.20 ppm, the AB
    quartet of the exact engine (4.05 / 4.12 ppm, J = 12 Hz), a small singlet at 2.50 ppm below the
    picking threshold, 1 Hz Lorentzians on Gaussian noise, written as JCAMP-DX (DIFDUP)."""
    import math
    import random

    from jcamp_writer import write_xydata

    n, first, last, mhz = 32768, 10.0, 0.0, 400.0
    ab = handle({"op": "spin_system", "observe": "1H", "spectrometer": mhz,
                 "spins": [{"nucleus": "1H", "shift": 4.05}, {"nucleus": "1H", "shift": 4.12}],
                 "couplings": [{"between": [0, 1], "J": 12}]})["result"]["lines"]
    sticks = [(1.2 + d * 7 / mhz, 3 * c / 4) for d, c in ((-1, 1), (0, 2), (1, 1))] + \
        [(ln["ppm"], 2 * ln["intensity"] / sum(x["intensity"] for x in ab)) for ln in ab] + [(2.5, 0.0025)]
    h = 0.5 / mhz
    rng = random.Random(11)
    ys = []
    for k in range(n):
        x = first + k * (last - first) / (n - 1)
        v = sum(a * h / math.pi / ((x - p) ** 2 + h * h) for p, a in sticks) / mhz   # area a in ppm·(1/Hz)
        ys.append(round(1e4 * v + rng.gauss(0, 1)))
    path.write_text(write_xydata(ys, "DIFDUP", first_x=first, last_x=last, x_factor=1e-5, unit="PPM",
                                 observe_MHz=mhz, title="invented ethyl-like test spectrum", per_line=20))
    return path


def _tap(page, ppm):
    """Click the measured-spectrum plot at δ = ppm (the plot's view and its 14-pixel side margins)."""
    lo, hi = (float(v) for v in page.get_attribute("#spec-plot svg", "data-view").split(","))
    box = page.locator("#spec-plot svg").bounding_box()
    x = box["x"] + 14 + (hi - ppm) / (hi - lo) * (box["width"] - 28)
    page.mouse.click(x, box["y"] + box["height"] / 2)


def test_tap_integrate_simulate_and_fit(dist, open_page, tmp_path):
    path = _invented_spectrum(tmp_path / "invented-ab.jdx")
    text = path.read_text()
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    page = rec.page
    page.click("#tab-spectrum")
    page.set_input_files("#spec-file", str(path))
    want = handle({"op": "read_spectrum", "text": text, "filename": path.name})["result"]
    expect(page.locator("#spec-status")).to_contain_text(f"{want['npoints']} points")
    # decimation keeps every maximum: one min/max pair per pixel column, and the tallest point of the
    # 32768 sets the top of the plot (320 px high, 12 px top margin, 40 px axis: its y is 12 + 268 − 262)
    points = page.eval_on_selector("#spec-plot svg polyline", "p => p.getAttribute('points').trim().split(' ')")
    width = page.locator("#spec-plot svg").bounding_box()["width"]
    assert len(points) <= 4 * width + 8 < len(want["y"]) / 4
    assert min(float(p.split(",")[1]) for p in points) == 18.0
    page.fill("#spec-threshold", "30")
    page.click("#spec-pick")
    picked = handle({"op": "pick_peaks", "first_x": 10.0, "last_x": 0.0, "x_unit": "ppm", "y": want["y"],
                     "threshold": "30 sigma", "observe_MHz": 400.0})["result"]
    rows = page.locator("#spec-peaks tbody tr")
    expect(rows).to_have_count(len(picked["peaks"]))
    assert not any(abs(p["position"] - 2.5) < 0.01 for p in picked["peaks"])  # below the threshold

    # tap-add the small singlet at 2.50 ppm, then tap-remove it
    page.select_option("#spec-tap-mode", "add")
    _tap(page, 2.5)
    expect(page.locator("#spec-tap-note")).to_contain_text("Peak added at")
    added = float(page.text_content("#spec-tap-note").split(" at ")[1].split()[0])
    # a 1 Hz line at a signal-to-noise ratio of about 16: its top within 0.2 Hz (arithmetic bound, 3 σ)
    assert abs(added - 2.5) < 0.2 / 400
    expect(rows).to_have_count(len(picked["peaks"]) + 1)
    page.select_option("#spec-tap-mode", "remove")
    _tap(page, 2.5)
    expect(page.locator("#spec-tap-note")).to_contain_text("removed")
    expect(rows).to_have_count(len(picked["peaks"]))

    # two regions: the triplet (3 H) against the AB quartet as the reference (2 H)
    regions = [{"from": 1.30, "to": 1.10}, {"from": 4.25, "to": 3.92}]
    for r in regions:
        page.fill("#spec-from", str(r["from"]))
        page.fill("#spec-to", str(r["to"]))
        page.click("#spec-add-region")
    page.fill("#spec-nuclei", "2")
    page.locator("#spec-integrals input[type=radio]").nth(1).check()
    got = handle({"op": "integrate", "first_x": 10.0, "last_x": 0.0, "x_unit": "ppm", "y": want["y"],
                  "regions": regions, "normalize_to": 1, "nuclei": 2, "observe_MHz": 400.0})["result"]["regions"]
    assert abs(got[0]["relative"] - 3) < 4 * got[0]["relative_error"] + 0.05   # 3 : 2 by construction
    rel = page.locator("#spec-integrals td.relative")
    expect(rel.nth(0)).to_have_text(str(float(f"{got[0]['relative']:.4g}")))
    expect(rel.nth(1)).to_have_text("2")

    # the AB region simulated as a spin system: simulated trace over the measured one, residual below
    page.select_option("#spec-model", "spin_system")
    page.fill("#spec-spins", "1H,4.05; 1H,4.12")
    page.fill("#spec-couplings", "A,B,12")
    page.fill("#spec-magnet", "400")
    page.click("#spec-simulate")
    expect(page.locator("#spec-sim-note")).to_contain_text("rms residual")
    expect(page.locator("#spec-region-plot svg polyline")).to_have_count(3)
    expect(page.locator("#spec-region-plot .plot-legend")).to_contain_text("residual")

    # fit the spin system to the trace from starting values a little off
    page.fill("#spec-spins", "1H,4.052; 1H,4.116")
    page.fill("#spec-couplings", "A,B,11")
    page.click("#spec-fit")
    expect(page.locator("#spec-fit-rms")).to_be_visible(timeout=120_000)
    j_text = page.locator("#spec-fit-table tbody tr").nth(2).locator("td").nth(1).text_content()
    J, err = (float(v) for v in j_text.split(" ± "))
    assert abs(J - 12) < max(5 * err, 0.02) and err < 0.1   # the true J of the invented file
    expect(page.locator("#spec-fit-table")).to_contain_text("second order")   # Δν/J = 28/12
    page.click("#spec-fit-use")   # the fitted system becomes the editor's starting point
    a, b, j = page.input_value("#spec-couplings").split(",")
    assert (a, b) == ("0", "1") and abs(float(j) - J) <= 1e-5 * J   # the table shows J to 6 digits
    page.set_viewport_size({"width": 820, "height": 1180})   # a tablet held upright
    page.locator("#card-spectrum").screenshot(path=str(dist / "spectrum-panel-tablet.png"))
    assert all(u.startswith(("file:", "data:", "blob:")) for u in rec.requests), rec.requests
    assert not rec.errors, rec.errors
