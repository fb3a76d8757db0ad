"""Clusters joined by weak links (first order between them) against a dense numpy reference.

The reference builds the full Hamiltonian of every nucleus (no factoring, no blocks, no
clusters) from Kronecker products of the spin-½ matrices and diagonalizes it with
numpy.linalg.eigh: H = Σ ν_k I_zk + Σ J_kl I_k·I_l (PSB 1959 = Pople, Schneider &
Bernstein, High-resolution NMR, ch. 6); lines |<f|F_x|i>|² with ν = E_f − E_i.
"""

import bisect
import itertools
import math
from fractions import Fraction

import numpy
import pytest

from nmrcalc.physics import spin_system
from nmrcalc.physics.spin_system import Site, clusters, transitions

HALF = Fraction(1, 2)
SX = numpy.array([[0, 0.5], [0.5, 0]])
SY = numpy.array([[0, -0.5j], [0.5j, 0]])
SZ = numpy.array([[0.5, 0], [0, -0.5]])


def dense_solution(offsets, couplings):
    """(E, V, X, Y, Z) of n spins-½ (one nuclide): eigenpairs (numpy.linalg.eigh) and the spin matrices."""
    n = len(offsets)

    def op(single, k):
        out = numpy.array([[1.0]])
        for m in range(n):
            out = numpy.kron(out, single if m == k else numpy.eye(2))
        return out

    X, Y, Z = ([op(s, k) for k in range(n)] for s in (SX, SY, SZ))
    H = sum(nu * Z[k] for k, nu in enumerate(offsets))
    for i, j, J in couplings:
        H = H + J * (X[i] @ X[j] + Y[i] @ Y[j] + Z[i] @ Z[j])
    E, V = numpy.linalg.eigh(H)
    return E, V, X, Y, Z


def dense_lines(offsets, couplings, merge_Hz=1e-4):
    """(freq_Hz, intensity) of n spins-½ (one nuclide), intensities summing to 1; numpy.linalg.eigh."""
    E, V, X, Y, _ = dense_solution(offsets, couplings)
    Fplus = sum(X) + 1j * sum(Y)
    A = V.conj().T @ Fplus @ V  # A[f, i] = <f|F_+|i>
    inten = numpy.abs(A) ** 2
    f_idx, i_idx = numpy.nonzero(inten > 1e-12 * inten.max())
    raw = sorted(zip((E[f_idx] - E[i_idx]).tolist(), inten[f_idx, i_idx].tolist()))
    total = sum(w for _, w in raw)
    merged = []
    for x, w in raw:
        if merged and x - merged[-1][0] <= merge_Hz:
            m = merged[-1]
            m[0], m[1] = (m[0] * m[1] + x * w) / (m[1] + w), m[1] + w
        else:
            merged.append([x, w])
    return [(x, w / total) for x, w in merged]


def aryl_ethyl(proton_MHz, benzylic_J):
    """A made-up 4-ethylphenyl fragment: AA′BB′ ring (7.10/7.00 ppm) + CH2 (2.60) + CH3 (1.20)."""
    ppm = [7.10, 7.10, 7.00, 7.00, 2.60, 1.20]
    counts = [1, 1, 1, 1, 2, 3]
    J = [(0, 2, 8.2), (1, 3, 8.2), (0, 3, 0.4), (1, 2, 0.4), (0, 1, 2.1), (2, 3, 2.6),
         (4, 5, 7.6), (0, 4, benzylic_J), (1, 4, benzylic_J)]
    sites = [Site("1H", HALF, p * proton_MHz, c) for p, c in zip(ppm, counts)]
    spins = [k for k, c in enumerate(counts) for _ in range(c)]  # nucleus → site
    expanded = [(a, b, Jab) for i, j, Jab in J for a, b in itertools.product(range(9), repeat=2)
                if spins[a] == i and spins[b] == j]
    return sites, J, [sites[s].offset_Hz for s in spins], expanded


def group_sums(a, b, gap):
    """Intensity of a and of b in each run of positions (of both lists) with no gap wider than ``gap``."""
    marked = sorted([(x, w, 0) for x, w in a] + [(x, w, 1) for x, w in b])
    sums, last = [], None
    for x, w, which in marked:
        if last is None or x - last > gap:
            sums.append([0.0, 0.0])
        sums[-1][which] += w
        last = x
    return sums


