"""Measured spectra: ``read_spectrum``, ``pick_peaks`` and ``fit_spin_system``.

``read_spectrum``: ``text`` (the file's contents) and ``filename``; a JCAMP-DX
file (``##TITLE=`` present) goes to ``nmrcalc.physics.jcamp``, anything else to
the two-column reader (``x_unit`` names the unit when no header does).  With x
in Hz and the file's ``.SHIFT REFERENCE`` or a request ``reference``
(``{"x": position in the file's unit, "shift_ppm": δ}``) and an observe
frequency, ``first_ppm``/``last_ppm`` give the ppm scale: δ = δ_ref + (x − x_ref)/ν_obs.

``pick_peaks``: ``first_x``, ``last_x``, ``x_unit``, ``y``, ``observe_MHz``
(needed to give widths in Hz when x is in ppm) and ``threshold`` ("5 sigma" or a number).

``fit_spin_system``: a ``spin_system`` request (spins with starting shifts,
couplings with starting J, ``observe``, ``spectrometer``) plus ``lines``
(``position`` in ppm, or a string "1234.5 Hz"; ``intensity``) and ``vary``
(``shifts`` and/or ``couplings``); shifts of the observed nucleus and every
given coupling are fitted (``nmrcalc.physics.spin_fit``).  Or, instead of
``lines``, a region's trace (``first_x``, ``last_x``, ``x_unit``, ``y``, with
``baseline`` and a starting ``linewidth``, both optional): the spin system's
exact spectrum is fitted to the points (``nmrcalc.physics.trace_fit``), with an
intensity scale always and the width when ``vary`` has ``linewidth``; the
result adds the width, the scale, each with its standard error, the rms
residual in intensity units, the simulated trace (on the measured trace's
level) and the residual.
"""

from __future__ import annotations

import math
import re
from typing import Any

from nmrcalc.api.fields import in_range, magnet, nucleus, quantity, require
from nmrcalc.api.params import MAGNET, Op, Param
from nmrcalc.api.spin_system_ops import DECLARED as SPIN_DECLARED
from nmrcalc.api.spin_system_ops import _couplings, _ref_MHz, _spins
from nmrcalc.errors import InputError
from nmrcalc.physics.jcamp import MAX_POINTS, read_jcamp
from nmrcalc.physics.peaks import measure, pick
from nmrcalc.physics.spectrum_text import read_two_column
from nmrcalc.physics.spin_fit import MAX_FIT_STATES, fit
from nmrcalc.physics.spin_system import Site, equivalence_caveats, first_order_checks
from nmrcalc.physics.trace_fit import MAX_POINTS as TRACE_MAX_POINTS
from nmrcalc.physics.trace_fit import fit_trace

MAX_TEXT_CHARS = 16_000_000
MAX_LINES = 64
TRACE_POINTS = TRACE_MAX_POINTS
MAX_ORDINATE = 1e100  # any intensity unit, but sums of squares stay finite


def _number(req: dict, key: str, prefix: str = "") -> float:
    value = require(req, key, prefix)
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"'{key}' must be a number.", prefix + key)
    return in_range(float(value), prefix + key)


def _unit(req: dict, key: str = "x_unit", default: str | None = None) -> str | None:
    u = req.get(key, default)
    if u is None:
        return None
    if u not in ("Hz", "ppm"):
        raise InputError(f"'{key}' must be \"Hz\" or \"ppm\".", key)
    return u


