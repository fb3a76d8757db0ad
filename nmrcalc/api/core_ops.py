"""Ops of the calculation core: nuclide data, frequencies, ppm ↔ Hz,
coupling scaling, energies and sensitivity.  Each takes the request and a
warnings list and returns the result dict (JSON types only)."""

from __future__ import annotations

from typing import Any

from nmrcalc.api.fields import flag, magnet, nucleus, quantity, require, spin_text, zero_ppm_MHz
from nmrcalc.api.params import MAGNET, Op, Param
from nmrcalc.data.elements import NAME_OF_SYMBOL
from nmrcalc.errors import InputError
from nmrcalc.nuclides import BIOMOLECULAR, MAGNETIC, Nuclide, lookup, receptivity, search
from nmrcalc.physics import acquisition, coupling, energy, larmor, sensitivity

QUADRUPOLE_NOTE = ("Quadrupolar (I > 1/2): fast relaxation often broadens its lines and collapses "
                   "its splitting of partners, except at highly symmetric sites.")


def nuclide_record(nuc: Nuclide) -> dict:
    notes = []
    if not nuc.magnetic:
        notes.append("Spin 0: no NMR signal and no splitting of other nuclei.")
    if nuc.quadrupolar:
        notes.append(QUADRUPOLE_NOTE)
    if nuc.radioactive:
        notes.append("Radioactive: handle under the facility's radiation rules.")
    if nuc.magnetic and nuc.xi_percent is None:
        notes.append("No recommended reference (Ξ) for this nuclide.")
    bio = BIOMOLECULAR.get(nuc.symbol)
    return {
        "symbol": nuc.symbol, "element": nuc.element, "element_name": NAME_OF_SYMBOL.get(nuc.element),
        "Z": nuc.Z, "A": nuc.A, "spin": spin_text(nuc.spin), "magnetic": nuc.magnetic,
        "gamma_rad_per_s_per_T": nuc.gamma_rad_per_s_per_T,
        "abundance_percent": nuc.abundance_percent, "quadrupole_fm2": nuc.quadrupole_fm2,
        "xi_percent": nuc.xi_percent, "reference": nuc.reference,
        "biomolecular_xi_percent": bio[0] if bio else None,
        "biomolecular_reference": bio[1] if bio else None,
        "receptivity_H": receptivity(nuc, "1H") if nuc.magnetic else 0.0,
        "receptivity_C": receptivity(nuc, "13C") if nuc.magnetic else 0.0,
        "radioactive": nuc.radioactive, "notes": notes,
    }


def op_nuclide(req: dict, warnings: list[str]) -> dict:
    return nuclide_record(nucleus({"query": require(req, "query")}, "query", magnetic=False))


def op_nuclides(req: dict, warnings: list[str]) -> dict:
    text = req.get("search", "")
    spin_zero = flag(req, "include_spin_zero")
    rows = [nuclide_record(n) for n in search(text) if n.magnetic or spin_zero]
    return {"nuclides": rows, "count": len(rows)}


def _frequency_row(nuc: Nuclide, field_T: float, proton_MHz: float, scale: str) -> dict:
    nu = larmor.larmor_MHz(nuc, field_T)
    ref = larmor.reference_MHz(nuc, proton_MHz, scale)
    diff = None if ref is None else larmor.reference_minus_bare(nuc, ref, nu)
    return {"symbol": nuc.symbol, "spin": spin_text(nuc.spin), "abundance_percent": nuc.abundance_percent,
            "reference_MHz": ref, "larmor_MHz": nu,
            "difference_ppm": None if diff is None else diff.ppm,
            "difference_precision_ppm": None if diff is None else diff.precision_ppm,
            "difference_decimals": None if diff is None else diff.decimals,
            "receptivity_C": receptivity(nuc, "13C")}


def _scale(req: dict) -> str:
    scale = req.get("scale", "unified")
    if scale not in ("unified", "biomolecular"):
        raise InputError("'scale' must be 'unified' (IUPAC 2001) or 'biomolecular' (DSS, IUPAC 2008).", "scale")
    return scale


DIFFERENCE_NOTE = ("0 ppm − bare nucleus: the shielding of the nucleus in its reference compound (relative "
                   "to the TMS proton) plus the uncertainty of the tabulated moment — not a chemical shift. "
                   "Shown only to the precision of the tabulated γ and Ξ (one unit in their last digit).")
