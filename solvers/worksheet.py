"""The worksheet record: one equation (or a system of them), its parameters, method
settings and notes.

Plain frozen data that the pipeline turns into runs and scans. Reading and writing it
as a file (JSON, limits, validation) lives in :mod:`app.documents.worksheet`.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

from solvers.methods import METHODS
from solvers.units import Measured

METHOD_NAMES: tuple[str, ...] = tuple(METHODS)  # the registry's keys, in its order
DEFAULT_METHODS = ("newton", "secant", "false_position")


@dataclass(frozen=True)
class Parameter:
    """A named input of the equation: value in ``unit`` ('' for a plain number, taken as
    it stands), note free text."""

    name: str
    value: float
    note: str = ""
    unit: str = ""


@dataclass(frozen=True)
class Settings:
    """Start values and stopping rules shared by the methods.

    Defaults: xtol 1e-12 and rtol 4 machine epsilons (the step test
    |dx| <= xtol + rtol*|x|: full precision from Newton and the secant, about 1e-12
    absolute from bracketing methods; see solvers.methods); ftol 0 (residual test off,
    because the scale of f is the user's); 100 iterations (a converging method
    needs far fewer; the cap only ends hopeless runs); damping 1 (plain Newton).
    """

    methods: tuple[str, ...] = DEFAULT_METHODS
    x0: float | None = None
    x1: float | None = None
    bracket: tuple[float, float] | None = None
    xtol: float = 1e-12
    rtol: float = 4 * 2.220446049250313e-16
    ftol: float = 0.0
    max_iter: int = 100
    damping: float = 1.0


@dataclass(frozen=True)
class CalcInfo:
    """Title-block fields of a calculation package."""

    number: str = ""
    revision: str = ""
    prepared_by: str = ""
    checked_by: str = ""


@dataclass(frozen=True)
class Selection:
    """The root the engineer chose as the design value, and why."""

    root: float
    reason: str = ""


@dataclass(frozen=True)
class StartValue:
    """An unknown of a system, its start value and the unit it is in (None: the SI unit of
    the dimension the equations imply, or no unit)."""

    name: str
    x0: float
    unit: str | None = None


SYSTEM_METHOD_NAMES = ("newton", "broyden")  # solvers.systems.SYSTEM_METHODS' keys


@dataclass(frozen=True)
class SystemSpec:
    """What makes a worksheet a system: its unknowns with start values, in the order of x,
    and the methods run side by side. The equation text then holds several equations
    (and definitions); the stopping rules are the worksheet's settings."""

    unknowns: tuple[StartValue, ...]
    methods: tuple[str, ...] = ("newton", "broyden")

    def start(self) -> dict[str, float]:
        return {u.name: u.x0 for u in self.unknowns}

    def units(self) -> dict[str, str]:
        """name -> the chosen unit, for the unknowns that have one."""
        return {u.name: u.unit for u in self.unknowns if u.unit}


@dataclass(frozen=True)
class TableInputs:
    """A table of inputs, or a sweep, kept with the worksheet.

    ``columns`` are (name, values) in table order: parameters of the equation, or the
    start-value columns x0, x1, bracket_a, bracket_b; a sweep has one column, the values
    of the parameter swept, in order. ``method`` and the start values apply to every row
    that has none of its own; the stopping rules are the worksheet's.
    """

    columns: tuple[tuple[str, tuple[float, ...]], ...]
    kind: str = "table"  # or "sweep"
    method: str = "newton"
    x0: float | None = None
    x1: float | None = None
    bracket: tuple[float, float] | None = None
    # the unit of each column ('' for a plain number), in the order of ``columns``; () when
    # no column has one
    units: tuple[str, ...] = ()

    def unit_of(self, j: int) -> str:
        return self.units[j] if j < len(self.units) else ""

    @property
    def rows(self) -> int:
        return len(self.columns[0][1]) if self.columns else 0


@dataclass(frozen=True)
class Worksheet:
    equation: str
    unknown: str | None = None
    parameters: tuple[Parameter, ...] = ()
    settings: Settings = field(default_factory=Settings)
    scan: tuple[float, float] | None = None
    title: str = ""
    notes: str = ""
    calc: CalcInfo = field(default_factory=CalcInfo)
    selection: Selection | None = None
    unknown_unit: str | None = None  # the unit of the unknown, start values and scan range
    dimension_check: bool = True  # False: units converted, dimensions not checked (stated)
    system: SystemSpec | None = None  # None: one equation in one unknown
    table: TableInputs | None = None

    def parameter_values(self) -> dict[str, Any]:
        """name -> value for ``parse_equation``: a float, or a Measured when it has a unit."""
        return {p.name: Measured(p.value, p.unit) if p.unit else p.value
                for p in self.parameters}

    def with_changes(self, **changes: Any) -> Worksheet:
        return replace(self, **changes)


