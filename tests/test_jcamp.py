"""JCAMP-DX and two-column reading: writer → reader round trips for every compression form,
refusals with line numbers, NTUPLES, peak tables, compound files, two-column text.

The format rules checked here are those of McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151
(ASDF, X check, DIF Y check) and Davies & Lampen, Appl. Spectrosc. 47 (1993) 1093 (NMR labels)."""

import math
import random

import pytest
from jcamp_writer import write_xydata

from nmrcalc.errors import InputError
from nmrcalc.physics.jcamp import decode_line, read_jcamp
from nmrcalc.physics.spectrum_text import read_two_column

FORMS = ["AFFN", "PAC", "SQZ", "SQZDUP", "DIF", "DIFDUP"]


def _ordinates(n=997, seed=3):
    rng = random.Random(seed)
    # a Lorentzian on a flat stretch (runs of equal values exercise DUP) plus noise and negatives
    ys = [round(50000 / (1 + ((k - 400) / 6.0) ** 2)) + (0 if 600 < k < 700 else rng.randint(-40, 40))
          for k in range(n)]
    ys[5] = -123456
    return ys


@pytest.mark.parametrize("form", FORMS)
@pytest.mark.parametrize("per_line", [1, 7, 16])
def test_round_trip_every_form(form, per_line):
    ys = _ordinates()
    n = len(ys)
    dx = -2.0
    text = write_xydata(ys, form, first_x=4000.0, last_x=4000.0 + dx * (n - 1), x_factor=-dx, y_factor=0.5,
                        per_line=per_line)
    s = read_jcamp(text)
    assert s.y == [v * 0.5 for v in ys]  # exact: integers times a binary fraction
    assert (s.first_x, s.last_x, s.npoints, s.x_unit) == (4000.0, 4000.0 + dx * (n - 1), n, "Hz")
    assert s.nucleus == "1H" and s.observe_MHz == 400.0
    assert any("X check passed" in c for c in s.checks)
    if form.startswith("DIF") and per_line > 1:
        assert any("DIF Y check passed" in c for c in s.checks)


def test_asdf_tokens_by_hand():
    # hand-decoded from the character table (McDonald & Wilks 1988, table II)
    # X=100; SQZ @=0, A1=11, b2=-22; DIF %=+0, J3=+13, j4=-14; DUP T=2 repeats the difference -14
    assert decode_line("100@A1b2%J3j4T", 1)[0] == [100, 0, 11, -22, -22, -9, -23, -37]
    assert decode_line("5A1U", 1)[0] == [5, 11, 11, 11]  # DUP after SQZ repeats the value (U = 3)
    assert decode_line("7 1.5E+03,-2e-1", 1)[0] == [7, 1500.0, -0.2]
    assert decode_line("7E5", 1)[0] == [7, 55]  # E with no sign after it is SQZ 5
    assert decode_line("10+5-3+12", 1)[0] == [10, 5, -3, 12]


def test_x_check_failure_names_the_line():
    ys = _ordinates(100)
    text = write_xydata(ys, "SQZ", first_x=0.0, last_x=99.0, per_line=10)
    lines = text.splitlines()
    k = next(i for i, ln in enumerate(lines) if ln.startswith("50"))
    # drop the last ordinate of the line before: every following abscissa is one point off
    prev = k - 1
    body = lines[prev]
    cut = max(body.rfind(c) for c in "@ABCDEFGHIabcdefghi")
    lines[prev] = body[:cut]
    with pytest.raises(InputError, match=rf"Line {k + 1}: the X check failed"):
        read_jcamp("\n".join(lines))


def test_dif_y_check_failure_names_the_line():
    ys = _ordinates(100)
    text = write_xydata(ys, "DIF", first_x=0.0, last_x=99.0, per_line=10)
    lines = text.splitlines()
    k = next(i for i, ln in enumerate(lines) if ln.startswith("##XYDATA")) + 3
    x, rest = lines[k][:2], lines[k][2:]
    assert x.isdigit()
    head = rest[0]
    lines[k] = x + ("A" if head != "A" else "B") + rest[1:].lstrip("0123456789")
    with pytest.raises(InputError, match=rf"Line {k + 1}: the DIF Y check failed"):
        read_jcamp("\n".join(lines))


def test_point_count_and_header_checks():
    ys = _ordinates(600)
    text = write_xydata(ys, "AFFN", first_x=0.0, last_x=599.0)
    with pytest.raises(InputError, match="NPOINTS"):
        read_jcamp(text.replace("##NPOINTS=600", "##NPOINTS=601").replace("##LASTX=599.0", "##LASTX=600.0"))
    with pytest.raises(InputError, match="MAXY"):
        read_jcamp(text.replace(f"##MAXY={float(max(ys))}", f"##MAXY={max(ys) * 1.01}"))


def test_fid_is_refused():
    text = write_xydata(_ordinates(50), "AFFN", first_x=0.0, last_x=49.0, unit="SECONDS")
    with pytest.raises(InputError, match="free induction decay"):
        read_jcamp(text.replace("NMR SPECTRUM", "NMR FID"))
    with pytest.raises(InputError, match="free induction decay"):
        read_jcamp(text)


