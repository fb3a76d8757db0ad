"""Clearing an input never leaves a wrong or broken screen, in every panel that calculates: each text
input of each form is emptied in turn and the form submitted. Either the result is computed without it
(an optional input: the result is current, no error) or the old result is marked stale and the message
sits beside that input, and nowhere else on its card; "undefined" never appears on screen.
One page (the offline single file) is shared by the panels' cases."""

from __future__ import annotations

import pytest
from conftest import BOOT_TIMEOUT_MS

# panels with forms, and what their inputs need first so that there is a result to make stale
PANELS = {
    "magnet": {}, "coupling": {}, "energy": {}, "reference": {"#nuclides-search": "tin"},
    "multiplet": {}, "labels": {}, "spins": {},
    "identify": {"#ident-peaklist": "1224\n1231\n1238\n1245"},
}

STATE = """(node) => {
  const card = node.closest('.card');
  const result = card.querySelector('.result');
  const own = node.closest('.field').querySelector('.field-error');
  const shown = [...card.querySelectorAll('.field-error, .form-error')].filter((e) => e.textContent.trim());
  return { stale: result.classList.contains('stale'), own: own ? own.textContent.trim() : '',
           errors: shown.map((e) => `${e.id}: ${e.textContent.trim()}`), text: card.innerText };
}"""


@pytest.fixture(scope="module")
def page(dist, browser):
    context = browser.new_context(viewport={"width": 1280, "height": 900})
    context.route("**/*", lambda route: route.continue_() if route.request.url.startswith("file:") else route.abort())
    page = context.new_page()
    errors = []
    page.on("pageerror", lambda error: errors.append(str(error)))
    page.goto((dist / "nmrcalc.html").resolve().as_uri())
    page.wait_for_selector("#boot[data-state=ready]", state="attached", timeout=BOOT_TIMEOUT_MS)
    yield page, errors
    context.close()


def _submit(page, form):
    form.locator("button[type=submit]").click()
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    page.wait_for_timeout(50)  # the reply is drawn after the pending count drops


@pytest.mark.parametrize("panel", list(PANELS))
def test_clearing_an_input(page, panel):
    page, errors = page
    errors.clear()
    page.click(f"#tab-{panel}")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    for selector, value in PANELS[panel].items():
        page.fill(selector, value)
    forms = [f for f in page.locator(f"#panel-{panel} form").all() if f.locator("button[type=submit]").count()]
    assert forms, panel
    checked = 0
    for form in forms:
        for box in form.locator("input[type=text]:visible, textarea:visible").all():
            typed = box.input_value()
            if typed == "":
                continue
            _submit(page, form)
            before = box.evaluate(STATE)
            assert not before["errors"] and not before["stale"], (box.get_attribute("id"), before["errors"])
            box.fill("")
            _submit(page, form)
            after = box.evaluate(STATE)
            where = box.get_attribute("id")
            assert "undefined" not in after["text"], (where, after["text"][:400])
            if after["errors"] or after["stale"]:
                assert after["stale"], (where, "an error without a stale result", after["errors"])
                assert after["own"], (where, "the message is not beside the cleared input", after["errors"])
                assert len(after["errors"]) == 1, (where, after["errors"])
            box.fill(typed)
            checked += 1
        _submit(page, form)
    assert checked, f"no input checked in {panel}"
    assert not errors, errors
