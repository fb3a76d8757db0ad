"""The ``solvents`` op: residual solvent and water signals (``nmrcalc.data.solvents``),
each with the first-order multiplet the engine predicts from its couplings to 2H.

``query`` (optional): a shift ("2.50", "2.50 ppm", "−0.1 ppm"; read by the unit parser, so
"2,50" is refused with "did you mean 2.50?" and "2.5 Hz" with the units that apply) → the rows within
``tolerance`` (default 0.05 ppm for 1H, 0.5 ppm for 13C; common practice, no
source: residual signals move by a few hundredths of a ppm with concentration
and temperature); any other text → the solvents whose name or aliases contain it.
``nucleus`` (optional) keeps only 1H or 13C rows.
"""

from __future__ import annotations

import re
from fractions import Fraction
from typing import Any

from nmrcalc.api.fields import nucleus, quantity
from nmrcalc.api.params import Op, Param
from nmrcalc.data.solvents import ALIASES, SOLVENTS
from nmrcalc.errors import InputError
from nmrcalc.physics.multiplet import multiplet, multiplet_label, ratio_string

DEFAULT_TOLERANCE_PPM = {"1H": 0.05, "13C": 0.5}
# Text that starts as a number and ends in at most a short unit is a shift ("2.50", "2,50", "7260 ppb",
# "2.5e0 ppm"); anything else ("1,4-dioxane", "DMSO") is a name.
_SHIFT = re.compile(r"\s*[-+\u2212]?(\d[\d.,\u2009\u202f]*|[.,]\d+)"
                    r"([eE][-+\u2212]?\d+|\s*[×x]\s*10\S*)?\s*[A-Za-zµ]{0,4}\s*")
DEUTERON = Fraction(1)


def _key(text: str) -> str:
    return text.lower().replace("₆", "6").replace("₃", "3").replace("₂", "2").replace("₈", "8").replace(" ", "")


def _read(req: dict) -> dict:
    out: dict[str, Any] = {"nucleus": None, "shift": None, "text": None, "tolerance": None}
    if req.get("nucleus") not in (None, ""):
        out["nucleus"] = nucleus(req, "nucleus").symbol
        if out["nucleus"] not in DEFAULT_TOLERANCE_PPM:
            raise InputError("The solvent table lists 1H and 13C signals only.", "nucleus")
    query = req.get("query")
    if not isinstance(query, (type(None), str)):
        raise InputError("query must be text: a shift (e.g. '2.50 ppm') or a solvent name.", "query")
    if isinstance(query, str) and _SHIFT.fullmatch(query):
        out["shift"] = quantity(req, "query", "shift")
        out["tolerance"] = None if req.get("tolerance") in (None, "") else quantity(req, "tolerance", "shift",
                                                                                    positive=True)
    elif isinstance(query, str) and query.strip():
        out["text"] = _key(query.strip())
        if req.get("tolerance") not in (None, ""):
            raise InputError("tolerance applies only when query is a shift.", "tolerance")
    elif req.get("tolerance") not in (None, ""):
        raise InputError("tolerance applies only when query is a shift.", "tolerance")
    return out


def _matches_name(row: dict, text: str) -> bool:
    names = [row["solvent"]] + [alias for alias, name in ALIASES.items() if name == row["solvent"]]
    return any(text in _key(name) for name in names)


def op_solvents(req: dict, warnings: list[str]) -> dict:
    q = _read(req)
    found = []
    for row in SOLVENTS:
        if q["nucleus"] and row["nucleus"] != q["nucleus"]:
            continue
        if q["text"] is not None and not _matches_name(row, q["text"]):
            continue
        distance = None
        if q["shift"] is not None:
            distance = row["shift_ppm"] - q["shift"]
            if abs(distance) > (q["tolerance"] or DEFAULT_TOLERANCE_PPM[row["nucleus"]]):
                continue
        groups = [(DEUTERON, row["D_partners"], row["J_Hz"])] if row["D_partners"] else []
        sticks = multiplet(groups)
        found.append({
            "name": row["solvent"], "nucleus": row["nucleus"], "shift_ppm": row["shift_ppm"], "signal": row["signal"],
            "multiplicity": multiplet_label(groups), "ratio": ratio_string(sticks), "J_Hz": row["J_Hz"],
            "D_partners": row["D_partners"], "source": row["source"], "distance_ppm": distance,
            "multiplet_request": {"observe": row["nucleus"], "center": f"{row['shift_ppm']} ppm",
                                  "groups": [{"partner": "2H", "count": row["D_partners"], "J": f"{row['J_Hz']} Hz"}]
                                  if row["D_partners"] else []},
        })
    if q["shift"] is not None:
        found.sort(key=lambda r: abs(r["distance_ppm"]))
    if not found:
        warnings.append("No solvent signal matches." if q["shift"] is None else
                        f"No listed solvent or water signal lies near {q['shift']} ppm.")
    warnings.append("Shifts were written from memory of the published tables (sources beside each row) and not "
                    "checked against the papers; water moves with temperature and concentration.")
    return {"solvents": found, "query": req.get("query")}


DECLARED = {"solvents": Op(
    "solvents", "residual solvent and water signals, with the multiplet the engine predicts", params=(
        Param("query", "text", label="Shift or name", example="2.50 ppm", max_chars=60,
              help="a shift ('2.50', '2.50 ppm') finds the nearby signals; text finds solvents by name"),
        Param("nucleus", "nuclide", label="Nucleus", help="1H or 13C only", example="1H"),
        Param("tolerance", "quantity", unit="shift", label="Shift tolerance", example="0.05 ppm",
              help="with a shift query (default 0.05 ppm for 1H, 0.5 ppm for 13C)"),
    ))}

OPS = {"solvents": op_solvents}
