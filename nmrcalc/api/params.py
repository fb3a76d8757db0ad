"""One declaration per op: its parameters, read by every front end.

Each op module declares its ops next to their functions::

    FREQUENCY = Op("frequency", "Larmor and 0 ppm frequencies at a magnet", cli="freq", params=(
        *MAGNET,
        Param("nucleus", "nuclide", label="Nucleus", help="observed nuclide; omit for the all-nuclide table"),
        Param("min_MHz", "quantity", unit="frequency", label="Lowest frequency", help="table filter"),
    ))
    OPS = {"frequency": (FREQUENCY, op_frequency)}

From these declarations, and from nowhere else, come:

* request validation in :func:`check` — required keys, kinds, bounds and
  choices, and **strict keys**: a key no parameter declares is refused with
  code ``unknown_key``, a suggestion when a declared key is close
  ("groups.0.abundnce: unknown key — did you mean 'abundance'?") and a hint
  when the key belongs at another level of the same request;
* ``{"op": "describe"}`` (:func:`describe`), the CLI's subcommands and flags
  (``nmrcalc.cli``), the README's op table (:func:`markdown_table`, checked by
  a test) and the fuzz's request templates (each parameter's ``example``).

Kinds (``Param.kind``):

=============  ==============================================================
``quantity``   a number in ``unit``'s default unit, or text with a unit
               (``units.parse_quantity``; ``unit`` is a kind of quantity there)
``quantities`` a list of such quantities (or one text, comma separated)
``numbers``    a list of plain numbers within ``bounds`` (or one text, comma separated)
``nuclide``    a nuclide name (``13C``, ``C-13``, ``carbon-13``, ``D``)
``partner``    a nuclide or an element (``2H``, ``B``, ``Pt``)
``spin``       a nuclear spin: ``1/2``, ``"3/2"``, ``1``
``integer``    a whole number within ``bounds``
``number``     a plain finite number within ``bounds``
``flag``       true or false
``choice``     one of ``choices``
``text``       a string of at most ``max_chars`` characters
``texts``      a list of strings
``map``        an object: isotope → quantity of ``unit`` (e.g. percent)
``object``     one object whose keys are the declared ``items``
``objects``    a list of objects whose keys are the declared ``items``
``pair``       a list of two spin references (0-based numbers or labels)
``value``      any JSON value the op reads itself (position lists and the like)
=============  ==============================================================

Physics never sees these names: ops read the checked request and call
physics with plain arguments.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from nmrcalc.errors import InputError

KINDS = ("quantity", "quantities", "numbers", "nuclide", "partner", "spin", "integer", "number", "flag", "choice",
         "text", "texts", "map", "object", "objects", "pair", "value")
MAX_LIST_ITEMS = 4096
MAX_TEXT_CHARS = 1_000_000


@dataclass(frozen=True)
class Param:
    """One request key of an op (or of the objects in one of its lists)."""

    key: str
    kind: str
    unit: str | None = None          # quantity kind (units.py): field, frequency, coupling, shift, …
    required: bool = False
    default: Any = None
    label: str = ""
    help: str = ""
    choices: tuple = ()
    bounds: tuple[float | None, float | None] = (None, None)
    max_chars: int = 200
    max_items: int = MAX_LIST_ITEMS
    items: tuple[Param, ...] = ()
    example: Any = None              # a valid value, for docs and the fuzz
    cli: str | None = None           # flag or positional name; "-" keeps it off the CLI
    cli_aliases: tuple[str, ...] = ()  # further flags for the same key (e.g. --magnet)
    cli_order: tuple[str, ...] = ()  # objects: the item keys a CLI text fills, in order
    cli_sep: str = ","               # objects: separates an item's parts; another one lets "," separate items
    file: bool = False               # text: the CLI reads it from a file ('-' = standard input)

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise ValueError(f"unknown kind {self.kind!r} for {self.key}")
        if self.kind in ("quantity", "quantities", "map") and self.unit is None:
            raise ValueError(f"{self.key}: a {self.kind} needs the unit kind it is read in")

    @property
    def quantity_kind(self) -> str:
        """The units.py kind a quantity of this parameter is read as."""
        return self.unit or ""

    def describe(self) -> dict:
        out = {"key": self.key, "kind": self.kind, "unit": _unit_name(self.unit), "required": self.required,
               "default": self.default, "label": self.label or self.key, "help": self.help}
        if self.choices:
            out["choices"] = list(self.choices)
        if self.bounds != (None, None):
            out["bounds"] = list(self.bounds)
        if self.items:
            out["items"] = [p.describe() for p in self.items]
        if self.kind in ("objects", "quantities", "numbers", "texts"):
            out["max_items"] = self.max_items
        if self.kind == "text":
            out["max_chars"] = self.max_chars
        return out


@dataclass(frozen=True)
class Op:
    """One op: its name, a one-line summary and its parameters."""

    name: str
    summary: str
    params: tuple[Param, ...] = ()
    cli: str | None = None           # the CLI command (default: the op name); "-" = none
    limits: str = ""                 # the worst case the op bounds, in words (docs)
    one_of: tuple[tuple[str, ...], ...] = field(default=())   # groups of keys of which at most one may be given

    def keys(self) -> dict[str, Param]:
        return {p.key: p for p in self.params}

    def describe(self) -> dict:
        out = {"op": self.name, "summary": self.summary, "params": [p.describe() for p in self.params]}
        if self.one_of:
            out["one_of"] = [_alternatives(group) for group in self.one_of]
        if self.limits:
            out["limits"] = self.limits
        return out


def _unit_name(kind: str | None) -> str | None:
    if kind is None:
        return None
    from nmrcalc.units import default_unit
    return default_unit(kind)


def _alternatives(group: tuple[str, ...]) -> dict:
    """A ``one_of`` group for ``describe``: its keys, and the one label and help a front end shows
    for a single input that fills whichever key its unit names (the magnet: MHz or T)."""
    label, help_ = ALTERNATIVES.get(group, (" or ".join(group), ""))
    return {"keys": list(group), "label": label, "help": help_}


# ``one_of`` groups that a front end reads as one input (its unit says which key it fills).
ALTERNATIVES: dict[tuple[str, ...], tuple[str, str]] = {
    ("spectrometer", "field"): ("Magnet", "the magnet by its 1H frequency (MHz) or its field (T, kG, G)"),
    ("ppm", "Hz"): ("Value", "a shift in ppm or an offset from 0 ppm in Hz"),
    ("wavelength", "wavenumber"): ("Photon, optional", "a UV/visible wavelength or an IR wavenumber to compare with"),
}

# The magnet, shared by every op that needs one.
MAGNET = (
    Param("spectrometer", "quantity", unit="magnet_MHz", label="Spectrometer (¹H frequency)",
          help="the magnet named by its 1H frequency, e.g. '400.13 MHz' (or its field, '9.4 T')",
          example="400.13 MHz", cli_aliases=("--magnet",)),
    Param("field", "quantity", unit="magnet_T", label="Field B₀",
          help="the magnet as a flux density, e.g. '9.4 T' or '94000 G' (instead of spectrometer)"),
)

# The sampled line shape, shared by the multiplet and spin-system ops.
SPECTRUM = (
    Param("spectrum", "flag", default=False, label="Sampled spectrum", help="also return the sampled line shape"),
    Param("linewidth", "quantity", unit="coupling", label="Line width",
          help="full width at half height, e.g. '0.8 Hz'"),
    Param("shape", "choice", choices=("lorentzian", "gaussian"), default="lorentzian", label="Line shape",
          help="line shape"),
)


# ---------- checking a request against a declaration ----------

def check(op: Op, request: dict) -> dict:
    """``request`` checked against ``op``'s declaration, with the declared defaults filled in
    where a key is absent or empty (top level and in list items); InputError for the first problem."""
    _check_object(op.params, request, "", {"op"}, _all_keys(op.params))
    for group in op.one_of:
        given = [k for k in group if _given(request, k)]
        if len(given) > 1:
            raise InputError(f"Give either '{given[0]}' or '{given[1]}', not both.", given[1])
    return _with_defaults(op.params, request)


def _with_defaults(params: tuple[Param, ...], obj: dict) -> dict:
    out = dict(obj)
    for p in params:
        if p.default is not None and out.get(p.key) in (None, ""):
            out[p.key] = p.default
        elif p.items and isinstance(out.get(p.key), list):
            out[p.key] = [_with_defaults(p.items, item) if isinstance(item, dict) else item for item in out[p.key]]
        elif p.items and isinstance(out.get(p.key), dict):
            out[p.key] = _with_defaults(p.items, out[p.key])
    return out


def _given(obj: dict, key: str) -> bool:
    return obj.get(key) not in (None, "")


def _all_keys(params: tuple[Param, ...], where: str = "") -> dict[str, str]:
    """Every declared key of a request, anywhere in it → the level it belongs to ('' = top level)."""
    out: dict[str, str] = {}
    for p in params:
        out.setdefault(p.key, where)
        if p.items:
            for k, w in _all_keys(p.items, p.key if p.kind == "object" else f"{p.key}[*]").items():
                out.setdefault(k, w)
    return out


def _home(level: str) -> str:
    """Where a key belongs, in words: '' is the top level, 'x[*]' each item of the list x, 'x' the object x."""
    if level == "":
        return "the top level of the request"
    return f"each item of '{level[:-3]}'" if level.endswith("[*]") else f"the object '{level}'"


def _check_object(
    params: tuple[Param, ...], obj: dict, prefix: str, extra: set[str], everywhere: dict[str, str]
) -> None:
    declared = {p.key: p for p in params}
    for key in obj:
        if key in declared or key in extra:
            continue
        raise InputError(_unknown_message(str(key), declared, everywhere, prefix), prefix + _safe_key(key),
                         "unknown_key")
    for p in params:
        value = obj.get(p.key)
        if value is None or value == "" or value == []:
            if p.required:
                raise InputError(f"'{p.key}' is missing" + (f": {p.help}." if p.help else "."), prefix + p.key,
                                 "missing_field")
            continue
        _check_value(p, value, prefix + p.key, everywhere)


def _safe_key(key: object) -> str:
    text = str(key)
    return text if len(text) <= 60 else text[:57] + "…"


def _unknown_message(key: str, declared: dict, everywhere: dict[str, str], prefix: str) -> str:
    shown = _safe_key(key)
    where = prefix.rstrip(".") or "the request"
    level = prefix.rstrip(".")
    belongs = everywhere.get(key)
    if belongs is not None:
        home = "at " + _home(belongs) if belongs == "" else "inside " + _home(belongs)
        return f"{prefix}{shown}: '{shown}' is not a key of {where}; it belongs {home}."
    from difflib import get_close_matches
    close = get_close_matches(key[:40].lower(), [k.lower() for k in declared], n=1, cutoff=0.75)
    if close:
        match = next(k for k in declared if k.lower() == close[0])
        return f"{prefix}{shown}: unknown key — did you mean '{match}'?"
    close = get_close_matches(key[:40], list(everywhere), n=1, cutoff=0.75)
    if close:
        return f"{prefix}{shown}: unknown key — did you mean '{close[0]}' (a key of {_home(everywhere[close[0]])})?"
    known = ", ".join(sorted(declared)) or "none"
    return f"{prefix}{shown}: unknown key for {'this item' if level else 'this op'}; the keys are: {known}."


def _check_value(p: Param, value: Any, where: str, everywhere: dict[str, str]) -> None:
    kind = p.kind
    if kind == "quantity":
        from nmrcalc.api.fields import bounded
        _in_bounds(p, bounded(value, p.quantity_kind, where), where)
    elif kind == "quantities":
        from nmrcalc.api.fields import bounded
        items = _split(value, where, p)
        for i, item in enumerate(items):
            bounded(item, p.quantity_kind, f"{where}.{i}")
    elif kind == "numbers":
        for i, item in enumerate(_split(value, where, p)):
            _check_value(Param(p.key, "number", bounds=p.bounds), _plain_number(item), f"{where}.{i}", everywhere)
    elif kind in ("nuclide", "partner", "text", "spin"):
        if kind == "spin" and isinstance(value, (int, float)) and not isinstance(value, bool):
            return
        if not isinstance(value, str):
            raise InputError(f"{where}: give text, e.g. {_example_text(p)}.", where)
        limit = p.max_chars if kind == "text" else 200
        if len(value) > limit:
            raise InputError(f"{where}: at most {limit} characters (got {len(value)}).", where, "too_large")
        if kind == "nuclide":
            from nmrcalc.nuclides import lookup
            lookup(value, where)
    elif kind == "integer":
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        if isinstance(value, bool) or not isinstance(value, int):
            raise InputError(f"{where}: give a whole number.", where)
        _in_bounds(p, value, where)
    elif kind == "number":
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            raise InputError(f"{where}: give a finite number.", where)
        _in_bounds(p, value, where)
    elif kind == "flag":
        if not isinstance(value, bool):
            raise InputError(f"{where}: give true or false.", where)
    elif kind == "choice":
        if value not in p.choices:
            raise InputError(f"{where}: must be one of {', '.join(map(str, p.choices))}.", where)
    elif kind == "texts":
        for i, item in enumerate(_split(value, where, p)):
            if not isinstance(item, str) or len(item) > 200:
                raise InputError(f"{where}.{i}: give a short text.", f"{where}.{i}")
    elif kind == "map":
        if not isinstance(value, dict):
            raise InputError(f"{where}: give an object such as {{\"2H\": 99.8}}.", where)
        from nmrcalc.api.fields import bounded
        for key, item in value.items():
            if len(str(key)) > 40:
                raise InputError(f"{where}: a key is too long.", where)
            bounded(item, p.quantity_kind, f"{where}.{key}")
    elif kind == "object":
        if not isinstance(value, dict):
            keys = ", ".join(q.key for q in p.items)
            raise InputError(f"{where}: give an object with the keys {keys}.", where)
        _check_object(p.items, value, f"{where}.", set(), everywhere)
    elif kind == "objects":
        if not isinstance(value, list):
            raise InputError(f"{where}: give a list of objects.", where)
        if len(value) > p.max_items:
            raise InputError(f"{where}: at most {p.max_items} items (got {len(value)}).", where, "too_large")
        for i, item in enumerate(value):
            if isinstance(item, dict):
                _check_object(p.items, item, f"{where}.{i}.", set(), everywhere)
    elif kind == "pair":
        if not isinstance(value, list) or len(value) != 2 or not all(
                isinstance(x, (int, str)) and not isinstance(x, bool) for x in value):
            raise InputError(f"{where}: give two spins, e.g. [0, 1] or [\"A\", \"B\"].", where)


def _plain_number(item: Any) -> Any:
    """A number typed as text ('27.9', '−0.5') read as one; anything else unchanged (refused by the caller)."""
    if isinstance(item, str):
        try:
            return float(item.strip().replace("\u2212", "-"))
        except ValueError:
            return item
    return item


def _split(value: Any, where: str, p: Param) -> list:
    if isinstance(value, str):
        from nmrcalc.units import split_list
        value = split_list(value, where)
    if not isinstance(value, list):
        raise InputError(f"{where}: give a list (or one text, comma separated).", where)
    if len(value) > p.max_items:
        raise InputError(f"{where}: at most {p.max_items} items (got {len(value)}).", where, "too_large")
    return value


def _in_bounds(p: Param, value: Any, where: str) -> None:
    lo, hi = p.bounds
    if (lo is not None and value < lo) or (hi is not None and value > hi):
        if lo is not None and hi is not None:
            text = f"from {lo:g} to {hi:g}"
        elif lo is not None:
            text = f"at least {lo:g}"
        else:
            text = f"at most {hi:g}"
        raise InputError(f"{where}: must be {text}.", where,
                         "too_large" if hi is not None and value > hi else "invalid_value")


def _example_text(p: Param) -> str:
    if p.example is not None:
        return repr(p.example)
    return {"nuclide": "'13C'", "partner": "'2H' or 'B'", "spin": "'3/2'"}.get(p.kind, "'…'")


# ---------- what the declarations give the front ends ----------

def describe(ops: dict[str, Op]) -> dict:
    """The result of ``{"op": "describe"}``: every op with its parameters."""
    return {"ops": [ops[name].describe() for name in sorted(ops)]}


# A typical value of each quantity kind, for a parameter declared without an example.
_TYPICAL = {"field": "11.74 T", "frequency": "500 MHz", "coupling": "7 Hz", "shift": "1.2 ppm",
            "temperature": "298 K", "wavelength": "254 nm", "wavenumber": "1700 cm-1", "percent": 1}


def example_value(p: Param) -> Any:
    """A valid value of ``p``: its declared example, else one that follows from its kind (or None)."""
    if p.example is not None:
        return p.example
    if p.kind == "quantity":
        return _TYPICAL.get(p.unit or "", 1)
    if p.kind == "choice":
        return p.default if p.default is not None else p.choices[0]
    if p.kind == "flag":
        return bool(p.default)
    if p.kind == "integer":
        return p.default if p.default is not None else p.bounds[0]
    return None


def example_request(op: Op) -> dict:
    """A valid request using every parameter that has an example value (the first key of each
    ``one_of`` group only): the docs' and the fuzz's starting point."""
    skip = {k for group in op.one_of for k in group[1:]}
    return {"op": op.name, **{p.key: v for p in op.params if p.key not in skip
                              for v in [example_value(p)] if v is not None}}


def markdown_table(ops: dict[str, Op]) -> str:
    """The README's op table, one row an op: op, what it does, its keys (required in bold)."""
    rows = ["| op | what it does | keys (required in bold) |", "|---|---|---|"]
    for name in sorted(ops):
        op = ops[name]
        keys = ", ".join(f"**`{p.key}`**" if p.required else f"`{p.key}`" for p in op.params) or "—"
        rows.append(f"| `{name}` | {op.summary} | {keys} |")
    return "\n".join(rows)
