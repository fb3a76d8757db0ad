"""First-order multiplets: stick patterns from groups of equivalent coupled nuclei.

Physics
-------
A line coupled (first order, |Δν| >> |J|) to ``n`` magnetically equivalent
nuclei of spin ``I`` with coupling ``J`` splits into ``2nI + 1`` lines spaced
``J`` apart.  Each nucleus has ``2I + 1`` equally populated Zeeman states, so
the number of ways to reach total magnetic quantum number ``M`` is the
coefficient of ``x^(M + nI)`` in

    (1 + x + x^2 + ... + x^(2I))^n

(Pascal's triangle for I = 1/2; the trinomial triangle, OEIS A027907, for
I = 1).  Several groups with different couplings combine by successive
splitting: every line of the pattern so far is split by the next group, i.e.
the stick patterns are convolved.  Textbook source: H. Günther, *NMR
Spectroscopy*, 3rd ed. (Wiley-VCH 2013), chapter on first-order spectra.

Numbers
-------
Weights are exact Python ``int`` throughout: a group contributes its
polynomial coefficients, splitting multiplies weights, and coincident lines
merge by adding integers, so the total weight is exactly
``prod_k (2 I_k + 1) ** n_k``.  Line offsets (Hz from the multiplet centre) are
floats; two lines merge when they lie within ``MERGE_REL_TOL`` times the
largest ``|J|`` (at least 1 Hz) of each other.  A group with ``J = 0`` does
not split but still multiplies every weight by ``(2I + 1) ** n`` (so the sum
rule holds); ratios are reduced by their gcd, so this factor never shows.

Limits
------
``MAX_GROUPS`` groups, ``MAX_LINES`` output lines and a total weight of at
most ``2 ** MAX_WEIGHT_BITS``; beyond them ``InputError(code="too_large",
field="groups")``.  The defaults easily cover 50 spin-1/2 nuclei (2**50) and
20 spin-9/2 nuclei (10**20) in one group.
"""

from __future__ import annotations

import math
import reprlib
from fractions import Fraction
from typing import Iterable, NamedTuple

from nmrcalc.errors import InputError

MAX_GROUPS = 64
MAX_LINES = 5000
MAX_WEIGHT_BITS = 256
MERGE_REL_TOL = 1e-9

_SHORT = {1: "s", 2: "d", 3: "t", 4: "q", 5: "quint", 6: "sext", 7: "sept"}
_WORD = {3: "triplet", 4: "quartet", 5: "quintet", 6: "sextet", 7: "septet", 8: "octet", 9: "nonet"}
_LETTERS = {"d", "t", "q"}
_MAX_RATIO_LINES = 9


class SpinGroup(NamedTuple):
    """``count`` magnetically equivalent nuclei of spin ``spin`` coupled with ``J_Hz``."""

    spin: Fraction
    count: int
    J_Hz: float


def parse_spin(value: object) -> Fraction:
    """Return ``value`` as an exact spin: a positive multiple of 1/2.

    Accepts ``Fraction``, ``int``, a float that is exactly a multiple of 1/2,
    or a string such as ``"3/2"``; raises ``InputError(field="spin")``.
    """
    if isinstance(value, bool):
        raise InputError("spin must be a number such as 1/2, 1 or 3/2", field="spin")
    try:
        if isinstance(value, float) and not math.isfinite(value):
            raise ValueError
        spin = Fraction(value) if not isinstance(value, str) else Fraction(value.strip())
    except (TypeError, ValueError, ZeroDivisionError):
        raise InputError(f"spin must be a number such as 1/2, 1 or 3/2, got {reprlib.repr(value)}", field="spin") from None
    if spin <= 0 or (2 * spin).denominator != 1:
        raise InputError(f"spin must be a positive multiple of 1/2, got {spin}", field="spin")
    return spin


def _parse_count(value: object) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        else:
            raise InputError(f"count must be a whole number of nuclei, got {value!r}", field="count")
    if value < 1:
        raise InputError(f"count must be at least 1, got {value}", field="count")
    return value


def _parse_J(value: object) -> float:
    if isinstance(value, bool):
        raise InputError("J_Hz must be a number in Hz", field="J_Hz")
    try:
        J = float(value)
    except (TypeError, ValueError):
        raise InputError(f"J_Hz must be a number in Hz, got {value!r}", field="J_Hz") from None
    if not math.isfinite(J):
        raise InputError(f"J_Hz must be finite, got {value!r}", field="J_Hz")
    return J


