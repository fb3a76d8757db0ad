"""Exact liquid-state spectra of coupled spin systems (strong and weak coupling).

Hamiltonian, in Hz, in the rotating frame of each nuclide (Pople, Schneider &
Bernstein, *High-resolution Nuclear Magnetic Resonance*, 1959, ch. 6)::

    H = Σ_k ν_k I_zk + Σ_{k<l like} J_kl I_k·I_l + Σ_{k<l unlike} J_kl I_zk I_zl

"Like" means the same nucleus label (strong coupling); spins of different
nuclides are coupled weakly, because their Larmor frequencies differ by MHz.
Spins may have any I with 2I integer.  The spectrum of the observed nuclide is
the set of transitions i → f with frequency ν = E_f − E_i and intensity
|<f|F_x|i>|², F_x = Σ I_x over the observed spins, in the high-temperature limit
(all states equally populated).  Convention: f has M_obs one higher than i, so
the lines come from the matrix elements of F_+ = F_x + iF_y, |<f|F_x|i>|² =
|<f|F_+|i>|²/4; an uncoupled spin then gives a line at +offset_Hz, the sign in
which shifts are quoted.  (The ΔM_obs = −1 convention gives the same lines with
ν = E_i − E_f.)

Factoring, all exact:
1. Connected components: sites joined by no chain of non-zero couplings have
   commuting Hamiltonians, so each component with observed spins is solved alone.
2. Magnetic equivalence: a ``Site`` with ``count`` n stands for n spins with the
   same nucleus and shift and *identical* couplings to every other spin.  The n
   spins are decomposed into total spins F with multiplicities (Clebsch–Gordan
   counting, ``total_spin_multiplicities``).  H and F_x conserve each group's F,
   and the couplings of the group to another spin become J F·I, so every choice of
   F per group is a smaller problem with one spin F per group, weighted by the
   product of multiplicities.  Couplings inside a group only shift whole
   F-manifolds and never appear in the spectrum, so they are not an input.  This
   is valid only for magnetic equivalence: chemically equivalent spins that couple
   differently to a third spin (AA′XX′) must be given as separate sites
   (``equivalence_caveats`` detects the situation).  ``factor_equivalence=False``
   expands every site into individual spins instead (same lines, more work).
3. Blocks: H conserves the total M of each nuclide separately, so it is
   block-diagonal in the product basis with one block per tuple of per-nuclide
   M; only blocks are diagonalized, and F_+ links block (M_obs, M_rest) to
   (M_obs + 1, M_rest).

Normalization: intensities are divided by the exact sum rule
Σ |<f|F_x|i>|² over ΔM_obs = +1 = Tr(F_x²)/2 = D Σ_obs I(I+1)/6 (D = Hilbert
dimension), so they sum to 1 (less whatever ``min_rel_intensity`` drops); each
observed spin contributes I(I+1) / Σ_obs I(I+1) of the total, as in first order.

Public interface::

    Site(nucleus: str, spin: Fraction, offset_Hz: float, count: int = 1)
    simulate(sites, couplings, observe, *, use_numpy=None, factor_equivalence=True,
             merge_tol_Hz=1e-3, min_rel_intensity=1e-6, progress=None)
        -> list[tuple[float, float]]   # (freq_Hz, intensity), ascending freq_Hz
    transitions(same arguments) -> list[tuple[float, float, int]]  # plus the site each line mostly belongs to
    components(n_sites, couplings) -> list[list[int]]   # sites joined by coupling paths
    clusters(sites, couplings, observe, weak_link_tol_Hz=None, *, factor_equivalence=True)
        -> list[dict]   # clusters solved apart, method and error bound (error_Hz = flip_flop_Hz + mixing_Hz)
    first_order_checks(sites, couplings, threshold=10.0, spectrometer_1H_MHz=None)
        -> list[dict]
    equivalence_caveats(sites, couplings, shift_tol_Hz=1e-6, J_tol_Hz=1e-6) -> list[str]
    total_spin_multiplicities(n, spin) -> list[tuple[Fraction, int]]
    problem_size(sites, couplings, observe, *, factor_equivalence=True)
        -> dict(largest_block=int | None, total_dim=int)
    MAX_BLOCK_DIM, MAX_TOTAL_DIM, MAX_WORK   # size limits (after factoring): InputError "too_large"
    MAX_SPIN, MAX_COUNT            # input bounds on Site.spin and Site.count

``couplings`` is a list of ``(i, j, J_Hz)`` with i, j site indices (i ≠ j); a
coupling between two sites applies to every pair of spins across them.  Offsets
are in Hz relative to each nuclide's own reference (ppm × spectrometer
frequency of that nuclide, converted by the caller); result frequencies are in
the same frame.
"""

import functools
import itertools
import math
from collections import Counter
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, replace
from fractions import Fraction
from operator import itemgetter, mul, sub
from typing import Any

from nmrcalc.errors import InputError
from nmrcalc.physics.eigen import eigh
from nmrcalc.physics.lanczos import dot
from nmrcalc.physics.packed import combine, pack

# Size limits, applied after factoring (per connected component).  A 10-spin-1/2
# like-nuclide system has a largest block of 252 and Σ block dim³ = 3.8e7 (with its
# spectrum about 5.5 s in pure CPython 3.11 and 9 s in the page, under 1 s with numpy:
# bench_results/spins.txt); 8 spins-1/2 (largest block 70) take about 0.4 s.
# MAX_WORK bounds Σ block dim³ over every composition, the eigensolver's work:
# a CH3(CH2)5 chain (13 H, 6144 states after factoring) needs 2.5e7.
MAX_BLOCK_DIM = 252
MAX_TOTAL_DIM = 8192
MAX_WORK = 40_000_000
# Input bounds that keep the size check itself instant (nuclear ground-state
# spins stay below 10; a site of more than 64 equivalent spins is not chemistry).
MAX_SPIN = 10
MAX_COUNT = 64

Links = dict[tuple[int, int], float]  # (i, j) with i < j -> J_Hz
State = tuple[int, ...]  # 2m of every spin of one composition
# block eigensolver: values, vectors (rows of lists, or columns of a numpy array)
Solver = Callable[[list[list[float]]], tuple[Any, Any]]
# a partner cluster's shifts (_partner_shifts): per slot its g column, mean and span; the weights
Spread = tuple[list[tuple[int, list[float]]], list[tuple[int, float]], list[tuple[int, float]], list[float]]


@dataclass(frozen=True)
class Site:
    """A set of ``count`` magnetically equivalent spins of one nucleus at one shift.

    ``nucleus`` is a label such as "1H" (sites with the same label are like
    spins and must have the same ``spin``); ``offset_Hz`` is the shift in Hz from
    that nuclide's reference.
    """

    nucleus: str
    spin: Fraction
    offset_Hz: float
    count: int = 1


# ---------------------------------------------------------------- validation

def _checked_sites(sites: Any) -> list[Site]:
    try:
        sites = list(sites)
    except TypeError:
        raise InputError("sites must be a list of Site", field="sites") from None
    if not sites:
        raise InputError("at least one site is needed", field="sites")
    spin_of: dict[str, Fraction] = {}
    out = []
    for k, site in enumerate(sites):
        where = f"sites.{k}"
        if not isinstance(site, Site):
            raise InputError("each site must be a Site", field=where)
        if not isinstance(site.nucleus, str) or not site.nucleus.strip():
            raise InputError("nucleus must be a non-empty label such as '1H'", field=f"{where}.nucleus")
        spin = _checked_spin(site.spin, f"{where}.spin")
        if spin_of.setdefault(site.nucleus, spin) != spin:
            raise InputError(
                f"nucleus {site.nucleus} was given spin {spin_of[site.nucleus]} before, now {spin}",
                field=f"{where}.spin",
            )
        offset = _checked_real(site.offset_Hz, f"{where}.offset_Hz")
        if isinstance(site.count, bool) or not isinstance(site.count, int) or site.count < 1:
            raise InputError("count must be an integer >= 1", field=f"{where}.count")
        if site.count > MAX_COUNT:
            raise InputError(f"count above {MAX_COUNT} is not supported", field=f"{where}.count")
        out.append(Site(site.nucleus, spin, offset, site.count))
    return out


