"""What a scan returns (:class:`Scan`, :class:`Root`), its cancel signal, and the
record each locator hands on before roots are finished (:class:`_Found`)."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from solvers.records import Detail, Run

EPS = float(np.finfo(float).eps)

# Codes of ``Root.confirmed`` (how a root was confirmed), in the order they combine: a
# first code says how the root was found, later ones what refined it. Their words live
# in app.documents.words (CONFIRMED_WORDS); the core records codes, never sentences.
CONFIRMED_CODES: tuple[str, ...] = (
    "anderson_bjorck",     # sign change, vectorised Anderson-Bjorck bracketing
    "zero_at_iterate",     # sign change; f exactly zero at a bracketing iterate
    "zero_at_bisection",   # sign change; f exactly zero at a bisection point
    "brent",               # sign change, the project's Brent on the narrowed bracket
    "brent_stopped",       # ... which stopped unconverged (its reason: Root.run.reason)
    "brent_left",          # sign change, bisection: Brent left the bracket
    "newton_polish",       # then one Newton step with f' that lowered |f|
    "bracket_in_noise",    # ... on a bracket that closed where f is rounding noise
    "touch_golden",        # touch: |f| minimum by golden section, at noise level
    "touch_fprime",        # touch: f' sign change bracketed; |f| at noise level
    "zero_at_sample",      # f exactly zero at a sample
    "zero_at_range_end",   # f exactly zero at the range end
    "range_end_noise",     # range end: |f| at noise level
    "domain_edge_zero",    # domain edge: f = 0 at the last defined point
    "domain_edge_limit",   # domain edge: f -> 0 at the last defined point
    "zero_near_proxy",     # f exactly zero near a Chebyshev proxy root
    "noise_cluster",       # root cluster within rounding noise (numbers: Root.detail)
)
DOMAIN_EDGE_CODES = frozenset({"domain_edge_zero", "domain_edge_limit"})

# Codes of ``Scan.details`` (what a checker should know about a scan), with the values
# each carries (x values in the unknown's units, |f| in f's units, counts):
SCAN_DETAIL_CODES: dict[str, str] = {
    "many_sign_changes": "max_roots, a, b, x where refining stopped",
    "undefined_inside": "lo, hi: f undefined between two samples of opposite sign",
    "zero_run": "lo, hi: f exactly zero at consecutive samples",
    "bounded_oscillation": "x: bounded ever-faster oscillation, no pole",
    "fast_oscillation": "lo, hi: oscillation faster than 64x the sampling",
    "proxy_rough": "count, lo, hi: pieces not smooth for the Chebyshev proxy, unexplained",
    "rescanned": "mode, count, lo, hi: re-scanned with 64x the samples",
    "rescan_budget": "mode, count, lo, hi: beyond the re-scan budget",
    "proxy_unconfirmed": "x, |f|: a proxy zero the scan could not confirm",
    "proxy_only_roots": "x...: roots located only by the proxy, then confirmed",
    "sampling_only_root": "x, lo, hi: root not seen by the proxy on its piece [lo, hi]",
    "pole_dip": "pole x, least |f|, within distance: a pair of roots may hide",
    "noise_band": "lo, hi, |f| level, centre, half-width, multiplicity, findings inside",
}


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
    """One root of f. ``residual`` is f(x). ``confirmed`` says how it was confirmed (codes
    of :data:`CONFIRMED_CODES`; ``detail`` carries the numbers a code refers to, the noise
    stretch of a root cluster), ``located_by`` which locator(s) found it ("sampling",
    "chebyshev"). ``bracket`` is the
    sign-change bracket between samples (None for touches and edges); ``run`` is the
    project's Brent (:func:`solvers.methods.brent`) on that bracket, built when first
    read (or Brent on f' for a touch), None when no Brent run belongs to the root."""

    x: float
    residual: float
    multiplicity: int = 1
    confirmed: tuple[str, ...] = ()
    located_by: tuple[str, ...] = ("sampling",)
    bracket: tuple[float, float] | None = None
    run: Run | None = _OnDemandRun()  # type: ignore[assignment]
    detail: Detail | None = None


def _new_root(x: float, residual: float, multiplicity: int, confirmed: tuple[str, ...],
              located_by: tuple[str, ...], bracket: tuple[float, float] | None,
              run: object) -> Root:
    """``Root(x, residual, multiplicity, confirmed, located_by, bracket, run)``, built for a
    scan that finishes hundreds at once: the frozen dataclass's ``__init__`` sets each
    field through ``object.__setattr__`` (about 2 us a root, a fifth of the whole scan of
    sin(x^2) on [0, 30]); this fills the same instance dictionary directly (``run`` in
    the on-demand slot, as :class:`_OnDemandRun` stores it). Root has no ``__post_init__``,
    so the result is equal, field for field, to the one ``__init__`` builds."""
    root = object.__new__(Root)
    d = root.__dict__  # (item by item: a keyword dictionary for update() costs more)
    d["x"] = x
    d["residual"] = residual
    d["multiplicity"] = multiplicity
    d["confirmed"] = confirmed
    d["located_by"] = located_by
    d["bracket"] = bracket
    d["_run"] = run
    d["detail"] = None
    return root


def _new_roots(found: list[_Found], xs: list[float], residuals: list[float],
               multiplicities: list[int]) -> list[Root]:
    """:func:`_new_root` for each located root (``found``) at its finished x, residual
    and multiplicity (1 where a domain-edge code says how it was found), in one loop:
    with hundreds of roots a call per root costs a quarter of building them."""
    out: list[Root] = []
    new, append, no_edge = object.__new__, out.append, DOMAIN_EDGE_CODES.isdisjoint
    for r, x, residual, m in zip(found, xs, residuals, multiplicities, strict=True):
        root = new(Root)
        d = root.__dict__  # (as _new_root fills it, item by item)
        d["x"] = x
        d["residual"] = residual
        d["multiplicity"] = m if no_edge(r.how) else 1
        d["confirmed"] = r.how
        d["located_by"] = r.located_by
        d["bracket"] = r.bracket
        d["_run"] = r.run
        d["detail"] = None
        append(root)
    return out


def _relabel(r: Root, located_by: tuple[str, ...]) -> Root:
    """r with another ``located_by``, its on-demand Brent run left unbuilt (the instance
    dictionary copied, as :func:`_new_root` fills it)."""
    root = object.__new__(Root)
    root.__dict__.update(r.__dict__)
    root.__dict__["located_by"] = located_by
    return root


@dataclass(frozen=True)
class Scan:
    """Everything found on [a, b]. Lists are sorted by x.

    ``gaps``: (start, end) intervals where f is undefined (NaN), ends located to
    about one ulp. ``samples``: f evaluations in the sampling pass (base grid plus
    refined windows). ``cross_checked``: pieces where the Chebyshev proxy ran (f
    smooth there); ``chebyshev_roots``: the real zeros it located. ``noise_bands``:
    stretches where |f| is within its own rounding noise, each reported as one root
    cluster at its middle (x uncertain by the half-width). ``details``: what a checker
    should know about the scan, as :class:`solvers.records.Detail` records (codes of
    :data:`SCAN_DETAIL_CODES`; :func:`app.documents.words.scan_warnings` words them).
    ``check``: the cross-check that ran ("derivative", "chebyshev" or "off"; see :func:`scan`).
    """

    a: float
    b: float
    roots: list[Root] = field(default_factory=list)
    poles: list[float] = field(default_factory=list)
    discontinuities: list[float] = field(default_factory=list)
    gaps: list[tuple[float, float]] = field(default_factory=list)
    details: tuple[Detail, ...] = ()
    samples: int = 0
    cross_checked: list[tuple[float, float]] = field(default_factory=list)
    chebyshev_roots: list[float] = field(default_factory=list)
    noise_bands: list[tuple[float, float]] = field(default_factory=list)
    check: str = "off"  # the cross-check that ran: "derivative", "chebyshev" or "off"


@dataclass
class _Found:
    x: float
    odd: bool
    how: tuple[str, ...]
    bracket: tuple[float, float] | None = None
    run: Run | Callable[[], Run] | None = None  # a callable: Root.run built on demand
    located_by: tuple[str, ...] = ("sampling",)
