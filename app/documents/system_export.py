"""CSV and JSON of a system solve (the same conventions as :mod:`app.documents.export`).

CSV: ``#`` metadata lines (tool, time, equations, unknowns, parameters, settings, the
block order, one summary line per run, the caution), one header row, one row per
iterate: ``method, block, k`` (blocks counted from 1 in the order solved, as the terminal,
the window and the sheet count them; the JSON's ``block`` too), one column per unknown
(``Q1 [m^3/s]`` when it has a unit: its values are in that unit), one per equation's
residual (``residual_1 [m^3/s]`` ..., in SI base units of the equation's dimension, the
unit in the header where the system has units; the JSON's ``residual_units``), then
``residual_norm, step_norm, damping, regularised``. Parameters are listed as entered and
in SI; a ``dimensions`` line says when the dimensional check was switched off. Floats are
written with ``repr`` (round-trip exact).
"""

from __future__ import annotations

import io
import os
from typing import IO, Any

from app.documents.export import (
    _emit,
    _json_float,
    _write_table,
    metadata,
    number,
    units_json,
)
from app.documents.words import (
    CAUTION,
    JACOBIAN_WORDS,
    blocks_text,
    system_method_title,
    system_run_message,
)


def _settings(solution: Any) -> dict[str, Any]:
    s = solution.worksheet.settings
    return {"methods": list(solution.worksheet.system.methods), "xtol": s.xtol,
            "rtol": s.rtol, "ftol": s.ftol, "max_iter": s.max_iter,
            "x0": [number(u.x0) for u in solution.worksheet.system.unknowns]}


def system_meta(solution: Any) -> dict[str, str]:
    system = solution.system
    extra = {
        "equations": " ; ".join(system.equations),
        "definitions": ", ".join(system.definitions) or "(none)",
        "jacobian": JACOBIAN_WORDS[system.jacobian_kind],
        "structure": blocks_text(system.blocks, system.unknowns),
    }
    for r in solution.runs:
        extra[f"run {r.method}"] = (
            "root=[" + " ".join(f"{k}={number(v)}" for k, v in r.root.items()) + "]; "
            f"converged={r.converged}; reason={r.reason}; iterations={r.iterations}; "
            f"evaluations={r.evaluations}")
    if any(system.unknown_units.values()):
        extra["unknown units"] = "; ".join(f"{n} [{u}]" for n, u in
                                           system.unknown_units.items() if u)
    return metadata(equation=solution.worksheet.equation,
                    unknown=" ".join(system.unknowns), parameters=system.parameters,
                    settings=_settings(solution), extra=extra,
                    units=system.parameter_units, remarks=system.remarks)


def unknown_label(system: Any, name: str) -> str:
    """``Q1 [m^3/s]``: an unknown's column, with its unit when it has one."""
    unit = system.unknown_units.get(name)
    return f"{name} [{unit}]" if unit else name


def _residual_units(system: Any, n: int) -> tuple[str | None, ...]:
    """Each equation's residual unit in SI base units (None each for a system without)."""
    units = getattr(system, "residual_units", None)
    found = units() if callable(units) else ()
    return tuple(found) if found else (None,) * n


def header(system: Any) -> list[str]:
    n = len(system.equations)
    return ["method", "block", "k", *(unknown_label(system, u) for u in system.unknowns),
            *(f"residual_{i}" + (f" [{u}]" if u else "")
              for i, u in zip(range(1, n + 1), _residual_units(system, n), strict=True)),
            "residual_norm", "step_norm", "damping", "regularised"]


def rows(runs: Any) -> list[list[str]]:
    out = []
    for run in runs:
        for s in run.steps:
            out.append([run.method, str(s.block + 1), str(s.k),
                        *(number(v) for v in s.x.values()),
                        *(number(v) for v in s.residuals),
                        number(s.residual_norm), number(s.step_norm), number(s.damping),
                        str(s.regularised)])
    return out


def system_csv(solution: Any, target: str | os.PathLike[str] | IO[str], *,
               overwrite: bool = True) -> None:
    """The iteration log of every run of a system solve (see the module docstring)."""
    buffer = io.StringIO()
    _write_table(buffer, system_meta(solution), header(solution.system), rows(solution.runs))
    _emit(target, buffer.getvalue(), overwrite)


def _floats(mapping: Any) -> dict[str, Any]:
    return {k: _json_float(v) for k, v in mapping.items()}


def system_run_json(run: Any, system: Any) -> dict[str, Any]:
    data = run.as_dict()
    data["root"] = _floats(run.root)
    data["residuals"] = [_json_float(v) for v in run.residuals]
    data["residual_norm"] = _json_float(run.residual_norm)
    data["steps"] = [{**s, "x": _floats(s["x"]), "residuals": [_json_float(v)
                                                               for v in s["residuals"]],
                      "residual_norm": _json_float(s["residual_norm"]),
                      "step_norm": _json_float(s["step_norm"]),
                      "damping": _json_float(s["damping"]),
                      "block": s["block"] + 1} for s in data["steps"]]
    data["settings"] = {k: (_json_float(v) if isinstance(v, float) else
                            [_json_float(x) for x in v] if isinstance(v, tuple) else v)
                        for k, v in run.settings.items()}
    x = [run.root[n] for n in system.unknowns]
    data["definitions"] = _floats(system.definition_values(x))
    if system.definitions:
        data["definition_units"] = system.definition_units()  # SI; {} when no units
    data["title"] = system_method_title(run.method)
    data["message"] = system_run_message(run)
    return data


class _UnitsView:
    """A system seen as :func:`units_json` reads an equation (one rule for both)."""

    def __init__(self, system: Any):
        self.unknown_unit = None
        self.units = system.parameter_units
        self.remarks = system.remarks


def system_json(solution: Any) -> dict[str, Any]:
    """The ``zerotrace solve --json`` document of a system: the contract's keys
    (equations, unknowns, runs) and the caution, with the structure and parameters."""
    system = solution.system
    return {
        "equations": list(system.equations),
        "unknowns": list(system.unknowns),
        "definitions": list(system.definitions),
        "unknown_units": dict(system.unknown_units),
        # each equation of a system has its own residual unit: no one unit is claimed,
        # a list in the order of "equations" (null each without units) instead
        **{k: v for k, v in units_json(_UnitsView(system)).items()
           if k not in ("unknown_unit", "residual_unit")},
        "residual_units": list(_residual_units(system, len(system.equations))),
        "parameters": _floats(system.parameters),
        "start": {u.name: _json_float(u.x0) for u in solution.worksheet.system.unknowns},
        "jacobian": system.jacobian_kind,
        "blocks": [{"equations": [system.equations[i] for i in eqs],
                    "unknowns": [system.unknowns[j] for j in cols]}
                   for eqs, cols in system.blocks],
        "runs": [system_run_json(r, system) for r in solution.runs],
        "caution": CAUTION,
    }
