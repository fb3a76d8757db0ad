"""Command line: ``python -m nmrcalc <command> …`` — one readable command per op.

Every command builds a request and calls :func:`nmrcalc.api.handle`; ``--json``
prints the raw response.  ``python -m nmrcalc api`` reads one JSON request on
standard input and prints the JSON response.
"""

from __future__ import annotations

import argparse
import json
import sys

from nmrcalc.api import handle, handle_json

# command → (op, [(argument, request key, help)])
COMMANDS = {
    "nuclide": ("nuclide", [("query", "query", "nuclide, e.g. 13C, C-13, carbon-13, D")],
                "spin, magnetogyric ratio, abundance, Ξ and receptivity of one nuclide"),
    "nuclides": ("nuclides", [("--search", "search", "filter text")], "list the magnetic nuclides"),
    "freq": ("frequency", [("--nucleus", "nucleus", "nuclide (omit for the all-nuclide table)"),
                           ("--spectrometer", "spectrometer", "1H frequency, e.g. '400.13 MHz'"),
                           ("--field", "field", "B0, e.g. '9.4 T' or '94000 G'"),
                           ("--max-mhz", "max_MHz", "table: highest frequency"),
                           ("--min-mhz", "min_MHz", "table: lowest frequency")],
             "Larmor and 0-ppm reference frequencies at a field"),
    "ppm": ("ppm_hz", [("--nucleus", "nucleus", "observed nuclide"),
                       ("--spectrometer", "spectrometer", "1H frequency"), ("--field", "field", "B0"),
                       ("--ppm", "ppm", "shift in ppm"), ("--hz", "Hz", "offset from 0 ppm in Hz"),
                       ("--carrier-ppm", "carrier_ppm", "carrier position")],
            "convert between ppm and Hz"),
    "scale": ("scale_coupling", [("J", "J", "measured coupling, e.g. '19.3 Hz'"),
                                 ("--from", "from", "isotope in the measured compound, e.g. 2H"),
                                 ("--to", "to", "isotope to swap in, e.g. 1H"),
                                 ("--partner", "partner", "the other coupled nucleus, for K")],
              "scale a coupling to another isotopologue (J′ = J γ′/γ)"),
    "energy": ("energy", [("--nucleus", "nucleus", "nuclide"), ("--spectrometer", "spectrometer", "1H frequency"),
                          ("--field", "field", "B0"), ("--temperature", "temperature", "e.g. '298 K'"),
                          ("--wavelength", "wavelength", "photon, e.g. '254 nm'"),
                          ("--wavenumber", "wavenumber", "photon, e.g. '1700 cm-1'")],
               "transition energy, populations, and a photon for comparison"),
    "sensitivity": ("sensitivity", [("nucleus", "nucleus", "nuclide"),
                                    ("--relative-to", "relative_to", "reference nuclide (default 13C)"),
                                    ("--enrichment", "enrichment_percent", "enrichment in percent")],
                    "receptivity and time factor for equal signal-to-noise"),
}


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="python -m nmrcalc", description="Offline NMR calculator.")
    sub = parser.add_subparsers(dest="command", required=True)
    for name, (_, args, help_text) in COMMANDS.items():
        p = sub.add_parser(name, help=help_text, description=help_text)
        for flag, key, h in args:
            if flag.startswith("-"):
                p.add_argument(flag, dest=key, help=h)
            else:
                p.add_argument(key, metavar=flag, help=h)
        p.add_argument("--json", action="store_true", help="print the raw JSON response")
    m = sub.add_parser("multiplet", help="first-order multiplet from partner groups",
                       description="first-order multiplet; a group is PARTNER,COUNT,J such as '2H,3,19.3 Hz', "
                                   "'B,1,81 Hz' (an element: its isotope mixture) or 'spin=1,2,7 Hz'")
    m.add_argument("--observe", required=True, help="observed nuclide, e.g. 13C")
    m.add_argument("--group", action="append", default=[], help="PARTNER,COUNT,J (repeat for several groups)")
    m.add_argument("--abundance", action="append", default=[], help="ISOTOPE=PERCENT, e.g. 2H=99.8")
    m.add_argument("--spectrometer", help="1H frequency, e.g. '500 MHz'")
    m.add_argument("--center", help="centre in ppm")
    m.add_argument("--json", action="store_true", help="print the raw JSON response")
    ss = sub.add_parser("spins", help="exact (second-order) spectrum of a small coupled spin system",
                        description="exact spectrum; a spin is NUCLEUS,SHIFT_PPM[,COUNT] and a coupling I,J,HZ "
                                    "with spins numbered from 0")
    ss.add_argument("--observe", default="1H", help="observed nuclide (default 1H)")
    ss.add_argument("--spin", action="append", default=[], help="NUCLEUS,SHIFT_PPM[,COUNT], e.g. 1H,7.10")
    ss.add_argument("--coupling", action="append", default=[], help="I,J,HZ, e.g. 0,1,8.0")
    ss.add_argument("--spectrometer", help="1H frequency, e.g. '400 MHz'")
    ss.add_argument("--fields", help="several 1H frequencies, comma separated, e.g. 300,600,900")
    ss.add_argument("--json", action="store_true", help="print the raw JSON response")
    ident = sub.add_parser("identify", help="find first-order coupling partners that explain measured lines",
                           description="rank first-order explanations of measured lines; give --lines "
                                       "'POS:INT,POS:INT,…' or --peaklist FILE ('-' for standard input)")
    ident.add_argument("--lines", help="positions and intensities, e.g. '1224:1,1231:3,1238:3,1245:1'")
    ident.add_argument("--peaklist", help="a peak-list file: one peak a line, position and intensity")
    ident.add_argument("--unit", help="Hz or ppm, for positions without a unit")
    ident.add_argument("--observe", help="observed nuclide (default 1H)")
    ident.add_argument("--spectrometer", help="1H frequency, e.g. '400 MHz' (needed for ppm)")
    ident.add_argument("--partners", help="allowed partners, comma separated, e.g. 'H,2H,B' or '1/2,1'")
    ident.add_argument("--tolerance", help="position tolerance, e.g. '0.5 Hz'")
    ident.add_argument("--max-groups", dest="max_groups", type=int, help="at most this many groups (1–3)")
    ident.add_argument("--top", type=int, help="how many candidates to list (default 5)")
    ident.add_argument("--json", action="store_true", help="print the raw JSON response")
    sub.add_parser("api", help="read one JSON request on stdin, print the JSON response")
    sub.add_parser("demo", help="a worked example from an invented lab")
    return parser


