"""The command line goes through the API and prints readable text or JSON."""

import json
import subprocess
import sys

from nmrcalc.cli import main


def test_readable_and_json(capsys):
    assert main(["freq", "--nucleus", "29Si", "--spectrometer", "400.13 MHz"]) == 0
    out = capsys.readouterr().out
    assert "larmor_MHz" in out and "reference_MHz" in out
    assert main(["scale", "32 Hz", "--from", "D", "--to", "1H", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["result"]["J_Hz"] > 200


def test_bad_input_exit_code_and_message(capsys):
    assert main(["freq", "--nucleus", "13C", "--field", "abc"]) == 2
    assert "error [field]" in capsys.readouterr().out


def test_api_stdin():
    p = subprocess.run([sys.executable, "-m", "nmrcalc", "api"], input='{"op":"nuclide","query":"19F"}',
                       capture_output=True, text=True, timeout=60)
    assert p.returncode == 0 and json.loads(p.stdout)["result"]["abundance_percent"] == 100


def test_demo_runs(capsys):
    assert main(["demo"]) == 0
    assert "29Si" in capsys.readouterr().out


def test_multiplet_and_spins_commands(capsys):
    # common practice, no source: three spin-1 partners give 1:3:6:7:6:3:1
    assert main(["multiplet", "--observe", "13C", "--group", "2H,3,19.3 Hz"]) == 0
    assert "1:3:6:7:6:3:1" in capsys.readouterr().out
    assert main(["spins", "--spin", "1H,7.10", "--spin", "1H,7.00", "--coupling", "0,1,8", "--spectrometer", "400"]) == 0
    assert "second order" in capsys.readouterr().out
    assert main(["spins", "--spin", "1H,7.10", "--coupling", "0,0,8", "--spectrometer", "400"]) == 2
