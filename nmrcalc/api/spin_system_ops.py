"""The ``spin_system`` op: exact (second-order) spectra of small coupled systems,
the first-order check of every coupled pair, the first-order pattern for
comparison, and the same system at several fields.

Spins carry chemists' labels: ``label`` per spin (e.g. "H-3", at most
``MAX_LABEL`` characters), else A, B, C… in input order; messages and the
page name spins by label, and ``between`` accepts labels or 0-based indices.

Result: ``lines`` (observed transitions, merged), ``transitions`` (the same
lines with ``spin``, the index of the observed spin each mostly belongs to (the one whose
<Σ I_z> changes most in the transition), and
its label), ``clusters`` (sites joined by coupling paths, each solved alone and
summed — exact, since their Hamiltonians commute; clusters joined only by weak
links, |Δν| >= 20 |J| and J²/|Δν| <= ``WEAK_LINK_TOL_HZ`` in Hz at the chosen
field, and whose second-order mixing bound is also within that tolerance, are
solved apart with those links to first order, ``method`` "weak-link" and
``error_Hz`` the bound of ``spin_system.clusters`` on how far a line is from the
exact one, and ``partner_field`` true for a cluster re-solved in every field its
partner's eigenstates give it (its own level mixing then exact); a system too large
to join stays split with its larger ``error_Hz``
and a warning saying so; ``"exact": true`` solves every link exactly) and ``first_order_threshold``
(the Δν/J used by ``checks``).

``factor_equivalence`` (default true) lets the solver use groups of equivalent
spins (total spin of each group); false expands every nucleus (same lines,
larger matrices; for benchmarks and cross-checks).

Each spin's offset at a field is δ × ν_ref of its nuclide (IUPAC 2001 unified
scale, ``nmrcalc.physics.larmor``); couplings do not change with the field.
"""

from __future__ import annotations

import math
import reprlib

from nmrcalc.api.fields import PROGRESS, flag, magnet, nucleus, quantity, zero_ppm_MHz
from nmrcalc.api.params import MAGNET, SPECTRUM, Op, Param
from nmrcalc.errors import InputError
from nmrcalc.nuclides import Nuclide
from nmrcalc.physics import lineshape
from nmrcalc.physics.multiplet import multiplet
from nmrcalc.physics.spin_system import (
    MAX_BLOCK_DIM,
    MAX_COUNT,
    MAX_TOTAL_DIM,
    MAX_WORK,
    Site,
    clusters,
    equivalence_caveats,
    first_order_checks,
    transitions,
)
from nmrcalc.units import split_list

MAX_FIELDS = 12
MAX_SPINS = 64  # spin entries in one request; each may stand for up to MAX_COUNT equivalent nuclei
MAX_LABEL = 24
WEAK_LINK_TOL_HZ = 0.01  # J²/|Δν| of a link treated to first order (Hz)
MIN_USUAL_LINEWIDTH_HZ = 0.1  # narrower lines are rare in solution (common practice, no source)
FIRST_ORDER_THRESHOLD = 10.0  # Δν/|J| at or above which a pair is called first order (rule of thumb)


def _auto_label(i: int) -> str:
    """A, B, … Z, then A1, B1, …: letters in input order, as spin systems are written."""
    letter = chr(ord("A") + i % 26)
    return letter if i < 26 else f"{letter}{i // 26}"


def _labels(req) -> list[str]:
    out = []
    for i, s in enumerate(req["spins"]):
        label = s.get("label")
        if label is None or label == "":
            label = _auto_label(i)
        elif not isinstance(label, str) or len(label.strip()) == 0 or len(label) > MAX_LABEL:
            raise InputError(f"label must be text of 1 to {MAX_LABEL} characters, e.g. \"H-3\".",
                             f"spins.{i}.label")
        label = label.strip()
        if label in out:
            raise InputError(f"The label {label} is used for two spins.", f"spins.{i}.label")
        out.append(label)
    return out


