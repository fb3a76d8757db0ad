"""The ``multiplet`` op: first-order patterns from partner groups, with
isotopologue mixtures for element partners, quadrupolar handling and line shapes.

A group names its partner as a nuclide (``"2H"``: that isotope at 100 %), an
element (``"B"``, ``"Pt"``: its natural isotope mixture, or the mixture set in
``abundance``), or a bare spin (``{"spin": "3/2"}``).  For an element the
coupling ``J`` belongs to ``J_isotope`` (default: its most abundant magnetic
isotope) and the couplings to the other isotopes follow from J ∝ γ
(``nmrcalc.physics.coupling``).
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from fractions import Fraction
from typing import Any

from nmrcalc.api.fields import bounded, flag, in_range, magnet, nucleus, quantity, spin_text, zero_ppm_MHz
from nmrcalc.api.params import MAGNET, SPECTRUM, Op, Param
from nmrcalc.data.isotope_shifts import ISOTOPE_SHIFTS
from nmrcalc.errors import InputError
from nmrcalc.nuclides import Nuclide, element_of, isotopes_of, lookup, lookup_magnetic
from nmrcalc.physics import coupling, larmor, lineshape
from nmrcalc.physics.isotopologues import isotopologue_spectrum
from nmrcalc.physics.multiplet import multiplet, multiplet_label, normalized, parse_spin, ratio_string
from nmrcalc.physics.quadrupolar_relaxation import collapse_shape

# Quadrupolar partners whose splitting is usually seen (common practice, no source):
# 2H in organic molecules, 6Li/7Li and 10B/11B in symmetric (tetrahedral) ions.
RESOLVED_BY_DEFAULT = frozenset({"2H", "6Li", "7Li", "10B", "11B"})
MAX_TREE_LINES = 400
MAX_TRACES = 8


def _count(g: dict, where: str) -> int:
    n = g.get("count", 1)
    if isinstance(n, float) and n.is_integer():
        n = int(n)
    if isinstance(n, bool) or not isinstance(n, int) or n < 1:
        raise InputError("count must be a whole number of at least 1.", f"{where}.count")
    if n > 64:
        raise InputError("count is limited to 64 equivalent nuclei.", f"{where}.count", "too_large")
    return n


def _abundances(raw: object, field: str, base: dict[str, float] | None = None) -> dict[str, float]:
    """Isotope → percent from ``raw`` (a request's or a group's ``abundance``), over ``base``."""
    raw = raw or {}
    if not isinstance(raw, dict):
        raise InputError(f"'{field}' must map isotopes to percent, e.g. {{\"2H\": 99.8}}.", field)
    out = dict(base or {})
    for key in raw:
        nuc = lookup(key, f"{field}.{key}")
        pct = quantity(raw, key, "percent", prefix=f"{field}.")
        if pct < 0 or pct > 100:
            raise InputError(f"{nuc.symbol}: an abundance must lie between 0 and 100 %.", f"{field}.{key}")
        out[nuc.symbol] = pct
    by_element: dict[str, float] = {}
    for sym, pct in out.items():
        el = lookup(sym).element
        by_element[el] = by_element.get(el, 0.0) + pct
        if by_element[el] > 100 + 1e-9:
            raise InputError(f"The abundances given for {el} add up to more than 100 %.",
                             f"{field}.{sym}" if sym in raw else f"abundance.{sym}")
    return out


def _min_share(req: dict) -> float:
    """``min_share``: a fraction in [0, 1) as a bare number, or a percent when written with '%'."""
    value = req.get("min_share")
    if value in (None, ""):
        return 1e-4
    pct = isinstance(value, str) and value.strip().endswith("%")
    x = quantity(req, "min_share", "percent")
    share = x / 100 if pct else x
    if not 0 <= share < 1:
        raise InputError("min_share must be a fraction in [0, 1) or a percent such as '0.1 %'.", "min_share")
    return share


def _percent(n: Nuclide) -> float:
    """Natural abundance of ``n`` in percent (0 where the table gives none)."""
    return n.abundance_percent or 0.0


def _element_mixture(el: str, overrides: dict[str, float]) -> list[tuple[Nuclide, float]]:
    """(isotope, fraction) for an element: natural, with any user abundances; the rest keeps natural proportions."""
    isos = [n for n in isotopes_of(el) if n.abundance_percent]
    fixed = {n.symbol: overrides[n.symbol] for n in isotopes_of(el) if n.symbol in overrides}
    free = [n for n in isos if n.symbol not in fixed]
    rest = 100.0 - sum(fixed.values())
    natural_free = sum(_percent(n) for n in free)
    mix = [(lookup(s), pct / 100) for s, pct in fixed.items()]
    mix += [(n, rest / 100 * _percent(n) / natural_free) for n in free if natural_free > 0]
    return [(n, f) for n, f in mix if f > 0]


def _quadrupolar_choice(g: dict, where: str) -> str | None:
    choice = g.get("quadrupolar")
    if choice not in (None, "resolved", "collapsed"):
        raise InputError("quadrupolar must be 'resolved' or 'collapsed'.", f"{where}.quadrupolar")
    return choice


def _effective_J(nuc: Nuclide, J_Hz: float, choice: str | None, notes: set[str]) -> float:
    if not nuc.quadrupolar:
        return J_Hz
    resolved = choice == "resolved" or (choice is None and nuc.symbol in RESOLVED_BY_DEFAULT)
    if resolved:
        if nuc.symbol != "2H":
            notes.add(f"{nuc.symbol} is quadrupolar: its splitting is often broadened or collapsed by fast "
                      "relaxation except at highly symmetric sites; shown resolved.")
        return J_Hz
    notes.add(f"{nuc.symbol} is quadrupolar: shown collapsed (no splitting), as fast relaxation usually "
              "averages it; set quadrupolar to 'resolved' to see the full pattern.")
    return 0.0


def equivalence_rule(observe: Nuclide, where: str) -> str:
    """The rule stated in the result when a group is equivalent to the observed nucleus."""
    return (f"{where}: its positions are equivalent to the observed {observe.symbol}, and equivalent nuclei do "
            f"not split each other (first-order rule; H. Günther, NMR Spectroscopy, 3rd ed., 2013): only the "
            f"other isotopes at these positions split the line (e.g. CH3 → singlet, CH2D → 1:1:1 triplet, "
            f"CHD2 → 1:2:3:2:1 quintet in 1H).")


def _isotope_shifts(g: dict, where: str, el: str, ref_MHz: float | None) -> dict[str, float]:
    """``isotope_shift`` of a group: isotope of its element → shift per atom in Hz (ppm needs the magnet)."""
    raw = g.get("isotope_shift") or {}
    if not isinstance(raw, dict):
        raise InputError("'isotope_shift' must map isotopes to a shift per atom, e.g. {\"2H\": \"-0.25 ppm\"}.",
                         f"{where}.isotope_shift")
    out = {}
    for key, value in raw.items():
        field = f"{where}.isotope_shift.{key}"
        nuc = lookup(key, field)
        if nuc.element != el:
            raise InputError(f"{nuc.symbol} is not an isotope of this group's element {el}.", field)
        if isinstance(value, str) and value.strip().lower().endswith("hz"):
            out[nuc.symbol] = bounded(value, "coupling", field)
        else:
            if ref_MHz is None:
                raise InputError("An isotope shift in ppm needs the magnet: give 'spectrometer' or 'field' "
                                 "(or write the shift in Hz).", field, "missing_field")
            out[nuc.symbol] = larmor.offset_Hz(ref_MHz, bounded(value, "shift", field))
    return out


_TIME_UNITS = {"s": 1.0, "ms": 1e-3, "us": 1e-6, "µs": 1e-6, "μs": 1e-6}
MAX_COLLAPSE_POINTS = 20000


def _seconds(value: object, field: str) -> float:
    """A time such as ``"2 ms"`` (s, ms, µs; a bare number is seconds) in seconds, > 0."""
    text = value.strip() if isinstance(value, str) else value
    unit = "s"
    if isinstance(text, str):
        m = re.fullmatch(r"([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([a-zµμ]*)", text)
        if not m or (m.group(2) or "s") not in _TIME_UNITS:
            raise InputError(f"{field}: write a time such as '2 ms' (units s, ms, µs).", field)
        text, unit = float(m.group(1)), m.group(2) or "s"
    if isinstance(text, bool) or not isinstance(text, (int, float)) or not math.isfinite(text) or text <= 0:
        raise InputError(f"{field}: a relaxation time must be a positive number of seconds.", field)
    return in_range(float(text) * _TIME_UNITS[unit], field)


def _read_group(g: Any, i: int, observe: Nuclide, overrides: dict[str, float], ref_MHz: float | None,
                notes: set[str], rules: list[str], suggestions: list[dict]) -> tuple[str, Any]:
    """('plain', (spin, count, J_Hz)) or ('site', (positions, isotopes)); all of a group's keys are read here."""
    where = f"groups.{i}"
    if not isinstance(g, dict):
        raise InputError("Each group is an object with partner (or spin), count and J.", where)
    n = _count(g, where)
    J = quantity(g, "J", "coupling", prefix=f"{where}.")
    choice = _quadrupolar_choice(g, where)
    has_own = g.get("abundance") not in (None, {}) or g.get("isotope_shift") not in (None, {})
    if g.get("spin") not in (None, "") and g.get("partner") in (None, ""):
        for key in ("abundance", "isotope_shift", "equivalent", "J_isotope"):
            if g.get(key) not in (None, "", {}):
                raise InputError(f"'{key}' needs a named partner (a nuclide or an element), not a bare spin.",
                                 f"{where}.{key}")
        try:
            spin = parse_spin(g["spin"])
        except InputError as e:
            raise e.at(where) from None
        return "plain", (spin, n, J)
    partner = g.get("partner")
    if not isinstance(partner, str) or not partner.strip():
        raise InputError("Name a partner (a nuclide such as 2H, or an element such as B) or give a spin.",
                         f"{where}.partner", "missing_field")
    site_abundance = _abundances(g.get("abundance"), f"{where}.abundance", overrides)
    el = element_of(partner)
    named = lookup_magnetic(partner, f"{where}.partner") if el is None else None
    el = el or named.element  # type: ignore[union-attr]  # named is looked up whenever el is None
    equivalent = g.get("equivalent")
    if equivalent is None:
        equivalent = named is None and el == observe.element
    elif not isinstance(equivalent, bool):
        raise InputError("'equivalent' must be true or false.", f"{where}.equivalent")
    if equivalent:
        if el != observe.element:
            raise InputError(f"Partners of element {el} cannot be equivalent to the observed {observe.symbol}.",
                             f"{where}.equivalent")
        rules.append(equivalence_rule(observe, f"Group {i + 1}"))
    shifts = _isotope_shifts(g, where, el, ref_MHz)
    if g.get("T1") not in (None, ""):
        if named is None or not named.quadrupolar or has_own or any(lookup(s).element == el for s in overrides):
            raise InputError("T1 applies to one quadrupolar nuclide partner (such as 14N or 11B) at its own "
                             "abundance; name the isotope as the partner.", f"{where}.T1")
        if n != 1:
            raise InputError("T1 is supported for a single quadrupolar partner (count 1).", f"{where}.count")
        if choice is not None:
            raise InputError("Give either T1 or quadrupolar, not both: T1 decides how far the splitting collapses.",
                             f"{where}.quadrupolar")
        return "relaxing", (named.spin, J, _seconds(g["T1"], f"{where}.T1"), i)
    if named is not None:
        if equivalent and named is observe:
            return "plain", (named.spin, n, 0.0)
        if not has_own and not any(lookup(s).element == el for s in overrides):
            return "plain", (named.spin, n, _effective_J(named, J, choice, notes))
        j_iso = named
        if not any(lookup(s).element == el for s in site_abundance):
            site_abundance = {**site_abundance, named.symbol: 100.0}
    else:
        magnetic = [x for x in isotopes_of(el) if x.magnetic and x.abundance_percent
                    and not (equivalent and x is observe)]
        if not magnetic:
            raise InputError(f"{el} has no magnetic isotope at natural abundance: no splitting.",
                             f"{where}.partner", "not_magnetic")
        if g.get("J_isotope") in (None, ""):
            j_iso = max(magnetic, key=_percent)
            if len(magnetic) > 1 or equivalent:
                notes.add(f"J of the {el} group is taken as J to {j_iso.symbol} (the most abundant magnetic "
                          f"isotope{' other than the observed one' if equivalent else ''}).")
        else:
            j_iso = lookup_magnetic(g["J_isotope"], f"{where}.J_isotope")
            if j_iso.element != el:
                raise InputError(f"J_isotope must be an isotope of {el}.", f"{where}.J_isotope")
            if equivalent and j_iso is observe:
                raise InputError(f"J to {j_iso.symbol} cannot be seen: these positions are equivalent to the "
                                 "observed nucleus. Give J to another isotope (e.g. 2H), or set equivalent to false.",
                                 f"{where}.J_isotope")
    mixture = _element_mixture(el, site_abundance)
    present = {nuc.symbol for nuc, _ in mixture}
    if not shifts:
        suggestions.extend({"group": i, **row} for row in ISOTOPE_SHIFTS
                           if row["observed"] == observe.symbol and row["isotope"] in present
                           and (equivalent or observe.symbol != "1H"))
    for sym in shifts:
        if sym not in present:
            raise InputError(f"{sym} is not present in this group's isotope mixture, so its shift would never apply.",
                             f"{where}.isotope_shift.{sym}")
    isotopes: list[tuple[str, Fraction | int, float, float, float]] = []
    for nuc, fraction in mixture:
        shift = shifts.get(nuc.symbol, 0.0)
        if equivalent and nuc is observe:  # present, but never splits the line
            isotopes.append((nuc.symbol, nuc.spin, fraction, 0.0, shift))
        elif nuc.magnetic:
            J_iso = J if nuc is j_iso else coupling.scale_J_Hz(J, j_iso, nuc)
            if nuc is not j_iso and J != 0:
                notes.add(f"J to {nuc.symbol} is derived from J to {j_iso.symbol} by the γ ratio: an estimate "
                          "(isotope effects of about 1–2 %).")
            isotopes.append((nuc.symbol, nuc.spin, fraction, _effective_J(nuc, J_iso, choice, notes), shift))
        else:
            isotopes.append((nuc.symbol, 0, fraction, 0.0, shift))
    lumped = [iso for iso in isotopes if iso[1] != 0 or iso[4]]
    spin0 = [iso for iso in isotopes if iso not in lumped]
    if spin0:
        lumped.append((f"spin-0 {el}", 0, sum(iso[2] for iso in spin0), 0.0, 0.0))
    return "site", (n, [(lab, s, repr(f), j, sh) for lab, s, f, j, sh in lumped])


