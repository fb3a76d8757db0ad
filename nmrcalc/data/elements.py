"""Chemical elements: atomic number, symbol and English name (IUPAC names).

Source: IUPAC periodic table of the elements (names as recommended by IUPAC).
Used only to read nuclide names such as ``carbon-13`` or ``C-13``.
"""

ELEMENTS_TEXT = """
1 H hydrogen      2 He helium      3 Li lithium     4 Be beryllium   5 B boron
6 C carbon        7 N nitrogen     8 O oxygen       9 F fluorine     10 Ne neon
11 Na sodium      12 Mg magnesium  13 Al aluminium  14 Si silicon    15 P phosphorus
16 S sulfur       17 Cl chlorine   18 Ar argon      19 K potassium   20 Ca calcium
21 Sc scandium    22 Ti titanium   23 V vanadium    24 Cr chromium   25 Mn manganese
26 Fe iron        27 Co cobalt     28 Ni nickel     29 Cu copper     30 Zn zinc
31 Ga gallium     32 Ge germanium  33 As arsenic    34 Se selenium   35 Br bromine
36 Kr krypton     37 Rb rubidium   38 Sr strontium  39 Y yttrium     40 Zr zirconium
41 Nb niobium     42 Mo molybdenum 43 Tc technetium 44 Ru ruthenium  45 Rh rhodium
46 Pd palladium   47 Ag silver     48 Cd cadmium    49 In indium     50 Sn tin
51 Sb antimony    52 Te tellurium  53 I iodine      54 Xe xenon      55 Cs caesium
56 Ba barium      57 La lanthanum  58 Ce cerium     59 Pr praseodymium 60 Nd neodymium
61 Pm promethium  62 Sm samarium   63 Eu europium   64 Gd gadolinium 65 Tb terbium
66 Dy dysprosium  67 Ho holmium    68 Er erbium     69 Tm thulium    70 Yb ytterbium
71 Lu lutetium    72 Hf hafnium    73 Ta tantalum   74 W tungsten    75 Re rhenium
76 Os osmium      77 Ir iridium    78 Pt platinum   79 Au gold       80 Hg mercury
81 Tl thallium    82 Pb lead       83 Bi bismuth    84 Po polonium   85 At astatine
86 Rn radon       87 Fr francium   88 Ra radium     89 Ac actinium   90 Th thorium
91 Pa protactinium 92 U uranium
"""


def _parse(text: str) -> tuple[dict[str, int], dict[str, str]]:
    words = text.split()
    z_of_symbol: dict[str, int] = {}
    symbol_of_name: dict[str, str] = {}
    for i in range(0, len(words), 3):
        z, symbol, name = int(words[i]), words[i + 1], words[i + 2]
        z_of_symbol[symbol] = z
        symbol_of_name[name] = symbol
    symbol_of_name["aluminum"] = "Al"  # US spellings
    symbol_of_name["cesium"] = "Cs"
    symbol_of_name["sulphur"] = "S"
    return z_of_symbol, symbol_of_name


Z_OF_SYMBOL, SYMBOL_OF_NAME = _parse(ELEMENTS_TEXT)
NAME_OF_SYMBOL = {s: n for n, s in SYMBOL_OF_NAME.items() if n not in ("aluminum", "cesium", "sulphur")}
