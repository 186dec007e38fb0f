"""Reinforced concrete rectangular beam sections by EN 1992-1-1: bending, minimum steel
and shear with vertical links.

Pure functions over numpy arrays in N, mm and MPa (moments N*mm).  Bending follows the
rectangular-block design method for singly reinforced sections (UK concrete-centre
method): K = M / (b d^2 fck), z = (d/2)(1 + sqrt(1 - 3.53 K)) <= 0.95 d,
As = M / (0.87 fyk z).  Those constants come from the simplified block of 3.1.7(3)
(depth 0.8x, stress alpha_cc fck / gamma_c with alpha_cc = 0.85, gamma_c = 1.5) and
gamma_s = 1.15; the same fcd is used for the shear strut.

K' (the largest K without compression steel) defaults to 0.167: the neutral axis limit
x/d <= 0.448 that 5.5(4) gives with no redistribution (delta = 1) and the recommended
k1 = 0.44, k2 = 1.25 (0.6 + 0.0014/eps_cu2).  The UK National Annex values
(k1 = 0.4, k2 = 1.0) give about 0.207; pass ``k_lim`` to use them.
"""

from __future__ import annotations

import numpy as np

#: Design compressive strength fcd = ALPHA_CC * fck / GAMMA_C (3.1.6(1)).
ALPHA_CC = 0.85
GAMMA_C = 1.5
GAMMA_S = 1.15
#: Ultimate concrete strain for fck <= 50 MPa (Table 3.1, eps_cu2 = eps_cu3).
EPS_CU = 0.0035
#: K' with delta = 1 and the recommended k1, k2 of 5.5(4) (x/d <= 0.448).
K_LIM = 0.167
#: Largest tension steel outside lap locations, as a share of Ac (9.2.1.1(3)).
AS_MAX_RATIO = 0.04


#: Strength classes of EN 1992-1-1 Table 3.1: C12/15 to C90/105 (fck in MPa).
FCK_RANGE = (12.0, 90.0)
#: The simplified block of 3.1.7(3) with lambda = 0.8, eta = 1 and eps_cu = 0.0035
#: (Table 3.1) used here holds up to C50/60; above it lambda, eta and eps_cu3 fall.
FCK_BLOCK_MAX = 50.0


def outside_scope(fck: float) -> str:
    """The status text where ``fck`` (MPa) is outside what this sizing covers, else "":
    outside the classes of Table 3.1, or above C50/60 where the stress block, K' and
    the strain limits used here no longer hold (3.1.7(3), Table 3.1)."""
    lo, hi = FCK_RANGE
    if not lo <= fck <= hi:
        return (f"not checked: fck = {fck:g} MPa is outside the strength classes of EN "
                f"1992-1-1 Table 3.1 (C12/15 to C90/105)")
    if fck > FCK_BLOCK_MAX:
        return (f"not checked: fck = {fck:g} MPa is above C50/60; the stress block "
                f"(lambda = 0.8, eta = 1, EN 1992-1-1 3.1.7(3)), eps_cu = 0.0035 (Table "
                f"3.1) and K' used here hold up to fck = 50 MPa only")
    return ""


def fctm(fck: np.ndarray | float) -> np.ndarray:
    """Mean axial tensile strength (Table 3.1): 0.30 fck^(2/3) up to C50/60, else
    2.12 ln(1 + fcm/10) with fcm = fck + 8 (MPa)."""
    fck = np.asarray(fck, dtype=float)
    return np.where(fck <= 50.0, 0.30 * fck ** (2.0 / 3.0),
                    2.12 * np.log(1.0 + (fck + 8.0) / 10.0))


def flexure(m: np.ndarray | float, b: np.ndarray | float, d: np.ndarray | float,
            fck: np.ndarray | float, fyk: np.ndarray | float,
            k_lim: float = K_LIM) -> dict[str, np.ndarray]:
    """Tension steel for design moment ``m`` (magnitude, N*mm) on a rectangle b x d (mm).

    Returns ``K``, ``z`` (mm), ``x`` = (d - z)/0.4 (mm), ``as_required`` (mm^2; NaN where
    K > K'), ``too_small`` (K > K': compression steel would be needed), ``eps_s`` (steel
    strain 0.0035 (d - x)/x; NaN without moment) and ``m_lim`` = K' b d^2 fck (N*mm).
    """
    m = np.abs(np.asarray(m, dtype=float))
    m, b, d, fck, fyk = np.broadcast_arrays(m, *(np.asarray(v, dtype=float)
                                                 for v in (b, d, fck, fyk)))
    k_ratio = m / (b * d * d * fck)
    too_small = k_ratio > k_lim
    root = np.sqrt(np.maximum(1.0 - 3.53 * np.minimum(k_ratio, k_lim), 0.0))
    z = np.minimum(0.5 * d * (1.0 + root), 0.95 * d)
    As = m / (0.87 * fyk * z)
    x = (d - z) / 0.4
    with np.errstate(divide="ignore", invalid="ignore"):
        eps_s = np.where(m > 0, EPS_CU * (d - x) / x, np.nan)
    nan = np.full_like(m, np.nan)
    return {"K": k_ratio, "z": np.where(too_small, nan, z), "x": np.where(too_small, nan, x),
            "as_required": np.where(too_small, nan, As), "too_small": too_small,
            "eps_s": np.where(too_small, nan, eps_s), "m_lim": k_lim * b * d * d * fck}


