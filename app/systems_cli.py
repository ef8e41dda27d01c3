"""``zerotrace solve`` for a system of equations (several unknowns), and the flags they share.

A solve is a system when ``--unknown`` is given more than once, when any ``--x0`` reads
``NAME=VALUE``, or when the worksheet holds a system. Then the equations are separated by
``;`` or line breaks (definitions ``name = expression`` may stand among them), each unknown
needs a start value (``--x0 NAME=VALUE``; a plain ``--x0 V`` is the start of every unknown
not named), and the methods are those for systems (``newton``, ``broyden``). Otherwise
``--unknown`` and ``--x0`` take one value, as they always did.
"""

from __future__ import annotations

import argparse
from dataclasses import replace
from typing import Any


def x0_value(text: str) -> float | tuple[str, float]:
    """An argparse type for ``--x0``: a number, or NAME=VALUE (a system's start value)."""
    from app.cli import _finite, _param

    if "=" in text:
        name, number, unit = _param(text)
        if unit:
            raise argparse.ArgumentTypeError(f"--x0 {name}: a start value is a plain number "
                                             f"(no unit), got {unit!r}")
        return name, number
    return _finite(text)


def unknown_unit_value(text: str) -> str | tuple[str, str]:
    """An argparse type for ``--unknown-unit``: unit text, or NAME=U (an unknown of a
    system; the unit is read now). Unit text never holds '=', so the two cannot mix."""
    if "=" not in text:
        return text  # one equation's unit: read where the worksheet is built, as before
    name, _sep, unit = text.partition("=")
    name = name.strip()
    if not (name.isidentifier() and name.isascii()) or name.startswith("_"):
        raise argparse.ArgumentTypeError(f"{name!r} is not a valid name of an unknown")
    if not unit.strip():
        raise argparse.ArgumentTypeError(f"--unknown-unit {name}=: the unit is empty")
    from solvers.equation import EquationError
    from solvers.units import read_unit

    try:
        return name, read_unit(unit).text
    except EquationError as exc:
        raise argparse.ArgumentTypeError(f"--unknown-unit {name}: {exc}") from None


def method_names() -> tuple[str, ...]:
    from solvers.worksheet import SYSTEM_METHOD_NAMES

    return SYSTEM_METHOD_NAMES


def is_system(args: argparse.Namespace) -> bool:
    """Whether the flags (or the worksheet) ask for a system."""
    unknowns = args.unknown if isinstance(args.unknown, list) else []
    starts = getattr(args, "x0", None)
    starts = starts if isinstance(starts, list) else []
    units = getattr(args, "unknown_unit", None)
    units = units if isinstance(units, list) else []
    if len(unknowns) > 1 or any(isinstance(v, tuple) for v in starts + units):
        return True
    if getattr(args, "worksheet", None):
        from app.cli import _load_worksheet

        return _load_worksheet(args.worksheet).system is not None
    return False


def one_equation(args: argparse.Namespace) -> None:
    """``--unknown``, ``--x0`` and ``--method`` back to what one equation takes, in place;
    InputError naming the flag when they ask for a system."""
    from app.cli import InputError
    from solvers.worksheet import METHOD_NAMES

    unknowns = args.unknown
    if isinstance(unknowns, list):  # a command whose --unknown repeats (solve, scan)
        if len(unknowns) > 1:
            if args.command != "solve":  # only solve takes a system
                raise InputError(f"zerotrace {args.command}: one unknown ({args.command} "
                                 "takes one equation; a system is solved with 'zerotrace "
                                 "solve'), got --unknown " + " ".join(unknowns))
            raise InputError(f"zerotrace {args.command}: --unknown given {len(unknowns)} "
                             "times; several unknowns need several equations (a system)")
        args.unknown = unknowns[0] if unknowns else None
    starts = getattr(args, "x0", None)
    if isinstance(starts, list):  # solve's --x0 repeats (NAME=VALUE for a system)
        named = [v for v in starts if isinstance(v, tuple)]
        if named:
            raise InputError(f"zerotrace {args.command}: --x0 {named[0][0]}=... names an "
                             "unknown of a system; one equation takes --x0 VALUE")
        args.x0 = starts[-1] if starts else None
    args.unknown_unit = one_unknown_unit(args)
    for m in getattr(args, "method", None) or []:
        if m not in METHOD_NAMES:
            raise InputError(f"zerotrace {args.command}: --method {m} is for systems of "
                             "equations (name two or more unknowns)")


def one_unknown_unit(args: argparse.Namespace) -> str | None:
    """The one ``--unknown-unit U`` of one equation (the last given; None without); InputError
    when it names an unknown of a system (NAME=U)."""
    from app.cli import InputError

    units = getattr(args, "unknown_unit", None)
    if not isinstance(units, list):  # already one value
        return units
    named = [v for v in units if isinstance(v, tuple)]
    if named:
        raise InputError(f"zerotrace {args.command}: --unknown-unit {named[0][0]}=... "
                         "names an unknown of a system; one equation takes --unknown-unit U")
    return units[-1] if units else None


