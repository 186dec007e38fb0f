"""Required properties of a steel I-beam by AISC 360-22 (LRFD), for the sizing table's
``zx_required``, ``aw_required`` and ``ix_required`` columns.

Pure functions over numpy arrays.  Units follow the section units of the case: SI N, mm,
MPa (moments N*mm, Zx mm^3, Aw mm^2, Ix mm^4); US kip, in, ksi (kip*in, in^3, in^2, in^4).

These are the properties that yielding alone (F2.1: Mn = Mp = Fy Zx, phi_b = 0.90), shear
with Cv1 = 1.0 (G2.1) and the deflection limits would need; the section itself is checked
with lateral-torsional and local buckling, Cv1 and the web checks by
:mod:`envelope.sizing.steel_checks`.
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