def _too_large(what: str) -> InputError:
    return InputError(what, field="groups", code="too_large")


def validate_groups(groups: Iterable) -> list[SpinGroup]:
    """Check ``(spin, count, J_Hz)`` triples and the size limits; return ``SpinGroup`` s.

    Errors name the field as ``groups.<index>.spin|count|J_Hz`` (index from 0),
    or ``groups`` with code ``too_large`` for the limits in the module docstring.
    """
    try:
        items = list(groups)
    except TypeError:
        raise InputError("groups must be a list of (spin, count, J_Hz)", field="groups") from None
    if len(items) > MAX_GROUPS:
        raise _too_large(f"at most {MAX_GROUPS} coupling groups are allowed, got {len(items)}")
    out: list[SpinGroup] = []
    for index, item in enumerate(items):
        try:
            try:
                spin, count, J = item
            except (TypeError, ValueError):
                raise InputError("each group must be (spin, count, J_Hz)") from None
            group = SpinGroup(parse_spin(spin), _parse_count(count), _parse_J(J))
        except InputError as err:
            raise err.at(f"groups.{index}") from None
        if 2 * group.count * group.spin + 1 > MAX_LINES:
            raise _too_large(f"group {index} alone gives more than {MAX_LINES} lines (the limit)")
        out.append(group)
    bits_limit = 1 << MAX_WEIGHT_BITS
    total = 1
    for group in out:
        total *= int(2 * group.spin + 1) ** group.count
        if total > bits_limit:
            raise _too_large(f"the total intensity exceeds 2**{MAX_WEIGHT_BITS} (the limit on exact integer size)")
    return out


def group_coefficients(spin: Fraction, count: int) -> list[int]:
    """Coefficients of ``(1 + x + ... + x^(2I))^count``: the ``2*count*I + 1`` relative intensities.

    Computed exactly by ``count`` multiplications with the all-ones polynomial
    (a running window sum); no size checks here (``multiplet`` applies them).
    """
    width = int(2 * parse_spin(spin)) + 1
    coeffs = [1]
    for _ in range(_parse_count(count)):
        new = []
        window = 0
        for k in range(len(coeffs) + width - 1):
            if k < len(coeffs):
                window += coeffs[k]
            if k >= width:
                window -= coeffs[k - width]
            new.append(window)
        coeffs = new
    return coeffs


def merge_lines(lines: Iterable[tuple[float, object]], tol_Hz: float) -> list[tuple[float, object]]:
    """Sort ``(offset_Hz, weight)`` pairs and merge those within ``tol_Hz`` of a cluster's first line.

    Weights are added (ints stay ints); the merged offset is the
    weight-averaged offset (the plain mean if the weights sum to zero).
    """
    ordered = sorted(lines, key=lambda line: line[0])
    merged: list[tuple[float, object]] = []
    start = 0
    while start < len(ordered):
        end = start + 1
        while end < len(ordered) and ordered[end][0] - ordered[start][0] <= tol_Hz:
            end += 1
        cluster = ordered[start:end]
        weight = sum(w for _, w in cluster)
        if len(cluster) == 1:
            offset = cluster[0][0]
        elif weight:
            offset = sum(x * w for x, w in cluster) / weight
        else:
            offset = sum(x for x, _ in cluster) / len(cluster)
        merged.append((offset, weight))
        start = end
    return merged


def merge_tolerance_Hz(groups: Iterable[SpinGroup]) -> float:
    """``MERGE_REL_TOL`` times the largest ``|J_Hz|`` (at least 1 Hz)."""
    return MERGE_REL_TOL * max([1.0] + [abs(g.J_Hz) for g in groups])


def multiplet(groups: Iterable) -> list[tuple[float, int]]:
    """Stick pattern of a line split by first-order coupling groups.

    ``groups`` holds ``(spin, count, J_Hz)`` triples (``SpinGroup`` or plain
    tuples).  Returns ``[(offset_Hz, weight), ...]`` ascending in offset from
    the multiplet centre, with exact integer weights summing to
    ``prod (2I+1)**count``.  No groups gives the singlet ``[(0.0, 1)]``.
    """
    checked = validate_groups(groups)
    tol = merge_tolerance_Hz(checked)
    sticks: list[tuple[float, int]] = [(0.0, 1)]
    for group in checked:
        coeffs = group_coefficients(group.spin, group.count)
        if group.J_Hz == 0:
            factor = sum(coeffs)
            sticks = [(x, w * factor) for x, w in sticks]
            continue
        if len(sticks) + len(coeffs) - 1 > MAX_LINES:
            raise _too_large(f"the multiplet would have more than {MAX_LINES} lines (the limit)")
        half = Fraction(len(coeffs) - 1, 2)
        shifts = [(float(k - half) * group.J_Hz, c) for k, c in enumerate(coeffs)]
        sticks = merge_lines(((x + dx, w * c) for x, w in sticks for dx, c in shifts), tol)
        if len(sticks) > MAX_LINES:
            raise _too_large(f"the multiplet would have more than {MAX_LINES} lines (the limit)")
    return sticks


