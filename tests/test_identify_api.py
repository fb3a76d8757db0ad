"""The identify op: request forms, peak-list parsing, element partners, errors naming fields."""

import math

import pytest

from nmrcalc.api import handle
from nmrcalc.api.peaklist import parse_peaklist
from nmrcalc.errors import InputError


def run(request):
    r = handle({"op": "identify", **request})
    assert r["ok"], r
    return r["result"]


def error(request):
    r = handle({"op": "identify", **request})
    assert not r["ok"], r
    return r["error"]


QUARTET = [(-10.5, 1), (-3.5, 3), (3.5, 3), (10.5, 1)]  # common practice, no source: CH3-coupled q, J = 7 Hz


def test_contract_lines_with_units_and_ppm_output():
    lines = [{"position": f"{1234.5 + x} Hz", "intensity": y} for x, y in QUARTET]
    r = run({"observe": "1H", "spectrometer": "400 MHz", "lines": lines, "tolerance": "0.5 Hz"})
    top = r["candidates"][0]
    assert top["label"] == "q" and top["groups"] == [{"spin": "1/2", "count": 3, "J_Hz": pytest.approx(7.0)}]
    assert math.isclose(r["center_Hz"], 1234.5, abs_tol=1e-6)
    ref = r["observe_MHz"]  # 1H reference = spectrometer frequency × Ξ(1H)/100 = 400 MHz (IUPAC 2001, Ξ = 100 %)
    assert math.isclose(ref, 400.0, rel_tol=1e-9)
    assert math.isclose(r["center_ppm"], 1234.5 / ref)
    assert all(math.isclose(l["ppm"], l["Hz"] / ref) for l in top["lines"])
    assert [round(l["Hz"], 6) for l in top["lines"]] == [round(1234.5 + x, 6) for x, _ in QUARTET]


def test_ppm_positions_and_nuclide_partner():
    # common practice, no source: 13C of CDCl3 is a 1:1:1 triplet, J(C,D) ≈ 32 Hz, at 77.16 ppm
    ref = 100.0 * 25.145020 / 100  # ν(13C reference) at 100 MHz 1H (IUPAC 2001 Ξ)
    lines = [{"position": 77.16 + k * 32.0 / ref, "intensity": 1.0} for k in (-1, 0, 1)]
    r = run({"observe": "13C", "spectrometer": "100 MHz", "unit": "ppm", "lines": lines, "partners": ["2H", "H"]})
    top = r["candidates"][0]
    assert top["groups"] == [{"partner": "2H", "count": 1, "J_Hz": pytest.approx(32.0, abs=0.01)}]
    assert math.isclose(r["center_ppm"], 77.16, abs_tol=1e-6)


def test_borohydride_identified_as_boron():
    # from memory: BH4- in 1H: 11B 1:1:1:1 quartet, J ≈ 81 Hz, with the 10B septet (J scaled by γ ratio)
    m = handle({"op": "multiplet", "observe": "1H", "groups": [{"partner": "B", "count": 1, "J": "81 Hz"}]})
    lines = [[l["Hz"], l["intensity"]] for l in m["result"]["lines"]]
    r = run({"observe": "1H", "lines": lines, "partners": ["B", "H"]})
    top = r["candidates"][0]
    assert [(g["partner"], g["count"]) for g in top["groups"]] == [("B", 1)]
    assert top["groups"][0]["J_Hz"] == pytest.approx(81.0, abs=0.5) and top["groups"][0]["J_isotope"] == "11B"


def test_platinum_satellites_around_a_quartet_from_the_multiplet_csv():
    # from memory: 195Pt (33.8 %, I = 1/2) satellites flank the line of the spin-0 Pt isotopologues
    m = handle({"op": "multiplet", "observe": "1H", "spectrometer": "400 MHz", "center": 0.8,
                "groups": [{"partner": "Pt", "count": 1, "J": "60 Hz"}, {"partner": "1H", "count": 3, "J": "7 Hz"}]})
    csv = "ppm,Hz,intensity\n" + "\n".join(f"{l['ppm']},{l['Hz']},{l['intensity']}" for l in m["result"]["lines"])
    r = run({"observe": "1H", "spectrometer": "400 MHz", "peaklist": csv, "partners": ["Pt", "H"]})
    top = r["candidates"][0]
    assert sorted((g["partner"], g["count"], round(g["J_Hz"])) for g in top["groups"]) == [("1H", 3, 7), ("Pt", 1, 60)]
    assert r["unit"] == "Hz" and any("Hz column is used" in n for n in r["notes"])


