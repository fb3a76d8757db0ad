"""Pure-Python eigensolver for real symmetric matrices (lists of floats, no numpy).

Two methods, one answer:

* small or dense matrices: Householder reduction to tridiagonal form followed by the
  implicit QL algorithm with the transforms accumulated, so that eigenvectors come out
  with the eigenvalues (J. H. Wilkinson, *The Algebraic Eigenvalue Problem* (1965),
  ch. 5 and 8; Bowdler, Martin, Reinsch & Wilkinson, Numer. Math. 11, 293-306 (1968);
  G. H. Golub, C. F. Van Loan, *Matrix Computations*, sec. 8.3).  For A = Q T Qᵀ and
  T = Z Λ Zᵀ the eigenvectors of A are the columns of Q Z.  O(n³) work in list
  comprehensions.
* from ``KRYLOV_MIN`` rows on (to ``packed.MAX_TERMS``): Lanczos tridiagonalization with full reorthogonalization
  (``lanczos``), eigenvalues of T by QL without vectors and its eigenvectors by inverse
  iteration (``tridiagonal.eigenpairs``), then y ↦ Q y.  The O(n³) work is big-integer
  linear combinations of whole vectors (``packed``), done in C.
  The result is accepted only after it is checked with three random probe vectors u
  (R. Freivalds, "Fast probabilistic algorithms", MFCS 1979, LNCS 74, 57-69): the
  residual ‖(A Z − Z Λ) u‖ must stay within ``_TOL`` · n · max|A| · √n ‖u‖ and the
  orthogonality ‖(ZᵀZ − I) u‖ within ``_TOL`` · n · √n (Z: the eigenvectors as columns);
  a vector with a larger residual escapes a probe only when its entry of u is tiny.
  Otherwise (or when an inverse iteration does not converge) the first way is used.
  A shift by the mean diagonal entry keeps T well scaled.

Public function: ``eigh(matrix) -> (values, vectors)`` with ``values`` ascending
and ``vectors[k]`` the unit eigenvector (a list) belonging to ``values[k]``.
Note the orientation: eigenvectors are *rows* of ``vectors`` (numpy.linalg.eigh
returns them as columns).
"""

import math
import random
from itertools import repeat
from operator import mul

from nmrcalc.errors import InputError
from nmrcalc.physics.lanczos import dot, multiplier, tridiagonalize
from nmrcalc.physics.numeric import all_finite
from nmrcalc.physics.packed import MAX_TERMS, combine
from nmrcalc.physics.tridiagonal import eigenpairs, implicit_ql

KRYLOV_MIN = 24  # rows from which the Lanczos route is tried
_TOL = 1e-13  # accepted residual and loss of orthogonality, times n · max|A|
_SEED = 20261202  # start vectors: the same matrix always gives the same vectors


def eigh(matrix: list[list[float]]) -> tuple[list[float], list[list[float]]]:
    """Eigenvalues (ascending) and unit eigenvectors of a real symmetric matrix.

    ``matrix`` is a square list of rows of real numbers; it must be symmetric to
    within 1e-9 of its largest entry (its symmetric part is used).  Returns
    ``(values, vectors)`` where ``vectors[k]`` is the eigenvector of ``values[k]``.
    """
    a = _checked_copy(matrix)
    n = len(a)
    if n == 0:
        return [], []
    if KRYLOV_MIN <= n <= MAX_TERMS:  # its big-integer combinations take at most MAX_TERMS vectors
        found = _krylov_eigh(a)
        if found is not None:
            return found
    d, e, z = _householder_tridiagonal(a)
    implicit_ql(d, e, z)
    order = sorted(range(n), key=d.__getitem__)
    return [d[k] for k in order], [z[k] for k in order]


def _krylov_eigh(a: list[list[float]]) -> tuple[list[float], list[list[float]]] | None:
    """The Lanczos route, checked; None when a check fails.  ``a`` is left unchanged."""
    n = len(a)
    size = max(max(max(row), -min(row)) for row in a)
    if size == 0.0:
        return None
    shift = sum(a[i][i] for i in range(n)) / n
    rows = [list(row) for row in a]
    for i in range(n):
        rows[i][i] -= shift
    rng = random.Random(_SEED)
    alpha, beta, basis = tridiagonalize(rows, rng)
    pairs = eigenpairs(alpha, beta, rng)
    if pairs is None:
        return None
    times = multiplier(rows)
    values, ys = pairs
    vectors = [combine(basis, n, y) for y in ys]
    by_entry = list(zip(*vectors))
    for _ in range(3):  # random probes u: ‖(A Z − Z Λ) u‖ and ‖(Zᵀ Z − I) u‖ (Z: eigenvectors as columns)
        u = [rng.gauss(0.0, 1.0) for _ in range(n)]
        bound = math.sqrt(dot(u, u) * n)
        moved = times([dot(entry, u) for entry in by_entry])
        scaled = list(map(mul, values, u))
        if math.sqrt(sum((x - dot(entry, scaled)) ** 2 for x, entry in zip(moved, by_entry))) > _TOL * n * size * bound:
            return None
        s = list(map(dot, vectors, repeat(u)))
        if math.sqrt(sum((dot(s, c) - x) ** 2 for c, x in zip(by_entry, u))) > _TOL * n * math.sqrt(n):
            return None
    values = [lam + shift for lam in values]
    order = sorted(range(n), key=values.__getitem__)
    return [values[k] for k in order], [vectors[k] for k in order]


