"""STUB: being written (range scan)."""
from __future__ import annotations
from dataclasses import dataclass, field


@dataclass(frozen=True)
class Root:
    x: float
    residual: float
    multiplicity: int = 1


@dataclass(frozen=True)
class Scan:
    roots: list = field(default_factory=list)
    poles: list = field(default_factory=list)


def scan(f, a, b, *, fprime=None, **kw): raise NotImplementedError
