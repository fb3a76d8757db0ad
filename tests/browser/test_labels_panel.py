"""Multiplet builder with an equivalent partner, per-site enrichment and an offered isotope shift;
the solvents & deuteration panel: search by shift, load into the builder, both deuteration routes."""

from pathlib import Path

from playwright.sync_api import expect

from nmrcalc.api import handle

SHOTS = Path(__file__).resolve().parents[2] / "bench_results" / "tmp"  # screenshots to look at, not kept


def _open(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    rec.context.route("**/*", lambda route: route.continue_() if route.request.url == url else route.abort())
    return rec.page


def test_labelled_methyl_and_isotope_shift(dist, open_page):
    page = _open(dist, open_page)
    page.set_viewport_size({"width": 1024, "height": 1366})
    page.click("#tab-multiplet")
    page.fill("#mult-observe", "13C")
    page.fill("#mult-magnet", "400")
    page.select_option("#mult-magnet-unit", "MHz")
    page.fill("#mult-center", "29.8")
    page.fill("#mult-g0-partner", "H")
    page.fill("#mult-g0-count", "3")
    page.fill("#mult-g0-J", "19.3")
    page.fill("#mult-g0-jiso", "2H")
    page.fill("#mult-g0-siso", "2H")
    page.fill("#mult-g0-spct", "60")
    page.click("#form-mult button[type=submit]")
    offer = page.locator("#mult-rules button").first
    expect(offer).to_contain_text("ppm per 2H")
    offer.click()
    expect(page.locator("#mult-g0-shppm")).to_have_value("-0.3")
    want = handle({"op": "multiplet", "observe": "13C", "spectrometer": "400 MHz", "center": "29.8 ppm",
                   "groups": [{"partner": "H", "count": 3, "J": "19.3 Hz", "J_isotope": "2H",
                               "abundance": {"2H": "60"}, "isotope_shift": {"2H": "-0.3 ppm"}}]})["result"]
    rows = page.locator("#mult-isotopologues tbody tr")
    expect(rows).to_have_count(len(want["isotopologues"]))
    expect(rows.first).to_contain_text(f"{want['isotopologues'][0]['center_ppm']:.4f}")
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.locator("#card-mult").screenshot(path=str(SHOTS / "multiplet-isotope-shift.png"))
    # the builder's isotopologue shares go to the deuteration section: 60 % D back (binomial, Feller)
    page.click("#tab-labels")
    page.click("#deut-from-builder")
    expect(page.locator("#deut-integrals .headline")).to_contain_text("D = 60.00")
    page.click("#tab-multiplet")

    # observed 1H of a partly deuterated methyl: the rule is stated
    page.fill("#mult-observe", "1H")
    page.fill("#mult-g0-count", "2")
    page.fill("#mult-g0-J", "2.2")
    page.fill("#mult-g0-shiso", "")
    page.click("#form-mult button[type=submit]")
    expect(page.locator("#mult-rules .rule")).to_contain_text("do not split each other")


def test_solvent_search_and_deuteration(dist, open_page):
    page = _open(dist, open_page)
    page.set_viewport_size({"width": 1024, "height": 1366})
    page.click("#tab-labels")
    page.fill("#solvents-query", "2.50")
    page.click("#form-solvents button[type=submit]")
    first = page.locator("#solvents-result tbody tr").first
    expect(first).to_contain_text("DMSO-d6")
    expect(first).to_contain_text("1:2:3:2:1 quintet")
    page.fill("#deut-residual", "0.05")
    page.click("#form-deut button[type=submit]")
    expect(page.locator("#deut-integrals .headline")).to_contain_text("D =")
    expect(page.locator("#deut-residual .headline")).to_contain_text("95.00")
    page.locator("#tab-panel-labels, main").first.screenshot(path=str(SHOTS / "labels-panel.png"))
    first.locator("button").click()
    expect(page.locator("#tab-multiplet")).to_have_attribute("aria-selected", "true")
    expect(page.locator("#mult-ratio")).to_contain_text("1:2:3:2:1")


def test_T1_slider_collapses_the_spectrum(dist, open_page):
    page = _open(dist, open_page)
    page.set_viewport_size({"width": 1024, "height": 1366})
    page.click("#tab-multiplet")
    page.get_by_role("button", name="Made-up ammonium salt: 14N splitting partly collapsed").click()
    expect(page.locator("#mult-collapse")).to_contain_text("T1 = 5 ms")
    page.locator("#mult-g0-t1-slider").fill("-1")
    expect(page.locator("#mult-g0-t1")).to_have_value("0.1")
    expect(page.locator("#mult-collapse")).to_contain_text("T1 = 0.1 ms")
    page.locator("#card-mult").screenshot(path=str(SHOTS / "multiplet-T1.png"))
