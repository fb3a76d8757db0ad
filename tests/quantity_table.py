"""The one table of typed quantities: (field, text as a chemist types it, value in SI).

Run against the API by tests/test_units.py and typed into the page's fields by
tests/browser/test_typed_units.py.  SI values are plain unit arithmetic (SI Brochure,
9th ed.: prefixes, 1 G = 1e-4 T, 0 °C = 273.15 K, 1 Å = 1e-10 m); each field says how
its SI value is read back from the op's result.
"""

from __future__ import annotations

THIN, NBSP, MINUS = "\u2009", "\u00a0", "\u2212"

# The pattern finder's fields are typed beside a pasted list of three lines (a 1:2:1 triplet, 7 Hz).
FINDER_LINES = [[1230.5, 1], [1237.5, 2], [1244.5, 1]]
FINDER_TEXT = "1230.5\t1\n1237.5\t2\n1244.5\t1"


FINDER_OPTIONAL = ("ident-tolerance", "ident-linewidth", "ident-resolution")


def FINDER_PAGE(input_id: str, prefill: dict | None = None) -> dict:
    """Where a finder field sits in the page, with the list pasted, the magnet set and the other
    optional fields cleared first."""
    fill = {"ident-peaklist": FINDER_TEXT, "ident-magnet": "400", **{f: "" for f in FINDER_OPTIONAL}}
    fill.update(prefill or {})
    fill.pop(input_id)
    return dict(page=("identify", input_id, {"ident-magnet-unit": "MHz"}, "ident"), clicks=["ident-mode-paste"],
                prefill=fill)


