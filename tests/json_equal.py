"""Equality of a reply read back from ``api.handle_json`` with the reply ``api.handle`` gave.

``api.jsontext`` writes the floats of long lists to ``jsontext.DIGITS`` significant digits (its
docstring).  Here every float is compared to that many digits, wherever it is, and every other
value exactly; that short content is written exactly is checked in tests/test_jsontext.py.
"""

import math

from nmrcalc.api import jsontext

REL_TOL = 0.5 * 10.0 ** (1 - jsontext.DIGITS) * (1 + 1e-6)  # half a unit in the last written digit


def assert_same_reply(fast, plain, path="$"):
    """Equal structure, keys, types and non-float values; floats equal to DIGITS significant digits
    (a float written without a fraction may read back as an int)."""
    assert type(fast) is type(plain) or (type(plain) is float and type(fast) is int), path
    if isinstance(plain, dict):
        assert list(fast) == list(plain), path
        for k in plain:
            assert_same_reply(fast[k], plain[k], f"{path}.{k}")
    elif isinstance(plain, list):
        assert len(fast) == len(plain), path
        for k, (a, b) in enumerate(zip(fast, plain)):
            assert_same_reply(a, b, f"{path}[{k}]")
    elif isinstance(plain, float):
        assert math.isclose(fast, plain, rel_tol=REL_TOL, abs_tol=0.0), (path, fast, plain)
    else:
        assert fast == plain, path
