"""Deflection of one span from its curvature, by integrating along the span.

Sign conventions of the engine: sagging curvature positive, deflection positive
downward, so w'' = -kappa.  Curvatures are sampled on a grid ``xi`` (span-local, sorted,
from 0 to the span length) and integrated by the trapezoidal rule; a kink of the
curvature (a point load, a change of stiffness) should be a grid point.

- A span supported at both ends: w(x) = chord + integral of G(x, xi) kappa(xi) dxi,
  with G the influence line of a simply supported span (virtual work: the moment of a
  unit load at x), G = xi (L - x) / L for xi <= x and x (L - xi) / L beyond, summed as
  two running sums along the span (the whole matrix of G is the tests' reference).
  The chord joins the support deflections (springs, settlements; 0 on rigid supports).
- A cantilever: w = w_root + theta_root s - integral over the root..x of (s - t) kappa,
  with s measured from the root; the root slope comes from the neighbouring span or is
  0 at a support that restrains rotation.

All functions accept several curvature diagrams at once as the columns of a 2-D array.
"""

from __future__ import annotations

import numpy as np


def _weights(xi: np.ndarray) -> np.ndarray:
    """Trapezoidal weights of the grid ``xi``."""
    h = np.diff(xi)
    w = np.zeros_like(xi)
    w[:-1] += h / 2.0
    w[1:] += h / 2.0
    return w


def simple_span(xi: np.ndarray, kappa: np.ndarray, w_left: np.ndarray | float = 0.0,
                w_right: np.ndarray | float = 0.0) -> dict[str, np.ndarray]:
    """Deflection at every grid point of a span supported at both ends (``w``, shape of
    ``kappa``) and the slopes at its ends (``slope_left``, ``slope_right``; dw/dx)."""
    xi = np.asarray(xi, dtype=float)
    kappa = np.asarray(kappa, dtype=float)
    flat = kappa.ndim == 1
    k2 = kappa[:, None] if flat else kappa
    length = xi[-1] - xi[0]
    s = xi - xi[0]
    weights = _weights(s)
    wl = np.asarray(w_left, dtype=float)
    wr = np.asarray(w_right, dtype=float)
    chord = wl + (wr - wl) * (s[:, None] / length)
    # G split at x: the points up to x weigh xi (L - x) / L, those beyond x (L - xi) / L,
    # so each part is a running sum along the span (n operations, not n x n): from
    # the left end up to and including x, and from the right end down to beyond x
    # (a point at x itself weighs the same either way)
    left = np.cumsum((s * weights)[:, None] * k2, axis=0)
    right_terms = ((length - s) * weights)[:, None] * k2
    right = np.zeros_like(right_terms)
    right[:-1] = np.cumsum(right_terms[:0:-1], axis=0)[::-1]
    w = ((length - s)[:, None] * left + s[:, None] * right) / length + chord
    slope_chord = (wr - wl) / length
    slope_left = slope_chord + right_terms.sum(axis=0) / length
    slope_right = slope_chord - left[-1] / length
    if flat:
        return {"w": w[:, 0], "slope_left": np.asarray(slope_left)[0],
                "slope_right": np.asarray(slope_right)[0]}
    return {"w": w, "slope_left": slope_left, "slope_right": slope_right}


def cantilever(xi: np.ndarray, kappa: np.ndarray, root_at_left: bool,
               w_root: np.ndarray | float = 0.0, slope_root: np.ndarray | float = 0.0
               ) -> np.ndarray:
    """Deflection at every grid point of a cantilever whose root is at the left end
    (``root_at_left``) or the right end, with the root's deflection and slope dw/dx."""
    xi = np.asarray(xi, dtype=float)
    kappa = np.asarray(kappa, dtype=float)
    flat = kappa.ndim == 1
    k2 = kappa[:, None] if flat else kappa
    if root_at_left:
        s = xi - xi[0]
        ks = k2
    else:  # mirror: s from the root leftwards; dw/ds = -dw/dx, curvature unchanged
        s = (xi[-1] - xi)[::-1]
        ks = k2[::-1]
    h = np.diff(s)[:, None]
    i1 = np.vstack([np.zeros((1, ks.shape[1])), np.cumsum(h * (ks[1:] + ks[:-1]) / 2, 0)])
    sk = s[:, None] * ks
    i2 = np.vstack([np.zeros((1, ks.shape[1])), np.cumsum(h * (sk[1:] + sk[:-1]) / 2, 0)])
    slope = np.asarray(slope_root, dtype=float) * (1.0 if root_at_left else -1.0)
    w = np.asarray(w_root, dtype=float) + slope * s[:, None] - (s[:, None] * i1 - i2)
    if not root_at_left:
        w = w[::-1]
    return w[:, 0] if flat else w
