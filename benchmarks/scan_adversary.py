"""Adversarial generator for the scan (not a benchmark: ``make bench`` skips it).

Seeded equations typed as a user types them, compiled by ``solvers.parse_equation``,
scanned with f' (the derivative cross-check, as the app does) and without it (the
Chebyshev cross-check), and scored against roots known exactly (closed forms, kept to
50 digits with mpmath: chosen factors, Lambert W, arctangents, sinusoid identities) or by
an independent reference where no closed form exists (bisection at 50 digits with mpmath
on the brackets the shape gives: one root in each (n pi, n pi + pi/2) of x tan x = Bi,
near each (2n - 1) pi / 2 of cos x cosh x = -1; mpmath.polyroots at 50 digits for the
equation-of-state cubic). A written-out polynomial's multiple root counts as found
within 10 (1e-13)^(1/m) of it (rounding splits it; common practice). A root reported
away from every known root is a false root, so a pole, a jump or a dip that stops short
of zero reported as a root lands there.

Run: ``PYTHONPATH=. .venv/bin/python benchmarks/scan_adversary.py [N_PER_CLASS] [SEED]``.
Prints one line per class (cases, known roots, misses, false roots, wrong multiplicity,
missed / false poles, crashes, scans over 2 s) and every failing case in full.
"""

from __future__ import annotations

import random
import re
import sys
import time
from dataclasses import dataclass, field

import mpmath as mp

from solvers import parse_equation
from solvers.scan import ScanCancelled, scan

mp.mp.dps = 50
SLOW = 2.0        # seconds: a scan slower than this at default samples is a finding
TIME_LIMIT = 30.0  # seconds: a scan cancelled after this is a hang
# location tolerance by multiplicity, relative to max(|r|, width / 100): a root of
# multiplicity m is located to about eps^(1/m) (common practice); factored forms are
# evaluated without cancellation, so these are generous
TOL = {1: 1e-10, 2: 1e-7, 3: 1e-5, 4: 1e-4, 5: 1e-3}


@dataclass
class Case:
    kind: str
    text: str
    a: float
    b: float
    roots: list[tuple[mp.mpf, int]]
    poles: list[mp.mpf] = field(default_factory=list)
    jumps: list[mp.mpf] = field(default_factory=list)
    expanded: bool = False  # typed with cancellation: multiple roots only to eps^(1/m)
    absent: list[float] = field(default_factory=list)  # places no root may be reported


def bisect_mp(g, lo, hi) -> mp.mpf:
    """Root of g in [lo, hi] (a sign change) by bisection at 50 digits: slow, sure."""
    lo, hi = mp.mpf(lo), mp.mpf(hi)
    glo = g(lo)
    if glo * g(hi) > 0:
        raise ValueError("no sign change")
    for _ in range(200):
        mid = (lo + hi) / 2
        gm = g(mid)
        if gm == 0:
            return mid
        if (gm > 0) == (glo > 0):
            lo, glo = mid, gm
        else:
            hi = mid
    return (lo + hi) / 2


def dec(rng: random.Random, lo: float, hi: float, digits: int = 6) -> str:
    return f"{rng.uniform(lo, hi):.{digits}f}"


def factor(r: str, m: int) -> str:
    inner = f"(x - {r})" if not r.startswith("-") else f"(x + {r[1:]})"
    return inner if m == 1 else f"{inner}^{m}"


def spaced(rng: random.Random, n: int, lo: float, hi: float, gap: float) -> list[str]:
    while True:
        pts = sorted(dec(rng, lo, hi) for _ in range(n))
        vals = sorted(float(p) for p in pts)
        if all(q - p >= gap for p, q in zip(vals, vals[1:], strict=False)):
            return pts


# ---------------------------------------------------------------- classes of equations

