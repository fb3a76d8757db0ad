"""Pure-Python eigensolver for real symmetric matrices (lists of floats, no numpy).

Method: Householder reduction to tridiagonal form followed by the implicit QL
algorithm with Wilkinson-type shifts, accumulating the orthogonal transforms so
that eigenvectors come out together with eigenvalues.  Sources: J. H. Wilkinson,
*The Algebraic Eigenvalue Problem* (1965), ch. 5 and 8; H. Bowdler, R. S. Martin,
C. Reinsch, J. H. Wilkinson, "The QR and QL algorithms for symmetric matrices",
Numer. Math. 11, 293-306 (1968); G. H. Golub, C. F. Van Loan, *Matrix
Computations*, sec. 8.3.

For A symmetric, A = Q T Qᵀ with T tridiagonal (Householder), and T = Z Λ Zᵀ
(QL rotations); the eigenvectors of A are the columns of Q Z.  The work is
O(n³) and each inner loop is a list comprehension over a whole row, which is
what keeps it usable in CPython and in Pyodide.

Public function: ``eigh(matrix) -> (values, vectors)`` with ``values`` ascending
and ``vectors[k]`` the unit eigenvector (a list) belonging to ``values[k]``.
Note the orientation: eigenvectors are *rows* of ``vectors`` (numpy.linalg.eigh
returns them as columns).
"""

import math
from operator import mul

from nmrcalc.errors import InputError

_EPS = 2.220446049250313e-16  # IEEE-754 double machine epsilon
_MAX_QL_ITERATIONS = 60  # per eigenvalue; 2-3 are typical


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
    d, e, z = _householder_tridiagonal(a)
    _implicit_ql(d, e, z)
    order = sorted(range(n), key=d.__getitem__)
    return [d[k] for k in order], [z[k] for k in order]


def _checked_copy(matrix: list[list[float]]) -> list[list[float]]:
    """Validate squareness, finiteness and symmetry; return the symmetric part as floats."""
    try:
        rows = [[float(x) for x in row] for row in matrix]
    except (TypeError, ValueError) as exc:
        raise InputError(f"matrix must be a list of rows of numbers ({exc})", field="matrix") from None
    n = len(rows)
    if any(len(row) != n for row in rows):
        raise InputError("matrix must be square", field="matrix")
    if not all(math.isfinite(x) for row in rows for x in row):
        raise InputError("matrix entries must be finite", field="matrix")
    scale = max((abs(x) for row in rows for x in row), default=0.0)
    for i in range(n):
        for j in range(i):
            if abs(rows[i][j] - rows[j][i]) > 1e-9 * scale:
                raise InputError(f"matrix is not symmetric at ({i}, {j})", field="matrix")
            mean = 0.5 * (rows[i][j] + rows[j][i])
            rows[i][j] = rows[j][i] = mean
    return rows


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


def _implicit_ql(d: list[float], e: list[float], z: list[list[float]]) -> None:
    """Diagonalize the tridiagonal (d, e) in place, rotating the rows of ``z`` alongside.

    Implicit QL sweeps with a shift from the leading 2×2 block (Bowdler et al.
    1968); a subdiagonal element is treated as zero once it is below machine
    epsilon relative to its two diagonal neighbours, which splits the matrix.
    """
    n = len(d)
    for l in range(n):
        iterations = 0
        while True:
            m = l
            while m < n - 1 and abs(e[m]) > _EPS * (abs(d[m]) + abs(d[m + 1])):
                m += 1
            if m == l:
                break
            iterations += 1
            if iterations > _MAX_QL_ITERATIONS:
                raise ArithmeticError("implicit QL did not converge")
            g = (d[l + 1] - d[l]) / (2.0 * e[l])
            r = math.hypot(g, 1.0)
            g = d[m] - d[l] + e[l] / (g + math.copysign(r, g))
            s = c = 1.0
            p = 0.0
            deflated = False
            for i in range(m - 1, l - 1, -1):
                f = s * e[i]
                b = c * e[i]
                r = math.hypot(f, g)
                e[i + 1] = r
                if r == 0.0:
                    d[i + 1] -= p
                    e[m] = 0.0
                    deflated = True
                    break
                s = f / r
                c = g / r
                g = d[i + 1] - p
                r = (d[i] - g) * s + 2.0 * c * b
                p = s * r
                d[i + 1] = g + p
                g = c * r - b
                zi, zi1 = z[i], z[i + 1]
                z[i + 1] = [s * u + c * t for u, t in zip(zi, zi1)]
                z[i] = [c * u - s * t for u, t in zip(zi, zi1)]
            if deflated:
                continue
            d[l] -= p
            e[l] = g
            e[m] = 0.0