@pytest.mark.parametrize("proton_MHz, benzylic_J, tol", [(400.0, 0.6, 0.01), (60.0, 0.6, 0.01), (60.0, 2.0, 0.5)])
def test_weak_link_against_dense_reference(proton_MHz, benzylic_J, tol, monkeypatch):
    sites, J, offsets, expanded = aryl_ethyl(proton_MHz, benzylic_J)
    # the joined 9 nuclei (384 states after factoring) are made too large so that the links stay split even
    # where their second-order mixing bound exceeds the tolerance (at 60 MHz)
    monkeypatch.setattr(spin_system, "MAX_TOTAL_DIM", 64)
    found = clusters(sites, J, "1H", weak_link_tol_Hz=tol)
    assert [(c["spins"], c["method"]) for c in found] == [([0, 1, 2, 3], "weak-link"), ([4, 5], "weak-link")]
    # stated bound (clusters docstring): 2 (Σ_links |J| c_i c_j)² / |Δν|, c = 1 for one H and 3/2 for CH2,
    # i.e. it scales as (J/Δν)·J; here Δν = 4.5 ppm × field
    dnu = 4.5 * proton_MHz
    assert all(math.isclose(c["flip_flop_Hz"], 2 * (2 * benzylic_J * 1.5) ** 2 / dnu) for c in found)
    # error_Hz adds the second-order mixing bound of the links' I_z I_z part (clusters docstring)
    assert all(c["error_Hz"] == c["flip_flop_Hz"] + c["mixing_Hz"] for c in found)
    bound = max(c["error_Hz"] for c in found)
    approx = [(x, w) for x, w, _ in transitions(sites, J, "1H", weak_link_tol_Hz=tol, merge_tol_Hz=1e-4,
                                                min_rel_intensity=0)]
    monkeypatch.setattr(spin_system, "MAX_TOTAL_DIM", 4096)
    exact = dense_lines(offsets, expanded)  # numpy.linalg.eigh of the full 512 × 512 Hamiltonian
    assert math.isclose(sum(w for _, w in approx), 1.0, rel_tol=1e-9)
    intensity_bound = 2 * benzylic_J / dnu  # Σ |J|/|Δν| over the links: first-order mixing of the states
    for x, w in approx:
        if w >= 1e-4:
            assert min(abs(x - y) for y, _ in exact) <= bound + 2e-4, x  # 2e-4: the merge tolerances
    for ours, ref in group_sums(approx, exact, 2 * bound + 2e-4):
        assert abs(ours - ref) <= intensity_bound + 1e-9


def test_weak_links_are_not_used_when_exact():
    sites, J, offsets, expanded = aryl_ethyl(400.0, 0.6)
    assert [c["method"] for c in clusters(sites, J, "1H")] == ["exact"]  # no tolerance: one exact cluster
    exact = [(x, w) for x, w, _ in transitions(sites, J, "1H", merge_tol_Hz=1e-4)]
    reference = dense_lines(offsets, expanded)  # numpy.linalg.eigh
    strong = [(x, w) for x, w in reference if w > 1e-6]
    ours = [(x, w) for x, w in exact if w > 1e-6]
    assert len(ours) == len(strong)
    assert all(abs(a[0] - b[0]) < 1e-6 and abs(a[1] - b[1]) < 1e-9 for a, b in zip(ours, strong))



def phenyl_ethyl(para_ppm):
    """A made-up ethylbenzene-like fragment, 10 nuclei: ring (ortho, meta, para H as five spins) + CH2 + CH3,
    benzylic 0.6 Hz links to both ortho H, at 400 MHz."""
    ppm = [7.17, 7.17, 7.27, 7.27, para_ppm, 2.64, 1.23]
    counts = [1, 1, 1, 1, 1, 2, 3]
    J = [(0, 2, 7.6), (1, 3, 7.6), (2, 4, 7.4), (3, 4, 7.4), (0, 4, 1.2), (1, 4, 1.2), (0, 1, 1.8), (2, 3, 1.4),
         (0, 3, 0.6), (1, 2, 0.6), (5, 6, 7.6), (0, 5, 0.6), (1, 5, 0.6)]
    return [Site("1H", HALF, p * 400.0, c) for p, c in zip(ppm, counts)], J


