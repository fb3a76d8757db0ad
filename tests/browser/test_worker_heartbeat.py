"""A worker that stops without an error event (terminated from outside, as a killed worker would be)
is noticed by the page's heartbeat: a calculation sent to it fails with a message beside its panel
instead of waiting forever, Python restarts, the status line says so, the inputs are kept and the
next calculation gives its result; a worker that stops while idle is replaced before the next call, and
one that stops in the middle of a calculation is noticed by its silence.
The test reaches the worker through the page's documented test hook (window.nmrcalcTest.worker()).

Expected numbers come from nmrcalc.api.handle on CPython (the physics is tested elsewhere)."""

from __future__ import annotations

from playwright.sync_api import expect

from nmrcalc.api import handle

WANT = handle({"op": "scale_coupling", "J": "32", "from": "2H", "to": "1H", "partner": "13C"})["result"]


def _restarted(page, times: int):
    page.wait_for_function(f"() => window.nmrcalcStatus.restarts === {times} && window.nmrcalcStatus.state === 'ready'"
                           " && document.getElementById('boot').dataset.state === 'ready'", timeout=90_000)
    expect(page.locator("#boot-text")).to_contain_text("restarted")


def test_silently_stopped_worker_is_noticed_and_restarted(dist, open_page):
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    page = rec.page
    page.click("#tab-coupling")
    page.fill("#scale-J", "32")
    page.fill("#scale-from", "2H")
    page.fill("#scale-to", "1H")
    page.fill("#scale-partner", "13C")
    page.click("#form-scale button[type=submit]")
    expect(page.locator("#scale-result")).to_contain_text(f"{WANT['J_Hz']:#.5g}")

    # stopped, then a calculation at once: it fails with a message beside the panel, Python restarts
    page.evaluate("nmrcalcTest.worker().terminate()")
    page.click("#form-scale button[type=submit]")
    expect(page.locator("#scale-form-error")).to_contain_text("restarted", timeout=20_000)
    _restarted(page, 1)
    expect(page.locator("#scale-J")).to_have_value("32")
    page.click("#form-scale button[type=submit]")
    expect(page.locator("#scale-form-error")).to_be_empty()
    expect(page.locator("#scale-result")).to_contain_text(f"{WANT['J_Hz']:#.5g}")
    expect(page.locator("#scale-result")).not_to_have_class("result stale")

    # stopped while idle: replaced without any call, and the next call simply works
    page.evaluate("nmrcalcTest.worker().terminate()")
    _restarted(page, 2)
    page.fill("#scale-J", "19.3")
    page.click("#form-scale button[type=submit]")
    want = handle({"op": "scale_coupling", "J": "19.3", "from": "2H", "to": "1H", "partner": "13C"})["result"]
    expect(page.locator("#scale-result")).to_contain_text(f"{want['J_Hz']:#.5g}")
    expect(page.locator("#scale-form-error")).to_be_empty()

    # a long calculation is not mistaken for a dead worker (it answers no ping while Python runs)
    reply = page.evaluate("""() => nmrcalcTest.api({op: "spin_system", observe: "1H", spectrometer: "400 MHz",
        spins: Array.from({length: 9}, (_, k) => ({nucleus: "1H", shift: `${1 + 0.11 * k} ppm`})),
        couplings: Array.from({length: 8}, (_, k) => ({between: [k, k + 1], J: "7 Hz"}))
          .concat(Array.from({length: 7}, (_, k) => ({between: [k, k + 2], J: "1.5 Hz"})))})""")
    assert reply["ok"], reply
    assert page.evaluate("window.nmrcalcStatus.restarts") == 2

    # stopped in the middle of a calculation (after it answered the heartbeat and started): the
    # silence is noticed (the limit shortened from 180 s to 3 s for the test), the call fails, Python restarts
    # (10 spins, every pair coupled: several seconds in the page on any machine, so still running at 1.5 s)
    page.evaluate("nmrcalcTest.setSilentLimit(3000)")
    page.evaluate("""() => { window.__midCall = nmrcalcTest.api({op: "spin_system", observe: "1H", spectrometer: "400 MHz",
        spins: Array.from({length: 10}, (_, k) => ({nucleus: "1H", shift: `${1 + 0.2 * k} ppm`})),
        couplings: Array.from({length: 10}, (_, i) => Array.from({length: 9 - i}, (_, d) => (
          {between: [i, i + d + 1], J: `${2 + ((7 * i + 3 * d) % 8)} Hz`}))).flat()}); }""")
    page.wait_for_timeout(1500)
    page.evaluate("nmrcalcTest.worker().terminate()")
    reply = page.evaluate("() => window.__midCall")
    assert not reply["ok"] and reply["error"]["code"] == "worker_restarted", reply
    _restarted(page, 3)
    page.click("#form-scale button[type=submit]")
    expect(page.locator("#scale-form-error")).to_be_empty()
    expect(page.locator("#scale-result")).to_contain_text(f"{want['J_Hz']:#.5g}")
    assert not rec.errors, rec.errors