def _checked_copy(matrix: list[list[float]]) -> list[list[float]]:
    """Validate squareness, finiteness and symmetry; return the symmetric part as floats."""
    try:
        rows = [[float(x) for x in row] for row in matrix]
    except (TypeError, ValueError) as exc:
        raise InputError(f"matrix must be a list of rows of numbers ({exc})", field="matrix") from None
    n = len(rows)
    if any(len(row) != n for row in rows):
        raise InputError("matrix must be square", field="matrix")
    if not all(all_finite(row) for row in rows):
        raise InputError("matrix entries must be finite", field="matrix")
    scale = max((max(max(row), -min(row)) for row in rows if row), default=0.0)
    columns = list(zip(*rows))
    for i, (row, column) in enumerate(zip(rows, columns)):
        gaps = [a - b for a, b in zip(row, column)]
        if gaps and (max(gaps) > 1e-9 * scale or -min(gaps) > 1e-9 * scale):
            j = next(j for j, gap in enumerate(gaps) if abs(gap) > 1e-9 * scale)
            raise InputError(f"matrix is not symmetric at ({max(i, j)}, {min(i, j)})", field="matrix")
    # the symmetric part, (A + Aᵀ)/2 entry by entry
    return [[(a + b) * 0.5 for a, b in zip(row, column)] for row, column in zip(rows, columns)]


def _householder_tridiagonal(a: list[list[float]]) -> tuple[list[float], list[float], list[list[float]]]:
    """Reduce symmetric ``a`` (modified in place) to tridiagonal form.

    Step k reflects rows/columns k+1..n-1 with H = I - β v vᵀ (β = 2 / vᵀv) so
    that column k below the subdiagonal vanishes; the symmetric update is
    A ← A - v qᵀ - q vᵀ with p = β A v, q = p - (β vᵀp / 2) v (Golub & Van Loan,
    sec. 8.3.1).  Returns diagonal ``d``, off-diagonal ``e`` (``e[k]`` couples k
    and k+1, ``e[n-1] = 0``) and ``z`` = rows of Qᵀ, i.e. ``z[j]`` is column j of
    Q = H_0 H_1 ... H_{n-3}.
    """
    n = len(a)
    d = [0.0] * n
    e = [0.0] * n
    z = [[1.0 if i == j else 0.0 for j in range(n)] for i in range(n)]
    for k in range(n - 2):
        d[k] = a[k][k]
        lo = k + 1
        x = [a[i][k] for i in range(lo, n)]
        tail = sum(t * t for t in x[1:])
        if tail == 0.0:
            e[k] = x[0]
            continue
        norm = math.sqrt(x[0] * x[0] + tail)
        alpha = -math.copysign(norm, x[0])
        v = x
        v[0] -= alpha
        beta = 2.0 / (v[0] * v[0] + tail)
        e[k] = alpha
        sub_rows = a[lo:]
        p = [beta * sum(map(mul, row[lo:], v)) for row in sub_rows]
        half_k = 0.5 * beta * sum(map(mul, v, p))
        q = [pi - half_k * vi for pi, vi in zip(p, v)]
        for row, vi, qi in zip(sub_rows, v, q):
            row[lo:] = [r - vi * qj - qi * vj for r, qj, vj in zip(row[lo:], q, v)]
        z_rows = z[lo:]
        w = [0.0] * n
        for vi, zr in zip(v, z_rows):
            if vi != 0.0:
                w = [wj + vi * zj for wj, zj in zip(w, zr)]
        for idx, vi in enumerate(v):
            if vi != 0.0:
                c = beta * vi
                z[lo + idx] = [zj - c * wj for zj, wj in zip(z[lo + idx], w)]
    if n >= 2:
        d[n - 2] = a[n - 2][n - 2]
        e[n - 2] = a[n - 1][n - 2]
    d[n - 1] = a[n - 1][n - 1]
    return d, e, z
