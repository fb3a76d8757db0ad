"""Command line: ``python -m nmrcalc <command> …`` — one command per op.

The commands, their flags and their ``--help`` come from the ops' declarations
(``nmrcalc.api.params``): a key ``min_MHz`` is the flag ``--min-mhz``, a list of
objects is a repeatable flag whose text fills the item keys in the declared
order (``--group 2H,3,"19.3 Hz"``; ``key=value`` parts name a key), a map is a
repeatable ``ISOTOPE=VALUE``.  Every command builds a request, calls
:func:`nmrcalc.api.handle` and prints readable text, or the raw response with
``--json``.  ``api`` reads one JSON request on standard input.

Conventions: results go to standard output; input errors go to standard error
with exit status 2 (with ``--json`` the error response is printed on standard
output, as data, still with status 2; ``api`` exits 2 when the response has
``"ok": false``).  ``--version`` prints the version.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import TextIO

from nmrcalc import __version__
from nmrcalc.api import OPS, handle, handle_json
from nmrcalc.api.params import Op, Param


def _flag_name(p: Param) -> str:
    if p.cli and p.cli.startswith("-"):
        return p.cli
    return "--" + p.key.lower().replace("_", "-")


def _help(p: Param) -> str:
    text = p.help or p.label
    if p.kind == "quantity" and p.unit:
        from nmrcalc.units import default_unit
        text += f" (bare numbers in {default_unit(p.unit)})"
    if p.default not in (None, False) and p.kind != "objects":
        text += f"; default {p.default}"
    if p.choices:
        text += f"; one of {', '.join(map(str, p.choices))}"
    if p.file:
        text += " — a file name, or - for standard input"
    return text.replace("%", "%%")


def _add_param(parser: argparse.ArgumentParser, p: Param) -> None:
    if p.cli == "-" or p.kind == "value":
        return
    if p.cli and not p.cli.startswith("-"):
        parser.add_argument(p.key, metavar=p.cli, help=_help(p), nargs=None if p.required else "?")
        return
    names = [_flag_name(p), *p.cli_aliases]
    if p.kind == "flag":
        parser.add_argument(*names, dest=p.key, action=argparse.BooleanOptionalAction, default=None, help=_help(p))
    elif p.kind in ("objects", "map"):
        order = p.cli_sep.join(p.cli_order) if p.cli_order else "KEY=VALUE,…"
        order += ",…" if p.cli_sep != "," else ""
        meta = "ISOTOPE=VALUE" if p.kind == "map" else order.upper().replace("_", "-")
        parser.add_argument(*names, dest=p.key, action="append", metavar=meta, help=_help(p) + " (repeat the flag)")
    elif p.kind == "object":
        meta = ",".join(p.cli_order).upper().replace("_", "-")
        parser.add_argument(*names, dest=p.key, metavar=meta, help=_help(p) + " (parts in this order, or KEY=VALUE)")
    elif p.kind == "integer":
        parser.add_argument(*names, dest=p.key, type=int, help=_help(p))
    elif p.kind == "number":
        parser.add_argument(*names, dest=p.key, type=float, help=_help(p))
    else:
        parser.add_argument(*names, dest=p.key, help=_help(p))


def _declarations() -> dict[str, Op]:
    return {name: OPS.declaration(name) for name in OPS}


def commands() -> dict[str, Op]:
    """CLI command → the op it runs (ops declared with ``cli="-"`` have none)."""
    return {(op.cli or op.name): op for op in _declarations().values() if op.cli != "-"}


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="python -m nmrcalc", description="Offline NMR calculator.")
    parser.add_argument("--version", action="version", version=f"nmrcalc {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    for name, op in commands().items():
        p = sub.add_parser(name, help=op.summary, description=op.summary)
        for param in op.params:
            _add_param(p, param)
        p.add_argument("--json", action="store_true", help="print the raw JSON response")
    sub.add_parser("api", help="read one JSON request on standard input, print the JSON response")
    sub.add_parser("describe", help="every op and its parameters (JSON; --markdown for the README table)"
                   ).add_argument("--markdown", action="store_true", help="the README's op table")
    sub.add_parser("demo", help="a worked example from an invented lab").add_argument(
        "--json", action="store_true", help="print the raw JSON responses")
    return parser


# ---------- turning parsed arguments into a request ----------

def _scalar(p: Param, text: str) -> object:
    """A CLI text as the JSON value the declared kind takes."""
    if p.kind == "integer":
        try:
            return int(text)
        except ValueError:
            return text.strip()
    if p.kind == "number":
        try:
            return float(text)
        except ValueError:
            return text.strip()
    return text.strip()


def _item(p: Param, text: str) -> dict:
    """One ``--group``/``--spin``/``--residual``… text → an object, by the declared ``cli_order``."""
    items = {q.key: q for q in p.items}
    out: dict = {}
    for slot, part in enumerate(text.split(p.cli_sep)):
        key, eq, value = part.partition("=")
        if eq and key.strip() in items:
            key = key.strip()
        else:
            if slot >= len(p.cli_order):
                out.setdefault("_extra", []).append(part)
                continue
            key, value = p.cli_order[slot], part
        q = items[key]
        if q.kind == "pair":
            out.setdefault(key, []).append(_pair_member(value))
        else:
            out[key] = _scalar(q, value)
    extra = out.pop("_extra", None)
    if extra:
        raise ValueError(f"{p.key}: '{text}' has more parts than {','.join(p.cli_order)}")
    return out


def _pair_member(text: str) -> int | str:
    text = text.strip()
    return int(text) if text.lstrip("-").isdigit() else text


class FileError(Exception):
    """A file named on the command line could not be read (the flag's key and the reason)."""


def _read_file(key: str, name: str) -> str:
    if name == "-":
        return sys.stdin.read()
    try:
        with open(name, encoding="utf-8", errors="replace") as handle_:
            return handle_.read()
    except OSError as e:
        raise FileError(f"error [{key}]: cannot read {name}: {e.strerror}") from None


def request_from_args(op: Op, args: argparse.Namespace) -> dict:
    """The request a command line asks for (only the keys given)."""
    request: dict = {"op": op.name}
    for p in op.params:
        value = getattr(args, p.key, None)
        if value is None:
            continue
        if p.kind == "objects":
            texts = [t for text in value for t in (text.split(",") if p.cli_sep != "," else [text])]
            value = [_item(p, text) for text in texts if text.strip()]
        elif p.kind == "object":
            value = _item(p, value)
        elif p.kind == "map":
            pairs = [text.split("=", 1) for text in value]
            bad = [text for text, pair in zip(value, pairs) if len(pair) != 2]
            if bad:
                raise ValueError(f"{p.key}: '{bad[0]}' is not ISOTOPE=VALUE")
            value = {k.strip(): v.strip() for k, v in pairs}
        elif p.kind in ("quantities", "numbers", "texts"):
            value = [v.strip() for v in value.split(",") if v.strip()]
        elif p.file:
            value = _read_file(p.key, value)
        request[p.key] = value
    return request


# ---------- readable text ----------

def _fmt(value: object) -> str:
    if isinstance(value, float):
        return f"{value:.6g}" if abs(value) < 1e-3 or abs(value) >= 1e7 else f"{value:.6f}".rstrip("0").rstrip(".")
    if value is None:
        return "—"
    return str(value)


def render_error(response: dict) -> str:
    err = response["error"]
    where = f" [{err['field']}]" if err.get("field") else ""
    return f"error{where}: {err['message']}"


def render(response: dict) -> str:
    """A readable text form of a result: scalars as lines, lists of records as tables."""
    lines = []
    for key, value in response["result"].items():
        if isinstance(value, list) and value and isinstance(value[0], dict):
            cols = list(value[0])
            lines.append(f"{key}:")
            cells = [[_fmt(row.get(c)) for c in cols] for row in value]
            widths = [max(len(c), *(len(r[i]) for r in cells)) for i, c in enumerate(cols)]
            lines.append("  " + "  ".join(c.ljust(w) for c, w in zip(cols, widths)))
            lines += ["  " + "  ".join(x.ljust(w) for x, w in zip(r, widths)) for r in cells]
        elif isinstance(value, dict):
            lines.append(f"{key}: " + ", ".join(f"{k}={_fmt(v)}" for k, v in value.items()))
        else:
            lines.append(f"{key}: {_fmt(value) if not isinstance(value, list) else ', '.join(map(_fmt, value))}")
    lines += [f"note: {w}" for w in response["warnings"]]
    return "\n".join(lines)


def render_multiplet(response: dict) -> str:
    r = response["result"]
    out = [f"label: {r['label']}"]
    if r["ratio"]:
        out.append(f"ratio: {r['ratio']}")
    for iso in r.get("isotopologues", []):
        out.append(f"isotopologue {iso['label']}: share {iso['share'] * 100:.4g} %, "
                   f"{iso['multiplet']} ({iso['ratio']})")
    out.append(("  ppm        " if r["center_ppm"] is not None else "  ") + "Hz           intensity")
    for line in r["lines"]:
        ppm = f"{line['ppm']:<10.5f} " if "ppm" in line else ""
        out.append(f"  {ppm}{line['Hz']:<12.3f} {line['intensity']:.6f}")
    out += [f"note: {w}" for w in response["warnings"]]
    return "\n".join(out)


def render_spin_system(response: dict) -> str:
    r = response["result"]
    out = []
    for block in r.get("fields", [r]):
        out.append(f"at {block['spectrometer_MHz']:g} MHz ({block['field_T']:.4f} T):")
        for c in block["checks"]:
            verdict = "first order" if c["first_order"] else "second order"
            when = c["first_order_from_MHz"]
            hint = f"; reaches 10 at {when:.0f} MHz" if when and not c["first_order"] else ""
            a, b = c.get("labels") or c["pair"]
            out.append(f"  spins {a}–{b}: Δν/J = {c['delta_nu_over_J']:.3g} ({verdict}{hint})")
        out.append("  ppm        Hz           intensity")
        out += [f"  {l['ppm']:<10.5f} {l['Hz']:<12.3f} {l['intensity']:.6f}" for l in block["lines"]]
    out += [f"note: {w}" for w in response["warnings"]]
    return "\n".join(out)


def render_identify(response: dict) -> str:
    r = response["result"]
    ppm = f" ({r['center_ppm']:.5f} ppm)" if r["center_ppm"] is not None else ""
    out = [f"centre: {r['center_Hz']:.3f} Hz{ppm}; tolerance {r['tolerance_Hz']:.3g} Hz; "
           f"{len(r['observed'])} lines"]
    for rank, cand in enumerate(r["candidates"], start=1):
        parts = [f"{g['count']} × {g.get('partner') or 'I=' + g['spin']} J {g['J_Hz']:.2f} Hz" for g in cand["groups"]]
        out.append(f"{rank}. {cand['label']}  (score {cand['score']:.3f})  " + ("; ".join(parts) or "no coupling"))
    out += [f"note: {n}" for n in r["notes"] + response["warnings"]]
    return "\n".join(out)


def _magnet_line(r: dict) -> str:
    return f"magnet {r['field_T']:.5f} T (¹H {_fmt(r['proton_MHz'])} MHz), {r['scale']} reference scale"


def _difference(row: dict) -> str:
    if row["difference_ppm"] is None:
        return "—"
    return f"{row['difference_ppm']:.{row['difference_decimals']}f}"


def render_frequency(response: dict) -> str:
    """``freq``: the 0 ppm (Ξ) frequency first, the bare nucleus second, their difference to the
    precision the tabulated values support; the all-nuclide table with the same columns."""
    r = response["result"]
    out = [_magnet_line(r)]
    if "table" in r:
        cols = ["nuclide", "spin", "abundance %", "0 ppm (MHz)", "bare nucleus (MHz)", "0 ppm − bare (ppm)",
                "signal vs ¹³C"]
        cells = [[row["symbol"], row["spin"], _fmt(row["abundance_percent"]), _fmt(row["reference_MHz"]),
                  _fmt(row["larmor_MHz"]), _difference(row), f"{row['receptivity_C']:.3g}"] for row in r["table"]]
        widths = [max(len(c), *(len(x[i]) for x in cells)) for i, c in enumerate(cols)]
        out.append("  ".join(c.ljust(w) for c, w in zip(cols, widths)))
        out += ["  ".join(x.ljust(w) for x, w in zip(row, widths)) for row in cells]
    else:
        zero = f"{_fmt(r['reference_MHz'])} MHz" if r["reference_MHz"] is not None else "— (no Ξ tabulated)"
        out += [f"{r['symbol']} (spin {r['spin']}, natural abundance {_fmt(r['abundance_percent'])} %)",
                f"  0 ppm frequency (Ξ)      {zero}",
                f"  bare nucleus (Larmor)    {_fmt(r['larmor_MHz'])} MHz",
                f"  0 ppm − bare nucleus     {_difference(r)} ppm",
                f"  signal vs ¹³C at natural abundance  {r['receptivity_C']:.3g}"]
    out += [f"note: {r['difference_note']}"] + [f"note: {w}" for w in response["warnings"]]
    return "\n".join(out)


# ---- measured spectra (spectrum helper's block; the lead folds it into the derived CLI) ----

def render_spectrum(response: dict) -> str:
    """``spectrum FILE``: what was read and checked, then the peaks picked at 5 σ (not every point)."""
    r = response["result"]
    out = [f"title: {r['title']}", f"nucleus: {_fmt(r['nucleus'])}; observe: {_fmt(r['observe_MHz'])} MHz",
           f"{r['npoints']} points, x from {_fmt(r['first_x'])} to {_fmt(r['last_x'])} {r['x_unit']}"]
    if "first_ppm" in r:
        out.append(f"ppm scale: {_fmt(r['first_ppm'])} to {_fmt(r['last_ppm'])}")
    out += [f"checked: {c}" for c in r["checks"]]
    if r["y"]:
        picked = handle({"op": "pick_peaks", "first_x": r["first_x"], "last_x": r["last_x"], "x_unit": r["x_unit"],
                         "y": r["y"], **({"observe_MHz": r["observe_MHz"]} if r["observe_MHz"] else {})})
        if picked["ok"]:
            p = picked["result"]
            out.append(f"peaks above 5 σ (noise σ = {p['noise']:.4g}): {len(p['peaks'])}")
            out.append(f"  position ({r['x_unit']})  height        width (Hz)  integral")
            out += [f"  {q['position']:<14.6g} {q['height']:<13.6g} {q['width_Hz']:<11.3g} {q['integral']:.6g}"
                    for q in p["peaks"]]
        else:
            out.append(f"peaks: {render_error(picked)}")
    else:
        out.append("  position        height")
        out += [f"  {q['position']:<14.6g} {q['height']:.6g}" for q in r.get("peaks", [])]
    out += [f"note: {w}" for w in response["warnings"]]
    return "\n".join(out)


# ops with a text form of their own
RENDER = {"frequency": render_frequency, "multiplet": render_multiplet, "spin_system": render_spin_system,
          "identify": render_identify,
          "read_spectrum": render_spectrum}


DEMO = [
    ("The Harbourside teaching lab's magnet reads 400.13 MHz for 1H. Where is 29Si?",
     {"op": "frequency", "nucleus": "29Si", "spectrometer": "400.13 MHz"}),
    ("Sample KX-7, a made-up deuterated intermediate, shows J(C,D) = 19.3 Hz. J(C,H) in the protio form?",
     {"op": "scale_coupling", "J": "19.3 Hz", "from": "2H", "to": "1H", "partner": "13C"}),
    ("How much weaker is 15N than 13C at natural abundance?",
     {"op": "sensitivity", "nucleus": "15N", "relative_to": "13C"}),
    ("The NMR quantum at 500 MHz beside a 254 nm lamp photon:",
     {"op": "energy", "nucleus": "1H", "spectrometer": "500 MHz", "temperature": "298 K", "wavelength": "254 nm"}),
]


def _emit(text: str, stream: TextIO) -> None:
    """Print ``text``; characters the stream cannot encode are shown as escapes, never a traceback."""
    encoding = getattr(stream, "encoding", None) or "utf-8"
    try:
        print(text.encode(encoding, "backslashreplace").decode(encoding, "replace"), file=stream)
    except BrokenPipeError:  # the reader (head, less) stopped early: not an error of ours
        sys.stderr.close()


def _read_stdin() -> str | None:
    if hasattr(sys.stdin, "buffer"):
        data = sys.stdin.buffer.read()
    else:  # a text stream put in by a caller
        data = sys.stdin.read().encode("utf-8", "surrogatepass")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as e:
        _emit(f"error: standard input is not UTF-8 text (byte {e.start}).", sys.stderr)
        return None


def _stray_hint(op: Op, token: str, given: argparse.Namespace) -> str:
    """What a stray command-line word probably meant: the flag of a parameter not yet given that reads it."""
    import difflib

    if token.startswith("-"):
        flags = [n for p in op.params if p.cli != "-" and p.kind != "value" and not (p.cli and p.cli[0] != "-")
                 for n in (_flag_name(p), *p.cli_aliases)]
        close = difflib.get_close_matches(token.split("=")[0], flags, n=1)
        return f"did you mean {close[0]}?" if close else f"see python -m nmrcalc {op.cli or op.name} --help"
    for p in op.params:
        if p.cli == "-" or p.kind not in ("nuclide", "quantity") or (p.cli and not p.cli.startswith("-")) \
                or getattr(given, p.key, None) is not None:
            continue
        probe = handle({"op": "nuclide", "query": token}) if p.kind == "nuclide" else None
        if probe is not None and probe["ok"]:
            return f"did you mean {_flag_name(p)} {token}?"
        if p.kind == "quantity" and p.unit:
            from nmrcalc.units import parse_quantity
            try:
                parse_quantity(token, p.unit, p.key)
            except ValueError:
                continue
            return f"did you mean {_flag_name(p)} '{token}'?"
    return f"see python -m nmrcalc {op.cli or op.name} --help"


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args, stray = parser.parse_known_args(argv)
    if stray:
        op = commands().get(args.command)
        if op is None:  # api, describe, demo: argparse's own message (it exits with status 2)
            parser.parse_args(argv)
            return 2
        _emit(f"python -m nmrcalc {args.command}: '{stray[0]}' was not understood; {_stray_hint(op, stray[0], args)}",
              sys.stderr)
        return 2
    if args.command == "api":
        text = _read_stdin()
        if text is None:
            return 2
        out = handle_json(text)
        _emit(out, sys.stdout)
        return 0 if json.loads(out)["ok"] else 2
    if args.command == "describe":
        from nmrcalc.api.params import describe, markdown_table
        decl = _declarations()
        _emit(markdown_table(decl) if args.markdown else json.dumps(describe(decl), indent=2, ensure_ascii=False),
              sys.stdout)
        return 0
    if args.command == "demo":
        responses = [(question, handle(request)) for question, request in DEMO]
        if args.json:
            _emit(json.dumps([{"question": q, "response": r} for q, r in responses], indent=2, ensure_ascii=False),
                  sys.stdout)
        else:
            for question, response in responses:
                _emit(f"# {question}\n{render(response)}\n", sys.stdout)
        return 0 if all(r["ok"] for _, r in responses) else 2
    op = commands()[args.command]
    try:
        request = request_from_args(op, args)
    except FileError as e:
        _emit(str(e), sys.stderr)
        return 2
    except ValueError as e:
        _emit(f"error: {e}", sys.stderr)
        return 2
    response = handle(request)
    if args.json:
        _emit(json.dumps(response, indent=2, ensure_ascii=False), sys.stdout)  # data: stdout, failed or not
    elif response["ok"]:
        _emit(RENDER.get(op.name, render)(response), sys.stdout)
    else:
        _emit(render_error(response), sys.stderr)
    return 0 if response["ok"] else 2
