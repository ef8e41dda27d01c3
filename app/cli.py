"""The ``zerotrace`` command: ``solve``, ``scan``, ``batch``, ``sweep``, ``report`` headless;
alone, it opens the window (``batch`` and ``sweep`` live in :mod:`app.tables_cli`).

Every sub-command is a thin shell over :mod:`solvers.pipeline`: it builds a
:class:`~app.documents.worksheet.Worksheet` from the flags (or a file), calls the core and
prints. Exit status: 0 for results (a run that did not converge is a result), 2 for
bad input, with one line on stderr and never a traceback.

Heavy modules (Qt, matplotlib, reportlab) are imported only by the sub-command that
needs them, so ``zerotrace solve`` starts about as fast as sympy and numpy import.
"""

from __future__ import annotations

import argparse
import json
import math
import re
import sys
from collections.abc import Callable, Sequence
from dataclasses import replace
from typing import Any, NoReturn

from app import systems_cli, terminal
from app.terminal import caution

EXIT_OK = 0
EXIT_BAD_INPUT = 2
EXIT_INTERNAL = 1  # a defect of zerotrace, not of the input


class InputError(Exception):
    """Bad command-line input: printed as one line, exit 2."""


class _Parser(argparse.ArgumentParser):
    """argparse that reports errors as one line and exit 2 (its own default is 2 plus usage)."""

    def format_help(self) -> str:
        if self.epilog is None:  # every command's help ends with the caution (words.CAUTION)
            self.epilog = caution()
        for action in self._actions:  # the registry is read on first use (it loads sympy)
            if action.help == _METHOD_HELP:
                action.help = _method_help()
        return super().format_help()

    def error(self, message: str) -> NoReturn:
        if message.startswith("unrecognized arguments: -"):
            message += " (an equation that looks like an option goes after '--')"
        raise InputError(f"{self.prog}: {message}")


_METHOD_HELP = "METHODS"  # placeholder: format_help lists the registry's methods


def _method_help() -> str:
    from app.documents.worksheet import DEFAULT_METHODS, METHOD_NAMES, SYSTEM_METHOD_NAMES

    every, default, system = (", ".join(m.replace("_", "-") for m in names)
                              for names in (METHOD_NAMES, DEFAULT_METHODS, SYSTEM_METHOD_NAMES))
    return (f"{every}; repeat for several (default: {default}); for a system {system}, all "
            "by default")


def _method_name(text: str) -> str:
    from app.documents.worksheet import METHOD_NAMES, SYSTEM_METHOD_NAMES

    name = text.strip().lower().replace("-", "_")
    if name not in METHOD_NAMES and name not in SYSTEM_METHOD_NAMES:
        choices = ", ".join(m.replace("_", "-") for m in dict.fromkeys(
            (*METHOD_NAMES, *SYSTEM_METHOD_NAMES)))
        raise argparse.ArgumentTypeError(f"unknown method {text!r} (choose from {choices})")
    return name


_NUMBER_AND_UNIT = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*[A-Za-zµ°%].*")


def _finite(text: str) -> float:
    """An argparse type: a finite number. A number with a unit typed after it (--x0 "1.2 m",
    --bracket 0.5m 3m) is told where the unit goes: start values, brackets and the scan
    range are in the unknown's unit, which --unknown-unit gives."""
    from app.documents.tables import parse_number

    text = text.strip()  # a value that starts with '-' arrives marked (see _mark_values)
    value = parse_number(text)  # the window's rule: float() would read 1_0 as 10
    if value is not None:
        return value
    try:
        beyond = not math.isfinite(float(text))
    except ValueError:
        beyond = False
    if beyond:  # nan, inf, 1e400
        raise argparse.ArgumentTypeError(f"{text!r} is not a finite number")
    hint = (" (a plain number: start values, the bracket and the range are in the "
            "unknown's unit, which --unknown-unit gives)"
            if _NUMBER_AND_UNIT.fullmatch(text) else "")
    raise argparse.ArgumentTypeError(f"{text!r} is not a number{hint}")


