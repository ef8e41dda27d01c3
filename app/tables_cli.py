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
from typing import Any

import numpy as np

from app import terminal
from app.cli import (
    EXIT_OK,
    InputError,
    _add_equation_options,
    _finite,
    _json_out,
    _method_name,
    _output_path,
    _setting,
)

START_COLUMNS = {"x0": "x0", "x1": "x1", "bracket_a": "a", "bracket_b": "b"}
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
                       help="one header row of parameter names, one row of values per case")
    batch.set_defaults(run=cmd_batch)
    sweep = sub.add_parser("sweep", help="follow a root along one parameter (continuation)")
    _common(sweep)
    sweep.add_argument("--vary", required=True, metavar="NAME=START:STOP:COUNT",
                       help="the parameter swept and its values")
    sweep.add_argument("--log", action="store_true", help="space the values logarithmically")
    sweep.add_argument("--within", nargs=2, type=_finite, metavar=("A", "B"),
                       help="range of the unknown: a root outside it ends the branch")
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


def _parse(args: argparse.Namespace, values: list[dict[str, float]]):
    """Parse the equation once, with the first row of values it accepts.

    A row whose values give part of the equation no value must not stop the table (it
    becomes a ``bad_parameters`` row), so a few rows are tried; when none parses, the
    first row's error is the message (a syntax error reads the same for every row).
    """
    from solvers import EquationError, parse_equation

    first: EquationError | None = None
    for row in values:
        try:
            return parse_equation(args.equation, unknown=args.unknown, parameters=row)
        except EquationError as exc:
            first = first or exc
    assert first is not None
    raise first


def _starts(args: argparse.Namespace, method: str, columns: dict[str, np.ndarray]
            ) -> dict[str, Any]:
    from solvers import METHODS

    x0 = columns.get("x0", args.x0)
    x1 = columns.get("x1", args.x1)
    a = columns.get("a", args.bracket[0] if args.bracket else None)
    b = columns.get("b", args.bracket[1] if args.bracket else None)
    needs = METHODS[method].needs
    missing = {"x0": x0 is None, "x1": x1 is None, "bracket": a is None or b is None}
    for need in needs:
        if missing[need]:
            flag = {"x0": "--x0 (or an x0 column)", "x1": "--x1 (or an x1 column)",
                    "bracket": "--bracket A B (or bracket_a, bracket_b columns)"}[need]
            raise InputError(f"zerotrace {args.command}: method {method} needs {flag}")
    return {"x0": x0, "x1": x1, "bracket": (a, b) if a is not None and b is not None else None}


def _meta(args: argparse.Namespace, equation: Any, batch: Any, constants: dict[str, float],
          extra: dict[str, str]) -> dict[str, str]:
    from app.documents.export import metadata

    settings = {"method": batch.method, **batch.settings}
    return metadata(equation=args.equation, unknown=equation.unknown, parameters=constants,
                    settings=settings, extra=extra)


def _finish(args: argparse.Namespace, equation: Any, batch: Any, constants: dict[str, float],
            headers: list[str], cells: list[list[str]] | list[tuple[str, ...]],
            names: list[str], columns: list[np.ndarray], extra: dict[str, str]) -> int:
    from app.documents import tables
    from app.documents.words import batch_note_text, batch_summary

    out = _output_path(args.out, args.force, "--out") if args.out is not None else None
    if out:
        try:
            tables.results_csv(batch, headers, cells, out,
                               meta=_meta(args, equation, batch, constants, extra),
                               overwrite=args.force)
        except OSError as exc:
            raise InputError(f"{out}: cannot write ({exc.strerror or exc})") from None
    if args.json:
        data = tables.results_json(batch, names, columns, equation=args.equation,
                                   unknown=equation.unknown, parameters=constants)
        _json_out({**data, **{k: v for k, v in extra.items() if k not in data}})
        return EXIT_OK
    print(f"equation: {args.equation}")
    print(f"unknown:  {equation.unknown}    method: {batch.method}")
    print(batch_summary(batch))
    for index, code in batch.notes[:20]:
        print(f"note: row {index + 1}: {batch_note_text(code)}")
    if len(batch.notes) > 20:
        print(f"note: ... {len(batch.notes) - 20} more notes (all of them in --out or --json)")
    _print_rows(batch, names, columns)
    if out:
        print(f"results written to {out}")
    print(terminal.caution())
    return EXIT_OK


def _print_rows(batch: Any, names: list[str], columns: list[np.ndarray]) -> None:
    from app.documents import words

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
                     words.exact(float(batch.root.flat[i])) if batch.converged.flat[i] else "-",
                     str(batch.reason.flat[i])])
    print()
    print(terminal._table(["row", *names, "root", "reason"], rows))