def poly_factored(rng: random.Random) -> Case:
    n = rng.randint(1, 4)
    rs = spaced(rng, n, -3.0, 3.0, 0.3)
    ms = [rng.randint(1, 5) for _ in rs]
    text = "*".join(factor(r, m) for r, m in zip(rs, ms, strict=True))
    if rng.random() < 0.5:
        text = f"{dec(rng, 0.2, 5, 3)}*{text}*exp({dec(rng, 0.1, 0.5, 3)}*sin(x))"
    return Case("poly_factored", text, -4.0, 4.0,
                [(mp.mpf(r), m) for r, m in zip(rs, ms, strict=True)])


def poly_expanded(rng: random.Random) -> Case:
    import sympy as sp
    n = rng.randint(1, 3)
    rs = spaced(rng, n, -2.0, 2.0, 0.6)
    ms = [rng.randint(1, 5) for _ in rs]
    while sum(ms) > 8:
        ms = [rng.randint(1, 3) for _ in rs]
    x = sp.Symbol("x")
    p = sp.Poly(sp.prod([(x - sp.Rational(r)) ** m for r, m in zip(rs, ms, strict=True)]), x)
    terms = []
    for (k,), c in p.terms():
        cs = repr(float(c))
        terms.append(f"({cs})*x^{k}" if k > 1 else f"({cs})*x" if k == 1 else f"({cs})")
    return Case("poly_expanded", " + ".join(terms), -3.0, 3.0,
                [(mp.mpf(r), m) for r, m in zip(rs, ms, strict=True)], expanded=True)


def close_pair(rng: random.Random) -> Case:
    r0 = dec(rng, -2, 2, 4)
    d = 10.0 ** -rng.randint(3, 9)
    r1 = f"{float(r0) + d:.12f}"
    other = spaced(rng, 1, -3.5, 3.5, 0.1)[0]
    while abs(float(other) - float(r0)) < 0.3:
        other = spaced(rng, 1, -3.5, 3.5, 0.1)[0]
    m = rng.randint(1, 3)
    text = f"{factor(r0, 1)}*{factor(r1, 1)}*{factor(other, m)}"
    return Case("close_pair", text, -4.0, 4.0,
                [(mp.mpf(r0), 1), (mp.mpf(r1), 1), (mp.mpf(other), m)])


def range_ends(rng: random.Random) -> Case:
    r = dec(rng, -1, 1, 4)
    m = rng.choice([1, 1, 2, 3])
    where = rng.choice(["at_a", "at_b", "near_a", "near_b"])
    other = f"{float(r) + (1.7 if where.endswith('a') else -1.7):.4f}"
    text = f"{factor(r, m)}*{factor(other, 1)}*(x^2 + 1)"
    off = 10.0 ** -rng.randint(5, 13)
    if where == "at_a":
        a, b = float(r), float(r) + 3.0
    elif where == "at_b":
        a, b = float(r) - 3.0, float(r)
    elif where == "near_a":
        a, b = float(r) - off, float(r) + 3.0
    else:
        a, b = float(r) - 3.0, float(r) + off
    return Case("range_end_" + where, text, a, b, [(mp.mpf(r), m), (mp.mpf(other), 1)])


def beside_pole(rng: random.Random) -> Case:
    kind = rng.choice(["rational", "tan", "inverse"])
    if kind == "rational":
        r = dec(rng, -2, 2, 4)
        gap = 10.0 ** -rng.randint(3, 10) * rng.choice([1, -1])
        c = f"{float(r) + gap:.13f}"
        m = rng.choice([1, 2])
        pm = rng.choice([1, 2])
        den = f"(x - {c})" if pm == 1 else f"(x - {c})^2"
        text = f"{factor(r, m)}*(x - 3.5)/{den}"
        return Case("pole_rational", text, -4.0, 3.0, [(mp.mpf(r), m)], poles=[mp.mpf(c)])
    if kind == "tan":
        k = dec(rng, -20, 20, 3)
        lo, hi = -7.0, 7.0
        r0 = mp.atan(mp.mpf(k))
        roots = [(r0 + n * mp.pi, 1) for n in range(-4, 5) if lo < r0 + n * mp.pi < hi]
        poles = [mp.pi / 2 + n * mp.pi for n in range(-4, 4) if lo < mp.pi / 2 + n * mp.pi < hi]
        return Case("pole_tan", f"tan(x) - {k}" if not k.startswith("-") else
                    f"tan(x) + {k[1:]}", lo, hi, roots, poles=poles)
    # 1/(x - c) = k: root c + 1/k beside the pole c, k large
    c = dec(rng, -1, 1, 4)
    k = 10.0 ** rng.randint(2, 9) * rng.choice([1, -1])
    text = f"1/(x - {c}) - ({k!r})"
    return Case("pole_inverse", text, -2.0, 2.0, [(mp.mpf(c) + 1 / mp.mpf(repr(k)), 1)],
                poles=[mp.mpf(c)])


