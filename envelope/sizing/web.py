"""The web of an I-shape by AISC 360-22 (LRFD): shear strength (G2.1) and concentrated
forces on the flange, web local yielding (J10.2) and web crippling (J10.3).

Pure functions over numpy arrays that broadcast (sections x forces).  Section units: SI N,
mm, MPa; US kip, in, ksi.  ``h`` is the clear web height used for h/tw: d - 2k where the
fillet distance k is known, else d - 2tf (larger h, so on the safe side).

Shear: G2.1(a) (phi_v = 1.00, Cv1 = 1.0) for the web of a rolled I-shape with h/tw <= 2.24
sqrt(E/Fy); G2.1(b) (phi_v = 0.90, Cv1 by G2-3 / G2-4, kv = 5.34 for a web without
transverse stiffeners) for every other web, welded (built-up) shapes and shapes not said
to be rolled included (on the safe side).
"""

from __future__ import annotations

import numpy as np

#: G1(a): resistance factor for shear by G2.1(b).
PHI_V = 0.90
#: G2.1(a): resistance factor for the webs of rolled I-shapes with h/tw <= 2.24 sqrt(E/Fy).
PHI_V_ROLLED = 1.00
#: G2.1(a): the web slenderness limit's coefficient, h/tw <= 2.24 sqrt(E/Fy).
ROLLED_LIMIT = 2.24
#: G2.1(b)(2)(i): web plate shear buckling coefficient without transverse stiffeners.
KV = 5.34
#: J10.2: resistance factor for web local yielding.
PHI_WLY = 1.00
#: J10.3: resistance factor for web crippling.
PHI_WC = 0.75


def _a(x: np.ndarray | float) -> np.ndarray:
    return np.asarray(x, dtype=float)


def cv1(h: np.ndarray | float, tw: np.ndarray | float, E: float, Fy: float,
        kv: float = KV) -> np.ndarray:
    """Web shear strength coefficient, G2.1(b)(1): 1.0 where h/tw <= 1.10 sqrt(kv E/Fy)
    (G2-3), else 1.10 sqrt(kv E/Fy) / (h/tw) (G2-4)."""
    limit = 1.10 * np.sqrt(kv * E / Fy)
    ratio = _a(h) / _a(tw)
    return np.where(ratio <= limit, 1.0, limit / ratio)


def g2_1a(h: np.ndarray | float, tw: np.ndarray | float, E: float, Fy: float,
          rolled: np.ndarray | bool) -> np.ndarray:
    """Which webs G2.1(a) covers: rolled I-shapes with h/tw <= 2.24 sqrt(E/Fy)."""
    stocky = _a(h) / _a(tw) <= ROLLED_LIMIT * np.sqrt(E / Fy)
    return np.asarray(_a(rolled).astype(bool) & stocky)


def phi_vn(d: np.ndarray | float, tw: np.ndarray | float, h: np.ndarray | float, E: float,
           Fy: float, rolled: np.ndarray | bool = False) -> np.ndarray:
    """Design shear strength by G2-1, phi_v Vn = phi_v 0.6 Fy Aw Cv1 with Aw = d tw:
    1.00 * 0.6 Fy Aw (G2.1(a), Cv1 = 1.0) where :func:`g2_1a` holds, else 0.90 * 0.6 Fy
    Aw Cv1 with Cv1 by G2.1(b)(1)."""
    base = 0.6 * Fy * _a(d) * _a(tw)
    return np.where(g2_1a(h, tw, E, Fy, rolled), PHI_V_ROLLED * base,
                    PHI_V * base * cv1(h, tw, E, Fy))


def web_local_yielding(tw: np.ndarray | float, k: np.ndarray | float,
                       lb: np.ndarray | float, d: np.ndarray | float,
                       from_end: np.ndarray | float, Fy: float) -> np.ndarray:
    """Nominal strength Rn for web local yielding, J10.2:

    - force farther than d from the member end: Rn = Fy tw (5k + lb) (J10-2);
    - otherwise: Rn = Fy tw (2.5k + lb) (J10-3).

    ``lb`` is the length of bearing, ``from_end`` the distance of the force from the
    nearer end of the member."""
    far = _a(from_end) > _a(d)
    return Fy * _a(tw) * (np.where(far, 5.0, 2.5) * _a(k) + _a(lb))


def web_crippling(tw: np.ndarray | float, tf: np.ndarray | float, lb: np.ndarray | float,
                  d: np.ndarray | float, from_end: np.ndarray | float, E: float, Fy: float,
                  qf: float = 1.0) -> np.ndarray:
    """Nominal strength Rn for web crippling under a compressive force, J10.3
    (Qf = 1.0 for wide-flange shapes):

    - force at d/2 or more from the member end:
      Rn = 0.80 tw^2 [1 + 3 (lb/d)(tw/tf)^1.5] sqrt(E Fy tf / tw) Qf (J10-4);
    - nearer, lb/d <= 0.2: Rn = 0.40 tw^2 [1 + 3 (lb/d)(tw/tf)^1.5] sqrt(E Fy tf/tw) Qf
      (J10-5a);
    - nearer, lb/d > 0.2: Rn = 0.40 tw^2 [1 + (4 lb/d - 0.2)(tw/tf)^1.5] sqrt(E Fy tf/tw) Qf
      (J10-5b).
    """
    tw, tf, lb, d = _a(tw), _a(tf), _a(lb), _a(d)
    ratio = (tw / tf) ** 1.5
    root = np.sqrt(E * Fy * tf / tw) * qf
    far = _a(from_end) >= d / 2.0
    short = lb / d <= 0.2
    near = np.where(short, 1.0 + 3.0 * (lb / d) * ratio, 1.0 + (4.0 * lb / d - 0.2) * ratio)
    return np.where(far, 0.80 * tw**2 * (1.0 + 3.0 * (lb / d) * ratio),
                    0.40 * tw**2 * near) * root
