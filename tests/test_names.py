"""Nuclide and element names as chemists write them, and the ranked nuclide search."""

import pytest

from nmrcalc.api import handle
from nmrcalc.errors import InputError
from nmrcalc.nuclides import element_of, lookup


@pytest.mark.parametrize("text,symbol", [
    ("15N", "15N"), ("N-15", "15N"), ("N15", "15N"), ("nitrogen-15", "15N"), ("¹⁵N", "15N"),
    ("Nitrogen 15", "15N"), ("¹⁹⁵Pt", "195Pt"), ("D", "2H"), ("deuterium", "2H"), ("T", "3H"),
    ("tritium", "3H"), ("H", "1H"), ("proton", "1H"), ("hydrogen", "1H"), ("cesium-133", "133Cs"),
    ("aluminum-27", "27Al"),
])
def test_nuclide_spellings(text, symbol):
    assert lookup(text).symbol == symbol
    r = handle({"op": "frequency", "nucleus": text, "spectrometer": "400"})
    assert r["ok"] and r["result"]["symbol"] == symbol


def test_an_element_where_one_nuclide_is_needed_names_its_isotopes():
    with pytest.raises(InputError, match="195Pt"):
        lookup("Pt")


@pytest.mark.parametrize("text,el", [("H", "H"), ("hydrogen", "H"), ("Sn", "Sn"), ("tin", "Sn"), ("Pt", "Pt")])
def test_elements_where_an_element_is_meant(text, el):
    assert element_of(text) == el
    assert element_of("D") is None and element_of("13C") is None


def _symbols(text):
    r = handle({"op": "nuclides", "search": text})
    assert r["ok"], r
    return [n["symbol"] for n in r["result"]["nuclides"]]


def test_search_ranks_exact_nuclide_first():
    assert _symbols("15N")[0] == "15N"
    assert _symbols("N-15")[0] == "15N"
    assert _symbols("D") == ["2H"]
    assert _symbols("13C")[0] == "13C"


def test_search_by_element_symbol_name_and_mass_number():
    assert set(_symbols("Sn")) == {"115Sn", "117Sn", "119Sn"}
    assert set(_symbols("tin")) == {"115Sn", "117Sn", "119Sn"}
    assert _symbols("15") == ["15N"]
    assert _symbols("nitro") == ["14N", "15N"]
    assert "195Pt" in _symbols("plat")


def test_search_never_matches_reference_compound_formulas():
    # "tin" is inside "platinum" only as letters, "Sn" inside no name; CsNO3 (133Cs reference)
    # and Na2PtCl6 (195Pt) must not come up
    assert "195Pt" not in _symbols("tin")
    assert "133Cs" not in _symbols("Sn")
    assert "195Pt" not in _symbols("Cl")


def test_a_huge_search_is_refused_at_once():
    r = handle({"op": "nuclides", "search": "x" * 10**6})
    assert not r["ok"] and r["error"]["code"] == "too_large" and r["error"]["field"] == "search"
    r = handle({"op": "nuclide", "query": "x" * 10**6})
    assert not r["ok"] and r["error"]["code"] == "too_large"
