"""Flexural strength of doubly symmetric I-shapes bent about the major axis, by AISC 360-22
Chapter F (LRFD): yielding and lateral-torsional buckling (F2), flange local buckling (F3),
and the moment-gradient factor Cb (F1).

Pure functions over numpy arrays; they broadcast, so one call checks every section of a
table against every unbraced segment.  Units are the section units of the case: SI N, mm,
MPa (moments N*mm, lengths mm, Sx and Zx mm^3, J mm^4, Cw mm^6); US kip, in, ksi (kip*in,
in, in^3, in^4, in^6).  ``E`` is passed in (see :data:`E_STEEL`).

Scope: doubly symmetric I-shapes (c = 1, F2-8a) with compact webs (Table B4.1b case 15);
flanges compact, noncompact or slender by Table B4.1b case 10 for a rolled shape
(lambda_r = 1.0 sqrt(E/Fy)) and case 11 for a welded (built-up) one (lambda_r = 0.95
sqrt(kc E / FL)), per section by the ``rolled`` flag (a section not said to be rolled is
taken as welded: case 11's limit is below case 10's for every kc, at most 0.76, so on the
safe side).  A noncompact or slender web (F4, F5) is outside this module:
:func:`web_is_compact` says which sections need them, and the caller reports them as not
checked.
"""

from __future__ import annotations

import numpy as np

#: Modulus of elasticity of steel, AISC 360-22 Symbols: 29,000 ksi (200 000 MPa).
E_STEEL = {"SI": 200_000.0, "US": 29_000.0}
#: F1(1): resistance factor for flexure.
PHI_B = 0.90


def _a(x: np.ndarray | float) -> np.ndarray:
    return np.asarray(x, dtype=float)


def cb(m_max: np.ndarray | float, m_a: np.ndarray | float, m_b: np.ndarray | float,
       m_c: np.ndarray | float) -> np.ndarray:
    """Lateral-torsional buckling modification factor, AISC 360-22 Eq. F1-1:

    Cb = 12.5 Mmax / (2.5 Mmax + 3 MA + 4 MB + 3 MC)

    with absolute values: Mmax the largest moment in the unbraced segment, MA, MB, MC at
    its quarter point, centre line and three-quarter point.  A segment with no moment
    takes Cb = 1.0 (nothing to buckle; the value is never used)."""
    mx, a, b, c = np.abs(_a(m_max)), np.abs(_a(m_a)), np.abs(_a(m_b)), np.abs(_a(m_c))
    den = 2.5 * mx + 3.0 * a + 4.0 * b + 3.0 * c
    with np.errstate(invalid="ignore", divide="ignore"):
        out = 12.5 * mx / den
    return np.where(den > 0.0, out, 1.0)


def lp(ry: np.ndarray | float, E: float, Fy: float) -> np.ndarray:
    """Limiting laterally unbraced length for yielding, Eq. F2-5: 1.76 ry sqrt(E/Fy)."""
    return 1.76 * _a(ry) * np.sqrt(E / Fy)


def rts(Iy: np.ndarray | float, Cw: np.ndarray | float, Sx: np.ndarray | float
        ) -> np.ndarray:
    """Effective radius of gyration, Eq. F2-7: rts^2 = sqrt(Iy Cw) / Sx."""
    return np.sqrt(np.sqrt(_a(Iy) * _a(Cw)) / _a(Sx))


def lr(rts_: np.ndarray | float, J: np.ndarray | float, Sx: np.ndarray | float,
       ho: np.ndarray | float, E: float, Fy: float, c: float = 1.0) -> np.ndarray:
    """Limiting unbraced length for inelastic lateral-torsional buckling, Eq. F2-6:

    Lr = 1.95 rts E/(0.7 Fy) sqrt( Jc/(Sx ho) + sqrt( (Jc/(Sx ho))^2 + 6.76 (0.7 Fy/E)^2 ) )
    """
    jc = _a(J) * c / (_a(Sx) * _a(ho))
    return 1.95 * _a(rts_) * E / (0.7 * Fy) * np.sqrt(
        jc + np.sqrt(jc**2 + 6.76 * (0.7 * Fy / E) ** 2))


def fcr(lb: np.ndarray | float, cb_: np.ndarray | float, rts_: np.ndarray | float,
        J: np.ndarray | float, Sx: np.ndarray | float, ho: np.ndarray | float, E: float,
        c: float = 1.0) -> np.ndarray:
    """Elastic lateral-torsional buckling stress, Eq. F2-4:

    Fcr = Cb pi^2 E / (Lb/rts)^2 sqrt(1 + 0.078 Jc/(Sx ho) (Lb/rts)^2)
    """
    s = _a(lb) / _a(rts_)
    jc = _a(J) * c / (_a(Sx) * _a(ho))
    with np.errstate(divide="ignore"):
        return _a(cb_) * np.pi**2 * E / s**2 * np.sqrt(1.0 + 0.078 * jc * s**2)


