"""`zerotrace batch` and `zerotrace sweep` as a user and a script see them.

Outside references: scipy.optimize.brentq row by row for the friction factors written to
the table of results, numpy.roots for the swept cubic, Python's csv module reading the
file back (repr floats round-trip). Scenarios are invented (cooling-water pipes).
"""

from __future__ import annotations

import csv
import json
import math
import subprocess
import sys

import numpy as np
import pytest
import scipy.optimize
from csv_files import read_results

from app.cli import main
from app.documents.words import CAUTION

COLEBROOK = "1/sqrt(lam) = -2*log10(rr/3.7 + 2.51/(Re*sqrt(lam)))"
TABLE = "Re,rr\n1.2e5,4.5e-4\n2.4e6,3e-5\n8000,0.02\n5e7,1e-6\n"


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def residual(lam, Re, rr):
    return 1 / math.sqrt(lam) + 2 * math.log10(rr / 3.7 + 2.51 / (Re * math.sqrt(lam)))


@pytest.mark.parametrize("method", ["newton", "brent", "bisection", "illinois", "secant"])
def test_batch_writes_every_input_column_and_the_results(tmp_path, capsys, method):
    table = tmp_path / "pipes.csv"
    table.write_text(TABLE, encoding="utf-8")
    out = tmp_path / "results.csv"
    # from below: the Newton step of this form overshoots to lam < 0 from a high start
    code, stdout, err = run(capsys, "batch", COLEBROOK, "--table", str(table), "--out",
                            str(out), "--method", method, "--x0", "0.008", "--x1", "0.0082",
                            "--bracket", "1e-3", "0.2")
    assert code == 0, err
    assert "4 rows: 4 converged" in stdout and CAUTION in stdout
    meta, rows = read_results(out)
    assert any(CAUTION in line for line in meta)
    assert any(line.startswith("# equation: ") for line in meta)
    assert any(f"method={method}" in line for line in meta)
    assert list(rows[0]) == ["Re", "rr", "root", "converged", "reason", "iterations",
                             "residual"]
    source = list(csv.DictReader(TABLE.splitlines()))
    for given, row in zip(source, rows, strict=True):
        assert row["Re"] == given["Re"] and row["rr"] == given["rr"]  # kept as written
        assert row["converged"] == "True" and row["reason"] in ("x_tolerance", "exact_zero")
        ref = scipy.optimize.brentq(residual, 1e-3, 0.2, args=(float(given["Re"]),
                                    float(given["rr"])), xtol=1e-15, rtol=1e-15)  # reference
        assert abs(float(row["root"]) - ref) <= 1e-10 * ref
        assert repr(float(row["root"])) == row["root"]  # written with repr


def test_json_carries_rows_notes_and_the_caution(tmp_path, capsys):
    table = tmp_path / "rows.csv"
    table.write_text("p,x0\n4,1\n-1,1\n9,2\n", encoding="utf-8")  # start values per row
    code, stdout, err = run(capsys, "batch", "x = sqrt(p)", "--table", str(table), "--json")
    assert code == 0, err
    data = json.loads(stdout)
    assert data["caution"] == CAUTION
    assert data["columns"] == ["p", "x0"]
    assert [r["converged"] for r in data["rows"]] == [True, False, True]
    assert data["rows"][1]["root"] is None and data["rows"][1]["reason"] == "not_finite"
    assert data["rows"][2]["root"] == pytest.approx(3.0, abs=1e-12)
    assert data["notes"] == [{"row": 2, "code": "bad_parameters",
                              "text": data["notes"][0]["text"]}]


