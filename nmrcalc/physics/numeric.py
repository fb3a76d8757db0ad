"""Checks on many floats at once, in C rather than one Python call per number."""

import math
from collections.abc import Sequence


def all_finite(values: Sequence[float]) -> bool:
    """Every float finite: their exact sum is (math.fsum; inf and nan propagate), else entry by entry."""
    try:
        return math.isfinite(math.fsum(values))
    except (OverflowError, ValueError):  # finite values whose sum overflows, or inf − inf
        return all(map(math.isfinite, values))
