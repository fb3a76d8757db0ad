"""Nuclide records and name lookup (data layer).

The numbers come from ``nmrcalc.data.nuclide_table`` (IUPAC 2001/2008, see
its docstring).  The tables are parsed once, at import.  Receptivity is
computed, not typed: D ∝ |γ|³ I(I+1) × natural abundance (Harris et al.,
IUPAC 2001, eq. for D^p), given relative to 1H (D_H) and to 13C (D_C).
"""

from __future__ import annotations

import re
from fractions import Fraction
from typing import NamedTuple

from nmrcalc.data.elements import NAME_OF_SYMBOL, SYMBOL_OF_NAME, Z_OF_SYMBOL
from nmrcalc.data.nuclide_table import BIOMOLECULAR_XI, NUCLIDE_TABLE, RADIOACTIVE, SPIN_ZERO_TABLE
from nmrcalc.errors import InputError


class Nuclide(NamedTuple):
    """One isotope. ``gamma_rad_per_s_per_T`` is signed and 0 for I = 0."""

    symbol: str                      # "13C"
    element: str                     # "C"
    Z: int
    A: int
    spin: Fraction
    gamma_rad_per_s_per_T: float
    abundance_percent: float | None  # None: not naturally occurring
    quadrupole_fm2: float | None
    xi_percent: float | None
    reference: str | None
    radioactive: bool
    gamma_precision: float = 0.0     # one unit in the last tabulated digit of γ, relative to γ
    xi_precision: float = 0.0        # the same for Ξ

    @property
    def magnetic(self) -> bool:
        return self.spin > 0

    @property
    def quadrupolar(self) -> bool:
        return self.spin > Fraction(1, 2)

    def receptivity_raw(self, abundance_percent: float | None = None) -> float:
        """|γ|³ I(I+1) × abundance (fraction), the unnormalised D."""
        ab = self.abundance_percent if abundance_percent is None else abundance_percent
        ab = ab or 0.0
        s = float(self.spin)
        return abs(self.gamma_rad_per_s_per_T) ** 3 * s * (s + 1) * ab / 100.0


def _opt(word: str) -> str | None:
    return None if word == "-" else word


def _parse_magnetic(text: str) -> dict[str, Nuclide]:
    table: dict[str, Nuclide] = {}
    for line in text.strip().splitlines():
        if line.startswith("#"):
            continue
        sym, spin, ab, gamma, q, xi, *ref = line.split()
        a, el = _split_symbol(sym)
        reference = " ".join(ref)
        table[sym] = Nuclide(
            symbol=sym, element=el, Z=Z_OF_SYMBOL[el], A=a, spin=Fraction(spin),
            gamma_rad_per_s_per_T=float(gamma) * 1e7,
            abundance_percent=None if ab == "-" else float(ab),
            quadrupole_fm2=None if q == "-" else float(q),
            xi_percent=None if xi == "-" else float(xi),
            reference=_opt(reference), radioactive=sym in RADIOACTIVE,
            gamma_precision=_last_digit(gamma) / abs(float(gamma)),
            xi_precision=0.0 if xi == "-" else _last_digit(xi) / float(xi))
    return table


def _last_digit(number: str) -> float:
    """Value of one unit in the last written digit: "5.8385" → 1e-4, "100" → 1."""
    _, _, decimals = number.partition(".")
    return 10.0 ** -len(decimals)


def _parse_spin_zero(text: str) -> dict[str, Nuclide]:
    words = text.split()
    table = {}
    for sym, ab in zip(words[::2], words[1::2]):
        a, el = _split_symbol(sym)
        table[sym] = Nuclide(sym, el, Z_OF_SYMBOL[el], a, Fraction(0), 0.0,
                             float(ab), None, None, None, False)
    return table


def _parse_biomolecular(text: str) -> dict[str, tuple[float, str]]:
    out = {}
    for line in text.strip().splitlines():
        if not line.startswith("#"):
            sym, xi, *ref = line.split()
            out[sym] = (float(xi), " ".join(ref))
    return out


def _split_symbol(sym: str) -> tuple[int, str]:
    m = re.fullmatch(r"(\d+)([A-Z][a-z]?)", sym)
    assert m, sym
    return int(m.group(1)), m.group(2)


MAGNETIC: dict[str, Nuclide] = _parse_magnetic(NUCLIDE_TABLE)
ALL: dict[str, Nuclide] = {**MAGNETIC, **_parse_spin_zero(SPIN_ZERO_TABLE)}
BIOMOLECULAR: dict[str, tuple[float, str]] = _parse_biomolecular(BIOMOLECULAR_XI)
_SYMBOL_OF_LOWER = {s.lower(): s for s in Z_OF_SYMBOL}
_ALIASES = {"d": "2H", "t": "3H", "proton": "1H", "deuterium": "2H", "tritium": "3H", "deuteron": "2H",
            "triton": "3H"}
# Where one nuclide is meant, an element with one isotope chemists observe names it ("H" → 1H).
_ONE_NUCLIDE_OF = {"H": "1H"}
# Other spellings of element names in common use (IUPAC lists these as acceptable variants).
_OTHER_NAMES = {"aluminum": "Al", "cesium": "Cs", "sulphur": "S"}
_SUPERSCRIPTS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789")
MAX_QUERY = 40  # longest text read as a nuclide name or a search
_H_RAW = MAGNETIC["1H"].receptivity_raw()
_C_RAW = MAGNETIC["13C"].receptivity_raw()


