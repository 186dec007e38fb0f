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



def test_brackets_narrowed_together_find_each_root_either_side() -> None:
    # cubics k (x - r)^3 + s (x - r), positive on the bracket's inside end, the inside
    # left or right of the root; a straight line (k = 0) and a bracket ending exactly
    # on its root (the outside value 0): every root to the tolerance asked
    rng = np.random.default_rng(7)
    n = 40
    r = rng.uniform(0.0, 10.0, n)
    k = rng.uniform(0.1, 3.0, n)
    k[:3] = 0.0
    slope = rng.uniform(0.5, 2.5, n)
    half = rng.uniform(0.05, 1.5, n)
    inside = r - half * rng.uniform(0.2, 1.0, n)
    outside = r + half * rng.uniform(0.2, 1.0, n)
    flip = rng.random(n) < 0.5
    inside[flip], outside[flip] = outside[flip], inside[flip].copy()
    outside[3] = r[3]
    sense = np.where(inside < r, -1.0, 1.0)  # positive inside

    def g(x: np.ndarray) -> np.ndarray:
        return sense * (k * (x - r) ** 3 + slope * (x - r))

    calls = []

    def counted(x: np.ndarray) -> np.ndarray:
        calls.append(x.size)
        return g(x)

    roots = cutoffs.narrow(inside, outside, g(inside), g(outside), counted,
                           np.full(n, 1e-12))
    np.testing.assert_allclose(roots, r, rtol=0, atol=1e-11)
    assert roots[3] == r[3]
    assert len(calls) < 20  # superlinear: a handful of steps for all forty together


@pytest.mark.parametrize("n", [2, 60])  # (Python floats up to ROOT_SCALAR_BRACKETS, arrays)
def test_a_bracket_whose_outside_sample_is_the_root_ends_there_either_way(n: int) -> None:
    # g = x - r with its root exactly on a bracket's outside end (g_out = 0, allowed:
    # "g_k <= 0 at outside"), the inside end above the root (the positive end is the
    # bracket's upper end) and below it: the root is the outside sample
    r = np.linspace(1.0, 9.0, n)
    inside = np.where(np.arange(n) % 2 == 0, r + 0.5, r - 0.5)
    sense = np.where(inside > r, 1.0, -1.0)  # positive inside

    def g(x: np.ndarray) -> np.ndarray:
        return sense * (x - r)

    roots = cutoffs.narrow(inside, r, g(inside), g(r), g, np.full(n, 1e-12))
    np.testing.assert_array_equal(roots, r)
    # a straight moment sampled exactly on the capacity, at a run's start and its end
    x = np.linspace(0.0, 10.0, 11)
    assert cutoffs.run_around(x, x.copy(), 3.0, 10, lambda c: c, 1e-9) == (3.0, 10.0)
    assert cutoffs.run_around(x, 10.0 - x, 3.0, 0, lambda c: 10.0 - c, 1e-9) == (0.0, 7.0)


@pytest.mark.parametrize(("big", "small"), [(1e6, 1e-4), (1e3, 1e-3), (100.0, 1e-6), (5.0, 2.0)])
def test_a_jump_inside_a_bracket_is_found_to_the_tolerance(big: float, small: float) -> None:
    # a couple makes the moment envelope jump: demand far above the capacity on one side,
    # just below it on the other (regula falsi's steps shrink there while its bracket
    # does not); both ends of a run, so both orientations of the bracket
    x = np.linspace(0.0, 1.0, 11)

    def falls(c: np.ndarray) -> np.ndarray:  # above up to 0.33, just below after
        c = np.asarray(c, dtype=float)
        return np.where(c < 0.33, big * (1.0 - c), -small - (c - 0.33))

    def rises(c: np.ndarray) -> np.ndarray:  # just below up to 0.33, far above after
        c = np.asarray(c, dtype=float)
        return np.where(c < 0.33, small * (c - 0.33) - 1e-9, big * (c + 0.1))

    end = cutoffs.run_around(x, falls(x), 0.0, 0, falls, 1e-10)[1]
    start = cutoffs.run_around(x, rises(x), 0.0, 10, rises, 1e-10)[0]
    assert end == pytest.approx(0.33, abs=1e-10)
    assert start == pytest.approx(0.33, abs=1e-10)
