"""Pure-Python symmetric eigensolver against numpy.linalg.eigh (the reference library)."""

import numpy
import pytest

from nmrcalc.errors import InputError
from nmrcalc.physics.eigen import eigh


def _check_decomposition(A, values, vectors):
    """Residual ‖A v − λ v‖ and orthonormality, in units of ‖A‖."""
    V = numpy.array(vectors)
    scale = max(1.0, numpy.abs(A).max())
    assert numpy.abs(A @ V.T - V.T * numpy.array(values)).max() < 1e-11 * scale * len(A)
    assert numpy.abs(V @ V.T - numpy.eye(len(A))).max() < 1e-12 * len(A)


@pytest.mark.parametrize("n", [1, 2, 3, 4, 7, 16, 33, 70])
def test_random_symmetric_matches_numpy(n):
    rng = numpy.random.default_rng(1000 + n)
    A = rng.normal(size=(n, n)) * 50.0
    A = A + A.T
    values, vectors = eigh(A.tolist())
    ref_values, ref_vectors = numpy.linalg.eigh(A)  # reference: numpy.linalg.eigh
    assert numpy.allclose(values, ref_values, rtol=0, atol=1e-10 * numpy.abs(A).max() * n)
    _check_decomposition(A, values, vectors)
    # eigenvectors agree up to sign (random spectra have no degeneracies)
    overlaps = numpy.abs(numpy.sum(numpy.array(vectors).T * ref_vectors, axis=0))
    assert numpy.allclose(overlaps, 1.0, atol=1e-8)


def test_returns_plain_lists_sorted_ascending():
    values, vectors = eigh([[2.0, 1.0], [1.0, 2.0]])
    assert type(values) is list and all(type(x) is float for x in values)
    assert type(vectors) is list and all(type(v) is list for v in vectors)
    # eigenvalues of [[2,1],[1,2]] are 1 and 3 (hand calculation: the characteristic polynomial λ² − 4λ + 3 = 0)
    assert values == pytest.approx([1.0, 3.0], abs=1e-15)


def test_degenerate_spectrum():
    rng = numpy.random.default_rng(7)
    Q, _ = numpy.linalg.qr(rng.normal(size=(9, 9)))
    lam = numpy.array([-3.0, -3.0, -3.0, 0.0, 0.0, 1.5, 4.0, 4.0, 4.0])
    A = Q @ numpy.diag(lam) @ Q.T
    A = 0.5 * (A + A.T)
    values, vectors = eigh(A.tolist())
    assert numpy.allclose(values, numpy.linalg.eigvalsh(A), atol=1e-12)  # reference: numpy.linalg.eigvalsh
    _check_decomposition(A, values, vectors)


def test_diagonal_tridiagonal_zero_and_empty():
    assert eigh([]) == ([], [])
    assert eigh([[0.0, 0.0], [0.0, 0.0]])[0] == [0.0, 0.0]
    values, vectors = eigh([[3.0, 0, 0], [0, 1.0, 0], [0, 0, 2.0]])
    assert values == [1.0, 2.0, 3.0]
    assert vectors == [[0.0, 1.0, 0.0], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0]]
    T = numpy.diag(numpy.full(12, 2.0)) + numpy.diag(numpy.full(11, -1.0), 1) + numpy.diag(numpy.full(11, -1.0), -1)
    values, vectors = eigh(T.tolist())
    assert numpy.allclose(values, numpy.linalg.eigvalsh(T), atol=1e-13)  # reference: numpy.linalg.eigvalsh
    _check_decomposition(T, values, vectors)


@pytest.mark.parametrize("bad", [
    [[1.0, 2.0]],
    [[1.0, 2.0], [3.0, 1.0]],
    [[1.0, float("nan")], [float("nan"), 1.0]],
    [[1.0, "x"], ["x", 1.0]],
    [1.0, 2.0],
])
def test_bad_matrix_raises_input_error(bad):
    with pytest.raises(InputError) as info:
        eigh(bad)
    assert info.value.field == "matrix"


@pytest.mark.parametrize("n", [24, 40])
def test_sparse_and_split_matrices_take_the_krylov_route(n):
    # rows with no, one and several off-diagonal entries, uncoupled parts and a repeated
    # eigenvalue: the Lanczos route must restart, split and still match the reference
    rng = numpy.random.default_rng(n)
    A = numpy.diag(rng.normal(size=n) * 100.0)
    for i in range(0, n - 6, 3):
        A[i, i + 2] = A[i + 2, i] = rng.normal() * 5.0
    A[n - 1, n - 1] = A[n - 2, n - 2]  # two uncoupled rows with the same diagonal entry
    from nmrcalc.physics.eigen import KRYLOV_MIN, _checked_copy, _krylov_eigh
    assert n >= KRYLOV_MIN
    found = _krylov_eigh(_checked_copy(A.tolist()))
    assert found is not None  # the checked fast route was accepted, not the fallback
    values, vectors = found
    # reference: numpy.linalg.eigvalsh
    assert numpy.allclose(values, numpy.linalg.eigvalsh(A), rtol=0, atol=1e-11 * numpy.abs(A).max() * n)
    _check_decomposition(A, values, vectors)


