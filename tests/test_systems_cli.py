"""`zerotrace solve` on systems and on equations with definitions: tables, JSON, CSV, exits.

Reference values: by hand where stated; scipy.optimize.root for the sample.
"""

from __future__ import annotations

import csv
import io
import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

from app.cli import main
from app.documents.words import CAUTION

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
CIRCLE_LINE = "x^2 + y^2 = 4; x*y = 1"


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _hand_root() -> tuple[float, float]:
    # x^2 + y^2 = 4 and x*y = 1: x^2 = 2 + sqrt(3) for the root with x > y > 0 (by hand)
    x = math.sqrt(2 + math.sqrt(3))
    return x, 1 / x


def test_json_follows_the_contract(capsys):
    code, out, err = run(capsys, "solve", CIRCLE_LINE, "--unknown", "x", "--unknown", "y",
                         "--x0", "x=2", "--x0", "y=0.3", "--method", "newton",
                         "--method", "broyden", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["equations"] == ["x^2 + y^2 = 4", "x*y = 1"]
    assert data["unknowns"] == ["x", "y"]
    assert data["caution"] == CAUTION
    assert [r["method"] for r in data["runs"]] == ["newton", "broyden"]
    x, y = _hand_root()
    for r in data["runs"]:
        assert {"method", "root", "converged", "reason", "iterations", "evaluations",
                "steps"} <= set(r)
        assert r["converged"] is True
        assert r["root"]["x"] == pytest.approx(x, rel=1e-15)
        assert r["root"]["y"] == pytest.approx(y, rel=1e-15)
        step = r["steps"][-1]
        assert {"k", "x", "residual_norm", "step_norm", "damping"} <= set(step)
        assert set(step["x"]) == {"x", "y"}


def test_csv_log_has_a_column_per_unknown_and_residual(capsys, tmp_path):
    path = tmp_path / "log.csv"
    code, out, err = run(capsys, "solve", CIRCLE_LINE, "--x0", "x=2", "--x0", "y=0.3",
                         "--csv", str(path))
    assert code == 0, err
    lines = path.read_text().splitlines()
    meta = [line for line in lines if line.startswith("#")]
    assert any(CAUTION in line for line in meta)
    assert any(line.startswith("# equations: x^2 + y^2 = 4 ; x*y = 1") for line in meta)
    rows = list(csv.reader(io.StringIO("\n".join(lines[len(meta):]))))
    header = rows[0]
    assert header == ["method", "block", "k", "x", "y", "residual_1", "residual_2",
                      "residual_norm", "step_norm", "damping", "regularised"]
    last = {m: r for r in rows[1:] for m in [r[0]]}
    x, y = _hand_root()
    for r in last.values():
        assert float(r[3]) == pytest.approx(x, rel=1e-15) and float(r[4]) == pytest.approx(y)
        # the residual columns are the equations' residuals at that iterate
        assert abs(float(r[5])) < 1e-14 and abs(float(r[6])) < 1e-14


def test_terminal_table_shows_iterations_and_caution(capsys):
    code, out, err = run(capsys, "solve", CIRCLE_LINE, "--x0", "x=2", "--x0", "y=0.3",
                         "--steps")
    assert code == 0, err
    assert "Newton–Raphson" in out and "Broyden" in out
    assert "every iterate" in out and "||F||" in out and "damping" in out
    assert "Caution" in out


def test_no_solution_is_a_result_not_an_error(capsys):
    code, out, err = run(capsys, "solve", "x^2 + y^2 = 1; (x - 3)^2 + y^2 = 1",
                         "--x0", "x=1", "--x0", "y=0.5", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert all(r["converged"] is False and r["reason"] == "zero_derivative"
               for r in data["runs"])


@pytest.mark.parametrize("argv, words", [
    (["solve", CIRCLE_LINE, "--x0", "x=2"], "no start value for 'y'"),
    (["solve", CIRCLE_LINE, "--x0", "x=2", "--x0", "z=1", "--x0", "y=1"], "'z' is not an"),
    (["solve", "x + y = 1; x - y = 0; x*y = 2", "--x0", "x=1", "--x0", "y=1"],
     "1 equation more than unknowns"),
    (["solve", CIRCLE_LINE, "--x0", "x=2", "--x0", "y=1", "--method", "secant"],
     "for a system choose"),
    (["solve", "x^2 = 2", "--method", "broyden", "--x0", "1"], "is for systems"),
    (["solve", CIRCLE_LINE, "--x0", "x=2", "--x0", "y=1", "--bracket", "0", "1"],
     "--bracket is for one equation"),
    (["scan", "x^2 = a", "--unknown", "x", "--unknown", "a", "--from", "0", "--to", "1"],
     "scan takes one equation; a system is solved with 'zerotrace solve'"),
    (["solve", CIRCLE_LINE, "--x0", "x=abc", "--x0", "y=1"], "value of x"),
    # a name given twice: which value was meant cannot be told (the second won silently
    # and the message was about another unknown)
    (["solve", CIRCLE_LINE, "--x0", "x=2", "--x0", "x=3"],
     "--x0 x is given more than once; give each unknown's start value once"),
    (["solve", CIRCLE_LINE, "--unknown", "x", "--unknown", "x", "--x0", "x=2"],
     "--unknown x is given more than once"),
    (["solve", CIRCLE_LINE, "--x0", "x=2", "--x0", "y=1", "--unknown-unit", "x=m",
      "--unknown-unit", "x=mm"], "--unknown-unit x is given more than once"),
])
def test_bad_input_is_one_line_and_exit_2(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert words in err and err.count("\n") == 1 and "Traceback" not in err


def test_worksheet_system_sample_solves_from_the_shell(tmp_path):
    path = SAMPLES / "systems" / "pump-two-parallel-lines.json"
    proc = subprocess.run([sys.executable, "-m", "app.cli", "solve", "--worksheet", str(path),
                           "--json"], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    data = json.loads(proc.stdout)
    assert data["unknowns"] == ["Q1", "Q2", "H"]
    assert data["definitions"] == ["Q", "A1", "A2", "k1", "k2"]
    assert all(r["converged"] for r in data["runs"])
    # the pump flow Q is the sum of the line flows (the definition, at the root)
    for r in data["runs"]:
        assert r["definitions"]["Q"] == pytest.approx(r["root"]["Q1"] + r["root"]["Q2"],
                                                      rel=1e-15)


def test_one_equation_with_definitions_from_the_shell(capsys):
    # invented tank outlet: v = sqrt(2 g h) through an orifice of area A, flow Q given
    text = "A = pi*d^2/4; v = Q/(Cd*A); v^2 = 2*g*h"
    code, out, err = run(capsys, "solve", text, "--param", "d=0.05", "--param", "Cd=0.62",
                         "--param", "Q=0.004", "--param", "g=9.80665", "--x0", "1",
                         "--method", "newton", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["unknown"] == "h"
    area = math.pi * 0.05**2 / 4  # by hand
    v = 0.004 / (0.62 * area)
    r = data["runs"][0]
    assert r["root"] == pytest.approx(v * v / (2 * 9.80665), rel=1e-14)
    assert r["definitions"]["v"] == pytest.approx(v, rel=1e-14)
    code, out, err = run(capsys, "solve", text, "--param", "d=0.05", "--param", "Cd=0.62",
                         "--param", "Q=0.004", "--param", "g=9.80665", "--x0", "1",
                         "--method", "newton")
    assert "definitions at the root" in out and "v = " in out


@pytest.mark.parametrize(("extra", "said"), [
    # r in metres makes x and y lengths (x^2 + y^2 = r^2), so x*y = 1 sets an area equal to
    # a pure number: refused naming the part and both dimensions, never solved unit-blind
    (("--param", "r=2 m"), "`x*y = 1`: the left side is m², the right side is dimensionless"),
    (("--x0", "x=2 m"), "a start value is a plain number"),
])
def test_a_unit_in_a_system_is_checked_in_one_line_not_dropped(capsys, extra, said):
    """A parameter's unit in a system is converted and the dimensions of every equation
    checked; a start value is a number in its unknown's unit (common practice: never lose
    a unit)."""
    code, out, err = run(capsys, "solve", "x^2 + y^2 = r^2; x*y = 1", "--unknown", "x",
                         "--unknown", "y", "--x0", "y=0.3", *extra,
                         *(("--param", "r=2") if extra[0] == "--x0" else ("--x0", "x=2")))
    assert code == 2 and said in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