def _spins(req) -> list[tuple[Nuclide, float, int]]:
    spins = req.get("spins")
    if not isinstance(spins, list) or not spins:
        raise InputError("'spins' must list the spins: nucleus, shift and count.", "spins", "missing_field")
    if len(spins) > MAX_SPINS:
        raise InputError(f"At most {MAX_SPINS} spin entries at once (use count for equivalent nuclei).",
                         "spins", "too_large")
    out = []
    for i, s in enumerate(spins):
        where = f"spins.{i}."
        if not isinstance(s, dict):
            raise InputError("Each spin is an object with nucleus, shift and count.", f"spins.{i}")
        nuc = nucleus(s, "nucleus", prefix=where)
        shift = quantity(s, "shift", "shift", prefix=where)
        count = s.get("count", 1)
        if isinstance(count, bool) or not isinstance(count, int) or count < 1:
            raise InputError("count must be a whole number of at least 1.", where + "count")
        if count > MAX_COUNT:
            raise InputError(f"count is limited to {MAX_COUNT} equivalent nuclei.", where + "count", "too_large")
        out.append((nuc, shift, count))
    return out


def _couplings(req, labels: list[str] | int) -> list[tuple[int, int, float]]:
    """Couplings as (i, j, J_Hz); ``labels`` names the spins (an int n: the default labels of n spins)."""
    if isinstance(labels, int):
        labels = [_auto_label(i) for i in range(labels)]
    items = req.get("couplings", [])
    if not isinstance(items, list):
        raise InputError("'couplings' must be a list.", "couplings")
    out, seen = [], set()
    for k, c in enumerate(items):
        where = f"couplings.{k}."
        if not isinstance(c, dict):
            raise InputError("Each coupling is an object with between [i, j] and J.", f"couplings.{k}")
        pair = c.get("between")
        if not isinstance(pair, list) or len(pair) != 2:
            raise InputError(f"between must name two spins, e.g. [\"{labels[0]}\", \"{labels[-1]}\"].",
                             where + "between")
        i, j = (_spin_ref(x, labels, where + "between") for x in pair)
        if i == j:
            raise InputError(f"Spin {labels[i]} has no coupling with itself.", where + "between")
        key = (min(i, j), max(i, j))
        if key in seen:
            raise InputError(f"The coupling between {labels[i]} and {labels[j]} is given twice.", where + "between")
        seen.add(key)
        out.append((key[0], key[1], quantity(c, "J", "coupling", prefix=where)))
    return out


def _spin_ref(x, labels: list[str], field: str) -> int:
    """A spin named by its label or by its 0-based index in ``spins``."""
    if isinstance(x, str) and x.strip() in labels:
        return labels.index(x.strip())
    if isinstance(x, int) and not isinstance(x, bool) and 0 <= x < len(labels):
        return x
    raise InputError(f"between must name spins by label ({', '.join(labels[:6])}"
                     f"{'…' if len(labels) > 6 else ''}) or index; {reprlib.repr(x)} is neither.", field)


def _magnets(req, warnings) -> list[tuple[float, float]]:
    fields = req.get("fields")
    if isinstance(fields, str):  # typed text: "400, 600 MHz" (units.split_list)
        fields = split_list(fields, "fields") if fields.strip() else []
    if fields in (None, []):
        return [magnet(req, warnings)]
    if not isinstance(fields, list):
        raise InputError("'fields' must be a list such as [\"300 MHz\", \"600 MHz\"].", "fields")
    if len(fields) > MAX_FIELDS:
        raise InputError(f"At most {MAX_FIELDS} fields at once.", "fields", "too_large")
    out = []
    for k, f in enumerate(fields):
        try:
            out.append(magnet({"spectrometer": f}, warnings))
        except InputError as e:
            raise InputError(e.message.replace("spectrometer", f"fields.{k}"), f"fields.{k}", e.code) from None
    return out


def _ref_MHz(nuc: Nuclide, field_T: float, proton_MHz: float) -> float:
    """0 ppm of ``nuc`` (fields.zero_ppm_MHz; the op states a fallback once, in its warnings)."""
    return zero_ppm_MHz(nuc, field_T, proton_MHz, [])


