"""STUB: being written (equation parsing). Interface per ../shared/DESIGN.md."""
from __future__ import annotations
from dataclasses import dataclass
from typing import Any, Callable


class EquationError(ValueError):
    def __init__(self, message: str, position: int | None = None):
        super().__init__(message)
        self.position = position


@dataclass(frozen=True)
class Equation:
    text: str
    unknown: str
    parameters: dict
    expr: Any
    derivative: Any
    f: Callable
    fprime: Callable | None


def parse_equation(text: str, unknown: str | None = None, parameters=None) -> Equation:
    raise NotImplementedError