def _checked_spin(value: Any, field: str) -> Fraction:
    if isinstance(value, bool):
        raise InputError("spin must be a positive multiple of 1/2", field=field)
    try:
        spin = Fraction(value)
    except (TypeError, ValueError, OverflowError):
        raise InputError("spin must be a positive multiple of 1/2", field=field) from None
    if spin <= 0 or (2 * spin).denominator != 1:
        raise InputError(f"spin must be a positive multiple of 1/2, got {spin}", field=field)
    if spin > MAX_SPIN:
        raise InputError(f"spin {spin} is above the supported maximum {MAX_SPIN}", field=field)
    return spin


def _checked_real(value: Any, field: str) -> float:
    if isinstance(value, bool):
        raise InputError("must be a number", field=field)
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError("must be a number", field=field) from None
    if not math.isfinite(x):
        raise InputError("must be finite", field=field)
    return x


def _checked_couplings(couplings: Any, n_sites: int) -> Links:
    """Map (i, j) with i < j to J_Hz; zero couplings are kept out of the map."""
    try:
        couplings = list(couplings)
    except TypeError:
        raise InputError("couplings must be a list of (i, j, J_Hz)", field="couplings") from None
    seen: dict[tuple[int, int], float] = {}
    for k, entry in enumerate(couplings):
        where = f"couplings.{k}"
        try:
            i, j, J = entry
        except (TypeError, ValueError):
            raise InputError("a coupling is (i, j, J_Hz)", field=where) from None
        for idx in (i, j):
            if isinstance(idx, bool) or not isinstance(idx, int) or not 0 <= idx < n_sites:
                raise InputError(f"site index {idx!r} is not in 0..{n_sites - 1}", field=f"{where}.between")
        if i == j:
            raise InputError(
                f"a coupling needs two different sites (site {i} with itself; couplings inside "
                "an equivalent group do not show in the spectrum)",
                field=f"{where}.between",
            )
        pair = (min(i, j), max(i, j))
        if pair in seen:
            raise InputError(f"sites {pair[0]} and {pair[1]} are coupled twice", field=f"{where}.between")
        seen[pair] = _checked_real(J, f"{where}.J_Hz")
    return {pair: J for pair, J in seen.items() if J != 0.0}


# ------------------------------------------------------- spin composition

