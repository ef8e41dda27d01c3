"""zerotrace numerics core: parse an equation, run root-finding methods, scan a range.

Never imports Qt. Every front end (CLI, window, report, tests) calls these functions.
"""

from solvers.batch import Batch, BatchCancelled, solve_batch, sweep
from solvers.equation import Equation, EquationError, parse_equation
from solvers.methods import (
    METHODS,
    MethodSpec,
    bisection,
    brent,
    false_position,
    illinois,
    newton,
    run_method,
    secant,
)
from solvers.records import REASONS, Run, Step, observed_order
from solvers.scan import Root, Scan, ScanCancelled, scan
from solvers.systems import (
    System,
    SystemCancelled,
    SystemRun,
    SystemStep,
    parse_system,
    solve_system,
)

__all__ = [
    "Batch",
    "BatchCancelled",
    "METHODS",
    "REASONS",
    "Equation",
    "EquationError",
    "MethodSpec",
    "Root",
    "Run",
    "Scan",
    "ScanCancelled",
    "Step",
    "System",
    "SystemCancelled",
    "SystemRun",
    "SystemStep",
    "bisection",
    "brent",
    "false_position",
    "illinois",
    "newton",
    "observed_order",
    "parse_equation",
    "parse_system",
    "run_method",
    "scan",
    "secant",
    "solve_system",
    "solve_batch",
    "sweep",
]
