"""The solvents op: table content, engine-predicted multiplets, search by shift and by name."""

import pytest

from nmrcalc.api import handle
from nmrcalc.data.solvents import SOLVENTS

REQUIRED = ["CDCl3", "DMSO-d6", "acetone-d6", "CD3OD", "D2O", "C6D6", "CD2Cl2", "CD3CN", "THF-d8", "toluene-d8"]


def run(request):
    r = handle({"op": "solvents", **request})
    assert r["ok"], r
    return r["result"]["solvents"]


def test_every_required_solvent_has_residual_and_water():
    names = {row["solvent"] for row in SOLVENTS}
    assert set(REQUIRED) <= names
    for name in REQUIRED:
        rows = [r for r in SOLVENTS if r["solvent"] == name]
        assert any(r["signal"].startswith("water") for r in rows), name
        assert any(r["nucleus"] == "1H" and r["signal"].startswith("residual") for r in rows), name
        assert name == "D2O" or any(r["nucleus"] == "13C" for r in rows), name
    assert all(r["source"] and "from memory" in r["source"] for r in SOLVENTS)


def test_dmso_peak_at_2_50():
    # from memory (Gottlieb et al. 1997): residual DMSO-d5 at 2.50 ppm, a 1:2:3:2:1 quintet (CHD2, 2 × I = 1)
    hits = run({"query": "2.50 ppm"})
    assert hits[0]["name"] == "DMSO-d6" and hits[0]["multiplicity"] == "1:2:3:2:1 quintet"
    assert all(set(h) >= {"name", "nucleus", "shift_ppm", "multiplicity", "J_Hz", "source"} for h in hits)


def test_multiplets_from_the_engine():
    # trinomial coefficients (OEIS A027907): 13C of CD3 is 1:3:6:7:6:3:1; of CDCl3 1:1:1; of CD2Cl2 1:2:3:2:1
    rows = {(h["name"], h["shift_ppm"]): h for h in run({"nucleus": "13C"})}
    assert rows[("DMSO-d6", 39.52)]["ratio"] == "1:3:6:7:6:3:1"
    assert rows[("CDCl3", 77.16)]["multiplicity"] == "1:1:1 triplet"
    assert rows[("CD2Cl2", 53.84)]["ratio"] == "1:2:3:2:1"
    assert all(h["nucleus"] == "13C" for h in rows.values())


def test_multiplet_request_loads_into_the_builder():
    hit = run({"query": "acetone", "nucleus": "1H"})[0]
    req = {"op": "multiplet", "spectrometer": "400 MHz", **hit["multiplet_request"]}
    r = handle(req)
    assert r["ok"] and r["result"]["ratio"] == hit["ratio"]


def test_name_search_and_no_match():
    assert {h["name"] for h in run({"query": "chloroform"})} == {"CDCl3"}
    r = handle({"op": "solvents", "query": "55.5 ppm", "nucleus": "1H"})
    assert r["ok"] and r["result"]["solvents"] == [] and any("No listed" in w for w in r["warnings"])


@pytest.mark.parametrize("query", ["2.50", "2.50 ppm", "2500 ppb", "2.5e0 ppm", "2.5×10^0 ppm"])
def test_shift_query_as_typed(query):
    # the unit parser reads the shift (SI prefixes: 1 ppb = 1e-3 ppm, arithmetic)
    assert "DMSO-d6" in {h["name"] for h in run({"query": query, "nucleus": "1H"})}


@pytest.mark.parametrize("query,words", [("2,50", "Did you mean 2.50?"), ("2.5 Hz", "give ppm")])
def test_shift_query_refused_with_a_hint(query, words):
    r = handle({"op": "solvents", "query": query})
    assert not r["ok"] and r["error"]["field"] == "query" and words in r["error"]["message"]


@pytest.mark.parametrize("req,field", [({"nucleus": "19F"}, "nucleus"),
                                       ({"query": "dmso", "tolerance": 1}, "tolerance"), ({"query": ["x"]}, "query")])
def test_errors(req, field):
    r = handle({"op": "solvents", **req})
    assert not r["ok"] and r["error"]["field"] == field