def test_sparse_rows_apply_like_a_dense_product():
    # rows with 0, 1, 2 and many non-zero entries (the getters pad fewer than two); reference numpy
    from nmrcalc.physics.lanczos import multiplier, row_applier, sparse_part

    rng = numpy.random.default_rng(7)
    n = 30
    A = numpy.zeros((n, n))
    for i in range(n):
        cols = rng.choice(n, size=[0, 1, 2, 5, 25][i % 5], replace=False)
        A[i, cols] = rng.normal(size=len(cols))
    x = rng.normal(size=n)
    assert numpy.allclose(multiplier(A.tolist())(x.tolist()), A @ x, rtol=0, atol=1e-13)
    rows = [sparse_part(A[i, A[i] != 0].tolist(), numpy.flatnonzero(A[i]).tolist()) for i in range(n)]
    assert numpy.allclose(row_applier(rows)(x.tolist()), A @ x, rtol=0, atol=1e-13)


@pytest.mark.parametrize("n, spread, inverse_iteration", [(60, 1e-2, False), (130, 1e-2, False),
                                                         (60, 1e-9, True), (130, 1e-9, True)])
def test_close_eigenvalue_clusters_stay_orthogonal_on_the_krylov_route(n, spread, inverse_iteration, monkeypatch):
    # most eigenvalues evenly spread over 1000 ± spread: twisted vectors are orthonormalized per cluster, and
    # clusters closer than tridiagonal._CLOSE (relative to the norm) take inverse iteration
    # (tridiagonal.eigenpairs); reference numpy.linalg.eigvalsh
    from nmrcalc.physics import tridiagonal
    from nmrcalc.physics.eigen import _checked_copy, _krylov_eigh

    calls = []
    iterate = tridiagonal._inverse_iteration
    monkeypatch.setattr(tridiagonal, "_inverse_iteration", lambda *args: calls.append(1) or iterate(*args))
    rng = numpy.random.default_rng(n)
    Q, _ = numpy.linalg.qr(rng.normal(size=(n, n)))
    lam = numpy.concatenate([1000.0 + spread * numpy.linspace(-1.0, 1.0, n - 10), rng.normal(size=10) * 800.0])
    A = Q @ numpy.diag(lam) @ Q.T
    A = 0.5 * (A + A.T)
    found = _krylov_eigh(_checked_copy(A.tolist()))
    assert found is not None  # the checked fast route was accepted, not the fallback
    assert bool(calls) == inverse_iteration
    values, vectors = found
    assert numpy.allclose(values, numpy.linalg.eigvalsh(A), rtol=0, atol=1e-11 * numpy.abs(A).max() * n)
    _check_decomposition(A, values, vectors)


def test_twisted_vectors_of_a_tridiagonal_matrix_match_numpy():
    # a random unreduced tridiagonal matrix; reference numpy.linalg.eigh
    import random

    from nmrcalc.physics.tridiagonal import eigenpairs

    rng = numpy.random.default_rng(5)
    d, e = rng.normal(size=80) * 100.0, rng.uniform(1.0, 30.0, size=79)
    T = numpy.diag(d) + numpy.diag(e, 1) + numpy.diag(e, -1)
    found = eigenpairs(d.tolist(), e.tolist() + [0.0], random.Random(1))
    assert found is not None
    values, vectors = found
    ref_values, ref_vectors = numpy.linalg.eigh(T)
    assert numpy.allclose(values, ref_values, rtol=0, atol=1e-12 * numpy.abs(T).max() * 80)
    _check_decomposition(T, values, vectors)
    assert numpy.allclose(numpy.abs(numpy.array(vectors) @ ref_vectors).max(axis=1), 1.0, atol=1e-10)
    assert all(max(v) >= -min(v) for v in vectors)  # each vector's largest entry is positive


@pytest.mark.parametrize("size, terms, scale", [(1, 1, 1.0), (7, 3, 2.5), (252, 252, 1.0), (40, 300, 1e-6)])
def test_packed_combinations_match_a_dense_product(size, terms, scale):
    # Σ_j w_j x_j by big-integer fields (packed) against numpy's matrix product (reference: numpy)
    from nmrcalc.physics.packed import combine, pack

    rng = numpy.random.default_rng(size + terms)
    X = rng.uniform(-scale, scale, size=(terms, size))
    X[0, 0], X[-1, -1] = scale, -scale  # the ends of the stated range (|x| <= scale) are valid inputs
    w = rng.normal(size=terms) * 1e-7
    got = combine([pack(x.tolist(), scale) for x in X], size, w.tolist(), scale)
    assert type(got) is list and len(got) == size
    # error bound of the fixed-point fields (packed docstring): 2⁻⁴⁹ per term and 2⁻⁵³ for the result
    bound = (terms * 2.0 ** -49 + 2.0 ** -53) * numpy.abs(w).max() * scale
    assert numpy.abs(numpy.array(got) - w @ X).max() <= bound
    assert combine([pack(x.tolist(), scale) for x in X], size, [0.0] * terms, scale) == [0.0] * size


def test_krylov_route_refuses_an_inexact_eigenvector(monkeypatch):
    # the random-probe check (eigen docstring) must catch one eigenvector of the tridiagonal
    # matrix perturbed by 1e-9, so that eigh falls back to the other method
    import nmrcalc.physics.eigen as eigen

    rng = numpy.random.default_rng(5)
    A = rng.normal(size=(40, 40))
    A = (A + A.T).tolist()
    assert eigen._krylov_eigh(eigen._checked_copy(A)) is not None
    exact = eigen.eigenpairs

    def perturbed(alpha, beta, r):
        values, vectors = exact(alpha, beta, r)
        vectors = [list(v) for v in vectors]
        vectors[7][3] += 1e-9
        return values, vectors
    monkeypatch.setattr(eigen, "eigenpairs", perturbed)
    assert eigen._krylov_eigh(eigen._checked_copy(A)) is None
    values, vectors = eigen.eigh(A)  # the fallback still gives the decomposition
    _check_decomposition(numpy.array(A), values, vectors)