def op_read_spectrum(req: dict, warnings: list[str]) -> dict:
    text = require(req, "text")
    name = req.get("filename", "")
    default_unit = _unit(req)
    reference = req.get("reference")
    if not isinstance(text, str) or len(text) > MAX_TEXT_CHARS:
        raise InputError("'text' must be the file's contents as text.", "text")
    if not isinstance(name, str):
        raise InputError("'filename' must be text.", "filename")
    if reference is not None and not (isinstance(reference, dict) and {"x", "shift_ppm"} <= set(reference)):
        raise InputError("'reference' must be {\"x\": position, \"shift_ppm\": shift}.", "reference")
    ref = None if reference is None else (_number(reference, "x", "reference."),
                                          _number(reference, "shift_ppm", "reference."))
    s = read_jcamp(text) if re.search(r"^\s*##TITLE\s*=", text, re.M) else read_two_column(text, default_unit)
    out: dict[str, Any] = {
        "title": s.title or name, "nucleus": s.nucleus, "observe_MHz": s.observe_MHz, "npoints": s.npoints,
        "x_unit": s.x_unit, "first_x": s.first_x, "last_x": s.last_x, "y": s.y, "checks": s.checks,
        "reference": None}
    if s.imaginary is not None:
        out["imaginary"] = s.imaginary
    if s.peaks is not None:
        out["peaks"] = [{"position": x, "height": y} for x, y in s.peaks]
    if ref is None and s.shift_reference and s.y:
        k = s.shift_reference["point"] - 1
        if 0 <= k < len(s.y):
            ref = (s.first_x + k * (s.last_x - s.first_x) / max(1, len(s.y) - 1), s.shift_reference["shift_ppm"])
            out["reference"] = {"x": ref[0], "shift_ppm": ref[1], "source": f"file: {s.shift_reference['name']}"}
        else:
            warnings.append(f"The file's .SHIFT REFERENCE names point {k + 1}, outside 1 to {len(s.y)}: "
                            "not used; set the reference by hand.")
    elif ref is not None:
        out["reference"] = {"x": ref[0], "shift_ppm": ref[1], "source": "request"}
    if s.x_unit == "ppm":
        out["first_ppm"], out["last_ppm"] = (s.first_x, s.last_x) if ref is None else (
            s.first_x + ref[1] - ref[0], s.last_x + ref[1] - ref[0])
    elif ref is not None and s.observe_MHz:
        out["first_ppm"] = ref[1] + (s.first_x - ref[0]) / s.observe_MHz
        out["last_ppm"] = ref[1] + (s.last_x - ref[0]) / s.observe_MHz
    elif s.x_unit == "Hz":
        warnings.append("x is in Hz with no reference: set 0 ppm with a known peak or an offset.")
    return out


def samples(req: dict) -> tuple[float, float, str, list[float]]:
    """(first_x, last_x, x_unit, y) of an evenly sampled trace in a request, checked."""
    first_x, last_x = _number(req, "first_x"), _number(req, "last_x")
    x_unit = _unit(req) or require(req, "x_unit")
    y = require(req, "y")
    # C-level passes (types, then min/max, then a sum that is NaN or infinite if any value is):
    # a 256k-point trace is checked in milliseconds
    if not isinstance(y, list) or not set(map(type, y)) <= {int, float} or (
            y and not (-MAX_ORDINATE <= min(y) and max(y) <= MAX_ORDINATE and math.isfinite(math.fsum(y)))):
        raise InputError(f"'y' must be a list of numbers of size at most {MAX_ORDINATE:g}.", "y")
    if len(y) > MAX_POINTS:
        raise InputError(f"At most {MAX_POINTS} points.", "y", "too_large")
    if len(y) < 2 or first_x == last_x:
        raise InputError("A spectrum needs at least 2 points and first_x ≠ last_x.", "y")
    return first_x, last_x, x_unit, y


def observe_frequency(req: dict, x_unit: str, why: str) -> float | None:
    """``observe_MHz`` of a request; required (``why`` says for what) when x is in ppm."""
    if req.get("observe_MHz") is not None:
        return quantity(req, "observe_MHz", "frequency", positive=True)
    if x_unit == "ppm":
        raise InputError(f"x is in ppm: give 'observe_MHz' {why}.", "observe_MHz", "missing_field")
    return None


def op_pick_peaks(req: dict, warnings: list[str]) -> dict:
    first_x, last_x, x_unit, y = samples(req)
    observe = observe_frequency(req, x_unit, "so that widths come out in Hz")
    threshold = req.get("threshold", "5 sigma")
    m = re.fullmatch(r"\s*([0-9.]+)\s*(?:sigma|σ)?\s*", str(threshold))
    if not m or not 0 < float(m.group(1)) <= 1e6:
        raise InputError("'threshold' is a multiple of the noise, e.g. \"5 sigma\".", "threshold")
    dx = (last_x - first_x) / (len(y) - 1)
    to_Hz = observe if observe is not None and x_unit == "ppm" else 1.0
    found = pick(first_x, dx, y, float(m.group(1)))
    peaks = [{"position": p["position"], "height": p["height"], "width_Hz": p["width"] * to_Hz,
              "integral": p["integral"]} for p in found["peaks"]]
    if not peaks:
        warnings.append("No peak rises above the threshold.")
    return {"peaks": peaks, "noise": found["noise"], "baseline": found["baseline"], "x_unit": x_unit,
            "threshold": float(m.group(1))}


