"""The command line goes through the API, is derived from the ops' declarations, and follows
the usual conventions: results on stdout, input errors on stderr with exit status 2."""

import json
import subprocess
import sys

import pytest

from nmrcalc import __version__
from nmrcalc.api import OPS
from nmrcalc.cli import build_parser, commands, main


def run(args, stdin=None):
    return subprocess.run([sys.executable, "-m", "nmrcalc", *args], input=stdin, capture_output=True,
                          timeout=60)


def test_readable_and_json(capsys):
    assert main(["freq", "--nucleus", "29Si", "--spectrometer", "400.13 MHz"]) == 0
    out = capsys.readouterr().out
    assert "larmor_MHz" in out and "reference_MHz" in out
    assert main(["scale", "32 Hz", "--from", "D", "--to", "1H", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["result"]["J_Hz"] > 200


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
