"""Battery: generated equations whose roots, poles and jumps are known by construction.

Every case is built from factors whose zeros are exact (common practice: a product
vanishes exactly where a factor does, and a strictly positive factor adds none):

* ``product``  : prod (x - r_i)^m_i * exp(positive smooth), multiplicities 1..3;
* ``waves``    : sin(w (x - r)) * (c0 + sum a_k cos(k x + phi_k)), c0 > sum |a_k|, w up to 60,
                 zeros at r + n pi / w; optionally times a second such wave;
* ``near``     : (x - r)(x - r - delta), delta in [1e-8, 1e-4], times a product;
* ``poles``    : a product divided by (x - p_1) and, in some cases, (x - p_2)^2 (an
                 odd-order pole changes sign, an even-order one does not; neither is a root);
* ``cluster``  : three simple roots spaced 1e-6..3e-5 apart, inside one sample spacing;
* ``jump``     : a product times a step that flips sign at x = s (a jump, not a root);
* ``nearmiss`` : a product times ((x - q)^2 + e), e in [1e-10, 1e-5]: |f| dips close to
                 zero at q without a root there (a false touch must not be reported).

The scan must miss no root and report no false root (a pole or jump reported as a root
counts as false). The counts are printed by ``test_summary``. Fixed seed: reproducible.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from solvers.scan import scan

SEED = 20261202
N_CASES = 240
# location tolerance by multiplicity, relative to max(1, |r|): a root of multiplicity m
# is determined only to about eps**(1/m) when f is noisy (common practice); these
# factored forms are evaluated without cancellation, so the bounds are generous.
TOL = {1: 1e-10, 2: 1e-7, 3: 1e-5}


def _separated(points: list[float], gap: float) -> bool:
    p = sorted(points)
    return all(q - r >= gap for r, q in zip(p, p[1:], strict=False))


def _make_case(rng: np.random.Generator, k: int) -> dict:
    kind = ("product", "waves", "near", "poles", "jump", "nearmiss", "cluster")[k % 7]
    a = float(rng.uniform(-6.0, 0.0))
    b = a + float(rng.uniform(2.0, 8.0))
    width = b - a
    lo, hi = a + 0.01 * width, b - 0.01 * width

    def draw(count: int, avoid: list[float], gap: float) -> list[float]:
        while True:
            pts = [float(v) for v in rng.uniform(lo, hi, count)]
            if _separated(pts + avoid, gap):
                return pts

    roots: list[tuple[float, int]] = []
    poles: list[float] = []
    jumps: list[float] = []
    c1, c2 = float(rng.uniform(0.1, 0.5)), float(rng.uniform(0.2, 1.5))

    def positive(x):  # strictly positive smooth factor: adds no zeros
        return np.exp(c1 * np.sin(c2 * x))

    if kind == "waves":
        w = float(rng.uniform(1.0, 6.0)) if (k // 7) % 2 else float(rng.uniform(10.0, 60.0))
        r = float(rng.uniform(a, b))
        amps = rng.uniform(-0.3, 0.3, 4)
        phases = rng.uniform(0, 2 * math.pi, 4)
        c0 = 1.0 + float(np.sum(np.abs(amps)))
        two = bool(rng.integers(0, 2))
        w2, r2 = float(rng.uniform(0.5, 3.0)), float(rng.uniform(a, b))

        def zeros(w_, r_):
            n0, n1 = math.ceil((a - r_) * w_ / math.pi), math.floor((b - r_) * w_ / math.pi)
            return [r_ + n * math.pi / w_ for n in range(n0, n1 + 1)]

        zs = zeros(w, r) + (zeros(w2, r2) if two else [])
        if not _separated(zs, 1e-3):
            two = False
            zs = zeros(w, r)
        roots = [(z, 1) for z in zs]

        def f(x, w=w, r=r, amps=amps, phases=phases, c0=c0, two=two, w2=w2, r2=r2):
            env = c0 + sum(
                amp * np.cos((i + 1) * x + ph)
                for i, (amp, ph) in enumerate(zip(amps, phases, strict=True))
            )
            out = np.sin(w * (x - r)) * env
            return out * np.sin(w2 * (x - r2)) if two else out

        return {"kind": kind, "a": a, "b": b, "f": f, "roots": roots, "poles": [], "jumps": []}

    count = int(rng.integers(1, 5))
    mults = [int(m) for m in rng.choice([1, 1, 1, 2, 2, 3], size=count)]
    if kind == "poles":
        npoles = int(rng.integers(1, 3))
        pts = draw(count + npoles, [], 0.02 * width)
        rs, poles = pts[:count], pts[count:]
    else:
        rs = draw(count, [], 0.02 * width)
    roots = list(zip(rs, mults, strict=True))
    if kind == "near":
        r0 = draw(1, rs, 0.02 * width)[0]
        delta = float(10 ** rng.uniform(-8, -4))
        roots += [(r0, 1), (r0 + delta, 1)]
    if kind == "cluster":  # three simple roots within one sample spacing: one sign change
        r0 = draw(1, rs, 0.02 * width)[0]
        delta = float(10 ** rng.uniform(-6, -4.5))
        roots += [(r0, 1), (r0 + delta, 1), (r0 + 2.3 * delta, 1)]
    if kind == "jump":
        jumps = draw(1, rs, 0.02 * width)
    misses_at: tuple[float, ...] = ()
    gap_size = 0.0
    if kind == "nearmiss":
        misses_at = tuple(draw(1, rs, 0.02 * width))
        gap_size = float(10 ** rng.uniform(-10, -5))

    scale = float(rng.uniform(0.5, 20.0))

    def f(x, roots=tuple(roots), poles=tuple(poles), jumps=tuple(jumps), scale=scale,
          misses_at=misses_at, gap_size=gap_size):
        out = scale * positive(x)
        for q in misses_at:  # a dip to within gap_size of zero that never touches it
            out = out * ((x - q) ** 2 + gap_size)
        for r, m in roots:
            out = out * (x - r) ** m
        for j, p in enumerate(poles):  # odd- and even-order poles alternate
            out = out / (x - p) if j % 2 == 0 else out / (x - p) ** 2
        for s in jumps:
            out = out * np.where(x < s, -1.0, 1.0) * (1.5 + 0.5 * np.tanh(x - s))
        return out

    return {"kind": kind, "a": a, "b": b, "f": f, "roots": sorted(roots), "poles": poles,
            "jumps": jumps}


def _score(case: dict, result) -> dict:
    expected = case["roots"]
    found = [r.x for r in result.roots]
    misses, wrong_mult = [], []
    for r, m in expected:
        tol = TOL[m] * max(1.0, abs(r))
        near = [x for x in result.roots if abs(x.x - r) <= tol]
        if not near:
            misses.append(r)
        elif near[0].multiplicity != m:
            wrong_mult.append((r, m, near[0].multiplicity))
    false = [
        x for x in found
        if all(abs(x - r) > TOL[m] * max(1.0, abs(r)) for r, m in expected)
    ]
    bad_poles = [p for p in case["poles"] if not any(abs(p - q) <= 1e-9 for q in result.poles)]
    bad_jumps = [
        s for s in case["jumps"] if not any(abs(s - q) <= 1e-9 for q in result.discontinuities)
    ]
    return {"misses": misses, "false": false, "mult": wrong_mult, "poles": bad_poles,
            "jumps": bad_jumps}


@pytest.fixture(scope="module")
def battery():
    rng = np.random.default_rng(SEED)
    cases = [_make_case(rng, k) for k in range(N_CASES)]
    scores = []
    for case in cases:
        result = scan(case["f"], case["a"], case["b"])
        scores.append((case, result, _score(case, result)))
    return scores


def test_battery_is_large_enough(battery):
    assert len(battery) >= 200
    assert sum(len(c["roots"]) for c, _, _ in battery) >= 600


def test_no_missed_roots(battery):
    missed = [(c["kind"], c["a"], c["b"], s["misses"]) for c, _, s in battery if s["misses"]]
    assert missed == []


def test_no_false_roots(battery):
    # a pole or a jump reported as a root lands here too (it matches no expected root)
    false = [(c["kind"], c["a"], c["b"], s["false"]) for c, _, s in battery if s["false"]]
    assert false == []


def test_multiplicities(battery):
    wrong = [(c["kind"], s["mult"]) for c, _, s in battery if s["mult"]]
    assert wrong == []


def test_poles_and_jumps_reported(battery):
    lost = [(c["kind"], s["poles"], s["jumps"]) for c, _, s in battery
            if s["poles"] or s["jumps"]]
    assert lost == []


def test_summary(battery, capsys):
    roots = sum(len(c["roots"]) for c, _, _ in battery)
    misses = sum(len(s["misses"]) for _, _, s in battery)
    false = sum(len(s["false"]) for _, _, s in battery)
    mult = sum(len(s["mult"]) for _, _, s in battery)
    poles = sum(len(c["poles"]) for c, _, _ in battery)
    jumps = sum(len(c["jumps"]) for c, _, _ in battery)
    warned = sum(len(r.details) for _, r, _ in battery)
    line = (f"scan battery: {len(battery)} cases, {roots} known roots, {poles} poles, "
            f"{jumps} jumps; misses {misses}, false roots {false}, wrong multiplicity {mult}; "
            f"{warned} cross-check warnings")
    with capsys.disabled():
        print("\n" + line)
    assert misses == 0 and false == 0