def _line_Hz(line: Any, k: int, ref_MHz: float) -> float:
    pos = line.get("position") if isinstance(line, dict) else None
    if isinstance(pos, str) and pos.strip().lower().endswith("hz"):
        return quantity(line, "position", "coupling", prefix=f"lines.{k}.")
    return quantity(line, "position", "shift", prefix=f"lines.{k}.") * ref_MHz


def _checks(sites: list[Site], couplings: list[tuple[int, int, float]], proton_MHz: float) -> list[dict]:
    return [{"pair": list(c["pair"]), "delta_nu_Hz": c["delta_nu_Hz"], "J_Hz": c["J_Hz"],
             "delta_nu_over_J": c["delta_nu_over_J"], "first_order": c["first_order"]}
            for c in first_order_checks(sites, couplings, spectrometer_1H_MHz=proton_MHz)]


def _trace_input(req: dict, ref: float) -> tuple[list[float], list[float], float, float | None]:
    """x (Hz from 0 ppm of the observed nucleus), y, baseline and the starting width of a trace fit."""
    first_x, last_x, x_unit, y = samples(req)
    to_Hz = ref if x_unit == "ppm" else 1.0
    dx = (last_x - first_x) / (len(y) - 1)
    x = [(first_x + k * dx) * to_Hz for k in range(len(y))]
    base = 0.0 if req.get("baseline") is None else _number(req, "baseline")
    width = quantity(req, "linewidth", "coupling", positive=True) if req.get("linewidth") is not None else None
    if width is None:
        top = max(range(len(y)), key=lambda k: y[k])
        width = measure(0.0, dx, y, top, base)["width"] * to_Hz or None
    return x, y, base, width