def resistance(As: np.ndarray | float, b: np.ndarray | float, d: np.ndarray | float,
               fck: np.ndarray | float, fyk: np.ndarray | float) -> dict[str, np.ndarray]:
    """Moment resistance of a rectangle with tension steel As, steel yielding: the block
    0.8x at 0.85 fck / 1.5 balances 0.87 fyk As, z = d - 0.4x <= 0.95 d.  Returns ``x``
    and ``z`` (mm), ``m_rd`` (N*mm) and ``eps_s`` = 0.0035 (d - x)/x (NaN without steel)."""
    As, b, d, fck, fyk = np.broadcast_arrays(*(np.asarray(v, dtype=float)
                                               for v in (As, b, d, fck, fyk)))
    x = 0.87 * fyk * As / (0.8 * ALPHA_CC / GAMMA_C * fck * b)
    z = np.minimum(d - 0.4 * x, 0.95 * d)
    with np.errstate(divide="ignore", invalid="ignore"):
        eps_s = np.where(As > 0, EPS_CU * (d - x) / x, np.nan)
    return {"x": x, "z": z, "m_rd": 0.87 * fyk * As * z, "eps_s": eps_s}


def as_min(bt: np.ndarray | float, d: np.ndarray | float, fck: np.ndarray | float,
           fyk: np.ndarray | float) -> np.ndarray:
    """Minimum tension steel (9.2.1.1(1), eq. 9.1N): 0.26 (fctm / fyk) bt d, not less than
    0.0013 bt d (mm^2).  For a T-beam with its flange in compression bt is the web."""
    ratio = np.maximum(0.26 * fctm(fck) / np.asarray(fyk, float), 0.0013)
    return ratio * np.asarray(bt, float) * np.asarray(d, float)


def as_max(b: np.ndarray | float, h: np.ndarray | float) -> np.ndarray:
    """Largest tension steel outside laps, 0.04 Ac (9.2.1.1(3)), mm^2."""
    return AS_MAX_RATIO * np.asarray(b, float) * np.asarray(h, float)


def shear(ved: np.ndarray | float, b: np.ndarray | float, d: np.ndarray | float,
          fck: np.ndarray | float, fywk: np.ndarray | float,
          rho_l: np.ndarray | float) -> dict[str, np.ndarray]:
    """Shear of a beam with vertical links and no axial force (N, mm, MPa).

    - VRd,c = 0.12 k (100 rho_l fck)^(1/3) bw d >= 0.035 k^1.5 fck^0.5 bw d, with
      k = 1 + sqrt(200/d) <= 2 and rho_l <= 0.02 (6.2.2(1), C_Rd,c = 0.18/gamma_c).
    - Where VEd > VRd,c: Asw/s = VEd / (z fywd cot(theta)) (6.2.3(3), eq. 6.8) with
      z = 0.9 d, fywd = fywk / 1.15, and the flattest strut 1 <= cot(theta) <= 2.5 for
      which VRd,max = bw z nu1 fcd / (cot + tan) >= VEd (eq. 6.9, alpha_cw = 1,
      nu1 = 0.6 (1 - fck/250), eq. 6.6N).  No strut angle works where
      VEd > bw z nu1 fcd / 2: the section is too small.
    - Links are provided in every beam (6.2.1(4)): Asw/s >= 0.08 sqrt(fck) / fywk * bw
      (9.2.2(5), eq. 9.5N); spacing s <= 0.75 d (9.2.2(6), eq. 9.6N).

    Returns ``vrdc`` (N), ``cot_theta``, ``av_over_s_min``, ``av_over_s_required``
    (mm^2/mm), ``needs_calculated`` (VEd > VRd,c), ``too_small``, ``vrd_max`` at
    cot(theta) = 1 (N) and ``s_max`` (mm).
    """
    ved = np.abs(np.asarray(ved, dtype=float))
    ved, b, d, fck, fywk, rho_l = np.broadcast_arrays(
        ved, *(np.asarray(v, dtype=float) for v in (b, d, fck, fywk, rho_l)))
    k = np.minimum(1.0 + np.sqrt(200.0 / d), 2.0)
    rho = np.clip(rho_l, 0.0, 0.02)
    v_rdc = np.maximum(0.18 / GAMMA_C * k * np.cbrt(100.0 * rho * fck),
                       0.035 * k ** 1.5 * np.sqrt(fck)) * b * d
    z = 0.9 * d
    fcd = ALPHA_CC * fck / GAMMA_C
    nu1 = 0.6 * (1.0 - fck / 250.0)
    strut = b * z * nu1 * fcd  # VRd,max * (cot + tan)
    with np.errstate(divide="ignore", invalid="ignore"):
        R = np.where(ved > 0, strut / ved, np.inf)
        cot = np.clip(0.5 * (R + np.sqrt(np.maximum(R * R - 4.0, 0.0))), 1.0, 2.5)
    too_small = R < 2.0
    calculated = ved > v_rdc
    fywd = fywk / GAMMA_S
    av_s_min = 0.08 * np.sqrt(fck) / fywk * b
    av_s = np.where(calculated, np.maximum(ved / (z * fywd * cot), av_s_min), av_s_min)
    return {"vrdc": v_rdc, "cot_theta": np.where(calculated, cot, np.nan),
            "av_over_s_min": av_s_min, "av_over_s_required": np.where(too_small, np.nan, av_s),
            "needs_calculated": calculated, "too_small": too_small,
            "vrd_max": strut / 2.0, "s_max": 0.75 * d}