@pytest.mark.parametrize(("content", "expected"), [
    ("Re,rr,Q\n1e5,1e-4,3\n", "column 3 'Q' is not a parameter"),
    ("Re,rr\n1e5,1e-4\n2e5,\n", "row 2 (line 3), column 'rr': missing value"),
    ("Re,rr\n1e5,1e-4\n2e5,abc\n", "row 2 (line 3), column 'rr': 'abc' is not a plain number"),
    ("Re,rr\n1e5,1e-4\n2e5,1_000\n", "'1_000' is not a plain number"),
    ("Re,rr\n1e5,nan\n", "row 1 (line 2), column 'rr': 'nan' is not a plain number"),
    ("", "empty file"),
    ("# only a comment\n\n", "empty file"),
    ("Re,rr\n", "header only"),
    ("Re,rr\n1e5,1e-4,7\n", "row 1 (line 2) has 3 cells; the header has 2"),
    # a roughness in mm inside log10 beside a plain number: the dimensional check refuses it
    ("Re,rr [mm]\n1e5,1\n", "the argument of log10 must be dimensionless"),
    ("Re [furlongz],rr\n1e5,1\n", "column 1 'Re [furlongz]': unknown unit 'furlongz'"),
    ("Re,rr,x0 [mm]\n1e5,1e-4,1\n", "column 3 'x0' is a start value"),
    ("Re,Re\n1e5,1\n", "'Re' appears twice"),
    ("Re,rr,lam\n1e5,1e-4,0.02\n", "column 3 'lam' is the unknown"),
    ("Re,r-r\n1e5,1\n", "'r-r' is not NAME or NAME [unit]"),
    # a quoted cell holding a line break is one cell, not two numbers (it was a bare
    # "could not convert string to float" naming neither the file nor the cell)
    ('Re,rr\n1e5,"1e-4\n2e-4"\n',
     "row 1 (line 2), column 'rr': '1e-4\\n2e-4' is not a plain number"),
])
def test_a_bad_table_is_exit_2_with_one_line_naming_row_and_column(tmp_path, capsys, content,
                                                                     expected):
    table = tmp_path / "in.csv"
    table.write_text(content, encoding="utf-8")
    code, stdout, err = run(capsys, "batch", COLEBROOK, "--unknown", "lam", "--table",
                            str(table), "--x0", "0.02")
    assert code == 2
    assert expected in err and len(err.strip().splitlines()) == 1, err
    assert "Traceback" not in err


def test_an_existing_output_is_kept_unless_forced(tmp_path, capsys):
    table = tmp_path / "in.csv"
    table.write_text(TABLE, encoding="utf-8")
    out = tmp_path / "out.csv"
    out.write_text("keep me", encoding="utf-8")
    argv = ("batch", COLEBROOK, "--table", str(table), "--x0", "0.02", "--out", str(out))
    code, _, err = run(capsys, *argv)
    assert code == 2 and "already exists" in err
    assert out.read_text(encoding="utf-8") == "keep me"
    code, _, err = run(capsys, *argv, "--force")
    assert code == 0, err
    assert "root" in out.read_text(encoding="utf-8")


def test_start_values_are_required_for_the_method(tmp_path, capsys):
    table = tmp_path / "in.csv"
    table.write_text(TABLE, encoding="utf-8")
    code, _, err = run(capsys, "batch", COLEBROOK, "--table", str(table), "--method", "brent")
    assert code == 2 and "--bracket" in err
    code, _, err = run(capsys, "batch", COLEBROOK, "--table", str(table), "--x0", "0.02",
                       "--xtol", "-1")
    assert code == 2 and "xtol" in err


def test_sweep_follows_the_branch_and_writes_the_swept_column(tmp_path, capsys):
    out = tmp_path / "sweep.csv"
    code, stdout, err = run(capsys, "sweep", "x^3 - x - p", "--vary", "p=-1:1:9", "--x0",
                            "-1.3", "--out", str(out))
    assert code == 0, err
    meta, rows = read_results(out)
    assert list(rows[0])[:2] == ["p", "root"]
    assert any("# note 1: row 7:" in line for line in meta)  # the jump past the fold
    for row in rows:
        roots = np.roots([1.0, 0.0, -1.0, -float(row["p"])])  # reference: numpy.roots
        real = roots[np.abs(roots.imag) < 1e-9].real
        assert np.min(np.abs(real - float(row["root"]))) <= 1e-12
    code, stdout, err = run(capsys, "sweep", "x^2 - p", "--vary", "p=1:100:5", "--log",
                            "--x0", "1", "--json")
    assert code == 0, err
    data = json.loads(stdout)
    assert [r["p"] for r in data["rows"]] == pytest.approx([1, 10**0.5, 10, 10**1.5, 100])
    assert [r["root"] for r in data["rows"]] == pytest.approx(
        [1, 10**0.25, 10**0.5, 10**0.75, 10], rel=1e-12)