def _line_dicts(
    lines: Iterable[tuple[float, float]], ref_MHz: float | None, center_ppm: float | None
) -> list[dict[str, float]]:
    out = []
    for x, y in lines:
        d = {"Hz": x, "intensity": y}
        if center_ppm is not None:
            d["ppm"] = center_ppm + larmor.shift_ppm(ref_MHz, x)  # type: ignore[arg-type]  # a centre comes with ref_MHz
        out.append(d)
    return out


def _tree(plain_groups: Iterable[tuple[Fraction, int, float]]) -> list[list[float]] | None:
    ordered = sorted((g for g in plain_groups if g[2] != 0), key=lambda g: -abs(g[2]))
    levels = [[0.0]]
    for k in range(1, len(ordered) + 1):
        sticks = multiplet(ordered[:k])
        if len(sticks) > MAX_TREE_LINES:
            return None
        levels.append([x for x, _ in sticks])
    return levels


def _collapsed(grid: lineshape.SampledSpectrum, others: list[Any], relaxing: tuple[Fraction, float, float, int],
               width: float, shape: str) -> lineshape.SampledSpectrum:
    """The sampled spectrum with the relaxing partner's pattern (Lorentzian lines only) instead of sticks."""
    spin, J, T1, i = relaxing
    if shape != "lorentzian":
        raise InputError("A partly collapsed pattern (T1) is drawn with Lorentzian lines only.", "shape")
    sticks = normalized(multiplet(others)) if others else [(0.0, 1.0)]
    if len(grid.x_Hz) * len(sticks) > MAX_COLLAPSE_POINTS * 50 or len(grid.x_Hz) > MAX_COLLAPSE_POINTS:
        raise InputError("Too many points for a partly collapsed spectrum: widen the lines or drop a group.",
                         f"groups.{i}.T1", "too_large")
    y = [0.0] * len(grid.x_Hz)
    for x0, w in sticks:
        for k, v in enumerate(collapse_shape([x - x0 for x in grid.x_Hz], J, spin, T1, width)):
            y[k] += w * v
    return lineshape.SampledSpectrum(grid.x_Hz, y, grid.step_Hz)