_SORT_KEYS = ("symbol", "reference_MHz", "larmor_MHz", "abundance_percent", "receptivity_C", "spin")


def op_frequency(req: dict, warnings: list[str]) -> dict:
    field_T, proton_MHz = magnet(req, warnings)
    scale = _scale(req)
    base = {"field_T": field_T, "field_G": field_T * 1e4, "proton_MHz": proton_MHz, "scale": scale,
            "difference_note": DIFFERENCE_NOTE}
    if req.get("nucleus") not in (None, ""):
        nuc = nucleus(req, "nucleus")
        row = _frequency_row(nuc, field_T, proton_MHz, scale)
        if row["reference_MHz"] is None:
            warnings.append(f"{nuc.symbol} has no recommended reference (Ξ); only the bare Larmor frequency is given.")
        return {**base, **row}
    rows = [_frequency_row(n, field_T, proton_MHz, scale) for n in MAGNETIC.values()]
    if flag(req, "spin_half_only"):
        rows = [r for r in rows if r["spin"] == "1/2"]
    min_ab = quantity(req, "min_abundance_percent", "percent", default=0.0)
    if min_ab > 0:
        rows = [r for r in rows if (r["abundance_percent"] or 0) >= min_ab]
    lo = quantity(req, "min_MHz", "frequency", default=float("-inf"))
    hi = quantity(req, "max_MHz", "frequency", default=float("inf"))
    rows = [r for r in rows if lo <= r["larmor_MHz"] <= hi]
    key = req.get("sort", "larmor_MHz")
    if key not in _SORT_KEYS:
        raise InputError(f"'sort' must be one of {', '.join(_SORT_KEYS)}.", "sort")
    descending = flag(req, "descending", key != "symbol")
    rows.sort(key=lambda r: (r[key] is None, _sortable(r[key])), reverse=False)
    if descending:
        known = [r for r in rows if r[key] is not None][::-1]
        rows = known + [r for r in rows if r[key] is None]
    return {**base, "table": rows, "count": len(rows)}


def _sortable(value: object) -> Any:
    if isinstance(value, str) and "/" in value or isinstance(value, str) and value.isdigit():
        num, _, den = value.partition("/")
        return float(num) / float(den or 1)
    return value if value is not None else 0


def op_ppm_hz(req: dict, warnings: list[str]) -> dict:
    nuc = nucleus(req, "nucleus")
    field_T, proton_MHz = magnet(req, warnings)
    ref = zero_ppm_MHz(nuc, field_T, proton_MHz, warnings, _scale(req))
    has_ppm, has_hz = req.get("ppm") not in (None, ""), req.get("Hz") not in (None, "")
    if has_ppm == has_hz:
        raise InputError("Give exactly one of 'ppm' or 'Hz'.", "ppm",
                         "missing_field" if not has_ppm else "invalid_value")
    if has_ppm:
        shift = quantity(req, "ppm", "shift")
        off = larmor.offset_Hz(ref, shift)
    else:
        off = quantity(req, "Hz", "coupling")
        shift = larmor.shift_ppm(ref, off)
    result = {"reference_MHz": ref, "field_T": field_T, "ppm": shift, "offset_Hz": off,
              "frequency_MHz": larmor.line_MHz(ref, shift), "Hz_per_ppm": ref}
    if req.get("carrier_ppm") not in (None, ""):
        carrier = quantity(req, "carrier_ppm", "shift")
        result["carrier_ppm"] = carrier
        result["offset_from_carrier_Hz"] = larmor.offset_Hz(ref, shift - carrier)
    return result


def op_scale_coupling(req: dict, warnings: list[str]) -> dict:
    J = quantity(req, "J", "coupling")
    src, dst = nucleus(req, "from", magnetic=False), nucleus(req, "to", magnetic=False)
    ratio, source = coupling.isotope_ratio(src, dst)
    J_new = J * ratio
    result = {"J_Hz": J_new, "J_from_Hz": J, "ratio": ratio, "ratio_source": source,
              "ratio_note": coupling.XI_RATIO_NOTE if source == "xi" else coupling.GAMMA_RATIO_NOTE,
              "from": src.symbol, "to": dst.symbol,
              "sign_flipped": ratio < 0, "estimate": True, "reduced_coupling": None}
    warnings.append(coupling.ISOTOPE_EFFECT_NOTE)
    if ratio < 0:
        warnings.append(f"γ({src.symbol}) and γ({dst.symbol}) have opposite signs, so the sign of J flips.")
    if src.symbol == dst.symbol:
        warnings.append("'from' and 'to' are the same isotope: nothing to scale.")
    for nuc in (src, dst):
        if nuc.quadrupolar and nuc.symbol != "2H":
            warnings.append(f"{nuc.symbol}: {QUADRUPOLE_NOTE}")
    if req.get("partner") not in (None, ""):
        partner = nucleus(req, "partner")
        result["partner"] = partner.symbol
        result["reduced_coupling"] = coupling.reduced_coupling(J, src, partner)
        result["reduced_coupling_unit"] = "N A-2 m-3"
    return result