def worst_offsets(sites, J, approx, found):
    """Per cluster: (its error_Hz, the largest distance of one of its lines from the exact engine's lines)."""
    exact = sorted(x for x, _, _ in transitions(sites, J, "1H", merge_tol_Hz=1e-4, min_rel_intensity=0))

    def off(x):
        k = bisect.bisect(exact, x)
        return min(abs(x - exact[j]) for j in (k - 1, k) if 0 <= j < len(exact))

    strongest = max(w for _, w, _ in approx)
    return [(c["error_Hz"], max(off(x) for x, w, s in approx if w >= 1e-4 * strongest and s in c["spins"]))
            for c in found]


@pytest.mark.parametrize("para_ppm, methods", [(7.23, [("weak-link", False), ("weak-link", False)]),
                                                (7.16, [("exact", False)])])
def test_phenyl_ethyl_weak_links_within_a_hundredth_of_a_hertz(para_ppm, methods):
    # the issue-14 target: lines within 0.01 Hz of the exact answer.  At 7.16 ppm the para H is 4 Hz from the
    # ortho H (J 1.2 Hz): the links' I_z I_z part mixes the ring's nearly degenerate levels (0.13 Hz off in first
    # order); re-solved in the ethyl's fields the ring's own lines would be within the bound, but the ethyl's
    # bound keeps the ring's mixing (spin_system._joined_split), so the 10 nuclei, which fit, are solved as one
    # exact cluster.  Reference: the exact engine (no weak links), itself checked against numpy.linalg.eigh of
    # the full Hamiltonian in test_weak_links_are_not_used_when_exact (PSB 1959)
    sites, J = phenyl_ethyl(para_ppm)
    found = clusters(sites, J, "1H", weak_link_tol_Hz=0.01)
    assert [(c["method"], c["partner_field"]) for c in found] == methods
    assert max(c["error_Hz"] for c in found) < 0.01
    approx = transitions(sites, J, "1H", weak_link_tol_Hz=0.01, merge_tol_Hz=1e-4, min_rel_intensity=0)
    for error, worst in worst_offsets(sites, J, approx, found):
        assert worst <= max(error, 2e-4) <= 0.01  # 2e-4: the merge tolerances
    exact = transitions(sites, J, "1H", merge_tol_Hz=1e-4, min_rel_intensity=0)
    assert math.isclose(sum(w for _, w, _ in approx), 1.0, rel_tol=1e-9)
    for ours, ref in group_sums([(x, w) for x, w, _ in approx], [(x, w) for x, w, _ in exact], 0.01):
        assert abs(ours - ref) <= 2 * 0.6 / (4.5 * 400) + 1e-9  # Σ |J|/|Δν| over the links, as above


def test_split_kept_when_joined_too_large_states_its_real_error(monkeypatch):
    # the 7.16 fragment plus a made-up formyl H (9.90 ppm) weakly linked to the para H: with two partner
    # clusters the ring is not re-solved in one partner's field, and with a size limit the joined system
    # exceeds it stays split, so error_Hz grows from 0.004 (flip-flop part only) to the mixing bound, which
    # covers the real 0.085 Hz offsets.
    # Reference: the exact engine, checked against numpy.linalg.eigh (test_weak_links_are_not_used_when_exact)
    sites, J = phenyl_ethyl(7.16)
    sites.append(Site("1H", HALF, 9.90 * 400.0))
    J.append((4, 7, 0.5))
    monkeypatch.setattr(spin_system, "MAX_BLOCK_DIM", 10)
    found = clusters(sites, J, "1H", weak_link_tol_Hz=0.01)
    approx = transitions(sites, J, "1H", weak_link_tol_Hz=0.01, merge_tol_Hz=1e-4, min_rel_intensity=0)
    monkeypatch.setattr(spin_system, "MAX_BLOCK_DIM", 252)
    assert [(c["method"], c["partner_field"]) for c in found] == [("weak-link", False)] * 3
    assert found[0]["mixing_Hz"] > 0.01
    offsets = worst_offsets(sites, J, approx, found)
    assert max(worst for _, worst in offsets) > 0.05  # the defect is real: lines 0.085 Hz off
    for error, worst in offsets:
        assert worst <= error


