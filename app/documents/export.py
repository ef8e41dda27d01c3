"""CSV and JSON of runs and roots, for calculation packages and for machines.

CSV shape: ``#`` metadata lines first (equation, unknown, parameters, method
settings, tool version, time, the caution), then one header row, then one row per
iterate. Each metadata line is one CSV cell: a line whose text holds a comma or a
double quote (an equation with ``atan2(y, x)``, a warning) is written quoted,
``"# equation: atan2(y, x) = 1"``, so a spreadsheet keeps it in one cell and Python's
``csv`` module reads it back as one field starting with ``#``; zerotrace's own
wording (settings, run summaries, the caution) has no comma, so those lines stay plain.
Floats are written with ``repr`` so they read back to the identical double
(Python's ``float()``, ``csv`` + ``float``, or ``numpy.genfromtxt(path, delimiter=",",
names=True, skip_header=<number of # lines>)`` — genfromtxt would otherwise read the first
``#`` line as the header);
an absent value (no derivative, no bracket) is an empty cell. The files are UTF-8
with ``\\n`` line ends, which spreadsheets and numpy read alike.
"""

from __future__ import annotations

import csv
import io
import math
import os
from collections.abc import Collection, Iterable, Mapping
from datetime import datetime, timezone
from typing import IO, Any

from app.documents.files import write_atomic
from app.documents.words import (
    CAUTION,
    DIMENSIONS_UNCHECKED,
    IN_UNKNOWN_UNIT,
    SUSPECT_REMARKS,
    confirmed_text,
    located_text,
    measured_text,
    offset_sums_text,
    remark_text,
    residual_units,
    run_message,
    scan_warnings,
    start_notes,
    unit_notes,
)
from solvers.records import Run

RUN_COLUMNS = ("method", "k", "x", "fx", "dfx", "dx", "lo", "hi")
ROOT_COLUMNS = ("kind", "x", "residual", "multiplicity", "confirmed", "located_by")
UNIT_KEY = "unknown unit"  # the metadata line that carries it (and labels those columns)
RESIDUAL_UNIT_KEY = "residual unit"  # f's SI unit (base units), labelling fx and dfx


def with_units(columns: Iterable[str], unit: str | None,
               f_unit: str | None = None) -> list[str]:
    """Header cells: the columns in the unknown's unit get it in brackets, ``x [m]``; with
    the residual's ``f_unit``, fx and dfx theirs (``fx [kg*m^2/s^3]``, see
    :func:`app.documents.words.residual_units`)."""
    residual = residual_units(f_unit, unit)
    if "fx" in residual:  # a scan's root table: its residual column is f at the root
        residual["residual"] = residual["fx"]
    return [f"{c} [{unit}]" if unit and c in IN_UNKNOWN_UNIT else
            f"{c} [{residual[c]}]" if c in residual else c for c in columns]


def tool_version() -> str:
    try:
        from importlib.metadata import version

        return version("zerotrace")
    except Exception:  # not installed (running from a checkout): say so rather than guess
        return "unknown (not installed)"


