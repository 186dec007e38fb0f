"""Closed-form load terms of one element: exact integrals of its load items.

Inside an element, with V0 and M0 the shear and sagging moment just right of its
left end, theta1 and v1 its end rotation (counter-clockwise) and deflection
(upward), Euler-Bernoulli statics and EI v'' = M give, at local ``s``:

    V(s)      = V0 - Q(s)
    M(s)      = M0 + V0 s - m(s)
    EI th(s)  = EI th1 + M0 s + V0 s^2/2 - m1(s)
    EI v(s)   = EI v1 + EI th1 s + M0 s^2/2 + V0 s^3/6 - m2(s)

where, for a downward line load q and clockwise point moments C_i,

    Q(s) = int_0^s q,   m(s) = int_0^s q(t) (s-t) dt - sum C_i H(s-a_i),
    m1 = int m,  m2 = int m1.

These are exact for every load type: distributed items are linear in t, so a
three-point Gauss-Legendre rule integrates q(t)(s-t)^3 (degree 4) exactly, with
no cancellation between far-apart singularity terms.  Point items use the
Heaviside step with the side of the limit: a load at ``a`` counts at ``s = a``
only for the right-side limit.
"""

from __future__ import annotations

import numpy as np

from envelope.loading import DISTRIBUTED, MOMENT, POINT

#: Three-point Gauss-Legendre rule on [-1, 1]: the values numpy.polynomial.legendre.leggauss(3)
#: gives (+-sqrt(3/5), 0; 5/9, 8/9, 5/9), written out so that numpy.polynomial is not
#: imported at start-up.
GAUSS_X = np.array([-0.7745966692414834, 0.0, 0.7745966692414834])
GAUSS_W = np.array([0.5555555555555557, 0.8888888888888888, 0.5555555555555557])


def load_terms(
    kind: np.ndarray,
    a: np.ndarray,
    b: np.ndarray,
    wa: np.ndarray,
    wb: np.ndarray,
    p: np.ndarray,
    s: np.ndarray,
    right: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(Q, m, m1, m2) of each item at its own point ``s`` (all arrays of one shape)."""
    Q = np.zeros(s.shape)
    m = np.zeros(s.shape)
    m1 = np.zeros(s.shape)
    m2 = np.zeros(s.shape)

    dist = kind == DISTRIBUTED
    if dist.any():
        ad, bd, sd = a[dist], b[dist], s[dist]
        wad, wbd = wa[dist], wb[dist]
        c = np.clip(sd, ad, bd)
        half = 0.5 * (c - ad)
        width = bd - ad
        slope = np.divide(wbd - wad, width, out=np.zeros_like(width), where=width > 0.0)
        # the three Gauss points of every item at once (items x points), each term the
        # same product as point by point; summed over the points in their order
        t = ad[:, None] + half[:, None] * (1.0 + GAUSS_X)
        wq = GAUSS_W * half[:, None] * (wad[:, None] + slope[:, None] * (t - ad[:, None]))
        r = sd[:, None] - t
        wr = wq * r
        wrr = wr * r
        Q[dist] = wq.sum(axis=1)
        m[dist] = wr.sum(axis=1)
        m1[dist] = (wrr / 2.0).sum(axis=1)
        m2[dist] = (wrr * r / 6.0).sum(axis=1)

    conc = (kind == POINT) | (kind == MOMENT)
    if conc.any():
        d = s[conc] - a[conc]
        h = ((d > 0.0) | ((d == 0.0) & right[conc])).astype(float)
        d = np.where(h > 0.0, d, 0.0)
        pc = p[conc] * h
        is_force = kind[conc] == POINT
        Q[conc] = np.where(is_force, pc, 0.0)
        m[conc] = np.where(is_force, pc * d, -pc)
        m1[conc] = np.where(is_force, pc * d * d / 2.0, -pc * d)
        m2[conc] = np.where(is_force, pc * d**3 / 6.0, -pc * d * d / 2.0)
    return Q, m, m1, m2
