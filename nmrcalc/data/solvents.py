"""Residual signals of common deuterated NMR solvents, and water in each.

Sources (the ``src`` column):
  G  H. E. Gottlieb, V. Kotlyar, A. Nudelman, "NMR Chemical Shifts of Common
     Laboratory Solvents as Trace Impurities", J. Org. Chem. 1997, 62, 7512.
  F  G. R. Fulmer et al., "NMR Chemical Shifts of Trace Impurities: Common
     Laboratory Solvents, Organics, and Gases in Deuterated Solvents Relevant
     to the Organometallic Chemist", Organometallics 2010, 29, 2176.
Every shift here was written from memory of those tables and has NOT been
checked against the papers in this project (no copy was at hand): the
``source`` text of each row says so.  Couplings J(H,D) and J(C,D) are typical
values, also from memory.  Shifts in ppm (1H from TMS, 13C from TMS), at
about 298 K; water's shift moves with temperature and concentration.

Columns: solvent | nucleus | shift_ppm | signal | D partners | J to D (Hz) | src
(``D partners`` = the 2H atoms splitting the signal, first order; 0 = none
resolved.)
"""

SOURCES = {
    "G": "Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512",
    "F": "Fulmer et al., Organometallics 2010, 29, 2176",
}
FROM_MEMORY = " (value from memory, not checked against the paper)"

SOLVENT_TABLE = """
CDCl3        | 1H  |   7.26 | residual CHCl3            | 0 |      | G
CDCl3        | 13C |  77.16 | CDCl3                     | 1 | 32.0 | G
CDCl3        | 1H  |   1.56 | water (H2O)               | 0 |      | G
acetone-d6   | 1H  |   2.05 | residual CHD2             | 2 |  2.2 | G
acetone-d6   | 13C |  29.84 | CD3                       | 3 | 19.4 | G
acetone-d6   | 13C | 206.26 | C=O                       | 0 |      | G
acetone-d6   | 1H  |   2.84 | water (H2O/HOD)           | 0 |      | G
DMSO-d6      | 1H  |   2.50 | residual CHD2             | 2 |  1.9 | G
DMSO-d6      | 13C |  39.52 | CD3                       | 3 | 21.0 | G
DMSO-d6      | 1H  |   3.33 | water (H2O/HOD)           | 0 |      | G
CD3OD        | 1H  |   3.31 | residual CHD2             | 2 |  1.7 | G
CD3OD        | 13C |  49.00 | CD3                       | 3 | 21.4 | G
CD3OD        | 1H  |   4.87 | water (HOD)               | 0 |      | G
D2O          | 1H  |   4.79 | residual HOD              | 0 |      | G
D2O          | 1H  |   4.79 | water (HOD)               | 0 |      | G
C6D6         | 1H  |   7.16 | residual C6D5H            | 0 |      | G
C6D6         | 13C | 128.06 | C6D6                      | 1 | 24.3 | G
C6D6         | 1H  |   0.40 | water (H2O)               | 0 |      | G
CD2Cl2       | 1H  |   5.32 | residual CHDCl2           | 1 |  1.0 | F
CD2Cl2       | 13C |  53.84 | CD2Cl2                    | 2 | 27.2 | F
CD2Cl2       | 1H  |   1.52 | water (H2O)               | 0 |      | F
CD3CN        | 1H  |   1.94 | residual CHD2             | 2 |  2.5 | G
CD3CN        | 13C |   1.32 | CD3                       | 3 | 21.0 | G
CD3CN        | 13C | 118.26 | CN                        | 0 |      | G
CD3CN        | 1H  |   2.13 | water (H2O/HOD)           | 0 |      | G
THF-d8       | 1H  |   1.72 | residual CHD (C3/C4)      | 1 |  1.9 | F
THF-d8       | 1H  |   3.58 | residual CHD (C2/C5)      | 1 |  1.9 | F
THF-d8       | 13C |  25.31 | CD2 (C3/C4)               | 2 | 20.2 | F
THF-d8       | 13C |  67.21 | CD2 (C2/C5)               | 2 | 22.2 | F
THF-d8       | 1H  |   2.46 | water (H2O)               | 0 |      | F
toluene-d8   | 1H  |   2.08 | residual CHD2             | 2 |  2.3 | F
toluene-d8   | 1H  |   6.97 | residual aromatic (para)  | 0 |      | F
toluene-d8   | 1H  |   7.01 | residual aromatic (ortho) | 0 |      | F
toluene-d8   | 1H  |   7.09 | residual aromatic (meta)  | 0 |      | F
toluene-d8   | 13C |  20.43 | CD3                       | 3 | 19.2 | F
toluene-d8   | 13C | 125.13 | aromatic CD (para)        | 1 | 24.0 | F
toluene-d8   | 13C | 127.96 | aromatic CD (meta)        | 1 | 24.0 | F
toluene-d8   | 13C | 128.87 | aromatic CD (ortho)       | 1 | 23.0 | F
toluene-d8   | 13C | 137.48 | aromatic C (ipso)         | 0 |      | F
toluene-d8   | 1H  |   0.43 | water (H2O)               | 0 |      | F
"""

ALIASES = {
    "chloroform-d": "CDCl3", "deuterochloroform": "CDCl3", "dmso": "DMSO-d6", "acetone": "acetone-d6",
    "methanol-d4": "CD3OD", "methanol": "CD3OD", "water": "D2O", "deuterium oxide": "D2O",
    "benzene-d6": "C6D6", "benzene": "C6D6", "dichloromethane-d2": "CD2Cl2", "methylene chloride-d2": "CD2Cl2",
    "acetonitrile-d3": "CD3CN", "acetonitrile": "CD3CN", "thf": "THF-d8", "tetrahydrofuran-d8": "THF-d8",
    "toluene": "toluene-d8",
}


def _parse(text: str) -> tuple[dict, ...]:
    rows = []
    for line in text.strip().splitlines():
        solvent, nucleus, shift, signal, n_D, J, src = (c.strip() for c in line.split("|"))
        rows.append({"solvent": solvent, "nucleus": nucleus, "shift_ppm": float(shift), "signal": signal,
                     "D_partners": int(n_D), "J_Hz": float(J) if J else None,
                     "source": SOURCES[src] + FROM_MEMORY})
    return tuple(rows)


SOLVENTS = _parse(SOLVENT_TABLE)
