"""``zerotrace batch`` and ``zerotrace sweep``: one equation over a table of inputs, or along
one parameter.

``batch EQUATION --table IN.csv``: every column of IN.csv is a parameter of the equation
(one value per row), except the start-value columns ``x0``, ``x1``, ``bracket_a``,
``bracket_b`` (when the equation has no parameter of that name), which give each row its
own start values; ``--x0``/``--x1``/``--bracket`` give one for every row. ``--param``
gives constants. ``sweep EQUATION --vary NAME=START:STOP:COUNT [--log]`` solves for COUNT
values of one parameter, each row started from the previous row's root (continuation).

Both write the table of results to ``--out`` (refused if it exists, unless ``--force``)
or print a summary with the first and last rows; ``--json`` prints everything as JSON.
Exit 0 for results (rows that did not converge are results), 2 for bad input with one
line on stderr (for a table: the row, its file line and the column).
"""

from __future__ import annotations

import argparse
import re
from typing import Any

import numpy as np

from app import systems_cli, terminal
from app.cli import (
    EXIT_OK,
    InputError,
    _add_equation_options,
    _finite,
    _json_out,
    _method_name,
    _output_path,
    _setting,
    _unknown_unit,
    distinct_params,
    note_unused_params,
)

MAX_SWEEP = 1_000_000
SHOWN_ROWS = 5  # first and last rows printed in a terminal


def _common(p: argparse.ArgumentParser) -> None:
    _add_equation_options(p, equation_required=True)
    p.add_argument("--method", type=_method_name, default="newton", metavar="M",
                   help="one method, as for 'solve' (default: newton)")
    p.add_argument("--x0", type=_finite, metavar="V", help="start value of every row")
    p.add_argument("--x1", type=_finite, metavar="V", help="second start value (secant)")
    p.add_argument("--bracket", nargs=2, type=_finite, metavar=("A", "B"),
                   help="bracket of every row (bracketing methods)")
    for flag, key, what in (("--xtol", "xtol", "absolute step tolerance"),
                            ("--rtol", "rtol", "relative step tolerance"),
                            ("--ftol", "ftol", "absolute residual tolerance"),
                            ("--max-iter", "max_iter", "iteration cap"),
                            ("--damping", "damping", "Newton damping, 0 < L <= 1")):
        p.add_argument(flag, type=_setting(key), metavar="V", help=what)
    p.add_argument("--out", metavar="OUT.csv", help="write the table of results as CSV")
    p.add_argument("--force", action="store_true", help="replace an existing output file")


def add_table_commands(sub: Any) -> None:
    """Register ``batch`` and ``sweep`` on the top-level sub-command parser."""
    batch = sub.add_parser("batch", help="solve one equation for every row of a CSV table")
    _common(batch)
    batch.add_argument("--table", required=True, metavar="IN.csv",
                       help="one header row of parameter names, one row of values per case "
                       "(columns x0, x1, bracket_a, bracket_b: a row's own start values)")
    batch.set_defaults(run=cmd_batch)
    sweep = sub.add_parser("sweep", help="follow a root along one parameter (continuation)")
    _common(sweep)
    sweep.add_argument("--vary", required=True, metavar="NAME=START:STOP:COUNT",
                       help="the parameter swept and its values")
    sweep.add_argument("--log", action="store_true", help="space the values logarithmically")
    sweep.add_argument("--within", nargs=2, type=_finite, metavar=("A", "B"),
                       help="range of the unknown: a root found outside it ends the branch and is "
                       "not reported (that row has no root; the next row starts again "
                       "from the last root inside)")
    sweep.set_defaults(run=cmd_sweep)


def _settings(args: argparse.Namespace) -> dict[str, Any]:
    from app.documents.worksheet import Settings, tolerances_problem

    defaults = Settings()
    out = {k: getattr(args, k) if getattr(args, k) is not None else getattr(defaults, k)
           for k in ("xtol", "rtol", "ftol", "max_iter", "damping")}
    problem = tolerances_problem(out["xtol"], out["rtol"], out["ftol"])
    if problem:
        raise InputError(f"zerotrace {args.command}: {problem} (set --xtol, --rtol or --ftol)")
    return out


