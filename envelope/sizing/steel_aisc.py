"""Rolled wide-flange steel beams by AISC 360-22 (LRFD): bending, shear, stiffness.

Pure functions over numpy arrays.  Units follow the section units of the case: SI N, mm,
MPa (moments N*mm, Zx mm^3, Aw mm^2, Ix mm^4); US kip, in, ksi (kip*in, in^3, in^2, in^4).

Scope: doubly symmetric I-shapes with compact flanges and webs, bent about the major
axis and braced laterally so that Lb <= Lp (F2.1: Mn = Mp = Fy Zx, phi_b = 0.90), in
both sagging and hogging regions (near the supports the bottom flange is the compression
flange: brace it).  Shear: G2.1 with Cv1 = 1.0 and phi_v = 0.90, which holds for webs
with h/tw <= 1.10 sqrt(kv E / Fy) (G2.1(b)(1)); rolled shapes meeting G2.1(a) may take
phi_v = 1.00, so this is on the safe side.  The sections table gives no h/tw, so the user
must pick shapes that meet these limits.
"""

from __future__ import annotations

import numpy as np

#: F1(1): resistance factor for flexure.
PHI_B = 0.90
#: G1(a): resistance factor for shear (G2.1(a) allows 1.00 for stocky rolled webs).
PHI_V = 0.90
#: G2.1(b)(1): web shear strength coefficient for webs that do not buckle in shear.
CV1 = 1.0


def zx_required(mu: np.ndarray | float, fy: float) -> np.ndarray:
    """Plastic section modulus for Mu <= phi_b Fy Zx (F2-1): |Mu| / (0.90 Fy)."""
    return np.abs(np.asarray(mu, dtype=float)) / (PHI_B * fy)


def aw_required(vu: np.ndarray | float, fy: float) -> np.ndarray:
    """Web area d*tw for Vu <= phi_v 0.6 Fy Aw Cv1 (G2-1): |Vu| / (0.90 * 0.6 Fy)."""
    return np.abs(np.asarray(vu, dtype=float)) / (PHI_V * 0.6 * fy * CV1)


def ix_required(i_model: np.ndarray | float, deflection_ratio: np.ndarray | float
                ) -> np.ndarray:
    """Moment of inertia that brings the deflections to their limits.

    ``deflection_ratio`` is the analysed deflection over its allowed value with the
    model's own I (``i_model``); deflection scales as 1/I when every stiffness of the
    beam scales together, so the required I is ``i_model * ratio``."""
    return np.asarray(i_model, dtype=float) * np.asarray(deflection_ratio, dtype=float)


def utilisation(required: np.ndarray | float, provided: np.ndarray | float) -> np.ndarray:
    """Demand over capacity, as required property over provided property (1.0 = full)."""
    return np.asarray(required, dtype=float) / np.asarray(provided, dtype=float)


def lightest_passing(zx: np.ndarray, aw: np.ndarray, ix: np.ndarray, weight: np.ndarray,
                     zx_req: float, aw_req: float, ix_req: float) -> int | None:
    """Index of the lightest section whose Zx, Aw and Ix all reach the requirements (the
    first in table order among equal weights), or None when none passes."""
    ok = (zx >= zx_req) & (aw >= aw_req) & (ix >= ix_req)
    if not ok.any():
        return None
    rows = np.flatnonzero(ok)
    return int(rows[np.argmin(weight[rows])])  # argmin keeps the first of equal weights


def least_utilised(zx: np.ndarray, aw: np.ndarray, ix: np.ndarray, zx_req: float,
                   aw_req: float, ix_req: float) -> int:
    """Index of the section whose worst utilisation is least (the closest to passing)."""
    worst = np.maximum.reduce([zx_req / zx, aw_req / aw, ix_req / ix])
    return int(np.argmin(worst))