def op_energy(req: dict, warnings: list[str]) -> dict:
    has_nuc = req.get("nucleus") not in (None, "")
    has_wl, has_wn = req.get("wavelength") not in (None, ""), req.get("wavenumber") not in (None, "")
    if has_wl and has_wn:
        raise InputError("Give either 'wavelength' or 'wavenumber', not both.", "wavenumber")
    photon = None
    if has_wl or has_wn:
        f = energy.photon_freq_Hz(quantity(req, "wavelength", "wavelength", positive=True) if has_wl else None,
                                  quantity(req, "wavenumber", "wavenumber", positive=True) if has_wn else None)
        photon = energy.energy_units(f)
    if not has_nuc:
        if photon is None:
            raise InputError("Give a 'nucleus' with a magnet, or a 'wavelength' or 'wavenumber'.", "nucleus",
                             "missing_field")
        return photon
    nuc = nucleus(req, "nucleus")
    field_T, _ = magnet(req, warnings)
    T = quantity(req, "temperature", "temperature", positive=True, default=298.15)
    if T > 1000 or T < 1:
        warnings.append(f"{T:g} K is outside the range of liquid-state NMR; check the value.")
    result: dict[str, Any] = energy.energy_units(larmor.larmor_MHz(nuc, field_T) * 1e6)
    pops = energy.populations(nuc.spin, nuc.gamma_rad_per_s_per_T, field_T, T)
    result.update({"nucleus": nuc.symbol, "field_T": field_T, "temperature_K": T,
                   "populations": [{"m": str(m), "fraction": p} for m, p in pops],
                   "population_excess": energy.adjacent_excess(nuc.spin, nuc.gamma_rad_per_s_per_T, field_T, T)})
    if photon is not None:
        result["photon"] = photon
        result["photon_over_nmr"] = photon["J"] / result["J"]
    return result


def op_sensitivity(req: dict, warnings: list[str]) -> dict:
    nuc = nucleus(req, "nucleus")
    ref = nucleus(req, "relative_to", magnetic=True) if req.get("relative_to") not in (None, "") else lookup("13C")
    enrich = None
    if req.get("enrichment_percent") not in (None, ""):
        enrich = quantity(req, "enrichment_percent", "percent", positive=True)
        if enrich > 100:
            raise InputError("'enrichment_percent' cannot exceed 100.", "enrichment_percent")
    D = sensitivity.relative_receptivity(nuc, ref, enrich)
    warnings.append("Receptivity compares equal numbers of molecules under equal conditions; relaxation, "
                    "line width, NOE and probe tuning change real sensitivity.")
    return {"nucleus": nuc.symbol, "relative_to": ref.symbol,
            "abundance_percent": enrich if enrich else nuc.abundance_percent,
            "receptivity": D, "time_factor": sensitivity.time_factor(D),
            "receptivity_H": receptivity(nuc, "1H", enrich), "receptivity_C": receptivity(nuc, "13C", enrich)}


MAX_POINTS = 1 << 24  # complex points in one acquisition window


