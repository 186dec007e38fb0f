"""Load terms of one element (envelope.loadterms) against SymPy's exact integrals.

For a downward line load q(t) on [a, b] and the point s, the terms are
Q = int q, m = int q (s - t), m1 = int q (s - t)^2 / 2, m2 = int q (s - t)^3 / 6,
each over [a, min(s, b)] (the module docstring; Euler-Bernoulli statics, common
practice).  SymPy integrates the same expressions symbolically; a point force P at a
gives P, P d, P d^2/2, P d^3/6 with d = s - a, and a clockwise moment C gives
0, -C, -C d, -C d^2/2 (counted at s = a only for the right-side limit).
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy as sp

from envelope.loading import DISTRIBUTED, MOMENT, POINT
from envelope.loadterms import load_terms

from tolerances import ROUND_OFF

t = sp.symbols("t", real=True)


def _sympy_terms(a: float, b: float, wa: float, wb: float, s: float) -> list[float]:
    a_, b_, s_ = sp.Rational(str(a)), sp.Rational(str(b)), sp.Rational(str(s))
    q = sp.Rational(str(wa)) + (sp.Rational(str(wb)) - sp.Rational(str(wa))) * (t - a_) / (
        b_ - a_)
    top = min(s_, b_)
    if top <= a_:
        return [0.0, 0.0, 0.0, 0.0]
    r = s_ - t
    return [float(sp.integrate(q * r**k / sp.factorial(k), (t, a_, top))) for k in range(4)]


@pytest.mark.parametrize(("a", "b", "wa", "wb"), [
    (0.0, 4.0, 3.0, 3.0),      # uniform over the element
    (0.5, 3.25, -2.0, 5.5),    # linear, changing sign
    (1.0, 1.75, 7.0, 0.0),     # triangle ending at zero
])
def test_distributed_terms_equal_the_exact_integrals(a: float, b: float, wa: float,
                                                     wb: float) -> None:
    s = np.array([0.0, 0.3, a, 0.5 * (a + b), b, 3.9])
    n = s.size
    got = load_terms(np.full(n, DISTRIBUTED), np.full(n, a), np.full(n, b),
                     np.full(n, wa), np.full(n, wb), np.zeros(n), s, np.ones(n, bool))
    for i in range(n):
        want = _sympy_terms(a, b, wa, wb, float(s[i]))
        scale = max(abs(wa), abs(wb)) * (b - a) * max(1.0, float(s[i]))**3
        for k in range(4):
            assert abs(got[k][i] - want[k]) <= ROUND_OFF * scale, (s[i], k)


def test_point_force_and_moment_terms_and_the_side_at_their_position() -> None:
    a, P, C = 1.5, 4.0, 2.5
    s = np.array([1.0, 1.5, 1.5, 2.25])
    right = np.array([True, False, True, True])
    n = s.size
    kinds = (np.full(n, POINT), np.full(n, MOMENT))
    force = load_terms(kinds[0], np.full(n, a), np.full(n, a), np.zeros(n), np.zeros(n),
                       np.full(n, P), s, right)
    moment = load_terms(kinds[1], np.full(n, a), np.full(n, a), np.zeros(n), np.zeros(n),
                        np.full(n, C), s, right)
    d = np.array([0.0, 0.0, 0.0, 0.75])
    on = np.array([0.0, 0.0, 1.0, 1.0])  # before a, left limit at a, right limit, after
    np.testing.assert_allclose(force, [P * on, P * d * on, P * d**2 / 2 * on,
                                       P * d**3 / 6 * on], rtol=ROUND_OFF, atol=0.0)
    np.testing.assert_allclose(moment, [0 * on, -C * on, -C * d * on, -C * d**2 / 2 * on],
                               rtol=ROUND_OFF, atol=0.0)
