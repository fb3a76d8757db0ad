"""The ``describe`` op: every op ``handle`` accepts, with its declared parameters,
so that scripts can discover the API (see ``nmrcalc.api.params``)."""

from __future__ import annotations

from nmrcalc.api.params import Op, describe

DESCRIBE = Op("describe", "every op with its parameters (key, kind, unit, required, default, help)", cli="-",
              limits="the declarations only")


def declarations() -> dict[str, Op]:
    """Every op's declaration, by op name (imports every op module)."""
    from nmrcalc.api import OPS
    return {name: OPS.declaration(name) for name in OPS}


def op_describe(req: dict, warnings: list[str]) -> dict:
    return describe(declarations())


DECLARED = {"describe": DESCRIBE}
OPS = {"describe": op_describe}
