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


def run_ends(demand: np.ndarray, seed: int) -> tuple[int, int] | None:
    """First and last sample of the run of ``demand > 0`` (demand less capacity, sampled
    in order) around sample ``seed``; None where the sample at ``seed`` is not above."""
    above = demand > 0.0
    if not above[seed]:
        return None
    i0 = seed
    while i0 > 0 and above[i0 - 1]:
        i0 -= 1
    i1 = seed
    while i1 < demand.size - 1 and above[i1 + 1]:
        i1 += 1
    return i0, i1


def cross_together(inside: np.ndarray, outside: np.ndarray, f_in: np.ndarray,
                   f_out: np.ndarray, refine: Callable[[np.ndarray, np.ndarray], np.ndarray],
                   xtol: np.ndarray) -> np.ndarray:
    """The roots of many brackets at once, each by regula falsi with the Illinois
    modification (the end kept twice in a row has its value halved): bracket ``k`` holds
    a root of a function g_k between ``inside[k]`` (g_k = ``f_in[k]`` > 0) and
    ``outside[k]`` (g_k = ``f_out[k]`` <= 0), and is narrowed until it is at most
    ``xtol[k]`` wide.  ``refine(k, c)`` gives g at abscissae ``c`` of brackets ``k``
    (index arrays): every step of every open bracket in one call, so that a search
    over many cut-off points costs as many calls as its longest bracket takes steps
    (a few), not their sum.  Each bracket takes the same steps, in the same floating
    point operations, as the bracket alone would (:func:`run_around` with one)."""
    a = np.asarray(inside, dtype=float).copy()
    b = np.asarray(outside, dtype=float).copy()
    fa = np.asarray(f_in, dtype=float).copy()
    fb = np.asarray(f_out, dtype=float).copy()
    side = np.zeros(a.size, dtype=np.int8)
    root = np.full(a.size, np.nan)
    open_ = np.ones(a.size, dtype=bool)
    for _ in range(100):
        narrow = open_ & (np.abs(b - a) <= xtol)
        root[narrow] = np.where(np.abs(fa[narrow]) <= np.abs(fb[narrow]), a[narrow],
                                b[narrow])
        open_ &= ~narrow
        k = np.flatnonzero(open_)
        if k.size == 0:
            break
        ak, bk, fak, fbk = a[k], b[k], fa[k], fb[k]
        with np.errstate(divide="ignore", invalid="ignore"):
            c = np.where(fbk != fak, bk - fbk * (bk - ak) / (fbk - fak), 0.5 * (ak + bk))
        outside_ab = ~((np.minimum(ak, bk) < c) & (c < np.maximum(ak, bk)))
        c[outside_ab] = 0.5 * (ak + bk)[outside_ab]
        fc = np.asarray(refine(k, c), dtype=float)
        hit = fc == 0.0
        root[k[hit]] = c[hit]
        open_[k[hit]] = False
        same = ~hit & ((fc > 0.0) == (fak > 0.0))
        other = ~hit & ~same
        ks, ko = k[same], k[other]
        a[ks], fa[ks] = c[same], fc[same]
        fb[ks[side[ks] == -1]] *= 0.5
        side[ks] = -1
        b[ko], fb[ko] = c[other], fc[other]
        fa[ko[side[ko] == 1]] *= 0.5
        side[ko] = 1
    last = np.flatnonzero(open_)  # still open after 100 steps: the better end
    root[last] = np.where(np.abs(fa[last]) <= np.abs(fb[last]), a[last], b[last])
    return root


def run_around(x: np.ndarray, demand: np.ndarray, capacity: float, seed: int,
               refine: Callable[[np.ndarray], np.ndarray] | None = None,
               tol: float = 1e-9) -> tuple[float, float]:
    """The stretch around sample ``seed`` where ``demand`` (sampled at ``x``, sorted)
    stays above ``capacity``: its two ends, each bracketed by neighbouring samples and,
    with ``refine`` (demand at any points), narrowed to ``tol`` of the span by
    :func:`cross_together`, else interpolated linearly.  NaN, NaN where the demand at
    ``seed`` is not above."""
    ends = run_ends(demand - capacity, seed)
    if ends is None:
        return np.nan, np.nan
    i0, i1 = ends
    span = float(x[-1] - x[0]) or 1.0
    found = [float(x[i0]), float(x[i1])]
    # (which end, the sample inside the run, the sample beyond it)
    brackets = [(slot, i, j) for slot, i, j, edge in ((0, i0, i0 - 1, 0),
                                                       (1, i1, i1 + 1, x.size - 1))
                if i != edge]
    if brackets:
        ins = np.array([i for _, i, _ in brackets])
        out = np.array([j for _, _, j in brackets])
        if refine is None:
            roots = x[ins] + (capacity - demand[ins]) / (demand[out] - demand[ins]) * (
                x[out] - x[ins])
        else:
            def g(_k: np.ndarray, c: np.ndarray) -> np.ndarray:
                return np.asarray(refine(c), dtype=float) - capacity

            roots = cross_together(x[ins], x[out], demand[ins] - capacity,
                                   demand[out] - capacity, g, np.full(ins.size, tol * span))
        for (slot, _, _), r in zip(brackets, roots, strict=True):
            found[slot] = float(r)
    return found[0], found[1]
