"""The ``identify`` op: measured lines → ranked first-order explanations.

Request keys: ``lines`` (``[{"position": "1234.5 Hz", "intensity": 1}, …]``
or ``[[position, intensity], …]``) or ``peaklist`` (pasted text, see
``nmrcalc.api.peaklist``); ``unit`` (``"Hz"`` or ``"ppm"``, for positions
written without a unit); ``observe`` (default 1H) and ``spectrometer`` /
``field`` (needed for ppm); ``partners`` (nuclides such as ``"2H"``,
elements such as ``"B"``, bare spins such as ``"1/2"`` or ``"spin=3/2"``;
default: bare spins 1/2 to 3); ``tolerance`` (Hz); ``max_groups``,
``max_count``, ``top``.

Unit rule for a peak list with no unit in its header and no ``unit`` key:
ppm if a magnet is given, every |value| is below ``PPM_GUESS_MAX`` and the
values spread over less than ``PPM_GUESS_SPREAD`` (a multiplet is narrower
than 1 ppm, while Hz offsets of a multiplet span several Hz); otherwise Hz.
The guess is reported in ``notes``.

Default tolerance: ``min(DEFAULT_TOLERANCE_HZ, TOLERANCE_FRACTION × the
smallest spacing of neighbouring lines)``.

An element partner uses its natural isotope mixture (``nmrcalc.nuclides``),
``J`` belonging to its most abundant magnetic isotope and the couplings to
the other isotopes scaled by |γ| ratios (``nmrcalc.physics.coupling``); an
element whose most abundant magnetic isotope makes up at least
``PLAIN_ELEMENT_SHARE`` of it (H, F, P, …) is treated as that one nuclide.
"""

from __future__ import annotations

import math
import re
from fractions import Fraction
from typing import Any

from nmrcalc.api.fields import bounded, in_range, magnet, nucleus, quantity, zero_ppm_MHz
from nmrcalc.api.params import MAGNET, Op, Param
from nmrcalc.api.peaklist import parse_peaklist
from nmrcalc.errors import InputError
from nmrcalc.nuclides import MAGNETIC, Nuclide, element_of, isotopes_of, lookup_magnetic
from nmrcalc.physics import coupling, larmor
from nmrcalc.physics.identify import (
    DEFAULT_SPINS,
    MAX_COUNT,
    MAX_GROUPS,
    MAX_INPUT_LINES,
    PartnerOption,
    identify,
    reference_isotope,
    spin_option,
)
from nmrcalc.physics.multiplet import parse_spin

PPM_GUESS_MAX = 20.0
PPM_GUESS_SPREAD = 1.0
DEFAULT_TOLERANCE_HZ = 0.5
TOLERANCE_FRACTION = 0.25
PLAIN_ELEMENT_SHARE = 0.99
MAX_PARTNERS = 8
MIN_RELATIVE_INTENSITY = 1e-12  # weaker lines than this fraction of the strongest are refused
INTENSITY_RANGE = (1e-100, 1e100)  # any unit, but squares and sums of intensities stay finite
# Priors without stated partners (common practice, no source): on these nuclei couplings are
# almost always to spin-1/2 nuclei, so spin-1/2 explanations are tried first and quadrupolar
# ones only when no spin-1/2 one matches the intensities (relative rms above INTENSITY_DEMAND).
SPIN_HALF_FIRST = frozenset({"1H", "13C", "19F", "31P"})
INTENSITY_DEMAND = 0.1
# A pair of lines each weaker than SATELLITE_MAX of the strongest, symmetric about it, is
# compared with the satellites of elements whose spin-1/2 isotopes are below half of the element.
SATELLITE_MAX = 0.3
SATELLITE_ELEMENTS = 2
TOLERANCE_PER_POINT = 1.0   # with a digital resolution: tolerance = that many points
TOLERANCE_PER_WIDTH = 0.25  # with a line width: tolerance = that fraction of the width
_SPIN_TEXT = re.compile(r"\s*(?:spin\s*=?|i\s*=)?\s*(\d+(?:/2)?)\s*", re.IGNORECASE)