def jumps(rng: random.Random) -> Case:
    kind = rng.choice(["abs_kink", "sign_jump", "sign_times", "sign_offset"])
    s = dec(rng, -1, 1, 4)
    if kind == "abs_kink":  # abs(x - s) - t: two roots, a kink between (no jump)
        t = dec(rng, 0.001, 1.5, 4)
        return Case("abs_kink", f"abs(x - ({s})) - {t}", -3.0, 3.0,
                    [(mp.mpf(s) - mp.mpf(t), 1), (mp.mpf(s) + mp.mpf(t), 1)])
    if kind == "sign_jump":  # (x - s)/abs(x - s): a jump through zero, no root
        return Case("sign_jump", f"(x - ({s}))/abs(x - ({s}))", -3.0, 3.0, [],
                    jumps=[mp.mpf(s)], absent=[float(s)])
    if kind == "sign_times":  # sign(x - s) * (x - r): a root at r and a jump at s
        r = f"{float(s) + rng.choice([-1, 1]) * rng.uniform(0.2, 1.5):.4f}"
        return Case("sign_times", f"(x - ({s}))/abs(x - ({s}))*(x - ({r}))", -3.0, 3.0,
                    [(mp.mpf(r), 1)], jumps=[mp.mpf(s)], absent=[float(s)])
    # sign(x - s) + c, |c| < 1: a jump across zero without a root
    c = dec(rng, -0.9, 0.9, 3)
    return Case("sign_offset", f"(x - ({s}))/abs(x - ({s})) + ({c})", -3.0, 3.0, [],
                jumps=[mp.mpf(s)], absent=[float(s)])


def _merge(zs: list[mp.mpf], lo: float, hi: float) -> list[tuple[mp.mpf, int]]:
    zs = sorted(z for z in zs if lo <= z <= hi)
    out: list[tuple[mp.mpf, int]] = []
    for z in zs:
        if out and abs(out[-1][0] - z) < mp.mpf("1e-12"):
            out[-1] = (out[-1][0], out[-1][1] + 1)
        else:
            out.append((z, 1))
    return out


def sinusoids(rng: random.Random) -> Case:
    kind = rng.choice(["double_angle", "difference", "power"])
    lo, hi = -10.0, 10.0
    if kind == "double_angle":  # sin(w(x-s)) + sin(2w(x-s)) = sin(u)(1 + 2 cos u)
        w, s = dec(rng, 0.5, 20, 3), dec(rng, -1, 1, 3)
        W, S = mp.mpf(w), mp.mpf(s)
        zs = []
        for n in range(-400, 401):
            zs += [S + n * mp.pi / W, S + (2 * mp.pi / 3 + 2 * n * mp.pi) / W,
                   S + (-2 * mp.pi / 3 + 2 * n * mp.pi) / W]
        text = f"sin({w}*(x - ({s}))) + sin(2*{w}*(x - ({s})))"
        return Case("sin_double_angle", text, lo, hi, _merge(zs, lo, hi))
    if kind == "difference":  # sin p x - sin q x = 2 cos((p+q)x/2) sin((p-q)x/2)
        p, q = dec(rng, 0.5, 15, 3), dec(rng, 0.5, 15, 3)
        P, Q = mp.mpf(p), mp.mpf(q)
        zs = []
        for n in range(-800, 801):
            zs.append((2 * n + 1) * mp.pi / (P + Q))
            if P != Q:
                zs.append(2 * n * mp.pi / (P - Q))
        return Case("sin_difference", f"sin({p}*x) - sin({q}*x)", lo, hi, _merge(zs, lo, hi))
    w, s, m = dec(rng, 0.5, 6, 3), dec(rng, -1, 1, 3), rng.randint(2, 5)
    zs = [mp.mpf(s) + n * mp.pi / mp.mpf(w) for n in range(-200, 201)]
    roots = [(z, m) for z in zs if lo <= z <= hi]
    return Case(f"sin_power{m}", f"sin({w}*(x - ({s})))^{m}*(2 + cos(x))", lo, hi, roots)