@pytest.mark.parametrize("seed", range(12))
def test_random_weak_links_stay_within_error_Hz(seed, monkeypatch):
    # two random clusters of spins-½ (2-4 each, at most 8 spins), strongly coupled inside, weak links between;
    # the joined system is made too large (MAX_TOTAL_DIM 16) so every link stays split.  Every line must lie
    # within its cluster's error_Hz of a line of the dense reference (numpy.linalg.eigh of the full Hamiltonian)
    rng = numpy.random.default_rng(seed)
    sizes = [int(rng.integers(2, 5)), int(rng.integers(2, 5))]
    centres = [0.0, float(rng.uniform(150.0, 600.0))]
    offsets, J = [], []
    for size, centre in zip(sizes, centres):
        first = len(offsets)
        offsets += [centre + float(x) for x in rng.uniform(-15.0, 15.0, size)]
        J += [(i, j, float(rng.uniform(-12.0, 12.0))) for i in range(first, first + size)
              for j in range(i + 1, first + size) if rng.random() < 0.8]
    J += [(i, j, float(rng.uniform(-1.0, 1.0))) for i in range(sizes[0]) for j in range(sizes[0], len(offsets))
          if rng.random() < 0.5] or [(0, sizes[0], 0.7)]
    sites = [Site("1H", HALF, x) for x in offsets]
    monkeypatch.setattr(spin_system, "MAX_TOTAL_DIM", 16)
    found = clusters(sites, J, "1H", weak_link_tol_Hz=1.0)
    approx = transitions(sites, J, "1H", weak_link_tol_Hz=1.0, merge_tol_Hz=1e-5, min_rel_intensity=0)
    monkeypatch.setattr(spin_system, "MAX_TOTAL_DIM", 4096)
    assert sum(c["method"] == "weak-link" for c in found) >= 2
    exact = sorted(x for x, _ in dense_lines(offsets, J, merge_Hz=1e-5))  # numpy.linalg.eigh
    strongest = max(w for _, w, _ in approx)
    for c in found:
        for x, w, s in approx:
            if s in c["spins"] and w >= 1e-4 * strongest:
                k = bisect.bisect(exact, x)
                off = min(abs(x - exact[j]) for j in (k - 1, k) if 0 <= j < len(exact))
                assert off <= c["error_Hz"] + 2e-5, (x, off, c)


@pytest.mark.parametrize("seed", range(6))
def test_each_line_is_named_after_the_spin_whose_z_changes_most(seed):
    # reference: the dense Hamiltonian (numpy.linalg.eigh); for every line f ← i the spin k with the largest
    # Δ_k = <f|I_zk|f> − <i|I_zk|i> (Σ_k Δ_k = 1 as F_+ raises F_z by one).  With two spins this is also the
    # spin with the larger share |<f|I_+k|i>|² of the amplitude (AB analysis, PSB 1959: sin²θ against cos²θ)
    rng = numpy.random.default_rng(100 + seed)
    n = 2 if seed < 2 else int(rng.integers(3, 6))
    offsets = [float(x) for x in rng.uniform(-25.0, 25.0, n)]
    J = [(i, j, float(rng.uniform(-12.0, 12.0))) for i in range(n) for j in range(i + 1, n)]
    E, V, X, Y, Z = dense_solution(offsets, J)
    z = numpy.stack([numpy.einsum("si,st,ti->i", V, Zk, V) for Zk in Z])  # z[k, state]
    amp = numpy.abs(V.T @ (sum(X) + 1j * sum(Y)) @ V) ** 2
    f_idx, i_idx = numpy.nonzero(amp > 1e-6 * amp.max())
    reference = sorted((float(E[f] - E[i]), float(amp[f, i]), int(numpy.argmax(z[:, f] - z[:, i])),
                        int(numpy.argmax([abs(complex(V[:, f] @ (X[k] + 1j * Y[k]) @ V[:, i])) for k in range(n)])))
                       for f, i in zip(f_idx, i_idx))
    sites = [Site("1H", HALF, x) for x in offsets]
    for use_numpy in (False, True):
        ours = transitions(sites, J, "1H", merge_tol_Hz=1e-7, min_rel_intensity=1e-3, use_numpy=use_numpy)
        assert len(ours) >= 4 * (n - 1)
        for x, _, site in ours:
            x_ref, _, by_z, by_share = min(reference, key=lambda line: abs(line[0] - x))
            assert abs(x - x_ref) < 1e-6
            assert site == by_z
            if n == 2:
                assert site == by_share
