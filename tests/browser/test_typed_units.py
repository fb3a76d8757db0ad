"""Typed units in the page: every row of the one table (tests/quantity_table.py) typed into
its field of its panel, computed, and the value the API read checked in SI.  The page sends
the text as typed; the request and reply are read where they cross to the worker."""

from __future__ import annotations

import math

from playwright.sync_api import expect
from quantity_table import FIELDS, REFUSED, TABLE

# Record each call to the worker and its reply, before the page's own scripts start it.
RECORD_CALLS = """(() => {
  const Base = window.Worker;
  window.__calls = {};
  function Recording(...args) {
    const worker = new Base(...args);
    const post = worker.postMessage.bind(worker);
    worker.postMessage = (message, ...rest) => {
      if (message && message.type === "call") window.__calls[message.id] = { req: JSON.parse(message.text) };
      return post(message, ...rest);
    };
    worker.addEventListener("message", (event) => {
      const data = event.data;
      if (data && data.type === "reply" && window.__calls[data.id]) window.__calls[data.id].res = JSON.parse(data.text);
    });
    return worker;
  }
  Recording.prototype = Base.prototype;
  window.Worker = Recording;
})();"""

# The reply to the latest call of `op` whose request carries `text` at `path` (dotted), or null.
FIND_REPLY = """([op, path, text]) => {
  const at = (obj, keys) => keys.reduce((o, k) => (o == null ? undefined : o[k]), obj);
  const hits = Object.values(window.__calls).filter((c) => c.res && c.req.op === op && at(c.req, path.split(".")) === text);
  return hits.length ? hits[hits.length - 1].res : null;
}"""


def _type(page, field, text):
    tab, input_id, selects, form = FIELDS[field]["page"]
    page.click(f"#tab-{tab}")
    for button in FIELDS[field].get("clicks", []):
        page.click(f"#{button}")
    for select, option in selects.items():
        page.select_option(f"#{select}", option)
    for other, value in FIELDS[field].get("prefill", {}).items():
        page.fill(f"#{other}", value)
    page.fill(f"#{input_id}", text)
    page.click(f"#form-{form} button[type=submit]")
    handle = page.wait_for_function(FIND_REPLY, arg=[FIELDS[field]["request"]["op"], FIELDS[field]["key"], text], timeout=30_000)
    return handle.json_value()


def _reset_magnet(page):
    page.click("#tab-magnet")
    page.select_option("#freqs-magnet-unit", "MHz")
    page.fill("#freqs-magnet", "400")


def test_every_quantity_field_reads_what_is_typed(dist, open_page):
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    rec.context.add_init_script(RECORD_CALLS)
    rec.page.reload()
    rec.wait_ready()
    page = rec.page
    for field, text, si in TABLE:
        if not field.startswith("magnet"):
            _reset_magnet(page)
        response = _type(page, field, text)
        assert response["ok"], (field, text, response["error"])
        assert math.isclose(FIELDS[field]["si"](response["result"]), si, rel_tol=1e-9), (field, text)
        # and no error is shown beside the field
        expect(page.locator(f"#{FIELDS[field]['page'][1]}-error")).to_be_empty()
    for field, text, hint in REFUSED:
        if not field.startswith("magnet"):
            _reset_magnet(page)
        response = _type(page, field, text)
        assert not response["ok"] and hint in response["error"]["message"]
        expect(page.locator(f"#{FIELDS[field]['page'][1]}-error")).to_contain_text(hint)
    assert not rec.errors, rec.errors