def exp_poly(rng: random.Random) -> Case:
    kind = rng.choice(["xexp", "exp_line", "gauss"])
    if kind == "xexp":  # x e^x = c: W0(c), and W-1(c) for -1/e < c < 0
        c = dec(rng, -0.36, 3, 4)
        C = mp.mpf(c)
        roots = [mp.lambertw(C, 0).real]
        if C < 0:
            roots.append(mp.lambertw(C, -1).real)
        return Case("x_exp_x", f"x*exp(x) - ({c})", -8.0, 3.0, [(r, 1) for r in roots])
    if kind == "exp_line":  # e^x = k x, k > e: x = -W(-1/k) on both branches
        k = dec(rng, 2.8, 50, 3)
        K = mp.mpf(k)
        roots = [-mp.lambertw(-1 / K, br).real for br in (0, -1)]
        return Case("exp_line", f"exp(x) - {k}*x", -2.0, 8.0, [(r, 1) for r in roots])
    r = dec(rng, 0.1, 2.5, 4)
    m = rng.randint(1, 3)
    text = f"(x^2 - {r}^2)^{m}*exp(-x^2)" if m > 1 else f"(x^2 - {r}^2)*exp(-x^2)"
    R = mp.mpf(r)
    return Case("gauss_poly", text, -4.0, 4.0, [(-R, m), (R, m)])


def nearmiss(rng: random.Random) -> Case:
    q, e = dec(rng, -2, 2, 4), 10.0 ** -rng.randint(4, 12)
    r = f"{float(q) + rng.choice([-1, 1]) * 1.1:.4f}"
    text = f"((x - ({q}))^2 + {e!r})*(x - ({r}))"
    return Case("nearmiss", text, -4.0, 4.0, [(mp.mpf(r), 1)], absent=[float(q)])