def _first_order_lines(sites, couplings, observe: str) -> list[tuple[float, float]]:
    """Each observed site as a first-order multiplet, weighted by count × I(I+1)."""
    weighted = []
    for i, site in enumerate(sites):
        if site.nucleus != observe:
            continue
        groups = [(sites[j].spin, sites[j].count, J) for a, b, J in couplings
                  for j in ((b,) if a == i else (a,) if b == i else ())]
        sticks = multiplet(groups)
        total = sum(w for _, w in sticks)
        weight = site.count * float(site.spin * (site.spin + 1))
        weighted += [(site.offset_Hz + x, weight * w / total) for x, w in sticks]
    norm = sum(y for _, y in weighted)
    return sorted((x, y / norm) for x, y in weighted)


def _line_dicts(lines, ref_MHz):
    return [{"Hz": x, "ppm": x / ref_MHz, "intensity": y} for x, y in lines]


def _blame_far_shift(spins: list[tuple[Nuclide, float, int]], labels: list[str], found: list[tuple[float, float, int]],
                     ref_MHz: float, width_Hz: float, proton_MHz: float) -> None:
    """The sampled spectrum would need too many points: when one observed spin lies so far from the
    others that the rest would fit (typically a misplaced decimal point, 365 for 3.65), refuse on
    that spin's shift, so the message sits beside it; otherwise the caller blames the line width.
    Lines narrower than ``MIN_USUAL_LINEWIDTH_HZ`` are blamed themselves."""
    observed = sorted({k for _, _, k in found})
    if len(observed) < 2 or width_Hz < MIN_USUAL_LINEWIDTH_HZ:
        return
    centre = {k: sum(x for x, _, s in found if s == k) / sum(1 for *_, s in found if s == k) for k in observed}
    ordered = sorted(centre.values())
    middle = (ordered[(len(ordered) - 1) // 2] + ordered[len(ordered) // 2]) / 2
    # the spin farthest from the median; of two, the larger shift (365 typed for 3.65)
    far = max(observed, key=lambda k: abs(spins[k][1]) if len(observed) == 2 else abs(centre[k] - middle))
    rest = [x for x, _, k in found if k != far]
    margin = 2 * lineshape.DEFAULT_MARGIN_FWHM * width_Hz
    if (max(rest) - min(rest) + margin) / width_Hz * lineshape.MIN_POINTS_PER_FWHM + 1 > lineshape.MAX_POINTS:
        return
    xs = [x for x, _, _ in found]
    extent = max(xs) - min(xs)
    needed = math.ceil((extent + margin) / width_Hz * lineshape.MIN_POINTS_PER_FWHM) + 1
    wide_enough = extent * lineshape.MIN_POINTS_PER_FWHM / (
        lineshape.MAX_POINTS - 2 - 2 * lineshape.DEFAULT_MARGIN_FWHM * lineshape.MIN_POINTS_PER_FWHM)
    step = 10 ** (math.floor(math.log10(wide_enough)) - 1)  # rounded up to two significant digits
    wide_enough = math.ceil(wide_enough / step) * step
    others = sorted(centre[k] / ref_MHz for k in observed if k != far)
    where = f"at {others[0]:.4g} ppm" if len(others) == 1 else f"{others[0]:.4g} to {others[-1]:.4g} ppm"
    raise InputError(
        f"spins.{far}.shift: spin {labels[far]} at {spins[far][1]:g} ppm lies far from the other "
        f"{spins[far][0].symbol} spins ({where}): with {width_Hz:g} Hz lines at "
        f"{proton_MHz:g} MHz the spectrum would need {needed} points (limit {lineshape.MAX_POINTS}). "
        f"Check this shift, or use a line width of at least {wide_enough:,.6g} Hz.", f"spins.{far}.shift", "too_large")


def _block(spins, labels, couplings, observe, field_T, proton_MHz, req, warnings, progress=None) -> dict:
    sites = [Site(nuc.symbol, nuc.spin, shift * _ref_MHz(nuc, field_T, proton_MHz), count)
             for nuc, shift, count in spins]
    tol = None if flag(req, "exact") else WEAK_LINK_TOL_HZ
    found = transitions(sites, couplings, observe.symbol, factor_equivalence=flag(req, "factor_equivalence", True),
                        progress=progress, weak_link_tol_Hz=tol)
    lines = [(x, y) for x, y, _ in found]
    ref = _ref_MHz(observe, field_T, proton_MHz)
    checks = [{"pair": list(c["pair"]), "labels": [labels[k] for k in c["pair"]], "nucleus": c["nucleus"],
               "delta_nu_Hz": c["delta_nu_Hz"], "J_Hz": c["J_Hz"],
               "delta_nu_over_J": c["delta_nu_over_J"], "first_order": c["first_order"],
               "first_order_from_MHz": c.get("threshold_1H_MHz")}
              for c in first_order_checks(sites, couplings, threshold=FIRST_ORDER_THRESHOLD,
                                          spectrometer_1H_MHz=proton_MHz)]
    found_clusters = clusters(sites, couplings, observe.symbol, tol,
                              factor_equivalence=flag(req, "factor_equivalence", True))
    groups = [{"spins": c["spins"], "labels": [labels[k] for k in c["spins"]], "method": c["method"],
               "error_Hz": c["error_Hz"], "partner_field": c["partner_field"]} for c in found_clusters]
    for c in found_clusters:
        if tol is not None and c["mixing_Hz"] > tol:
            names = ", ".join(labels[k] for k in c["spins"])
            warnings.append(f"The cluster {names} is split from its weakly coupled partners only approximately "
                            f"(joined, the system is too large to solve exactly): its lines may be off by up to "
                            f"{c['error_Hz']:.2g} Hz (weak-link tolerance {tol:g} Hz).")
    block = {"spectrometer_MHz": proton_MHz, "field_T": field_T, "observe_MHz": ref,
             "lines": _line_dicts(lines, ref), "checks": checks, "first_order_threshold": FIRST_ORDER_THRESHOLD,
             "clusters": groups, "weak_link_tol_Hz": tol,
             "transitions": [{"Hz": x, "ppm": x / ref, "intensity": y, "spin": k, "label": labels[k]}
                             for x, y, k in found]}
    first = _first_order_lines(sites, couplings, observe.symbol) if flag(req, "first_order") else None
    if first is not None:
        block["first_order_lines"] = _line_dicts(first, ref)
    if flag(req, "spectrum"):
        width = quantity(req, "linewidth", "coupling", positive=True, default=0.5)
        shape = req.get("shape", "lorentzian")
        try:
            exact = lineshape.sample_spectrum(lines, width, shape)
            spectrum = {"x_ppm": [x / ref for x in exact.x_Hz], "y": exact.y, "linewidth_Hz": width}
            if first is not None:
                fo = lineshape.sample_spectrum(first, width, shape, window_Hz=(exact.x_Hz[0], exact.x_Hz[-1]),
                                               points=len(exact.x_Hz))
                spectrum["first_order_y"] = fo.y
        except InputError as e:
            if e.field == "fwhm_Hz":
                _blame_far_shift(spins, labels, found, ref, width, proton_MHz)
            raise InputError(e.message, "linewidth" if e.field in ("fwhm_Hz", "sticks") else e.field, e.code) from None
        block["spectrum"] = spectrum
    return block


def op_spin_system(req, warnings):
    observe = nucleus(req, "observe")
    spins = _spins(req)
    if not any(nuc.symbol == observe.symbol for nuc, _, _ in spins):
        raise InputError(f"No {observe.symbol} among the spins: nothing to observe.", "observe")
    labels = _labels(req)
    couplings = _couplings(req, labels)
    magnets = _magnets(req, warnings)
    for nuc in {observe.symbol: observe, **{n.symbol: n for n, _, _ in spins}}.values():
        zero_ppm_MHz(nuc, *magnets[0], warnings)  # warns where a nucleus has no Ξ (bare Larmor used)
    report = PROGRESS.get()
    blocks = []
    for k, (f, p) in enumerate(magnets):
        step = None if report is None else (lambda x, k=k: report((k + x) / len(magnets)))
        blocks.append(_block(spins, labels, couplings, observe, f, p, req, warnings, step))
    offsets0 = [Site(nuc.symbol, nuc.spin, shift, count) for nuc, shift, count in spins]
    warnings.extend(equivalence_caveats(offsets0, couplings, labels=labels))
    if any(nuc.quadrupolar and nuc.symbol != "2H" for nuc, _, _ in spins):
        warnings.append("A quadrupolar spin is treated as sharp: fast relaxation often collapses its couplings.")
    if req.get("fields") not in (None, []):
        return {"observe": observe.symbol, "fields": blocks}
    return {"observe": observe.symbol, **blocks[0]}


DECLARED = {"spin_system": Op(
    "spin_system", "exact (second-order) spectrum of a coupled spin system, at one or several magnets", cli="spins",
    one_of=(("spectrometer", "field"),),
    limits=f"{MAX_SPINS} spin entries; {MAX_FIELDS} fields; blocks of {MAX_BLOCK_DIM} and {MAX_TOTAL_DIM} states "
           f"after factoring, Σ dim³ {MAX_WORK:.0e} (about 10 strongly coupled spins-½)", params=(
        Param("observe", "nuclide", default="1H", label="Observed nucleus", help="e.g. 1H", example="1H"),
        Param("spins", "objects", required=True, label="Spins", max_items=MAX_SPINS,
              help="each NUCLEUS,SHIFT_PPM[,COUNT], e.g. 1H,7.10", cli="--spin",
              cli_order=("nucleus", "shift", "count"),
              example=[{"nucleus": "1H", "shift": 1.0, "count": 2}, {"nucleus": "1H", "shift": "1.1 ppm"},
                       {"nucleus": "19F", "shift": -70}], items=(
            Param("nucleus", "nuclide", required=True, label="Nucleus", help="e.g. 1H"),
            Param("shift", "quantity", unit="shift", required=True, label="Shift", help="in ppm"),
            Param("count", "integer", default=1, bounds=(1, MAX_COUNT), label="Count", help="equivalent nuclei"),
            Param("label", "text", max_chars=MAX_LABEL, label="Label",
                  help="the spin's name, e.g. H-3 (default A, B, C… in order)"),
        )),
        Param("couplings", "objects", label="Couplings", max_items=MAX_SPINS * MAX_SPINS,
              help="each I,J,HZ with spins named by label or numbered from 0, e.g. A,B,8.0", cli="--coupling",
              cli_order=("between", "between", "J"),
              example=[{"between": [0, 1], "J": 7}, {"between": [1, 2], "J": "48 Hz"}], items=(
            Param("between", "pair", required=True, label="Between",
                  help="the two spins, e.g. [\"A\", \"B\"] or [0, 1]"),
            Param("J", "quantity", unit="coupling", required=True, label="J", help="the coupling in Hz"),
        )),
        *MAGNET,
        Param("fields", "quantities", unit="magnet_MHz", max_items=MAX_FIELDS,
              label="Several magnets, ¹H frequencies, comma-separated",
              help="several 1H frequencies, e.g. '300, 600 MHz' (instead of spectrometer)",
              example=["300 MHz", 600]),
        Param("factor_equivalence", "flag", default=True, label="Factor equivalent spins",
              help="use magnetic equivalence to shrink the problem (same answer, faster)"),
        Param("exact", "flag", default=False, label="Exact only",
              help="solve weak links between clusters exactly too (no first-order treatment)"),
        Param("first_order", "flag", default=False, label="Overlay the first-order pattern",
              help="also return the first-order lines for comparison"),
        *SPECTRUM,
    ))}

OPS = {"spin_system": op_spin_system}