def _percent(n: Nuclide) -> float:
    """Natural abundance of ``n`` in percent (0 where the table gives none)."""
    return n.abundance_percent or 0.0


def _partner_option(text: object, where: str, notes: list[str]) -> PartnerOption:
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        text = str(text)
    if not isinstance(text, str) or not text.strip():
        raise InputError("A partner is a nuclide (2H), an element (B) or a spin (1/2, spin=3/2).", where)
    m = _SPIN_TEXT.fullmatch(text)
    if m:
        try:
            return spin_option(parse_spin(m.group(1)))
        except InputError as e:
            raise InputError(e.message, where) from None
    el = element_of(text)
    if el is None:
        nuc = lookup_magnetic(text, where)
        return PartnerOption(nuc.symbol, "nuclide", ((nuc.symbol, nuc.spin, Fraction(1), 1.0),))
    natural = [n for n in isotopes_of(el) if n.abundance_percent]
    magnetic = [n for n in natural if n.magnetic]
    if not magnetic:
        raise InputError(f"{el} has no magnetic isotope at natural abundance: it gives no splitting.", where,
                         "not_magnetic")
    ref = max(magnetic, key=_percent)
    total = sum(_percent(n) for n in natural)
    if _percent(ref) / total >= PLAIN_ELEMENT_SHARE:
        notes.append(f"Partner {el} is taken as {ref.symbol} ({ref.abundance_percent:g} % of {el}).")
        return PartnerOption(ref.symbol, "nuclide", ((ref.symbol, ref.spin, Fraction(1), 1.0),))
    isotopes = [(n.symbol, n.spin, Fraction(repr(_percent(n) / total)),
                 abs(coupling.gamma_ratio(ref, n))) for n in magnetic]
    spin0 = sum(_percent(n) for n in natural if not n.magnetic) / total
    if spin0 > 0:
        isotopes.append((f"spin-0 {el}", Fraction(0), Fraction(repr(spin0)), 0.0))
    if len(magnetic) > 1:
        notes.append(f"J of a {el} group is J to {ref.symbol}; the other isotopes' couplings follow by the γ ratio "
                     "(an estimate: isotope effects of about 1–2 %).")
    return PartnerOption(el, "element", tuple(isotopes))


def _position(value: object, unit: str, where: str) -> tuple[float, str]:
    """(number, 'Hz' or 'ppm'): a string with ppm is ppm, other units are Hz-like, bare numbers take ``unit``."""
    if isinstance(value, str) and value.strip().lower().endswith("ppm"):
        return bounded(value, "shift", where), "ppm"
    if isinstance(value, str) and re.search(r"[a-zA-Z]", value):
        return bounded(value, "coupling", where), "Hz"
    return bounded(value, "coupling", where), unit


def _intensity(item: dict, where: str) -> float:
    for key in ("intensity", "height", "integral"):
        if item.get(key) not in (None, ""):
            y = item[key]
            if isinstance(y, bool) or not isinstance(y, (int, float)) or not math.isfinite(y):
                raise InputError("The intensity must be a number.", f"{where}.{key}")
            if y <= 0:
                raise InputError("The intensity must be greater than zero.", f"{where}.{key}")
            return float(y)
    raise InputError("Give the line's intensity (height or integral).", f"{where}.intensity", "missing_field")


