"""Many inner products at once, as exact big-integer arithmetic on fixed-point fields.

A vector x of floats with |xᵢ| ≤ s is stored as one integer, the fixed-point values side by
side in 120-bit fields (Kronecker substitution: L. Kronecker, J. reine angew. Math. 92, 1-122
(1882); its use for products of many numbers at once, D. Harvey, J. Symbolic Comput. 44,
1502-1510 (2009)):

    P(x) = Σᵢ round(2⁵² xᵢ / s) · 2^(120 i).

A linear combination Σⱼ cⱼ P(xⱼ) with integer weights cⱼ = round(2⁵² cⱼ / max|c|) is then, in
exact integer arithmetic, P of Σⱼ cⱼ xⱼ (fields of either sign borrow from their neighbours,
which decoding undoes) as long as no field reaches 2¹¹⁹ in size: with at most 2¹⁴ terms,
|Σ| ≤ 2¹⁴ · 2¹⁰⁴ = 2¹¹⁸.  Python multiplies a long integer by a two-digit one and adds long
integers in C, so a combination of n vectors of n entries costs a few nanoseconds per entry
(in WebAssembly about five times less than n inner products with ``math.sumprod``, which
rounds each one as if exactly, in software).  The error is that of the fixed-point inputs:
at most 2⁻⁵² · max|c| · s per term (both factors rounded to 2⁻⁵³ of their bound) and
2⁻⁴⁹ · max|c| · s for the final rounding (D. E. Knuth,
*The Art of Computer Programming*, vol. 2, 3rd ed., sec. 4.2.2 and 4.3.1).

``pack(values, scale)`` stores a vector; ``combine(packed, size, weights, scale)`` returns
Σⱼ weightⱼ xⱼ as ``size`` floats, for vectors packed with the same ``scale``.
"""

import struct
from functools import lru_cache
from operator import mul

_FIELD = 15  # bytes per field (120 bits)
_TOP = 8  # bytes read back per field: its top 64 bits
_ONE = 2.0 ** 52  # fixed-point unit of the inputs
_IN = 1 << 62  # inputs are stored offset by this, as unsigned 64-bit numbers
_BACK = 2.0 ** -48  # a field read back (its top 64 bits) in units of 2⁻¹⁰⁴ · 2⁵⁶
MAX_TERMS = 1 << 14  # terms a combination may have before a field could overflow


@lru_cache(maxsize=64)
def _offsets(size: int) -> tuple[int, int]:
    """(what packing adds to each field, what decoding adds: 2¹¹⁹ and half of the dropped bits)."""
    packing = bytes(7) + b"\x40" + bytes(7)  # 2⁶² within a field
    reading = bytes(6) + b"\x80" + bytes(7) + b"\x80"  # 2⁵⁵ + 2¹¹⁹
    return int.from_bytes(packing * size, "little"), int.from_bytes(reading * size, "little")


def pack(values: list[float], scale: float = 1.0) -> int:
    """P(x) for floats with |xᵢ| ≤ ``scale`` (> 0)."""
    size = len(values)
    unit = _ONE / scale
    raw = struct.pack(f"<{size}Q", *map(_IN.__add__, map(round, map(unit.__mul__, values))))
    fields = bytearray(_FIELD * size)
    for k in range(_TOP):
        fields[k::_FIELD] = raw[k::_TOP]
    return int.from_bytes(fields, "little") - _offsets(size)[0]


def combine(packed: list[int], size: int, weights: list[float], scale: float = 1.0) -> list[float]:
    """Σⱼ weightsⱼ xⱼ (``size`` entries) for the vectors xⱼ packed as ``packed`` with ``scale``."""
    if len(packed) > MAX_TERMS:
        raise ValueError(f"{len(packed)} terms: at most {MAX_TERMS}")
    biggest = max(map(abs, weights), default=0.0)
    if biggest == 0.0 or size == 0:
        return [0.0] * size
    unit = _ONE / biggest
    total = sum(map(mul, packed, map(round, map(unit.__mul__, weights))))
    raw = (total + _offsets(size)[1]).to_bytes(_FIELD * size, "little")
    top = bytearray(_TOP * size)
    for k in range(_TOP):
        top[k::_TOP] = raw[_FIELD - _TOP + k::_FIELD]
    back = _BACK * biggest * scale
    return list(map(back.__mul__, map((-(1 << 63)).__add__, struct.unpack(f"<{size}Q", top))))