def test_ppm_axis_and_shift_reference():
    ys = _ordinates(101)
    text = write_xydata(ys, "DIFDUP", first_x=10.0, last_x=0.0, x_factor=0.1, unit="PPM",
                        extra="##.SHIFT REFERENCE=(INTERNAL, TMS, 101, 0.0)")
    s = read_jcamp(text)
    assert s.x_unit == "ppm" and s.shift_reference == {"point": 101, "shift_ppm": 0.0, "name": "TMS"}


NTUPLES = """##TITLE=invented complex spectrum
##JCAMP-DX=5.01
##DATA TYPE=NMR SPECTRUM
##DATA CLASS=NTUPLES
##.OBSERVE FREQUENCY=100.6
##.OBSERVE NUCLEUS=^13C
##NTUPLES=NMR SPECTRUM
##VAR_NAME=FREQUENCY, SPECTRUM/REAL, SPECTRUM/IMAG, PAGE NUMBER
##SYMBOL=X, R, I, N
##VAR_TYPE=INDEPENDENT, DEPENDENT, DEPENDENT, PAGE
##VAR_FORM=AFFN, ASDF, ASDF, AFFN
##VAR_DIM=6, 6, 6, 2
##UNITS=HZ, ARBITRARY UNITS, ARBITRARY UNITS,
##FIRST=5, 2, -1, 1
##LAST=0, 12, 3, 2
##MIN=0, 2, -3, 1
##MAX=5, 12, 3, 2
##FACTOR=1, 2, 1, 1
##PAGE=N=1
##DATA TABLE=(X++(R..R)), XYDATA
5A%J%J
1CL
0F
##PAGE=N=2
##DATA TABLE=(X++(I..I)), XYDATA
5 -1 2 -3 3 0 3
##END NTUPLES=NMR SPECTRUM
##END=
"""


def test_ntuples_real_and_imaginary():
    s = read_jcamp(NTUPLES)
    # hand decoding: 5A%J%J = 1,1,2,2,3 (x = 5…1); 1CL repeats 3 (Y check) then L = +3 gives 6; 0F is the last check
    assert s.y == [2, 2, 4, 4, 6, 12]  # FACTOR 2
    assert s.imaginary == [-1, 2, -3, 3, 0, 3]


def test_peak_table_and_compound_file():
    text = """##TITLE=invented compound file
##JCAMP-DX=5.01
##DATA TYPE=LINK
##BLOCKS=2
##TITLE=invented infrared block
##JCAMP-DX=5.01
##DATA TYPE=INFRARED SPECTRUM
##BLOCK_ID=1
##XUNITS=1/CM
##PEAK TABLE=(XY..XY)
1700,90
##END=
##TITLE=invented NMR peaks
##JCAMP-DX=5.01
##DATA TYPE=NMR PEAK TABLE
##BLOCK_ID=2
##.OBSERVE FREQUENCY=400.13
##.OBSERVE NUCLEUS=^1H
##XUNITS=PPM
##NPOINTS=3
##PEAK TABLE=(XY..XY)
7.26,100; 2.17,300
1.56, 20
##END=
##END=
"""
    s = read_jcamp(text)
    assert s.title == "invented NMR peaks"
    assert s.peaks == [(7.26, 100.0), (2.17, 300.0), (1.56, 20.0)] and s.x_unit == "ppm"


def test_not_nmr_and_not_jcamp():
    with pytest.raises(InputError, match="not an NMR spectrum"):
        read_jcamp("##TITLE=x\n##DATA TYPE=INFRARED SPECTRUM\n##XUNITS=1/CM\n##PEAK TABLE=(XY..XY)\n1,2\n##END=")
    with pytest.raises(InputError, match="not a JCAMP-DX file"):
        read_jcamp("1 2\n3 4\n")


@pytest.mark.parametrize("sep", [",", "\t", " ", "; "])
@pytest.mark.parametrize("header", ["", "ppm{s}intensity\n", "Shift (ppm){s}I\n"])
def test_two_column(sep, header):
    rows = "".join(f"{10 - 0.25 * k}{sep}{k * k}\n" for k in range(9))
    s = read_two_column(header.format(s=sep) + rows, None if header else "ppm")
    assert s.x_unit == "ppm" and s.first_x == 10.0 and s.last_x == 8.0 and s.y == [k * k for k in range(9)]


def test_two_column_refusals():
    with pytest.raises(InputError, match="evenly spaced"):
        read_two_column("Hz,I\n1,1\n2,2\n4,3\n")
    with pytest.raises(InputError, match="ppm or Hz"):
        read_two_column("1,1\n2,2\n3,3\n")
    with pytest.raises(InputError, match="Line 3"):
        read_two_column("Hz,I\n1,1\nx,2\n3,3\n")
    assert math.isclose(read_two_column("Hz,I\n1,1\n2,2\n3,3\n").last_x, 3.0)


def test_dup_repeats_plain_numbers_and_whole_sqz_values():
    # JCAMP-DX's ASDF compression (McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151), DUP: the count includes the
    # value itself (T = 2, S3 = 13); a plain number repeated stays one number per copy
    assert decode_line("100 1 2 3T", 1)[0] == [100, 1, 2, 3, 3]
    assert decode_line("100A1.5U", 1)[0] == [100, 11.5, 11.5, 11.5]
    assert decode_line("100 J5T", 1)[0] == [100, 115, 130]
