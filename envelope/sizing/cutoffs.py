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


def narrow(inside: np.ndarray, outside: np.ndarray, g_in: np.ndarray, g_out: np.ndarray,
           g: Callable[[np.ndarray], np.ndarray], xtol: np.ndarray) -> np.ndarray:
    """Where each of many functions crosses zero between two samples: bracket ``k`` has
    ``g_k > 0`` at ``inside[k]`` (value ``g_in[k]``) and ``g_k <= 0`` at ``outside[k]``
    (``g_out[k]``), either side of it; ``g(x)`` gives every g_k at ``x[k]``.  All
    brackets step together, to ``xtol`` (:func:`envelope.search.anderson_bjorck_root`,
    each bracket turned so that its lower end is the positive one), so a search over
    many cut-off points costs as many calls of ``g`` as its slowest bracket takes steps,
    not their sum.  Where ``g_out`` is 0 the root is ``outside`` itself (not searched:
    turned, such a bracket would have a zero at its positive end).  A bracket whose
    search stalls (a jump inside it) is bisected."""
    from envelope.search import anderson_bjorck_root

    inside, outside = np.asarray(inside, dtype=float), np.asarray(outside, dtype=float)
    g_out = np.asarray(g_out, dtype=float)
    sign = np.where(inside < outside, 1.0, -1.0)  # -1: the positive end is the upper
    lo, hi = np.minimum(inside, outside), np.maximum(inside, outside)
    f_in, f_out = sign * np.asarray(g_in, dtype=float), sign * g_out
    f_lo, f_hi = np.where(sign > 0, f_in, f_out), np.where(sign > 0, f_out, f_in)

    def f(x: np.ndarray) -> np.ndarray:
        return sign * np.asarray(g(x), dtype=float)

    # (the search's first point is its first step from the inside sample)
    exact = g_out == 0.0
    xtol = np.asarray(xtol, dtype=float)
    root = anderson_bjorck_root(f, lo, hi, f_lo, f_hi, np.where(exact, outside, inside),
                                ~exact, xtol)
    # A jump inside a bracket (a couple's step in the moment) can stall regula falsi far
    # from it, on the side whose values are small: its steps shrink, the bracket does
    # not.  Where f does not change sign across [root - xtol, root + xtol] the bracket
    # is bisected instead (to the last bit, :func:`envelope.search.bisect`).
    left, right = f(np.maximum(root - xtol, lo)), f(np.minimum(root + xtol, hi))
    stalled = ~exact & ~((left >= 0.0) & (right <= 0.0))
    if stalled.any():
        from envelope.search import bisect

        a, b = bisect(lambda x: f(x) > 0.0, np.where(stalled, lo, root),
                      np.where(stalled, hi, root))
        root = np.where(stalled, 0.5 * (a + b), root)
    return root


def run_brackets(x: np.ndarray, excess: np.ndarray, seed: int
                 ) -> tuple[list[float], list[tuple[int, int, int]]] | None:
    """The run of ``excess > 0`` (demand less capacity, sampled at ``x``) around sample
    ``seed``: its ends as far as the samples tell ([start, end], the first and last
    sample inside) and the brackets left to narrow, (0 for the start or 1 for the end,
    the sample inside the run, the sample just beyond it), none where the run reaches
    the first or last sample; None where the sample at ``seed`` is not above."""
    ends = run_ends(excess, seed)
    if ends is None:
        return None
    i0, i1 = ends
    brackets = [(slot, i, j) for slot, i, j, edge in ((0, i0, i0 - 1, 0),
                                                       (1, i1, i1 + 1, x.size - 1))
                if i != edge]
    return [float(x[i0]), float(x[i1])], brackets


def run_around(x: np.ndarray, demand: np.ndarray, capacity: float, seed: int,
               refine: Callable[[np.ndarray], np.ndarray] | None = None,
               tol: float = 1e-9) -> tuple[float, float]:
    """The stretch around sample ``seed`` where ``demand`` (sampled at ``x``, sorted)
    stays above ``capacity``: its two ends, each bracketed by neighbouring samples and,
    with ``refine`` (demand at any points), narrowed to ``tol`` of the span by
    :func:`narrow`, else interpolated linearly.  NaN, NaN where the demand at
    ``seed`` is not above."""
    run = run_brackets(x, demand - capacity, seed)
    if run is None:
        return np.nan, np.nan
    found, brackets = run
    span = float(x[-1] - x[0]) or 1.0
    if brackets:
        ins = np.array([i for _, i, _ in brackets])
        out = np.array([j for _, _, j in brackets])
        if refine is None:
            roots = x[ins] + (capacity - demand[ins]) / (demand[out] - demand[ins]) * (
                x[out] - x[ins])
        else:
            def g(c: np.ndarray) -> np.ndarray:
                return np.asarray(refine(c), dtype=float) - capacity

            roots = narrow(x[ins], x[out], demand[ins] - capacity, demand[out] - capacity,
                           g, np.full(ins.size, tol * span))
        for (slot, _, _), r in zip(brackets, roots, strict=True):
            found[slot] = float(r)
    return found[0], found[1]
