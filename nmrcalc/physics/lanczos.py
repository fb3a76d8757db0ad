"""Lanczos reduction of a real symmetric matrix to tridiagonal form, fully reorthogonalized.

From a unit start vector q₀ the three-term recurrence

    β_k q_{k+1} = A q_k − α_k q_k − β_{k−1} q_{k−1},   α_k = q_kᵀ A q_k,

builds an orthonormal Q with Qᵀ A Q = T, T tridiagonal with diagonal α and off-diagonal β
(C. Lanczos, J. Res. Natl. Bur. Stand. 45, 255-282 (1950); G. H. Golub, C. F. Van Loan,
*Matrix Computations*, 3rd ed., sec. 9.1-9.2).  Each new vector is also orthogonalized
against every earlier one by classical Gram–Schmidt, repeated once when that pass
shrinks it below 1/√2 of its norm (J. W. Daniel, W. B. Gragg, L. Kaufman, G. W. Stewart,
Math. Comp. 30, 772-795 (1976)), so Q stays orthonormal to rounding.  When β_k vanishes
(an invariant subspace: degenerate eigenvalues or uncoupled parts) a random vector
orthogonal to all earlier ones continues the run and β_k = 0 splits T.

Why here: a spin Hamiltonian block is sparse (a row has one entry per flip-flop pair), so
A q costs one short inner product per row, and every other step is an inner product of
whole lists, which ``math.sumprod`` (Python ≥ 3.12) does in C.  The columns of Q are kept
beside its rows so that the Gram–Schmidt update is also a list of inner products.
"""

import math
import random
import sys
from collections.abc import Callable, Sequence
from itertools import repeat
from operator import call, itemgetter, mul, sub

_EPS = sys.float_info.epsilon  # IEEE-754 double: 2.22e-16

Vector = list[float]
Getter = Callable[[Sequence[float]], Sequence[float]]  # a vector ↦ the entries a row uses
_WHOLE: Getter = itemgetter(slice(None))  # a dense row's getter: the whole vector


def _dot_python(a: Sequence[float], b: Sequence[float]) -> float:
    """Inner product for Pythons without math.sumprod (3.11)."""
    return sum(map(mul, a, b))


dot: Callable[[Sequence[float], Sequence[float]], float] = getattr(math, "sumprod", _dot_python)


def sparse_part(values: list[float], idx: list[int]) -> tuple[list[float], Getter]:
    """(coefficients, getter) with dot(coefficients, getter(x)) = Σ_k values[k] x[idx[k]].

    ``itemgetter`` returns a tuple only from two indices on, so fewer entries are padded
    with index 0 and coefficient 0 (x must be non-empty).
    """
    pad = max(0, 2 - len(idx))
    return list(values) + [0.0] * pad, itemgetter(*idx, *[0] * pad)


def row_applier(parts: list[tuple[Vector, Getter]]) -> Callable[[Vector], Vector]:
    """x ↦ [dot(coefficients, getter(x)) for each (coefficients, getter) in ``parts``].

    The loop over rows runs in C (``map`` with ``operator.call``), which matters in
    WebAssembly, where each Python-level step costs several times what it costs natively.
    """
    coefs = [c for c, _ in parts]
    picks = [p for _, p in parts]

    def apply(x: Vector) -> Vector:
        return list(map(dot, coefs, map(call, picks, repeat(x))))
    return apply


def multiplier(rows: list[Vector]) -> Callable[[Vector], Vector]:
    """x ↦ A x for the square matrix ``rows``, using only its non-zero entries."""
    n = len(rows)
    parts = []
    for row in rows:
        idx = [j for j, x in enumerate(row) if x != 0.0]
        parts.append((row, _WHOLE) if len(idx) > n // 2 else sparse_part([row[j] for j in idx], idx))
    return row_applier(parts)


def tridiagonalize(rows: list[Vector], rng: random.Random) -> tuple[Vector, Vector, list[Vector]]:
    """(α, β, columns of Q) with Qᵀ A Q = tridiagonal(α, β); ``cols[t][k]`` is entry t of q_k.

    ``β[k]`` couples k and k+1; ``β[n−1] = 0``.
    """
    n = len(rows)
    times = multiplier(rows)
    scale = math.sqrt(sum(x * x for row in rows for x in row))
    breakdown = n * _EPS * scale
    Q: list[Vector] = []
    cols: list[Vector] = [[] for _ in range(n)]
    alpha: Vector = []
    beta: Vector = []
    q = _fresh(rng, Q, cols, n)
    for k in range(n):
        Q.append(q)
        for col, x in zip(cols, q):
            col.append(x)
        w = times(q)
        a = dot(q, w)
        alpha.append(a)
        if k == n - 1:
            break
        if k:
            b_prev, q_prev = beta[-1], Q[-2]
            w = [x - a * y - b_prev * z for x, y, z in zip(w, q, q_prev)]
        else:
            w = [x - a * y for x, y in zip(w, q)]
        w = _orthogonalized(w, Q, cols)
        b = math.sqrt(dot(w, w))
        if b <= breakdown:
            beta.append(0.0)
            q = _fresh(rng, Q, cols, n)
        else:
            beta.append(b)
            q = [x / b for x in w]
    beta.append(0.0)
    return alpha, beta, cols


def _orthogonalized(w: Vector, Q: list[Vector], cols: list[Vector]) -> Vector:
    """w minus its part along every row of Q (classical Gram–Schmidt, twice when needed)."""
    norm = math.sqrt(dot(w, w))
    for _ in range(2):
        c = list(map(dot, Q, repeat(w)))
        w = list(map(sub, w, map(dot, repeat(c), cols)))
        new = math.sqrt(dot(w, w))
        if new > 0.7071 * norm:
            break
        norm = new
    return w


def _fresh(rng: random.Random, Q: list[Vector], cols: list[Vector], n: int) -> Vector:
    """A random unit vector orthogonal to every row of Q (which has fewer than n rows)."""
    while True:
        w = uniform_draws(rng, n)
        if Q:
            w = _orthogonalized(_orthogonalized(w, Q, cols), Q, cols)
        norm = math.sqrt(dot(w, w))
        if norm > 1e-3:
            return [x / norm for x in w]


def uniform_draws(rng: random.Random, size: int) -> list[float]:
    """``size`` draws of rng.uniform(-1, 1), bit for bit (that is −1 + 2 r), without a Python call per draw."""
    draw = rng.random
    return [2.0 * draw() - 1.0 for _ in range(size)]
