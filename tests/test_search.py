"""The vectorised searches of envelope.search on functions with known answers (common
practice): the maximum of a parabola and of a kinked function, the roots of cosine
(pi/2 and 3 pi/2) and of a cubic; several brackets at once, each with its own answer."""

from __future__ import annotations

import math

import numpy as np

from envelope.search import bisect, golden_max, illinois_root


def test_golden_max_finds_each_brackets_maximum() -> None:
    peak = np.array([0.3, 1.7, -2.0, 5.0])
    a, b = peak - np.array([1.0, 0.2, 3.0, 0.5]), peak + np.array([0.5, 2.0, 0.1, 0.5])
    calls = []

    def f(x: np.ndarray) -> np.ndarray:
        calls.append(x.size)
        p = np.resize(peak, x.size)
        return -np.abs(x - p) ** np.resize([2.0, 2.0, 1.0, 1.0], x.size)  # smooth, kinked

    x, v = golden_max(f, a, b, np.full(4, 1e-9))
    np.testing.assert_allclose(x, peak, rtol=0, atol=1e-8)
    assert np.all(v <= 0.0) and np.all(v >= -1e-8)
    assert calls[0] == 8 and set(calls[1:]) == {4}  # one call per step for all brackets


def test_golden_max_at_an_end_of_the_bracket() -> None:
    x, v = golden_max(lambda x: x, np.array([0.0]), np.array([2.0]), np.array([1e-10]))
    assert abs(x[0] - 2.0) < 1e-9 and abs(v[0] - 2.0) < 1e-9


def test_illinois_root_to_round_off() -> None:
    lo, hi = np.array([0.5, 4.0, 0.0]), np.array([2.5, 5.0, 3.0])

    def f(x: np.ndarray) -> np.ndarray:
        return np.array([math.cos(x[0]), -math.cos(x[1]), 2.0 - x[2] ** 3])

    active = np.array([True, True, True])
    root = illinois_root(f, lo, hi, f(lo), f(hi), (lo + hi) / 2, active, np.full(3, 1e-15))
    want = [math.pi / 2, 3 * math.pi / 2, 2.0 ** (1 / 3)]
    np.testing.assert_allclose(root, want, rtol=4e-16, atol=0)


def test_illinois_root_leaves_inactive_brackets_at_their_start() -> None:
    lo, hi = np.array([0.5, 0.0]), np.array([2.5, 1.0])
    start = np.array([1.0, 0.25])

    def f(x: np.ndarray) -> np.ndarray:
        return np.cos(x)  # no sign change on [0, 1]

    root = illinois_root(f, lo, hi, f(lo), f(hi), start, np.array([True, False]),
                         np.full(2, 1e-15))
    assert abs(root[0] - math.pi / 2) < 1e-15 and root[1] == 0.25


def test_quartic_roots_are_the_roots_sympy_finds() -> None:
    # polynomials of degree 1 to 4 on [-1, 1] with one sign change from + to -, given by
    # their values at the Lobatto nodes; the roots against SymPy's exact real roots
    import sympy

    from envelope.search import LOBATTO_NODES, quartic_roots

    u = sympy.Symbol("u")
    polys = [sympy.Rational(1, 3) - u,
             (sympy.Rational(1, 5) - u) * (u + 3),
             -(u - sympy.Rational(-2, 7)) * (u**2 + 1),
             -(u + sympy.Rational(1, 2)) * (u - 2) * (u - 3) * (u + 4) / 10]
    values = np.array([[float(p.subs(u, float(t))) for t in LOBATTO_NODES] for p in polys])
    want = [float(next(r for r in sympy.real_roots(sympy.Poly(p, u)) if -1 <= r <= 1))
            for p in polys]
    got = quartic_roots(values, np.ones(4, bool), np.full(4, 1e-15), np.full(4, -1.0))
    np.testing.assert_allclose(got, want, rtol=0, atol=1e-14)


def test_quartic_roots_at_a_jump_an_inactive_row_and_an_exact_zero() -> None:
    # not positive at -1: the root is -1; not negative at +1: +1; inactive: its start;
    # a value of exactly 0 at a regula falsi point: that point
    from envelope.search import LOBATTO_NODES, quartic_roots

    values = np.stack([-LOBATTO_NODES - 2.0, 2.0 - LOBATTO_NODES, -LOBATTO_NODES,
                       -LOBATTO_NODES])
    got = quartic_roots(values, np.array([True, True, False, True]), np.full(4, 1e-15),
                        np.array([1.0, -1.0, 0.5, -1.0]))
    assert got.tolist() == [-1.0, 1.0, 0.5, 0.0]


def test_bisection_stops_when_no_bracket_moves_with_the_answer_of_every_step() -> None:
    # the reference: a hundred steps, always (as the sizing bisected before); brackets
    # of many scales, some already a single float wide, a NaN bracket, a predicate
    # that is never true (the lower end stays) and one that is always true (the upper)
    rng = np.random.default_rng(3)
    n = 200
    target = rng.uniform(-1e3, 1e3, n) * 10.0 ** rng.integers(-6, 6, n)
    lo = target - rng.uniform(0.0, 10.0, n) * np.abs(target)
    hi = target + rng.uniform(0.0, 10.0, n) * np.abs(target)
    lo[:5] = target[:5]
    hi[:5] = np.nextafter(target[:5], np.inf)
    lo[5] = np.nan
    target[6] = -np.inf
    target[7] = np.inf

    def short(x: np.ndarray) -> np.ndarray:
        return x < target

    ref_lo, ref_hi = lo.copy(), hi.copy()
    for _ in range(100):
        mid = 0.5 * (ref_lo + ref_hi)
        below = short(mid)
        ref_lo, ref_hi = np.where(below, mid, ref_lo), np.where(below, ref_hi, mid)
    calls = []

    def counted(x: np.ndarray) -> np.ndarray:
        calls.append(1)
        return short(x)

    got_lo, got_hi = bisect(counted, lo, hi)
    np.testing.assert_array_equal(got_lo, ref_lo)
    np.testing.assert_array_equal(got_hi, ref_hi)
    assert len(calls) < 100
