"""The command line goes through the API, is derived from the ops' declarations, and follows
the usual conventions: results on stdout, input errors on stderr with exit status 2."""

import json
import subprocess
import sys

import pytest

from nmrcalc import __version__
from nmrcalc.api import OPS, handle
from nmrcalc.cli import build_parser, commands, main


def run(args, stdin=None):
    return subprocess.run([sys.executable, "-m", "nmrcalc", *args], input=stdin, capture_output=True,
                          timeout=60)


def test_readable_and_json(capsys):
    assert main(["freq", "--nucleus", "29Si", "--spectrometer", "400.13 MHz"]) == 0
    out = capsys.readouterr().out
    r = handle({"op": "frequency", "nucleus": "29Si", "spectrometer": "400.13 MHz"})["result"]
    # the 0 ppm frequency is the headline, the bare nucleus second, both labelled; no API keys
    zero, bare = out.index("0 ppm frequency (Ξ)"), out.index("bare nucleus (Larmor)")
    assert zero < bare and f"{r['reference_MHz']:.6f}".rstrip("0") in out[zero:bare]
    assert "larmor_MHz" not in out and "reference_MHz" not in out and "receptivity_C" not in out
    assert main(["freq", "--magnet", "400"]) == 0
    table = capsys.readouterr().out
    assert "0 ppm (MHz)" in table and "signal vs ¹³C" in table and "\n13C " in table
    assert main(["scale", "32 Hz", "--from", "D", "--to", "1H", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["result"]["J_Hz"] > 200


@pytest.mark.parametrize("argv,hint", [
    (["freq", "400", "--nucleus", "15N"], "did you mean --spectrometer '400'?"),
    (["freq", "¹⁵N", "--magnet", "400"], "did you mean --nucleus ¹⁵N?"),
    (["freq", "--nucleus", "15N", "--magnet", "400", "--spinhalf"], "did you mean --spin-half-only?"),
    (["scale", "20.1 Hz", "--from", "D", "--to", "H", "13C"], "did you mean --partner 13C?"),
])
def test_a_stray_word_is_named_with_the_flag_it_needs(argv, hint, capsys):
    assert main(argv) == 2
    captured = capsys.readouterr()
    assert captured.out == "" and hint in captured.err and "was not understood" in captured.err


def test_bad_input_goes_to_stderr_with_status_2(capsys):
    assert main(["freq", "--nucleus", "13C", "--field", "abc"]) == 2
    captured = capsys.readouterr()
    assert captured.out == "" and "error [field]" in captured.err
    assert main(["freq", "--nucleus", "13C", "--field", "abc", "--json"]) == 2
    assert json.loads(capsys.readouterr().out)["error"]["field"] == "field"


def test_api_stdin_and_exit_status():
    p = run(["api"], b'{"op":"nuclide","query":"19F"}')
    assert p.returncode == 0 and json.loads(p.stdout)["result"]["abundance_percent"] == 100
    p = run(["api"], b'{"op":"nuclide","query":"no-such"}')
    assert p.returncode == 2 and json.loads(p.stdout)["ok"] is False


@pytest.mark.parametrize("stdin", [b'{"op": "nuclide", "query": "\\ud800"}', b'{"op": "nuclide", "query": "\xff"}',
                                   b'{"op": "nuclide", "query": "13C", "x": "\\udfff"}'])
def test_api_never_shows_a_traceback(stdin):
    p = run(["api"], stdin)
    assert p.returncode == 2 and b"Traceback" not in p.stderr + p.stdout
    assert b"error" in p.stderr + p.stdout


def test_version_and_describe(capsys):
    p = run(["--version"])
    assert p.returncode == 0 and __version__ in p.stdout.decode()
    assert main(["describe"]) == 0
    described = {op["op"] for op in json.loads(capsys.readouterr().out)["ops"]}
    assert described == set(OPS)


def test_demo_runs_readable_and_json(capsys):
    assert main(["demo"]) == 0
    assert "29Si" in capsys.readouterr().out
    assert main(["demo", "--json"]) == 0
    assert all(item["response"]["ok"] for item in json.loads(capsys.readouterr().out))


def test_multiplet_and_spins_commands(capsys):
    # common practice, no source: three spin-1 partners give 1:3:6:7:6:3:1
    assert main(["multiplet", "--observe", "13C", "--group", "2H,3,19.3 Hz"]) == 0
    assert "1:3:6:7:6:3:1" in capsys.readouterr().out
    assert main(["multiplet", "--observe", "1H", "--group", "spin=1,2,7 Hz", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["result"]["ratio"] == "1:2:3:2:1"
    assert main(["spins", "--spin", "1H,7.10", "--spin", "1H,7.00", "--coupling", "0,1,8",
                 "--spectrometer", "400"]) == 0
    assert "second order" in capsys.readouterr().out
    assert main(["spins", "--spin", "1H,7.10", "--coupling", "0,0,8", "--spectrometer", "400"]) == 2
    assert main(["multiplet", "--observe", "13C", "--group", "2H,3,19.3 Hz,9"]) == 2
    assert "more parts" in capsys.readouterr().err


def test_every_command_and_flag_comes_from_a_declaration():
    parser = build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    for name, op in commands().items():
        dests = {a.dest for a in sub.choices[name]._actions} - {"help", "json"}
        declared = {p.key for p in op.params if p.cli != "-" and p.kind != "value"}
        assert dests == declared, (name, dests ^ declared)


def test_identify_reads_a_peak_list_file(tmp_path, capsys):
    path = tmp_path / "peaks.txt"
    path.write_text("1224 1\n1231 3\n1238 3\n1245 1\n")
    assert main(["identify", "--peaklist", str(path)]) == 0
    assert "q" in capsys.readouterr().out
    assert main(["identify", "--peaklist", str(tmp_path / "missing.txt")]) == 2
    assert "cannot read" in capsys.readouterr().err