def _read_lines(req: dict, unit: str) -> list[tuple[float, float, str]]:
    lines = req.get("lines")
    if not isinstance(lines, list) or not lines:
        raise InputError("'lines' must be a non-empty list of {position, intensity}.", "lines", "missing_field")
    if len(lines) > MAX_INPUT_LINES:
        raise InputError(f"At most {MAX_INPUT_LINES} lines can be analysed, got {len(lines)}.", "lines", "too_large")
    out = []
    for i, item in enumerate(lines):
        where = f"lines.{i}"
        if isinstance(item, (list, tuple)) and len(item) == 2:
            item = {"position": item[0], "intensity": item[1]}
        if not isinstance(item, dict):
            raise InputError("Each line is {\"position\": …, \"intensity\": …}.", where)
        if item.get("position") in (None, ""):
            raise InputError("The line's position is missing.", f"{where}.position", "missing_field")
        x, u = _position(item["position"], unit, f"{where}.position")
        out.append((x, _intensity(item, where), u))
    return out


def _read_peaklist(
    req: dict, unit_key: str | None, has_magnet: bool, notes: list[str]
) -> list[tuple[float, float, str]]:
    parsed = parse_peaklist(req.get("peaklist"))
    if len(parsed.peaks) > MAX_INPUT_LINES:
        raise InputError(f"At most {MAX_INPUT_LINES} peaks can be analysed, the list has {len(parsed.peaks)}.",
                         "peaklist", "too_large")
    values = [p for _, p, _ in parsed.peaks]
    if parsed.unit is not None:
        unit = parsed.unit
        if unit == "Hz" and parsed.header and _column_has(parsed.header, "ppm"):
            notes.append("The peak list has both ppm and Hz columns: the Hz column is used.")
    elif unit_key is not None:
        unit = unit_key
    elif has_magnet and all(abs(v) < PPM_GUESS_MAX for v in values) and max(values) - min(values) < PPM_GUESS_SPREAD:
        unit = "ppm"
        notes.append(f"The peak list states no unit: read as ppm (a guess: a magnet is given, all values are below "
                     f"{PPM_GUESS_MAX:g} and they spread over less than {PPM_GUESS_SPREAD:g}); set 'unit' to override.")
    else:
        unit = "Hz"
        notes.append("The peak list states no unit: read as Hz; set 'unit' to 'ppm' if it is in ppm.")
    if not parsed.intensities_given:
        notes.append("The peak list has one column: all intensities are taken as equal.")
    return [(in_range(p, "peaklist"), y, unit) for _, p, y in parsed.peaks]


def _column_has(header: list[str], word: str) -> bool:
    return any(word in h.lower() for h in header)


def _small_int(req: dict, key: str, lo: int, hi: int, default: int) -> int:
    value = req.get(key, default)
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if isinstance(value, bool) or not isinstance(value, int) or not lo <= value <= hi:
        raise InputError(f"'{key}' must be a whole number from {lo} to {hi}.", key)
    return value


def _tolerance(req: dict, resolution: float, width: float, spacings: list[float], notes: list[str]) -> float:
    """The stated tolerance, or one from the data: digital resolution / line width (Hz, 0 when not
    known), else the default."""
    if req.get("tolerance") not in (None, ""):
        if resolution or width:
            notes.append("The stated tolerance is used; the line width and digital resolution given only set "
                         "the tolerance when none is stated, so here they change nothing.")
        return quantity(req, "tolerance", "coupling", positive=True)
    if resolution or width:
        tol = max(TOLERANCE_PER_POINT * resolution, TOLERANCE_PER_WIDTH * width)
        how = (f"from the data: the larger of {TOLERANCE_PER_POINT:g} × the digital resolution and "
               f"{TOLERANCE_PER_WIDTH:g} × the line width")
    else:
        tol, how = DEFAULT_TOLERANCE_HZ, f"default {DEFAULT_TOLERANCE_HZ:g} Hz"
    if spacings and tol > TOLERANCE_FRACTION * min(spacings):
        tol = TOLERANCE_FRACTION * min(spacings)
        how += f", capped at {TOLERANCE_FRACTION:g} × the smallest spacing"
    notes.append(f"Tolerance {tol:.3g} Hz ({how}).")
    return tol