def _worksheet(args: argparse.Namespace) -> Any:
    from app.cli import InputError, _load_worksheet, distinct_names, with_params
    from app.documents.worksheet import (
        StartValue,
        SystemSpec,
        Worksheet,
        tolerances_problem,
    )

    if args.worksheet:
        ws = _load_worksheet(args.worksheet)
        if args.equation:
            ws = replace(ws, equation=args.equation)
    elif args.equation:
        ws = Worksheet(equation=args.equation)
    else:
        raise InputError("zerotrace solve: give the EQUATIONS or --worksheet FILE")
    if not ws.equation.strip():
        raise InputError("zerotrace solve: the equations are empty")
    if args.param:
        ws = with_params(ws, args.param)
    starts = args.x0 or []
    distinct_names("--unknown", list(args.unknown or []), "unknown")
    distinct_names("--x0", [v[0] for v in starts if isinstance(v, tuple)],
                   "unknown's start value")
    distinct_names("--unknown-unit", [v[0] for v in getattr(args, "unknown_unit", None) or []
                                      if isinstance(v, tuple)], "unknown's unit")
    named = dict(v for v in starts if isinstance(v, tuple))
    plain = [v for v in starts if not isinstance(v, tuple)]
    old = ws.system.start() if ws.system else {}
    names = list(args.unknown or []) or list(old) or list(_inferred_unknowns(ws))
    start: dict[str, float] = {}
    for n in names:
        if n in named:
            start[n] = named[n]
        elif plain:
            start[n] = plain[-1]
        elif n in old:
            start[n] = old[n]
        else:
            raise InputError(f"zerotrace solve: no start value for '{n}'; give --x0 {n}=VALUE")
    stray = [n for n in named if n not in start]
    if stray:
        raise InputError(f"zerotrace solve: --x0 {stray[0]}=...: '{stray[0]}' is not an "
                         "unknown (name it with --unknown)")
    methods = tuple(dict.fromkeys(args.method or [])) or (
        ws.system.methods if ws.system else method_names())
    for m in methods:
        if m not in method_names():
            raise InputError(f"zerotrace solve: --method {m.replace('_', '-')} solves one "
                             "equation; for a system choose " + ", ".join(method_names()))
    s = ws.settings
    changes = {f: getattr(args, f) for f in ("xtol", "rtol", "ftol", "max_iter")
               if getattr(args, f, None) is not None}
    s = replace(s, **changes)
    problem = tolerances_problem(s.xtol, s.rtol, s.ftol)
    if problem:
        raise InputError(f"zerotrace solve: {problem} (set --xtol, --rtol or --ftol)")
    old_units = ws.system.units() if ws.system else {}
    given_units = list(getattr(args, "unknown_unit", None) or [])
    plain_units = [v for v in given_units if not isinstance(v, tuple)]
    if plain_units:
        raise InputError(f"zerotrace solve: --unknown-unit {plain_units[0]}: a system names "
                         "the unknown (--unknown-unit NAME=U)")
    units = {**old_units, **dict(given_units)}
    stray = [n for n in units if n not in start]
    if stray:
        raise InputError(f"zerotrace solve: --unknown-unit {stray[0]}=...: '{stray[0]}' is "
                         "not an unknown")
    spec = SystemSpec(tuple(StartValue(n, v, units.get(n)) for n, v in start.items()),
                      methods)
    if args.no_dimension_check:
        ws = replace(ws, dimension_check=False)
    return replace(ws, settings=s, system=spec, unknown=None)


def _inferred_unknowns(ws: Any) -> tuple[str, ...]:
    from solvers.systems import parse_system

    return parse_system(ws.equation, None, ws.parameter_values()).unknowns


def cmd_solve_system(args: argparse.Namespace) -> int:
    from app.cli import EXIT_OK, InputError, _json_out, _output_path
    from app.documents import system_export
    from app.terminal_systems import print_system_solution
    from solvers.systems.pipeline import solve_worksheet

    for flag in ("x1", "bracket", "damping"):
        if getattr(args, flag, None) is not None:
            raise InputError(f"zerotrace solve: --{flag} is for one equation, not a system")
    ws = _worksheet(args)
    csv_path = _output_path(args.csv, args.force, "--csv") if args.csv is not None else None
    solution = solve_worksheet(ws)
    if csv_path:
        try:
            system_export.system_csv(solution, csv_path)
        except OSError as exc:
            raise InputError(f"{csv_path}: cannot write ({exc.strerror or exc})") from None
    if args.json:
        _json_out(system_export.system_json(solution))
    else:
        print_system_solution(solution, steps=args.steps, figures=args.figures)
        if csv_path:
            print(f"iteration log written to {csv_path}")
    return EXIT_OK


def cmd_report_system(args: argparse.Namespace, ws: Any) -> int:
    """``zerotrace report`` of a worksheet that holds a system (the output checked already)."""
    from app.cli import EXIT_OK, InputError
    from app.documents.report.system_sheet import write_system_report
    from app.terminal import caution
    from solvers.systems.pipeline import solve_worksheet

    if args.csv_dir is not None and not args.csv_dir.strip():
        raise InputError("--csv-dir: the path is empty; give a folder")
    solution = solve_worksheet(ws)  # the sheet is handed results, never solves
    result = write_system_report(ws, args.pdf, solution=solution, csv_dir=args.csv_dir,
                                 worksheet_path=args.worksheet, overwrite=args.force)
    print(f"calculation sheet written to {result.pdf_path} ({result.pages} pages)")
    for path in result.csv_paths:
        print(f"csv written to {path}")
    print(caution())
    return EXIT_OK
