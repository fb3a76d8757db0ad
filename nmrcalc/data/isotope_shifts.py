"""Typical secondary isotope shifts, offered to the user (never applied unasked).

Shift of the observed nucleus per substituted atom (heavier isotope → usually
to lower ppm).  Values written from memory of the ranges in P. E. Hansen,
"Isotope effects in nuclear shielding", Prog. Nucl. Magn. Reson. Spectrosc.
1988, 20, 207 (not checked against it here); real values depend on the
molecule, so each is a starting point to replace with a measured one.

Columns: observed | isotope | bonds | ppm per atom | when it applies
"""

SOURCE = "typical value from memory (ranges reviewed by P. E. Hansen, Prog. NMR Spectrosc. 1988, 20, 207)"

ISOTOPE_SHIFT_TABLE = """
13C | 2H  | 1 | -0.30  | D bonded to the observed carbon (C–D): about -0.2 to -0.4 ppm per D
13C | 2H  | 2 | -0.10  | D on the neighbouring carbon (C–C–D): about -0.05 to -0.15 ppm per D
1H  | 2H  | 2 | -0.015 | D beside the observed proton on the same carbon (CH2D, CHD2): about -0.01 to -0.02 ppm per D
19F | 2H  | 3 | -0.05  | D on the carbon bearing the fluorine (F–C–D): about -0.03 to -0.1 ppm per D (from memory)
31P | 18O | 1 | -0.02  | 18O bonded to the observed phosphorus (P–18O): about -0.01 to -0.04 ppm per 18O
"""


def _parse(text: str) -> tuple[dict, ...]:
    rows = []
    for line in text.strip().splitlines():
        observed, isotope, bonds, ppm, note = (c.strip() for c in line.split("|"))
        rows.append({"observed": observed, "isotope": isotope, "bonds": int(bonds), "shift_ppm": float(ppm),
                     "note": note, "source": SOURCE})
    return tuple(rows)


ISOTOPE_SHIFTS = _parse(ISOTOPE_SHIFT_TABLE)