def _satellite_elements(lines: list[tuple[float, float]], tol: float) -> list[dict]:
    """Elements whose natural spin-1/2 isotopes would give the weak symmetric pair around the strongest line.

    One position: the centre carries the share without a magnetic isotope (1 - a_mag), each satellite
    half of the spin-1/2 share (a/2); ranked by |ln(expected / observed ratio)|.
    """
    x0, y0 = max(lines, key=lambda line: line[1])
    weak = [(x, y) for x, y in lines if y <= SATELLITE_MAX * y0]
    pairs = [((xa, ya), (xb, yb)) for xa, ya in weak for xb, yb in weak
             if xa < x0 < xb and abs((xa + xb) / 2 - x0) <= tol and abs(ya - yb) <= 0.3 * max(ya, yb)]
    if not pairs:
        return []
    (xa, ya), (xb, yb) = max(pairs, key=lambda p: p[0][1] + p[1][1])
    others = [y for x, y in lines if abs(x - x0) > tol and x not in (xa, xb)]
    if any(y > min(ya, yb) for y in others):
        return []  # stronger lines beside the centre: a multiplet, not satellites of one line
    observed = (ya + yb) / 2 / y0
    found: list[dict[str, Any]] = []
    for el in sorted({n.element for n in MAGNETIC.values()}):
        natural = [n for n in isotopes_of(el) if n.abundance_percent]
        half = sum(_percent(n) for n in natural if n.magnetic and n.spin == Fraction(1, 2))
        magnetic = sum(_percent(n) for n in natural if n.magnetic)
        if not 0 < half < 50 or magnetic >= 99:
            continue
        expected = half / 2 / (100 - magnetic)
        found.append({"element": el, "expected_ratio": expected, "observed_ratio": observed, "J_Hz": xb - xa,
                      "miss": abs(math.log(expected / observed))})
    found.sort(key=lambda f: f["miss"])
    return [{k: v for k, v in f.items() if k != "miss"}
            for f in found[:SATELLITE_ELEMENTS] if f["miss"] < math.log(1.5)]