def _setting(key: str) -> Callable[[str], float]:
    """An argparse type: a finite number meeting the worksheet's rule for ``key`` (the
    same rules the worksheet loader and the window's fields apply)."""

    def parse(text: str) -> float:
        from app.documents.worksheet import setting_problem

        text = text.strip()  # a value that starts with '-' arrives marked (see _mark_values)
        value = _finite(text)
        problem = setting_problem(key, value)
        if problem:
            raise argparse.ArgumentTypeError(f"{text!r} {problem}")
        return int(value) if key == "max_iter" else value

    return parse


_WHOLE = re.compile(r"[+-]?[0-9]+")


def _whole(low: int, high: int) -> Callable[[str], int]:
    """An argparse type: a whole number from ``low`` to ``high``."""

    def parse(text: str) -> int:
        text = text.strip()
        if not _WHOLE.fullmatch(text):  # int() also reads 1_000 and non-ASCII digits
            raise argparse.ArgumentTypeError(f"{text!r} is not a whole number")
        value = int(text)
        if not low <= value <= high:
            raise argparse.ArgumentTypeError(f"{text!r} must be from {low} to {high}")
        return value

    return parse


_count_samples = _whole(3, 100_000_000)  # scan sampling density
_figures = _whole(1, 17)  # significant figures printed (17 hold every double)


def _param(text: str) -> tuple[str, float, str]:
    """``NAME=VALUE`` or ``NAME=VALUE UNIT`` -> (name, number, unit text or '')."""
    name, sep, value = text.partition("=")
    name = name.strip()
    if not sep or not name:
        raise argparse.ArgumentTypeError(f"{text!r} is not NAME=VALUE")
    if not (name.isidentifier() and name.isascii()) or name.startswith("_"):
        raise argparse.ArgumentTypeError(f"{name!r} is not a valid parameter name")
    try:
        return name, _param_value(name, value), ""
    except argparse.ArgumentTypeError as plain:
        from solvers.units import with_unit

        unit_split = with_unit(value)
        if unit_split is None:
            raise plain from None
        number_text, unit = unit_split
        number = _param_value(name, number_text)
        from solvers.equation import EquationError
        from solvers.units import read_unit

        try:
            read_unit(unit)
        except EquationError as exc:
            raise argparse.ArgumentTypeError(f"value of {name}: {exc}") from None
        return name, number, " ".join(unit.split())


def distinct_names(flag: str, names: Sequence[str], each: str) -> None:
    """Refuse a name given twice by a repeated flag (InputError: exit 2): which of the two
    values was meant cannot be told, and the later silently winning hid the slip (``--x0
    x=2 --x0 x=3`` for x and y was answered "no start value for 'y'")."""
    seen: set[str] = set()
    for name in names:
        if name in seen:
            raise InputError(f"{flag} {name} is given more than once; give each {each} once")
        seen.add(name)


def distinct_params(given: Sequence[tuple[str, float, str]]) -> None:
    """Refuse a name given twice by ``--param`` (see :func:`distinct_names`)."""
    distinct_names("--param", [name for name, _value, _unit in given], "parameter")


def note_unused_params(text: str, given: Sequence[tuple[str, float, str]]) -> None:
    """One line on stderr for each ``--param`` the equation does not use (not an error:
    the run goes on; a close name the equation lacks is also named by the parse error)."""
    from solvers.equation import EquationError
    from solvers.equation.lines import read_lines

    try:
        reading = read_lines(text)
    except EquationError:  # the parse says what is wrong with the text itself
        return
    # a line `h = ...` reads as a definition until h is given a value: a name the text
    # defines is used (what a value for it does is the equation's own rule to say)
    names = {*reading.names, *(d.name for d in reading.definitions)}
    for name, _value, _unit in given:
        if name not in names:
            print(f"note: parameter '{name}' is not used by the equation", file=sys.stderr)