def number(value: float | int | None) -> str:
    """A cell: '' for None, repr for floats (round-trip exact), str for ints."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return str(value)
    if isinstance(value, int):
        return str(value)
    return repr(float(value))


def metadata(
    *,
    equation: str,
    unknown: str,
    parameters: Mapping[str, float],
    settings: Mapping[str, Any] | None = None,
    extra: Mapping[str, str] | None = None,
    when: datetime | None = None,
    units: Mapping[str, Any] | None = None,
    unknown_unit: str | None = None,
    remarks: Iterable[Any] = (),
    residual_unit: str | None = None,
) -> dict[str, str]:
    """The ``#`` header lines of an export, as an ordered mapping.

    ``units``: parameter name -> :class:`solvers.units.Converted` for parameters given with
    a unit (written as entered and in SI); ``unknown_unit`` labels the columns in the
    unknown's unit; ``remarks`` (the equation's) add a ``dimensions`` line when the
    dimensional check was switched off.
    """
    from solvers.equation.lines import one_line

    units = units or {}
    meta = {
        "tool": f"zerotrace {tool_version()}",
        "time": (when or datetime.now(timezone.utc)).isoformat(timespec="seconds"),
        # one line: its lines joined by "; " (reads back as the same text), never run together
        "equation": one_line(equation),
        "unknown": unknown,
        "parameters": "; ".join(_parameter_cell(k, v, units.get(k))
                                for k, v in parameters.items()) or "(none)",
    }
    if unknown_unit:
        meta[UNIT_KEY] = unknown_unit
    if residual_unit:  # f = lhs - rhs in SI base units; '' (dimensionless) needs no line
        meta[RESIDUAL_UNIT_KEY] = residual_unit
    if any(getattr(r, "code", "") == "dimensions_unchecked" for r in remarks):
        meta["dimensions"] = DIMENSIONS_UNCHECKED
    sums = [r.subject for r in remarks if getattr(r, "code", "") == "temperature_offset_sum"]
    if sums:  # a checker of the file must see it: the root may be 273.15 K off
        meta["temperatures"] = offset_sums_text(sums)
    # likewise a speed in rpm converted twice, a g_c without its unit, a frequency in Hz
    # without 2*pi: the root may be 9.55, 32.174 or 2*pi times off
    suspect = [remark_text(r) for r in remarks
               if getattr(r, "code", "") in SUSPECT_REMARKS - {"temperature_offset_sum"}]
    if suspect:
        meta["units"] = "; ".join(suspect)
    if settings:
        meta["settings"] = "; ".join(f"{k}={_setting(v)}" for k, v in settings.items())
    if extra:
        meta.update(extra)
    meta["caution"] = CAUTION
    return meta


def _parameter_cell(name: str, value: Any, converted: Any) -> str:
    return f"{name}={measured_text(value, converted, number)}"


def equation_meta(equation: Any, **more: Any) -> dict[str, str]:
    """:func:`metadata` of an :class:`~solvers.equation.Equation` (units and remarks too)."""
    return metadata(equation=equation.text, unknown=equation.unknown,
                    parameters=equation.parameters, units=equation.units,
                    unknown_unit=equation.unknown_unit, remarks=equation.remarks,
                    residual_unit=equation.residual_unit(), **more)


def _setting(value: Any) -> str:
    if isinstance(value, float):
        return number(value)
    if isinstance(value, (list, tuple)):
        # Space-separated, so the settings line needs no CSV quoting.
        return "[" + " ".join(_setting(v) for v in value) + "]"
    return str(value)


def _one_line(text: str) -> str:
    # A newline inside a metadata value would start a line without '#'.
    return " ".join(str(text).split())


def _write_metadata(handle: IO[str], meta: Mapping[str, str]) -> None:
    # Written as they are, never quoted: a reader skips lines that start with '#'
    # (comment='#' in most CSV readers), and a quoted line starts with '"' instead. A
    # spreadsheet may split such a line at its commas; it stays a note above the table.
    for key, value in meta.items():
        handle.write(f"# {key}: {_one_line(value)}\n")


def run_rows(runs: Iterable[Run]) -> list[list[str]]:
    rows = []
    for run in runs:
        for s in run.steps:
            rows.append(
                [run.method, str(s.k), number(s.x), number(s.fx), number(s.dfx),
                 number(s.dx), number(s.lo), number(s.hi)]
            )
    return rows


def root_rows(scan: Any) -> list[list[str]]:
    rows = []
    for r in scan.roots:
        rows.append(
            ["root", number(r.x), number(r.residual), str(r.multiplicity),
             confirmed_text(r), located_text(r)]
        )
    for x in scan.poles:
        rows.append(["pole", number(x), "", "", "", ""])
    for x in getattr(scan, "discontinuities", []):
        rows.append(["discontinuity", number(x), "", "", "", ""])
    return rows


def _write_table(handle: IO[str], meta: Mapping[str, str], header, rows) -> None:
    _write_metadata(handle, meta)
    writer = csv.writer(handle, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(rows)


def _emit(target: str | os.PathLike[str] | IO[str], text: str, overwrite: bool) -> None:
    if hasattr(target, "write"):
        target.write(text)  # type: ignore[union-attr]
    else:
        write_atomic(target, text.encode("utf-8"), overwrite=overwrite)  # type: ignore[arg-type]


def runs_csv(
    runs: Iterable[Run],
    target: str | os.PathLike[str] | IO[str],
    *,
    meta: Mapping[str, str],
    overwrite: bool = True,
) -> None:
    """Iteration log of every run: one row per iterate (columns RUN_COLUMNS)."""
    runs = list(runs)
    buffer = io.StringIO()
    summary = {
        f"run {r.method}": (
            f"root={number(r.root)}; converged={r.converged}; reason={r.reason}; "
            f"iterations={r.iterations}; evaluations={r.evaluations}"
        )
        for r in runs
    }
    _write_table(buffer, {**meta, **summary},
                 with_units(RUN_COLUMNS, meta.get(UNIT_KEY), meta.get(RESIDUAL_UNIT_KEY)),
                 run_rows(runs))
    _emit(target, buffer.getvalue(), overwrite)


def roots_csv(
    scan: Any,
    target: str | os.PathLike[str] | IO[str],
    *,
    meta: Mapping[str, str],
    overwrite: bool = True,
) -> None:
    """Roots, poles and discontinuities of a scan: one row each (columns ROOT_COLUMNS)."""
    buffer = io.StringIO()
    extra = {"range": f"[{number(scan.a)} {number(scan.b)}]"} if hasattr(scan, "a") else {}
    gaps = getattr(scan, "gaps", [])
    if gaps:
        extra["undefined"] = "; ".join(f"[{number(a)} {number(b)}]" for a, b in gaps)
    warnings = scan_warnings(scan)
    if warnings:
        extra["warnings"] = " | ".join(warnings)
    _write_table(buffer, {**meta, **extra}, with_units(ROOT_COLUMNS, meta.get(UNIT_KEY),
                                                     meta.get(RESIDUAL_UNIT_KEY)),
                 root_rows(scan))
    _emit(target, buffer.getvalue(), overwrite)


def _json_float(value: float | None) -> float | str | None:
    """JSON has no NaN/inf: write them as the strings 'nan', 'inf', '-inf'."""
    if value is None:
        return None
    value = float(value)
    if math.isfinite(value):
        return value
    return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf")


def run_json(run: Run, unknown: str = "x", unit: str | None = None) -> dict[str, Any]:
    """One run as JSON; its ``message`` names the root as the unknown, in its unit."""
    data = run.as_dict()
    data["root"] = _json_float(run.root)
    order = data.get("order")
    data["order"] = _json_float(order) if order is not None else None
    data["steps"] = [
        {key: (_json_float(v) if key != "k" else v) for key, v in step.items()}
        for step in data["steps"]
    ]
    data["settings"] = {
        k: (_json_float(v) if isinstance(v, float) else v) for k, v in data["settings"].items()
    }
    for key in ("detail", "note"):
        if data.get(key) is not None:
            data[key]["values"] = [_json_float(v) if isinstance(v, float) else v
                                   for v in data[key]["values"]]
    # the run in words, for people reading the file
    data["message"] = run_message(run, unknown, unit)
    return data


def _detail_json(detail: Any) -> dict[str, Any]:
    data = detail.as_dict()
    data["values"] = [_json_float(v) if isinstance(v, float) else v for v in data["values"]]
    return data


def scan_json(scan: Any) -> dict[str, Any]:
    return {
        "from": _json_float(getattr(scan, "a", None)),
        "to": _json_float(getattr(scan, "b", None)),
        "roots": [
            {
                "x": _json_float(r.x),
                "residual": _json_float(r.residual),
                "multiplicity": r.multiplicity,
                "confirmed": confirmed_text(r),  # in words, for people reading the file
                "confirmed_codes": list(getattr(r, "confirmed", ())),
                "located_by": list(getattr(r, "located_by", ())),
            }
            for r in scan.roots
        ],
        "poles": [_json_float(x) for x in scan.poles],
        "discontinuities": [_json_float(x) for x in getattr(scan, "discontinuities", [])],
        "gaps": [[_json_float(a), _json_float(b)] for a, b in getattr(scan, "gaps", [])],
        "warnings": scan_warnings(scan),  # in words; the same as codes and values below
        "details": [_detail_json(d) for d in getattr(scan, "details", ())],
        "samples": int(scan.samples) if getattr(scan, "samples", None) is not None else None,
    }


def solution_meta(solution: Any, extra: Mapping[str, str] | None = None) -> dict[str, str]:
    """Metadata lines for a :class:`solvers.pipeline.Solution` (duck-typed: no import cycle)."""
    ws = solution.worksheet
    s = ws.settings
    sv = solution.start
    settings: dict[str, Any] = {
        "methods": list(s.methods),
        "x0": sv.x0,
        "x1": sv.x1,
        "bracket": list(sv.bracket) if sv.bracket is not None else "none",
        "xtol": s.xtol,
        "rtol": s.rtol,
        "ftol": s.ftol,
        "max_iter": s.max_iter,
        "damping": s.damping,
    }
    more = dict(extra or {})
    notes = start_notes(sv, getattr(solution.equation, "unknown_unit", None))
    if notes:
        more["start values"] = "; ".join(notes)
    eq = solution.equation
    at_root = getattr(solution, "definitions_at_root", None)
    if at_root is not None:  # part of the answer (a Reynolds number, an area): SI, exact
        run, values = at_root
        units = eq.definition_units()
        more[f"definitions at {run.method}'s root"] = "; ".join(
            f"{name} = {value!r}" + (f" {units[name]}" if units.get(name) else "")
            for name, value in values.items())
    return metadata(
        equation=ws.equation,
        unknown=eq.unknown,
        parameters=eq.parameters,
        settings=settings,
        extra=more,
        units=eq.units,
        unknown_unit=eq.unknown_unit,
        remarks=eq.remarks,
        residual_unit=eq.residual_unit(),
    )


def units_json(equation: Any, columns: Collection[str] = ()) -> dict[str, Any]:
    """The units of a JSON document: ``unknown_unit``, ``residual_unit`` (f's SI unit, see
    :meth:`solvers.equation.Equation.residual_unit`), each parameter's unit as entered
    and in SI (``parameter_units``), and whether dimensions were checked.

    ``columns``: the parameters a table gives row by row. Each has its unit and SI unit,
    ``"column": true`` and ``value``/``si_value`` null: its values are the rows', and the
    one value the equation was last bound to (a single row's) is no value of the table."""

    def entry(name: str, c: Any) -> dict[str, Any]:
        if name in columns:
            return {"value": None, "unit": c.unit, "si_value": None, "si_unit": c.si_unit,
                    "column": True}
        return {"value": _json_float(c.value), "unit": c.unit,
                "si_value": _json_float(c.si_value), "si_unit": c.si_unit}

    residual = getattr(equation, "residual_unit", None)
    return {
        "unknown_unit": equation.unknown_unit,
        # f = lhs - rhs in SI base units, as the CSV's '# residual unit' line: every residual
        # and f(x) of the document is in it (null where it cannot be claimed: plain numbers,
        # the check off; '' dimensionless)
        "residual_unit": residual() if callable(residual) else None,
        "parameter_units": {
            name: entry(name, c) for name, c in equation.units.items()
            if name in columns or isinstance(c.value, float)},
        "dimension_check": not any(r.code == "dimensions_unchecked"
                                   for r in equation.remarks),
        # what the terminal notes about units (degC converted with the offset, a constant
        # added to such a temperature, the check off): the sentences for people
        "unit_notes": list(unit_notes(equation.remarks)),
    }


def solution_json(solution: Any) -> dict[str, Any]:
    """The ``zerotrace solve --json`` document: the contract's keys, the caution and extras."""
    return {
        "equation": solution.worksheet.equation,
        "unknown": solution.equation.unknown,
        **units_json(solution.equation),
        "parameters": dict(solution.equation.parameters),
        "start": {
            "x0": _json_float(solution.start.x0),
            "x1": _json_float(solution.start.x1),
            "bracket": [_json_float(v) for v in solution.start.bracket]
            if solution.start.bracket is not None
            else None,
            "notes": list(start_notes(solution.start, solution.equation.unknown_unit)),
        },
        "agreement_digits": solution.agreement_digits,
        "runs": [{**run_json(r, solution.equation.unknown, solution.equation.unknown_unit),
                  **_definitions_json(solution.equation, r)}
                 for r in solution.runs],
        "caution": CAUTION,
    }


def _definitions_json(equation: Any, run: Run) -> dict[str, Any]:
    """The defined quantities (lines ``name = expression``) at the run's last iterate."""
    if not getattr(equation, "definitions", ()):
        return {}
    values = equation.definition_values(run.root)
    return {"definitions": {k: _json_float(v) for k, v in values.items()},
            "definition_units": equation.definition_units()}  # SI; {} when no units