def op_multiplet(req: dict, warnings: list[str]) -> dict:
    observe = nucleus(req, "observe")
    groups = req.get("groups", [])
    if not isinstance(groups, list):
        raise InputError("'groups' must be a list of partner groups.", "groups")
    ref_MHz: float | None = None
    center: float | None = None
    has_magnet = req.get("spectrometer") not in (None, "") or req.get("field") not in (None, "")
    if has_magnet:
        field_T, proton_MHz = magnet(req, warnings)
        ref_MHz = zero_ppm_MHz(observe, field_T, proton_MHz, warnings)
    if req.get("center") not in (None, ""):
        if ref_MHz is None:
            raise InputError("A centre in ppm needs the magnet: give 'spectrometer' or 'field'.", "spectrometer",
                             "missing_field")
        center = quantity(req, "center", "shift")
    overrides = _abundances(req.get("abundance"), "abundance")
    min_share = _min_share(req)
    notes: set[str] = set()
    rules: list[str] = []
    suggestions: list[dict] = []
    plain: list[Any] = []
    sites: list[Any] = []
    relaxing: list[Any] = []
    for i, g in enumerate(groups):
        kind, value = _read_group(g, i, observe, overrides, ref_MHz, notes, rules, suggestions)
        {"plain": plain, "site": sites, "relaxing": relaxing}[kind].append(value)
    if len(relaxing) > 1 or (relaxing and sites):
        raise InputError("T1 (partial collapse) is supported for one quadrupolar partner, beside nuclide or "
                         "spin partners only (no element mixtures).", f"groups.{relaxing[-1][3]}.T1")
    others = list(plain)
    plain = plain + [(spin, 1, J) for spin, J, _, _ in relaxing]

    result: dict[str, Any] = {"observe": observe.symbol,
              "groups": [{"spin": spin_text(Fraction(s)), "count": c, "J_Hz": j} for s, c, j in plain],
              "rules": rules, "isotope_shift_suggestions": suggestions}
    if sites:
        try:
            spec = isotopologue_spectrum(sites, plain, min_share)
        except InputError as e:  # the physics names its element sites "sites"; the request calls them groups
            raise InputError(e.message, "groups" if e.field == "sites" else e.field, e.code) from None
        main = spec.species[0]
        lines = spec.lines
        result["isotopologues"] = [
            {"label": s.label, "share": float(s.share), "multiplet": s.multiplet_label,
             "ratio": ratio_string(s.sticks), "center_Hz": s.center_Hz, "atoms": list(s.atoms),
             # a centre is only read once the magnet has given ref_MHz
             "center_ppm": None if center is None else center + larmor.shift_ppm(ref_MHz, s.center_Hz),  # type: ignore[arg-type]
             "lines": _line_dicts(s.lines, ref_MHz, center)}
            for s in spec.species]
        result["dropped_share"] = float(spec.dropped_share)
        if len(spec.species) == 1:
            result["ratio"], result["label"] = ratio_string(main.sticks), main.multiplet_label
        else:
            result["ratio"] = None
            minor = "; ".join(f"{s.label}: {s.multiplet_label}" for s in spec.species[1:4])
            more = "; …" if len(spec.species) > 4 else ""
            result["label"] = f"{main.multiplet_label}, with {minor}{more}"
        species_traces = [(s.label, float(s.share / spec.kept_share), s.lines) for s in spec.species[:MAX_TRACES]]
    else:
        sticks = multiplet(plain)
        lines = normalized(sticks)
        result["ratio"], result["label"] = ratio_string(sticks), multiplet_label(plain)
        result["tree"] = _tree(plain)
        species_traces = []
    result["lines"] = _line_dicts(lines, ref_MHz, center)
    result["center_ppm"], result["observe_MHz"] = center, ref_MHz

    if flag(req, "spectrum"):
        width = quantity(req, "linewidth", "coupling", positive=True, default=1.0)
        shape = req.get("shape", "lorentzian")
        try:
            total = lineshape.sample_spectrum(lines, width, shape)
            if relaxing:
                total = _collapsed(total, others, relaxing[0], width, shape)
            window = (total.x_Hz[0], total.x_Hz[-1])
            traces = [{"label": lab, "share": share,
                       "y": [share * v for v in lineshape.sample_spectrum(ls, width, shape, window_Hz=window,
                                                                           points=len(total.x_Hz)).y]}
                      for lab, share, ls in species_traces]
        except InputError as e:
            renamed: dict[str | None, str | None] = {"fwhm_Hz": "linewidth"}
            raise InputError(e.message, renamed.get(e.field, e.field), e.code) from None
        spectrum = {"x_Hz": total.x_Hz, "y": total.y, "traces": traces, "linewidth_Hz": width, "shape": shape}
        if center is not None:
            spectrum["x_ppm"] = lineshape.hz_to_ppm(total.x_Hz, ref_MHz, center)  # type: ignore[arg-type]  # as above
        result["spectrum"] = spectrum
    if relaxing:
        spin, J, T1, i = relaxing[0]
        result["label"] += " (the spectrum shows it partly collapsed by relaxation)"
        result["partial_collapse"] = {
            "group": i, "T1_s": T1, "J_Hz": J, "spin": spin_text(spin), "two_pi_J_T1": 2 * math.pi * abs(J) * T1,
            "source": "Pople, Mol. Phys. 1 (1958) 168 (I = 1); Suzuki & Kubo, Mol. Phys. 7 (1964) 201 (any I); "
                      "extreme narrowing"}
        warnings.append(f"Group {i + 1}: the lines and ratio are the resolved pattern; the spectrum shows it partly "
                        f"collapsed by the partner's relaxation (T1 = {T1:.3g} s, "
                        f"2πJT1 = {2 * math.pi * abs(J) * T1:.3g}; "
                        "resolved when ≫ 1, one line when ≪ 1).")
    warnings.extend(sorted(notes))
    return result