def with_params(ws: Any, given: list[tuple[str, float, str]]) -> Any:
    """``ws`` with the ``--param`` values (name, number, unit text) over its own; a
    parameter keeps its note. A name given twice is refused (InputError); one the
    equation does not use is noted on stderr."""
    from app.documents.worksheet import Parameter

    distinct_params(given)
    note_unused_params(ws.equation, given)
    params = {p.name: p for p in ws.parameters}
    for name, value, unit in given:
        note = params[name].note if name in params else ""
        params[name] = Parameter(name, value, note, unit)
    return replace(ws, parameters=tuple(params.values()))


def _param_value(name: str, text: str) -> float:
    """A parameter value, read by the equation parser's own number rule.

    Python's ``float`` takes '1_000' and fullwidth digits ('１'); the parser refuses
    them. The text goes through the parser first (its tokenizer and its checks on
    numbers beyond double precision), so the command line refuses exactly what the
    equation would, with the same message; then it must be one plain number.
    """
    from solvers.equation import EquationError, free_names

    shown = text.strip()
    if not shown:
        raise argparse.ArgumentTypeError(f"value of {name} is empty; give a number")
    try:
        free_names(shown)
    except EquationError as exc:
        raise argparse.ArgumentTypeError(f"value of {name}: {exc}") from None
    try:
        number = float(shown)
    except ValueError:
        raise argparse.ArgumentTypeError(f"value of {name} ({shown!r}) is not a number") from None
    if not math.isfinite(number):
        raise argparse.ArgumentTypeError(f"value of {name} must be finite")
    return number


def _add_equation_options(p: argparse.ArgumentParser, *, equation_required: bool,
                          systems: bool = False) -> None:
    """The equation and the options every command that reads one takes. ``systems``: the
    command also solves a system of equations (only ``solve``), and its help says how;
    ``scan``, ``batch`` and ``sweep`` take one equation in one unknown."""
    p.add_argument(
        "equation",
        nargs=None if equation_required else "?",
        metavar="EQUATION",
        help="'lhs = rhs' or an expression meaning expr = 0; ^ or ** for powers; lines "
        "separated by ';' ("
        + ("definitions name = expression before it; several equations make a system)"
           if systems else "definitions name = expression before the one equation)"),
    )
    # --unknown and --unknown-unit collect every use for all commands: systems_cli turns
    # them back into one value and refuses a second unknown where there is no system
    p.add_argument("--unknown", metavar="X", action="append",
                   help="the name to solve for (inferred if omitted)"
                   + ("; repeat for a system" if systems else ""))
    p.add_argument(
        "--param",
        action="append",
        type=_param,
        default=[],
        metavar="NAME=VALUE",
        help="a parameter value, optionally with a unit ('D=150 mm'); repeat for each",
    )
    p.add_argument("--unknown-unit", metavar="U", action="append",
                   type=systems_cli.unknown_unit_value,
                   help="the unit of the unknown, its start values and range (default: the "
                   "SI unit its dimension implies)"
                   + ("; NAME=U for an unknown of a system, repeat for each" if systems
                      else ""))
    p.add_argument("--no-dimension-check", action="store_true",
                   help="convert units but do not check the equation's dimensions (said on "
                   "every output)")
    p.add_argument("--json", action="store_true", help="print JSON for machines")