# field -> API request around the typed text, the key that carries it, and how to read the
# value back in SI from the result; "page" is (tab, input id, {select id: option}, form id),
# "clicks" buttons the page test presses first, "prefill" other inputs of that form it sets first.
FIELDS = {
    "magnet as 1H frequency": dict(
        request={"op": "frequency", "nucleus": "1H"}, key="spectrometer",
        si=lambda r: r["proton_MHz"] * 1e6,
        page=("magnet", "freqs-magnet", {"freqs-magnet-unit": "MHz"}, "larmor")),
    "magnet as field": dict(
        request={"op": "frequency", "nucleus": "1H"}, key="spectrometer",
        si=lambda r: r["field_T"],
        page=("magnet", "freqs-magnet", {"freqs-magnet-unit": "MHz"}, "larmor")),
    "magnet, T chosen beside it": dict(
        request={"op": "frequency", "nucleus": "1H"}, key="field",
        si=lambda r: r["field_T"],
        page=("magnet", "freqs-magnet", {"freqs-magnet-unit": "T"}, "larmor")),
    "magnet, T chosen, typed in MHz": dict(
        request={"op": "frequency", "nucleus": "1H"}, key="field",
        si=lambda r: r["proton_MHz"] * 1e6,
        page=("magnet", "freqs-magnet", {"freqs-magnet-unit": "T"}, "larmor")),
    "shift": dict(
        request={"op": "ppm_hz", "nucleus": "1H", "spectrometer": "400 MHz"}, key="ppm",
        si=lambda r: r["ppm"] * 1e-6,
        page=("magnet", "ppmhz-amount", {"ppmhz-direction": "ppm"}, "ppmhz")),
    "offset": dict(
        request={"op": "ppm_hz", "nucleus": "1H", "spectrometer": "400 MHz"}, key="Hz",
        si=lambda r: r["offset_Hz"],
        page=("magnet", "ppmhz-amount", {"ppmhz-direction": "Hz"}, "ppmhz")),
    "carrier": dict(
        request={"op": "ppm_hz", "nucleus": "1H", "spectrometer": "400 MHz", "ppm": "1"}, key="carrier_ppm",
        si=lambda r: r["carrier_ppm"] * 1e-6,
        page=("magnet", "ppmhz-carrier", {"ppmhz-direction": "ppm"}, "ppmhz"), prefill={"ppmhz-amount": "1"}),
    "window low end": dict(
        request={"op": "acquisition_window", "nucleus": "13C", "spectrometer": "400 MHz", "high_ppm": "230",
                 "points": 1024}, key="low_ppm",
        si=lambda r: r["low_ppm"] * 1e-6,
        page=("magnet", "acqwin-low", {}, "acqwin")),
    "90° pulse": dict(
        request={"op": "acquisition_window", "nucleus": "13C", "spectrometer": "400 MHz", "low_ppm": "0",
                 "high_ppm": "200", "points": 1024}, key="pulse_90",
        si=lambda r: r["pulse_90_us"] * 1e-6,
        page=("magnet", "acqwin-pulse", {}, "acqwin")),
    "coupling": dict(
        request={"op": "scale_coupling", "from": "2H", "to": "2H"}, key="J",
        si=lambda r: r["J_from_Hz"],
        page=("coupling", "scale-J", {}, "scale")),
    "temperature": dict(
        request={"op": "energy", "nucleus": "1H", "spectrometer": "500 MHz"}, key="temperature",
        si=lambda r: r["temperature_K"],
        page=("energy", "energy-temperature", {}, "energy")),
    "wavelength": dict(
        request={"op": "energy"}, key="wavelength",
        si=lambda r: 1 / (r.get("photon", r)["wavenumber_cm-1"] * 100),
        page=("energy", "energy-photon", {"energy-photon-unit": "nm"}, "energy")),
    "wavenumber": dict(
        request={"op": "energy"}, key="wavenumber",
        si=lambda r: r.get("photon", r)["wavenumber_cm-1"] * 100,
        page=("energy", "energy-photon", {"energy-photon-unit": "cm-1"}, "energy")),
    "enrichment": dict(
        request={"op": "sensitivity", "nucleus": "15N"}, key="enrichment_percent",
        si=lambda r: r["abundance_percent"] / 100,
        page=("energy", "receptivity-enrichment", {}, "receptivity")),
    "multiplet centre": dict(
        request={"op": "multiplet", "observe": "13C", "spectrometer": "400 MHz",
                 "groups": [{"partner": "2H", "count": 3, "J": "19.3"}]}, key="center",
        si=lambda r: r["center_ppm"] * 1e-6,
        page=("multiplet", "mult-center", {}, "mult")),
    "multiplet J": dict(
        request={"op": "multiplet", "observe": "13C", "spectrometer": "400 MHz", "center": "77",
                 "groups": [{"partner": "2H", "count": 3}]}, key="groups.0.J",
        si=lambda r: r["groups"][0]["J_Hz"],
        page=("multiplet", "mult-g0-J", {}, "mult")),
    "several fields": dict(
        request={"op": "spin_system", "observe": "1H", "spins": [{"nucleus": "1H", "shift": "7.0"},
                                                                  {"nucleus": "1H", "shift": "7.2"}],
                 "couplings": [{"between": [0, 1], "J": "8"}]}, key="fields",
        si=lambda r: r["fields"][-1]["spectrometer_MHz"] * 1e6,   # the last magnet of the list
        page=("spins", "spins-fields", {}, "spins")),
    "solvent shift": dict(
        request={"op": "solvents", "nucleus": "1H"}, key="query",
        si=lambda r: (r["solvents"][0]["shift_ppm"] - r["solvents"][0]["distance_ppm"]) * 1e-6,
        page=("labels", "solvents-query", {}, "solvents")),
    "finder tolerance": dict(
        request={"op": "identify", "spectrometer": "400 MHz", "lines": FINDER_LINES}, key="tolerance",
        si=lambda r: r["tolerance_Hz"], **FINDER_PAGE("ident-tolerance")),
    "finder line width": dict(
        request={"op": "identify", "spectrometer": "400 MHz", "lines": FINDER_LINES}, key="linewidth",
        si=lambda r: r["linewidth_Hz"], **FINDER_PAGE("ident-linewidth")),
    "finder digital resolution": dict(
        request={"op": "identify", "spectrometer": "400 MHz", "lines": FINDER_LINES}, key="digital_resolution",
        si=lambda r: r["digital_resolution_Hz"], **FINDER_PAGE("ident-resolution")),
    "finder magnet": dict(
        request={"op": "identify", "lines": FINDER_LINES}, key="spectrometer",
        si=lambda r: r["observe_MHz"] * 1e6, **FINDER_PAGE("ident-magnet")),
    "peak list": dict(
        request={"op": "identify", "spectrometer": "400 MHz"}, key="peaklist",
        si=lambda r: r["observed"][0]["Hz"], **FINDER_PAGE("ident-peaklist")),
    "spin coupling": dict(
        request={"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz",
                 "spins": [{"nucleus": "1H", "shift": "4.10"}, {"nucleus": "1H", "shift": "4.22"}],
                 "couplings": [{"between": [0, 1], "J": "1"}]}, key="couplings.0.J",
        si=lambda r: r["checks"][0]["J_Hz"],
        page=("spins", "spins-c0-J", {}, "spins")),
}

