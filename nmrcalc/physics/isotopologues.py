"""Isotopologue-weighted first-order spectra: satellites and partial labelling.

Physics
-------
If an observed nucleus is coupled to ``n`` equivalent positions of an element
whose isotopes ``i`` have fractional abundances ``a_i``, and isotopes are
distributed independently over the positions, the share of molecules with
``c_i`` atoms of isotope ``i`` (``sum c_i = n``) is the multinomial
probability

    P(c) = n! / (prod_i c_i!) * prod_i a_i ** c_i

(W. Feller, *An Introduction to Probability Theory and Its Applications*,
vol. 1, 3rd ed., ch. VI.9).  Each composition gives its own first-order
multiplet: every magnetic isotope present contributes a group ``(I_i, c_i,
J_i)`` (see ``nmrcalc.physics.multiplet``), together with any plain coupling
groups; spin-0 isotopes do not split.  Several elements (e.g. Pt and C) are
independent, so their distributions multiply.  Partial deuteration is the
same mechanism with the user's H/D abundances.

Isotope shifts: each atom of isotope ``i`` at a site may move the observed
line by ``shift_Hz`` (a secondary isotope shift, additive per substituted atom
to first order: P. E. Hansen, *Prog. Nucl. Magn. Reson. Spectrosc.* 20 (1988)
207).  A species' centre is ``center_Hz = sum_i c_i * shift_i``, and its lines
are given as offsets from the common centre (the species with no shifted atom).

Numbers
-------
Abundances are converted to exact ``Fraction`` s (floats via their shortest
decimal ``repr``, so 0.998 becomes 499/500), must each lie in [0, 1] and sum to
1 within ``ABUNDANCE_SUM_TOL``; they are then rescaled to sum exactly 1.
Shares are exact ``Fraction`` s; line intensities are floats.

Limits
------
At most ``MAX_SITES`` element sites and ``MAX_COMPOSITIONS`` compositions in
all (product over sites), else ``InputError(code="too_large", field="sites")``;
each composition's multiplet obeys the limits of the multiplet module.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from fractions import Fraction
from itertools import product
from typing import Any, NamedTuple

from nmrcalc.errors import InputError
from nmrcalc.physics.multiplet import (
    MERGE_REL_TOL,
    SpinGroup,
    merge_lines,
    multiplet,
    multiplet_label,
    normalized,
    parse_spin,
    validate_groups,
)

MAX_SITES = 8
MAX_COMPOSITIONS = 20000
ABUNDANCE_SUM_TOL = 1e-3
DEFAULT_MIN_SHARE = 1e-4


class Isotope(NamedTuple):
    """One isotope of a partner element (``spin`` 0 for a lumped non-magnetic entry)."""

    label: str
    spin: Fraction
    abundance: Fraction
    J_Hz: float
    shift_Hz: float = 0.0


class PartnerSite(NamedTuple):
    """``positions`` equivalent positions of one element, with its isotopes."""

    positions: int
    isotopes: tuple[Isotope, ...]


class Isotopologue(NamedTuple):
    """One composition: label, exact share, coupling groups, sticks about its own centre,
    its centre ``center_Hz`` and its normalized lines as offsets from the common centre."""

    label: str
    share: Fraction
    groups: tuple[SpinGroup, ...]
    multiplet_label: str
    sticks: list[tuple[float, int]]
    lines: list[tuple[float, float]]
    center_Hz: float = 0.0
    atoms: tuple[dict[str, int], ...] = ()


class IsotopologueSpectrum(NamedTuple):
    """Kept species (largest share first), their summed lines, and what the cut-off dropped."""

    species: list[Isotopologue]
    lines: list[tuple[float, float]]
    kept_share: Fraction
    dropped_share: Fraction
    dropped_count: int


def _parse_abundance(value: object) -> Fraction:
    if isinstance(value, bool):
        raise InputError("abundance must be a fraction between 0 and 1", field="abundance")
    try:
        if isinstance(value, float):
            if not math.isfinite(value):
                raise ValueError
            value = repr(value)
        share = Fraction(value.strip() if isinstance(value, str) else value)
    except (TypeError, ValueError, ZeroDivisionError):
        raise InputError(f"abundance must be a fraction between 0 and 1, got {value!r}", field="abundance") from None
    if not 0 <= share <= 1:
        raise InputError(f"abundance must lie between 0 and 1 (a fraction, not a percentage), got {value}", field="abundance")
    return share


def _parse_isotope(item: Any) -> Isotope:
    try:
        label, spin, abundance, J, *shift = item
        (shift_Hz,) = shift or (0.0,)
    except (TypeError, ValueError):
        raise InputError("each isotope must be (label, spin, abundance, J_Hz[, shift_Hz])") from None
    if not isinstance(label, str) or not label.strip():
        raise InputError("isotope label must be a non-empty string", field="label")
    zero_spin = not isinstance(spin, bool) and isinstance(spin, (int, float, Fraction, str)) and _is_zero(spin)
    spin = Fraction(0) if zero_spin else parse_spin(spin)
    if J is None and zero_spin:
        J = 0.0
    if isinstance(J, bool) or not isinstance(J, (int, float, Fraction)) or not math.isfinite(J):
        raise InputError(f"J_Hz must be a finite number in Hz, got {J!r}", field="J_Hz")
    if isinstance(shift_Hz, bool) or not isinstance(shift_Hz, (int, float, Fraction)) or not math.isfinite(shift_Hz):
        raise InputError(f"shift_Hz must be a finite number in Hz, got {shift_Hz!r}", field="shift_Hz")
    return Isotope(label.strip(), spin, _parse_abundance(abundance), float(J), float(shift_Hz))


def _is_zero(spin: object) -> bool:
    try:
        return Fraction(spin.strip() if isinstance(spin, str) else spin) == 0
    except (TypeError, ValueError, ZeroDivisionError, OverflowError):
        return False


def validate_sites(sites: Iterable) -> list[PartnerSite]:
    """Check ``(positions, isotopes)`` pairs; rescale each site's abundances to sum exactly 1.

    Errors name ``sites.<i>.positions`` or ``sites.<i>.isotopes.<j>.label|spin|abundance|J_Hz``.
    """
    try:
        items = list(sites)
    except TypeError:
        raise InputError("sites must be a list of (positions, isotopes)", field="sites") from None
    if not items:
        raise InputError("at least one partner element site is needed", field="sites")
    if len(items) > MAX_SITES:
        raise InputError(f"at most {MAX_SITES} partner elements are allowed, got {len(items)}", field="sites", code="too_large")
    out: list[PartnerSite] = []
    for i, item in enumerate(items):
        where = f"sites.{i}"
        try:
            positions, isotopes = item
        except (TypeError, ValueError):
            raise InputError("each site must be (positions, isotopes)", field=where) from None
        if isinstance(positions, bool) or not isinstance(positions, int) or positions < 1:
            raise InputError(f"positions must be a whole number >= 1, got {positions!r}", field=f"{where}.positions")
        try:
            isotope_items = list(isotopes)
        except TypeError:
            raise InputError("isotopes must be a list", field=f"{where}.isotopes") from None
        if not isotope_items:
            raise InputError("a site needs at least one isotope", field=f"{where}.isotopes")
        parsed = []
        for j, isotope in enumerate(isotope_items):
            try:
                parsed.append(_parse_isotope(isotope))
            except InputError as err:
                raise err.at(f"{where}.isotopes.{j}") from None
        total = sum(iso.abundance for iso in parsed)
        if abs(total - 1) > ABUNDANCE_SUM_TOL:
            raise InputError(
                f"abundances must add up to 1 (within {ABUNDANCE_SUM_TOL}), they add up to {float(total):.6g}",
                field=f"{where}.isotopes",
            )
        out.append(PartnerSite(positions, tuple(iso._replace(abundance=iso.abundance / total) for iso in parsed)))
    return out


def _compositions(positions: int, parts: int) -> Iterable[tuple[int, ...]]:
    if parts == 1:
        yield (positions,)
        return
    for first in range(positions, -1, -1):
        for rest in _compositions(positions - first, parts - 1):
            yield (first, *rest)


def composition_shares(positions: int, abundances: Sequence[Fraction]) -> list[tuple[tuple[int, ...], Fraction]]:
    """Multinomial shares of every way to fill ``positions`` sites with isotopes of the given abundances.

    Returns ``[(counts, share), ...]`` with ``counts[i]`` atoms of isotope ``i``;
    the shares are exact when the abundances are ``Fraction`` s and sum to 1
    when the abundances do.
    """
    out = []
    for counts in _compositions(positions, len(abundances)):
        ways = math.factorial(positions)
        share = Fraction(1)
        for count, abundance in zip(counts, abundances):
            ways //= math.factorial(count)
            share *= Fraction(abundance) ** count
        out.append((counts, ways * share))
    return out


def _site_label(site: PartnerSite, counts: tuple[int, ...]) -> str:
    parts = []
    for iso, count in zip(site.isotopes, counts):
        if count:
            parts.append(f"{iso.label}{count}" if iso.label[-1].isalpha() else f"{iso.label}×{count}")
    return " ".join(parts)


def isotopologue_spectrum(sites: Iterable, groups: Iterable = (), min_share: float = DEFAULT_MIN_SHARE) -> IsotopologueSpectrum:
    """First-order spectrum of an observed nucleus averaged over partner isotopologues.

    ``sites``: ``(positions, [(label, spin, abundance, J_Hz[, shift_Hz]), ...])``
    per partner element, ``J_Hz`` being the coupling to that isotope (the caller
    scales it by magnetogyric ratios) and ``shift_Hz`` the isotope shift per
    atom of it (default 0); ``groups``: further ``(spin, count,
    J_Hz)`` couplings shared by every species.  Species with
    ``share >= min_share`` are kept, labelled per site like ``"11B1"`` or
    ``"2H2 1H1"`` (isotope label, then count; ``×`` before the count when
    the label ends in a non-letter), sites joined by ``", "``, with
    ``" (no magnetic partner)"`` when no magnetic isotope is present.
    ``lines`` of the result is ``sum(share * species.lines) / kept_share``,
    merged, so it sums to 1; ``dropped_share`` and ``dropped_count`` tell
    what the cut-off left out.
    """
    checked_sites = validate_sites(sites)
    plain = validate_groups(groups)
    if isinstance(min_share, bool) or not isinstance(min_share, (int, float, Fraction)) or not 0 <= min_share < 1:
        raise InputError(f"min_share must be a number in [0, 1), got {min_share!r}", field="min_share")
    per_site = []
    count = 1
    for site in checked_sites:
        present = [k for k, iso in enumerate(site.isotopes) if iso.abundance > 0]
        count *= math.comb(site.positions + len(present) - 1, len(present) - 1)
        if count > MAX_COMPOSITIONS:
            raise InputError(f"more than {MAX_COMPOSITIONS} isotopologues would be needed (the limit)", field="sites", code="too_large")
        options = []
        for sub_counts, share in composition_shares(site.positions, [site.isotopes[k].abundance for k in present]):
            counts = [0] * len(site.isotopes)
            for k, c in zip(present, sub_counts):
                counts[k] = c
            options.append((tuple(counts), share))
        per_site.append(options)

    species: list[Isotopologue] = []
    dropped_share, dropped_count = Fraction(0), 0
    for choice in product(*per_site):
        share = math.prod((s for _, s in choice), start=Fraction(1))
        if share < min_share:
            dropped_share += share
            dropped_count += 1
            continue
        site_groups = [
            SpinGroup(iso.spin, c, iso.J_Hz)
            for site, (counts, _) in zip(checked_sites, choice)
            for iso, c in zip(site.isotopes, counts)
            if c and iso.spin > 0
        ]
        label = ", ".join(_site_label(site, counts) for site, (counts, _) in zip(checked_sites, choice))
        if not site_groups:
            label += " (no magnetic partner)"
        all_groups = site_groups + plain
        center_Hz = sum(iso.shift_Hz * c for site, (counts, _) in zip(checked_sites, choice)
                        for iso, c in zip(site.isotopes, counts))
        try:
            sticks = multiplet(all_groups)
        except InputError as err:
            raise InputError(f"isotopologue {label}: {err.message}", field="sites", code=err.code) from None
        lines = [(x + center_Hz, y) for x, y in normalized(sticks)]
        atoms = tuple({iso.label: c for iso, c in zip(site.isotopes, counts) if c}
                      for site, (counts, _) in zip(checked_sites, choice))
        species.append(Isotopologue(label, share, tuple(all_groups), multiplet_label(all_groups), sticks, lines,
                                    center_Hz, atoms))
    if not species:
        raise InputError(f"every isotopologue is below min_share = {min_share}", field="min_share")
    species.sort(key=lambda s: s.share, reverse=True)
    kept = sum((s.share for s in species), Fraction(0))
    largest_J = max([1.0] + [abs(g.J_Hz) for s in species for g in s.groups])
    summed = merge_lines(
        ((x, float(s.share / kept) * y) for s in species for x, y in s.lines),
        MERGE_REL_TOL * largest_J,
    )
    return IsotopologueSpectrum(species, summed, kept, dropped_share, dropped_count)