def _build_parser() -> _Parser:
    parser = _Parser(
        prog="zerotrace",
        description="Find, verify and document the real roots of a nonlinear design equation. "
        "With no command, opens the window.",
    )
    parser.add_argument("--version", action="store_true", help="print the version and exit")
    sub = parser.add_subparsers(dest="command", parser_class=_Parser, metavar="COMMAND")

    solve = sub.add_parser("solve", help="run root-finding methods side by side")
    _add_equation_options(solve, equation_required=False, systems=True)
    solve.add_argument("--worksheet", metavar="FILE", help="run a saved worksheet (flags override)")
    solve.add_argument(
        "--method",
        action="append",
        type=_method_name,
        default=[],
        metavar="M",
        help=_METHOD_HELP,
    )
    solve.add_argument("--x0", type=systems_cli.x0_value, action="append", metavar="V",
                       help="initial guess; NAME=VALUE for each unknown of a system")
    solve.add_argument("--x1", type=_finite, metavar="V", help="second point for the secant")
    solve.add_argument("--bracket", nargs=2, type=_finite, metavar=("A", "B"), help="bracket ends")
    solve.add_argument("--xtol", type=_setting("xtol"), metavar="V",
                       help="absolute step tolerance")
    solve.add_argument("--rtol", type=_setting("rtol"), metavar="V",
                       help="relative step tolerance")
    solve.add_argument("--ftol", type=_setting("ftol"), metavar="V",
                       help="absolute residual tolerance")
    solve.add_argument("--max-iter", type=_setting("max_iter"), metavar="N",
                       help="iteration cap")
    solve.add_argument("--damping", type=_setting("damping"), metavar="L",
                       help="Newton damping, 0 < L <= 1")
    solve.add_argument("--steps", action="store_true", help="print every iterate of every method")
    solve.add_argument("--figures", type=_figures, default=None, metavar="N",
                       help="significant figures of the roots printed (1-17; default: every "
                       "digit, as the CSV holds them)")
    solve.add_argument("--csv", metavar="PATH", help="write the iteration log as CSV")
    solve.add_argument("--force", action="store_true", help="replace an existing output file")

    scan = sub.add_parser("scan", help="find every real root in a range")
    _add_equation_options(scan, equation_required=False)
    scan.add_argument("--worksheet", metavar="FILE", help="scan a saved worksheet's range")
    scan.add_argument("--from", dest="start", type=_finite, metavar="A", help="range start")
    scan.add_argument("--to", dest="stop", type=_finite, metavar="B", help="range end")
    scan.add_argument(
        "--samples", type=_count_samples, metavar="N",
        help="sampling density (default 2001; the scan refines where f turns fast)",
    )
    scan.add_argument("--csv", metavar="PATH", help="write the roots table as CSV")
    scan.add_argument("--force", action="store_true", help="replace an existing output file")

    report = sub.add_parser("report", help="write the PDF calculation sheet of a worksheet")
    report.add_argument("worksheet", metavar="WORKSHEET")
    report.add_argument("--pdf", required=True, metavar="OUT.pdf", help="the sheet to write")
    report.add_argument("--csv-dir", metavar="DIR", help="also write the CSV files behind it")
    report.add_argument("--force", action="store_true", help="replace existing output files")
    from app.tables_cli import add_table_commands

    add_table_commands(sub)
    return parser


# ----------------------------------------------------------------- worksheet from flags


def _load_worksheet(path: str):
    from app.documents.worksheet import load

    return load(path)


def _worksheet_from_args(args: argparse.Namespace):
    from app.documents.worksheet import Settings, Worksheet, tolerances_problem

    systems_cli.one_equation(args)  # --unknown, --x0: one value each here

    if args.worksheet:
        ws = _load_worksheet(args.worksheet)
        if args.equation:
            ws = replace(ws, equation=args.equation, unknown=None)
    elif args.equation:
        ws = Worksheet(equation=args.equation)
    else:
        raise InputError(f"zerotrace {args.command}: give an EQUATION or --worksheet FILE")
    if not ws.equation.strip():
        raise InputError(f"zerotrace {args.command}: the equation is empty")
    if args.unknown:
        ws = replace(ws, unknown=args.unknown)
    if args.param:
        ws = with_params(ws, args.param)
    if args.unknown_unit is not None:
        ws = replace(ws, unknown_unit=_unknown_unit(args.unknown_unit))
    if args.no_dimension_check:
        ws = replace(ws, dimension_check=False)
    s = ws.settings if args.worksheet else Settings()
    changes: dict[str, Any] = {}
    for flag in ("x0", "x1", "xtol", "rtol", "ftol", "max_iter", "damping"):
        value = getattr(args, flag, None)
        if value is not None:
            changes[flag] = value
    if getattr(args, "bracket", None):
        a, b = args.bracket
        if a == b:
            raise InputError("zerotrace solve: --bracket ends must differ")
        changes["bracket"] = (a, b)
    if getattr(args, "method", None):
        changes["methods"] = tuple(dict.fromkeys(args.method))
    s = replace(s, **changes)
    problem = tolerances_problem(s.xtol, s.rtol, s.ftol)
    if problem:
        raise InputError(f"zerotrace solve: {problem} (set --xtol, --rtol or --ftol)")
    return replace(ws, settings=s)