def op_identify(req: dict, warnings: list[str]) -> dict:
    notes: list[str] = []
    observe = nucleus(req, "observe") if req.get("observe") not in (None, "") else None
    unit_key = req.get("unit")
    if unit_key not in (None, ""):
        if not isinstance(unit_key, str) or unit_key.strip().lower() not in ("hz", "ppm"):
            raise InputError("'unit' must be 'Hz' or 'ppm'.", "unit")
        unit_key = "ppm" if unit_key.strip().lower() == "ppm" else "Hz"
    else:
        unit_key = None
    has_magnet = req.get("spectrometer") not in (None, "") or req.get("field") not in (None, "")
    has_lines, has_list = req.get("lines") not in (None, "", []), req.get("peaklist") not in (None, "")
    if has_lines == has_list:
        raise InputError("Give the measured lines either as 'lines' or as a pasted 'peaklist' (one of them).",
                         "lines", "missing_field")
    raw = _read_lines(req, unit_key or "Hz") if has_lines else _read_peaklist(req, unit_key, has_magnet, notes)
    strongest = max(y for _, y, _ in raw)
    for i, (_, y, _) in enumerate(raw):
        where = f"lines.{i}" if has_lines else "peaklist"
        if not INTENSITY_RANGE[0] <= y <= INTENSITY_RANGE[1]:
            raise InputError(f"An intensity must lie between {INTENSITY_RANGE[0]:g} and {INTENSITY_RANGE[1]:g}.", where)
        if y < MIN_RELATIVE_INTENSITY * strongest:
            raise InputError(f"A line is weaker than {MIN_RELATIVE_INTENSITY:g} of the strongest one; remove it.",
                             where)

    ref_MHz = None
    if has_magnet:
        if observe is None:
            observe = lookup_magnetic("1H")
            notes.append("No observed nuclide given: 1H assumed for the ppm scale.")
        field_T, proton_MHz = magnet(req, warnings)
        ref_MHz = zero_ppm_MHz(observe, field_T, proton_MHz, warnings)
    if any(u == "ppm" for *_, u in raw) and ref_MHz is None:
        raise InputError("Positions in ppm need the magnet: give 'spectrometer' (or 'field').", "spectrometer",
                         "missing_field")
    units = {u for *_, u in raw}
    if len(units) > 1:
        notes.append("Positions mix ppm and Hz: ppm are converted with the observed nuclide's reference frequency.")
    # ppm positions without ref_MHz were refused above
    lines_Hz = [(larmor.offset_Hz(ref_MHz, x) if u == "ppm" else x, y) for x, y, u in raw]  # type: ignore[arg-type]

    partners = req.get("partners")
    if partners in (None, "", []):
        options = None
    else:
        if not isinstance(partners, list):
            raise InputError("'partners' must be a list such as [\"H\", \"2H\", \"B\"].", "partners")
        if len(partners) > MAX_PARTNERS:
            raise InputError(f"At most {MAX_PARTNERS} partners can be searched.", "partners", "too_large")
        options = []
        for i, p in enumerate(partners):
            opt = _partner_option(p, f"partners.{i}", notes)
            if opt not in options:
                options.append(opt)

    xs = sorted(x for x, _ in lines_Hz)
    spacings = [b - a for a, b in zip(xs, xs[1:]) if b - a > 0]
    resolution = quantity(req, "digital_resolution", "coupling", positive=True, default=0.0)
    width = quantity(req, "linewidth", "coupling", positive=True, default=0.0)
    tol = _tolerance(req, resolution, width, spacings, notes)
    limits = {"max_groups": _small_int(req, "max_groups", 1, MAX_GROUPS, MAX_GROUPS),
              "max_count": _small_int(req, "max_count", 1, MAX_COUNT, MAX_COUNT),
              "top": _small_int(req, "top", 1, 20, 5)}
    satellites: list[dict[str, Any]] = []
    if options is None and (observe is None or observe.symbol in SPIN_HALF_FIRST):
        satellites = _satellite_elements(lines_Hz, tol)
        extra = [_partner_option(sat["element"], "partners", []) for sat in satellites]
        found = identify(lines_Hz, tol, [spin_option(Fraction(1, 2))] + extra, **limits)
        lead = found.candidates[0]
        if lead.unmatched_observed or lead.intensity_residual > INTENSITY_DEMAND:
            found = identify(lines_Hz, tol, None if not extra else
                             [spin_option(sp) for sp in DEFAULT_SPINS] + extra, **limits)
            notes.append("No spin-1/2 explanation matches the intensities, so spins above 1/2 (quadrupolar "
                         "partners) are offered as well.")
        else:
            notes.append(f"On {observe.symbol if observe else '1H'} without stated partners, spin-1/2 explanations "
                         "are preferred (they fit here); name partners to search quadrupolar ones.")
        if satellites:
            which = " or ".join(f"{sat['element']} (expected {sat['expected_ratio']:.3g} each)" for sat in satellites)
            notes.append(f"A weak pair symmetric about the strongest line ({satellites[0]['observed_ratio']:.3g} of "
                         f"it each, J ≈ {satellites[0]['J_Hz']:.4g} Hz) matches satellites of {which} at natural "
                         "abundance, rather than a triplet.")
    else:
        found = identify(lines_Hz, tol, options, **limits)
    peak = max(y for _, y in lines_Hz)
    candidates = []
    for cand in found.candidates:
        groups = []
        for g in cand.groups:
            who = {"spin": g.option.label} if g.option.kind == "spin" else {"partner": g.option.label}
            if g.option.kind == "element":
                who["J_isotope"] = reference_isotope(g.option)
            groups.append({**who, "count": g.count, "J_Hz": g.J_Hz})
        predicted = []
        for x, w in cand.lines:
            line = {"Hz": cand.center_Hz + x, "intensity": cand.scale * w * peak}
            if ref_MHz is not None:
                line["ppm"] = larmor.shift_ppm(ref_MHz, cand.center_Hz + x)
            predicted.append(line)
        candidates.append({"groups": groups, "label": cand.label, "score": cand.score,
                           "position_rms": cand.position_rms, "intensity_residual": cand.intensity_residual,
                           "unmatched_observed": cand.unmatched_observed, "center_Hz": cand.center_Hz,
                           "lines": predicted})
    best = found.candidates[0]
    return {"observe": observe.symbol if observe else None,
            "observed": [{"Hz": x, "intensity": y, **({"ppm": larmor.shift_ppm(ref_MHz, x)} if ref_MHz else {})}
                         for x, y in lines_Hz],
            "unit": sorted(units)[0] if len(units) == 1 else "mixed",
            "tolerance_Hz": tol, "linewidth_Hz": width or None, "digital_resolution_Hz": resolution or None,
            "candidates": candidates, "label": best.label,
            "center_Hz": best.center_Hz, "center_ppm": larmor.shift_ppm(ref_MHz, best.center_Hz) if ref_MHz else None,
            "observe_MHz": ref_MHz, "searched": found.evaluated, "complete": found.complete,
            "satellites": satellites,
            "notes": notes + found.notes}


