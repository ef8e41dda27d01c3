"""A civil/hydraulic and mechanical engineer's first trial of zerotrace: each finding pinned.

Scenarios are invented for this trial (a pump curve against a system curve in US customary
units, supply mains sized by Darcy-Weisbach with the Swamee-Jain friction factor for an
allowed head loss, a trapezoidal canal by Manning, a cylinder barrel's wall by the
thick-wall hoop stress); the numbers are checked against outside references named beside
each check: closed forms (the quadratic formula, the thick-wall formula
ro^2 = ri^2 (S + p)/(S - p), common practice, from memory), scipy.optimize.brentq, and
unit factors from NIST SP 811 (1 in = 0.0254 m, 1 ft = 0.3048 m, 1 lbf = 4.4482216152605 N,
1 US gal = 3.785411784 L, all exact).
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import pytest

from app.cli import main

GALLON = 3.785411784e-3  # m^3, NIST SP 811 (exact)
FOOT = 0.3048  # m, NIST SP 811 (exact)


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def table_rows(path: Path) -> tuple[list[str], list[dict[str, str]]]:
    lines = path.read_text(encoding="utf-8").splitlines()
    meta = [line for line in lines if line.lstrip('"').startswith("#")]
    rows = list(csv.DictReader(line for line in lines if not line.lstrip('"').startswith("#")))
    return meta, rows


# 1. One method asked for (--method newton) and converged was told "Only Newton-Raphson
#    converged: no second method to agree with; try other start values": as if others had
#    failed, with advice to change start values that were fine. A method run alone now
#    says so; "only ... converged" is kept for several methods of which one converged.
PUMP = "H0 - a*Q^2 = Hs + k*Q^2"
PUMP_PARAMS = ("--param", "H0=180 ft", "--param", "a=0.00012 ft/(gal/min)^2",
               "--param", "Hs=65 ft", "--param", "k=0.00021 ft/(gal/min)^2")


def test_a_method_run_alone_is_not_told_to_change_its_start_values(capsys):
    code, out, err = run(capsys, "solve", PUMP, *PUMP_PARAMS, "--unknown", "Q",
                         "--unknown-unit", "gal/min", "--x0", "400", "--method", "newton",
                         "--json")
    assert code == 0, err
    doc = json.loads(out)
    # the operating point by the closed form Q = sqrt((H0 - Hs)/(a + k)), in gal/min since
    # the feet cancel (common practice, from memory)
    assert doc["runs"][0]["root"] == pytest.approx(math.sqrt(115 / 0.00033), rel=1e-13)
    code, out, err = run(capsys, "solve", PUMP, *PUMP_PARAMS, "--unknown", "Q",
                         "--unknown-unit", "gal/min", "--x0", "400", "--method", "newton")
    assert "Newton–Raphson alone was run" in out
    assert "try other start values" not in out
    # two methods, one of which fails (no bracket holds a sign change): the old advice stands
    code, out, err = run(capsys, "solve", PUMP, *PUMP_PARAMS, "--unknown", "Q",
                         "--unknown-unit", "gal/min", "--x0", "400", "--method", "newton",
                         "--method", "bisection", "--bracket", "0", "100")
    assert "Only Newton–Raphson converged" in out and "try other start values" in out
