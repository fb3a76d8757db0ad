"""Many inner products at once, as exact big-integer arithmetic on fixed-point fields.

A vector x of floats with |xᵢ| ≤ s is stored as one integer, the fixed-point values side by
side in 112-bit fields (Kronecker substitution: L. Kronecker, J. reine angew. Math. 92, 1-122
(1882); its use for products of many numbers at once, D. Harvey, J. Symbolic Comput. 44,
1502-1510 (2009)):

    P(x) = Σᵢ round(u xᵢ / s) · 2^(112 i),   u = 2⁵⁰ (1 − 2⁻²⁰).

A linear combination Σⱼ cⱼ P(xⱼ) with integer weights cⱼ = round(u cⱼ / max|c|) is then, in
exact integer arithmetic, P of Σⱼ cⱼ xⱼ (fields of either sign borrow from their neighbours,
which decoding undoes) as long as no field reaches 2¹¹¹ in size: with at most 2¹⁰ terms
(``MAX_TERMS``, four times the largest block of ``spin_system``), |Σ| < 2¹⁰ · 2¹⁰⁰ = 2¹¹⁰.
Python multiplies a long integer by a two-digit one and adds long integers in C, so a
combination of n vectors of n entries costs a few nanoseconds per entry (in WebAssembly
about five times less than n inner products with ``math.sumprod``, which rounds each one
as if exactly, in software).  The error is that of the fixed-point inputs:
at most 2⁻⁴⁹ · max|c| · s per term (both factors rounded to half a unit, 2⁻⁵¹ of their bound,
and the result converted back to a float) and 2⁻⁵³ · max|c| · s for the final rounding to the
top 64 bits of each field (D. E. Knuth, *The Art of Computer Programming*, vol. 2, 3rd ed.,
sec. 4.2.2 and 4.3.1).

Floats become integers without a Python-level call per entry, which WebAssembly makes dear:
t + 1.5 · 2⁵² for |t| < 2⁵¹ is a double of fixed exponent whose 64 bits, read as an unsigned
integer, are 0x4338… + round(t) (round half to even; IEEE 754-2008, sec. 4.3), so ``struct``
turns a whole vector at once.

``pack(values, scale)`` stores a vector; ``combine(packed, size, weights, scale)`` returns
Σⱼ weightⱼ xⱼ as ``size`` floats, for vectors packed with the same ``scale``.
"""

import struct
from functools import lru_cache

_FIELD = 14  # bytes per field (112 bits)
FIELD_BITS = 8 * _FIELD  # P(x) << FIELD_BITS · k puts x in fields k, k + 1, …
_TOP = 8  # bytes read back per field: its top 64 bits
_UNIT = 2.0 ** 50 - 2.0 ** 30  # fixed-point unit of inputs and weights: |x| <= s gives |u x / s| < 2⁵⁰
_MAGIC = 1.5 * 2.0 ** 52  # t + _MAGIC has the bits _BIAS + round(t) for |t| < 2⁵¹
_BIAS = 0x4338000000000000
_BACK = 2.0 ** 48 / (_UNIT * _UNIT)  # a field's top 64 bits in units of the inputs times the weights
_FLIP = bytes(b ^ 0x80 for b in range(256))  # flips the top bit of a byte: takes off the 2¹¹¹ of decoding
MAX_TERMS = 1 << 10  # terms a combination may have before a field could overflow


@lru_cache(maxsize=64)
def _offsets(size: int) -> tuple[int, int]:
    """(what packing adds to each field, what decoding adds: 2¹¹¹ and half of the dropped bits)."""
    packing = _BIAS.to_bytes(8, "little") + bytes(_FIELD - 8)
    reading = bytes(5) + b"\x80" + bytes(7) + b"\x80"  # 2⁴⁷ + 2¹¹¹
    return int.from_bytes(packing * size, "little"), int.from_bytes(reading * size, "little")


def _fixed(values: list[float], unit: float) -> bytes:
    """round(unit · v) + _BIAS for each v (|unit · v| < 2⁵¹), as little-endian unsigned 64-bit numbers."""
    return struct.pack(f"<{len(values)}d", *[v * unit + _MAGIC for v in values])


def pack(values: list[float], scale: float = 1.0) -> int:
    """P(x) for floats with |xᵢ| ≤ ``scale`` (> 0)."""
    size = len(values)
    raw = _fixed(values, _UNIT / scale)
    fields = bytearray(_FIELD * size)
    for k in range(_TOP):
        fields[k::_FIELD] = raw[k::_TOP]
    return int.from_bytes(fields, "little") - _offsets(size)[0]


def combine(packed: list[int], size: int, weights: list[float], scale: float = 1.0) -> list[float]:
    """Σⱼ weightsⱼ xⱼ (``size`` entries) for the vectors xⱼ packed as ``packed`` with ``scale``."""
    if len(packed) > MAX_TERMS:
        raise ValueError(f"{len(packed)} terms: at most {MAX_TERMS}")
    biggest = max(max(weights, default=0.0), -min(weights, default=0.0))
    if biggest == 0.0 or size == 0:
        return [0.0] * size
    ints = struct.unpack(f"<{len(weights)}Q", _fixed(weights, _UNIT / biggest))
    total = sum([p * (c - _BIAS) for p, c in zip(packed, ints)])
    raw = (total + _offsets(size)[1]).to_bytes(_FIELD * size, "little")
    top = bytearray(_TOP * size)
    for k in range(_TOP):
        top[k::_TOP] = raw[_FIELD - _TOP + k::_FIELD]
    top[_TOP - 1::_TOP] = top[_TOP - 1::_TOP].translate(_FLIP)
    back = _BACK * biggest * scale
    return [back * q for q in struct.unpack(f"<{size}q", top)]
