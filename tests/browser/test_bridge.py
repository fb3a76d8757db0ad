"""The worker's Python bridge (web/bridge.py), run on CPython: JSON text in, JSON text out."""

import importlib.util
import json
from pathlib import Path

from nmrcalc.api import handle

spec = importlib.util.spec_from_file_location("nmrcalc_bridge", Path(__file__).resolve().parents[2] / "web" / "bridge.py")
bridge_module = importlib.util.module_from_spec(spec)
spec.loader.exec_module(bridge_module)


def test_bridge_passes_the_request_to_handle():
    request = {"op": "frequency", "nucleus": "15N", "field": "11.7 T"}
    assert json.loads(bridge_module.bridge(json.dumps(request))) == json.loads(json.dumps(handle(request)))


def test_bridge_reports_bad_json_without_raising():
    reply = json.loads(bridge_module.bridge("{not json"))
    assert reply["ok"] is False and reply["error"]["code"] == "bad_request"


def test_bridge_passes_api_errors_through():
    reply = json.loads(bridge_module.bridge(json.dumps({"op": "frequency", "nucleus": "13C", "spectrometer": "x MHz"})))
    assert reply["ok"] is False and reply["error"]["field"] == "spectrometer"