def _unknown_unit(text: str) -> str | None:
    from solvers.equation import EquationError
    from solvers.units import read_unit

    if not text.strip():
        return None
    try:
        return read_unit(text).text
    except EquationError as exc:
        raise InputError(f"--unknown-unit: {exc}") from None


def _json_out(data: dict) -> None:
    print(json.dumps(data, indent=2, allow_nan=False))


# ----------------------------------------------------------------- commands


def _output_path(path: str, force: bool, flag: str) -> str:
    from pathlib import Path

    if not path.strip():
        raise InputError(f"{flag}: the path is empty; give a file name")
    p = Path(path)
    if p.is_dir():
        raise InputError(f"{path}: is a folder; give a file name")
    if p.exists() and not force:
        raise InputError(f"{path}: already exists (use --force to replace it)")
    if not p.parent.exists():
        raise InputError(f"{path}: folder {str(p.parent)!r} does not exist")
    return path


def cmd_solve(args: argparse.Namespace) -> int:
    from app.documents import export
    from solvers import pipeline

    if systems_cli.is_system(args):
        return systems_cli.cmd_solve_system(args)
    ws = _worksheet_from_args(args)
    csv_path = _output_path(args.csv, args.force, "--csv") if args.csv is not None else None
    solution = pipeline.solve(ws)
    if csv_path:
        try:
            export.runs_csv(solution.runs, csv_path, meta=export.solution_meta(solution))
        except OSError as exc:
            raise InputError(f"{csv_path}: cannot write ({exc.strerror or exc})") from None
    if args.json:
        _json_out(export.solution_json(solution))
    else:
        terminal.print_solution(solution, steps=args.steps, figures=args.figures)
        if csv_path:
            print(f"iteration log written to {csv_path}")
    return EXIT_OK


def cmd_scan(args: argparse.Namespace) -> int:
    from app.documents import export
    from solvers import pipeline

    ws = _worksheet_from_args(args)
    if ws.system is not None and not args.equation:  # a scan samples f of one unknown
        raise InputError(f"zerotrace scan: {args.worksheet} holds a system of equations; a "
                         "scan takes one equation in one unknown (solve the system with "
                         "'zerotrace solve --worksheet FILE')")
    start = args.start if args.start is not None else (ws.scan[0] if ws.scan else None)
    stop = args.stop if args.stop is not None else (ws.scan[1] if ws.scan else None)
    if start is None or stop is None:
        raise InputError("zerotrace scan: give the range with --from A --to B")
    if not start < stop:
        raise InputError("zerotrace scan: --from must be less than --to")
    ws = replace(ws, scan=(start, stop))
    csv_path = _output_path(args.csv, args.force, "--csv") if args.csv is not None else None
    equation = pipeline.equation_of(ws)
    result = pipeline.scan_worksheet(ws, equation, samples=args.samples)
    if csv_path:
        meta = export.equation_meta(equation)
        try:
            export.roots_csv(result, csv_path, meta=meta)
        except OSError as exc:
            raise InputError(f"{csv_path}: cannot write ({exc.strerror or exc})") from None
    if args.json:
        data = export.scan_json(result)
        _json_out({"equation": ws.equation, "unknown": equation.unknown,
                   **export.units_json(equation), **data, "caution": export.CAUTION})
    else:
        terminal.print_scan(result, equation.unknown, equation.unknown_unit,
                            equation.residual_unit(derived=True))
        if csv_path:
            print(f"roots written to {csv_path}")
    return EXIT_OK