def op_acquisition_window(req: dict, warnings: list[str]) -> dict:
    """Window for a ppm range of one nucleus; with a 90° pulse length, what that pulse excites."""
    nuc = nucleus(req, "nucleus")
    field_T, proton_MHz = magnet(req, warnings)
    low = quantity(req, "low_ppm", "shift")
    high = quantity(req, "high_ppm", "shift")
    points = require(req, "points")
    pulse_us = quantity(req, "pulse_90", "time", positive=True) if req.get("pulse_90") not in (None, "") else None
    scale = _scale(req)
    if isinstance(points, bool) or not isinstance(points, int) or not 2 <= points <= MAX_POINTS:
        raise InputError(f"'points' must be a whole number of complex points from 2 to {MAX_POINTS}.", "points")
    if high == low:
        raise InputError("The window needs two different shifts.", "high_ppm")
    low, high = min(low, high), max(low, high)
    ref = zero_ppm_MHz(nuc, field_T, proton_MHz, warnings, scale)
    w = acquisition.window(ref, low, high, points)
    result = {"nucleus": nuc.symbol, "field_T": field_T, "proton_MHz": proton_MHz, "reference_MHz": ref,
              "low_ppm": low, "high_ppm": high, "points": points,
              "carrier_ppm": w.carrier_ppm, "carrier_MHz": w.carrier_MHz, "carrier_offset_Hz": w.carrier_offset_Hz,
              "spectral_width_Hz": w.width_Hz, "spectral_width_kHz": w.width_Hz / 1e3,
              "spectral_width_ppm": high - low, "dwell_time_s": w.dwell_s, "dwell_time_us": w.dwell_s * 1e6,
              "acquisition_time_s": w.acquisition_s, "acquisition_time_ms": w.acquisition_s * 1e3,
              "digital_resolution_Hz": w.resolution_Hz, "digital_resolution_ppm": w.resolution_ppm,
              "pulse_90_us": pulse_us, "nutation_Hz": None, "nutation_kHz": None, "B1_mT": None,
              "well_excited_Hz": None, "well_excited_kHz": None, "well_excited_ppm": None, "edge_percent": None,
              "well_excited_percent": acquisition.WELL_EXCITED * 100}
    if pulse_us is None:
        return result
    pulse = pulse_us * 1e-6
    nu1 = acquisition.nutation_Hz(pulse)
    half = acquisition.well_excited_Hz(pulse)
    edge = acquisition.transverse_fraction(nu1, pulse, w.width_Hz / 2)
    result.update({"nutation_Hz": nu1, "nutation_kHz": nu1 / 1e3,
                   "B1_mT": acquisition.b1_T(nu1, nuc.gamma_rad_per_s_per_T) * 1e3,
                   "well_excited_Hz": half, "well_excited_kHz": half / 1e3, "well_excited_ppm": half / ref,
                   "edge_percent": edge * 100})
    if w.width_Hz / 2 > half:
        warnings.append(f"The window ({w.width_Hz / 1e3:.4g} kHz) is wider than this 90° pulse excites well "
                        f"(±{half / 1e3:.3g} kHz around the carrier, ≥ {acquisition.WELL_EXCITED:.0%} of full "
                        f"signal): lines at the edges get {edge:.0%}. Record the range in parts with the "
                        "carrier moved, or use a shorter (stronger) pulse.")
    return result

SCALE = Param("scale", "choice", choices=("unified", "biomolecular"), default="unified", label="Reference scale",
              help="'unified' (IUPAC 2001, TMS-based) or 'biomolecular' (DSS, IUPAC 2008)")
NUCLEUS = Param("nucleus", "nuclide", required=True, label="Nucleus", help="observed nuclide, e.g. 13C", example="13C")

