"""Physical constants in SI units.

Source: CODATA 2022 recommended values (P. J. Mohr, D. B. Newell,
B. N. Taylor, E. Tiesinga, Rev. Mod. Phys. 97, 025002 (2025)); the SI
defining constants (h, e, k, N_A, c) are exact.  The thermochemical calorie
is 4.184 J exactly (ISO 80000-5).  Tests compare these with
``scipy.constants``.
"""

import math

PLANCK_J_S = 6.62607015e-34            # h, exact
HBAR_J_S = PLANCK_J_S / (2 * math.pi)   # ħ = h / 2π
BOLTZMANN_J_PER_K = 1.380649e-23       # k, exact
AVOGADRO_PER_MOL = 6.02214076e23       # N_A, exact
ELEMENTARY_CHARGE_C = 1.602176634e-19  # e, exact
SPEED_OF_LIGHT_M_PER_S = 299792458.0   # c, exact
NUCLEAR_MAGNETON_J_PER_T = 5.0507837393e-27
PROTON_GAMMA_RAD_PER_S_PER_T = 2.6752218708e8   # γ_p (free proton)
CALORIE_J = 4.184                      # thermochemical calorie, exact