def receptivity(nuc: Nuclide, relative_to: str = "1H", abundance_percent: float | None = None) -> float:
    """Receptivity of ``nuc`` relative to a natural-abundance reference nuclide."""
    ref = {"1H": _H_RAW, "13C": _C_RAW}.get(relative_to)
    if ref is None:
        ref = lookup(relative_to).receptivity_raw()
    return nuc.receptivity_raw(abundance_percent) / ref


def _element_symbol(word: str) -> str | None:
    w = word.lower()
    return _SYMBOL_OF_LOWER.get(w) or SYMBOL_OF_NAME.get(w) or _OTHER_NAMES.get(w)


def _normalise(query: str) -> tuple[int | None, str | None]:
    """Split a query into (mass number, element symbol); either may be None."""
    q = query.strip().translate(_SUPERSCRIPTS).replace("^", "")
    q = re.sub(r"[\s\-_]+", "", q)
    for pattern, a_group, el_group in ((r"(\d+)([A-Za-z]+)", 1, 2), (r"([A-Za-z]+)(\d+)", 2, 1)):
        m = re.fullmatch(pattern, q)
        if m:
            return int(m.group(a_group)), _element_symbol(m.group(el_group))
    if re.fullmatch(r"[A-Za-z]+", q):
        return None, _element_symbol(q)
    return None, None


def isotopes_of(element: str) -> list[Nuclide]:
    """All known isotopes of an element (magnetic and spin-0), lightest first."""
    return sorted((n for n in ALL.values() if n.element == element), key=lambda n: n.A)


def element_of(query: str) -> str | None:
    """The element symbol if ``query`` names an element (``B``, ``platinum``), else None."""
    if query.strip().lower() in _ALIASES:
        return None
    a, el = _normalise(query)
    return el if a is None else None


def lookup(query: str, field: str = "nucleus") -> Nuclide:
    """Find a nuclide by ``13C``, ``C13``, ``C-13``, ``carbon-13``, ``¹³C``, ``13c``, ``D``/``deuterium``,
    ``T``/``tritium``, ``H``/``proton`` (1H)."""
    if not isinstance(query, str) or not query.strip():
        raise InputError("Give a nuclide such as 13C, 2H or 195Pt.", field, "missing_field")
    if len(query) > MAX_QUERY:
        raise InputError(f"A nuclide name is at most {MAX_QUERY} characters (13C, N-15, nitrogen-15).",
                         field, "too_large")
    alias = _ALIASES.get(query.strip().lower())
    if alias:
        return ALL[alias]
    a, el = _normalise(query)
    if el is not None and a is not None and f"{a}{el}" in ALL:
        return ALL[f"{a}{el}"]
    if a is None and el in _ONE_NUCLIDE_OF:
        return ALL[_ONE_NUCLIDE_OF[el]]
    if el is not None:
        known = ", ".join(n.symbol for n in isotopes_of(el)) or "none"
        what = f"{a}{el} is not in the table" if a is not None else f"{el} ({NAME_OF_SYMBOL.get(el, el)}) is an element, not one isotope"
        raise InputError(f"{what}; isotopes of {el} known here: {known}.", field, "unknown_nucleus")
    import difflib  # only when a name is not found (costly to import, rarely needed)

    close = difflib.get_close_matches(query.strip()[:40], list(ALL) + list(NAME_OF_SYMBOL.values()), n=4, cutoff=0.5)
    hint = f" Did you mean {', '.join(close)}?" if close else " Write it like 13C, C-13 or carbon-13."
    raise InputError(f"Unknown nuclide '{query.strip()[:40]}'.{hint}", field, "unknown_nucleus")


def lookup_magnetic(query: str, field: str = "nucleus") -> Nuclide:
    """Like :func:`lookup`, but refuse spin-0 isotopes, which give no NMR signal."""
    nuc = lookup(query, field)
    if not nuc.magnetic:
        raise InputError(f"{nuc.symbol} has spin 0: no NMR signal and no splitting.", field, "not_magnetic")
    return nuc


def search(text: str, field: str = "search") -> list[Nuclide]:
    """Nuclides matching ``text``, best first: the nuclide it names exactly (13C, N-15, ¹⁵N, D),
    then isotopes of the element it names by symbol or full name, or of that mass number ("15"),
    then elements whose name begins with it (3 letters or more).  Reference compounds are not
    searched ("Sn" must not find CsNO3)."""
    if not isinstance(text, str):
        raise InputError("'search' must be text.", field)
    if len(text) > MAX_QUERY:
        raise InputError(f"{field}: a search is at most {MAX_QUERY} characters ({len(text)} given).",
                         field, "too_large")
    q = text.strip()
    if not q:
        return list(ALL.values())
    ranked: list[Nuclide] = []
    try:
        ranked.append(lookup(q, field))
    except InputError:
        pass
    a, el = _normalise(q)
    word = re.sub(r"[\s\-_]+", "", q.lower())
    if el is not None:
        ranked += isotopes_of(el)
    elif a is not None or word.isdigit():
        mass = a if a is not None else int(word)
        ranked += [n for n in ALL.values() if n.A == mass]
    if len(word) >= 3 and word.isalpha():
        ranked += sorted((n for n in ALL.values() if NAME_OF_SYMBOL.get(n.element, "").startswith(word)),
                         key=lambda n: (n.Z, n.A))
    seen: dict[str, Nuclide] = {}
    for n in ranked:
        seen.setdefault(n.symbol, n)
    return list(seen.values())
