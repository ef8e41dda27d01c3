"""What a scan returns (:class:`Scan`, :class:`Root`), its cancel signal, and the
record each locator hands on before roots are finished (:class:`_Found`)."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from solvers.records import Run

EPS = float(np.finfo(float).eps)


class ScanCancelled(Exception):
    """Raised by :func:`scan` when ``cancel()`` returned True."""


class _OnDemandRun:
    """``Root.run``: a :class:`Run`, or a zero-argument callable that makes one.

    A data descriptor used as the dataclass field's default (see "descriptor-typed
    fields" in the dataclasses documentation): the field is set as usual, but a
    callable stored there is called on first read and its Run kept. The scan refines
    all roots at once (vectorised); the per-root Brent record is only built for the
    roots somebody looks at.
    """

    def __set_name__(self, owner: type, name: str) -> None:
        self.slot = "_" + name

    def __get__(self, obj: object, objtype: type | None = None) -> Run | None:
        if obj is None:
            return None  # the field's default
        value = obj.__dict__.get(self.slot)
        if callable(value):
            value = value()
            obj.__dict__[self.slot] = value
        return value

    def __set__(self, obj: object, value: object) -> None:
        obj.__dict__[self.slot] = value

    def raw(self, obj: object) -> object:
        """The stored value without building the Run (to copy a Root cheaply)."""
        return obj.__dict__.get(self.slot)


@dataclass(frozen=True)
class Root:
    """One root of f. ``residual`` is f(x). ``confirmed`` says how it was confirmed,
    ``located_by`` which locator(s) found it ("sampling", "chebyshev"). ``bracket`` is the
    sign-change bracket between samples (None for touches and edges); ``run`` is the
    project's Brent (:func:`solvers.methods.brent`) on that bracket, built when first
    read (or Brent on f' for a touch), None when no Brent run belongs to the root."""

    x: float
    residual: float
    multiplicity: int = 1
    confirmed: str = ""
    located_by: tuple[str, ...] = ("sampling",)
    bracket: tuple[float, float] | None = None
    run: Run | None = _OnDemandRun()  # type: ignore[assignment]


def _relabel(r: Root, located_by: tuple[str, ...]) -> Root:
    """r with another ``located_by``, its on-demand Brent run left unbuilt."""
    return Root(r.x, r.residual, r.multiplicity, r.confirmed, located_by, r.bracket,
                Root.__dict__["run"].raw(r))


@dataclass(frozen=True)
class Scan:
    """Everything found on [a, b]. Lists are sorted by x.

    ``gaps``: (start, end) intervals where f is undefined (NaN), ends located to
    about one ulp. ``samples``: f evaluations in the sampling pass (base grid plus
    refined windows). ``cross_checked``: pieces where the Chebyshev proxy ran (f
    smooth there); ``chebyshev_roots``: the real zeros it located. ``noise_bands``:
    stretches where |f| is within its own rounding noise, each reported as one root
    cluster at its middle (x uncertain by the half-width). ``check``: the cross-check that
    ran ("derivative", "chebyshev" or "off"; see :func:`scan`).
    """

    a: float
    b: float
    roots: list[Root] = field(default_factory=list)
    poles: list[float] = field(default_factory=list)
    discontinuities: list[float] = field(default_factory=list)
    gaps: list[tuple[float, float]] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    samples: int = 0
    cross_checked: list[tuple[float, float]] = field(default_factory=list)
    chebyshev_roots: list[float] = field(default_factory=list)
    noise_bands: list[tuple[float, float]] = field(default_factory=list)
    check: str = "off"  # the cross-check that ran: "derivative", "chebyshev" or "off"


@dataclass
class _Found:
    x: float
    odd: bool
    how: str
    bracket: tuple[float, float] | None = None
    run: Run | Callable[[], Run] | None = None  # a callable: Root.run built on demand
    located_by: tuple[str, ...] = ("sampling",)