DECLARED = {"multiplet": Op(
    "multiplet", "first-order multiplet from partner groups, with isotopologue mixtures for element partners",
    one_of=(("spectrometer", "field"),), limits="64 nuclei a group; 400 lines in a splitting tree", params=(
        Param("observe", "nuclide", required=True, label="Observed nucleus", help="e.g. 13C", example="13C"),
        Param("groups", "objects", label="Partner groups", max_items=32,
              help="each PARTNER,COUNT,J, e.g. '2H,3,19.3 Hz', 'B,1,81 Hz' or 'spin=1,2,7 Hz'",
              cli="--group", cli_order=("partner", "count", "J"),
              example=[{"partner": "1H", "count": 2, "J": 7},
                       {"partner": "B", "count": 1, "J": 80, "J_isotope": "11B", "quadrupolar": "resolved"},
                       {"spin": "1/2", "count": 1, "J": "2 Hz"}, {"partner": "D", "count": 1, "J": 1}], items=(
            Param("partner", "partner", label="Partner",
                  help="a nuclide (2H: that isotope) or an element (B: its mixture)"),
            Param("spin", "spin", label="Spin", help="a bare spin instead of a partner, e.g. 3/2"),
            Param("count", "integer", default=1, bounds=(1, 64), label="Count", help="equivalent partners"),
            Param("J", "quantity", unit="coupling", required=True, label="J", help="the coupling, e.g. '19.3 Hz'"),
            Param("J_isotope", "nuclide", label="J is to isotope",
                  help="element partner: the isotope J refers to (default its most abundant magnetic one)"),
            Param("quadrupolar", "choice", choices=("resolved", "collapsed"), label="Quadrupolar splitting",
                  help="show a quadrupolar partner's splitting resolved or collapsed"),
            Param("equivalent", "flag", label="Equivalent to the observed nucleus",
                  help="true: these positions belong to the observed nucleus's own equivalent set, so its own isotope "
                       "does not split it (default: true for an element partner of the observed element)"),
            Param("abundance", "map", unit="percent", label="Abundances at this site",
                  help="percent by isotope for this group only, over the request-level abundance, e.g. {\"2H\": 99.8}"),
            Param("isotope_shift", "value", label="Isotope shift per atom", example={"2H": "-25 Hz"},
                  help="isotope → shift of the observed line per atom of it, e.g. {\"2H\": \"-0.25 ppm\"} "
                       "(ppm needs the magnet; Hz also accepted)"),
            Param("T1", "value", label="Partner T1", example="2 ms",
                  help="a quadrupolar nuclide partner's T1, e.g. '2 ms': the spectrum shows the partial collapse"),
        )),
        Param("abundance", "map", unit="percent", label="Isotope abundances",
              help="percent by isotope, e.g. {\"2H\": 99.8}; ISOTOPE=PERCENT on the CLI"),
        *MAGNET,
        Param("center", "quantity", unit="shift", label="Centre", help="centre in ppm (needs the magnet)"),
        Param("min_share", "quantity", unit="percent", label="Smallest isotopologue kept", example="0.1 %",
              help="isotopologues below this share are left out: a fraction (0.0001) or a percent written "
                   "with % ('0.1 %')"),
        *SPECTRUM,
    ))}

OPS = {"multiplet": op_multiplet}