def cmd_report(args: argparse.Namespace) -> int:
    from app.documents import report
    from solvers import pipeline

    ws = _load_worksheet(args.worksheet)
    _output_path(args.pdf, args.force, "--pdf")
    if ws.system is not None:
        return systems_cli.cmd_report_system(args, ws)
    if args.csv_dir is not None:
        from pathlib import Path

        if not args.csv_dir.strip():
            raise InputError("--csv-dir: the path is empty; give a folder")
        if Path(args.csv_dir).exists() and not Path(args.csv_dir).is_dir():
            raise InputError(f"{args.csv_dir}: is a file, not a folder for the CSV files")
        # a missing folder is created by the report (and removed again if it fails)
    solution, scan = pipeline.solve_and_scan(ws)  # the sheet is handed results, never solves
    table = None
    if ws.table is not None:  # its table of inputs too (app.tables_cli solves it)
        from app.tables_cli import worksheet_table

        table = worksheet_table(ws)
    result = report.write_report(
        ws, args.pdf, solution=solution, scan=scan, csv_dir=args.csv_dir,
        worksheet_path=args.worksheet, overwrite=args.force, table=table,
    )
    print(f"calculation sheet written to {result.pdf_path} ({result.pages} pages)")
    for path in result.csv_paths:
        print(f"csv written to {path}")
    print(caution())
    return EXIT_OK


def cmd_window(argv: Sequence[str]) -> int:
    from app.qt_libraries import missing_libraries_message, missing_system_libraries, no_display

    if no_display():
        print(
            "error: zerotrace: no display for the window (DISPLAY and WAYLAND_DISPLAY are unset); "
            "use 'zerotrace solve', 'scan' or 'report' headless",
            file=sys.stderr,
        )
        return EXIT_BAD_INPUT
    missing = missing_system_libraries()
    if missing:  # Qt would abort the process naming only the first of them
        print(missing_libraries_message(missing), file=sys.stderr)
        return EXIT_BAD_INPUT
    from app.window import main as window_main

    return window_main(list(argv))


COMMANDS: dict[str, Callable[[argparse.Namespace], int]] = {
    "solve": cmd_solve,
    "scan": cmd_scan,
    "report": cmd_report,
}


# Exceptions that mean 'bad input'. EquationError, WorksheetError and ReportError are
# ValueErrors, so the core's modules need not be imported before a command runs.
BAD_INPUT: tuple[type[BaseException], ...] = (InputError, ValueError, FileExistsError)

# argparse reads any token that starts with '-' as an option unless it is a plain negative
# number (-3, -0.5): an equation such as -x^2+4 or a value such as -1e-8 would be refused.
# Tokens that cannot be options are marked with a leading space before parsing (argparse
# then takes them as values) and unmarked afterwards.
_OPTION_LIKE = re.compile(r"-[A-Za-z]+|--[A-Za-z][A-Za-z0-9-]*(=.*)?", re.DOTALL)
_MARK = " "


def _is_number(token: str) -> bool:
    try:
        float(token)
    except ValueError:
        return False
    return True


def _mark_values(argv: list[str]) -> tuple[list[str], set[str]]:
    """argv with value-like tokens marked, and the set of marked tokens."""
    out: list[str] = []
    changed: set[str] = set()
    for i, token in enumerate(argv):
        if token == "--":  # the user's own end of options: leave the rest as typed
            return out + argv[i:], changed
        if token.startswith("-") and len(token) > 1 and (
            _is_number(token) or not _OPTION_LIKE.fullmatch(token)
        ):
            token = _MARK + token
            changed.add(token)
        out.append(token)
    return out, changed


def _unmark(args: argparse.Namespace, marked: set[str]) -> None:
    for name, value in vars(args).items():
        if isinstance(value, str) and value in marked:
            setattr(args, name, value[len(_MARK):])


