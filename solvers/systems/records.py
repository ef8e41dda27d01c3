"""The records of a system solve: :class:`SystemStep` and :class:`SystemRun` (codes and
numbers, never words; frozen, with ``root`` and each step's ``x`` plain dicts (the type the
public contract names) copied at construction: treat them as read-only).

Conventions
-----------
* ``SystemStep.k`` counts iterates from 0 (the start) over the whole solve; a system solved
  block by block records each block's iterates in turn (``block`` says which), each block
  starting with a step of damping 0 at the values it starts from.
* ``x`` holds every unknown at that iterate (those of later blocks at their start values);
  ``residuals`` every equation's residual (lhs - rhs) there.
* ``residual_norm`` is the Euclidean norm ||F|| of the residuals of the block being solved
  (the whole system when it is one block); ``step_norm`` the Euclidean norm of the step
  that produced the iterate (0 for a start); ``damping`` the fraction of the full Newton
  (or Broyden) step taken, 1 for a full step, 0 for a start; ``regularised`` is True where
  the Jacobian was singular and a Levenberg-Marquardt step was taken instead.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from solvers.records import CONVERGED_REASONS


@dataclass(frozen=True)
class SystemStep:
    """One iterate of a system solve (units: each unknown's own, each equation's own)."""

    k: int
    x: Mapping[str, float]
    residuals: tuple[float, ...]
    residual_norm: float
    step_norm: float
    damping: float
    block: int = 0
    regularised: bool = False

    def __post_init__(self) -> None:
        object.__setattr__(self, "x", dict(self.x))  # a plain dict, as the contract says

    def as_dict(self) -> dict[str, Any]:
        return {"k": self.k, "x": dict(self.x), "residuals": list(self.residuals),
                "residual_norm": self.residual_norm, "step_norm": self.step_norm,
                "damping": self.damping, "block": self.block,
                "regularised": self.regularised}


@dataclass(frozen=True)
class SystemRun:
    """The result of :func:`solvers.solve_system`: one method on one system.

    ``root`` maps each unknown to its last iterate (the root when ``converged``);
    ``reason`` is one of :data:`solvers.records.REASONS` (``zero_derivative``: the Jacobian
    is singular where the iteration stopped, which is also where ||F|| has a minimum that
    is not zero, e.g. two curves that do not meet); ``converged`` is true only for
    ``x_tolerance`` / ``f_tolerance`` / ``exact_zero``. ``iterations`` counts iterates
    (starts excluded), ``evaluations`` calls of F plus calls of J (a finite-difference
    Jacobian counts the F calls it made); ``jacobian`` is "symbolic" or "differences".
    ``blocks`` are the blocks solved, in order, as (equation indices, unknown indices);
    ``residuals`` every equation's residual at ``root``.
    """

    method: str
    unknowns: tuple[str, ...]
    root: Mapping[str, float]
    converged: bool
    reason: str
    iterations: int
    evaluations: int
    steps: tuple[SystemStep, ...]
    residuals: tuple[float, ...]
    blocks: tuple[tuple[tuple[int, ...], tuple[int, ...]], ...]
    jacobian: str = "symbolic"
    settings: Mapping[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        object.__setattr__(self, "root", dict(self.root))  # a plain dict (name -> float)
        object.__setattr__(self, "settings", MappingProxyType(dict(self.settings)))
        object.__setattr__(self, "steps", tuple(self.steps))
        if self.converged != (self.reason in CONVERGED_REASONS):
            raise ValueError("converged must match the reason")  # a defect, not user input

    @property
    def residual_norm(self) -> float:
        """Euclidean norm of every equation's residual at ``root``."""
        return float(sum(r * r for r in self.residuals) ** 0.5)

    def as_dict(self) -> dict[str, Any]:
        return {"method": self.method, "root": dict(self.root), "converged": self.converged,
                "reason": self.reason, "iterations": self.iterations,
                "evaluations": self.evaluations, "residuals": list(self.residuals),
                "residual_norm": self.residual_norm, "jacobian": self.jacobian,
                "blocks": [{"equations": list(e), "unknowns": [self.unknowns[j] for j in u]}
                           for e, u in self.blocks],
                "steps": [s.as_dict() for s in self.steps]}


class SystemCancelled(Exception):  # noqa: N818 (named like ScanCancelled)
    """Raised by :func:`solvers.solve_system` when ``cancel()`` returned True.

    A cancelled solve is no result: nothing of it is called converged. ``iterations``
    counts the iterations made before the cancel took effect (all blocks together).
    """

    def __init__(self, iterations: int = 0) -> None:
        super().__init__(f"system solve cancelled after {iterations} iterations")
        self.iterations = iterations
