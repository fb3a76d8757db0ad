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

from fractions import Fraction

from nmrcalc.api.fields import flag, magnet, nucleus, quantity, spin_text, zero_ppm_MHz
from nmrcalc.api.params import MAGNET, SPECTRUM, Op, Param
from nmrcalc.errors import InputError
from nmrcalc.nuclides import Nuclide, element_of, isotopes_of, lookup, lookup_magnetic
from nmrcalc.physics import larmor, lineshape
from nmrcalc.physics.isotopologues import isotopologue_spectrum
from nmrcalc.physics.multiplet import multiplet, multiplet_label, normalized, parse_spin, ratio_string

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


def _abundances(req: dict) -> dict[str, float]:
    raw = req.get("abundance") or {}
    if not isinstance(raw, dict):
        raise InputError("'abundance' must map isotopes to percent, e.g. {\"2H\": 99.8}.", "abundance")
    out = {}
    for key, value in raw.items():
        nuc = lookup(key, f"abundance.{key}")
        pct = quantity(raw, key, "percent", prefix="abundance.")
        if pct < 0 or pct > 100:
            raise InputError(f"{nuc.symbol}: an abundance must lie between 0 and 100 %.", f"abundance.{key}")
        out[nuc.symbol] = pct
    by_element: dict[str, float] = {}
    for sym, pct in out.items():
        el = lookup(sym).element
        by_element[el] = by_element.get(el, 0.0) + pct
        if by_element[el] > 100 + 1e-9:
            raise InputError(f"The abundances given for {el} add up to more than 100 %.", f"abundance.{sym}")
    return out


def _element_mixture(el: str, overrides: dict[str, float]) -> list[tuple[Nuclide, float]]:
    """(isotope, fraction) for an element: natural, with any user abundances; the rest keeps natural proportions."""
    isos = [n for n in isotopes_of(el) if n.abundance_percent]
    fixed = {n.symbol: overrides[n.symbol] for n in isotopes_of(el) if n.symbol in overrides}
    free = [n for n in isos if n.symbol not in fixed]
    rest = 100.0 - sum(fixed.values())
    natural_free = sum(n.abundance_percent for n in free)
    mix = [(lookup(s), pct / 100) for s, pct in fixed.items()]
    mix += [(n, rest / 100 * n.abundance_percent / natural_free) for n in free if natural_free > 0]
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


def _read_group(g, i: int, overrides, notes) -> tuple[str, object]:
    """('plain', (spin, count, J_Hz)) or ('site', (positions, isotopes))."""
    where = f"groups.{i}"
    if not isinstance(g, dict):
        raise InputError("Each group is an object with partner (or spin), count and J.", where)
    n = _count(g, where)
    J = quantity(g, "J", "coupling", prefix=f"{where}.")
    choice = _quadrupolar_choice(g, where)
    if g.get("spin") not in (None, "") and g.get("partner") in (None, ""):
        try:
            spin = parse_spin(g["spin"])
        except InputError as e:
            raise e.at(where) from None
        return "plain", (spin, n, J)
    partner = g.get("partner")
    if not isinstance(partner, str) or not partner.strip():
        raise InputError("Name a partner (a nuclide such as 2H, or an element such as B) or give a spin.",
                         f"{where}.partner", "missing_field")
    el = element_of(partner)
    if el is None:
        nuc = lookup_magnetic(partner, f"{where}.partner")
        if not any(lookup(s).element == nuc.element for s in overrides):
            return "plain", (nuc.spin, n, _effective_J(nuc, J, choice, notes))
        el, j_iso = nuc.element, nuc
    else:
        magnetic = [x for x in isotopes_of(el) if x.magnetic and x.abundance_percent]
        if not magnetic:
            raise InputError(f"{el} has no magnetic isotope at natural abundance: no splitting.",
                             f"{where}.partner", "not_magnetic")
        if g.get("J_isotope") in (None, ""):
            j_iso = max(magnetic, key=lambda x: x.abundance_percent)
            if len(magnetic) > 1:
                notes.add(f"J of the {el} group is taken as J to {j_iso.symbol} (the most abundant magnetic isotope).")
        else:
            j_iso = lookup_magnetic(g["J_isotope"], f"{where}.J_isotope")
            if j_iso.element != el:
                raise InputError(f"J_isotope must be an isotope of {el}.", f"{where}.J_isotope")
    isotopes = []
    for nuc, fraction in _element_mixture(el, overrides):
        if nuc.magnetic:
            J_iso = J * nuc.gamma_rad_per_s_per_T / j_iso.gamma_rad_per_s_per_T
            if nuc is not j_iso and J != 0:
                notes.add(f"J to {nuc.symbol} is derived from J to {j_iso.symbol} by the γ ratio: an estimate "
                          "(isotope effects of about 1–2 %).")
            isotopes.append((nuc.symbol, nuc.spin, fraction, _effective_J(nuc, J_iso, choice, notes)))
        else:
            isotopes.append((nuc.symbol, 0, fraction, 0.0))
    spin0 = [iso for iso in isotopes if iso[1] == 0]
    lumped = [iso for iso in isotopes if iso[1] != 0]
    if spin0:
        lumped.append((f"spin-0 {el}", 0, sum(iso[2] for iso in spin0), 0.0))
    return "site", (n, [(lab, s, repr(f), j) for lab, s, f, j in lumped])