def total_spin_multiplicities(n: int, spin: Any) -> list[tuple[Fraction, int]]:
    """Total spins F (descending) and multiplicities for n spins of ``spin``.

    Clebsch–Gordan counting: the number N(M) of product states with total M is
    the coefficient of x^M in (x^-I + ... + x^I)^n, and F occurs N(F) − N(F+1)
    times (Pople, Schneider & Bernstein 1959, sec. 6-4).  For 3 spins-1/2:
    F = 3/2 once, F = 1/2 twice.
    """
    spin = _checked_spin(spin, "spin")
    if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= MAX_COUNT:
        raise InputError(f"count must be an integer from 1 to {MAX_COUNT}", field="count")
    counts = _state_counts([int(2 * spin)] * n)  # index j ↔ 2M = 2j − top
    top = len(counts) - 1  # = 2 n I
    out = []
    for j in range(top, (top - 1) // 2, -1):  # 2M from n·2I down to 0 or 1
        above = counts[j + 1] if j + 1 <= top else 0
        mult = counts[j] - above
        if mult:
            out.append((Fraction(2 * j - top, 2), mult))
    return out


def _state_counts(two_spins: list[int]) -> list[int]:
    """Number of product states per total M for spins 2F = ``two_spins``.

    Index j counts Σ (m_k + F_k), i.e. M = j − Σ F_k, from the lowest M upward.
    """
    counts = [1]
    for two_f in two_spins:
        new = [0] * (len(counts) + two_f)
        for j, c in enumerate(counts):
            for step in range(two_f + 1):
                new[j + step] += c
        counts = new
    return counts


# ---------------------------------------------------------- problem set-up

@dataclass(frozen=True)
class _Unit:
    """One spin or one equivalent group in a component, with its F options."""

    nucleus: str
    offset_Hz: float
    options: tuple[tuple[int, int], ...]  # (2F, multiplicity)
    site: int


Planned = tuple[list[int], list[_Unit], int]  # component, its units, total dimension after factoring


# Transitions weaker than this (intensities sum to 1) are not kept: forbidden lines come out of
# the eigenvectors at 1e-20 to 1e-33 and would only cost merging.  Even 10^7 of them add up to
# 1e-6 of the total, and min_rel_intensity (1e-6 of the strongest line) drops lines far above it.
NEGLIGIBLE_INTENSITY = 1e-13
WEAK_LINK_MIN_RATIO = 20.0  # |Δν|/|J| a weak link needs besides J²/|Δν| <= tolerance


def _split_links(sites: list[Site], J: Links, observe: str, tol_Hz: float | None) -> tuple[Links, Links]:
    """(strong, weak) couplings: weak = like observed spins with |Δν| >= 20|J| and J²/|Δν| <= tol_Hz."""
    if tol_Hz is None:
        return J, {}
    strong, weak = {}, {}
    for (i, j), J_ij in J.items():
        delta = abs(sites[i].offset_Hz - sites[j].offset_Hz)
        if (sites[i].nucleus == sites[j].nucleus == observe and delta >= WEAK_LINK_MIN_RATIO * abs(J_ij)
                and J_ij * J_ij <= tol_Hz * delta):
            weak[(i, j)] = J_ij
        else:
            strong[(i, j)] = J_ij
    # a weak link inside one strongly joined cluster gains nothing: it is solved exactly there
    roots = {s: k for k, group in enumerate(_components(len(sites), strong)) for s in group}
    for pair in [p for p in weak if roots[p[0]] == roots[p[1]]]:
        strong[pair] = weak.pop(pair)
    return strong, weak


def _level_mixing(E: Any, V: Any, diag: list[float]) -> list[float]:
    """Per eigenstate k of one block: Σ_{l≠k} (√(Δ_kl² + 4 W_kl²) − |Δ_kl|) / 2, W = <l|V|k>, Δ = E_k − E_l.

    ``diag`` is a diagonal perturbation V (in the product basis) of the block.  Each
    term is the exact level shift of a two-level system, which is W²/|Δ| (second-order
    Rayleigh–Schrödinger) when |W| ≪ |Δ| and never more than |W| (first-order degenerate
    theory) when the levels are (nearly) degenerate: the floor on the denominator.
    """
    if hasattr(V, "shape"):
        import numpy

        W = V.T @ (numpy.array(diag)[:, None] * V)
        D = numpy.abs(E[:, None] - E[None, :])
        T = (numpy.sqrt(D * D + 4 * W * W) - D) / 2
        numpy.fill_diagonal(T, 0.0)
        return [float(x) for x in T.sum(axis=1)]
    weighted = [[c * x for c, x in zip(v, diag)] for v in V]
    out = []
    for k, (Ek, vk) in enumerate(zip(E, weighted)):
        total = 0.0
        for l, (El, vl) in enumerate(zip(E, V)):
            if l != k:
                w, d = dot(vk, vl), abs(Ek - El)
                total += (math.sqrt(d * d + 4 * w * w) - d) / 2
        out.append(total)
    return out


def _mixing_bound(sites: list[Site], group: list[int], strong: Links, links: list[tuple[int, int, float]],
                  solve: Solver) -> float:
    """Largest second-order level shift e of ``group`` by V = Σ_a g_a I_za, g_a = Σ_b J_ab z_b.

    V is the part of the weak ``links`` (a in ``group``, b in a partner, J_ab) that the
    first-order treatment keeps only on the diagonal: to cluster A, a partner eigenstate
    with <Σ I_zb> = z_b acts as an extra shift g_a of each linked site a, and V mixes A's
    eigenstates |k> within each block (the same total M per nuclide): δE_k = Σ_{l≠k}
    |<l|V|k>|² / (E_k − E_l), Rayleigh–Schrödinger perturbation theory, second order
    (any quantum-mechanics text, e.g. Sakurai, *Modern Quantum Mechanics*, §5.1), each
    term taken in its two-level form (``_level_mixing``) so that nearly degenerate levels
    give at most |<l|V|k>|.  Each term is convex in z, and |z_b| <= n_b I_b, so the largest
    over all partner states is at a corner z_b = ±n_b I_b; all corners are tried (z and −z
    give the same).
    """
    partner = sorted({b for _, b, _ in links})
    corners = []
    for signs in itertools.product((1, -1), repeat=max(len(partner) - 1, 0)):
        z = {b: sites[b].count * float(sites[b].spin) * sg for b, sg in zip(partner, (1,) + signs)}
        g: dict[int, float] = {}
        for a, b, J_ab in links:
            g[a] = g.get(a, 0.0) + J_ab * z[b]
        corners.append(g)
    units = _units(sites, group, True)
    pairs_J = {(a, b): strong.get((min(ua.site, ub.site), max(ua.site, ub.site)), 0.0)
               for a, ua in enumerate(units) for b, ub in enumerate(units) if ua.site != ub.site}
    worst = 0.0
    for spins, _ in _compositions(units):
        nuclei = list(dict.fromkeys(units[k].nucleus for k, _ in spins))
        nuc_of = [nuclei.index(units[k].nucleus) for k, _ in spins]
        two_fs = [tf for _, tf in spins]
        nu = [units[k].offset_Hz for k, _ in spins]
        pairs = [(a, b, pairs_J[(spins[a][0], spins[b][0])], nuc_of[a] == nuc_of[b])
                 for a in range(len(spins)) for b in range(a + 1, len(spins))
                 if pairs_J.get((spins[a][0], spins[b][0]), 0.0) != 0.0]
        at = [(a, units[k].site) for a, (k, _) in enumerate(spins) if units[k].site in corners[0]]
        if not at:
            continue
        for states in _blocks(two_fs, nuc_of, len(nuclei)).values():
            if len(states) < 2:
                continue
            index = {st: i for i, st in enumerate(states)}
            E, V = solve(_block_hamiltonian(states, index, nu, two_fs, pairs))
            for g in corners:
                diag = [sum(g[site] * st[a] / 2 for a, site in at) for st in states]
                worst = max(worst, max(_level_mixing(E, V, diag)))
    return worst


def _weak_split(sites: list[Site], J: Links, observe: str, tol_Hz: float | None,
                factor_equivalence: bool) -> tuple[Links, Links, dict[int, float], frozenset[int]]:
    """``_joined_split`` (its docstring), remembered for the last few systems (and size limits):
    ``clusters`` and ``transitions`` of one request ask for the same split."""
    strong, weak, mixing, resolved = _joined_split(tuple(sites), tuple(sorted(J.items())), observe, tol_Hz,
                                                   factor_equivalence, (MAX_BLOCK_DIM, MAX_TOTAL_DIM, MAX_WORK))
    return dict(strong), dict(weak), dict(mixing), resolved


@functools.lru_cache(maxsize=4)
def _joined_split(site_tuple: tuple[Site, ...], J_items: tuple[tuple[tuple[int, int], float], ...], observe: str,
                  tol_Hz: float | None, factor_equivalence: bool,
                  limits: tuple[int, int, int]) -> tuple[Links, Links, dict[int, float], frozenset[int]]:
    """(strong, weak, mixing error per site's cluster, sites of the clusters re-solved in their
    partner's field): ``_split_links``, then the second-order check.

    A line of cluster A is a difference of two of A's levels in one eigenstate of each
    partner B, so the mixing (``_mixing_bound``) moves it by at most 2 e_A + Σ_B 2 e_B
    (B's levels shift by up to e_B in A's field, differently in A's two states).  A
    cluster with one partner cluster and a mixing worth a tenth of ``tol_Hz`` is instead
    re-solved in each field its partner's eigenstates give it (``transitions``), the largest
    first, no two re-solved clusters linked to each other: its own mixing is then exact and
    drops out of its own bound (2 e_A = 0).  Its partner's bound keeps 2 e_A: the partner's
    lines take A's level changes from the re-solved fields, but terms that change A's and
    B's states at once are neglected there, and on random systems (tests/test_spin_clusters.py)
    they exceed B's own part.  A cluster whose bound still exceeds
    ``tol_Hz`` is joined to its partners (its links solved exactly) when the joined
    cluster fits MAX_BLOCK_DIM / MAX_TOTAL_DIM / MAX_WORK; otherwise it stays split and its bound is
    reported.  Repeated until nothing changes.  When the split clusters themselves exceed
    the size limits the bound is not worked out (math.inf).
    """
    sites, solve = list(site_tuple), _solver(None)
    strong, weak = _split_links(sites, dict(J_items), observe, tol_Hz)
    while weak:
        if _too_large(*_size_report(_plan(sites, strong, observe, factor_equivalence)), limits):
            return strong, weak, dict.fromkeys(range(len(sites)), math.inf), frozenset()  # too large
        groups = _components(len(sites), strong)
        root = {s: k for k, group in enumerate(groups) for s in group}
        own = [0.0] * len(groups)
        partners: list[set[int]] = [set() for _ in groups]
        for k, group in enumerate(groups):
            links = [(a, b, J_ab) for (i, j), J_ab in weak.items() for a, b in ((i, j), (j, i)) if root[a] == k]
            partners[k] = {root[b] for _, b, _ in links}
            if links:
                own[k] = _mixing_bound(sites, group, strong, links, solve)
        resolved: set[int] = set()
        for k in sorted(range(len(groups)), key=lambda k: -own[k]):
            if len(partners[k]) == 1 and 20 * own[k] > (tol_Hz or 0.0) and not partners[k] & resolved:
                resolved.add(k)
        mixing = [(0.0 if k in resolved else 2 * own[k]) + sum(2 * own[b] for b in partners[k])
                  for k in range(len(groups))]
        joined = False
        for k in sorted(range(len(groups)), key=lambda k: -mixing[k]):
            if tol_Hz is None or mixing[k] <= tol_Hz:
                break
            joins = {p: J_p for p, J_p in weak.items() if k in (root[p[0]], root[p[1]])}
            trial = {**strong, **joins}
            plan = [entry for entry in _plan(sites, trial, observe, factor_equivalence) if groups[k][0] in entry[0]]
            if not _too_large(*_size_report(plan), limits):
                strong = trial
                weak = {p: J_p for p, J_p in weak.items() if p not in joins}
                joined = True
                break
        if not joined:
            return (strong, weak, {s: mixing[root[s]] for s in root},
                    frozenset(s for k in resolved for s in groups[k]))
    return strong, weak, dict.fromkeys(range(len(sites)), 0.0), frozenset()


def clusters(sites: Any, couplings: Any, observe: str, weak_link_tol_Hz: float | None = None, *,
             factor_equivalence: bool = True) -> list[dict]:
    """Clusters solved apart: {"spins", "method", "error_Hz", "flip_flop_Hz", "mixing_Hz", "links",
    "partner_field"} (true: re-solved in each field of its one partner's eigenstates, ``_PartnerField``).

    Sites joined by no coupling path are exact apart.  With ``weak_link_tol_Hz``
    a coupling between like observed sites with |Δν| >= 20 |J| and J²/|Δν| <=
    ``weak_link_tol_Hz`` (both in Hz at the chosen field) is a weak link, treated to
    first order, provided the second-order mixing bound below is also <= the
    tolerance or the joined cluster is too large to solve exactly (``_weak_split``).
    ``error_Hz`` bounds how far a line of the cluster is from the exact one; it is
    the sum of two parts:

    ``flip_flop_Hz``: the neglected flip-flop terms J/2 (F_+ F_− + F_− F_+) between
    the clusters shift each level by second-order perturbation theory by at most
    (Σ_links |J| c_i c_j)² / (4 |Δν|) (the amplitudes of one cluster's links can
    add; c = (n + 1)/2 bounds a ladder element of a group of n spins-½; for one
    AB pair this is J²/(4Δν), the AB quartet's C = √(Δν² + J²) ≈ Δν + J²/(2Δν)),
    so a line moves by about twice that.  This part is that times 4, a margin
    for energy denominators of strongly coupled clusters spread below Δν and for
    near-degenerate lines: 2 (Σ_links |J| c_i c_j)² / min |Δν|.  The margin is
    set by the dense numpy reference (tests/test_spin_clusters.py: at 60 MHz a
    strongly coupled ethyl line moved 0.013 Hz against an unmargined 0.006 Hz).

    ``mixing_Hz``: the links' I_za I_zb part, kept only on the diagonal, is a shift
    g_a = Σ_b J_ab <I_zb> of each linked site a that mixes the cluster's own
    eigenstates; with nearly degenerate levels (energy denominators of a few Hz,
    not |Δν|) this dominates.  Bound: 2 e_A + Σ_partners 2 e_B, e the largest
    second-order shift Σ_{l≠k} |<l|V|k>|² / |E_k − E_l| (Rayleigh–Schrödinger,
    ``_mixing_bound``, two-level form for near degeneracy).
    """
    sites = _checked_sites(sites)
    J = _checked_couplings(couplings, len(sites))
    _checked_observe(sites, observe)
    if weak_link_tol_Hz is not None:
        weak_link_tol_Hz = _checked_real(weak_link_tol_Hz, "weak_link_tol_Hz")
    strong, weak, mixing, resolved = _weak_split(sites, J, observe, weak_link_tol_Hz, factor_equivalence)
    out = []
    for group in _components(len(sites), strong):
        links = [(i, j, J_ij) for (i, j), J_ij in sorted(weak.items()) if i in group or j in group]
        c = [(sites[k].count * float(2 * sites[k].spin) + 1) / 2 for k in range(len(sites))]
        amplitude = sum(abs(J_ij) * c[i] * c[j] for i, j, J_ij in links)
        flip_flop = 2 * amplitude ** 2 / min((abs(sites[i].offset_Hz - sites[j].offset_Hz) for i, j, _ in links),
                                             default=1.0)
        mix = mixing[group[0]] if links else 0.0
        out.append({"spins": group, "method": "weak-link" if links else "exact", "error_Hz": flip_flop + mix,
                    "flip_flop_Hz": flip_flop, "mixing_Hz": mix, "links": links,
                    "partner_field": group[0] in resolved})
    return out


def components(n_sites: int, couplings: Any) -> list[list[int]]:
    """Sites joined by chains of non-zero couplings (solved separately and summed: exact)."""
    return _components(n_sites, _checked_couplings(couplings, n_sites))


def _components(n_sites: int, J: dict[tuple[int, int], float]) -> list[list[int]]:
    """Connected components of the coupling graph (non-zero J only), each sorted."""
    parent = list(range(n_sites))

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for i, j in J:
        parent[root(i)] = root(j)
    groups: dict[int, list[int]] = {}
    for i in range(n_sites):
        groups.setdefault(root(i), []).append(i)
    return list(groups.values())


def _units(sites: list[Site], component: list[int], factor_equivalence: bool) -> list[_Unit]:
    units = []
    for s in component:
        site = sites[s]
        if factor_equivalence:
            opts = tuple((int(2 * F), m) for F, m in total_spin_multiplicities(site.count, site.spin))
            units.append(_Unit(site.nucleus, site.offset_Hz, opts, s))
        else:
            units.extend(_Unit(site.nucleus, site.offset_Hz, ((int(2 * site.spin), 1),), s)
                         for _ in range(site.count))
    return units


def _compositions(units: list[_Unit]) -> Iterator[tuple[list[tuple[int, int]], int]]:
    """Yield (spins, weight): spins = list of (unit index, 2F) with F > 0."""
    for choice in itertools.product(*(u.options for u in units)):
        weight = math.prod(m for _, m in choice)
        spins = [(k, two_f) for k, (two_f, _) in enumerate(choice) if two_f > 0]
        yield spins, weight


def _block_profile(units: list[_Unit], spins: list[tuple[int, int]]) -> tuple[int, int]:
    """(largest block dimension, Σ block dim³) for one composition."""
    largest, cube_sum = 1, 1
    for nucleus in dict.fromkeys(units[k].nucleus for k, _ in spins):
        counts = _state_counts([tf for k, tf in spins if units[k].nucleus == nucleus])
        largest *= max(counts)
        cube_sum *= sum(c ** 3 for c in counts)
    return largest, cube_sum


def _plan(sites: list[Site], J: Links, observe: str, factor_equivalence: bool) -> list[Planned]:
    """(component, units, total dimension after factoring) for components with observed spins."""
    plan = []
    for component in _components(len(sites), J):
        if not any(sites[s].nucleus == observe for s in component):
            continue
        units = _units(sites, component, factor_equivalence)
        total = math.prod(sum(tf + 1 for tf, _ in u.options) for u in units)
        plan.append((component, units, total))
    return plan


_MAX_COUNTED_2F = 512  # beyond this Σ 2F in one component the largest block is not counted


def _size_report(plan: list[Planned]) -> tuple[int | None, int, int]:
    """(largest block, largest total dimension, Σ dim³) over the plan.

    The largest block comes from taking the largest F of every group: a larger
    F convolves the state counts with a longer run of ones, which dominates the
    shorter run elementwise, so no block can shrink.  It is None when not
    counted (the system is then far beyond MAX_TOTAL_DIM); the work estimate
    is only summed for systems within the limits.
    """
    largest: int | None = 0
    total_dim = 0
    for _, units, total in plan:
        total_dim = max(total_dim, total)
        top = [(k, max(tf for tf, _ in u.options)) for k, u in enumerate(units)]
        if largest is not None and sum(tf for _, tf in top) <= _MAX_COUNTED_2F:
            largest = max(largest, _block_profile(units, [(k, tf) for k, tf in top if tf > 0])[0])
        else:
            largest = None
    work = 0
    if total_dim <= MAX_TOTAL_DIM and largest is not None and largest <= MAX_BLOCK_DIM:
        work = sum(_block_profile(units, spins)[1]
                   for _, units, _ in plan for spins, _ in _compositions(units))
    return largest, total_dim, work


def _too_large(largest: int | None, total_dim: int, work: int, limits: tuple[int, int, int]) -> str | None:
    """What exceeds the size limits (block, total, work), in words; None when the system fits."""
    if total_dim > limits[1]:
        return f"{_count_text(total_dim)} states after factoring (limit {limits[1]})"
    if largest is None:
        return "too many states to count"
    if largest > limits[0]:
        return f"a block of {largest} states (limit {limits[0]})"
    if work > limits[2]:
        return f"eigensolver work Σ dim³ = {work:.2g} (limit {limits[2]:.2g}, about 10 strongly coupled spins-½)"
    return None


def problem_size(sites: Any, couplings: Any, observe: str, *, factor_equivalence: bool = True) -> dict:
    """Largest block and largest total dimension (per component) that ``simulate`` would meet.

    ``largest_block`` is None for systems too big to count quickly (Σ 2F > 512
    in one component), which are far beyond ``MAX_TOTAL_DIM`` anyway.
    """
    sites = _checked_sites(sites)
    J = _checked_couplings(couplings, len(sites))
    _checked_observe(sites, observe)
    largest, total_dim, _ = _size_report(_plan(sites, J, observe, factor_equivalence))
    return {"largest_block": largest, "total_dim": total_dim}


def _checked_observe(sites: list[Site], observe: Any) -> None:
    if not any(s.nucleus == observe for s in sites):
        names = ", ".join(sorted({s.nucleus for s in sites}))
        raise InputError(f"observe must be one of the nuclei present ({names})", field="observe")


# ----------------------------------------------------------------- solving

def _ladder(two_f: int, two_m: int, up: bool) -> float:
    """<m±1|I_±|m> = sqrt(F(F+1) − m(m±1)), in doubled units."""
    sign = 2 if up else -2
    return 0.5 * math.sqrt(two_f * (two_f + 2) - two_m * (two_m + sign))


def _blocks(two_fs: list[int], nuc_of: list[int], n_nuclei: int) -> dict[State, list[State]]:
    """Product states (tuples of 2m) grouped by the tuple of per-nuclide total 2M."""
    blocks: dict[tuple, list[tuple]] = {}
    for state in itertools.product(*(range(-tf, tf + 1, 2) for tf in two_fs)):
        key = [0] * n_nuclei
        for n_idx, tm in zip(nuc_of, state):
            key[n_idx] += tm
        blocks.setdefault(tuple(key), []).append(state)
    return blocks


def _block_hamiltonian(states: list[State], index: dict[State, int], nu: list[float], two_fs: list[int],
                       pairs: list[tuple[int, int, float, bool]]) -> list[list[float]]:
    """H in one block: Σ ν m + Σ J m_a m_b on the diagonal, J/2 (I+I- + I-I+) for like pairs."""
    H = [[0.0] * len(states) for _ in states]
    for i, s in enumerate(states):
        H[i][i] = 0.5 * sum(map(mul, nu, s)) + 0.25 * sum(Jab * s[a] * s[b] for a, b, Jab, _ in pairs)
        # raising a and lowering b from every state visits each linked pair of
        # states exactly once; the element is mirrored into the lower triangle
        for a, b, Jab, like in pairs:
            if like and s[a] < two_fs[a] and s[b] > -two_fs[b]:
                t = list(s)
                t[a] += 2
                t[b] -= 2
                j = index[tuple(t)]
                val = 0.5 * Jab * _ladder(two_fs[a], s[a], True) * _ladder(two_fs[b], s[b], False)
                H[i][j] += val
                H[j][i] += val
    return H


def _expectations(states: list[State], V: Any, link_pos: list[tuple[int, int]],
                  n_linked: int) -> list[tuple[float, ...]] | None:
    """<Σ I_z> per slot in every eigenvector of one block: ``link_pos`` = (spin, slot) pairs, ``n_linked``
    slots (the weakly linked sites, or the observed sites that name a line's spin); None without slots."""
    if not n_linked:
        return None
    if not link_pos:  # every linked group of this composition has total spin 0
        return [(0.0,) * n_linked] * len(states)
    if hasattr(V, "shape"):
        import numpy

        W = V * V  # columns: eigenvectors
        z = numpy.zeros((W.shape[1], n_linked))
        for a, slot in link_pos:
            z[:, slot] += numpy.array([st[a] / 2 for st in states]) @ W
        return [tuple(row) for row in z.tolist()]
    weights = [[0.0] * len(states) for _ in range(n_linked)]  # <Σ I_z> = Σ_s v_s² m_s
    for s, st in enumerate(states):
        for a, slot in link_pos:
            weights[slot][s] += st[a] / 2
    return [tuple(dot(squares, w) for w in weights) for squares in ([c * c for c in v] for v in V)]


def _composition_lines(units: list[_Unit], spins: list[tuple[int, int]], J_units: Callable[[int, int], float],
                       observe: str, weight: float, solve: Solver, emit: Callable[..., None],
                       tick: Callable[[int], None], linked: dict[int, int] | None = None,
                       record: Callable[[float, tuple[float, ...]], None] | None = None,
                       min_raw: float = 0.0, keep: dict | None = None) -> None:
    """Diagonalize every block of one composition and emit (freq_Hz, raw intensity, site, z_i, z_f).

    ``linked`` maps every weakly linked site (of all clusters) to a slot; then each line also carries
    <Σ I_z> of every linked site in its initial and final eigenstates (z_i, z_f; else empty) and
    ``record(weight, z)`` receives every eigenstate's <Σ I_z> per slot.  Lines whose raw intensity
    is below ``min_raw`` are dropped by ``emit``, so their site is not worked out.  ``keep``
    receives every block's (states, index, (E, V)) under its key (per-nuclide total 2M).
    """
    nuclei = list(dict.fromkeys(units[k].nucleus for k, _ in spins))
    nuc_of = [nuclei.index(units[k].nucleus) for k, _ in spins]
    obs = nuclei.index(observe) if observe in nuclei else None
    if obs is None:
        return
    two_fs = [tf for _, tf in spins]
    nu = [units[k].offset_Hz for k, _ in spins]
    pairs = []
    for a in range(len(spins)):
        for b in range(a + 1, len(spins)):
            Jab = J_units(spins[a][0], spins[b][0])
            if Jab != 0.0:
                pairs.append((a, b, Jab, nuc_of[a] == nuc_of[b]))
    link_pos = [(a, linked[units[k].site]) for a, (k, _) in enumerate(spins) if linked and units[k].site in linked]
    obs_spins = [a for a in range(len(spins)) if nuc_of[a] == obs]
    # the observed sites, and per eigenvector <Σ I_z> of each, which names the site a line belongs to
    obs_sites = sorted({units[spins[a][0]].site for a in obs_spins})
    obs_pos = [(a, obs_sites.index(units[spins[a][0]].site)) for a in obs_spins] if len(obs_sites) > 1 else []
    solved: dict[State, tuple[list[State], dict[State, int], tuple[Any, Any]]] = {}
    expect: dict[State, list[tuple[float, ...]] | None] = {}
    on_site: dict[State, list[tuple[float, ...]] | None] = {}
    for key, states in _blocks(two_fs, nuc_of, len(nuclei)).items():
        index = {s: i for i, s in enumerate(states)}
        solved[key] = (states, index, solve(_block_hamiltonian(states, index, nu, two_fs, pairs)))
        expect[key] = _expectations(states, solved[key][2][1], link_pos, len(linked or ()))
        on_site[key] = _expectations(states, solved[key][2][1], obs_pos, len(obs_sites) if obs_pos else 0)
        zs = expect[key]
        if record is not None and zs is not None:
            for z in zs:
                record(weight, z)
        tick(len(states) ** 3)
    if keep is not None:
        keep.update(solved)
    for key, (states, _, (E_i, V_i)) in solved.items():
        target = list(key)
        target[obs] += 2
        if tuple(target) not in solved:
            continue
        f_states, f_index, (E_f, V_f) = solved[tuple(target)]
        entries = []  # (row in i block, row in f block, <t|I_+a|s>)
        for si, s in enumerate(states):
            for a in obs_spins:
                if s[a] < two_fs[a]:
                    t = list(s)
                    t[a] += 2
                    entries.append((si, f_index[tuple(t)], _ladder(two_fs[a], s[a], True)))
        if not entries:
            continue
        z_i, z_f = expect[key], expect[tuple(target)]
        names = _SiteNames(obs_sites, on_site[key], on_site[tuple(target)])
        for freq, amp, site, fa, ib in _transition_amplitudes(entries, len(f_states), E_i, V_i, E_f, V_f, names,
                                                               min_raw / (0.25 * weight)):
            emit(freq, 0.25 * weight * amp * amp, site, () if z_i is None else z_i[ib], () if z_f is None else z_f[fa])


def _transition_amplitudes(entries: list[tuple[int, int, float]], dim_f: int, E_i: Any, V_i: Any, E_f: Any,
                           V_f: Any, names: "_SiteNames", min_amp2: float = 0.0
                           ) -> Iterator[tuple[float, float, "int | _Owner", int, int]]:
    """Yield (E_f[a] − E_i[b], <f_a|F_+|i_b>, site, a, b) for every eigenpair across two blocks.

    ``site`` is the observed site the line mostly belongs to (``_SiteNames``).  Lines with
    amplitude² below ``min_amp2`` (which the caller drops) are not yielded by the pure-Python path;
    on it the site is an ``_Owner``, worked out only when asked (most lines are dropped or merged),
    and the amplitudes of each eigenvector of the smaller block are one ``packed`` combination.
    """
    if hasattr(V_i, "shape"):  # numpy arrays: columns are eigenvectors
        import numpy

        P = numpy.zeros((dim_f, len(E_i)))
        for si, ti, c in entries:
            P[ti, si] += c
        A = V_f.T @ P @ V_i
        freqs = E_f[:, None] - E_i[None, :]
        n_i = len(E_i)
        owner = names.all_pairs(len(E_f), n_i)
        for k, (f, a) in enumerate(zip(freqs.ravel().tolist(), A.ravel().tolist())):
            yield f, a, owner[k], k // n_i, k % n_i
        return
    floor = math.sqrt(min_amp2)
    single = names.single
    # the lines the caller keeps (amplitude² >= min_amp2) are picked by a comprehension, no call per entry
    if len(E_f) <= len(E_i):  # <f_a|F_+|i_b> = Σ_t f_a[t] (F_+ i_b)[t]: per f_a, one combination of m_f terms
        packed, scale = _ladder_columns(entries, V_i, lambda e: e[1], lambda e: e[0], len(E_f))
        for fa, va in enumerate(V_f):
            amps = combine(packed, len(E_i), va, scale)
            for ib in [k for k, amp in enumerate(amps) if amp >= floor or -amp >= floor]:
                yield E_f[fa] - E_i[ib], amps[ib], single if single is not None else _Owner(names, fa, ib), fa, ib
        return
    packed, scale = _ladder_columns(entries, V_f, lambda e: e[0], lambda e: e[1], len(E_i))
    for ib, vb in enumerate(V_i):  # = Σ_s i_b[s] (F_− f_a)[s]: per i_b, one combination of m_i terms
        amps = combine(packed, len(E_f), vb, scale)
        for fa in [k for k, amp in enumerate(amps) if amp >= floor or -amp >= floor]:
            yield E_f[fa] - E_i[ib], amps[fa], single if single is not None else _Owner(names, fa, ib), fa, ib


def _ladder_columns(entries: list[tuple[int, int, float]], V: Any, row: Callable[[tuple], int],
                    col: Callable[[tuple], int], dim: int) -> tuple[list[int], float]:
    """The ``packed`` vectors G_r = Σ_{entries e with row(e) = r} c_e (column col(e) of V), r < dim, and their scale.

    With V the i block's eigenvectors, rows in the f block: G_t[b] = (F_+ i_b)[t], so that
    <f_a|F_+|i_b> = Σ_t f_a[t] G_t[b]; with V the f block's, rows in the i block: G_s[a] = (F_− f_a)[s].
    With every c_e = 1 (spins-½) G_r is a sum of columns, added as packed integers (exact; the
    scale is the largest column entry times the most columns one G_r sums).
    """
    columns = list(zip(*V))
    if all(e[2] == 1.0 for e in entries):  # spins-½: each G_r a sum of packed columns, in exact integers
        used = {col(e) for e in entries}
        # up to ``most`` columns are summed, so each is packed with that many times its size as scale
        most = max(Counter(map(row, entries)).values())
        scale = most * max(max(max(columns[c]), -min(columns[c])) for c in used) or 1.0
        packed_columns = {c: pack(list(columns[c]), scale) for c in used}
        sums = [0] * dim
        for e in entries:
            sums[row(e)] += packed_columns[col(e)]
        return sums, scale
    G: list[list[float]] = [[0.0] * len(V) for _ in range(dim)]
    for e in entries:
        r = row(e)
        c = e[2]
        G[r] = [g + c * x for g, x in zip(G[r], columns[col(e)])]
    scale = max(max(max(g), -min(g)) for g in G) or 1.0
    return [pack(g, scale) for g in G], scale


class _SiteNames:
    """The observed site a line f_a ← i_b mostly belongs to: the one whose <Σ I_z> grows most.

    F_+ raises Σ_j <I_zj> by exactly 1 from i_b to f_a; the site j with the largest change
    Δ_j = <f_a|I_zj|f_a> − <i_b|I_zj|i_b> is the spin that flips (Δ_j → 1 for it and 0 for the
    others as the couplings become weak against the shift differences; in an AB pair the
    larger share of an inner or outer line).  Ties go to the site listed first.  ``z_i`` and
    ``z_f``: <Σ I_z> per site of ``sites`` in every eigenvector of the two blocks (None with
    one observed site, which is then ``single``).
    """

    __slots__ = ("sites", "z_i", "z_f", "single")

    def __init__(self, sites: list[int], z_i: list[tuple[float, ...]] | None,
                 z_f: list[tuple[float, ...]] | None) -> None:
        self.sites, self.z_i, self.z_f = sites, z_i, z_f
        self.single = sites[0] if z_i is None or z_f is None else None

    def __call__(self, fa: int, ib: int) -> int:
        assert self.z_i is not None and self.z_f is not None
        change = list(map(sub, self.z_f[fa], self.z_i[ib]))
        return self.sites[change.index(max(change))]

    def all_pairs(self, n_f: int, n_i: int) -> list[int]:
        """The site of every pair (a, b), a-major, as ``__call__`` gives it (numpy path)."""
        if self.single is not None:
            return [self.single] * (n_f * n_i)
        import numpy

        change = numpy.array(self.z_f)[:, None, :] - numpy.array(self.z_i)[None, :, :]
        return [self.sites[k] for k in numpy.argmax(change, axis=2).ravel().tolist()]  # first of equal maxima


class _Owner:
    """The observed site a line mostly belongs to, worked out when asked (``_SiteNames``)."""

    __slots__ = ("names", "fa", "ib")

    def __init__(self, names: _SiteNames, fa: int, ib: int) -> None:
        self.names, self.fa, self.ib = names, fa, ib

    def __call__(self) -> int:
        return self.names(self.fa, self.ib)


class _JoinedFields:
    """A partner cluster's eigenstates as the field each gives the linked sites of ``component``.

    An eigenstate of ``other`` with <Σ I_zb> = z_b acts on each linked site a of
    ``component`` as an extra shift g_a = Σ_b J_ab z_b (first order in the weak links).
    States with g equal within a cell of tol_Hz / D per site, D = Σ_a 2 n_a I_a bounding
    Σ |d_a| of a line, are joined at their weighted mean g (``joined``: cell key → (mean g
    per site of ``own_sites``, weight)): the shifts they give a line differ by at most
    tol_Hz, the tolerance at which lines are merged anyway.
    """

    def __init__(self, component: Iterable[int], other: set[int], states: list[tuple[float, tuple[float, ...]]],
                 weak: Links, slot: dict[int, int], sites: list[Site], tol_Hz: float) -> None:
        own = set(component)
        self.links = [(a, slot[b], J_ab) for (i, j), J_ab in weak.items()
                      for a, b in ((i, j), (j, i)) if a in own and b in other]
        self.own_sites = sorted({a for a, _, _ in self.links})
        bound = sum(2 * sites[a].count * float(sites[a].spin) for a in self.own_sites)
        self.cell = max(tol_Hz, 1e-9) / (bound or 1.0)
        self._keys: dict[tuple[float, ...], tuple[int, ...]] = {}  # many lines share an eigenstate
        sums: dict[tuple[int, ...], list] = {}
        for p, z in states:
            g = self.field(z)
            acc = sums.setdefault(self.key(z), [[0.0] * len(g), 0.0])
            acc[0] = [u + p * x for u, x in zip(acc[0], g)]
            acc[1] += p
        self.joined = {k: ([u / w for u in total], w) for k, (total, w) in sums.items() if w > 0.0}

    def field(self, z: tuple[float, ...]) -> list[float]:
        """g per site of ``own_sites`` in a partner state with <Σ I_z> z (per slot)."""
        g = [0.0] * len(self.own_sites)
        for a, b, J_ab in self.links:
            g[self.own_sites.index(a)] += J_ab * z[b]
        return g

    def key(self, z: tuple[float, ...]) -> tuple[int, ...]:
        """The cell of a partner state with <Σ I_z> z: g in units of ``cell``, rounded."""
        found = self._keys.get(z)
        if found is None:
            found = self._keys[z] = tuple(round(x / self.cell) for x in self.field(z))
        return found


def _partner_shifts(component: set[int], other: set[int], states: list[tuple[float, tuple[float, ...]]],
                    weak: Links, slot: dict[int, int], sites: list[Site], tol_Hz: float) -> Spread | None:
    """The other cluster's eigenstates as the shifts they give this cluster's lines.

    A line of ``component`` whose linked sites change <Σ I_z> by d moves by Σ_a d_a g_a in
    an eigenstate of ``other`` (``_JoinedFields``, which joins states with nearly equal g).
    Returns None without links, else (columns, means, spans, weights): per slot a the g_a
    of every joined state, the weighted mean g_a and the max − min of g_a; and the joined
    states' weights.
    """
    fields = _JoinedFields(component, other, states, weak, slot, sites, tol_Hz)
    if not fields.links:
        return None
    joined = list(fields.joined.values())
    weights = [w for _, w in joined]
    total = sum(weights)
    columns = [(slot[a], [g[k] for g, _ in joined]) for k, a in enumerate(fields.own_sites)]
    means = [(a, sum(map(mul, column, weights)) / total) for a, column in columns]
    spans = [(a, max(column) - min(column)) for a, column in columns]
    return columns, means, spans, weights


class _PartnerField:
    """A cluster A re-solved in every field its one partner cluster B gives it (``_joined_split``).

    The weak links' I_za I_zb part with B's <I_zb> in each of B's eigenstates β is a shift
    g_a(β) = Σ_b J_ab <I_zb>_β of each linked site a of A; A is diagonalized with those
    shifts (exact in A, so A's own level mixing is included), B's states joined in cells
    of g (``_JoinedFields``).  A's lines in cell c carry c's weight.  A line of B from
    β to β′ moves A from its eigenstates in field g(β) to those in g(β′): it is split into
    E_A(α′; g(β′)) − E_A(α; g(β)) with weight |<α′(g(β′))|α(g(β))>|² / dim A (``spread``).
    Neglected: B's eigenstates mixed by A's field (bounded by ``_mixing_bound`` of B) and
    the flip-flop terms.
    """

    def __init__(self, component: list[int], units: list[_Unit], partner: set[int],
                 states: list[tuple[float, tuple[float, ...]]], weak: Links, slot: dict[int, int], sites: list[Site],
                 tol_Hz: float, full_dim: int) -> None:
        self.partner = partner
        self.fields = _JoinedFields(component, partner, states, weak, slot, sites, tol_Hz)
        self.tol_Hz, self.full_dim = max(tol_Hz, 1e-9), full_dim
        own = self.fields.own_sites
        self.weights = {k: w for k, (_, w) in self.fields.joined.items()}
        self.units = {k: [replace(u, offset_Hz=u.offset_Hz + g[own.index(u.site)]) if u.site in own else u
                          for u in units] for k, (g, _) in self.fields.joined.items()}
        self.blocks: dict[tuple[int, ...], list[tuple[int, dict]]] = {}
        self._spreads: dict[tuple, list[tuple[float, float]]] = {}

    def spread(self, z_i: tuple[float, ...], z_f: tuple[float, ...]) -> list[tuple[float, float]]:
        """(shift, weight) of a line of B whose eigenstates have <I_z> z_i → z_f: A's energy change."""
        k_i, k_f = self.fields.key(z_i), self.fields.key(z_f)
        if k_i == k_f:
            return [(0.0, 1.0)]
        if (k_i, k_f) not in self._spreads:
            acc: dict[int, list[float]] = {}
            for (weight, solved_i), (_, solved_f) in zip(self.blocks[k_i], self.blocks[k_f]):
                w = weight / self.full_dim
                for block, (_, _, (E_i, V_i)) in solved_i.items():
                    E_f, V_f = solved_f[block][2]
                    for a, b, overlap in _overlaps(V_f, V_i):
                        shift = float(E_f[a] - E_i[b])
                        cell = acc.setdefault(round(shift / self.tol_Hz), [0.0, 0.0])
                        cell[0] += w * overlap * overlap * shift
                        cell[1] += w * overlap * overlap
            self._spreads[(k_i, k_f)] = [(sx / sw, sw) for sx, sw in acc.values() if sw > NEGLIGIBLE_INTENSITY]
        return self._spreads[(k_i, k_f)]


def _overlaps(V_f: Any, V_i: Any) -> Iterator[tuple[int, int, float]]:
    """(a, b, <f_a|i_b>) for the eigenvectors of one block in two fields (rows, or numpy columns)."""
    if hasattr(V_f, "shape"):
        O = V_f.T @ V_i
        for a, row in enumerate(O.tolist()):
            for b, x in enumerate(row):
                yield a, b, x
        return
    for a, va in enumerate(V_f):
        for b, vb in enumerate(V_i):
            yield a, b, dot(va, vb)


def _solver(use_numpy: bool | None) -> Solver:
    """Block eigensolver: numpy.linalg.eigh if wanted and importable, else ``eigh``."""
    if use_numpy is False:
        return eigh
    try:
        import numpy
    except ImportError:
        if use_numpy:
            raise InputError("numpy is not available here", field="use_numpy", code="unavailable") from None
        return eigh
    return lambda H: numpy.linalg.eigh(numpy.array(H, dtype=float))


def _merge(lines: Iterable[tuple[float, float, int]], tol_Hz: float) -> list[tuple[float, float, int]]:
    """Join lines whose position is within ``tol_Hz`` of the running weighted mean.

    Each line is (freq, intensity, site); a merged line keeps the site of its strongest part.
    """
    merged: list[list] = []
    for freq, inten, site in sorted(lines, key=itemgetter(0)):
        if merged and freq - merged[-1][0] <= tol_Hz:
            last = merged[-1]
            total = last[1] + inten
            if total > 0.0:
                last[0] = (last[0] * last[1] + freq * inten) / total
            last[1] = total
            if inten > last[3]:
                last[2], last[3] = site, inten
        else:
            merged.append([freq, inten, site, inten])
    return [(f, i, site) for f, i, site, _ in merged]


def _count_text(n: int) -> str:
    """A state count for a message; huge ones as a power of ten (bit_length keeps it instant)."""
    if n < 10 ** 6:
        return str(n)
    return f"more than 10^{int((n.bit_length() - 1) * math.log10(2))}"


def simulate(sites: Any, couplings: Any, observe: str, *, use_numpy: bool | None = None,
             factor_equivalence: bool = True, merge_tol_Hz: float = 1e-3,
             min_rel_intensity: float = 1e-6,
             progress: Callable[[float], None] | None = None) -> list[tuple[float, float]]:
    """Lines (freq_Hz, intensity) of the ``observe`` nuclide, ascending in frequency.

    Same arguments as ``transitions``, which also names the site of each line.
    """
    return [(f, i) for f, i, _ in transitions(
        sites, couplings, observe, use_numpy=use_numpy, factor_equivalence=factor_equivalence,
        merge_tol_Hz=merge_tol_Hz, min_rel_intensity=min_rel_intensity, progress=progress)]


def transitions(sites: Any, couplings: Any, observe: str, *, use_numpy: bool | None = None,
                factor_equivalence: bool = True, merge_tol_Hz: float = 1e-3,
                min_rel_intensity: float = 1e-6, progress: Callable[[float], None] | None = None,
                weak_link_tol_Hz: float | None = None) -> list[tuple[float, float, int]]:
    """Lines (freq_Hz, intensity, site) of the ``observe`` nuclide, ascending in frequency.

    ``weak_link_tol_Hz``: None = exact; otherwise couplings that pass the weak-link
    test of ``clusters`` are treated to first order (each cluster's lines split by
    the other cluster's eigenstates, module docstring) and the rest exactly.

    ``site`` is the index of the observed site the line mostly belongs to
    (the one whose <Σ I_z> changes most in the transition, ``_SiteNames``).

    ``use_numpy``: None = numpy.linalg.eigh when importable, False = pure Python,
    True = require numpy.  Lines closer than ``merge_tol_Hz`` are merged at their
    intensity-weighted mean; merged lines weaker than ``min_rel_intensity`` times
    the strongest are dropped.  ``progress(done_fraction)`` is called after each
    block.  Raises InputError (code "too_large", field "spins") beyond
    MAX_BLOCK_DIM / MAX_TOTAL_DIM / MAX_WORK.
    """
    sites = _checked_sites(sites)
    J = _checked_couplings(couplings, len(sites))
    _checked_observe(sites, observe)
    merge_tol_Hz = _checked_real(merge_tol_Hz, "merge_tol_Hz")
    min_rel_intensity = _checked_real(min_rel_intensity, "min_rel_intensity")
    if merge_tol_Hz < 0:
        raise InputError("merge_tol_Hz must be >= 0", field="merge_tol_Hz")
    if not 0 <= min_rel_intensity < 1:
        raise InputError("min_rel_intensity must be in [0, 1)", field="min_rel_intensity")
    if progress is not None and not callable(progress):
        raise InputError("progress must be callable", field="progress")
    solve = _solver(use_numpy)
    if weak_link_tol_Hz is not None:
        weak_link_tol_Hz = _checked_real(weak_link_tol_Hz, "weak_link_tol_Hz")
    J, weak, _, resolved = _weak_split(sites, J, observe, weak_link_tol_Hz, factor_equivalence)

    plan = _plan(sites, J, observe, factor_equivalence)
    largest, total_dim, work = _size_report(plan)
    size = _too_large(largest, total_dim, work, (MAX_BLOCK_DIM, MAX_TOTAL_DIM, MAX_WORK))
    if size:
        raise InputError(
            f"spin system too large for the exact calculation: {size}; use the first-order "
            "multiplet builder, or split the system into fragments that are not coupled",
            field="spins", code="too_large",
        )

    sum_rule = sum(s.count * float(s.spin * (s.spin + 1)) for s in sites if s.nucleus == observe)
    done = [0]

    def tick(cost: int) -> None:
        done[0] += cost
        if progress is not None:
            progress(min(1.0, done[0] / work))

    raw: list[tuple[float, float, int]] = []
    linked_sites = sorted({s for pair in weak for s in pair})
    slot = {site: k for k, site in enumerate(linked_sites)}
    # per weakly linked cluster solved once: (its sites, its lines with z_i/z_f, its eigenstates)
    held: list[tuple[set[int], list, list[tuple[float, tuple[float, ...]]]]] = []
    fields: list[_PartnerField] = []
    # a cluster re-solved in its partner's fields goes after that partner: it needs its eigenstates
    for component, units, _ in sorted(plan, key=lambda entry: entry[0][0] in resolved):
        full_dim = math.prod(int(2 * sites[s].spin + 1) ** sites[s].count for s in component)
        scale = 6.0 / (float(full_dim) * sum_rule)
        unit_J = [[0.0] * len(units) for _ in units]
        for a, ua in enumerate(units):
            for b, ub in enumerate(units):
                if ua.site != ub.site:
                    unit_J[a][b] = J.get((min(ua.site, ub.site), max(ua.site, ub.site)), 0.0)

        def J_units(a: int, b: int, unit_J: list[list[float]] = unit_J) -> float:
            return unit_J[a][b]

        if component[0] in resolved:
            partner = next(other for other, _, _ in held if any(
                (min(a, b), max(a, b)) in weak for a in component for b in other))
            field = _PartnerField(component, units, partner, next(st for o, _, st in held if o is partner), weak,
                                  slot, sites, merge_tol_Hz, full_dim)
            for key, cell_units in field.units.items():
                field.blocks[key] = []
                cell_scale = scale * field.weights[key]

                def emit_cell(freq: float, inten: float, site: int, *_: tuple, cell_scale: float = cell_scale) -> None:
                    if inten * cell_scale >= NEGLIGIBLE_INTENSITY:
                        raw.append((freq, inten * cell_scale, site))

                for spins, weight in _compositions(cell_units):
                    solved: dict = {}
                    _composition_lines(cell_units, spins, J_units, observe, float(weight), solve, emit_cell, tick,
                                       min_raw=NEGLIGIBLE_INTENSITY / cell_scale, keep=solved)
                    field.blocks[key].append((weight, solved))
            fields.append(field)
            continue

        linked = {s: slot[s] for s in component if s in slot}
        own: list = []
        states: list = []

        def emit(freq: float, inten: float, site: int, z_i: tuple[float, ...], z_f: tuple[float, ...],
                 scale: float = scale, own: list = own, linked: dict[int, int] = linked) -> None:
            inten *= scale
            if inten < NEGLIGIBLE_INTENSITY:
                return
            if linked:
                own.append((freq, inten, site, z_i, z_f))
            else:
                raw.append((freq, inten, site))

        def record(weight: float, z: tuple[float, ...], states: list = states, full_dim: int = full_dim) -> None:
            states.append((weight / full_dim, z))

        for spins, weight in _compositions(units):
            _composition_lines(units, spins, J_units, observe,
                               float(weight), solve, emit, tick, slot if linked else None, record,
                               NEGLIGIBLE_INTENSITY / scale)
        if linked:
            held.append((set(component), own, states))

    for cluster, own, _ in held:
        spreads = [sp for other, _, states in held if other is not cluster
                   if (sp := _partner_shifts(cluster, other, states, weak, slot, sites, merge_tol_Hz)) is not None]
        re_solved = [field for field in fields if field.partner is cluster]
        for freq, inten, site, z_i, z_f in own:
            xs, ws = [freq], [inten]
            for field in re_solved:  # a partner re-solved in this cluster's fields: its energy change
                moves = field.spread(z_i, z_f)
                xs = [x + u for x in xs for u, _ in moves]
                ws = [w * p for w in ws for _, p in moves]
            # first order: each eigenstate of another cluster shifts this line by Σ_a d_a g_a; when
            # those shifts span at most merge_tol_Hz they are one line at their weighted mean
            d = tuple(y - x for x, y in zip(z_i, z_f))
            for columns, means, spans, weights in spreads:
                if sum(abs(d[a]) * width for a, width in spans) <= merge_tol_Hz:
                    centre = sum(d[a] * g_a for a, g_a in means)
                    xs = [x + centre for x in xs]
                    continue
                shift = [0.0] * len(weights)
                for a, column in columns:
                    da = d[a]
                    shift = [u + da * g for u, g in zip(shift, column)]
                xs = [x + u for x in xs for u in shift]
                ws = [w * p for w in ws for p in weights]
            raw.extend([(x, w, site) for x, w in zip(xs, ws) if w >= NEGLIGIBLE_INTENSITY])  # as emit() drops

    if progress is not None:
        progress(1.0)
    lines = _merge(raw, merge_tol_Hz)
    strongest = max((i for _, i, _ in lines), default=0.0)
    return [(f, i, site() if isinstance(site, _Owner) else site) for f, i, site in lines
            if i > 0.0 and i >= min_rel_intensity * strongest]


# ------------------------------------------------------------ diagnostics

def first_order_checks(sites: Any, couplings: Any, threshold: float = 10.0,
                       spectrometer_1H_MHz: float | None = None) -> list[dict]:
    """Δν/|J| for every coupled pair of like-nuclide sites with J ≠ 0.

    First order is taken as Δν/|J| >= ``threshold`` (10 by default, a rule of
    thumb: common practice, e.g. Pople, Schneider & Bernstein 1959 treat the
    AX limit as Δν ≫ J).  Δν (Hz) scales linearly with the field and J does not,
    so ``threshold_scale`` = threshold / (Δν/|J|) is the factor on the field
    (or on the 1H spectrometer frequency) at which the pair reaches the
    threshold; None when Δν = 0 (no field separates them).  With
    ``spectrometer_1H_MHz`` given, ``threshold_1H_MHz`` is that frequency.
    Each dict: pair (i, j), nucleus, delta_nu_Hz, J_Hz, delta_nu_over_J,
    first_order, same_shift, threshold_scale (and threshold_1H_MHz).
    """
    sites = _checked_sites(sites)
    J = _checked_couplings(couplings, len(sites))
    threshold = _checked_real(threshold, "threshold")
    if threshold <= 0:
        raise InputError("threshold must be > 0", field="threshold")
    if spectrometer_1H_MHz is not None:
        spectrometer_1H_MHz = _checked_real(spectrometer_1H_MHz, "spectrometer_1H_MHz")
        if spectrometer_1H_MHz <= 0:
            raise InputError("spectrometer_1H_MHz must be > 0", field="spectrometer_1H_MHz")
    out = []
    for (i, j), J_Hz in sorted(J.items()):
        if sites[i].nucleus != sites[j].nucleus:
            continue
        delta = abs(sites[i].offset_Hz - sites[j].offset_Hz)
        ratio = delta / abs(J_Hz)
        scale = threshold / ratio if ratio > 0 else None
        entry = {
            "pair": (i, j), "nucleus": sites[i].nucleus, "delta_nu_Hz": delta, "J_Hz": J_Hz,
            "delta_nu_over_J": ratio, "first_order": ratio >= threshold,
            "same_shift": delta == 0.0, "threshold_scale": scale,
        }
        if spectrometer_1H_MHz is not None:
            entry["threshold_1H_MHz"] = None if scale is None else scale * spectrometer_1H_MHz
        out.append(entry)
    return out


def equivalence_caveats(sites: Any, couplings: Any, shift_tol_Hz: float = 1e-6, J_tol_Hz: float = 1e-6,
                        labels: list[str] | None = None) -> list[str]:
    """Warn about chemically equivalent but magnetically inequivalent site pairs.

    Two sites of one nucleus at the same shift (within ``shift_tol_Hz``) whose
    couplings to some third site differ (by more than ``J_tol_Hz``) form an
    AA′XX′-type system: its spectrum is second order at every field, because the
    A/A′ shift difference that would have to exceed J is zero (Pople, Schneider &
    Bernstein 1959, ch. 6, AA′BB′ / AA′XX′ systems).  ``labels`` names the sites
    in the messages (default "site 1", "site 2", … counted from 1).
    """
    sites = _checked_sites(sites)
    J = _checked_couplings(couplings, len(sites))
    shift_tol_Hz = _checked_real(shift_tol_Hz, "shift_tol_Hz")
    J_tol_Hz = _checked_real(J_tol_Hz, "J_tol_Hz")

    def coupling(a: int, b: int) -> float:
        return J.get((min(a, b), max(a, b)), 0.0)

    names = labels if labels is not None else [f"site {k + 1}" for k in range(len(sites))]

    out = []
    for i, j in itertools.combinations(range(len(sites)), 2):
        si, sj = sites[i], sites[j]
        if si.nucleus != sj.nucleus or abs(si.offset_Hz - sj.offset_Hz) > shift_tol_Hz:
            continue
        diffs = [
            f"{names[k]}: {coupling(i, k):g} Hz vs {coupling(j, k):g} Hz"
            for k in range(len(sites))
            if k not in (i, j) and abs(coupling(i, k) - coupling(j, k)) > J_tol_Hz
        ]
        if diffs:
            out.append(
                f"{names[i]} and {names[j]} ({si.nucleus}, same shift) couple differently to "
                + "; ".join(diffs)
                + ": magnetically inequivalent (AA′XX′-type): never first order"
            )
    return out
