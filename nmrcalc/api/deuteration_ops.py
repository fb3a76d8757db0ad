"""The ``deuteration`` op: the D level of one site from its isotopologue integrals
(binomial model) and/or from its residual 1H signal against an internal standard
(formulas and sources: ``nmrcalc.physics.deuteration``)."""

from __future__ import annotations

import math

from nmrcalc.api.fields import bounded, quantity
from nmrcalc.api.params import Op, Param
from nmrcalc.errors import InputError
from nmrcalc.physics import deuteration
from nmrcalc.units import split_list

MAX_POSITIONS = 64
DEFAULT_ERROR_SHARE = 0.01  # of the largest integral, when no integral_error is given
OBSERVED = ("once_per_molecule", "site_1H")
RESIDUAL_KEYS = ("integral", "standard_integral", "standard_nuclei", "standard_per_analyte", "relative_error")
MODEL = ("Binomial (random) labelling: share of k D = C(n,k) p^k (1-p)^(n-k) (Feller, Probability Theory, "
         "vol. 1, ch. VI); χ² test at 5 %. Integrals must be quantitative (full relaxation; on 13C also equal NOE).")


def _number(value: object, field: str, *, positive: bool = False) -> float:
    if isinstance(value, str):
        value = bounded(value, "percent", field)
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{field} must be a number.", field)
    if value < 0 or (positive and value == 0):
        raise InputError(f"{field} must be {'greater than zero' if positive else 'zero or more'}.", field)
    return bounded(float(value), "percent", field)


def _read(req: dict) -> dict:
    """Every key of the request, checked, in one place."""
    n = req.get("positions")
    if isinstance(n, float) and n.is_integer():
        n = int(n)
    if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= MAX_POSITIONS:
        raise InputError(f"positions must be a whole number from 1 to {MAX_POSITIONS} (the H/D positions of the site).",
                         "positions", "missing_field" if n is None else "invalid_value")
    observed = req.get("observed_on", "once_per_molecule")
    if observed not in OBSERVED:
        raise InputError(f"observed_on must be one of {', '.join(OBSERVED)}.", "observed_on")
    out = {"positions": n, "per_H": observed == "site_1H", "integrals": None, "residual": None}
    raw = req.get("integrals")
    if raw not in (None, "", []):
        if isinstance(raw, str):
            raw = split_list(raw, "integrals")
        if not isinstance(raw, list):
            raise InputError("integrals must be a list of numbers, index = number of D atoms.", "integrals")
        want = n if out["per_H"] else n + 1
        if len(raw) != want:
            what = "k = 0 … n−1 (the CDn species has no 1H signal)" if out["per_H"] else "k = 0 … n"
            raise InputError(f"Give {want} integrals, {what}; got {len(raw)}.", "integrals")
        values = [_number(v, f"integrals.{k}") for k, v in enumerate(raw)]
        if sum(values) <= 0:
            raise InputError("The integrals add up to zero.", "integrals")
        out["integrals"] = values
        err = req.get("integral_error")
        out["sigma"] = None if err in (None, "") else _number(err, "integral_error", positive=True)
    res = req.get("residual")
    if res not in (None, "", []):  # absent, as the declaration check reads it
        r = {key: _number(res.get(key), f"residual.{key}", positive=key != "integral") for key in RESIDUAL_KEYS[:4]}
        r["relative_error"] = quantity(res, "relative_error", "percent", default=0.0, prefix="residual.") / 100
        out["residual"] = r
    if out["integrals"] is None and out["residual"] is None:
        raise InputError("Give the isotopologue 'integrals' of the site, or its 'residual' 1H integral "
                         "against a standard, or both.", "integrals", "missing_field")
    return out