def normalized(sticks: Iterable[tuple[float, int]]) -> list[tuple[float, float]]:
    """The same sticks with intensities divided by their sum (so they sum to 1)."""
    sticks = list(sticks)
    total = sum(w for _, w in sticks)
    if not sticks or total <= 0:
        raise InputError("a stick pattern needs a positive total intensity", field="sticks")
    return [(x, w / total) for x, w in sticks]


def ratio_string(sticks: Iterable[tuple[float, int]]) -> str:
    """Integer weights in offset order, reduced by their gcd, joined by ``:`` (e.g. ``"1:2:1"``)."""
    weights = [w for _, w in sticks]
    divisor = math.gcd(*weights) or 1
    return ":".join(str(w // divisor) for w in weights)


def _spin_text(spin: Fraction) -> str:
    return str(spin) if spin.denominator == 1 else f"{spin.numerator}/{spin.denominator}"


def _group_text(group: SpinGroup, long: bool) -> str:
    """Name of one group's pattern: short codes (``t``, ``1:1:1 t``) or, with ``long``, words."""
    lines = int(2 * group.count * group.spin) + 1
    fallback = f"{lines}-line multiplet" if long else f"{lines}-line"
    if group.spin == Fraction(1, 2):
        return _SHORT.get(lines, fallback)
    if lines > _MAX_RATIO_LINES:
        detail = f"{group.count} × I={_spin_text(group.spin)}" if long else f"I={_spin_text(group.spin)}"
        return f"{fallback} ({detail})"
    ratio = ":".join(map(str, group_coefficients(group.spin, group.count)))
    return f"{ratio} {_WORD[lines] if long else _SHORT.get(lines, fallback)}"


def multiplet_label(groups: Iterable) -> str:
    """Readable multiplicity of the pattern made by ``groups``.

    Convention:
    * groups with ``J = 0`` are ignored; groups of the same spin and the same
      ``|J|`` (within the merge tolerance) count as one group, so a dd with
      equal couplings reads ``t``;
    * no splitting group: ``s``; one group of spin-1/2 nuclei: ``d``, ``t``,
      ``q``, ``quint``, ``sext``, ``sept``, then ``"8-line multiplet"`` etc.;
      one group of spin > 1/2: its ratio and line count, e.g. a single spin-1
      partner gives ``"1:1:1 triplet"`` (never confused with the 1:2:1 ``t``),
      or ``"181-line multiplet (20 × I=9/2)"`` beyond nine lines;
    * several groups: named from the largest ``|J|`` to the smallest (the
      outermost splitting first), so ``dt`` is a doublet (large J) of triplets
      (small J).  Adjacent d/t/q codes run together (``ddd``, ``tq``); any
      other code stands alone and the pieces are joined by ``" of "``, e.g.
      ``"d of quint"``, ``"dd of 1:1:1 t"``, ``"t of 1:1:1:1 q"``.
    """
    checked = validate_groups(groups)
    tol = merge_tolerance_Hz(checked)
    combined: list[SpinGroup] = []
    for group in checked:
        if group.J_Hz == 0:
            continue
        for i, seen in enumerate(combined):
            if seen.spin == group.spin and abs(abs(seen.J_Hz) - abs(group.J_Hz)) <= tol:
                combined[i] = seen._replace(count=seen.count + group.count)
                break
        else:
            combined.append(group)
    if not combined:
        return "s"
    if len(combined) == 1:
        return _group_text(combined[0], long=True)
    combined.sort(key=lambda g: (-abs(g.J_Hz), g.spin))
    pieces: list[str] = []
    for token in (_group_text(g, long=False) for g in combined):
        if token in _LETTERS and pieces and all(ch in _LETTERS for ch in pieces[-1]):
            pieces[-1] += token
        else:
            pieces.append(token)
    return " of ".join(pieces)
