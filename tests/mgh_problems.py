"""The Moré–Garbow–Hillstrom test problems for systems of nonlinear equations.

Source: J. J. Moré, B. S. Garbow, K. E. Hillstrom, "Testing Unconstrained Optimization
Software", ACM Trans. Math. Software 7(1), 1981, 17-41, and the MINPACK-1 test driver's
function and starting-point routines by the same authors (Argonne, 1980), whose square
versions of Wood's function and the variably dimensioned function are used here. Each
problem is given twice: as equation text in zerotrace's syntax (what parse_system reads)
and as an independent numpy function (what scipy.optimize.root is handed), both written
from that source; the standard start is the source's.

Watson's function is left out: written as equation text it is far beyond the 2,000
characters an equation may have.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.polynomial import chebyshev


@dataclass(frozen=True)
class Problem:
    name: str
    n: int
    text: str
    x0: tuple[float, ...]
    F: Callable[[np.ndarray], np.ndarray]

    @property
    def unknowns(self) -> list[str]:
        return [f"x{i}" for i in range(1, self.n + 1)]

    @property
    def start(self) -> dict[str, float]:
        return dict(zip(self.unknowns, self.x0, strict=True))


def _x(i: int) -> str:
    return f"x{i}"


def rosenbrock() -> Problem:
    def F(x):
        return np.array([1 - x[0], 10 * (x[1] - x[0] ** 2)])
    return Problem("Rosenbrock", 2, "1 - x1 = 0; 10*(x2 - x1^2) = 0", (-1.2, 1.0), F)


def powell_singular() -> Problem:
    def F(x):
        return np.array([x[0] + 10 * x[1], math.sqrt(5) * (x[2] - x[3]),
                         (x[1] - 2 * x[2]) ** 2, math.sqrt(10) * (x[0] - x[3]) ** 2])
    text = ("x1 + 10*x2 = 0; sqrt(5)*(x3 - x4) = 0; (x2 - 2*x3)^2 = 0; "
            "sqrt(10)*(x1 - x4)^2 = 0")
    return Problem("Powell singular", 4, text, (3.0, -1.0, 0.0, 1.0), F)


def powell_badly_scaled() -> Problem:
    def F(x):
        return np.array([1e4 * x[0] * x[1] - 1, np.exp(-x[0]) + np.exp(-x[1]) - 1.0001])
    return Problem("Powell badly scaled", 2,
                   "10000*x1*x2 - 1 = 0; exp(-x1) + exp(-x2) - 1.0001 = 0", (0.0, 1.0), F)


def wood() -> Problem:
    def F(x):
        t1, t2 = x[1] - x[0] ** 2, x[3] - x[2] ** 2
        return np.array([-200 * x[0] * t1 - (1 - x[0]),
                         200 * t1 + 20.2 * (x[1] - 1) + 19.8 * (x[3] - 1),
                         -180 * x[2] * t2 - (1 - x[2]),
                         180 * t2 + 20.2 * (x[3] - 1) + 19.8 * (x[1] - 1)])
    text = ("t1 = x2 - x1^2; t2 = x4 - x3^2; -200*x1*t1 - (1 - x1) = 0; "
            "200*t1 + 20.2*(x2 - 1) + 19.8*(x4 - 1) = 0; -180*x3*t2 - (1 - x3) = 0; "
            "180*t2 + 20.2*(x4 - 1) + 19.8*(x2 - 1) = 0")
    return Problem("Wood", 4, text, (-3.0, -1.0, -3.0, -1.0), F)


def helical_valley() -> Problem:
    def F(x):
        tpi = 8 * math.atan(1)
        theta = math.copysign(0.25, x[1])
        if x[0] > 0:
            theta = math.atan(x[1] / x[0]) / tpi
        if x[0] < 0:
            theta = math.atan(x[1] / x[0]) / tpi + 0.5
        r = math.sqrt(x[0] ** 2 + x[1] ** 2)
        return np.array([10 * (x[2] - 10 * theta), 10 * (r - 1), x[2]])
    # theta as in the source for x1 != 0: atan(x2/x1)/(2 pi), plus 1/2 where x1 < 0
    text = ("th = atan(x2/x1)/(2*pi) + 0.25*(1 - x1/abs(x1)); r = sqrt(x1^2 + x2^2); "
            "10*(x3 - 10*th) = 0; 10*(r - 1) = 0; x3 = 0")
    return Problem("Helical valley", 3, text, (-1.0, 0.0, 0.0), F)


def _poly_text(coefs: np.ndarray, u: str) -> str:
    terms = []
    for power, c in enumerate(coefs):
        c = int(round(c))
        if c == 0:
            continue
        body = "" if power == 0 else (u if power == 1 else f"{u}^{power}")
        mag = abs(c)
        term = str(mag) if not body else (body if mag == 1 else f"{mag}*{body}")
        terms.append(("-" if c < 0 else "+", term))
    text = " ".join(f"{s} {t}" for s, t in terms).lstrip("+ ")
    return text if not text.startswith("- ") else "-" + text[2:]


def chebyquad(n: int) -> Problem:
    def F(x):
        out = np.zeros(n)
        for i in range(1, n + 1):
            out[i - 1] = np.mean(chebyshev.chebval(2 * x - 1, [0] * i + [1]))
            if i % 2 == 0:
                out[i - 1] += 1 / (i * i - 1)
        return out
    lines = [f"u{j} = 2*x{j} - 1" for j in range(1, n + 1)]
    for i in range(1, n + 1):
        poly = chebyshev.cheb2poly([0] * i + [1])
        parts = " + ".join(f"({_poly_text(poly, f'u{j}')})" for j in range(1, n + 1))
        extra = f" + 1/{i * i - 1}" if i % 2 == 0 else ""
        lines.append(f"({parts})/{n}{extra} = 0")
    x0 = tuple(j / (n + 1) for j in range(1, n + 1))
    return Problem(f"Chebyquad n={n}", n, "; ".join(lines), x0, F)


def brown_almost_linear(n: int = 10) -> Problem:
    def F(x):
        out = x + x.sum() - (n + 1)
        out[-1] = np.prod(x) - 1
        return out
    s = " + ".join(_x(j) for j in range(1, n + 1))
    lines = [f"s = {s}"]
    lines += [f"x{k} + s - {n + 1} = 0" for k in range(1, n)]
    lines.append("*".join(_x(j) for j in range(1, n + 1)) + " - 1 = 0")
    return Problem(f"Brown almost-linear n={n}", n, "; ".join(lines), (0.5,) * n, F)


def discrete_boundary_value(n: int = 10) -> Problem:
    h = 1 / (n + 1)

    def F(x):
        t = np.arange(1, n + 1) * h
        xl = np.concatenate([[0.0], x[:-1]])
        xr = np.concatenate([x[1:], [0.0]])
        return 2 * x - xl - xr + h * h * (x + t + 1) ** 3 / 2
    lines = []
    for k in range(1, n + 1):
        left = f" - x{k - 1}" if k > 1 else ""
        right = f" - x{k + 1}" if k < n else ""
        lines.append(f"2*x{k}{left}{right} + (x{k} + {k}/{n + 1} + 1)^3/(2*{n + 1}^2) = 0")
    x0 = tuple((j * h) * (j * h - 1) for j in range(1, n + 1))
    return Problem(f"Discrete boundary value n={n}", n, "; ".join(lines), x0, F)


def discrete_integral_equation(n: int = 10) -> Problem:
    h = 1 / (n + 1)

    def F(x):
        t = np.arange(1, n + 1) * h
        c = (x + t + 1) ** 3
        out = np.empty(n)
        for k in range(n):
            s1 = np.sum(t[:k + 1] * c[:k + 1])
            s2 = np.sum((1 - t[k + 1:]) * c[k + 1:])
            out[k] = x[k] + h * ((1 - t[k]) * s1 + t[k] * s2) / 2
        return out
    m = n + 1
    lines = [f"c{j} = (x{j} + {j}/{m} + 1)^3" for j in range(1, n + 1)]
    for k in range(1, n + 1):
        s1 = " + ".join(f"{j}*c{j}" for j in range(1, k + 1))
        s2 = " + ".join(f"{m - j}*c{j}" for j in range(k + 1, n + 1)) or "0"
        lines.append(f"x{k} + ({m - k}*({s1}) + {k}*({s2}))/(2*{m}^3) = 0")
    x0 = tuple((j * h) * (j * h - 1) for j in range(1, n + 1))
    return Problem(f"Discrete integral equation n={n}", n, "; ".join(lines), x0, F)


def trigonometric(n: int = 10) -> Problem:
    def F(x):
        c = np.cos(x)
        k = np.arange(1, n + 1)
        return n + k - np.sin(x) - c.sum() - k * c
    lines = ["c = " + " + ".join(f"cos(x{j})" for j in range(1, n + 1))]
    lines += [f"{n + k} - sin(x{k}) - c - {k}*cos(x{k}) = 0" for k in range(1, n + 1)]
    return Problem(f"Trigonometric n={n}", n, "; ".join(lines), (1 / n,) * n, F)


def variably_dimensioned(n: int = 10) -> Problem:
    def F(x):
        k = np.arange(1, n + 1)
        s = np.sum(k * (x - 1))
        return x - 1 + k * s * (1 + 2 * s * s)
    lines = ["s = " + " + ".join(f"{j}*(x{j} - 1)" for j in range(1, n + 1)),
             "w = s*(1 + 2*s^2)"]
    lines += [f"x{k} - 1 + {k}*w = 0" for k in range(1, n + 1)]
    return Problem(f"Variably dimensioned n={n}", n, "; ".join(lines),
                   tuple(1 - j / n for j in range(1, n + 1)), F)


def broyden_tridiagonal(n: int = 10) -> Problem:
    def F(x):
        xl = np.concatenate([[0.0], x[:-1]])
        xr = np.concatenate([x[1:], [0.0]])
        return (3 - 2 * x) * x - xl - 2 * xr + 1
    lines = []
    for k in range(1, n + 1):
        left = f" - x{k - 1}" if k > 1 else ""
        right = f" - 2*x{k + 1}" if k < n else ""
        lines.append(f"(3 - 2*x{k})*x{k}{left}{right} + 1 = 0")
    return Problem(f"Broyden tridiagonal n={n}", n, "; ".join(lines), (-1.0,) * n, F)


def broyden_banded(n: int = 10) -> Problem:
    ml, mu = 5, 1

    def F(x):
        out = np.empty(n)
        for k in range(n):
            js = [j for j in range(max(0, k - ml), min(n - 1, k + mu) + 1) if j != k]
            out[k] = x[k] * (2 + 5 * x[k] ** 2) + 1 - sum(x[j] * (1 + x[j]) for j in js)
        return out
    lines = []
    for k in range(1, n + 1):
        js = [j for j in range(max(1, k - ml), min(n, k + mu) + 1) if j != k]
        band = " - ".join(f"x{j}*(1 + x{j})" for j in js)
        lines.append(f"x{k}*(2 + 5*x{k}^2) + 1 - {band} = 0")
    return Problem(f"Broyden banded n={n}", n, "; ".join(lines), (-1.0,) * n, F)


def problems() -> list[Problem]:
    """Every problem of the set with its standard start (Watson's left out, see above)."""
    return [rosenbrock(), powell_singular(), powell_badly_scaled(), wood(), helical_valley(),
            chebyquad(5), chebyquad(7), brown_almost_linear(), discrete_boundary_value(),
            discrete_integral_equation(), trigonometric(), variably_dimensioned(),
            broyden_tridiagonal(), broyden_banded()]