def engineering(rng: random.Random) -> Case:
    kind = rng.choice(["beam", "biot", "vdw", "vdw_cubic"])
    if kind == "beam":
        L = rng.choice([10.0, 20.0, 30.0])
        g = lambda x: mp.cos(x) * mp.cosh(x) + 1  # noqa: E731
        roots = []
        for n in range(1, 30):
            c = (2 * n - 1) * mp.pi / 2
            lo, hi = (mp.mpf(1), mp.mpf("2.5")) if n == 1 else (c - 0.5, c + 0.5)
            if hi > L + 1:
                break
            z = bisect_mp(g, lo, hi)
            if 0 <= z <= L:
                roots.append((z, 1))
        return Case("beam_cos_cosh", "cos(x)*cosh(x) + 1", 0.0, L, roots)
    if kind == "biot":
        bi = dec(rng, 0.01, 100, 3)
        B = mp.mpf(bi)
        g = lambda x: x * mp.tan(x) - B  # noqa: E731
        roots, poles = [], []
        L = 20.0
        for n in range(0, 8):
            lo, hi = n * mp.pi, n * mp.pi + mp.pi / 2
            z = bisect_mp(g, lo + mp.mpf("1e-30"), hi - mp.mpf("1e-30"))
            for zz in (z, -z):
                if -L <= zz <= L:
                    roots.append((zz, 1))
            for p in (hi, -hi):
                if -L <= p <= L:
                    poles.append(p)
        return Case("x_tan_x_biot", f"x*tan(x) - {bi}", -L, L, sorted(roots), poles=sorted(poles))
    # invented gas: a [Pa m^6/mol^2], b [m^3/mol], R T / P in the two-phase region or not
    a_, b_ = rng.uniform(0.1, 0.6), rng.uniform(2e-5, 6e-5)
    Tc = 8 * a_ / (27 * 8.314 * b_)
    T = rng.uniform(0.6, 1.2) * Tc
    Pc = a_ / (27 * b_ ** 2)
    P = rng.uniform(0.2, 1.1) * Pc
    A, B, TT, PP = (mp.mpf(repr(v)) for v in (a_, b_, T, P))
    cubic = [PP, -(PP * B + mp.mpf("8.314") * TT), A, -A * B]
    allr = sorted(z.real for z in mp.polyroots(cubic, maxsteps=200, extraprec=200)
                  if abs(z.imag) < mp.mpf("1e-30") * abs(z))
    hi = 20 * 8.314 * T / P
    if kind == "vdw":  # P = R T / (V - b) - a / V^2: poles at V = 0 and V = b
        text = f"{P!r} - 8.314*{T!r}/(x - {b_!r}) + {a_!r}/x^2"
        return Case("vdw_pressure", text, -b_, hi,
                    [(r, 1) for r in allr if -b_ <= r <= hi], poles=[mp.mpf(0), B])
    text = (f"{P!r}*x^3 - ({P!r}*{b_!r} + 8.314*{T!r})*x^2 + {a_!r}*x - {a_!r}*{b_!r}")
    return Case("vdw_cubic", text, 0.0, hi, [(r, 1) for r in allr if 0 <= r <= hi])


def colebrook(rng: random.Random) -> Case:
    rel, re_ = rng.uniform(1e-6, 0.05), 10 ** rng.uniform(3.5, 8)
    g = lambda f: 1 / mp.sqrt(f) + 2 * mp.log10(mp.mpf(repr(rel)) / mp.mpf("3.7")  # noqa: E731
                                                + mp.mpf("2.51") / (mp.mpf(repr(re_)) * mp.sqrt(f)))
    z = bisect_mp(g, mp.mpf("1e-4"), mp.mpf("0.5"))
    text = f"1/sqrt(x) + 2*log10({rel!r}/3.7 + 2.51/({re_!r}*sqrt(x)))"
    return Case("colebrook", text, -0.05, 0.2, [(z, 1)], poles=[mp.mpf(0)])


CLASSES = [poly_factored, poly_expanded, close_pair, range_ends, beside_pole, jumps,
           sinusoids, exp_poly, nearmiss, engineering, colebrook]


def scaled(rng: random.Random, base: Case) -> Case:
    """The same roots with f scaled by 10^k, or x by 10^k (k in -300..300)."""
    k = rng.randint(-300, 300)
    if rng.random() < 0.5:
        return Case(base.kind + "*yscale", f"1e{k}*({base.text})", base.a, base.b, base.roots,
                    base.poles, base.jumps, base.expanded, base.absent)
    k = max(-290, min(290, k))
    s = mp.mpf(10) ** k
    text = re.sub(r"\bx\b", f"(x*1e{-k})", base.text)
    return Case(base.kind + "*xscale", text, base.a * 10.0 ** k, base.b * 10.0 ** k,
                [(r * s, m) for r, m in base.roots], [p * s for p in base.poles],
                [j * s for j in base.jumps], base.expanded, [v * 10.0 ** k for v in base.absent])


# ---------------------------------------------------------------- scoring