def _fmt(value) -> str:
    if isinstance(value, float):
        return f"{value:.6g}" if abs(value) < 1e-3 or abs(value) >= 1e7 else f"{value:.6f}".rstrip("0").rstrip(".")
    if value is None:
        return "—"
    return str(value)


def render(response: dict) -> str:
    """A readable text form of a response: scalars as lines, lists of records as tables."""
    if not response["ok"]:
        err = response["error"]
        where = f" [{err['field']}]" if err.get("field") else ""
        return f"error{where}: {err['message']}"
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


def multiplet_request(args) -> dict:
    """Turn ``--group PARTNER,COUNT,J`` and ``--abundance ISO=PCT`` into a multiplet request."""
    groups = []
    for text in args.group:
        partner, _, rest = text.partition(",")
        count, _, J = rest.partition(",")
        key, value = ("spin", partner[5:]) if partner.startswith("spin=") else ("partner", partner)
        groups.append({key: value.strip(), "count": int(count) if count.strip().isdigit() else count, "J": J.strip()})
    abundance = dict(item.split("=", 1) for item in args.abundance if "=" in item)
    request = {"op": "multiplet", "observe": args.observe, "groups": groups}
    for key in ("spectrometer", "center"):
        if getattr(args, key):
            request[key] = getattr(args, key)
    if abundance:
        request["abundance"] = abundance
    return request


def render_multiplet(response: dict) -> str:
    if not response["ok"]:
        return render(response)
    r = response["result"]
    out = [f"label: {r['label']}"]
    if r["ratio"]:
        out.append(f"ratio: {r['ratio']}")
    for iso in r.get("isotopologues", []):
        out.append(f"isotopologue {iso['label']}: share {iso['share'] * 100:.4g} %, {iso['multiplet']} ({iso['ratio']})")
    out.append(("  ppm        " if r["center_ppm"] is not None else "  ") + "Hz           intensity")
    for line in r["lines"]:
        ppm = f"{line['ppm']:<10.5f} " if "ppm" in line else ""
        out.append(f"  {ppm}{line['Hz']:<12.3f} {line['intensity']:.6f}")
    out += [f"note: {w}" for w in response["warnings"]]
    return "\n".join(out)


def _number(text: str):
    try:
        return int(text)
    except ValueError:
        return text.strip()


def spin_system_request(args) -> dict:
    spins = []
    for text in args.spin:
        parts = [p.strip() for p in text.split(",")]
        spin = {"nucleus": parts[0], "shift": parts[1] if len(parts) > 1 else ""}
        if len(parts) > 2:
            spin["count"] = _number(parts[2])
        spins.append(spin)
    couplings = []
    for text in args.coupling:
        parts = [p.strip() for p in text.split(",")]
        couplings.append({"between": [_number(p) for p in parts[:2]], "J": parts[2] if len(parts) > 2 else ""})
    request = {"op": "spin_system", "observe": args.observe, "spins": spins, "couplings": couplings}
    if args.fields:
        request["fields"] = [f.strip() for f in args.fields.split(",")]
    elif args.spectrometer:
        request["spectrometer"] = args.spectrometer
    return request


