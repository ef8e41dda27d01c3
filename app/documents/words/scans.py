"""The words of a scan: its warnings (re-scans, noise bands), how each root was
confirmed and what located it."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

from app.documents.words.numbers import counted, number

# ----------------------------------------------------------------- scans

# What made a re-scan with 64x the samples necessary, by the cross-check that ran.
_RESCAN_WHY = {
    "chebyshev": "cross-check: f not smooth enough for the Chebyshev proxy",
    "derivative": "f oscillates faster than 64x the sampling (f' contradicts f's differences)",
}


def _rescan_why(mode: Any) -> str:
    return _RESCAN_WHY.get(str(mode), f"cross-check {mode}")


def _rescan_where(v: Sequence[Any]) -> str:
    """"<why> on 3 intervals in [a, b]": what a re-scan record's numbers say first."""
    return (f"{_rescan_why(v[0])} on {counted(int(v[1]), 'interval')} in "
            f"[{_g6(v[2])}, {_g6(v[3])}]")


def _g12(x: float) -> str:
    return number(x, 12)


def _g3(x: float) -> str:
    return number(x, 3)


def _g6(x: float) -> str:
    return number(x, 6)


def _noise_band_text(v: Sequence[Any]) -> str:
    u, w_hi, level, centre, half, mult, inside = v
    text = (f"f is rounding noise on [{_g12(u)}, {_g12(w_hi)}] (|f| <= {_g3(level)}): one root "
            f"cluster reported at x = {_g12(centre)} +/- {_g3(half)}, multiplicity {int(mult)}")
    if inside:
        text += (f"; {int(inside)} more sign change(s), touch(es), pole(s) or jump(s) inside "
                 "were noise")
    return text


# Words for each code of Scan.details (solvers.scan.records.SCAN_DETAIL_CODES).
SCAN_DETAIL_TEXT: dict[str, Callable[[Sequence[Any]], str]] = {
    "many_sign_changes": lambda v: (f"more than {v[0]} sign changes in [{_g6(v[1])}, "
                                    f"{_g6(v[2])}]: roots refined only up to x = {_g6(v[3])}; "
                                    "scan a narrower range for the rest"),
    "undefined_inside": lambda v: (f"f undefined somewhere inside [{_g6(v[0])}, {_g6(v[1])}] "
                                   "between two samples of opposite sign"),
    "zero_run": lambda v: (f"f is exactly zero at consecutive samples in [{_g6(v[0])}, "
                           f"{_g6(v[1])}]; not counted as isolated roots"),
    "bounded_oscillation": lambda v: (f"f oscillates, bounded, ever faster near x = "
                                      f"{_g12(v[0])}: a sign change there was not resolved "
                                      "into roots (no pole)"),
    "fast_oscillation": lambda v: (f"f oscillates faster than 64x the sampling on "
                                   f"[{_g6(v[0])}, {_g6(v[1])}]; roots there may be missed: "
                                   "raise samples"),
    "proxy_rough": lambda v: (f"cross-check: f is not smooth enough for the Chebyshev proxy on "
                              f"{counted(int(v[0]), 'interval')} in [{_g6(v[1])}, "
                              f"{_g6(v[2])}] that no pole, jump or gap explains (rough f, or "
                              "oscillation faster than the sampling): roots there rest on "
                              "sampling alone"),
    "rescanned": lambda v: f"{_rescan_where(v)}; re-scanned there with 64x the samples",
    "rescan_budget": lambda v: (f"{_rescan_where(v)}, beyond the re-scan budget: roots there "
                                "rest on sampling alone; raise samples"),
    "proxy_unconfirmed": lambda v: (f"cross-check: the Chebyshev proxy has a zero near x = "
                                    f"{_g12(v[0])} (|f| = {_g3(v[1])}) that the scan could not "
                                    "confirm"),
    "proxy_only_roots": lambda v: (f"cross-check: {counted(len(v), 'root')} located only by the "
                                   "Chebyshev proxy and then confirmed: "
                                   + ", ".join(_g12(x) for x in v)),
    "sampling_only_root": lambda v: (f"cross-check: root at x = {_g12(v[0])} found by sampling, "
                                     f"not by the Chebyshev proxy on [{_g6(v[1])}, "
                                     f"{_g6(v[2])}]"),
    "pole_dip": lambda v: (f"beside the pole at x = {_g12(v[0])}, |f| dips to {_g3(v[1])} "
                           f"within {_g3(v[2])} without a sign change: a pair of roots may "
                           "hide there"),
    "noise_band": _noise_band_text,
}