def _line_dicts(lines, ref_MHz, center_ppm):
    out = []
    for x, y in lines:
        d = {"Hz": x, "intensity": y}
        if center_ppm is not None:
            d["ppm"] = center_ppm + x / ref_MHz
        out.append(d)
    return out


def _tree(plain_groups) -> list[list[float]] | None:
    ordered = sorted((g for g in plain_groups if g[2] != 0), key=lambda g: -abs(g[2]))
    levels = [[0.0]]
    for k in range(1, len(ordered) + 1):
        sticks = multiplet(ordered[:k])
        if len(sticks) > MAX_TREE_LINES:
            return None
        levels.append([x for x, _ in sticks])
    return levels


def op_multiplet(req, warnings):
    observe = nucleus(req, "observe")
    groups = req.get("groups", [])
    if not isinstance(groups, list):
        raise InputError("'groups' must be a list of partner groups.", "groups")
    overrides = _abundances(req)
    notes: set[str] = set()
    plain, sites = [], []
    for i, g in enumerate(groups):
        kind, value = _read_group(g, i, overrides, notes)
        (plain if kind == "plain" else sites).append(value)

    ref_MHz = center = None
    has_magnet = req.get("spectrometer") not in (None, "") or req.get("field") not in (None, "")
    if has_magnet:
        field_T, proton_MHz = magnet(req, warnings)
        ref_MHz = zero_ppm_MHz(observe, field_T, proton_MHz, warnings)
    if req.get("center") not in (None, ""):
        if ref_MHz is None:
            raise InputError("A centre in ppm needs the magnet: give 'spectrometer' or 'field'.", "spectrometer", "missing_field")
        center = quantity(req, "center", "shift")

    result = {"observe": observe.symbol,
              "groups": [{"spin": spin_text(Fraction(s)), "count": c, "J_Hz": j} for s, c, j in plain]}
    if sites:
        min_share = quantity(req, "min_share", "percent", default=1e-4)
        try:
            spec = isotopologue_spectrum(sites, plain, min_share)
        except InputError as e:  # the physics names its element sites "sites"; the request calls them groups
            raise InputError(e.message, "groups" if e.field == "sites" else e.field, e.code) from None
        main = spec.species[0]
        lines = spec.lines
        result["isotopologues"] = [
            {"label": s.label, "share": float(s.share), "multiplet": s.multiplet_label,
             "ratio": ratio_string(s.sticks), "lines": _line_dicts(s.lines, ref_MHz, center)}
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
            window = (total.x_Hz[0], total.x_Hz[-1])
            traces = [{"label": lab, "share": share,
                       "y": [share * v for v in lineshape.sample_spectrum(ls, width, shape, window_Hz=window).y]}
                      for lab, share, ls in species_traces]
        except InputError as e:
            raise InputError(e.message, {"fwhm_Hz": "linewidth"}.get(e.field, e.field), e.code) from None
        spectrum = {"x_Hz": total.x_Hz, "y": total.y, "traces": traces, "linewidth_Hz": width, "shape": shape}
        if center is not None:
            spectrum["x_ppm"] = lineshape.hz_to_ppm(total.x_Hz, ref_MHz, center)
        result["spectrum"] = spectrum
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
            Param("partner", "partner", label="Partner", help="a nuclide (2H: that isotope) or an element (B: its mixture)"),
            Param("spin", "spin", label="Spin", help="a bare spin instead of a partner, e.g. 3/2"),
            Param("count", "integer", default=1, bounds=(1, 64), label="Count", help="equivalent partners"),
            Param("J", "quantity", unit="coupling", required=True, label="J", help="the coupling, e.g. '19.3 Hz'"),
            Param("J_isotope", "nuclide", label="J is to isotope",
                  help="element partner: the isotope J refers to (default its most abundant magnetic one)"),
            Param("quadrupolar", "choice", choices=("resolved", "collapsed"), label="Quadrupolar splitting",
                  help="show a quadrupolar partner's splitting resolved or collapsed"),
        )),
        Param("abundance", "map", unit="percent", label="Isotope abundances",
              help="percent by isotope, e.g. {\"2H\": 99.8}; ISOTOPE=PERCENT on the CLI"),
        *MAGNET,
        Param("center", "quantity", unit="shift", label="Centre", help="centre in ppm (needs the magnet)"),
        Param("min_share", "number", bounds=(0, 1), label="Smallest isotopologue kept", example=1e-4,
              help="isotopologues below this share (a fraction) are left out"),
        *SPECTRUM,
    ))}

OPS = {"multiplet": op_multiplet}