DECLARED = {"identify": Op(
    "identify", "rank first-order explanations (coupling partners) of measured lines",
    one_of=(("spectrometer", "field"), ("lines", "peaklist")),
    limits=f"{MAX_INPUT_LINES} lines; {MAX_GROUPS} groups; counts up to {MAX_COUNT}; a bounded search", params=(
        Param("lines", "objects", label="Measured lines", max_items=MAX_INPUT_LINES,
              help="positions and intensities, e.g. '1224:1,1231:3' (or [position, intensity] pairs)", cli="--lines",
              cli_order=("position", "intensity"), cli_sep=":", example=[{"position": -7.0, "intensity": 1}, [0.0, 2],
                                                             {"position": "7 Hz", "height": 1}], items=(
            Param("position", "value", required=True, label="Position", help="Hz or ppm (with a unit, or in 'unit')"),
            Param("intensity", "number", label="Intensity", help="height or integral"),
            Param("height", "number", label="Height", help="instead of intensity"),
            Param("integral", "number", label="Integral", help="instead of intensity"),
        )),
        Param("peaklist", "text", max_chars=500_000, label="Peak list", file=True,
              help="a pasted peak list: one peak a line, position and intensity"),
        Param("unit", "text", label="Positions are in", example="Hz",
              help="Hz or ppm (default: the peak list's header, else a guess)"),
        Param("observe", "nuclide", label="Observed nucleus", help="default 1H"),
        *MAGNET,
        Param("partners", "texts", max_items=MAX_PARTNERS, label="Allowed partners",
              help="e.g. 'H, 2H, B' or spins '1/2, 1'", example=["1H", "1/2"]),
        Param("tolerance", "quantity", unit="coupling", label="Position tolerance", help="e.g. '0.5 Hz'",
              example="0.5 Hz"),
        Param("linewidth", "quantity", unit="coupling", label="Line width",
              help="if known: the default tolerance follows it (a quarter of the width)", example="1.2 Hz"),
        Param("digital_resolution", "quantity", unit="coupling", label="Digital resolution per point",
              help="if known, Hz per point: the default tolerance is at least one point", example="0.3 Hz"),
        Param("max_groups", "integer", bounds=(1, MAX_GROUPS), default=MAX_GROUPS, example=2,
              label="Most groups of partners", help="at most this many partner groups"),
        Param("max_count", "integer", bounds=(1, MAX_COUNT), default=MAX_COUNT, example=3,
              label="Most partners a group",
              help="at most this many equivalent partners in a group"),
        Param("top", "integer", bounds=(1, 20), default=5, example=3, label="Candidates",
              help="how many candidates to list"),
    ))}

OPS = {"identify": op_identify}