def op_fit_spin_system(req: dict, warnings: list[str]) -> dict:
    observe = nucleus(req, "observe")
    spins = _spins(req)
    couplings = _couplings(req, len(spins))
    field_T, proton_MHz = magnet(req, warnings)
    lines: Any = req.get("lines")
    vary = req.get("vary", ["shifts", "couplings"])
    if isinstance(vary, str):
        vary = [v.strip() for v in vary.split(",") if v.strip()]
    on_trace = req.get("y") is not None
    if on_trace == (lines is not None):
        both = on_trace
        raise InputError("Give either 'lines' (measured positions) or a trace ('first_x', 'last_x', 'x_unit', "
                         f"'y'){', not both' if both else ''}.", "y" if both else "lines",
                         "invalid_value" if both else "missing_field")
    stray = [k for k in ("first_x", "last_x", "x_unit", "baseline", "linewidth") if req.get(k) is not None]
    if not on_trace and stray:
        raise InputError(f"'{stray[0]}' belongs to a trace fit (with 'y'); a fit to 'lines' does not use it.",
                         stray[0])
    if not on_trace and (not isinstance(lines, list) or not all(isinstance(ln, dict) for ln in lines)):
        raise InputError("'lines' must be a list of {position, intensity}.", "lines")
    if not on_trace and len(lines) > MAX_LINES:
        raise InputError(f"At most {MAX_LINES} lines.", "lines", "too_large")
    allowed = {"shifts", "couplings", "linewidth"} if on_trace else {"shifts", "couplings"}
    if not isinstance(vary, list) or not vary or not set(vary) <= allowed:
        raise InputError("'vary' lists " + ", ".join(f'"{v}"' for v in sorted(allowed)) + ".", "vary")
    ref = _ref_MHz(observe, field_T, proton_MHz)
    refs = [_ref_MHz(nuc, field_T, proton_MHz) for nuc, _, _ in spins]
    sites = [Site(nuc.symbol, nuc.spin, shift * r, count) for (nuc, shift, count), r in zip(spins, refs)]
    shift_sites = [i for i, (nuc, _, _) in enumerate(spins) if nuc.symbol == observe.symbol] \
        if "shifts" in vary else []
    coupling_idx = list(range(len(couplings))) if "couplings" in vary else []
    extra: dict[str, Any] = {}
    if on_trace:
        x, y, base, width = _trace_input(req, ref)
        if width is None:
            raise InputError("The region's highest peak has no measurable width: give 'linewidth'.", "linewidth",
                             "missing_field")
        fit_width = "linewidth" in vary
        if not (shift_sites or coupling_idx or fit_width):
            raise InputError("Nothing to fit: choose shifts, couplings and/or linewidth in 'vary'.", "vary")
        result = fit_trace(sites, couplings, observe.symbol, x, y, base, width, shift_sites, coupling_idx,
                           fit_width)
        p, err = result["params"], result["errors"]
        n = len(shift_sites) + len(coupling_idx)
        extra = {"linewidth_Hz": result["width_Hz"], "linewidth_error_Hz": (err[n] if err else None)
                 if fit_width else None, "linewidth_fitted": fit_width, "scale": result["scale"],
                 "scale_error": err[-1] if err else None, "rms_residual": result["rms"],
                 "relative_rms": result["rms"] / max(abs(v - base) for v in y) if any(v != base for v in y) else None,
                 "simulated": [base + v for v in result["model"]], "residual": result["residual"],
                 "baseline": base}
        warnings.append("Standard errors assume independent noise on every point: for a zero-filled or apodized "
                        "spectrum they are too small.")
    else:
        measured = [(_line_Hz(ln, k, ref), quantity(ln, "intensity", "percent", default=1.0, prefix=f"lines.{k}."))
                    for k, ln in enumerate(lines)]
        result = fit(sites, couplings, observe.symbol, measured, shift_sites, coupling_idx)
        p, err = result["params"], result["errors"]
        if not result["converged"]:
            warnings.append("The line assignment was still changing when the fit stopped: check the starting "
                            "shifts and couplings, or fit fewer lines.")
        extra = {"rms_Hz": result["rms_Hz"],
                 "residuals": [{"position_Hz": xm, "assigned_Hz": a, "residual_Hz": r} for (xm, _), a, r
                               in zip(measured, result["assigned_Hz"], result["residuals_Hz"])]}
    if err is None:
        warnings.append("As many parameters as data points: the standard errors are undefined.")
    fitted = dict(zip(shift_sites, p))
    out_spins: list[dict[str, Any]] = []
    for i, (nuc, shift, count) in enumerate(spins):
        k = shift_sites.index(i) if i in fitted else None
        out_spins.append({"nucleus": nuc.symbol, "count": count,
                          "shift_ppm": fitted[i] / refs[i] if k is not None else shift,
                          "error_ppm": (err[k] / refs[i] if err else None) if k is not None else None,
                          "fitted": k is not None})
    out_couplings: list[dict[str, Any]] = []
    for c, (a, b, J) in enumerate(couplings):
        k = len(shift_sites) + coupling_idx.index(c) if c in coupling_idx else None
        out_couplings.append({"between": [a, b], "J_Hz": p[k] if k is not None else J,
                              "error_Hz": (err[k] if err else None) if k is not None else None,
                              "fitted": k is not None})
    if coupling_idx and equivalence_caveats(sites, couplings, shift_tol_Hz=1e-3):
        warnings.append("Chemically equivalent spins couple differently (AA′XX′-type): couplings related by "
                        "symmetry are fitted separately, so only their means are well determined.")
    new_sites = [Site(s.nucleus, s.spin, fitted.get(i, s.offset_Hz), s.count) for i, s in enumerate(sites)]
    new_couplings = [(c["between"][0], c["between"][1], c["J_Hz"]) for c in out_couplings]
    return {"observe": observe.symbol, "on": "trace" if on_trace else "lines", "spins": out_spins,
            "couplings": out_couplings, "checks": _checks(new_sites, new_couplings, proton_MHz),
            "iterations": result["iterations"], **extra}


_SPIN_PARAMS = SPIN_DECLARED["spin_system"].keys()
_EXAMPLE_TEXT = "ppm,intensity\n" + "".join(f"{2 - k / 100},{1 if k == 100 else 0}\n" for k in range(201))

