"""Development and anchorage lengths and cut-off points (envelope.sizing.cutoffs).

Sources: ACI 318-19 Table 25.4.2.3 and 25.4.2.1, EN 1992-1-1:2004 8.4.2-8.4.4 (eq. 8.2,
8.3); the rounded "47 db" (Grade 60, 4000 psi, No. 7 and larger, bottom bars) and
"about 36 phi" (C30/37, fyk 500, good bond) are common practice.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from envelope.sizing import cutoffs


def test_aci_development_length_table_25_4_2_3() -> None:
    # Grade 60, 4000 psi: No. 7 and larger ld = 60000 / (20 sqrt(4000)) db = 47.4 db
    assert cutoffs.development_length_aci(1.0, 60_000, 4_000, "US", False) == \
        pytest.approx(60_000 / (20 * math.sqrt(4000)))
    # No. 6 and smaller: / 25 -> 37.9 db; top bars x 1.3 (psi_t, Table 25.4.2.5)
    assert cutoffs.development_length_aci(0.75, 60_000, 4_000, "US", False) == \
        pytest.approx(60_000 / (25 * math.sqrt(4000)) * 0.75)
    assert cutoffs.development_length_aci(1.0, 60_000, 4_000, "US", True) == \
        pytest.approx(1.3 * 47.434, rel=1e-4)
    # clear spacing or cover below db: the "other cases" row, 1.5 times
    assert cutoffs.development_length_aci(1.0, 60_000, 4_000, "US", False, False) == \
        pytest.approx(1.5 * 47.434, rel=1e-4)
    # SI: 420 MPa, 30 MPa, 16 mm: 420 / (2.1 sqrt(30)) 16 = 584 mm; at least 300 mm
    assert cutoffs.development_length_aci(16.0, 420, 30, "SI", False) == \
        pytest.approx(420 / (2.1 * math.sqrt(30)) * 16)
    assert cutoffs.development_length_aci(6.0, 420, 30, "SI", False) == 300.0
    # Grade 80 takes psi_g = 1.15
    assert cutoffs.development_length_aci(1.0, 80_000, 5_000, "US", False) == \
        pytest.approx(80_000 * 1.15 / (20 * math.sqrt(5000)))


def test_en_anchorage_length_8_4() -> None:
    # C30/37, fyk 500, H16, good bond: fctd = 0.7 * 2.896 / 1.5, fbd = 2.25 fctd,
    # lb,rqd = (16/4) (434.8 / fbd) = 572 mm, about 36 phi
    fctm = 0.30 * 30 ** (2 / 3)
    fbd = 2.25 * 0.7 * fctm / 1.5
    lb = 16 / 4 * (500 / 1.15) / fbd
    assert cutoffs.anchorage_length_en(16.0, 500, 30, True) == pytest.approx(lb)
    assert lb / 16 == pytest.approx(36, abs=0.5)
    # poor bond: eta1 = 0.7; above 32 mm eta2 = (132 - phi)/100
    assert cutoffs.anchorage_length_en(16.0, 500, 30, False) == pytest.approx(lb / 0.7)
    assert cutoffs.anchorage_length_en(40.0, 500, 30, True) == pytest.approx(
        40 / 4 * (500 / 1.15) / (fbd * 0.92))


def test_run_around_a_parabola_is_exact_with_refinement() -> None:
    # M(x) = 4 x (8 - x) on an 8 m span, capacity 48: 4x(8-x) = 48 -> x = 2 and 6
    def m(x: np.ndarray) -> np.ndarray:
        return 4 * x * (8 - x)
    x = np.linspace(0, 8, 11)
    a, b = cutoffs.run_around(x, m(x), 48.0, 5, m, 1e-12)
    assert (a, b) == pytest.approx((2.0, 6.0), abs=1e-10)
    # without refinement: linear interpolation between the samples
    a, b = cutoffs.run_around(x, m(x), 48.0, 5)
    assert 1.9 < a < 2.1 and 5.9 < b < 6.1
    # the seed below the capacity: no stretch
    assert all(np.isnan(cutoffs.run_around(x, m(x), 48.0, 0)))
    # a run reaching the end of the samples ends there
    assert cutoffs.run_around(x, -m(x) + 100, 90.0, 0, None)[0] == 0.0


def _illinois_alone(a: float, b: float, fa: float, fb: float, g, xtol: float) -> float:  # type: ignore[no-untyped-def]
    """The reference: regula falsi with the Illinois modification on one bracket, in
    scalar steps (as the cut-off points were narrowed one at a time)."""
    side = 0
    for _ in range(100):
        if abs(b - a) <= xtol:
            break
        c = b - fb * (b - a) / (fb - fa) if fb != fa else 0.5 * (a + b)
        if not min(a, b) < c < max(a, b):
            c = 0.5 * (a + b)
        fc = float(g(c))
        if fc == 0.0:
            return c
        if (fc > 0.0) == (fa > 0.0):
            a, fa = c, fc
            if side == -1:
                fb *= 0.5
            side = -1
        else:
            b, fb = c, fc
            if side == 1:
                fa *= 0.5
            side = 1
    return a if abs(fa) <= abs(fb) else b


def test_brackets_narrowed_together_take_each_bracket_s_own_steps_bit_for_bit() -> None:
    # cubics k (x - r)^3 + s (x - r) with roots r in random brackets of either
    # orientation, some with an exact zero at a step (r at the bracket's middle, a
    # straight line) and one narrow from the start: the lockstep search returns what
    # each bracket alone returns, to the last bit
    rng = np.random.default_rng(7)
    n = 40
    r = rng.uniform(0.0, 10.0, n)
    k = rng.uniform(0.1, 3.0, n)
    slope = rng.uniform(0.0, 2.0, n)
    half = rng.uniform(0.05, 1.5, n)
    inside = r - half * rng.uniform(0.2, 1.0, n)
    outside = r + half * rng.uniform(0.2, 1.0, n)
    flip = rng.random(n) < 0.5
    inside[flip], outside[flip] = outside[flip], inside[flip].copy()
    k[:3] = 0.0
    inside[:3], outside[:3] = r[:3] - 1.0, r[:3] + 1.0  # a line: the first step hits r
    outside[3] = inside[3] + 1e-12  # (no root inside: the better end is returned)
    sense = np.where(inside < r, -1.0, 1.0)  # positive inside

    def g_one(i: int, x: float) -> float:
        return float(sense[i] * (k[i] * (x - r[i]) ** 3 + (slope[i] + 0.5) * (x - r[i])))

    def g_many(idx: np.ndarray, x: np.ndarray) -> np.ndarray:
        return np.array([g_one(int(i), float(c)) for i, c in zip(idx, x, strict=True)])

    xtol = np.full(n, 1e-10)
    f_in = np.array([g_one(i, inside[i]) for i in range(n)])
    f_out = np.array([g_one(i, outside[i]) for i in range(n)])
    roots = cutoffs.cross_together(inside, outside, f_in, f_out, g_many, xtol)
    for i in range(n):
        expected = _illinois_alone(float(inside[i]), float(outside[i]), float(f_in[i]),
                                   float(f_out[i]), lambda x, i=i: g_one(i, x), 1e-10)
        assert roots[i] == expected, i
    near = np.arange(n) != 3
    np.testing.assert_allclose(roots[near], r[near], atol=1e-9)
    assert roots[3] in (inside[3], outside[3])  # narrow at once: no step taken
