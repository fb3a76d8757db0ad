"""Eigenvalues and eigenvectors of a real symmetric tridiagonal matrix, in pure Python.

The matrix has diagonal ``d`` and off-diagonal ``e`` (``e[k]`` couples k and k+1; the
last entry is unused and left 0).

* ``implicit_ql(d, e, z=None)``: the implicit QL algorithm with the shift of the leading
  2×2 block (H. Bowdler, R. S. Martin, C. Reinsch, J. H. Wilkinson, "The QR and QL
  algorithms for symmetric matrices", Numer. Math. 11, 293-306 (1968)); eigenvalues
  land in ``d``, and the rows of ``z``, when given, are rotated alongside.
* ``eigenpairs(d, e, rng)``: eigenvalues by ``implicit_ql`` without vectors (O(n²)) and
  eigenvectors by inverse iteration, one O(n) tridiagonal solve per step, after the
  method of LAPACK's ``dstein`` (E. Anderson et al., *LAPACK Users' Guide*, 3rd ed.,
  SIAM 1999; J. H. Wilkinson, *The Algebraic Eigenvalue Problem*, 1965, ch. 9):
  the matrix is split where an off-diagonal is negligible; in each unreduced piece
  (T − λI) x = b is solved by Gaussian elimination with partial pivoting, tiny pivots
  replaced by ε‖T‖₁; an iterate is accepted after its ∞-norm has reached √(0.1/m) for
  two steps (at most five; dstein takes three, but with eigenvalues from the QL algorithm
  the third step leaves residual and orthogonality as they were, and ``eigen`` checks both);
  one random start vector per piece serves all its eigenvalues; eigenvalues closer than 10⁻³‖T‖₁ form a cluster whose
  vectors are orthogonalized against each other (modified Gram–Schmidt) at every step.
  Returns ``None`` when a vector fails to converge, so that the caller can fall back
  to a method that always converges (the QL algorithm with vectors).
"""

import math
import random
import sys

from nmrcalc.physics.lanczos import dot, uniform_draws

_EPS = sys.float_info.epsilon  # IEEE-754 double: 2.22e-16
_MAX_QL_ITERATIONS = 60  # per eigenvalue; 2-3 are typical
_MAX_STEPS = 5  # inverse-iteration steps per vector (dstein: MAXITS)
_EXTRA_STEPS = 1  # steps taken after the growth criterion first holds (dstein: EXTRA = 2)
_CLUSTER = 1e-3  # eigenvalues closer than this times ‖T‖₁ are orthogonalized (dstein: ORTOL)


def implicit_ql(d: list[float], e: list[float], z: list[list[float]] | None = None) -> None:
    """Diagonalize the tridiagonal (d, e) in place; rotate the rows of ``z`` alongside if given.

    A subdiagonal element is treated as zero once it is below machine epsilon relative
    to its two diagonal neighbours, which splits the matrix.
    """
    n = len(d)
    for l in range(n):
        iterations = 0
        while True:
            m = l
            while m < n - 1:  # |e[m]| > ε (|d[m]| + |d[m+1]|), without a call per entry
                em, dm, dn = e[m], d[m], d[m + 1]
                if not (em if em >= 0.0 else -em) > _EPS * ((dm if dm >= 0.0 else -dm) + (dn if dn >= 0.0 else -dn)):
                    break
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
                if z is not None:
                    zi, zi1 = z[i], z[i + 1]
                    z[i + 1] = [s * u + c * t for u, t in zip(zi, zi1)]
                    z[i] = [c * u - s * t for u, t in zip(zi, zi1)]
            if deflated:
                continue
            d[l] -= p
            e[l] = g
            e[m] = 0.0


def eigenpairs(d: list[float], e: list[float], rng: random.Random) -> tuple[list[float], list[list[float]]] | None:
    """Eigenvalues (ascending) and unit eigenvectors (rows) of the tridiagonal (d, e), or None.

    ``d`` and ``e`` are not modified; ``rng`` gives the inverse iteration's start vectors.
    """
    n = len(d)
    values: list[float] = []
    vectors: list[list[float]] = []
    lo = 0
    for hi in range(1, n + 1):
        if hi < n and abs(e[hi - 1]) > _EPS * (abs(d[hi - 1]) + abs(d[hi])):
            continue
        piece = _piece_pairs(d[lo:hi], e[lo:hi - 1], rng)
        if piece is None:
            return None
        for value, vector in zip(*piece):
            values.append(value)
            vectors.append([0.0] * lo + vector + [0.0] * (n - hi))
        lo = hi
    order = sorted(range(n), key=values.__getitem__)
    return [values[k] for k in order], [vectors[k] for k in order]