@pytest.mark.parametrize("text,unit,positions", [
    ("100.0,1\n107.0,2\n114.0,1\n", None, [100.0, 107.0, 114.0]),
    ("Hz\tintensity\n100.0\t1\n107.0\t2\n", "Hz", [100.0, 107.0]),
    ("# peaks\n1  2.501  10\n2  2.518  20\n3  2.535  10\n", None, [2.501, 2.518, 2.535]),
    ("No.;Shift (ppm);Height\n1;2.501;10\n2;2.518;20\n", "ppm", [2.501, 2.518]),
    ("ppm,Hz,intensity\n,-7.0,0.25\n,0.0,0.5\n,7.0,0.25\n", "Hz", [-7.0, 0.0, 7.0]),
    ("ppm\tHz\tintensity\n\t-7.0\t0.25\n\t0.0\t0.5\n", "Hz", [-7.0, 0.0]),
    ("3.10\n3.12\n", None, [3.10, 3.12]),
    # units typed per position, in each separator style; a Unicode minus; kHz read as Hz
    ("1230.5 Hz, 1\n1237.5 Hz, 2\n", "Hz", [1230.5, 1237.5]),
    ("1230.5 Hz 1\n1237.5 Hz 2\n", "Hz", [1230.5, 1237.5]),
    ("1.2305 kHz\t1\n1.2375 kHz\t2\n", "Hz", [1230.5, 1237.5]),
    ("3.076 ppm;1\n3.094 ppm;2\n", "ppm", [3.076, 3.094]),
    ("\u22125.5, 1\n\u221212.5, 2\n", None, [-5.5, -12.5]),
])
def test_peaklist_parser_formats(text, unit, positions):
    parsed = parse_peaklist(text)
    assert parsed.unit == unit
    assert [p for _, p, _ in parsed.peaks] == positions
    assert parsed.intensities_given == ("\n3.12" not in text)


def test_peaklist_unit_guess_is_reported():
    text = "2.501 1\n2.518 2\n2.535 1\n"
    r = run({"observe": "1H", "spectrometer": "400 MHz", "peaklist": text})
    assert r["unit"] == "ppm" and any("a guess" in n for n in r["notes"])
    assert r["candidates"][0]["label"] == "t"
    r = run({"observe": "1H", "peaklist": "100 1\n107 2\n114 1\n"})
    assert r["unit"] == "Hz" and any("read as Hz" in n for n in r["notes"])


@pytest.mark.parametrize("text,words", [
    # a semicolon-separated export with decimal commas is refused, never misread as two columns
    ("Hz;intensity\n1230,5;1\n1237,5;2\n", ["line 2", "did you mean 1230.5?"]),
    ("1230.5 Hz, 1\n3.09 ppm, 2\n", ["line 2", "in ppm", "line 1 gives Hz"]),
    ("ppm,intensity\n1230.5 Hz, 1\n", ["line 2", "the header gives ppm"]),
])
def test_peaklist_refuses_what_it_would_misread(text, words):
    with pytest.raises(InputError) as err:
        parse_peaklist(text)
    assert all(w in err.value.message for w in words), err.value.message


def test_stated_tolerance_says_width_and_resolution_are_unused():
    r = run({"lines": [[100, 1], [107, 1]], "tolerance": "0.5 Hz", "linewidth": "0.8 Hz"})
    assert r["tolerance_Hz"] == 0.5 and r["linewidth_Hz"] == 0.8
    assert any("change nothing" in n for n in r["notes"])


def test_peaklist_errors_give_line_numbers():
    e = error({"peaklist": "Hz,intensity\n100,1\n107,abc\n"})
    assert e["field"] == "peaklist" and "line 3" in e["message"]
    with pytest.raises(InputError) as err:
        parse_peaklist("")
    assert err.value.field == "peaklist"


@pytest.mark.parametrize("request_,field", [
    ({"lines": [[100, 1], [107, 1], [114, 1], ["x", 1]]}, "lines.3.position"),
    ({"lines": [{"position": 100, "intensity": 1}, {"position": 107}]}, "lines.1.intensity"),
    ({"lines": [[100, 1], [107, 1]], "tolerance": "-1 Hz"}, "tolerance"),
    ({"lines": [[100, 1], [107, 1]], "partners": ["2H", "Xq"]}, "partners.1"),
    ({"lines": [[100, 1], [107, 1]], "partners": ["C12"]}, "partners.0"),
    ({"lines": [[1.0, 1], [1.02, 1]], "unit": "ppm"}, "spectrometer"),
    ({"lines": [[100, 1], [107, 1]], "max_groups": 9}, "max_groups"),
    ({}, "lines"),
    ({"peaklist": "\n".join(f"{k * 3.0} 1" for k in range(65))}, "peaklist"),
])
def test_errors_name_fields(request_, field):
    assert error(request_)["field"] == field