def cmd_batch(args: argparse.Namespace) -> int:
    from app.documents.tables import read_table
    from solvers import solve_batch

    settings = _settings(args)
    table = read_table(args.table)
    constants = dict(args.param)
    for column in table.columns:
        if column.unit:
            raise InputError(
                f"{table.path}: column {column.header!r}: units in table headers are not "
                f"supported yet; give {column.name} in the equation's units and write the "
                f"header as {column.name!r}")
        if column.name in constants:
            raise InputError(f"{table.path}: '{column.name}' is both a column and a --param")
    names = [c.name for c in table.columns]
    rows = [{**constants, **{n: float(table.values[n][i]) for n in names}}
            for i in range(min(table.rows, 20))]
    try:
        equation = _parse(args, [{k: v for k, v in r.items() if k not in START_COLUMNS}
                                 for r in rows])
    except ValueError:
        equation = _parse(args, rows)  # a parameter may be called x0: give it its value
    parameters = set(equation.names[1:])
    arrays: dict[str, np.ndarray] = {}
    starts: dict[str, np.ndarray] = {}
    for j, column in enumerate(table.columns):
        if column.name in parameters:
            arrays[column.name] = table.values[column.name]
        elif column.name in START_COLUMNS:
            starts[START_COLUMNS[column.name]] = table.values[column.name]
        elif column.name == equation.unknown:
            raise InputError(f"{table.path}: column {j + 1} {column.header!r} is the unknown; "
                             "give start values as x0 (or bracket_a, bracket_b) columns")
        else:
            known = ", ".join(sorted(parameters)) or "none"
            raise InputError(f"{table.path}: column {j + 1} {column.header!r} is not a "
                             f"parameter of the equation (its parameters: {known})")
    start = _starts(args, args.method, starts)
    used = {k: v for k, v in constants.items() if k in parameters}
    batch = solve_batch(equation, method=args.method, parameters={**used, **arrays},
                        x0=start["x0"], x1=start["x1"], bracket=start["bracket"], **settings)
    return _finish(args, equation, batch, used, [c.header for c in table.columns],
                   list(table.cells), names, [table.values[n] for n in names],
                   {"table": f"{table.path} ({table.rows} rows)",
                    "columns": "; ".join(
                        f"{c.header} ({'parameter' if c.name in arrays else 'start value'})"
                        for c in table.columns)})


def _vary(args: argparse.Namespace) -> tuple[str, np.ndarray]:
    text = args.vary
    name, sep, spec = text.partition("=")
    name = name.strip()
    parts = spec.split(":")
    if not sep or len(parts) != 3 or not name.isidentifier():
        raise InputError(f"--vary: {text!r} is not NAME=START:STOP:COUNT")
    try:
        start, stop = _finite(parts[0]), _finite(parts[1])
    except argparse.ArgumentTypeError as exc:
        raise InputError(f"--vary: {exc}") from None
    try:
        count = int(parts[2])
    except ValueError:
        raise InputError(f"--vary: COUNT {parts[2].strip()!r} is not a whole number") from None
    if not 2 <= count <= MAX_SWEEP:
        raise InputError(f"--vary: COUNT must be from 2 to {MAX_SWEEP}, got {count}")
    if args.log:
        if not (start > 0 and stop > 0):
            raise InputError("--vary with --log: START and STOP must be > 0")
        return name, np.geomspace(start, stop, count)
    return name, np.linspace(start, stop, count)


def cmd_sweep(args: argparse.Namespace) -> int:
    from solvers import sweep

    settings = _settings(args)
    name, values = _vary(args)
    constants = dict(args.param)
    if name in constants:
        raise InputError(f"--vary: '{name}' is also given by --param")
    from solvers.equation import free_names

    if name == args.unknown or name not in free_names(args.equation):
        raise InputError(f"--vary: '{name}' is " + ("the unknown" if name == args.unknown
                                                    else "not a name of the equation"))
    equation = _parse(args, [{**constants, name: float(v)} for v in values[:20]])
    if name not in equation.names[1:]:
        raise InputError(f"--vary: '{name}' is the unknown; sweep a parameter")
    used = {k: v for k, v in constants.items() if k in equation.names}
    start = _starts(args, args.method, {})
    batch = sweep(equation, name, values, method=args.method, parameters=used,
                  x0=start["x0"], x1=start["x1"], bracket=start["bracket"],
                  bounds=tuple(args.within) if args.within else None, **settings)
    cells = [[repr(float(v)) for v in values]]
    spacing = "logarithmic" if args.log else "linear"
    return _finish(args, equation, batch, used, [name], cells, [name], [values],
                   {"sweep": f"{name} from {values[0]!r} to {values[-1]!r}, {values.size} "
                             f"values, {spacing} spacing; each row starts from the previous "
                             "row's root"})