def _finish(args: argparse.Namespace, equation: Any, batch: Any, constants: dict[str, float],
            headers: list[str], cells: list[list[str]] | list[tuple[str, ...]],
            names: list[str], columns: list[np.ndarray], extra: dict[str, str]) -> int:
    from app.documents import tables
    from app.documents.words import (
        batch_note_text,
        batch_summary,
        remarks_text,
        shared_bracket_advice,
    )

    out = args.out  # checked before the solving (_out_checked)
    if out:
        try:
            tables.results_csv(batch, headers, cells, out,
                               meta=tables.table_metadata(args.equation, equation, batch,
                                                          constants, extra),
                               overwrite=args.force)
        except OSError as exc:
            raise InputError(f"{out}: cannot write ({exc.strerror or exc})") from None
    if args.json:
        from app.documents.export import units_json

        data = tables.results_json(batch, names, columns, equation=args.equation,
                                   unknown=equation.unknown,
                                   parameters=tables.constants_in_si(equation, constants))
        data.update(units_json(equation, columns=names))
        _json_out({**data, **{k: v for k, v in extra.items() if k not in data}})
        return EXIT_OK
    print(f"equation: {args.equation}")
    unit = f" [{equation.unknown_unit}]" if equation.unknown_unit else ""
    print(f"unknown:  {equation.unknown}{unit}    method: {batch.method}")
    print(batch_summary(batch))
    for note in remarks_text(equation.remarks):  # as `solve` notes them
        print(f"note: {note}")
    advice = shared_bracket_advice(batch)
    if advice:
        print(f"advice: {advice}")
    for index, code in batch.notes[:20]:
        print(f"note: row {index + 1}: {batch_note_text(code)}")
    if len(batch.notes) > 20:
        print(f"note: ... {len(batch.notes) - 20} more notes (all of them in --out or --json)")
    _print_rows(batch, headers, columns, equation)
    if out:
        print(f"results written to {out}")
    print(terminal.caution())
    return EXIT_OK


def _print_rows(batch: Any, names: list[str], columns: list[np.ndarray],
                equation: Any = None) -> None:
    """The first and last rows: ``names`` the input columns' headings as read (with their
    units), the root headed with the unknown's name and unit."""
    from app.documents import words

    root_heading = words.iterate_headings(getattr(equation, "unknown", "x") or "x", "ascii",
                                          getattr(equation, "unknown_unit", None))["x"]

    n = batch.size
    shown = list(range(n)) if n <= 2 * SHOWN_ROWS else [
        *range(SHOWN_ROWS), -1, *range(n - SHOWN_ROWS, n)]
    flat = [np.asarray(c, dtype=np.float64).reshape(-1) for c in columns]
    rows = []
    for i in shown:
        if i < 0:
            rows.append(["..."] + [""] * (len(names) + 2))
            continue
        rows.append([str(i + 1), *(words.exact(float(c[i])) for c in flat),
                     (words.exact(float(batch.root.flat[i])) if batch.converged.flat[i]
                      else words.NOT_A_ROOT),
                     batch.reason_at(i)])
    print()
    print(terminal._table(["row", *names, root_heading, "reason"], rows))
    # the reason column holds codes (scripts read them): what each one shown means
    print("reasons: " + words.reason_legend(r[-1] for r in rows if r[-1]))


def _out_checked(args: argparse.Namespace) -> None:
    """Refuse an output that cannot be written (or exists, without --force) before any work."""
    if args.out is not None:
        _output_path(args.out, args.force, "--out")


def _core(args: argparse.Namespace, settings: dict[str, Any]) -> dict[str, Any]:
    from solvers.units import Measured

    unknowns = args.unknown or []
    if len(unknowns) > 1:
        raise InputError(f"zerotrace {args.command}: one unknown (a table solves one equation), "
                         f"got --unknown {' '.join(unknowns)}")
    distinct_params(args.param)
    note_unused_params(args.equation, args.param)
    constants = {name: Measured(value, unit) if unit else value
                 for name, value, unit in args.param}
    unit = systems_cli.one_unknown_unit(args)  # --unknown-unit repeats (NAME=U: a system)
    return {"unknown": unknowns[0] if unknowns else None, "constants": constants,
            "unknown_unit": _unknown_unit(unit) if unit else None,
            "check_dimensions": not args.no_dimension_check,
            "method": args.method, "x0": args.x0, "x1": args.x1,
            "bracket": tuple(args.bracket) if args.bracket else None, **settings}


def _input_error(where: str, exc: ValueError) -> InputError | ValueError:
    """A column's or a start value's problem, said with where it is (the equation's own
    errors already say where: they pass unchanged)."""
    from solvers import EquationError

    if isinstance(exc, EquationError):
        return exc
    if str(exc).startswith("method "):  # a start value the method needs
        return InputError(f"{where}: {exc}: give it with --x0, --x1 or --bracket A B (a table "
                          "may hold x0, x1, bracket_a, bracket_b columns)")
    return InputError(f"{where}: {exc}")


