"""Pattern finder: from measured lines to first-order coupling partners that explain them.

Model
-----
A first-order multiplet is the convolution of one comb per group of
equivalent partners (``nmrcalc.physics.multiplet``); a group of ``n``
nuclei of spin ``I`` and coupling ``J`` spans ``m = 2 n I`` steps of ``J``.
So the line *positions* of a pattern made of plain groups depend only on the
pairs ``(J_k, m_k)``: they are ``c - W/2 + sum_k j_k J_k`` with
``0 <= j_k <= m_k`` and the width ``W = sum_k m_k J_k``; the spins and counts
only change the intensities.  An element partner (several isotopes, some
perhaps spin 0) gives an isotopologue mixture
(``nmrcalc.physics.isotopologues``), its couplings scaled by the isotopes'
γ ratios.  Every such pattern is symmetric about its centre ``c``.

Search (bounded)
----------------
1. Candidate couplings: all pairwise spacings of the observed lines, merged
   within the tolerance and ranked by *support* (the number of line pairs at
   that spacing); the best ``MAX_J_CANDIDATES`` are used for plain groups,
   ``MAX_J_CANDIDATES_ELEMENT`` (each divided by every isotope's γ ratio)
   for element groups, together with the spacings of mirror pairs (lines
   symmetric about the centre with heights within ``MIRROR_HEIGHT``:
   satellites, whose wide spacing has little support).
2. Plain models, one group more at a time: for every set of distinct
   candidate J (sets with the best-supported J first: the lowest sum of
   support ranks) and every step vector ``m`` with
   ``W_obs - 2 tol <= W <= 2 W_obs + 2 tol`` and at most ``3 N_obs + 6`` comb
   points, keep it if every observed line lies within ``tol`` of a predicted
   position; then try every split of each ``m_k`` into ``count × 2I`` with the
   allowed spins and counts.  The comb's merged lines and, when no comb
   points merge, its assignment to the observed lines are computed once
   for all those splits.  Pruning: a model is scored only if its
   complexity term alone is below the best score so far (it could not win)
   and, with a shared assignment, if the score parts that the assignment
   fixes (position, unassigned observed lines) plus complexity stay below
   the best score plus ``KEEP_SLACK`` (near competitors are kept for the notes);
   J sets with two J near a simple ratio ``p/q`` (``q <= 2``, ``p/q <= 4``: coinciding
   lines) only while no model fits better than ``COMMENSURATE_GATE`` (score
   without the complexity term); one group more only while no model fits
   better than ``LEVEL_GATE`` (a pattern explained that well by fewer groups
   is reported as the simpler explanation).  Only if no model then fits
   better than ``LEVEL_GATE``, the levels are searched again with one J shared
   by two groups of different spin (``m_k = n_a 2I_a + n_b 2I_b``; one
   spin-1/2 and one spin-1 partner with equal J give 1:2:2:1).
3. Look-alikes: the best model's couplings and their doubles and triples are
   searched ungated (models up to ``PROBE_SLACK`` worse are scored, and only
   combs with as many merged lines as the best model's), to find
   models with the same predicted lines, such as a dd with ``J2 = 2 J1``
   beside a spin-3/2 1:1:1:1 quartet.  They only feed the notes, never the
   ranking, so that noise cannot promote a model with coinciding lines.
4. Element models: each element group (count 1 to ``MAX_ELEMENT_COUNT``, J
   to its reference isotope from the candidates divided by each isotope's γ
   ratio) alone, and with one plain group whose comb, added to the element
   pattern's lines, puts a line within ``tol`` of every observed line; if
   no model then fits better than ``LEVEL_GATE``, two element groups (two
   elements, or one element at two different J) whose combined lines pass
   the same test.
5. The search stops after ``max_evals`` scored models or ``work_budget``
   work steps (one step per J layout or element model tried), whichever comes
   first, and says so in ``notes`` (the candidates found so far are still
   returned).  Both are counts, so the ranking never depends on the speed of
   the machine.

Notes also report: look-alikes (same lines), candidates with the same
positions but other intensities (1:2:1 against 1:1:1), that ``n`` spin-1/2
partners with one J may be ``n`` different partners with equal couplings (a
dd with J1 = J2 reads as a t), near ties (scores within 0.1), a poor best fit
(score without complexity above ``POOR_FIT``) and unexplained lines.

Limits: ``MAX_GROUPS`` groups, counts 1 to ``MAX_COUNT`` (element positions
1 to ``MAX_ELEMENT_COUNT``), at most ``MAX_INPUT_LINES`` lines; two plain
groups of the same spin never share one J (they would be one group), and a
shared J is searched for one pair of groups only.

Score (lower is better)
-----------------------
Predicted lines closer than ``tol`` are merged.  Each predicted line is
assigned to the nearest observed line within ``tol`` (one to one, nearest
wins); the centre is refined to the intensity-weighted mean offset of the
assigned pairs and the assignment repeated.  With observed heights ``y``
(scaled to a maximum of 1), ``d = max(y, F)`` with the floor ``F =
INTENSITY_FLOOR`` (errors are judged relative to each line's height, since
height errors are roughly proportional), and predicted intensities ``w``
scaled by the weighted least-squares factor
``s = sum (y w / d²) / sum (w² / d²)`` over assigned pairs::

    position  = sqrt( sum_assigned y (Δx / tol)² / sum_assigned y )
    intensity = sqrt( [ sum_assigned ((y - s w) / d)²
                        + sum_unassigned_pred (s w / M)²
                        + sum_unassigned_obs (y / d)² ] / N_obs )
    score = position + W_INTENSITY × intensity
            + UNMATCHED_PENALTY × (number of unassigned observed lines)
            + GROUP_PENALTY × groups + NUCLEUS_PENALTY × nuclei
            + SPIN_PENALTY × sum (2I - 1)

with ``M = MISSING_SCALE`` for a predicted line inside the observed span and
``M = MISSING_SCALE_OUTER`` beyond it (weak outer lines are the ones lost in
noise), so a missing predicted line of height ``h`` costs ``(h/M)²``: 0.01
for a 5 % outer line, 4 for a half-height line inside the multiplet; an
unexplained observed line costs a whole unit, and among equal fits the model
with fewer groups, fewer nuclei and lower spins wins.
Weights are choices of this module (common practice, no source).
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Iterable, Sequence
from fractions import Fraction
from functools import lru_cache
from typing import NamedTuple

from nmrcalc.errors import InputError
from nmrcalc.physics.isotopologues import isotopologue_spectrum
from nmrcalc.physics.multiplet import group_coefficients, merge_lines, multiplet, multiplet_label, normalized

MAX_GROUPS = 3
MAX_COUNT = 6
MAX_ELEMENT_COUNT = 4
MAX_INPUT_LINES = 64
MAX_J_CANDIDATES = 10
MAX_J_CANDIDATES_ELEMENT = 12
MIRROR_HEIGHT = 0.25
DEFAULT_SPINS = tuple(Fraction(k, 2) for k in range(1, 7))
DEFAULT_MAX_EVALS = 8000
DEFAULT_WORK_BUDGET = 250_000
W_INTENSITY = 3.0
UNMATCHED_PENALTY = 1.0
GROUP_PENALTY = 0.05
NUCLEUS_PENALTY = 0.01
SPIN_PENALTY = 0.02
SAME_PATTERN_REL = 0.02
INTENSITY_FLOOR = 0.05
MISSING_SCALE = 0.25
MISSING_SCALE_OUTER = 0.5
COMMENSURATE_GATE = 0.15
LEVEL_GATE = 0.3
PROBE_SLACK = 1.0
KEEP_SLACK = 1.0
POOR_FIT = 1.0
MIN_SHARE = 1e-4


class PartnerOption(NamedTuple):
    """An allowed partner: ``kind`` is ``"spin"``, ``"nuclide"`` or ``"element"``.

    ``isotopes`` holds ``(label, spin, abundance, J_ratio)``: ``J_ratio`` is the
    coupling to that isotope divided by the group's ``J`` (the γ ratio to the
    reference isotope; 1 for the reference, 0 for spin 0).  A spin or nuclide
    option has one isotope of abundance 1.
    """

    label: str
    kind: str
    isotopes: tuple[tuple[str, Fraction, Fraction, float], ...]

    @property
    def plain(self) -> bool:
        return len(self.isotopes) == 1 and self.isotopes[0][1] > 0

    @property
    def spin(self) -> Fraction:
        """Spin of the reference isotope (the one ``J`` belongs to)."""
        return max(self.isotopes, key=lambda iso: (iso[3] == 1, iso[2]))[1]


def spin_option(spin: Fraction) -> PartnerOption:
    """A bare spin-``spin`` partner."""
    spin = Fraction(spin)
    return PartnerOption(str(spin), "spin", ((str(spin), spin, Fraction(1), 1.0),))


class Group(NamedTuple):
    option: PartnerOption
    count: int
    J_Hz: float


class Candidate(NamedTuple):
    """One explanation: groups, score parts, predicted lines (offset from ``center_Hz``, sum 1)."""

    groups: tuple[Group, ...]
    score: float
    position_rms: float
    intensity_residual: float
    unmatched_observed: int
    label: str
    lines: list[tuple[float, float]]
    center_Hz: float
    scale: float


class Identification(NamedTuple):
    candidates: list[Candidate]
    notes: list[str]
    evaluated: int
    complete: bool


def _check_lines(lines: Iterable) -> list[tuple[float, float]]:
    try:
        items = list(lines)
    except TypeError:
        raise InputError("lines must be a list of (position_Hz, intensity)", field="lines") from None
    if len(items) > MAX_INPUT_LINES:
        raise InputError(f"at most {MAX_INPUT_LINES} lines can be analysed, got {len(items)}",
                         field="lines", code="too_large")
    out = []
    for i, item in enumerate(items):
        try:
            x, y = item
            x, y = float(x), float(y)
        except (TypeError, ValueError):
            raise InputError("each line must be (position_Hz, intensity)", field=f"lines.{i}") from None
        if not (math.isfinite(x) and math.isfinite(y)):
            raise InputError("line position and intensity must be finite numbers", field=f"lines.{i}")
        if y <= 0:
            raise InputError(f"intensity must be greater than zero, got {y:g}", field=f"lines.{i}.intensity")
        out.append((x, y))
    if not out:
        raise InputError("give at least one line", field="lines", code="missing_field")
    out.sort()
    return out


def j_candidates(xs: Sequence[float], tol_Hz: float) -> list[tuple[float, int]]:
    """Pairwise spacings merged within ``tol_Hz``: ``[(J_Hz, support), ...]``, best supported first."""
    diffs = sorted(b - a for a, b in itertools.combinations(xs, 2) if b - a > tol_Hz)
    clusters: list[list[float]] = []
    for d in diffs:
        if clusters and d - clusters[-1][0] <= tol_Hz:
            clusters[-1].append(d)
        else:
            clusters.append([d])
    out = [(sum(c) / len(c), len(c)) for c in clusters]
    out.sort(key=lambda js: (-js[1], js[0]))
    return out


def mirror_spacings(obs: Sequence[tuple[float, float]], tol_Hz: float) -> list[float]:
    """Spacings of line pairs placed symmetrically about the pattern's centre with heights within ``MIRROR_HEIGHT``.

    A satellite pair (an element's magnetic isotope beside its spin-0 isotopes)
    is such a pair, but its wide spacing has little support among all pairwise
    spacings; these join the element search's candidate couplings.
    """
    center2 = obs[0][0] + obs[-1][0]
    out = []
    for (x1, y1), (x2, y2) in itertools.combinations(obs, 2):
        if x2 - x1 > tol_Hz and abs(x1 + x2 - center2) <= tol_Hz and abs(y1 - y2) <= MIRROR_HEIGHT * max(y1, y2):
            out.append(x2 - x1)
    return out


def _comb_positions(Js: Sequence[float], ms: Sequence[int]) -> list[float]:
    points = [0.0]
    for J, m in zip(Js, ms):
        points = [p + k * J for p in points for k in range(m + 1)]
    return sorted(points)


def _explains_all(xs, left: float, points: list[float], tol: float) -> bool:
    """True if every observed position (ascending) lies within ``tol`` of some ``left + point`` (ascending)."""
    j, n = 0, len(points)
    for x in xs:
        low = x - left - tol
        while j < n and points[j] < low:
            j += 1
        if j == n or points[j] > low + 2 * tol:
            return False
    return True


def _step_vectors(Js: Sequence[float], width: float, tol: float, n_obs: int, max_steps: int):
    """Step counts ``m_k >= 1`` with ``width - 2 tol <= sum m J <= 2 width + 2 tol`` and few comb points."""
    lo, hi = width - 2 * tol, 2 * width + 2 * tol
    max_points = 3 * n_obs + 6

    def rec(k, so_far, points, acc):
        if k == len(Js):
            if lo <= so_far <= hi:
                yield tuple(acc)
            return
        rest = sum(Js[k + 1:])
        m = 1
        while m <= max_steps and so_far + m * Js[k] + rest <= hi and points * (m + 1) <= max_points:
            yield from rec(k + 1, so_far + m * Js[k], points * (m + 1), acc + [m])
            m += 1

    yield from rec(0, 0.0, 1, [])


def _commensurate(Js: Sequence[float], tol: float) -> bool:
    """True if two J are within ``tol`` of a simple ratio ``p/q`` (``q <= 2``, ``p/q <= 4``): their lines coincide."""
    for a, b in itertools.combinations(sorted(Js), 2):
        for q in (1, 2):
            p = round(q * b / a)
            if 1 <= p <= 4 * q and abs(q * b - p * a) <= tol:
                return True
    return False


class Split(NamedTuple):
    """Groups ``(option, count)`` sharing one J and making ``m = sum count × 2I`` steps; complexity; joint comb."""

    parts: tuple[tuple[PartnerOption, int], ...]
    cost: float
    comb: tuple[float, ...]


def _splits(m: int, options: Sequence[PartnerOption], max_count: int, pairs: bool) -> list[Split]:
    """Ways to make ``m`` steps of one J: one group, and with ``pairs`` two groups of different spin
    (1:2:2:1 from I = 1/2 and I = 1 with one J)."""
    def ways(opt):
        twice = int(2 * opt.spin)
        return [(n, n * twice) for n in range(1, max_count + 1) if n * twice <= m]

    out = [Split(((opt, n),), _group_cost(opt.spin, n), _comb(opt.spin, n))
           for opt in options for n, steps in ways(opt) if steps == m]
    if not pairs:
        return out
    for a, b in itertools.combinations(sorted(options, key=lambda o: o.spin), 2):
        if a.spin == b.spin:
            continue  # same spin and J: one group
        for na, steps_a in ways(a):
            for nb, steps_b in ways(b):
                if steps_a + steps_b == m:  # the joint comb from the multiplet engine, both groups at J = 1
                    comb = tuple(float(w) for _, w in normalized(multiplet([(a.spin, na, 1.0), (b.spin, nb, 1.0)])))
                    out.append(Split(((a, na), (b, nb)), _group_cost(a.spin, na) + _group_cost(b.spin, nb), comb))
    return out


@lru_cache(maxsize=1024)
def _group_cost(spin: Fraction, count: int) -> float:
    return GROUP_PENALTY + NUCLEUS_PENALTY * count + SPIN_PENALTY * float(2 * spin - 1)


def _complexity(groups: Sequence[Group]) -> float:
    return sum(_group_cost(g.option.spin, g.count) for g in groups)


@lru_cache(maxsize=256)
def _comb(spin: Fraction, count: int) -> tuple[float, ...]:
    coeffs = group_coefficients(spin, count)
    total = sum(coeffs)
    return tuple(c / total for c in coeffs)


def _plain_lines(groups: Sequence[Group], tol: float) -> list[tuple[float, float]]:
    """Plain groups only: the engine's per-group coefficients, convolved in floats and merged within ``tol``.

    The same successive splitting as ``multiplet`` (which keeps exact integers);
    used in the search because it is several times faster.
    """
    layout = _layout([g.J_Hz for g in groups], [int(2 * g.option.spin) * g.count for g in groups], tol)
    return _layout_lines(layout, [_comb(g.option.spin, g.count) for g in groups])


def _layout(Js: Sequence[float], ms: Sequence[int], tol: float) -> list[list[tuple[float, int]]]:
    """Comb points of step vector ``ms`` (offset from the centre, index in splitting order), merged as ``merge_lines``.

    The clusters depend on positions only, so one layout serves every split
    of ``ms`` into spins and counts; ``_layout_lines`` adds the intensities.
    """
    points = [(-sum(m * J for m, J in zip(ms, Js)) / 2, 0)]
    for J, m in zip(Js, ms):
        points = [(x + k * J, i * (m + 1) + k) for x, i in points for k in range(m + 1)]
    points.sort(key=lambda point: point[0])
    clusters = []
    start = 0
    while start < len(points):
        end = start + 1
        while end < len(points) and points[end][0] - points[start][0] <= tol:
            end += 1
        clusters.append(points[start:end])
        start = end
    return clusters


def _layout_lines(layout, combs: Sequence[Sequence[float]]) -> list[tuple[float, float]]:
    """Lines on a ``_layout`` with the groups' normalized combs: successive splitting, then cluster sums."""
    weights = [1.0]
    for comb in combs:
        weights = [w * c for w in weights for c in comb]
    lines = []
    for cluster in layout:
        if len(cluster) == 1:
            x, i = cluster[0]
            lines.append((x, weights[i]))
        else:
            total = sum(weights[i] for _, i in cluster)
            lines.append((sum(x * weights[i] for x, i in cluster) / total, total))
    return lines


def predict(groups: Sequence[Group]) -> list[tuple[float, float]]:
    """Normalized lines ``[(offset_Hz, intensity), ...]`` (sum 1) of a model, from the forward engines."""
    plain = [(g.option.spin, g.count, g.J_Hz) for g in groups if g.option.plain]
    sites = [(g.count, [(lab, spin, ab, g.J_Hz * ratio) for lab, spin, ab, ratio in g.option.isotopes])
             for g in groups if not g.option.plain]
    if sites:
        return isotopologue_spectrum(sites, plain, MIN_SHARE).lines
    return normalized(multiplet(plain))


def _match(xs: Sequence[float], offsets: Sequence[float], center: float, tol: float) -> dict[int, tuple[int, float]]:
    """One-to-one nearest assignment of predicted offsets (ascending) to observed positions ``xs`` (ascending).

    Each predicted line goes to its nearest observed line (the lower one on a
    tie) if within ``tol``; an observed line keeps the nearest of those
    claiming it.  Returns ``{obs_index: (pred_index, Δx)}``.
    """
    n = len(xs)
    best: dict[int, tuple[int, float]] = {}
    k = 0
    for j, p in enumerate(offsets):
        x = center + p
        while k < n and xs[k] < x:
            k += 1
        i = k - 1 if k == n or (k > 0 and x - xs[k - 1] <= xs[k] - x) else k
        dx = xs[i] - x
        if -tol <= dx <= tol and (i not in best or abs(dx) < abs(best[i][1])):
            best[i] = (j, dx)
    return best


class Assignment(NamedTuple):
    """Observed-to-predicted pairs ``{obs_index: (pred_index, Δx)}`` and the parts of the score they fix."""

    pairs: dict[int, tuple[int, float]]
    center: float
    position: float  # the position term
    lost: float  # sum of (y / d)² over unassigned observed lines
    unmatched: int

    def floor(self, n_obs: int) -> float:
        """Lowest score any intensities can give on this assignment, before the complexity term."""
        return self.position + W_INTENSITY * math.sqrt(self.lost / n_obs) + UNMATCHED_PENALTY * self.unmatched


def _assign(obs, offsets: Sequence[float], center0: float, tol: float) -> Assignment:
    """Match, move the centre by the weighted mean Δx, match again; the position-only score parts."""
    xs = [x for x, _ in obs]
    pairs = _match(xs, offsets, center0, tol)
    center = center0
    if pairs:
        total = sum(obs[i][1] for i in pairs)
        center += sum(obs[i][1] * dx for i, (_, dx) in pairs.items()) / total
        pairs = _match(xs, offsets, center, tol)
    if not pairs:
        return Assignment(pairs, center, math.inf, 0.0, len(obs))
    position = math.sqrt(sum(obs[i][1] * (dx / tol) ** 2 for i, (_, dx) in pairs.items())
                         / sum(obs[i][1] for i in pairs))
    lost = sum((y / max(y, INTENSITY_FLOOR)) ** 2 for i, (_, y) in enumerate(obs) if i not in pairs)
    return Assignment(pairs, center, position, lost, len(obs) - len(pairs))


def _rate(obs, tol: float, groups: Sequence[Group], pred, fit: Assignment, complexity: float) -> Candidate:
    """Score of predicted lines ``pred`` (offsets, intensities) on an assignment (see the module docstring)."""
    pairs, center = fit.pairs, fit.center
    if not pairs:
        return Candidate(tuple(groups), math.inf, math.inf, 1.0, len(obs), "", pred, center, 0.0)
    floor = INTENSITY_FLOOR
    num = den = 0.0
    for i, (j, _) in pairs.items():
        y, w = obs[i][1], pred[j][1]
        wt = 1.0 / max(y, floor) ** 2
        num += wt * y * w
        den += wt * w * w
    s = num / den
    resid = fit.lost + sum((obs[i][1] - s * pred[j][1]) ** 2 / max(obs[i][1], floor) ** 2
                           for i, (j, _) in pairs.items())
    used = {j for j, _ in pairs.values()}
    lo, hi = obs[0][0] - tol, obs[-1][0] + tol
    resid += sum((s * w / (MISSING_SCALE if lo <= center + x <= hi else MISSING_SCALE_OUTER)) ** 2
                 for j, (x, w) in enumerate(pred) if j not in used)
    intensity = math.sqrt(resid / len(obs))
    score = fit.position + W_INTENSITY * intensity + UNMATCHED_PENALTY * fit.unmatched + complexity
    return Candidate(tuple(groups), score, fit.position, intensity, fit.unmatched, "", pred, center, s)


def score_model(obs, tol: float, groups: Sequence[Group], center0: float) -> Candidate:
    """Score one model against observed lines (see the module docstring)."""
    if all(g.option.plain for g in groups):
        pred = _plain_lines(groups, tol)
    else:
        pred = merge_lines(predict(groups), tol)
    return _rate(obs, tol, groups, pred, _assign(obs, [x for x, _ in pred], center0, tol), _complexity(groups))


def _fit(cand: Candidate) -> float:
    """A candidate's score without its complexity term."""
    return cand.position_rms + W_INTENSITY * cand.intensity_residual + UNMATCHED_PENALTY * cand.unmatched_observed


def model_label(groups: Sequence[Group]) -> str:
    """Multiplicity text: the multiplet label for plain groups, partner names for element groups."""
    plain = [(g.option.spin, g.count, g.J_Hz) for g in groups if g.option.plain]
    text = multiplet_label(plain) if plain else ""
    elements = [f"isotopologues of {g.count} × {g.option.label} (J {g.J_Hz:.4g} Hz to {reference_isotope(g.option)})"
                for g in groups if not g.option.plain]
    return ", ".join(([text] if text and (text != "s" or not elements) else []) + elements)


def reference_isotope(option: PartnerOption) -> str:
    """Label of the isotope that a group's ``J`` belongs to (``J_ratio`` 1)."""
    return next((iso[0] for iso in option.isotopes if iso[3] == 1), option.label)


def _same_pattern(a: Candidate, b: Candidate, tol: float) -> bool:
    if len(a.lines) != len(b.lines):
        return False
    return all(abs(x1 - x2) <= tol and abs(y1 - y2) <= SAME_PATTERN_REL * max(y1, y2)
               for (x1, y1), (x2, y2) in zip(a.lines, b.lines))


def _describe(groups: Sequence[Group]) -> str:
    return " + ".join(f"{g.count}×{g.option.label} (J {g.J_Hz:.3g} Hz)" for g in groups) or "no coupling"


def identify(lines: Iterable, tol_Hz: float, options: Sequence[PartnerOption] | None = None, *,
             max_groups: int = MAX_GROUPS, max_count: int = MAX_COUNT, top: int = 5,
             max_evals: int = DEFAULT_MAX_EVALS, work_budget: int = DEFAULT_WORK_BUDGET) -> Identification:
    """Rank first-order explanations of observed ``(position_Hz, intensity)`` lines, best first.

    ``options``: allowed partners (default: bare spins 1/2 to 3).  Plain
    options (one isotope) enter the comb search; element options the
    isotopologue search.  Returns at most ``top`` candidates with distinct
    predicted patterns, plus notes on ties and the budget.
    """
    obs_raw = _check_lines(lines)
    if isinstance(tol_Hz, bool) or not isinstance(tol_Hz, (int, float)) or not tol_Hz > 0 or not math.isfinite(tol_Hz):
        raise InputError("tolerance must be a positive number of Hz", field="tolerance")
    if not 1 <= max_groups <= MAX_GROUPS:
        raise InputError(f"max_groups must be 1 to {MAX_GROUPS}", field="max_groups")
    if not 1 <= max_count <= MAX_COUNT:
        raise InputError(f"max_count must be 1 to {MAX_COUNT}", field="max_count")
    options = list(options) if options else [spin_option(s) for s in DEFAULT_SPINS]
    peak = max(y for _, y in obs_raw)
    obs = [(x, y / peak) for x, y in obs_raw]
    xs = [x for x, _ in obs]
    center0 = (xs[0] + xs[-1]) / 2
    notes: list[str] = []
    if len(obs) == 1 or xs[-1] - xs[0] <= tol_Hz:
        single = Candidate((), 0.0, 0.0, 0.0, 0, "s", [(0.0, 1.0)], sum(x * y for x, y in obs) / sum(y for _, y in obs), 1.0)
        notes.append("Only one resolved line: a singlet (no resolved coupling).")
        return Identification([single], notes, 0, True)

    steps = 0
    evaluated = 0
    complete = True
    results: dict[tuple, Candidate] = {}

    def budget_left() -> bool:
        nonlocal steps
        steps += 1
        return evaluated < max_evals and steps <= work_budget

    look_alikes: dict[tuple, Candidate] = {}
    store = results

    def evaluate(groups: tuple[Group, ...], scorer=None) -> None:
        """Score (``scorer()``, or ``score_model``) and store a model not seen before."""
        nonlocal evaluated
        key = tuple((g.option.label, g.count, round(g.J_Hz, 6)) for g in groups)
        if key in results or key in store:
            return
        evaluated += 1
        try:
            cand = scorer() if scorer else score_model(obs, tol_Hz, groups, center0)
        except InputError:  # beyond the forward engines' size limits: not a usable model
            return
        store[key] = cand
        if store is not results:
            return
        best["score"] = min(best["score"], cand.score)
        best["fit"] = min(best["fit"], _fit(cand))

    plain_opts = [o for o in options if o.plain]
    element_opts = [o for o in options if not o.plain]
    js = j_candidates(xs, tol_Hz)
    width = xs[-1] - xs[0]
    max_steps = 2 * max_count * int(2 * max((o.spin for o in plain_opts), default=Fraction(1, 2)))
    max_steps = min(max_steps, 3 * len(obs) + 5)  # a comb of more steps has more points than any search keeps
    one_group = {m: _splits(m, plain_opts, max_count, pairs=False) for m in range(1, max_steps + 1)}
    by_support = [J for J, _ in js[:MAX_J_CANDIDATES]]
    top_js = sorted(by_support)
    best = {"score": math.inf, "fit": math.inf}

    def best_score() -> float:
        return best["score"]

    def best_fit() -> float:
        return best["fit"]

    def try_set(Js: tuple[float, ...], slack: float, n_lines: int | None = None, table=one_group) -> bool:
        """Score the models on one J set with the splits in ``table`` (with ``one_group`` only, otherwise
        only models with a shared-J pair; only layouts of ``n_lines`` lines, if given); False when out of budget."""
        for ms in _step_vectors(Js, width, tol_Hz, len(obs), max_steps):
            if not budget_left():
                return False
            W = sum(m * J for m, J in zip(ms, Js))
            if not _explains_all(xs, center0 - W / 2, _comb_positions(Js, ms), tol_Hz):
                continue
            bound = best_score() + slack
            layout = _layout(Js, ms, tol_Hz)
            if n_lines is not None and len(layout) != n_lines:
                continue
            fixed, floor = None, 0.0  # without merged lines the offsets, so the assignment, are alike for every split
            if all(len(c) == 1 for c in layout):
                fixed = _assign(obs, [c[0][0] for c in layout], center0, tol_Hz)
                floor = fixed.floor(len(obs))
                if floor >= bound + KEEP_SLACK:
                    continue
            for choice in itertools.product(*(table[m] for m in ms)):
                cost = sum(sp.cost for sp in choice)
                if cost < bound and floor + cost < bound + KEEP_SLACK:
                    groups = tuple(Group(opt, n, J) for sp, J in zip(choice, Js) for opt, n in sp.parts)
                    if len(groups) > max_groups or (table is not one_group and len(groups) == len(Js)):
                        continue
                    evaluate(groups, lambda: score_on_layout(groups, [sp.comb for sp in choice], layout, fixed, cost))
        return True

    def score_on_layout(groups, combs, layout, fixed: Assignment | None, cost: float) -> Candidate:
        """``score_model`` for plain groups on a shared ``_layout`` (and its ``fixed`` assignment, if any)."""
        pred = _layout_lines(layout, combs)
        return _rate(obs, tol_Hz, groups, pred, fixed or _assign(obs, [x for x, _ in pred], center0, tol_Hz), cost)

    def search_levels(max_sets: int, table) -> bool:
        """One J more at a time (see step 2 of the search); False when the budget ran out."""
        for k in range(1, max_sets + 1):
            if best_fit() < LEVEL_GATE:
                break
            for ranks in sorted(itertools.combinations(range(len(by_support)), k), key=sum):
                Js = tuple(sorted((by_support[r] for r in ranks), reverse=True))
                if _commensurate(Js, tol_Hz) and best_fit() < COMMENSURATE_GATE:
                    continue
                if not try_set(Js, 0.0, table=table):
                    return False
        return True

    complete = search_levels(max_groups, one_group)
    if complete and max_groups > 1 and best_fit() >= LEVEL_GATE:
        shared = {m: _splits(m, plain_opts, max_count, pairs=True) for m in range(1, max_steps + 1)}
        complete = search_levels(max_groups - 1, shared)  # shared-J pairs, when nothing simpler fits

    if results and complete:
        # Probe for look-alikes of the best model: its couplings and their multiples, ungated.
        leader = min(results.values(), key=lambda c: (c.score, len(c.groups)))
        store = look_alikes
        base = sorted({g.J_Hz for g in leader.groups})
        probe = sorted({J * f for J in base for f in (1, 2, 3)}, reverse=True)
        for k in range(1, max_groups + 1):
            for Js in itertools.combinations(probe, k):
                distinct = all(b - a > tol_Hz for a, b in zip(sorted(Js), sorted(Js)[1:]))
                if distinct and not try_set(Js, PROBE_SLACK, len(leader.lines)):  # a look-alike has as many lines
                    complete = False
                    break

        store = results

    def element_search() -> bool:
        """Step 4: element groups alone, with one plain group, and (when nothing fits yet) two of them."""
        element_js = [J for J, _ in js[:MAX_J_CANDIDATES_ELEMENT]] + mirror_spacings(obs, tol_Hz)
        max_points = 3 * len(obs) + 6
        bases: list[tuple[Group, list[float]]] = []
        for opt in element_opts:
            refs = sorted({round(J / iso[3], 9) for J in element_js for iso in opt.isotopes if iso[3] > 0})
            for n in range(1, min(max_count, MAX_ELEMENT_COUNT) + 1):
                for J_ref in refs:
                    if not budget_left():
                        return False
                    base = Group(opt, n, J_ref)
                    evaluate((base,))
                    if max_groups < 2:
                        continue
                    try:
                        offsets = [x for x, _ in merge_lines(predict((base,)), tol_Hz)]
                    except InputError:
                        continue
                    bases.append((base, offsets))
                    for J in top_js:
                        for m in range(1, max_steps + 1):
                            if len(offsets) * (m + 1) > max_points or not budget_left():
                                break
                            points = sorted(a + (k - m / 2) * J for a in offsets for k in range(m + 1))
                            if _explains_all(xs, center0, points, tol_Hz):
                                for sp in one_group[m]:
                                    evaluate((base,) + tuple(Group(o, c, J) for o, c in sp.parts))
        if best_fit() < LEVEL_GATE:
            return True
        for (g1, off1), (g2, off2) in itertools.combinations(bases, 2):
            if g1.option == g2.option and abs(g1.J_Hz - g2.J_Hz) <= tol_Hz:
                continue  # one element with one J is one group
            if len(off1) * len(off2) > max_points:
                continue
            if not budget_left():
                return False
            if _explains_all(xs, center0, sorted(a + b for a in off1 for b in off2), tol_Hz):
                evaluate((g1, g2))
        return True

    if element_opts and complete:
        complete = element_search()
    if not complete:
        notes.append(f"The search stopped at its budget ({evaluated} models scored, limit {max_evals} models or "
                     f"{work_budget} steps): the ranking may be incomplete; narrow the partners or the lines.")
    ranked = sorted((c for c in results.values() if math.isfinite(c.score)), key=lambda c: (c.score, len(c.groups)))
    if ranked:
        ranked += sorted((c for c in look_alikes.values() if _same_pattern(ranked[0], c, tol_Hz)),
                         key=lambda c: c.score)
    kept: list[Candidate] = []
    for cand in ranked:
        cand = cand._replace(label=model_label(cand.groups))
        twin = next((k for k in kept if _same_pattern(k, cand, tol_Hz)), None)
        if twin is not None:
            same_kind = [(g.option, g.count) for g in twin.groups] == [(g.option, g.count) for g in cand.groups]
            if twin is kept[0] and not same_kind and len(notes) < 6 and cand.score < twin.score + PROBE_SLACK:
                notes.append(f"{_describe(cand.groups)} gives the same lines as {_describe(twin.groups)}: "
                             "they cannot be told apart from the spectrum; the simpler one is listed.")
            continue
        kept.append(cand)
        if len(kept) >= top:
            break
    if not kept:
        raise InputError("No first-order pattern with the allowed partners explains these lines.",
                         field="lines", code="no_solution")
    lead = kept[0]
    for other in kept[1:3]:
        if len(other.lines) == len(lead.lines) and all(
                abs(a[0] - b[0]) <= tol_Hz for a, b in zip(other.lines, lead.lines)):
            notes.append(f"{other.label} puts lines at the same positions as {lead.label}; the intensities decide "
                         f"(score {other.score:.3f} against {lead.score:.3f}).")
    for g in lead.groups:
        if g.option.plain and g.option.spin == Fraction(1, 2) and g.count > 1:
            notes.append(f"{g.count} spin-1/2 partners with one J ({g.J_Hz:.3g} Hz) may also be {g.count} different "
                         "partners whose couplings happen to be equal (a dd with J1 = J2 reads as a t).")
    if len(kept) > 1 and kept[1].score - kept[0].score < 0.1:
        notes.append(f"The two best explanations fit almost equally well ({kept[0].label}: {kept[0].score:.3f}; "
                     f"{kept[1].label}: {kept[1].score:.3f}).")
    if _fit(lead) > POOR_FIT:
        notes.append(f"Even the best explanation fits poorly (score {lead.score:.2f}): the lines may not form one "
                     "first-order multiplet, or a partner is missing from the allowed list.")
    if kept[0].unmatched_observed:
        notes.append(f"{kept[0].unmatched_observed} observed line(s) are not explained by the best candidate.")
    return Identification(kept, notes, evaluated, complete)
