"""Reading JCAMP-DX NMR spectra (versions 4.24, 5.x, 6.0), pure Python.

Sources: McDonald & Wilks, "JCAMP-DX: a standard form for exchange of infrared
spectra in computer readable form", Appl. Spectrosc. 42 (1988) 151 (labelled
data records, AFFN and the ASDF compression: SQZ, DIF, DUP, PAC; the X check
and the DIF Y check); Davies & Lampen, "JCAMP-DX for NMR", Appl. Spectrosc. 47
(1993) 1093 (``.OBSERVE FREQUENCY``, ``.OBSERVE NUCLEUS``, ``.SHIFT REFERENCE``,
``NTUPLES`` pages); Lampen et al., "JCAMP-DX for mass spectrometry", Appl.
Spectrosc. 48 (1994) 1545 (compound files: ``BLOCKS``, ``LINK``).

ASDF characters (one digit each, the rest of the number follows in plain digits)::

    SQZ  @ A B C D E F G H I  =  0 1 … 9    a b c d e f g h i  =  −1 … −9   (a new value)
    DIF  % J K L M N O P Q R  =  0 1 … 9    j k l m n o p q r  =  −1 … −9   (value = previous + this)
    DUP  S T U V W X Y Z s    =  1 … 9                                   (repeat the previous token n−1 times)
    PAC  + or − starts a new value; AFFN: plain decimal numbers separated by blanks or commas

``(X++(Y..Y))`` lines: an abscissa (in units of XFACTOR) then ordinates at
successive points.  X check: each line's abscissa must be that of its first
point, x_k = FIRSTX + k (LASTX − FIRSTX)/(NPOINTS − 1), within half a point
spacing (or the rounding of the written abscissa, if that is coarser), so one
point missing or extra fails.  Y check: when a line ends
in DIF form, the next line starts by repeating that last ordinate (it is
compared, then dropped).  Scaled values: x = X · XFACTOR, y = Y · YFACTOR.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterator
from dataclasses import dataclass, field
from itertools import accumulate
from typing import Any, Literal, overload

from nmrcalc.errors import InputError

MAX_POINTS = 4_194_304
MAX_ORDINATE = 1e100  # any intensity unit, but sums of squares stay finite
_SQZ = {c: d for d, c in enumerate("@ABCDEFGHI")} | {c: -d for d, c in enumerate("abcdefghi", 1)}
_DIF = {c: d for d, c in enumerate("%JKLMNOPQR")} | {c: -d for d, c in enumerate("jklmnopqr", 1)}
_DUP = {c: d for d, c in enumerate("STUVWXYZs", 1)}
# Decoding is done with C-level string operations (DUP counts expanded by slicing, one str.translate
# per line, then float() over the pieces), for speed in the browser (benchmark.py --only spectrum):
# "|" starts a new (absolute) value, " " starts a difference; separators and signs start a new value
# too (empty pieces are skipped).
_ASDF_TABLE = str.maketrans({**{c: f"|{d}" for c, d in _SQZ.items()}, **{c: f" {d}" for c, d in _DIF.items()},
                             **dict.fromkeys(" \t\r\n\v\f,;", "|"), "+": "|+", "-": "|-"})
_DUP_COUNT = re.compile(r"[S-Zs][0-9]*")
_TOKEN_START = frozenset("@ABCDEFGHIabcdefghi%JKLMNOPQRjklmnopqr+-")
_ALLOWED = re.compile(r"[0-9@A-Za-s%+\-.\s,;]*")
_EXPONENT = re.compile(r"[0-9.][Ee][+-][0-9]")  # E then a sign; E then a digit is SQZ 5
_OTHER_ASDF = re.compile(r"[@A-DF-Ia-df-i%J-Rj-rS-Zs]")
_ANY_DUP = re.compile(r"[S-Zs]")
_LABEL = re.compile(r"^\s*##([^=]*)=(.*)$")


@dataclass
class Spectrum:
    """One NMR spectrum as read: scaled ordinates at evenly spaced x, or a peak table."""

    title: str
    x_unit: str                      # "Hz" or "ppm"
    first_x: float
    last_x: float
    y: list[float]
    nucleus: str | None = None
    observe_MHz: float | None = None
    imaginary: list[float] | None = None
    peaks: list[tuple[float, float]] | None = None   # (x, y) of a peak table
    shift_reference: dict | None = None              # {"point": k (1-based), "shift_ppm": δ} from the file
    checks: list[str] = field(default_factory=list)

    @property
    def npoints(self) -> int:
        return len(self.peaks) if self.peaks is not None else len(self.y)


_Record = tuple[str, str, int, list[tuple[int, str]]]  # label, value, line number, data lines
_Meta = dict[str, tuple[str, int]]  # label: (value, line number)


def _norm(label: str) -> str:
    """Label names ignore case, blanks, '-', '/', '_' (the standard's rule)."""
    return re.sub(r"[\s\-/_]", "", label).upper()


def _strip_comment(text: str) -> str:
    i = text.find("$$")
    return text if i < 0 else text[:i]


def _records(text: str) -> Iterator[_Record]:
    """Yield (label, value, line number, data lines [(line number, text)]) in file order."""
    current: _Record | None = None
    for n, raw in enumerate(text.splitlines(), 1):
        m = _LABEL.match(raw)
        if m:
            if current:
                yield current
            current = (_norm(m.group(1)), _strip_comment(m.group(2)).strip(), n, [])
        elif current is not None:
            current[3].append((n, raw))
    if current:
        yield current


def _blocks(text: str) -> list[list[_Record]]:
    """Split into blocks (TITLE … END); a compound LINK block's children are blocks of their own."""
    blocks: list[list[_Record]] = []
    stack: list[list[_Record]] = []
    for rec in _records(text):
        if rec[0] == "TITLE":
            stack.append([])
            blocks.append(stack[-1])
        if not stack:
            continue
        stack[-1].append(rec)
        if rec[0] == "END":
            stack.pop()
    if not blocks:
        raise InputError("This is not a JCAMP-DX file: no ##TITLE= record.", "text")
    return blocks


def _num(text: str, label: str, line: int) -> float:
    try:
        x = float(text.split()[0].rstrip(","))
    except (ValueError, IndexError):
        raise InputError(f"Line {line}: ##{label}= needs a number, not '{text[:30]}'.", "text") from None
    if not math.isfinite(x):
        raise InputError(f"Line {line}: ##{label}= is not finite.", "text")
    return x


def _expand_dups(text: str, line: int) -> str:
    """Each DUP count (S…Z, s, then digits) replaced by that many copies of the token before it
    (a value, or a DIF token: its difference); the token is found by looking back over its digits."""
    out: list[str] = []
    pos = 0
    for m in _DUP_COUNT.finditer(text):
        end = m.start()
        j = end
        while j > pos and text[j - 1] in "0123456789.":
            j -= 1
        if j > pos and text[j - 1] in _TOKEN_START:
            j -= 1
        if j == end or j == 0:   # nothing before it, or only the line's abscissa
            raise InputError(f"Line {line}: a repeat count (DUP) with nothing to repeat.", "text")
        count = int(str(_DUP[m.group(0)[0]]) + m.group(0)[1:])
        out.append(text[pos:j])
        out.append(" ".join([text[j:end]] * count))   # separated: plain numbers do not delimit themselves
        pos = m.end()
    out.append(text[pos:])
    return "".join(out)


def decode_line(text: str, line: int) -> tuple[list[float], bool, int]:
    """(values, ends in DIF, decimals of the first value) of one compressed or AFFN data line.

    The first value is the abscissa.  DUP repeats the previous token: a value, or
    for a DIF token its difference."""
    text = _strip_comment(text).strip()
    if not text:
        return [], False, 0
    if not _ALLOWED.fullmatch(text) or (_EXPONENT.search(text) and _OTHER_ASDF.search(text)):
        bad = next((c for c in text if not _ALLOWED.fullmatch(c)), "E")
        what = "a missing value ('?')" if bad == "?" else f"the character '{bad}'"
        raise InputError(f"Line {line}: {what} is not allowed in spectrum data.", "text")
    # every part of the pattern is optional, so it always matches
    first = re.match(r"[+-]?[0-9]*\.?[0-9]*(?:[Ee][+-][0-9]+)?", text).group(0)  # type: ignore[union-attr]
    decimals = len(first.split(".")[1].split("e")[0].split("E")[0]) if "." in first else 0
    try:
        if _EXPONENT.search(text):  # AFFN with exponents: plain numbers only
            return [float(t) for t in re.split(r"[\s,;]+", text) if t], False, decimals
        if _ANY_DUP.search(text):
            text = _expand_dups(text, line)
        out: list[float] = []
        for seg in ("|" + text).translate(_ASDF_TABLE).split("|"):
            if not seg:
                continue
            if seg[0] == " ":
                if not out:
                    raise InputError(f"Line {line}: a difference (DIF) with no value before it.", "text")
                values = list(map(float, seg.split()))
                values[0] += out[-1]
                out.extend(accumulate(values))
            else:
                out.extend(accumulate(map(float, seg.split())))
    except ValueError:
        raise InputError(f"Line {line}: '{text[:40]}' is not valid spectrum data.", "text") from None
    body = text.rstrip().rstrip("0123456789.")
    return out, bool(body) and body[-1] in _DIF, decimals


def decode_xy_table(lines: list[tuple[int, str]], first_x: float, last_x: float, npoints: int, x_factor: float,
                    checks: list[str]) -> list[float]:
    """Raw ordinates of an (X++(Y..Y)) table, X checks and DIF Y checks enforced."""
    if npoints < 1 or npoints > MAX_POINTS:
        raise InputError(f"NPOINTS must lie between 1 and {MAX_POINTS}.", "text")
    dx = (last_x - first_x) / (npoints - 1) if npoints > 1 else 0.0
    ys: list[float] = []
    carry = False
    n_x = n_y = 0
    for n, text in lines:
        values, ends_dif, decimals = decode_line(text, n)
        if not values:
            continue
        x_written, new = values[0], values[1:]
        if carry:
            if not new or new[0] != ys[-1]:
                raise InputError(f"Line {n}: the DIF Y check failed: this line must start by repeating "
                                 f"the last ordinate of the line before ({ys[-1]:g}).", "text")
            new = new[1:]
            n_y += 1
        k = len(ys) - (1 if carry else 0)
        expected = first_x + k * dx
        tol = max(0.5 * abs(dx), 0.5 * abs(x_factor) * 10.0 ** -decimals) + 1e-9 * abs(expected)
        if abs(x_written * x_factor - expected) > tol:
            raise InputError(f"Line {n}: the X check failed: the line starts at {x_written * x_factor:.6g}, "
                             f"but point {k + 1} lies at {expected:.6g} (points missing or extra).", "text")
        n_x += 1
        ys.extend(new)
        if len(ys) > npoints:
            raise InputError(f"Line {n}: more points than NPOINTS = {npoints}.", "text")
        carry = ends_dif
    if len(ys) != npoints:
        raise InputError(f"The data hold {len(ys)} points but NPOINTS says {npoints}.", "text")
    checks.append(f"X check passed on {n_x} lines")
    if n_y:
        checks.append(f"DIF Y check passed on {n_y} line joins")
    checks.append(f"{npoints} points, as NPOINTS says")
    return ys


def _scaled(raw: list[float], factor: float) -> list[float]:
    y = raw if factor == 1.0 else [v * factor for v in raw]
    if y and not (-MAX_ORDINATE <= min(y) and max(y) <= MAX_ORDINATE):
        raise InputError(f"An ordinate exceeds {MAX_ORDINATE:g} after scaling: check YFACTOR.", "text")
    return y


def _peak_table(lines: list[tuple[int, str]]) -> list[tuple[float, float]]:
    values = []
    for n, text in lines:
        for part in re.split(r"[\s;]+", _strip_comment(text).strip()):
            if part:
                try:
                    values.append([float(v) for v in part.split(",") if v.strip()])
                except ValueError:
                    raise InputError(f"Line {n}: '{part[:30]}' is not an x,y pair.", "text") from None
    flat = [v for group in values for v in group]
    if len(flat) % 2:
        raise InputError("The peak table has an odd number of values (x,y pairs expected).", "text")
    return [(flat[i], flat[i + 1]) for i in range(0, len(flat), 2)]


def _unit(text: str) -> str:
    u = text.strip().upper()
    if u in ("HZ", "HERTZ"):
        return "Hz"
    if u == "PPM":
        return "ppm"
    if u in ("SECONDS", "S", "SEC", "TIME"):
        raise InputError("This file holds a free induction decay (time domain); this tool reads "
                         "spectra only and does not process FIDs: transform it first.", "text")
    raise InputError(f"x is in '{text.strip()[:20]}'; an NMR spectrum needs x in Hz or ppm.", "text")


def _header_check(name: str, text: str | None, actual: float, factor: float, checks: list[str]) -> None:
    """A stated header value must match the data to its written precision, plus one raw unit
    and 1e-4 relative (exporters round the header; a decoding error is far larger)."""
    if text is None or not text.strip():
        return
    stated = _num(text, name, 0)
    mantissa = text.split()[0].lower().split("e")[0]
    written = 0.5 * 10.0 ** -len(mantissa.split(".")[1]) if "." in mantissa else 0.5
    if "e" in text.lower():
        written *= 10.0 ** int(text.split()[0].lower().split("e")[1])
    tol = abs(factor) + written + 1e-4 * max(abs(stated), abs(actual))
    if abs(stated - actual) > tol:
        raise InputError(f"##{name}= says {stated:.6g} but the data give {actual:.6g}.", "text")
    checks.append(f"{name} = {stated:.6g} holds")


def _meta(recs: list[_Record]) -> _Meta:
    return {label: (value, n) for label, value, n, _ in recs}


def _common(meta: _Meta) -> dict[str, Any]:
    nucleus = meta.get(".OBSERVENUCLEUS", ("", 0))[0].replace("^", "").strip() or None
    obs = meta.get(".OBSERVEFREQUENCY")
    observe = None
    if obs and obs[0].strip():
        observe = _num(obs[0], ".OBSERVE FREQUENCY", obs[1])
        if observe <= 0:
            raise InputError(f"Line {obs[1]}: .OBSERVE FREQUENCY must be positive.", "text")
    ref = None
    sr = meta.get(".SHIFTREFERENCE")
    if sr and sr[0].strip():
        parts = [p.strip() for p in sr[0].strip("() ").split(",")]
        try:
            ref = {"point": int(float(parts[2])), "shift_ppm": float(parts[3]), "name": parts[1]}
        except (IndexError, ValueError):
            raise InputError(f"Line {sr[1]}: .SHIFT REFERENCE must read (kind, compound, point, shift ppm).",
                             "text") from None
    return {"title": meta.get("TITLE", ("", 0))[0], "nucleus": nucleus, "observe_MHz": observe,
            "shift_reference": ref}


def _xydata(recs: list[_Record], meta: _Meta) -> Spectrum:
    def get(label: str, default: float | None = None) -> float:
        if label in meta:
            return _num(meta[label][0], label, meta[label][1])
        if default is None:
            raise InputError(f"##{label}= is missing (needed to read XYDATA).", "text", "missing_field")
        return default

    x_unit = _unit(meta.get("XUNITS", ("", 0))[0])
    first_x, last_x, npoints = get("FIRSTX"), get("LASTX"), int(get("NPOINTS"))
    x_factor, y_factor = get("XFACTOR", 1.0), get("YFACTOR", 1.0)
    lines = next(r[3] for r in recs if r[0] == "XYDATA")
    checks: list[str] = []
    raw = decode_xy_table(lines, first_x, last_x, npoints, x_factor, checks)
    y = _scaled(raw, y_factor)
    for name in ("FIRSTY", "MAXY", "MINY"):
        if name in meta:
            actual = {"FIRSTY": y[0], "MAXY": max(y), "MINY": min(y)}[name]
            _header_check(name, meta[name][0], actual, y_factor, checks)
    return Spectrum(x_unit=x_unit, first_x=first_x, last_x=last_x, y=y, checks=checks, **_common(meta))


def _columns(text: str) -> list[str]:
    return [c.strip() for c in text.split(",")]


def _ntuples(recs: list[_Record], meta: _Meta) -> Spectrum:
    names = [c.upper() for c in _columns(meta.get("VARNAME", ("", 0))[0])]
    symbols = [c.upper() for c in _columns(meta.get("SYMBOL", ("", 0))[0])]
    if any("FID" in c or c in ("TIME",) for c in names) or "FID" in meta.get("NTUPLES", ("", 0))[0].upper():
        _unit("SECONDS")

    def text_of(label: str, i: int) -> str | None:
        cols = _columns(meta.get(label, ("", 0))[0])
        return cols[i] if i < len(cols) else None

    @overload
    def column(label: str, i: int, needed: Literal[True] = True) -> float: ...
    @overload
    def column(label: str, i: int, needed: bool) -> float | None: ...
    def column(label: str, i: int, needed: bool = True) -> float | None:
        cols = _columns(meta.get(label, ("", 0))[0])
        if i < len(cols) and cols[i]:
            return _num(cols[i], label, meta[label][1])
        if needed:
            raise InputError(f"##{label}= has no entry for column {i + 1}.", "text", "missing_field")
        return None

    ix = symbols.index("X") if "X" in symbols else 0
    x_unit = _unit(_columns(meta.get("UNITS", ("", 0))[0])[ix])
    first_x, last_x = column("FIRST", ix), column("LAST", ix)
    x_factor = column("FACTOR", ix, False) or 1.0
    pages: dict[str, list] = {}
    for label, value, _, lines in recs:
        if label == "DATATABLE":
            m = re.search(r"\(\s*X\+\+\(\s*(\w+)\s*\.\.", value.upper())
            if not m:
                raise InputError(f"Only (X++(Y..Y)) data tables are read in NTUPLES, not '{value[:30]}'.", "text")
            pages[m.group(1)] = lines
    parts = {}
    checks: list[str] = []
    for want in ("REAL", "IMAG"):
        i = next((k for k, nm in enumerate(names) if want in nm), None)
        if i is None or i >= len(symbols) or symbols[i] not in pages:
            continue
        dim = column("VARDIM", i, False) or column("VARDIM", ix)
        factor = column("FACTOR", i, False) or 1.0
        page_checks: list[str] = []
        raw = decode_xy_table(pages[symbols[i]], first_x, last_x, int(dim), x_factor, page_checks)
        y = _scaled(raw, factor)
        for name, actual in (("FIRST", y[0]), ("LAST", y[-1]), ("MIN", min(y)), ("MAX", max(y))):
            _header_check(name, text_of(name, i), actual, factor, page_checks)
        checks += [f"{want.lower()}: {c}" for c in page_checks]
        parts[want] = y
    if "REAL" not in parts:
        raise InputError("The NTUPLES table has no real spectrum page.", "text")
    return Spectrum(x_unit=x_unit, first_x=first_x, last_x=last_x, y=parts["REAL"], imaginary=parts.get("IMAG"),
                    checks=checks, **_common(meta))


def _peaks(recs: list[_Record], meta: _Meta) -> Spectrum:
    x_unit = _unit(meta.get("XUNITS", ("", 0))[0])
    lines = next(r[3] for r in recs if r[0] == "PEAKTABLE")
    form = meta["PEAKTABLE"][0].upper().replace(" ", "")
    if "XYW" in form or "XYM" in form:
        raise InputError(f"Only (XY..XY) peak tables are read, not {form}.", "text")
    pairs = _peak_table(lines)
    if not pairs:
        raise InputError("The peak table is empty.", "text")
    xf = float(meta["XFACTOR"][0]) if "XFACTOR" in meta else 1.0
    yf = float(meta["YFACTOR"][0]) if "YFACTOR" in meta else 1.0
    pairs = [(x * xf, y * yf) for x, y in pairs]
    checks = [f"{len(pairs)} peaks read"]
    if "NPOINTS" in meta and int(_num(meta["NPOINTS"][0], "NPOINTS", meta["NPOINTS"][1])) != len(pairs):
        raise InputError(f"The peak table holds {len(pairs)} peaks but NPOINTS says {meta['NPOINTS'][0]}.", "text")
    xs = [x for x, _ in pairs]
    return Spectrum(x_unit=x_unit, first_x=xs[0], last_x=xs[-1], y=[], peaks=pairs, checks=checks, **_common(meta))


def _kind(recs: list[_Record], meta: _Meta) -> str | None:
    labels = {r[0] for r in recs}
    dtype = meta.get("DATATYPE", ("", 0))[0].upper()
    if "NTUPLES" in labels:
        return "ntuples"
    if "XYDATA" in labels:
        return "xydata"
    if "PEAKTABLE" in labels:
        return "peaks"
    return None if dtype != "LINK" else None


def read_jcamp(text: str) -> Spectrum:
    """The NMR spectrum of a JCAMP-DX file (the NMR spectrum block of a compound file)."""
    candidates = []
    for recs in _blocks(text):
        meta = _meta(recs)
        kind = _kind(recs, meta)
        if kind is None:
            continue
        dtype = meta.get("DATATYPE", ("", 0))[0].upper()
        candidates.append((kind, dtype, recs, meta))
    if not candidates:
        raise InputError("The file holds no spectrum data (no XYDATA, NTUPLES or PEAK TABLE).", "text")
    nmr = [c for c in candidates if "NMR" in c[1] and "FID" not in c[1]]
    if not nmr:
        if any("FID" in c[1] for c in candidates):
            _unit("SECONDS")
        if any(c[1] and "NMR" not in c[1] for c in candidates):
            raise InputError(f"This is not an NMR spectrum (DATA TYPE = {candidates[0][1][:40]}).", "text")
        nmr = candidates
    order = {"xydata": 0, "ntuples": 1, "peaks": 2}
    kind, _, recs, meta = min(nmr, key=lambda c: order[c[0]])
    return {"xydata": _xydata, "ntuples": _ntuples, "peaks": _peaks}[kind](recs, meta)
