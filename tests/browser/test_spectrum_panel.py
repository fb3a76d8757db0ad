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