@pytest.mark.parametrize(("vary", "expected"), [
    ("p=1:2", "not NAME=START:STOP:COUNT"),
    ("p=1:2:x", "COUNT 'x' is not a whole number"),
    ("p=1:2:1", "COUNT must be from 2"),
    ("q=1:2:3", "'q' is not a name of the equation"),
    ("x=1:2:3", "'x' is the unknown"),
])
def test_a_bad_sweep_is_exit_2(capsys, vary, expected):
    code, _, err = run(capsys, "sweep", "x^2 - p", "--unknown", "x", "--vary", vary,
                       "--x0", "1")
    assert code == 2 and expected in err, err


def test_batch_from_the_shell(tmp_path):
    table = tmp_path / "in.csv"
    table.write_text(TABLE, encoding="utf-8")
    proc = subprocess.run(
        [sys.executable, "-m", "app.cli", "batch", COLEBROOK, "--table", str(table),
         "--x0", "0.02", "--json"], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert len(json.loads(proc.stdout)["rows"]) == 4
    bad = subprocess.run(
        [sys.executable, "-m", "app.cli", "batch", COLEBROOK, "--table",
         str(tmp_path / "missing.csv"), "--x0", "0.02"], capture_output=True, text=True,
        timeout=120)
    assert bad.returncode == 2 and "Traceback" not in bad.stderr
    assert len(bad.stderr.strip().splitlines()) == 1


# Darcy-Weisbach head loss h = f (L/D) v^2/(2 g) solved for the bore D (common practice);
# the scenario's numbers are invented. Exact factors: NIST SP 811, international foot 0.3048 m.
DARCY = "h = f*L/D*v^2/(2*g)"
DARCY_FLAGS = ("--param", "v=2 m/s", "--param", "g=9.80665 m/s^2", "--param", "f=0.02",
               "--unknown", "D", "--method", "brent")


def _bore(L, h):
    """The closed form D = f L v^2 / (2 g h) in metres (SI inputs)."""
    return 0.02 * L * 2.0**2 / (2 * 9.80665 * h)


def test_a_table_in_feet_gives_the_same_bore_as_the_table_in_metres(tmp_path, capsys):
    si, us = tmp_path / "si.csv", tmp_path / "us.csv"
    si.write_text("L [m],h [m]\n100,3\n250,1.5\n", encoding="utf-8")
    us.write_text("L [ft],h [ft]\n" + "\n".join(
        f"{L / 0.3048!r},{h / 0.3048!r}" for L, h in ((100, 3), (250, 1.5))) + "\n",
        encoding="utf-8")
    roots = []
    for table in (si, us):
        out = tmp_path / f"{table.stem}-out.csv"
        code, _, err = run(capsys, "batch", DARCY, "--table", str(table), *DARCY_FLAGS,
                           "--unknown-unit", "mm", "--bracket", "1", "10000", "--out", str(out))
        assert code == 0, err
        meta, rows = read_results(out)
        assert any("unknown unit: mm" in line for line in meta)
        assert list(rows[0])[:2] == table.read_text().split("\n")[0].split(",")
        # the result columns keep their names; the root is in the unit the metadata names
        roots.append([float(r["root"]) for r in rows])
    expected = [1000 * _bore(100, 3), 1000 * _bore(250, 1.5)]  # in mm
    for found in roots:
        assert found == pytest.approx(expected, rel=1e-10)


def test_a_sweep_with_a_unit_follows_the_bore_in_the_unit_asked_for(capsys):
    code, out, err = run(capsys, "sweep", DARCY, "--vary", "L=100:400:4 ft", "--param", "h=3 m",
                         *DARCY_FLAGS[:-2], "--unknown-unit", "mm", "--x0", "50", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["unknown_unit"] == "mm"
    roots = [row["root"] for row in data["rows"]]
    expected = [1000 * _bore(L * 0.3048, 3) for L in (100, 200, 300, 400)]
    assert roots == pytest.approx(expected, rel=1e-10)


def test_json_parameters_are_si_values_in_batch_sweep_and_solve_alike(capsys, tmp_path):
    # one convention for machines: "parameters" holds the SI value the solve used (NIST
    # SP 811 B.8: 1 ft = 0.3048 m exactly), "parameter_units" the value as typed
    table = tmp_path / "in.csv"
    table.write_text("L [ft]\n100\n")
    outputs = [run(capsys, "batch", DARCY, "--table", str(table), "--param", "h=10 ft",
                   *DARCY_FLAGS[:-2], "--x0", "0.05", "--json"),
               run(capsys, "sweep", DARCY, "--vary", "L=100:200:2 ft", "--param", "h=10 ft",
                   *DARCY_FLAGS[:-2], "--x0", "0.05", "--json"),
               run(capsys, "solve", DARCY, "--param", "L=100 ft", "--param", "h=10 ft",
                   *DARCY_FLAGS[:-2], "--x0", "0.05", "--json")]
    for code, out, err in outputs:
        assert code == 0, err
        data = json.loads(out)
        assert data["parameters"]["h"] == pytest.approx(3.048, rel=1e-15)
        assert data["parameter_units"]["h"]["value"] == 10.0
        assert data["parameter_units"]["h"]["si_value"] == data["parameters"]["h"]


def test_a_column_given_without_its_unit_beside_units_is_refused_not_solved_wrong():
    """solve_batch: rows of a parameter the equation holds with a unit must carry one (a
    plain number there would be dimensionless and every row refused)."""
    from solvers import EquationError, parse_equation, solve_batch
    from solvers.units import Measured

    eq = parse_equation(DARCY, unknown="D", parameters={
        "v": "2 m/s", "g": "9.80665 m/s^2", "f": 0.02, "L": "100 m", "h": "3 m"})
    with pytest.raises(EquationError, match="'L' was given with a unit"):
        solve_batch(eq, method="brent", bracket=(1e-3, 10), parameters={"L": np.array([1.0])})
    batch = solve_batch(eq, method="brent", bracket=(1e-3, 10),
                        parameters={"L": Measured(np.array([328.08398950131233, 100.0]), "ft")})
    assert batch.converged.all()
    assert batch.root == pytest.approx([_bore(100, 3), _bore(30.48, 3)], rel=1e-10)
    assert batch.run(1).root == batch.root[1]


def test_a_param_the_equation_does_not_use_is_noted_by_batch_and_sweep(tmp_path, capsys):
    """As for solve: a --param the equation does not use is one note on stderr and the run
    goes on (the swept cubic's roots against numpy.roots)."""
    code, out, err = run(capsys, "sweep", "x^3 - x - p", "--vary", "p=-1:1:3", "--x0", "-1.3",
                         "--param", "q=2", "--json")
    assert code == 0 and "note: parameter 'q' is not used by the equation" in err
    first = json.loads(out)["rows"][0]
    real = [r.real for r in np.roots([1, 0, -1, 1]) if abs(r.imag) < 1e-12]  # p = -1
    assert first["root"] == pytest.approx(real[0], rel=1e-12)
    table = tmp_path / "pipes.csv"
    table.write_text(TABLE, encoding="utf-8")
    code, _out, err = run(capsys, "batch", COLEBROOK, "--table", str(table), "--x0", "0.02",
                          "--param", "Rr=1e-4")
    assert code == 0 and "note: parameter 'Rr' is not used by the equation" in err


def test_a_table_that_is_not_there_is_named_with_the_systems_reason(capsys, tmp_path):
    missing = tmp_path / "nosuch.csv"
    code, out, err = run(capsys, "batch", "x - p", "--table", str(missing), "--x0", "0")
    assert code == 2 and out == ""
    assert err.strip() == f"error: {missing}: No such file or directory"