DECLARED = {
    "read_spectrum": Op(
        "read_spectrum", "read a measured spectrum: JCAMP-DX (XYDATA, NTUPLES, PEAK TABLE) or two-column text",
        cli="spectrum", limits=f"{MAX_TEXT_CHARS} characters; {MAX_POINTS} points", params=(
            Param("text", "text", required=True, max_chars=MAX_TEXT_CHARS, file=True, cli="FILE", label="File",
                  help="the file's contents (JCAMP-DX or two columns: x, intensity)", example=_EXAMPLE_TEXT),
            Param("filename", "text", label="File name", help="shown as the title when the file has none",
                  example="invented.csv"),
            Param("x_unit", "choice", choices=("Hz", "ppm"), label="x unit",
                  help="unit of x in a two-column file without a header"),
            Param("reference", "value", label="Reference",
                  help="{x: position in the file's unit, shift_ppm: its shift}: sets the ppm scale"),
        )),
    "pick_peaks": Op(
        "pick_peaks", "pick peaks of a sampled spectrum: noise, positions, heights, widths, integrals", cli="-",
        limits=f"{MAX_POINTS} points", params=(
            Param("first_x", "number", required=True, label="First x", help="x of the first point", example=2.0),
            Param("last_x", "number", required=True, label="Last x", help="x of the last point", example=0.0),
            Param("x_unit", "choice", choices=("Hz", "ppm"), required=True, label="x unit", help="Hz or ppm",
                  example="ppm"),
            Param("y", "value", required=True, label="Ordinates", help="the evenly spaced ordinates",
                  example=[1.0 / (1 + ((k - 100) / 2) ** 2) + 0.001 * ((k * 7919) % 13 - 6) for k in range(201)]),
            Param("observe_MHz", "quantity", unit="frequency", label="Observe frequency",
                  help="needed for widths in Hz when x is in ppm", example="400.13 MHz"),
            Param("threshold", "text", default="5 sigma", label="Threshold",
                  help="a multiple of the noise, e.g. '5 sigma'"),
        )),
    "fit_spin_system": Op(
        "fit_spin_system", "fit a spin system's shifts and couplings to measured line positions or to a "
        "region's trace (least squares)",
        cli="fit", one_of=(("spectrometer", "field"), ("lines", "y"), ("lines", "x_unit"), ("lines", "linewidth")),
        limits=f"{MAX_LINES} lines; {TRACE_POINTS} trace points; {MAX_FIT_STATES} states after factoring",
        params=(
            _SPIN_PARAMS["observe"], _SPIN_PARAMS["spins"], _SPIN_PARAMS["couplings"], *MAGNET,
            Param("lines", "objects", max_items=MAX_LINES, label="Measured lines",
                  help="positions (ppm, or '1234.5 Hz') and intensities, e.g. '7.012:1,7.031:1'", cli="--lines",
                  cli_order=("position", "intensity"), cli_sep=":",
                  example=[{"position": 0.99, "intensity": 1}, {"position": 1.0, "intensity": 1},
                           {"position": 1.09, "intensity": 1}, {"position": 1.1, "intensity": 1}], items=(
                Param("position", "value", required=True, label="Position", help="ppm, or text with Hz"),
                Param("intensity", "number", label="Intensity", help="height or integral"),
            )),
            Param("first_x", "number", label="First x", help="trace fit: x of the region's first point", cli="-"),
            Param("last_x", "number", label="Last x", help="trace fit: x of the region's last point", cli="-"),
            Param("x_unit", "choice", choices=("Hz", "ppm"), label="x unit",
                  help="trace fit: ppm, or Hz from the observed nucleus's 0 ppm", cli="-"),
            Param("y", "value", label="Ordinates", help="trace fit: the region's evenly spaced ordinates "
                  "(instead of 'lines')", cli="-"),
            Param("baseline", "number", label="Baseline", help="trace fit: level subtracted from y", cli="-"),
            Param("linewidth", "quantity", unit="coupling", label="Line width",
                  help="trace fit: starting (or fixed) full width at half height; default from the region's "
                       "highest peak", cli="-"),
            Param("vary", "texts", default=["shifts", "couplings"], label="Vary", max_items=3,
                  help="'shifts', 'couplings' and (trace fit) 'linewidth'", example=["shifts", "couplings"]),
        )),
}

OPS = {"read_spectrum": op_read_spectrum, "pick_peaks": op_pick_peaks, "fit_spin_system": op_fit_spin_system}