TABLE = [
    ("magnet as 1H frequency", "400", 400e6),
    ("magnet as 1H frequency", "400 MHz", 400e6),
    ("magnet as 1H frequency", "400MHz", 400e6),
    ("magnet as 1H frequency", f"400{NBSP}MHz", 400e6),
    ("magnet as 1H frequency", "0.4 GHz", 400e6),
    ("magnet as 1H frequency", "4×10^2 MHz", 400e6),
    ("magnet as 1H frequency", "4e2 MHz", 400e6),
    ("magnet as field", "9.4 T", 9.4),
    ("magnet as field", "9400 mT", 9.4),
    ("magnet as field", "94 kG", 9.4),
    ("magnet as field", f"94{THIN}000 G", 9.4),
    ("magnet, T chosen beside it", "11.74", 11.74),
    ("magnet, T chosen, typed in MHz", "500 MHz", 500e6),
    ("shift", "7.26", 7.26e-6),
    ("shift", "7.26 ppm", 7.26e-6),
    ("shift", f"{MINUS}0.5 ppm", -0.5e-6),
    ("shift", "7260 ppb", 7.26e-6),
    ("offset", "2904", 2904.0),
    ("offset", "2904 Hz", 2904.0),
    ("offset", "2.904 kHz", 2904.0),
    ("offset", f"{MINUS}1.5×10³ Hz", -1500.0),
    ("carrier", "4.7 ppm", 4.7e-6),
    ("window low end", f"{MINUS}10 ppm", -10e-6),
    ("90° pulse", "10", 10e-6),
    ("90° pulse", "10 µs", 10e-6),
    ("90° pulse", "10 us", 10e-6),
    ("90° pulse", "0.01 ms", 10e-6),
    ("90° pulse", "1e-5 s", 10e-6),
    ("coupling", "20.1", 20.1),
    ("coupling", "20.1 Hz", 20.1),
    ("coupling", "20.1 hz", 20.1),
    ("coupling", "20100 mHz", 20.1),
    ("coupling", "0.0201 kHz", 20.1),
    ("coupling", f"{MINUS}3.5 Hz", -3.5),
    ("coupling", "2.01e1 Hz", 20.1),
    ("temperature", "298.15", 298.15),
    ("temperature", "298.15 K", 298.15),
    ("temperature", "25 °C", 298.15),
    ("temperature", "25 degC", 298.15),
    ("temperature", "25 ℃", 298.15),
    ("temperature", f"{MINUS}20 °C", 253.15),
    ("wavelength", "254", 254e-9),
    ("wavelength", "254 nm", 254e-9),
    ("wavelength", "0.254 µm", 254e-9),
    ("wavelength", "2540 Å", 254e-9),
    ("wavenumber", "1700", 1700e2),
    ("wavenumber", "1700 cm-1", 1700e2),
    ("wavenumber", "1700 cm⁻¹", 1700e2),
    ("enrichment", "98", 0.98),
    ("enrichment", "98 %", 0.98),
    ("multiplet centre", "29.8", 29.8e-6),
    ("multiplet centre", "29.8 ppm", 29.8e-6),
    ("multiplet J", "19.3", 19.3),
    ("multiplet J", "19.3 Hz", 19.3),
    ("several fields", "400 MHz, 600", 600e6),
    ("several fields", "400, 600 MHz", 600e6),
    ("solvent shift", "2.50", 2.50e-6),
    ("solvent shift", "2.50 ppm", 2.50e-6),
    ("solvent shift", "2500 ppb", 2.50e-6),
    ("finder tolerance", "0.5", 0.5),
    ("finder tolerance", "500 mHz", 0.5),
    ("finder line width", "0.8 Hz", 0.8),
    ("finder line width", "800 mHz", 0.8),
    ("finder digital resolution", "0.12 Hz", 0.12),
    ("finder magnet", "400 MHz", 400e6),
    ("finder magnet", "0.4 GHz", 400e6),
    ("peak list", "1230.5 Hz, 1\n1237.5 Hz, 2\n1244.5 Hz, 1", 1230.5),
    ("peak list", "1.2305 kHz\t1\n1.2375 kHz\t2\n1.2445 kHz\t1", 1230.5),
    ("peak list", f"{MINUS}5.5 1\n{MINUS}12.5 2\n{MINUS}19.5 1", -5.5),
    ("spin coupling", "-12.5", -12.5),
    ("spin coupling", f"{MINUS}12.5 Hz", -12.5),
    ("spin coupling", "12500 mHz", 12.5),
]

# Typed text the API refuses, with a piece of the message that must tell the user what to do.
REFUSED = [
    ("magnet as 1H frequency", "5 ppm", "give the field in T, mT, G or kG, or the ¹H frequency in MHz"),
    ("magnet as field", "1,5 T", "Did you mean 1.5 T?"),
    ("magnet as 1H frequency", "400 mhz", "MHz or mHz"),
    ("coupling", "20.1 ppm", "give Hz, mHz, kHz or MHz"),
    ("coupling", "1,5", "Did you mean 1.5?"),
    ("temperature", "25 Hz", "give K or °C"),
    ("shift", "7.26 Hz", "give ppm"),
    ("solvent shift", "2,50", "Did you mean 2.50?"),
    ("finder tolerance", "0.5 ppm", "give Hz, mHz, kHz or MHz"),
    ("peak list", "Hz;intensity\n1230,5;1\n1237,5;2", "did you mean 1230.5?"),
    ("spin coupling", "1,5", "Did you mean 1.5?"),
]


def request_for(field: str, text: str) -> dict:
    """The field's request with ``text`` at its key (a dotted key reaches into a list item)."""
    import copy

    spec = FIELDS[field]
    req = copy.deepcopy(spec["request"])
    *path, last = spec["key"].split(".")
    node = req
    for part in path:
        node = node[int(part)] if part.isdigit() else node[part]
    node[last] = text
    return req