def _system_hint(args: argparse.Namespace | None, message: str) -> str:
    """'; ...' for a text the one-equation path refused ("a line before the equation must
    define a name") that holds as many equations as unknowns: it is a system, and how to
    solve it; '' otherwise."""
    text = getattr(args, "equation", None)
    if not isinstance(text, str) or "must define a name" not in message:
        return ""
    from solvers import parse_system

    given = {name: 1.0 for name, _value, _unit in (getattr(args, "param", None) or [])}
    try:
        system = parse_system(text, parameters=given)
    except (ValueError, ArithmeticError):  # not a system either: the refusal stands alone
        return ""
    names = system.unknowns
    if len(names) < 2:  # one equation among definitions: the refusal says it
        return ""
    if args.command == "solve":
        starts = " ".join(f"--x0 {n}=VALUE" for n in names)
        return (f"; the text is a system of {len(names)} equations in "
                f"{', '.join(names)}: give each a start value ({starts})")
    return (f"; the text is a system of {len(names)} equations in {', '.join(names)}: "
            f"zerotrace {args.command} takes one equation; zerotrace solve solves systems")


def main(argv: Sequence[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    _closed_streams_to_null()
    if not argv:
        return cmd_window(argv)
    parser = _build_parser()
    args: argparse.Namespace | None = None  # (bad input can be found before the flags are read)
    try:
        marked_argv, marked = _mark_values(argv)
        args = parser.parse_args(marked_argv)
        _unmark(args, marked)
        if args.version:
            from app.documents.export import tool_version

            print(f"zerotrace {tool_version()}")
            return EXIT_OK
        if args.command is None:
            raise InputError("zerotrace: give a command: solve, scan, batch, sweep or report "
                             "(see --help)")
        code = (COMMANDS.get(args.command) or args.run)(args)
        sys.stdout.flush()  # a closed pipe shows here, not at interpreter exit
        return code
    except BrokenPipeError:
        return _quiet_after_broken_pipe()
    except BAD_INPUT as exc:
        # EquationError and WorksheetError are ValueErrors carrying a one-line message.
        message = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        message += _system_hint(args, message)
        position = getattr(exc, "position", None)
        # EquationError messages already say where ("at column N" or "line L, column N").
        shown = isinstance(position, int) and "column" not in message
        where = f" (column {position + 1})" if shown else ""
        print(f"error: {message}{where}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except OSError as exc:
        where = f"{exc.filename}: " if exc.filename else ""
        print(f"error: {where}{exc.strerror or exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # noqa: BLE001 - a defect of ours: one line, never a traceback
        print(
            f"internal error ({type(exc).__name__}: {str(exc).splitlines()[0] if str(exc) else ''})"
            "; please report it with the command line",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


def _closed_streams_to_null() -> None:
    """A standard stream the caller closed (``zerotrace solve ... >&-``) is None in Python:
    point it at the null device, so that printing the results ends as output cut short by
    its reader does (quietly; files asked for with --csv, --out or --pdf are written), and
    not as an AttributeError reported as a defect of ours."""
    import os

    for name, mode in (("stdout", "w"), ("stderr", "w")):
        if getattr(sys, name) is None:
            setattr(sys, name, open(os.devnull, mode, encoding="utf-8"))  # noqa: SIM115


def _quiet_after_broken_pipe() -> int:
    """The reader of our output went away (``zerotrace scan ... | head``): that is its
    choice, not an error. Point stdout at the null device so the interpreter's final
    flush cannot complain, and exit 0 with no message."""
    import os

    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError):  # stdout has no file descriptor (captured): nothing to do
        pass
    return EXIT_OK


if __name__ == "__main__":
    # Run the module imported under its own name (python -m runs a copy called __main__):
    # the table commands raise app.cli.InputError, which this copy would not recognise.
    from app.cli import main as _main

    raise SystemExit(_main())
