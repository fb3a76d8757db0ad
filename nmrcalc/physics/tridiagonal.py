"""Eigenvalues and eigenvectors of a real symmetric tridiagonal matrix, in pure Python.

The matrix has diagonal ``d`` and off-diagonal ``e`` (``e[k]`` couples k and k+1; the
last entry is unused and left 0).

* ``implicit_ql(d, e, z=None)``: the implicit QL algorithm with the shift of the leading
  2×2 block (H. Bowdler, R. S. Martin, C. Reinsch, J. H. Wilkinson, "The QR and QL
  algorithms for symmetric matrices", Numer. Math. 11, 293-306 (1968)); eigenvalues
  land in ``d``, and the rows of ``z``, when given, are rotated alongside.
* ``eigenpairs(d, e, rng)``: eigenvalues by ``implicit_ql`` without vectors (O(n²)); the
  matrix is split where an off-diagonal is negligible, and in each unreduced piece every
  eigenvector comes from a twisted factorization of T − λI (I. S. Dhillon, B. N. Parlett,
  Linear Algebra Appl. 387, 1-28 (2004); B. N. Parlett, *The Symmetric Eigenvalue Problem*,
  SIAM 1998, sec. 7.5), all eigenvalues of the piece side by side, and is kept when its
  residual is at most a few m ε ‖T‖₁.  Eigenvalues closer than 10⁻³‖T‖₁ form a cluster whose
  vectors are orthonormalized by modified Gram–Schmidt (the tolerance of LAPACK's ``dstein``).
  A cluster with eigenvalues closer than 10⁻⁸‖T‖₁, or a vector whose residual is too large,
  takes inverse iteration after the method of ``dstein`` (E. Anderson et al., *LAPACK Users'
  Guide*, 3rd ed., SIAM 1999; J. H. Wilkinson, *The Algebraic Eigenvalue Problem*, 1965,
  ch. 9): (T − λI) x = b solved by Gaussian elimination with partial pivoting, tiny pivots
  replaced by ε‖T‖₁; an iterate is accepted after its ∞-norm has reached √(0.1/m) for two
  steps (at most five; dstein takes three, but with eigenvalues from the QL algorithm the
  third step leaves residual and orthogonality as they were, and ``eigen`` checks both); one
  random start vector per piece; each vector orthogonalized against the cluster's earlier
  ones at every step.  Returns ``None`` when a vector fails to converge, so that the caller
  can fall back to a method that always converges (the QL algorithm with vectors).
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
_CLOSE = 1e-8  # a cluster with eigenvalues closer than this times ‖T‖₁ takes inverse iteration
_TWIST_RESIDUAL = 8.0  # a twisted vector is kept with a residual up to this times m ε ‖T‖₁


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
    """Eigenpairs of one unreduced piece (every off-diagonal in ``e`` significant).

    Every vector first comes from a twisted factorization (``_twisted``), all eigenvalues at once;
    a cluster (eigenvalues closer than ``_CLUSTER`` ‖T‖₁) is orthonormalized by modified Gram–Schmidt,
    twice.  A cluster with two eigenvalues closer than ``_CLOSE`` ‖T‖₁, or with a twisted vector
    whose residual passes ``_TWIST_RESIDUAL`` m ε ‖T‖₁, takes inverse iteration instead.
    """
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
    shifts = list(lam)
    for k in range(1, m):  # dstein: keep the shifts apart so the solves differ
        if shifts[k] - shifts[k - 1] < 10.0 * tiny:
            shifts[k] = shifts[k - 1] + 10.0 * tiny
    twisted = _twisted(d, e, shifts, tiny, _TWIST_RESIDUAL * m * tiny)
    vectors: list[list[float]] = []
    start = None
    first = 0
    for k in range(1, m + 1):
        if k < m and shifts[k] - shifts[k - 1] <= _CLUSTER * norm1:
            continue
        members = range(first, k)
        close = any(shifts[j + 1] - shifts[j] < _CLOSE * norm1 for j in range(first, k - 1))
        found = None if close else _orthonormalized([twisted[j] for j in members])
        if found is None:
            start = start or uniform_draws(rng, m)
            found = _inverse_iteration(d, e, [shifts[j] for j in members], tiny, norm1, start)
            if found is None:
                return None
        vectors += [_signed(v) for v in found]
        first = k
    return lam, vectors


def _twisted(d: list[float], e: list[float], shifts: list[float], tiny: float,
             residual: float) -> list[list[float] | None]:
    """An approximate eigenvector for every shift λ by a twisted factorization, or None where it fails.

    T − λI = L₊D₊L₊ᵀ from the top and U₋D₋U₋ᵀ from the bottom (stationary recurrences
    D₊ᵢ = (dᵢ − λ) − eᵢ₋₁²/D₊ᵢ₋₁, D₋ᵢ = (dᵢ − λ) − eᵢ²/D₋ᵢ₊₁, a zero pivot replaced by ε‖T‖₁);
    γᵢ = D₊ᵢ + D₋ᵢ − (dᵢ − λ) and at r = argmin |γᵢ| the vector z with z_r = 1,
    zᵢ = −eᵢ zᵢ₊₁/D₊ᵢ above r and zᵢ₊₁ = −eᵢ zᵢ/D₋ᵢ₊₁ below solves (T − λI) z = γ_r e_r, so
    its residual is |γ_r|/‖z‖ (I. S. Dhillon, B. N. Parlett, Linear Algebra Appl. 387, 1-28
    (2004), sec. 2; B. N. Parlett, *The Symmetric Eigenvalue Problem*, SIAM 1998, sec. 7.5).
    A unit vector is kept when that residual is at most ``residual`` and every entry is finite.
    Each recurrence runs over the rows once with all shifts side by side (one comprehension
    per row), so the work is O(m²) list entries rather than m² Python steps.
    """
    m = len(d)
    e2 = [x * x for x in e]
    plus = [[(d[0] - x) or tiny for x in shifts]]
    for i in range(1, m):
        di, ei2 = d[i], e2[i - 1]
        plus.append([(di - x - ei2 / p) or tiny for x, p in zip(shifts, plus[-1])])
    minus: list[list[float]] = [[]] * m
    minus[m - 1] = [(d[m - 1] - x) or tiny for x in shifts]
    for i in range(m - 2, -1, -1):
        di, ei2 = d[i], e2[i]
        minus[i] = [(di - x - ei2 / q) or tiny for x, q in zip(shifts, minus[i + 1])]
    gammas = [[g if g >= 0.0 else -g for g in (p + q - (di - x) for p, q, x in zip(pi, qi, shifts))]
              for pi, qi, di in zip(plus, minus, d)]
    twist = [g.index(min(g)) for g in zip(*gammas)]
    below = []  # zᵢ for i ≥ r, 0 above r
    z = [0.0] * len(shifts)
    for i in range(m):
        ei = -e[i - 1] if i else 0.0
        z = [1.0 if i == r else (ei * c / q if i > r else 0.0) for c, r, q in zip(z, twist, minus[i])]
        below.append(z)
    columns: list[list[float]] = [[]] * m
    for i in range(m - 1, -1, -1):
        ei = -e[i] if i < m - 1 else 0.0
        z = [b if i >= r else ei * c / p for c, r, p, b in zip(z, twist, plus[i], below[i])]
        columns[i] = z
    out: list[list[float] | None] = []
    for k, entries in enumerate(zip(*columns)):
        norm = math.sqrt(dot(entries, entries))
        if not (math.isfinite(norm) and gammas[twist[k]][k] <= residual * norm):
            out.append(None)
            continue
        out.append([x / norm for x in entries])
    return out


def _orthonormalized(vectors: list[list[float] | None]) -> list[list[float]] | None:
    """Unit vectors, each made orthogonal to the ones before it (modified Gram–Schmidt, two passes); None if
    one is missing or loses more than half its length (then it was not independent enough to trust)."""
    if any(v is None for v in vectors):
        return None
    done: list[list[float]] = []
    for v in vectors:
        assert v is not None
        for _ in range(2):
            for u in done:
                c = dot(u, v)
                v = [x - c * y for x, y in zip(v, u)]
        norm = math.sqrt(dot(v, v))
        if not norm > 0.5:
            return None
        done.append([x / norm for x in v])
    return done


def _inverse_iteration(d: list[float], e: list[float], shifts: list[float], tiny: float, norm1: float,
                       start: list[float]) -> list[list[float]] | None:
    """Unit vectors for one cluster of shifts by inverse iteration (dstein), each orthogonalized against the
    cluster's earlier ones at every step; None when one does not converge."""
    m = len(d)
    growth = math.sqrt(0.1 / m)
    cluster: list[list[float]] = []
    for x in shifts:
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
        cluster.append([x / norm for x in b])
    return cluster


def _signed(v: list[float]) -> list[float]:
    """``v`` with its largest entry (in size) made positive."""
    high, low = max(v), min(v)
    return v if high >= -low else [-x for x in v]


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

