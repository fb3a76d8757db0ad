"""A small JCAMP-DX writer for round-trip tests: (X++(Y..Y)) in every compression form.

Forms (McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151): AFFN (blank separated),
PAC (sign-separated), SQZ, DIF, DIFDUP, SQZDUP.  DIF lines end with a Y check:
the last ordinate of each line is repeated as the first of the next.
"""

SQZ_POS, SQZ_NEG = "@ABCDEFGHI", "abcdefghi"
DIF_POS, DIF_NEG = "%JKLMNOPQR", "jklmnopqr"
DUP = "STUVWXYZs"


def _sqz(v: int) -> str:
    s = str(abs(v))
    return (SQZ_NEG[int(s[0]) - 1] if v < 0 else SQZ_POS[int(s[0])]) + s[1:]


def _dif(d: int) -> str:
    s = str(abs(d))
    return (DIF_NEG[int(s[0]) - 1] if d < 0 else DIF_POS[int(s[0])]) + s[1:]


def _dup(tokens: list[str]) -> list[str]:
    out, k = [], 0
    while k < len(tokens):
        n = 1
        while k + n < len(tokens) and tokens[k + n] == tokens[k]:
            n += 1
        out.append(tokens[k])
        if n > 1:
            s = str(n)
            out.append(DUP[int(s[0]) - 1] + s[1:])
        k += n
    return out


def data_lines(ys: list[int], form: str, x_of, per_line: int = 10) -> list[str]:
    """Data lines of integer ordinates ``ys``; ``x_of(k)`` is the written abscissa of point k."""
    lines = []
    k = 0
    while k < len(ys):
        chunk = ys[k:k + per_line]
        x = x_of(k)
        if form == "AFFN":
            lines.append(f"{x} " + " ".join(str(v) for v in chunk))
        elif form == "PAC":
            lines.append(f"{x}" + "".join(f"{v:+d}" for v in chunk))
        elif form in ("SQZ", "SQZDUP"):
            tokens = [_sqz(v) for v in chunk]
            lines.append(f"{x}" + "".join(_dup(tokens) if form == "SQZDUP" else tokens))
        else:  # DIF, DIFDUP: first value SQZ, the rest differences; next line repeats the last value
            tokens = [_sqz(chunk[0])] + [_dif(b - a) for a, b in zip(chunk, chunk[1:])]
            if form == "DIFDUP":
                tokens = tokens[:1] + _dup(tokens[1:])
            lines.append(f"{x}" + "".join(tokens))
            if len(chunk) > 1:
                k += len(chunk) - 1   # the next line starts at the repeated last point
                if k + 1 >= len(ys):
                    lines.append(f"{x_of(k)}{_sqz(ys[k])}")   # the final Y check line
                    break
                continue
        k += len(chunk)
    return lines


def write_xydata(ys: list[int], form: str, *, first_x: float, last_x: float, x_factor: float = 1.0,
                 y_factor: float = 1.0, unit: str = "HZ", observe_MHz: float = 400.0, nucleus: str = "^1H",
                 title: str = "invented test spectrum", extra: str = "", per_line: int = 10) -> str:
    n = len(ys)
    dx = (last_x - first_x) / (n - 1)

    def x_of(k):
        return round((first_x + k * dx) / x_factor)

    scaled = [v * y_factor for v in ys]
    head = [f"##TITLE={title}", "##JCAMP-DX=5.01", "##DATA TYPE=NMR SPECTRUM", "##DATA CLASS=XYDATA",
            f"##.OBSERVE FREQUENCY={observe_MHz}", f"##.OBSERVE NUCLEUS={nucleus}", f"##XUNITS={unit}",
            "##YUNITS=ARBITRARY UNITS", f"##XFACTOR={x_factor}", f"##YFACTOR={y_factor}",
            f"##FIRSTX={first_x}", f"##LASTX={last_x}", f"##NPOINTS={n}", f"##FIRSTY={scaled[0]}",
            f"##MAXY={max(scaled)}", f"##MINY={min(scaled)}"] + ([extra] if extra else []) + ["##XYDATA=(X++(Y..Y))"]
    return "\n".join(head + data_lines(ys, form, x_of, per_line) + ["##END="]) + "\n"