def cmd_batch(args: argparse.Namespace) -> int:
    from app.documents import words
    from app.documents.tables import read_table
    from solvers.batch import solve_table

    settings = _settings(args)
    _out_checked(args)
    from solvers.equation import EquationError
    from solvers.units import measured

    table = read_table(args.table)
    names = [c.name for c in table.columns]
    columns = []
    for j, c in enumerate(table.columns):
        try:  # a header NAME [unit] gives its column that unit (checked now, converted once)
            columns.append((c.name, measured(table.values[c.name], c.unit)))
        except EquationError as exc:
            raise InputError(f"{table.path}: column {j + 1} {c.header!r}: {exc}") from None
    try:
        done = solve_table(args.equation, columns, **_core(args, settings))
    except ValueError as exc:
        raise _input_error(table.path, exc) from None
    roles = {n: "parameter" if n in done.parameters else "start value" for n in names}
    return _finish(args, done.equation, done.batch, done.constants,
                   [c.header for c in table.columns], list(table.cells), names,
                   [table.values[n] for n in names],
                   {"table": f"{table.path} ({words.counted(table.rows, 'row')})",
                    "columns": "; ".join(f"{c.header} ({roles[c.name]})"
                                         for c in table.columns)})


_NUMBER_UNIT = re.compile(r"\s*([-+]?[.\d][.\deE+-]*)\s*([A-Za-zµ°%].*)")


def _is_finite(text: str) -> bool:
    from app.documents.tables import parse_number

    return parse_number(text) is not None


def _vary(args: argparse.Namespace) -> tuple[str, np.ndarray]:
    text = args.vary
    name, sep, spec = text.partition("=")
    name = name.strip()
    parts = spec.split(":")
    if not sep or len(parts) != 3 or not name.isidentifier():
        raise InputError(f"--vary: {text!r} is not NAME=START:STOP:COUNT (a unit may follow "
                         "COUNT)")
    from app.documents.tables import parse_number

    start, stop = parse_number(parts[0]), parse_number(parts[1])
    if start is None or stop is None:
        bad = next((p.strip() for p in parts[:2] if not _is_finite(p)), parts[0].strip())
        glued = _NUMBER_UNIT.fullmatch(bad)
        where = ""
        if glued:  # START or STOP typed with its unit: the unit goes once, after COUNT
            plain = [_NUMBER_UNIT.sub(r"\1", p.strip()) for p in parts[:2]]
            where = (f" (the unit goes once, after COUNT: {name}={plain[0]}:{plain[1]}:"
                     f"{parts[2].strip()} {glued[2].strip()})")
        raise InputError(f"--vary: {bad!r} is not a finite number{where}")
    from solvers.equation import EquationError
    from solvers.units import measured

    count_text, _, unit = parts[2].strip().partition(" ")  # COUNT, then an optional unit
    try:
        count = int(count_text)
    except ValueError:
        glued = re.fullmatch(r"(\d+)([A-Za-zµ°%].*)", count_text)
        hint = (f" (a unit after COUNT is set apart by a space: {name}={parts[0].strip()}:"
                f"{parts[1].strip()}:{glued[1]} {glued[2]})" if glued else "")
        raise InputError(f"--vary: COUNT {count_text!r} is not a whole number{hint}") from None
    if not 2 <= count <= MAX_SWEEP:
        raise InputError(f"--vary: COUNT must be from 2 to {MAX_SWEEP}, got {count}")
    if args.log:
        if not (start > 0 and stop > 0):
            raise InputError("--vary with --log: START and STOP must be > 0")
        values = np.geomspace(start, stop, count)
    else:
        values = np.linspace(start, stop, count)
    try:  # START and STOP in that unit, converted once
        return name, measured(values, unit)
    except EquationError as exc:
        raise InputError(f"--vary: {exc}") from None


def cmd_sweep(args: argparse.Namespace) -> int:
    from app.documents import tables, words
    from solvers.batch import solve_sweep

    settings = _settings(args)
    _out_checked(args)
    name, swept = _vary(args)
    values = getattr(swept, "value", swept)  # the numbers as typed, for the results table
    try:
        done = solve_sweep(args.equation, name, swept,
                           bounds=tuple(args.within) if args.within else None,
                           **_core(args, settings))
    except ValueError as exc:
        raise _input_error("--vary", exc) from None
    cells = [[repr(float(v)) for v in values]]  # exact: the shortest repr that reads back
    unit = str(getattr(swept, "unit", "") or "")
    return _finish(args, done.equation, done.batch, done.constants,
                   [tables.column_header(name, unit)], cells, [name],
                   [values],
                   {"sweep": words.sweep_text(name, float(values[0]), float(values[-1]),
                                              int(values.size), unit=unit, log=args.log)})


def worksheet_table(ws: Any) -> Any:
    """A worksheet's table of inputs solved, as the calculation sheet is handed it."""
    from app.documents.tables import results_of
    from solvers.batch import solve_inputs

    try:
        return results_of(ws.table, solve_inputs(ws))
    except ValueError as exc:
        raise _input_error("table", exc) from None