def scan_detail_text(detail: Any) -> str:
    """Words for one :class:`solvers.records.Detail` of ``Scan.details``."""
    words = SCAN_DETAIL_TEXT.get(detail.code)
    return words(detail.values) if words is not None else detail.code.replace("_", " ")


def scan_warnings(scan: Any) -> list[str]:
    """What a checker should know about a scan, one sentence per detail, in scan order."""
    return [scan_detail_text(d) for d in getattr(scan, "details", ()) or ()]


def _brent_stopped(root: Any) -> str:
    run = getattr(root, "run", None)
    return f" (stopped: {run.reason})" if run is not None else " (stopped)"


def _noise_cluster_text(root: Any) -> str:
    d = getattr(root, "detail", None)
    if d is None or d.code != "noise_cluster":
        return ("root cluster within rounding noise; multiplicity from the slope of log|f| "
                "outside")
    level, u, v, half = d.values
    return (f"root cluster within rounding noise: |f| <= {_g3(level)} (its evaluation noise) "
            f"on [{_g12(u)}, {_g12(v)}]; x uncertain by +/-{_g3(half)}; multiplicity from the "
            "slope of log|f| outside")


# How a scan confirmed a root (solvers.scan.records.CONFIRMED_CODES): the first code's
# words, then each later code's words appended (a refinement or a qualification).
CONFIRMED_WORDS: dict[str, Callable[[Any], str]] = {
    "anderson_bjorck": lambda r: "sign change, Anderson-Bjorck bracketing",
    "zero_at_iterate": lambda r: "sign change; f exactly zero at an iterate",
    "zero_at_bisection": lambda r: "sign change; f exactly zero at a bisection point",
    "brent": lambda r: "sign change, Brent",
    "brent_stopped": _brent_stopped,
    "brent_left": lambda r: "sign change, bisection (Brent left the bracket)",
    "newton_polish": lambda r: ", Newton polish with f'",
    "bracket_in_noise": lambda r: "; the bracket closed where f is rounding noise",
    "touch_golden": lambda r: "touch: |f| minimum (golden section) at noise level",
    "touch_fprime": lambda r: "touch: f' sign change, bracketing on f'; |f| at noise level",
    "zero_at_sample": lambda r: "f exactly zero at a sample",
    "zero_at_range_end": lambda r: "f exactly zero at the range end",
    "range_end_noise": lambda r: "range end: |f| at noise level",
    "domain_edge_zero": lambda r: "domain edge: f = 0 at the last defined point",
    "domain_edge_limit": lambda r: "domain edge: f -> 0 at the last defined point",
    "zero_near_proxy": lambda r: "f exactly zero (near a Chebyshev proxy root)",
    "noise_cluster": _noise_cluster_text,
}

# Labels of Root.located_by codes (kept short: they fill a table column).
LOCATOR_LABELS: dict[str, str] = {"sampling": "sampling", "chebyshev": "chebyshev"}


def confirmed_text(root: Any) -> str:
    """How the scan confirmed ``root``, in words ('' when it carries no codes)."""
    parts = []
    for code in getattr(root, "confirmed", ()) or ():
        words = CONFIRMED_WORDS.get(code)
        parts.append(words(root) if words is not None else code.replace("_", " "))
    return "".join(parts)


def located_text(root: Any) -> str:
    """Which locator(s) found ``root``: "sampling + chebyshev"."""
    return " + ".join(LOCATOR_LABELS.get(c, c) for c in getattr(root, "located_by", ()) or ())


def left_out_text(count: int, what: str) -> str:
    """The row or item standing for ``count`` entries a calculation sheet leaves out of a
    long list: roots, poles and jumps are in the roots CSV written beside the sheet, gaps
    (pairs of ends) in the scan's JSON."""
    holder = ("zerotrace scan --json lists every one" if what == "gap"
              else "the roots CSV holds every one")
    return f"… {counted(count, what)} left out here; {holder}"
