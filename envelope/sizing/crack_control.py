"""Crack control by bar spacing and diameter, both codes; arrays in, arrays out.

- ACI 318-19 24.3.2: the centre-to-centre spacing of the bars closest to the tension
  face is at most min(15 (40000/fs) - 2.5 cc, 12 (40000/fs)) in (fs psi, cc in) or
  min(380 (280/fs) - 2.5 cc, 300 (280/fs)) mm (fs MPa, cc mm), with fs permitted as
  (2/3) fy (24.3.2.1) and cc the clear cover to the tension face.
- EN 1992-1-1 7.3.3(2): without calculating the crack width, either the bar diameter
  is within Table 7.2N (the maximum diameter phi*_s, modified for bending by eq. 7.6N:
  phi_s = phi*_s (fct,eff / 2.9) kc hcr / (2 (h - d)), kc = 0.4) or the bar spacing is
  within Table 7.3N, for the steel stress under the quasi-permanent load and the
  crack width wk (Table 7.1N: 0.3 mm for exposure XC2-XC4, recommended).  Between
  tabulated stresses the limits are interpolated linearly (common practice); above the
  last tabulated stress neither table is met.
"""

from __future__ import annotations

import numpy as np

#: Table 7.2N: steel stress (MPa) and the maximum bar diameter (mm) per wk (mm)
#: (EN 1992-1-1:2004, from memory).
TABLE_7_2N_STRESS = np.array([160.0, 200.0, 240.0, 280.0, 320.0, 360.0, 400.0, 450.0])
TABLE_7_2N = {0.4: np.array([40.0, 32.0, 20.0, 16.0, 12.0, 10.0, 8.0, 6.0]),
              0.3: np.array([32.0, 25.0, 16.0, 12.0, 10.0, 8.0, 6.0, 5.0]),
              0.2: np.array([25.0, 16.0, 12.0, 8.0, 6.0, 5.0, 4.0, np.nan])}
#: Table 7.3N: steel stress (MPa) and the maximum bar spacing (mm) per wk (mm).
TABLE_7_3N_STRESS = np.array([160.0, 200.0, 240.0, 280.0, 320.0, 360.0])
TABLE_7_3N = {0.4: np.array([300.0, 300.0, 250.0, 200.0, 150.0, 100.0]),
              0.3: np.array([300.0, 250.0, 200.0, 150.0, 100.0, 50.0]),
              0.2: np.array([200.0, 150.0, 100.0, 50.0, np.nan, np.nan])}
WK_VALUES = (0.2, 0.3, 0.4)
#: 24.3.2 coefficients: (stress numerator, spacing coefficient, cap coefficient).
ACI_SPACING = {"US": (40_000.0, 15.0, 12.0), "SI": (280.0, 380.0, 300.0)}


def aci_spacing_limit(fs: np.ndarray | float, cc: np.ndarray | float,
                      system: str) -> np.ndarray:
    """Largest bar spacing of ACI 318-19 Table 24.3.2 (in or mm), fs in psi or MPa."""
    top, a, cap = ACI_SPACING[system]
    ratio = top / np.asarray(fs, dtype=float)
    return np.minimum(a * ratio - 2.5 * np.asarray(cc, dtype=float), cap * ratio)


def _table(stress: np.ndarray, xs: np.ndarray, ys: np.ndarray) -> np.ndarray:
    ok = np.isfinite(ys)
    limit = np.interp(stress, xs[ok], ys[ok], left=ys[ok][0], right=np.nan)
    return np.where(stress <= xs[ok][-1], limit, np.nan)


def en_max_diameter(sigma_s: np.ndarray | float, wk: float) -> np.ndarray:
    """Table 7.2N maximum bar diameter phi*_s (mm) at steel stress ``sigma_s`` (MPa);
    NaN above the table."""
    return _table(np.asarray(sigma_s, dtype=float), TABLE_7_2N_STRESS, TABLE_7_2N[wk])


def en_max_spacing(sigma_s: np.ndarray | float, wk: float) -> np.ndarray:
    """Table 7.3N maximum bar spacing (mm) at steel stress ``sigma_s`` (MPa); NaN above
    the table."""
    return _table(np.asarray(sigma_s, dtype=float), TABLE_7_3N_STRESS, TABLE_7_3N[wk])


def en_modified_diameter(phi_star: np.ndarray | float, fct_eff: np.ndarray | float,
                         hcr: np.ndarray | float, h: np.ndarray | float,
                         d: np.ndarray | float, kc: float = 0.4) -> np.ndarray:
    """Eq. 7.6N (bending, at least part of the section in compression): phi_s =
    phi*_s (fct,eff / 2.9) kc hcr / (2 (h - d)) (mm, MPa)."""
    return (np.asarray(phi_star, float) * np.asarray(fct_eff, float) / 2.9 * kc
            * np.asarray(hcr, float) / (2.0 * (np.asarray(h, float) - np.asarray(d, float))))


def en_check(sigma_s: np.ndarray | float, db: np.ndarray | float,
             spacing: np.ndarray | float, wk: float, fct_eff: np.ndarray | float,
             hcr: np.ndarray | float, h: np.ndarray | float,
             d: np.ndarray | float) -> dict[str, np.ndarray]:
    """EN 1992-1-1 7.3.3(2): ``ok`` where the bar diameter is within the modified Table
    7.2N value or the spacing within Table 7.3N; also ``max_diameter`` and
    ``max_spacing`` (mm, NaN above the tables)."""
    sigma_s = np.asarray(sigma_s, dtype=float)
    phi = en_modified_diameter(en_max_diameter(sigma_s, wk), fct_eff, hcr, h, d)
    s_max = en_max_spacing(sigma_s, wk)
    with np.errstate(invalid="ignore"):
        ok = (np.asarray(db, float) <= phi) | (np.asarray(spacing, float) <= s_max)
    return {"ok": ok, "max_diameter": phi, "max_spacing": s_max}