def mn_ltb(lb: np.ndarray | float, cb_: np.ndarray | float, Zx: np.ndarray | float,
           Sx: np.ndarray | float, ry: np.ndarray | float, rts_: np.ndarray | float,
           J: np.ndarray | float, ho: np.ndarray | float, E: float, Fy: float
           ) -> np.ndarray:
    """Nominal flexural strength for yielding and lateral-torsional buckling, F2.1-F2.2:

    - Lb <= Lp: Mn = Mp = Fy Zx (F2-1);
    - Lp < Lb <= Lr: Mn = Cb [Mp - (Mp - 0.7 Fy Sx)(Lb - Lp)/(Lr - Lp)] <= Mp (F2-2);
    - Lb > Lr: Mn = Fcr Sx <= Mp (F2-3).
    """
    mp = Fy * _a(Zx)
    lp_ = lp(ry, E, Fy)
    lr_ = lr(rts_, J, Sx, ho, E, Fy)
    lb = _a(lb)
    inelastic = _a(cb_) * (mp - (mp - 0.7 * Fy * _a(Sx)) * (lb - lp_) / (lr_ - lp_))
    elastic = fcr(np.maximum(lb, np.finfo(float).tiny), cb_, rts_, J, Sx, ho, E) * _a(Sx)
    mn = np.where(lb <= lp_, mp, np.where(lb <= lr_, inelastic, elastic))
    return np.minimum(mn, mp)


def flange_limits(E: float, Fy: float, kc_: np.ndarray | float,
                  rolled: np.ndarray | bool = False) -> tuple[float, np.ndarray]:
    """Table B4.1b limits of the flanges of I-shapes in flexure: lambda_p = 0.38 sqrt(E/Fy)
    (compact, cases 10 and 11 alike) and lambda_r (noncompact): case 10 (rolled) 1.0
    sqrt(E/Fy); case 11 (built-up) 0.95 sqrt(kc E / FL) with FL = 0.7 Fy, the value for a
    doubly symmetric section (Sxt/Sxc = 1 >= 0.7, Eq. F4-6a)."""
    lam_r = np.where(_a(rolled).astype(bool), np.sqrt(E / Fy),
                     0.95 * np.sqrt(_a(kc_) * E / (0.7 * Fy)))
    return 0.38 * float(np.sqrt(E / Fy)), lam_r


def web_is_compact(h: np.ndarray | float, tw: np.ndarray | float, E: float, Fy: float
                   ) -> np.ndarray:
    """Table B4.1b case 15 (webs of doubly symmetric I-shapes in flexure): compact when
    h/tw <= 3.76 sqrt(E/Fy)."""
    return _a(h) / _a(tw) <= 3.76 * np.sqrt(E / Fy)


def kc(h: np.ndarray | float, tw: np.ndarray | float) -> np.ndarray:
    """Table B4.1b note [a]: kc = 4 / sqrt(h/tw), not less than 0.35 nor more than 0.76."""
    return np.clip(4.0 / np.sqrt(_a(h) / _a(tw)), 0.35, 0.76)


def mn_flb(bf: np.ndarray | float, tf: np.ndarray | float, h: np.ndarray | float,
           tw: np.ndarray | float, Zx: np.ndarray | float, Sx: np.ndarray | float,
           E: float, Fy: float, rolled: np.ndarray | bool = False) -> np.ndarray:
    """Nominal flexural strength for compression-flange local buckling, F3.2 (Mp where the
    flange is compact, as F2 then governs alone), with lambda_pf and lambda_rf of Table
    B4.1b case 10 where ``rolled``, else case 11 (:func:`flange_limits`):

    - lambda = bf/(2 tf) <= lambda_pf: Mn = Mp;
    - noncompact: Mn = Mp - (Mp - 0.7 Fy Sx)(lambda - lambda_pf)/(lambda_rf - lambda_pf)
      (F3-1);
    - slender: Mn = 0.9 E kc Sx / lambda^2 (F3-2).
    """
    mp = Fy * _a(Zx)
    lam = _a(bf) / (2.0 * _a(tf))
    k_c = kc(h, tw)
    lam_p, lam_r = flange_limits(E, Fy, k_c, rolled)
    noncompact = mp - (mp - 0.7 * Fy * _a(Sx)) * (lam - lam_p) / (lam_r - lam_p)
    slender = 0.9 * E * k_c * _a(Sx) / lam**2
    return np.where(lam <= lam_p, mp, np.where(lam <= lam_r, noncompact, slender))


def flange_class(bf: np.ndarray | float, tf: np.ndarray | float, h: np.ndarray | float,
                 tw: np.ndarray | float, E: float, Fy: float,
                 rolled: np.ndarray | bool = False) -> np.ndarray:
    """'compact', 'noncompact' or 'slender' flange (Table B4.1b case 10 where ``rolled``,
    else case 11), per section."""
    lam = _a(bf) / (2.0 * _a(tf))
    lam_p, lam_r = flange_limits(E, Fy, kc(h, tw), rolled)
    return np.where(lam <= lam_p, "compact", np.where(lam <= lam_r, "noncompact", "slender"))