def _piece_pairs(d: list[float], e: list[float], rng: random.Random) -> tuple[list[float], list[list[float]]] | None:
    """Eigenpairs of one unreduced piece (every off-diagonal in ``e`` significant)."""
    m = len(d)
    if m == 1:
        return [d[0]], [[1.0]]
    lam = list(d)
    implicit_ql(lam, e + [0.0])
    lam.sort()
    norm1 = max(abs(d[i]) + (abs(e[i]) if i < m - 1 else 0.0) + (abs(e[i - 1]) if i else 0.0) for i in range(m))
    if norm1 == 0.0:
        return None
    tiny = _EPS * norm1
    growth = math.sqrt(0.1 / m)
    cluster: list[list[float]] = []
    vectors = []
    previous = None
    start = uniform_draws(rng, m)
    for x in lam:
        if previous is not None:
            if x - previous < 10.0 * tiny:  # dstein: keep the shifts apart so the solves differ
                x = previous + 10.0 * tiny
            if x - previous > _CLUSTER * norm1:
                cluster = []
        previous = x
        solve = _factor(d, e, x, tiny)
        b = start
        checks = 0
        for _ in range(_MAX_STEPS):
            scale = m * norm1 * max(_EPS, abs(solve.last_pivot)) / sum([x if x >= 0.0 else -x for x in b])
            b = solve([scale * x for x in b])
            for u in cluster:
                c = dot(u, b)
                b = [x - c * y for x, y in zip(b, u)]
            if max(b) >= growth or -min(b) >= growth:
                checks += 1
                if checks > _EXTRA_STEPS:
                    break
        else:
            return None
        norm = math.sqrt(dot(b, b))
        if not norm > 0.0:
            return None
        high, low = max(b), min(b)
        factor = math.copysign(1.0 / norm, high if high >= -low else low)  # the largest entry made positive
        v = [factor * x for x in b]
        vectors.append(v)
        cluster.append(v)
    return lam, vectors


class _factor:
    """(T − λI) = P L U by Gaussian elimination with partial pivoting; calling it solves (T − λI) x = b."""

    def __init__(self, d: list[float], e: list[float], lam: float, tiny: float):
        m = len(d)
        diag = [x - lam for x in d]
        sub = list(e)
        sup = list(e)
        sup2 = [0.0] * m
        swapped = [False] * m
        for i in range(m - 1):
            p, q = diag[i], sub[i]
            if (p if p >= 0.0 else -p) >= (q if q >= 0.0 else -q):
                if -tiny < p < tiny:
                    diag[i] = math.copysign(tiny, p)
                f = sub[i] / diag[i]
                sub[i] = f
                diag[i + 1] -= f * sup[i]
            else:
                f = diag[i] / sub[i]
                diag[i] = sub[i]
                sub[i] = f
                t = sup[i]
                sup[i] = diag[i + 1]
                diag[i + 1] = t - f * diag[i + 1]
                if i < m - 2:
                    sup2[i] = sup[i + 1]
                    sup[i + 1] = -f * sup[i + 1]
                swapped[i] = True
        if abs(diag[m - 1]) < tiny:
            diag[m - 1] = math.copysign(tiny, diag[m - 1])
        self.diag, self.sub, self.sup, self.sup2, self.swapped = diag, sub, sup, sup2, swapped
        self.last_pivot = diag[m - 1]

    def __call__(self, b: list[float]) -> list[float]:
        diag, sub, sup, sup2, swapped = self.diag, self.sub, self.sup, self.sup2, self.swapped
        m = len(b)
        for i in range(m - 1):
            if swapped[i]:
                b[i], b[i + 1] = b[i + 1], b[i] - sub[i] * b[i + 1]
            else:
                b[i + 1] -= sub[i] * b[i]
        b[m - 1] /= diag[m - 1]
        b[m - 2] = (b[m - 2] - sup[m - 2] * b[m - 1]) / diag[m - 2]
        for i in range(m - 3, -1, -1):
            b[i] = (b[i] - sup[i] * b[i + 1] - sup2[i] * b[i + 2]) / diag[i]
        return b