def score(case: Case, res) -> dict:
    width = case.b - case.a
    out = {"miss": [], "false": [], "mult": [], "pole_miss": [], "pole_false": [],
           "jump_miss": []}

    def tol(r, m):
        t = TOL[m] if not case.expanded else 10 * 1e-13 ** (1 / m)
        return t * max(abs(float(r)), width / 100)

    for r, m in case.roots:
        near = [x for x in res.roots if abs(x.x - float(r)) <= tol(r, m)]
        if not near:
            out["miss"].append((float(r), m))
        elif all(x.multiplicity != m for x in near):
            out["mult"].append((float(r), m, [x.multiplicity for x in near]))
    for x in res.roots:
        if all(abs(x.x - float(r)) > tol(r, m) for r, m in case.roots):
            out["false"].append((x.x, x.multiplicity, x.confirmed))
    ptol = 1e-9 * width
    for p in case.poles:
        if case.a < p < case.b and not any(abs(q - float(p)) <= ptol for q in res.poles):
            out["pole_miss"].append(float(p))
    for q in res.poles:
        if not any(abs(q - float(p)) <= ptol for p in case.poles):
            out["pole_false"].append(q)
    for j in case.jumps:
        if not any(abs(q - float(j)) <= ptol for q in res.discontinuities):
            out["jump_miss"].append(float(j))
    return out


def run_one(case: Case, with_fprime: bool) -> tuple[dict | None, float, str]:
    try:
        eq = parse_equation(case.text, "x")
    except Exception as exc:  # the generator's text: a defect of the generator
        return None, 0.0, f"parse: {exc}"
    deadline = time.monotonic() + TIME_LIMIT
    t0 = time.perf_counter()
    try:
        res = scan(eq.f, case.a, case.b, fprime=eq.fprime if with_fprime else None,
                   cancel=lambda: time.monotonic() > deadline)
    except ScanCancelled:
        return {"hang": True}, time.perf_counter() - t0, ""
    except Exception as exc:
        return {"crash": repr(exc)}, time.perf_counter() - t0, ""
    dt = time.perf_counter() - t0
    s = score(case, res)
    s["details"] = [d.code for d in res.details]
    return s, dt, ""


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 40
    seed = int(sys.argv[2]) if len(sys.argv) > 2 else 20261203
    only = sys.argv[3] if len(sys.argv) > 3 else ""
    rng = random.Random(seed)
    cases: list[Case] = []
    for make in CLASSES:
        for _ in range(n):
            c = make(rng)
            cases.append(c)
            if rng.random() < 0.3:
                cases.append(scaled(rng, c))
    warm = parse_equation("x^2 - 2", "x")  # compile the scan's loops outside the timing
    scan(warm.f, 0.0, 2.0, fprime=warm.fprime)
    scan(warm.f, 0.0, 2.0)
    stats: dict[str, dict[str, int]] = {}
    fails = []
    for case in cases:
        if only and only not in case.kind:
            continue
        for fp in (True, False):
            s, dt, err = run_one(case, fp)
            key = case.kind.split("*")[0] + ("*" + case.kind.split("*")[1]
                                             if "*" in case.kind else "")
            st = stats.setdefault(key, {k: 0 for k in (
                "runs", "roots", "miss", "false", "mult", "pole_miss", "pole_false",
                "jump_miss", "crash", "hang", "slow")})
            st["runs"] += 1
            if err:
                print("GENERATOR", case.kind, case.text, err)
                continue
            st["roots"] += len(case.roots)
            bad = {}
            for k in ("miss", "false", "mult", "pole_miss", "pole_false", "jump_miss"):
                if s.get(k):
                    st[k] += len(s[k])
                    bad[k] = s[k]
            for k in ("crash", "hang"):
                if s.get(k):
                    st[k] += 1
                    bad[k] = s[k]
            if dt > SLOW:
                st["slow"] += 1
                bad["slow"] = round(dt, 2)
            if bad:
                fails.append((case, fp, bad, s.get("details")))
    for k, st in sorted(stats.items()):
        print(f"{k:26s} " + " ".join(f"{n}={v}" for n, v in st.items()))
    for case, fp, bad, det in fails:
        print(f"FAIL {case.kind} fprime={fp} [{case.a!r}, {case.b!r}] {case.text}\n   {bad}"
              f" details={det}")


if __name__ == "__main__":
    main()