def test_one_line_is_a_singlet():
    r = run({"lines": [[250.0, 3.0]]})
    assert r["label"] == "s" and r["candidates"][0]["groups"] == []


def test_cli_identify_readable_json_and_file(capsys, tmp_path):
    from nmrcalc.cli import main
    assert main(["identify", "--lines", "1224:1,1231:3,1238:3,1245:1", "--spectrometer", "400 MHz"]) == 0
    text = capsys.readouterr().out
    assert "1. q" in text and "3 × I=1/2 J 7.00 Hz" in text
    path = tmp_path / "lines.csv"
    path.write_text("ppm,Hz,intensity\n,-7,0.25\n,0,0.5\n,7,0.25\n")
    assert main(["identify", "--peaklist", str(path), "--partners", "H,2H", "--json"]) == 0
    import json
    out = json.loads(capsys.readouterr().out)
    assert out["result"]["candidates"][0]["groups"] == [{"partner": "1H", "count": 2, "J_Hz": pytest.approx(7.0)}]
    assert main(["identify", "--lines", "1:1,x:2"]) == 2
    assert "lines.1.position" in capsys.readouterr().err
    assert main(["identify", "--peaklist", str(tmp_path / "missing.csv")]) == 2
    assert "error [peaklist]" in capsys.readouterr().err


def test_peaklist_never_drops_a_data_line_and_catches_decimal_commas():
    # a first line with a number is data, not a header: its bad cell is reported, not dropped
    with pytest.raises(InputError, match="line 1"):
        parse_peaklist("7.26 x\n7.20 1\n7.10 1")
    assert [p[1] for p in parse_peaklist("ppm intensity\n7.26 1\n7.20 1").peaks] == [7.26, 7.20]
    with pytest.raises(InputError, match=r"did you mean 1\.5\?"):
        parse_peaklist("1,5 100\n1,6 50")
    assert [p[1] for p in parse_peaklist("7.26, 100\n7.20, 50").peaks] == [7.26, 7.20]  # comma-space CSV is fine


def _labels(req):
    r = handle({"op": "identify", **req})
    assert r["ok"], r
    return r["result"]


def test_spin_half_preferred_on_1H():
    # four equal, evenly spaced lines: a dd with J1 = 2 J2 before a spin-3/2 quartet (common practice,
    # no source: couplings in 1H spectra are almost always to spin-1/2 nuclei)
    r = _labels({"lines": [[-15, 1], [-5, 1], [5, 1], [15, 1]], "observe": "1H"})
    assert r["candidates"][0]["label"] == "dd"
    assert all(g.get("spin") == "1/2" for c in r["candidates"] for g in c["groups"])


def test_quadrupolar_only_when_intensities_demand():
    # 1:1:1 cannot be spin-1/2 (Pascal's triangle gives 1:2:1): the spin-1 triplet is offered and wins
    r = _labels({"lines": [[-50, 1], [0, 1], [50, 1]], "observe": "1H"})
    assert r["candidates"][0]["label"] == "1:1:1 triplet"
    assert any("No spin-1/2 explanation" in n for n in r["notes"])


def test_weak_pair_is_carbon_satellites():
    # CHCl3-like: each 13C satellite 0.54 % of the centre (natural 13C 1.07 %, IUPAC 2001), J 209 Hz
    r = _labels({"lines": [[-104.5, 0.0054], [0, 1], [104.5, 0.0054]], "observe": "1H"})
    assert r["satellites"][0]["element"] == "C"
    assert r["candidates"][0]["groups"][0]["partner"] == "C"
    assert any("satellites of C" in n for n in r["notes"])


def test_septet_with_lost_outer_lines_kept():
    # 1:6:15:20:15:6:1 with the outer pair lost below the noise (Pascal's triangle): still a septet
    r = _labels({"lines": [[-40, 6], [-20, 15], [0, 20], [20, 15], [40, 6]], "observe": "1H"})
    assert r["candidates"][0]["label"] == "sept" and r["satellites"] == []
    assert "sept" in [c["label"] for c in r["candidates"][:2]]


def test_tolerance_from_the_data():
    lines = [[-15, 1], [-5, 1], [5, 1], [15, 1]]
    r = _labels({"lines": lines, "observe": "1H", "digital_resolution": "0.3 Hz"})
    assert r["tolerance_Hz"] == 0.3
    r = _labels({"lines": lines, "observe": "1H", "linewidth": "2 Hz"})
    assert r["tolerance_Hz"] == 0.5
    r = _labels({"lines": lines, "observe": "1H", "linewidth": "40 Hz"})
    assert r["tolerance_Hz"] == 2.5  # capped at 0.25 × the smallest spacing (10 Hz)