def render_spin_system(response: dict) -> str:
    if not response["ok"]:
        return render(response)
    r = response["result"]
    out = []
    for block in r.get("fields", [r]):
        out.append(f"at {block['spectrometer_MHz']:g} MHz ({block['field_T']:.4f} T):")
        for c in block["checks"]:
            verdict = "first order" if c["first_order"] else "second order"
            when = c["first_order_from_MHz"]
            hint = f"; reaches 10 at {when:.0f} MHz" if when and not c["first_order"] else ""
            out.append(f"  spins {c['pair'][0]}–{c['pair'][1]}: Δν/J = {c['delta_nu_over_J']:.3g} ({verdict}{hint})")
        out.append("  ppm        Hz           intensity")
        out += [f"  {l['ppm']:<10.5f} {l['Hz']:<12.3f} {l['intensity']:.6f}" for l in block["lines"]]
    out += [f"note: {w}" for w in response["warnings"]]
    return "\n".join(out)


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


def identify_request(args) -> dict:
    """Turn ``--lines POS:INT,…`` or ``--peaklist FILE`` and the options into an identify request."""
    request = {"op": "identify"}
    if args.lines:
        lines = []
        for item in args.lines.split(","):
            pos, _, intensity = item.partition(":")
            lines.append({"position": pos.strip(), "intensity": _number(intensity.strip()) if intensity.strip() else None})
        request["lines"] = lines
    if args.peaklist:
        if args.peaklist == "-":
            request["peaklist"] = sys.stdin.read()
        else:
            with open(args.peaklist, encoding="utf-8", errors="replace") as handle_:
                request["peaklist"] = handle_.read()
    if args.partners:
        request["partners"] = [p.strip() for p in args.partners.split(",") if p.strip()]
    for key in ("unit", "observe", "spectrometer", "tolerance", "max_groups", "top"):
        if getattr(args, key) is not None:
            request[key] = getattr(args, key)
    return request


def render_identify(response: dict) -> str:
    if not response["ok"]:
        return render(response)
    r = response["result"]
    ppm = f" ({r['center_ppm']:.5f} ppm)" if r["center_ppm"] is not None else ""
    out = [f"centre: {r['center_Hz']:.3f} Hz{ppm}; tolerance {r['tolerance_Hz']:.3g} Hz; "
           f"{len(r['observed'])} lines"]
    for rank, cand in enumerate(r["candidates"], start=1):
        parts = [f"{g['count']} × {g.get('partner') or 'I=' + g['spin']} J {g['J_Hz']:.2f} Hz" for g in cand["groups"]]
        out.append(f"{rank}. {cand['label']}  (score {cand['score']:.3f})  " + ("; ".join(parts) or "no coupling"))
    out += [f"note: {n}" for n in r["notes"] + response["warnings"]]
    return "\n".join(out)


# commands with their own request builder and text form: command → (build(args), render(response))
SPECIAL = {"multiplet": (multiplet_request, render_multiplet), "spins": (spin_system_request, render_spin_system),
           "identify": (identify_request, render_identify)}


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    if args.command == "api":
        print(handle_json(sys.stdin.read()))
        return 0
    if args.command == "demo":
        for question, request in DEMO:
            print(f"# {question}\n{render(handle(request))}\n")
        return 0
    if args.command in SPECIAL:
        build, show = SPECIAL[args.command]
        try:
            request = build(args)
        except OSError as e:  # identify --peaklist FILE that cannot be read
            print(f"error [peaklist]: cannot read {args.peaklist}: {e.strerror}")
            return 2
    else:
        op, arg_spec, _ = COMMANDS[args.command]
        request = {"op": op}
        for _, key, _ in arg_spec:
            value = getattr(args, key)
            if value is not None:
                request[key] = value
        show = render
    response = handle(request)
    print(json.dumps(response, indent=2, ensure_ascii=False) if args.json else show(response))
    return 0 if response["ok"] else 2
    if args.command == "identify":
        try:
            request = identify_request(args)
        except OSError as e:
            print(f"error [peaklist]: cannot read {args.peaklist}: {e.strerror}")
            return 2
        response = handle(request)
        print(json.dumps(response, indent=2, ensure_ascii=False) if args.json else render_identify(response))
        return 0 if response["ok"] else 2
    if args.command == "spins":
        response = handle(spin_system_request(args))
        print(json.dumps(response, indent=2, ensure_ascii=False) if args.json else render_spin_system(response))
        return 0 if response["ok"] else 2
    op, arg_spec, _ = COMMANDS[args.command]
    request = {"op": op}
    for _, key, _ in arg_spec:
        value = getattr(args, key)
        if value is not None:
            request[key] = value
    response = handle(request)
    print(json.dumps(response, indent=2, ensure_ascii=False) if args.json else render(response))
    return 0 if response["ok"] else 2