def op_deuteration(req: dict, warnings: list[str]) -> dict:
    a = _read(req)
    n = a["positions"]
    result = {"positions": n, "model": MODEL, "routes": {}}
    if a["integrals"] is not None:
        sigma = a["sigma"]
        if sigma is None:
            sigma = DEFAULT_ERROR_SHARE * max(a["integrals"])
            warnings.append(f"No integral_error given: each integral is taken as ± {sigma:.3g} "
                            f"({DEFAULT_ERROR_SHARE:.0%} of the largest); the uncertainty and the binomial test "
                            "depend on it.")
        fit = deuteration.from_integrals(n, a["integrals"], sigma, a["per_H"])
        binomial = None if fit.p_value is None else fit.p_value >= deuteration.ALPHA
        route = {"D_percent": 100 * fit.D_fraction, "D_percent_uncertainty": 100 * fit.D_fraction_uncertainty,
                 "expected_integrals": fit.expected, "binomial": binomial, "chi2": fit.chi2, "dof": fit.dof,
                 "p_value": fit.p_value, "integral_error": sigma}
        if binomial is False:
            warnings.append(f"The integrals are not binomial (χ² = {fit.chi2:.3g}, {fit.dof} degrees of freedom, "
                            f"p = {fit.p_value:.2g}): labelling is site-selective or incomplete, so one D level "
                            "does not describe the sample.")
        result["routes"]["integrals"] = route
    if a["residual"] is not None:
        r = a["residual"]
        D, dD, h = deuteration.from_residual(n, r["integral"], r["standard_integral"], r["standard_nuclei"],
                                             r["standard_per_analyte"], r["relative_error"], r["relative_error"])
        if not -1e-9 <= D <= 1 + 1e-9:
            warnings.append(f"The residual signal means {h:.3g} H per molecule at a site of {n} positions: "
                            "check the integrals, the nuclei count and the mole ratio.")
        result["routes"]["residual"] = {"D_percent": 100 * D, "D_percent_uncertainty": 100 * dD,
                                        "H_per_molecule": h}
    main = result["routes"].get("integrals") or result["routes"]["residual"]
    result["D_percent"], result["D_percent_uncertainty"] = main["D_percent"], main["D_percent_uncertainty"]
    if "integrals" in result["routes"]:
        result["expected_integrals"], result["binomial"] = main["expected_integrals"], main["binomial"]
    else:
        p = min(1.0, max(0.0, main["D_percent"] / 100))
        result["expected_integrals"] = deuteration.binomial_shares(n, p)
        result["binomial"] = None
    return result


DECLARED = {"deuteration": Op(
    "deuteration", "D level of one site from its isotopologue integrals (binomial test) or its residual 1H signal",
    limits=f"{MAX_POSITIONS} positions", params=(
        Param("positions", "integer", required=True, bounds=(1, MAX_POSITIONS), label="H/D positions at the site",
              example=3, help="the H/D positions of the site (3 for a methyl)"),
        Param("integrals", "numbers", bounds=(0, None), max_items=MAX_POSITIONS + 1,
              label="Isotopologue integrals, k = 0, 1, 2 …", example=[1, 6, 27, 66],
              help="integrals of the isotopologue signals on any one scale, index k = number of D atoms"),
        Param("integral_error", "number", bounds=(0, None), label="Error of each integral", example=0.5,
              help="absolute error of each integral (default 1 % of the largest)"),
        Param("observed_on", "choice", choices=OBSERVED, default="once_per_molecule", label="Integrals measured on",
              help="once_per_molecule (e.g. 13C) or site_1H (the site's own protons: k = 0 … n-1)"),
        Param("residual", "object", label="Residual 1H signal", cli_order=RESIDUAL_KEYS,
              example={"integral": 0.05, "standard_integral": 1, "standard_nuclei": 3, "standard_per_analyte": 1},
              help="the site's residual 1H integral against an internal standard", items=(
                  Param("integral", "number", required=True, bounds=(0, None), example=0.05,
                        label="Residual 1H integral of the site", help="the integral of the site's remaining 1H"),
                  Param("standard_integral", "number", required=True, bounds=(0, None), example=1,
                        label="Standard's integral", help="the integral of the standard's signal, same scale"),
                  Param("standard_nuclei", "number", required=True, bounds=(0, None), example=3,
                        label="Nuclei behind the standard's signal", help="e.g. 3 for a methyl singlet"),
                  Param("standard_per_analyte", "number", required=True, bounds=(0, None), example=1,
                        label="Moles of standard per mole of sample", help="the molar ratio weighed in"),
                  Param("relative_error", "quantity", unit="percent", default=0, bounds=(0, None),
                        label="Relative error of each of the two integrals",
                        help="the relative error of each integral (default none)"),
              )),
    ))}

OPS = {"deuteration": op_deuteration}
