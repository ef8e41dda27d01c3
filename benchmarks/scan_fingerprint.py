"""Every field of the scan's results on a broad set of equations, written exactly.

A change meant to make the scan faster without changing what it finds is checked by
running this before and after and comparing the two files byte for byte::

    PYTHONPATH=$PWD .venv/bin/python benchmarks/scan_fingerprint.py > before.txt
    ... change ...
    PYTHONPATH=$PWD .venv/bin/python benchmarks/scan_fingerprint.py > after.txt
    cmp before.txt after.txt

Each equation is scanned with every cross-check that applies to it (with f' when the
equation was compiled by ``parse_equation``, with f alone and the Chebyshev proxy, and
with no check). Floats are written in hexadecimal (every bit shown), every field of
``Scan`` and of each ``Root`` (``Root.run`` only by its root and iteration count).
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
from numpy.polynomial import chebyshev as npcheb
from numpy.polynomial import legendre as nplegendre

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from solvers import parse_equation  # noqa: E402
from solvers.scan import scan  # noqa: E402


def _fmt(v: object) -> str:
    """Exact text of a value: floats in hex, containers element by element."""
    if isinstance(v, bool) or v is None or isinstance(v, str):
        return repr(v)
    if isinstance(v, float | np.floating):
        return float(v).hex()
    if isinstance(v, int | np.integer):
        return str(int(v))
    if isinstance(v, tuple | list):
        return "[" + ", ".join(_fmt(e) for e in v) + "]"
    if hasattr(v, "__dataclass_fields__"):
        return type(v).__name__ + "(" + ", ".join(
            f"{k}={_fmt(getattr(v, k))}" for k in v.__dataclass_fields__) + ")"
    return repr(v)


def fingerprint(s) -> list[str]:
    lines = [f"  check={s.check} samples={s.samples} a={_fmt(s.a)} b={_fmt(s.b)}",
             f"  poles={_fmt(s.poles)}", f"  jumps={_fmt(s.discontinuities)}",
             f"  gaps={_fmt(s.gaps)}", f"  details={_fmt(list(s.details))}",
             f"  cross_checked={_fmt(s.cross_checked)}",
             f"  chebyshev_roots={_fmt(s.chebyshev_roots)}",
             f"  noise_bands={_fmt(s.noise_bands)}"]
    for r in s.roots:
        lines.append(f"  root x={_fmt(r.x)} res={_fmt(r.residual)} m={r.multiplicity} "
                     f"conf={r.confirmed} by={r.located_by} br={_fmt(r.bracket)} "
                     f"detail={_fmt(r.detail)}")
    return lines


# equations typed as text: scanned with f' (derivative check), f alone and no check
TEXTS = [
    ("cos(x)*cosh(x) + 1", 0.0, 50.0),
    ("sin(x^2)", 0.0, 30.0),
    ("x*tan(x) - 0.9", 0.0, 12.0),
    ("tan(x)", 0.0, 10.0),
    ("1/(x - 0.3)", 0.0, 1.0),
    ("1/(x - 0.3)^2 - 4", 0.0, 1.0),
    ("x/abs(x) + x", -1.0, 1.0),
    ("exp(-x) - 2*exp(-2*x)", 0.0, 800.0),
    ("x^2 + 1e-20", -1.0, 1.0),
    ("x^2", -1.0, 1.3),
    ("sin(1/x)", 0.01, 1.0),
    ("(x - 1.234)^13", 0.0, 3.0),
    ("(x - 1)^3*(x - 1.0005)^2", 0.0, 3.0),
    ("(x - 1)*(x - 1 - 1e-6)*(x - 1 - 2e-6)", 0.0, 3.0),
    ("(x - 1.3)^2*(x - 2.2)*(x - 2.2000001)*exp(-x/4)", 0.0, 4.0),
    ("(x - 2.00031)^2 + 1e-12", 0.0, 4.0),
    ("x^9 - 9*x^8 + 36*x^7 - 84*x^6 + 126*x^5 - 126*x^4 + 84*x^3 - 36*x^2 + 9*x - 1",
     0.0, 2.0),
    ("2048*x^12 - 6144*x^10 + 6912*x^8 - 3584*x^6 + 840*x^4 - 72*x^2 + 1", -1.0, 1.0),
    ("32768*x^16 - 131072*x^14 + 212992*x^12 - 180224*x^10 + 84480*x^8 - 21504*x^6"
     " + 2688*x^4 - 128*x^2 + 1", -1.0, 1.0),
    # Peng-Robinson in the molar volume near its co-volume pole (invented state)
    ("8.314*300/(x - 2.6e-5) - 0.55/(x*(x + 2.6e-5) + 2.6e-5*(x - 2.6e-5)) - 2e6",
     2.7e-5, 1e-2),
    ("sqrt(1 - x^2) - 0.5", -2.0, 2.0),
    ("ln(x)", -1.0, 3.0),
    ("sqrt(x)", -1.0, 1.0),
    ("asin(x)", -2.0, 2.0),
    ("x^2 - 1e300", -1e160, 1e160),
    ("tanh(1e7*(x - 0.4))", 0.0, 1.0),
    ("sin(1e4*x)", 0.0, 1.0),
    ("exp(x) - 1e10", 0.0, 800.0),
    ("(x - 0.7)/abs(x - 0.7)*ln(abs(x - 0.7))", 0.0, 1.0),
]

_rng = np.random.default_rng(12345)
_AMPS = _rng.uniform(0.2, 1.0, 20)
_OMEGAS = _rng.uniform(0.05, 2.0, 20)
_PHASES = _rng.uniform(0.0, 2 * math.pi, 20)
TEXTS.insert(1, (" + ".join(f"{amp:.6f}*sin({om:.6f}*x + {ph:.6f})"
                            for amp, om, ph in zip(_AMPS, _OMEGAS, _PHASES, strict=True)),
                 0.0, 200.0))

_P20 = nplegendre.leg2poly([0] * 20 + [1])
_T16 = npcheb.cheb2poly([0] * 16 + [1])

# plain numpy callables (f alone): Chebyshev check and no check; f' where given
CALLABLES = [
    ("Legendre P20 by its coefficients", lambda x: np.polyval(_P20[::-1], x),
     lambda x: np.polyval(np.polyder(_P20[::-1]), x), -1.0, 1.0),
    ("Chebyshev T16 by its coefficients", lambda x: np.polyval(_T16[::-1], x),
     lambda x: np.polyval(np.polyder(_T16[::-1]), x), -1.0, 1.0),
    ("np.tan", np.tan, None, 0.0, 10.0),
    ("step", lambda x: np.where(x < 0.43, -1.0, 1.0) * (2 + x), None, 0.0, 1.0),
    ("x tan x - 0.9", lambda x: x * np.tan(x) - 0.9, None, 0.0, 10.5),
    ("nan everywhere", lambda x: np.full_like(x, np.nan), None, 0.0, 1.0),
    ("zero everywhere", lambda x: 0.0 * x, None, 0.0, 1.0),
    ("emath sqrt", lambda x: np.emath.sqrt(x) - 0.5, None, -1.0, 1.0),
    ("sinusoids [0, 2000]", lambda x: sum(a * np.sin(o * x + p) for a, o, p
                                          in zip(_AMPS, _OMEGAS, _PHASES, strict=True)),
     None, 0.0, 2000.0),
]


def main() -> None:
    out = sys.stdout
    for text, a, b in TEXTS:
        eq = parse_equation(text)
        for how, kw in (("f+fp", {"fprime": eq.fprime}), ("cheb", {}),
                        ("off", {"cross_check": False})):
            out.write(f"{text} on [{a}, {b}] {how}\n")
            out.write("\n".join(fingerprint(scan(eq.f, a, b, **kw))) + "\n")
    for name, f, fp, a, b in CALLABLES:
        modes = [("cheb", {}), ("off", {"cross_check": False})]
        if fp is not None:
            modes.insert(0, ("f+fp", {"fprime": fp}))
        for how, kw in modes:
            out.write(f"{name} on [{a}, {b}] {how}\n")
            out.write("\n".join(fingerprint(scan(f, a, b, **kw))) + "\n")
    # other densities: fewer samples than default, a chunked grid
    eq = parse_equation("cos(x)*cosh(x) + 1")
    for n in (7, 200, 70001):
        for how, kw in (("f+fp", {"fprime": eq.fprime}), ("cheb", {})):
            out.write(f"cantilever n={n} {how}\n")
            out.write("\n".join(fingerprint(scan(eq.f, 0.0, 50.0, samples=n, **kw))) + "\n")


if __name__ == "__main__":
    main()
