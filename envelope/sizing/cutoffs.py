"""Where bars may stop: development and anchorage lengths and the cut-off of a bar group
from the moment envelope; arrays in, arrays out.

- ACI 318-19 25.4.2.3 (Table 25.4.2.3, the simplified development length of deformed
  bars in tension): ld = fy psi_t psi_e psi_g / (25 lambda sqrt(f'c)) db for No. 6 and
  smaller, / (20 lambda sqrt(f'c)) for No. 7 and larger (psi); SI 2.1 and 1.7
  (MPa) for up to No. 19 and No. 22 and larger (diameters up to and above 20 mm
  here); 1.5 times that where the clear spacing or the clear cover is less than db
  ("other cases"); psi_t = 1.3 for top bars (more than 12 in of fresh concrete below),
  psi_e = 1.0 (uncoated), psi_g = 1.0 up to Grade 60 / 420, 1.15 to Grade 80 / 550,
  1.3 above (Table 25.4.2.5); sqrt(f'c) <= 100 psi (25.4.1.4); ld >= 12 in / 300 mm
  (25.4.2.1).
- EN 1992-1-1 8.4: lb,rqd = (phi / 4) (sigma_sd / fbd) with sigma_sd = fyd (8.4.3),
  fbd = 2.25 eta1 eta2 fctd (8.4.2), fctd = alpha_ct fctk,0.05 / gamma_c with
  alpha_ct = 1 and fctk,0.05 = 0.7 fctm (Table 3.1), eta1 = 1.0 in good bond and 0.7
  otherwise (top bars of a beam deeper than 250 mm), eta2 = 1 up to 32 mm,
  (132 - phi) / 100 above; lbd = lb,rqd (alpha1..alpha5 = 1, on the safe side),
  at least lb,min = max(0.3 lb,rqd, 10 phi, 100 mm) (8.4.4).
- The cut-off of a group: the envelope of the moment of the sign the group resists
  exceeds the strength of the bars that continue between two abscissae (the
  theoretical cut-off points); the group extends beyond each by the code's extension
  (ACI 318-19 9.7.3.3: the larger of d and 12 db; EN 1992-1-1 9.2.1.3: the shift
  a_l plus lbd), and at least the development length beyond the section of largest
  stress (ACI 318-19 9.7.3.2).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

#: Table 25.4.2.3 denominators (small bars, large bars) per unit system, and the bar
#: diameter (in / mm) up to which a bar is "No. 6 and smaller" / "No. 19 and smaller".
ACI_LD = {"US": (25.0, 20.0, 0.8), "SI": (2.1, 1.7, 20.0)}
#: Grade factor psi_g (Table 25.4.2.5): fy limits in psi / MPa and the factors.
PSI_G = {"US": ((60_000.0, 1.0), (80_000.0, 1.15), (np.inf, 1.3)),
         "SI": ((420.0, 1.0), (550.0, 1.15), (np.inf, 1.3))}
ROOT_FC_CAP = {"US": 100.0, "SI": 8.3}
LD_MIN = {"US": 12.0, "SI": 300.0}
PSI_TOP = 1.3


def development_length_aci(db: np.ndarray | float, fy: float, fc: float, system: str,
                           top: np.ndarray | bool, spacing_ok: np.ndarray | bool = True,
                           lam: float = 1.0) -> np.ndarray:
    """Ld of ACI 318-19 Table 25.4.2.3 (in or mm; fy, f'c in psi or MPa)."""
    db = np.asarray(db, dtype=float)
    small, large, limit = ACI_LD[system]
    psi_g = next(f for cap, f in PSI_G[system] if fy <= cap)
    psi_t = np.where(np.asarray(top), PSI_TOP, 1.0)
    root = min(np.sqrt(fc), ROOT_FC_CAP[system])
    denom = np.where(db <= limit + 1e-9, small, large)
    ld = fy * psi_t * psi_g / (denom * lam * root) * db
    ld = np.where(np.asarray(spacing_ok), ld, 1.5 * ld)
    return np.maximum(ld, LD_MIN[system])


def anchorage_length_en(db: np.ndarray | float, fyk: float, fck: float,
                        good_bond: np.ndarray | bool) -> np.ndarray:
    """Lbd of EN 1992-1-1 8.4 with the alpha factors 1 (mm; MPa), see the module
    docstring."""
    from envelope.sizing.concrete_en import GAMMA_C, GAMMA_S, fctm

    db = np.asarray(db, dtype=float)
    fctd = 0.7 * float(fctm(fck)) / GAMMA_C
    eta1 = np.where(np.asarray(good_bond), 1.0, 0.7)
    eta2 = np.where(db <= 32.0, 1.0, (132.0 - db) / 100.0)
    fbd = 2.25 * eta1 * eta2 * fctd
    lb_rqd = db / 4.0 * (fyk / GAMMA_S) / fbd
    return np.maximum(lb_rqd, np.maximum(np.maximum(0.3 * lb_rqd, 10.0 * db), 100.0))


def run_around(x: np.ndarray, demand: np.ndarray, capacity: float, seed: int,
               refine: Callable[[np.ndarray], np.ndarray] | None = None,
               tol: float = 1e-9) -> tuple[float, float]:
    """The stretch around sample ``seed`` where ``demand`` (sampled at ``x``, sorted)
    stays above ``capacity``: its two ends, each bracketed by neighbouring samples and,
    with ``refine`` (demand at any points), bisected to ``tol`` of the span, else
    interpolated linearly.  NaN, NaN where the demand at ``seed`` is not above."""
    above = demand > capacity
    if not above[seed]:
        return np.nan, np.nan
    i0 = seed
    while i0 > 0 and above[i0 - 1]:
        i0 -= 1
    i1 = seed
    while i1 < x.size - 1 and above[i1 + 1]:
        i1 += 1
    span = float(x[-1] - x[0]) or 1.0

    def cross(inside: float, outside: float, v_in: float, v_out: float) -> float:
        """Regula falsi (Illinois) on demand - capacity, which changes sign between
        the samples: a few evaluations of a piecewise smooth envelope."""
        if refine is None:
            return inside + (capacity - v_in) / (v_out - v_in) * (outside - inside)
        a, b = inside, outside
        fa, fb = v_in - capacity, v_out - capacity
        side = 0
        for _ in range(100):
            if abs(b - a) <= tol * span:
                break
            c = b - fb * (b - a) / (fb - fa) if fb != fa else 0.5 * (a + b)
            if not min(a, b) < c < max(a, b):
                c = 0.5 * (a + b)
            fc = float(refine(np.array([c]))[0]) - capacity
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

    start = float(x[i0]) if i0 == 0 else cross(x[i0], x[i0 - 1], demand[i0], demand[i0 - 1])
    end = float(x[i1]) if i1 == x.size - 1 else cross(x[i1], x[i1 + 1], demand[i1],
                                                        demand[i1 + 1])
    return start, end