DECLARED = {
    "nuclide": Op("nuclide", "spin, magnetogyric ratio, abundance, Ξ and receptivity of one nuclide",
                  limits="one table look-up", params=(
        Param("query", "nuclide", required=True, label="Nuclide", help="e.g. 13C, C-13, carbon-13, D",
              example="195Pt", cli="query"),)),
    "nuclides": Op("nuclides", "the nuclide list, optionally filtered by a search text",
                   limits="one pass over the nuclide table", params=(
        Param("search", "text", label="Search", help="filter text: symbol, element or name", example="tin"),
        Param("include_spin_zero", "flag", default=False, label="Include spin-0 isotopes",
              help="list the isotopes without a magnetic moment too"))),
    "frequency": Op("frequency", "Larmor and 0 ppm reference frequencies at a magnet (all nuclides without "
                    "'nucleus')", cli="freq", one_of=(("spectrometer", "field"),),
                    limits="one pass over the nuclide table", params=(
        *MAGNET,
        Param("nucleus", "nuclide", label="Nucleus", help="nuclide; omit for the all-nuclide table", example="29Si"),
        SCALE,
        Param("spin_half_only", "flag", default=False, label="Spin ½ only", help="table: only spin-1/2 nuclides"),
        Param("min_abundance_percent", "quantity", unit="percent", label="Lowest natural abundance",
              help="table: leave out rarer nuclides"),
        Param("min_MHz", "quantity", unit="frequency", label="Lowest frequency", help="table: lowest frequency"),
        Param("max_MHz", "quantity", unit="frequency", label="Highest frequency", help="table: highest frequency"),
        Param("sort", "choice", choices=_SORT_KEYS, default="larmor_MHz", label="Sort by", help="table order"),
        Param("descending", "flag", label="Descending", help="table: largest first (default except by symbol)"))),
    "ppm_hz": Op("ppm_hz", "convert a chemical shift to a frequency offset and back", cli="ppm",
                 one_of=(("spectrometer", "field"), ("ppm", "Hz")), limits="one conversion", params=(
        NUCLEUS, *MAGNET, SCALE,
        Param("ppm", "quantity", unit="shift", label="Shift", help="shift in ppm", example="77.16"),
        Param("Hz", "quantity", unit="coupling", label="Offset from 0 ppm", help="offset from 0 ppm in Hz",
              cli="--hz"),
        Param("carrier_ppm", "quantity", unit="shift", label="Carrier", help="carrier position in ppm"))),
    "scale_coupling": Op("scale_coupling", "scale a coupling to another isotope (J′ = J γ′/γ), with K", cli="scale",
                         limits="one coupling", params=(
        Param("J", "quantity", unit="coupling", required=True, label="Measured J", help="e.g. '19.3 Hz'",
              example="19.3 Hz", cli="J"),
        Param("from", "nuclide", required=True, label="Measured with isotope", help="e.g. 2H", example="2H"),
        Param("to", "nuclide", required=True, label="Predict for isotope", help="e.g. 1H", example="1H"),
        Param("partner", "nuclide", label="Coupling partner", example="13C",
              help="the other nucleus of the pair: gives the reduced coupling K"))),
    "energy": Op("energy", "transition energy and populations at a magnet, and a photon beside it",
                 one_of=(("spectrometer", "field"), ("wavelength", "wavenumber")), limits="one magnet, one photon",
                 params=(
        Param("nucleus", "nuclide", label="Nucleus", help="nuclide (needs the magnet)", example="1H"),
        *MAGNET,
        Param("temperature", "quantity", unit="temperature", default=298.15, label="Temperature",
              help="e.g. '298 K' or '25 °C'"),
        Param("wavelength", "quantity", unit="wavelength", label="Photon wavelength", help="e.g. '254 nm'"),
        Param("wavenumber", "quantity", unit="wavenumber", label="Photon wavenumber", help="e.g. '1700 cm-1'"))),
    "sensitivity": Op("sensitivity", "receptivity of a nuclide against another and the time factor",
                      limits="two nuclides", params=(
        Param("nucleus", "nuclide", required=True, label="Nucleus", help="nuclide", example="15N", cli="nucleus"),
        Param("relative_to", "nuclide", default="13C", label="Relative to", help="reference nuclide"),
        Param("enrichment_percent", "quantity", unit="percent", label="Enrichment", help="isotope enrichment",
              cli="--enrichment"))),
    "acquisition_window": Op("acquisition_window", "carrier, spectral width, dwell and acquisition time and digital "
                             "resolution for a ppm range; with a 90° pulse, what it excites", cli="window",
                             one_of=(("spectrometer", "field"),),
                             limits="formulas only: the points are counted, never sampled", params=(
        NUCLEUS, *MAGNET, SCALE,
        Param("low_ppm", "quantity", unit="shift", required=True, label="From", help="one end of the window, ppm",
              example="-10"),
        Param("high_ppm", "quantity", unit="shift", required=True, label="To", help="the other end, ppm",
              example="230 ppm"),
        Param("points", "integer", required=True, bounds=(2, MAX_POINTS), label="Complex points",
              help="number of complex points recorded", example=32768),
        Param("pulse_90", "quantity", unit="time", label="90° pulse",
              help="its length (a bare number is in µs, or e.g. '12.5 us', '0.01 ms'): what it excites",
              example="10 µs"))),
}

OPS = {"nuclide": op_nuclide, "nuclides": op_nuclides, "frequency": op_frequency, "ppm_hz": op_ppm_hz,
       "scale_coupling": op_scale_coupling, "energy": op_energy, "sensitivity": op_sensitivity,
       "acquisition_window": op_acquisition_window}
