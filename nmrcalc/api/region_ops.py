"""Regions of a measured spectrum: ``peak_at``, ``integrate`` and ``compare_region``.

Every op takes an evenly sampled trace as ``first_x``, ``last_x``, ``x_unit``
and ``y`` (as ``pick_peaks`` does); the page sends the scale it shows (ppm once
the spectrum is referenced).

``peak_at``: the peak in a short window of points around a tap on the trace (the
window is the tap's reach): its highest point, measured as ``pick_peaks``
measures (``nmrcalc.physics.peaks``) above ``baseline``.

``integrate``: the whole trace and ``regions`` ([{from, to}] in the x unit);
each region's trapezoid integral above the trace's level baseline, with the
noise's standard error (σ from the signal-free parts of the trace,
``peaks.noise``), and relative integrals: ``normalize_to`` (index of a region)
holding ``nuclei`` (``nmrcalc.physics.regions``).

``compare_region``: one region's points and a model — ``model: "multiplet"``
(``observe``, ``groups``, optional ``center`` in the x unit: default the
best centre by least squares, started at the region's centroid) or ``"spin_system"`` (``spins``, ``couplings``,
``spectrometer``/``field``; x must be in ppm) — drawn on the region's points
with ``linewidth`` (default: the width at half height of the region's highest
peak) and scaled to the region's integral above ``baseline``; the residual is
y − baseline − scale·model; ``simulated`` is baseline + scale·model, on the
measured trace's own level, to draw over it.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from nmrcalc.api.fields import quantity
from nmrcalc.api.multiplet_ops import DECLARED as MULTIPLET_DECLARED
from nmrcalc.api.multiplet_ops import op_multiplet
from nmrcalc.api.params import MAGNET, Op, Param, check
from nmrcalc.api.spectrum_ops import MAX_ORDINATE, _number, observe_frequency, samples
from nmrcalc.api.spin_system_ops import DECLARED as SPIN_DECLARED
from nmrcalc.api.spin_system_ops import op_spin_system
from nmrcalc.errors import InputError
from nmrcalc.physics import peaks, regions

MAX_REGIONS = 64
MAX_WINDOW = 4096
MAX_REGION_POINTS = 65_536
MAGNET_KEYS = tuple(p.key for p in MAGNET)
ERROR_NOTE = ("Integral errors assume independent noise on every point: for a zero-filled or apodized spectrum "
              "they are lower bounds.")


def _baseline(req: dict) -> float:
    if req.get("baseline") is None:
        return 0.0
    v = _number(req, "baseline")
    if abs(v) > MAX_ORDINATE:
        raise InputError(f"'baseline' must be at most {MAX_ORDINATE:g} in size.", "baseline")
    return v


def _grid(first_x: float, last_x: float, n: int) -> tuple[float, list[float]]:
    dx = (last_x - first_x) / (n - 1)
    return dx, [first_x + k * dx for k in range(n)]


def op_peak_at(req: dict, warnings: list[str]) -> dict:
    first_x, last_x, x_unit, y = samples(req)
    if len(y) > MAX_WINDOW:
        raise InputError(f"A tap window holds at most {MAX_WINDOW} points.", "y", "too_large")
    observe = observe_frequency(req, x_unit, "so that the width comes out in Hz")
    dx = (last_x - first_x) / (len(y) - 1)
    top = max(range(len(y)), key=lambda k: y[k])
    if top in (0, len(y) - 1):
        warnings.append("The highest point near the tap is at the edge of the window: the peak may lie outside it.")
    base = _baseline(req)
    p = peaks.measure(first_x, dx, y, top, base)
    if req.get("noise") is not None and p["height"] < 3 * _number(req, "noise"):
        warnings.append("The tapped maximum is less than 3 times the noise above the baseline.")
    to_Hz = observe if observe is not None and x_unit == "ppm" else 1.0
    return {"peak": {"position": p["position"], "height": p["height"], "width_Hz": p["width"] * to_Hz,
                     "integral": p["integral"]}, "x_unit": x_unit}


def _indices(region: Any, k: int, first_x: float, dx: float, n: int) -> tuple[int, int, float, float]:
    where = f"regions.{k}."
    if not isinstance(region, dict):
        raise InputError(f"Region {k + 1} must be {{\"from\": x, \"to\": x}}.", f"regions.{k}")
    a, b = _number(region, "from", where), _number(region, "to", where)
    i, j = sorted(((a - first_x) / dx, (b - first_x) / dx))
    lo, hi = max(0, int(-(-i // 1))), min(n - 1, int(j // 1))   # points inside [a, b]
    if hi - lo < 1:
        raise InputError(f"Region {k + 1} ({a:g} to {b:g}) holds fewer than 2 points of the spectrum.",
                         f"regions.{k}")
    return lo, hi, a, b


def op_integrate(req: dict, warnings: list[str]) -> dict:
    first_x, last_x, x_unit, y = samples(req)
    observe = observe_frequency(req, x_unit, "so that integrals are also given in intensity × Hz")
    raw = req.get("regions") or []
    if not raw:
        raise InputError("Give at least one region {from, to}.", "regions", "missing_field")
    sigma, base = peaks.noise(y)
    dx = (last_x - first_x) / (len(y) - 1)
    spans = [_indices(r, k, first_x, dx, len(y)) for k, r in enumerate(raw)]
    for k in range(len(spans)):
        for j in range(k):
            if spans[k][0] <= spans[j][1] and spans[j][0] <= spans[k][1]:
                warnings.append(f"Regions {j + 1} and {k + 1} overlap: their relative errors are not independent.")
    values = [regions.integral(y[lo:hi + 1], dx, base, sigma) for lo, hi, _, _ in spans]
    raw = req.get("normalize_to")
    ref = None if raw in (None, "", []) else int(raw)   # declared an integer; "" or [] is not given
    nuclei = req.get("nuclei", 1.0)
    if ref is not None and not 0 <= ref < len(values):
        raise InputError(f"'normalize_to' names region {ref + 1}, but there are {len(values)}.", "normalize_to")
    rel = regions.relative(values, ref, float(nuclei)) if ref is not None else None
    to_Hz = observe if observe is not None and x_unit == "ppm" else 1.0
    out = []
    for k, ((lo, hi, a, b), (i, e)) in enumerate(zip(spans, values)):
        row: dict[str, Any] = {"from": a, "to": b, "points": hi - lo + 1, "integral": i, "error": e,
                               "integral_Hz": i * to_Hz if observe is not None or x_unit == "Hz" else None,
                               "signal_to_noise": i / e if e else None}
        if rel is not None:
            row["relative"], row["relative_error"] = rel[k]
        out.append(row)
    warnings.append(ERROR_NOTE)
    return {"regions": out, "noise": sigma, "baseline": base, "x_unit": x_unit, "normalize_to": ref,
            "nuclei": float(nuclei) if ref is not None else None}


def _default_width_Hz(y: list[float], dx: float, base: float, to_Hz: float) -> float:
    top = max(range(len(y)), key=lambda k: y[k])
    w = peaks.measure(0.0, dx, y, top, base)["width"] * to_Hz
    if not w > 0:
        raise InputError("The region's highest peak has no measurable width: give 'linewidth'.", "linewidth",
                         "missing_field")
    return w


def _sub_request(req: dict, op: Op, keys: tuple[str, ...]) -> dict:
    """The keys of ``req`` that ``op`` declares, checked against it (its own defaults filled in)."""
    sub = {"op": op.name, **{k: req[k] for k in keys if req.get(k) not in (None, "")}}
    return check(op, sub)


def op_compare_region(req: dict, warnings: list[str]) -> dict:
    first_x, last_x, x_unit, y = samples(req)
    if len(y) > MAX_REGION_POINTS:
        raise InputError(f"A region holds at most {MAX_REGION_POINTS} points: choose a narrower one.", "y",
                         "too_large")
    observe_MHz = observe_frequency(req, x_unit, "to turn the line width and couplings into ppm")
    base = _baseline(req)
    dx, x = _grid(first_x, last_x, len(y))
    to_Hz = observe_MHz if observe_MHz is not None and x_unit == "ppm" else 1.0
    width_Hz = (quantity(req, "linewidth", "coupling", positive=True) if req.get("linewidth") is not None
                else _default_width_Hz(y, dx, base, to_Hz))
    kind = req.get("model")
    shape = req.get("shape", "lorentzian")
    other = {"multiplet": ("spins", "couplings"), "spin_system": ("groups", "abundance", "min_share", "center")}
    stray = [k for k in other.get(str(kind), ()) if req.get(k) not in (None, "", [])]
    if stray:
        raise InputError(f"'{stray[0]}' belongs to the other model; model \"{kind}\" does not use it.", stray[0])
    if kind == "multiplet":
        sub = _sub_request(req, MULTIPLET_DECLARED["multiplet"],
                           ("observe", "groups", "abundance", "min_share", *MAGNET_KEYS))
        result = op_multiplet(sub, warnings)
        if "partial_collapse" in result:
            warnings.append("The comparison draws the resolved pattern, not its partial collapse by relaxation.")
        offsets = [(ln["Hz"] / to_Hz, ln["intensity"]) for ln in result["lines"]]
        if req.get("center") is not None:
            center, how = _number(req, "center"), "given"
        else:
            weights = [max(0.0, v - base) for v in y]
            if not sum(weights) > 0:
                raise InputError("The region has no intensity above the baseline: give 'center'.", "center",
                                 "missing_field")
            centroid = sum(xk * w for xk, w in zip(x, weights)) / sum(weights)
            center = regions.best_center(x, y, dx, base, offsets, width_Hz / to_Hz, shape, centroid)
            how = "least squares"
        sticks = [(center + d, a) for d, a in offsets]
        label, extra = result["label"], {"center": center, "center_from": how}
    elif kind == "spin_system":
        if x_unit != "ppm":
            raise InputError("A spin system's shifts are in ppm: set the spectrum's reference first, so that x is "
                             "in ppm.", "x_unit")
        sub = _sub_request(req, SPIN_DECLARED["spin_system"], ("observe", "spins", "couplings", *MAGNET_KEYS))
        result = op_spin_system(sub, warnings)
        sticks = [(ln["ppm"], ln["intensity"]) for ln in result["lines"]]
        label = "spin system, exact"
        extra = {"checks": result["checks"]}
    else:
        raise InputError("'model' must be \"multiplet\" or \"spin_system\".", "model", "missing_field")
    model = regions.model_trace(x, sticks, width_Hz / to_Hz, shape)
    cmp = regions.scaled_comparison(y, model, dx, base)
    top = max((abs(v - base) for v in y), default=0.0)
    return {"model": kind, "label": label, "x_unit": x_unit, "first_x": first_x, "last_x": last_x,
            "simulated": [base + v for v in cmp["model"]], "residual": cmp["residual"], "scale": cmp["scale"],
            "integral": cmp["integral"], "rms_residual": cmp["rms"],
            "relative_rms": cmp["rms"] / top if top else None, "linewidth_Hz": width_Hz, "shape": shape,
            "lines": [{"position": p, "intensity": i * cmp["scale"]} for p, i in sticks], **extra}


_TRACE = (
    Param("first_x", "number", required=True, label="First x", help="x of the first point", example=2.0),
    Param("last_x", "number", required=True, label="Last x", help="x of the last point", example=0.0),
    Param("x_unit", "choice", choices=("Hz", "ppm"), required=True, label="x unit", help="Hz or ppm",
          example="ppm"),
)
_OBSERVE = Param("observe_MHz", "quantity", unit="frequency", label="Observe frequency",
                 help="the spectrum's observe frequency (needed when x is in ppm)", example="400.13 MHz")
_BASELINE = Param("baseline", "number", label="Baseline", help="level subtracted from y (e.g. pick_peaks' baseline)")
_PEAK = [1.0 / (1 + ((k - 100) / 4) ** 2) for k in range(201)]
_NOISY = [1.0 / (1 + ((k - 300) / 3) ** 2) + 0.001 * ((k * 7919) % 13 - 6) for k in range(601)]
_SPIN = SPIN_DECLARED["spin_system"].keys()
_MULT = MULTIPLET_DECLARED["multiplet"].keys()

DECLARED = {
    "peak_at": Op(
        "peak_at", "the peak in a short window of points (a tap on the trace): position, height, width", cli="-",
        limits=f"{MAX_WINDOW} points", params=(
            *_TRACE,
            Param("y", "value", required=True, label="Ordinates", help="the window's evenly spaced ordinates",
                  example=_PEAK),
            _BASELINE, Param("noise", "number", bounds=(0, None), label="Noise",
                             help="the trace's noise σ (pick_peaks): a maximum below 3 σ is flagged"), _OBSERVE,
        )),
    "integrate": Op(
        "integrate", "integrals of regions of a spectrum, with their noise errors and relative values", cli="-",
        limits=f"{MAX_REGIONS} regions", params=(
            *_TRACE,
            Param("y", "value", required=True, label="Ordinates", help="the whole spectrum's ordinates",
                  example=_NOISY),
            Param("regions", "objects", required=True, max_items=MAX_REGIONS, label="Regions",
                  help="each {from, to} in the x unit",
                  example=[{"from": 1.1, "to": 0.9}, {"from": 0.5, "to": 0.3}], items=(
                Param("from", "number", required=True, label="From", help="one end, in the x unit"),
                Param("to", "number", required=True, label="To", help="the other end"),
            )),
            Param("normalize_to", "integer", bounds=(0, MAX_REGIONS - 1), label="Reference region",
                  help="index (from 0) of the region whose nuclei count is given"),
            Param("nuclei", "number", default=1.0, bounds=(1e-6, 1e6), label="Nuclei in it",
                  help="number of nuclei the reference region stands for, e.g. 3"),
            _OBSERVE,
        )),
    "compare_region": Op(
        "compare_region", "a multiplet or spin system drawn on a region's points, scaled to its integral, with "
        "the residual", cli="-", one_of=(("spectrometer", "field"), ("groups", "spins"), ("groups", "couplings")),
        limits=f"{MAX_REGION_POINTS} points", params=(
            *_TRACE,
            Param("y", "value", required=True, label="Ordinates", help="the region's evenly spaced ordinates",
                  example=_PEAK),
            Param("model", "choice", choices=("multiplet", "spin_system"), required=True, label="Model",
                  help="a first-order multiplet or an exact spin system", example="multiplet"),
            replace(_MULT["observe"], required=False, default=None),
            _MULT["groups"], _MULT["abundance"], _MULT["min_share"],
            Param("center", "number", label="Centre", help="multiplet centre in the x unit (default: the centroid)"),
            replace(_SPIN["spins"], required=False), _SPIN["couplings"],
            *MAGNET,
            Param("linewidth", "quantity", unit="coupling", label="Line width",
                  help="full width at half height (default: that of the region's highest peak)"),
            Param("shape", "choice", choices=("lorentzian", "gaussian"), default="lorentzian", label="Line shape",
                  help="line shape"),
            _BASELINE, _OBSERVE,
        )),
}

OPS = {"peak_at": op_peak_at, "integrate": op_integrate, "compare_region": op_compare_region}
