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
A q costs one short inner product per row (``math.sumprod``, Python ≥ 3.12, in C).  The
Gram–Schmidt products Q w and Qᵀ c, the O(n³) part, are big-integer linear combinations
(``packed``): the rows of Q are packed as they come, and so, every 32 rows, are its columns.
"""

import math
import random
import sys
from collections.abc import Callable, Sequence
from itertools import repeat
from operator import itemgetter, mul

from nmrcalc.physics.packed import FIELD_BITS, combine, pack

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

    One comprehension over the rows: under WebAssembly a call of a built-in function through
    ``map`` costs more than the bytecode of a comprehension that makes the same calls.
    """
    rows = list(parts)

    def apply(x: Vector) -> Vector:
        return [dot(coefficients, pick(x)) for coefficients, pick in rows]
    return apply


def multiplier(rows: list[Vector]) -> Callable[[Vector], Vector]:
    """x ↦ A x for the square matrix ``rows``, using only its non-zero entries."""
    n = len(rows)
    parts = []
    for row in rows:
        idx = [j for j, x in enumerate(row) if x != 0.0]
        parts.append((row, _WHOLE) if len(idx) > n // 2 else sparse_part([row[j] for j in idx], idx))
    return row_applier(parts)


def tridiagonalize(rows: list[Vector], rng: random.Random) -> tuple[Vector, Vector, list[int]]:
    """(α, β, the rows of Q, each ``packed``) with Qᵀ A Q = tridiagonal(α, β).

    ``β[k]`` couples k and k+1; ``β[n−1] = 0``.  ``packed.combine(result, n, y)`` is Qᵀ y.
    """
    n = len(rows)
    times = multiplier(rows)
    scale = math.sqrt(sum(x * x for row in rows for x in row))
    breakdown = n * _EPS * scale
    basis = _Basis(n)
    alpha: Vector = []
    beta: Vector = []
    q = _fresh(rng, basis)
    for k in range(n):
        basis.append(q)
        w = times(q)
        a = dot(q, w)
        alpha.append(a)
        if k == n - 1:
            break
        if k:
            b_prev, q_prev = beta[-1], basis.rows[-2]
            w = [x - a * y - b_prev * z for x, y, z in zip(w, q, q_prev)]
        else:
            w = [x - a * y for x, y in zip(w, q)]
        w = basis.orthogonalized(w)
        b = math.sqrt(dot(w, w))
        if b <= breakdown:
            beta.append(0.0)
            q = _fresh(rng, basis)
        else:
            beta.append(b)
            q = [x / b for x in w]
    beta.append(0.0)
    return alpha, beta, basis.packed_rows


class _Basis:
    """Orthonormal rows q₀, q₁, … of length n, kept as floats and ``packed`` two ways.

    ``packed_rows[k]`` is P(q_k): Qᵀ c = Σ_k c_k q_k is one ``combine``.  ``packed_cols[t]`` packs
    entry t of the first ``frozen`` rows: Q w over those rows is Σ_t w_t (column t), another
    ``combine``; the rows since then (fewer than ``_BATCH``) take one inner product each, and
    every ``_BATCH`` rows the columns are extended at once.
    """

    _BATCH = 32

    def __init__(self, n: int) -> None:
        self.rows: list[Vector] = []
        self.packed_rows: list[int] = []
        self.packed_cols = [0] * n
        self.frozen = 0

    def append(self, q: Vector) -> None:
        self.rows.append(q)
        self.packed_rows.append(pack(q))
        if len(self.rows) - self.frozen == self._BATCH:
            shift = FIELD_BITS * self.frozen
            self.packed_cols = [c + (pack(list(col)) << shift)
                                for c, col in zip(self.packed_cols, zip(*self.rows[self.frozen:]))]
            self.frozen = len(self.rows)

    def orthogonalized(self, w: Vector) -> Vector:
        """w minus its part along every row (classical Gram–Schmidt, twice when needed)."""
        norm = math.sqrt(dot(w, w))
        for _ in range(2):
            c = combine(self.packed_cols, self.frozen, w) if self.frozen else []
            c += map(dot, self.rows[self.frozen:], repeat(w))
            w = [x - y for x, y in zip(w, combine(self.packed_rows, len(w), c))]
            new = math.sqrt(dot(w, w))
            if new > 0.7071 * norm:
                break
            norm = new
        return w


def _fresh(rng: random.Random, basis: _Basis) -> Vector:
    """A random unit vector orthogonal to every row of ``basis`` (which has fewer than n rows)."""
    n = len(basis.packed_cols)
    while True:
        w = uniform_draws(rng, n)
        if basis.rows:
            w = basis.orthogonalized(basis.orthogonalized(w))
        norm = math.sqrt(dot(w, w))
        if norm > 1e-3:
            return [x / norm for x in w]


def uniform_draws(rng: random.Random, size: int) -> list[float]:
    """``size`` draws of rng.uniform(-1, 1), bit for bit (that is −1 + 2 r), without a Python call per draw."""
    draw = rng.random
    return [2.0 * draw() - 1.0 for _ in range(size)]
