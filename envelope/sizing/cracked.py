"""Cracked and uncracked flexural stiffness of reinforced concrete sections, both codes.

Pure functions over numpy arrays (broadcast against each other) in one consistent unit
system: N, mm, MPa (SI) or lb, in, psi (ACI in US units).  A section is a web of width
``bw`` and height ``h`` with, on the compression side, an optional flange of width ``bf``
and depth ``hf`` (pass ``bf = bw``, ``hf = 0`` for a rectangle or for a T-beam in hogging,
whose flange is in tension).  Tension steel ``As`` sits at depth ``d`` from the compression
face, compression steel ``As2`` at ``d2``.

- Gross section (steel neglected, as ACI 318-19 24.2.3.5 takes Ig): area, centroid,
  Ig and the distance ``yt`` from the centroid to the tension face.
- Cracked transformed section (concrete in tension neglected, steel at the modular
  ratio n = Es/Ec; compression steel at n - 1): neutral axis depth ``c`` and Icr.
- ACI 318-19: Ec (19.2.2.1(b)), fr (19.2.3.1), Ie (Table 24.2.3.5) and the long-term
  multiplier lambda_Delta (24.2.4.1.1, xi of Table 24.2.4.1.3).
- EN 1992-1-1: Ecm (Table 3.1), the distribution coefficient zeta (7.4.3(3), eq. 7.19)
  and the effective modulus for creep (eq. 7.20).
"""

from __future__ import annotations

import numpy as np

#: Modulus of reinforcement, ACI 318-19 20.2.2.2 (psi) and EN 1992-1-1 3.2.7(4) (MPa).
ES = {"US": 29_000_000.0, "SI": 200_000.0}
#: 19.2.2.1(b): Ec = 57000 sqrt(f'c) psi, 4700 sqrt(f'c) MPa (normalweight concrete).
EC_ROOT = {"US": 57_000.0, "SI": 4_700.0}
#: 19.2.3.1: fr = 7.5 lambda sqrt(f'c) psi, 0.62 lambda sqrt(f'c) MPa.
FR_ROOT = {"US": 7.5, "SI": 0.62}
#: Table 24.2.4.1.3: the time-dependent factor xi against the load duration in months
#: (3 months 1.0, 6 months 1.2, 12 months 1.4, 5 years or more 2.0); between the tabulated
#: durations the value is interpolated linearly (the curve of Fig. R24.2.4.1 is smooth),
#: and from 0 at no duration to 1.0 at 3 months.
XI_MONTHS = np.array([0.0, 3.0, 6.0, 12.0, 60.0])
XI_VALUES = np.array([0.0, 1.0, 1.2, 1.4, 2.0])
#: EN 1992-1-1 7.4.3(3): beta = 1.0 for a single short-term load, 0.5 for sustained loads
#: or many cycles of repeated loading.
BETA_SHORT = 1.0
BETA_SUSTAINED = 0.5


def _arrays(*values: np.ndarray | float) -> list[np.ndarray]:
    return list(np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in values)))


def ec_aci(fc: np.ndarray | float, system: str) -> np.ndarray:
    """Modulus of normalweight concrete, ACI 318-19 19.2.2.1(b) (psi or MPa)."""
    return EC_ROOT[system] * np.sqrt(np.asarray(fc, dtype=float))


def fr_aci(fc: np.ndarray | float, system: str, lam: float = 1.0) -> np.ndarray:
    """Modulus of rupture, ACI 318-19 19.2.3.1 (psi or MPa)."""
    return FR_ROOT[system] * lam * np.sqrt(np.asarray(fc, dtype=float))


def ecm_en(fck: np.ndarray | float) -> np.ndarray:
    """Secant modulus Ecm = 22 (fcm/10)^0.3 GPa with fcm = fck + 8 MPa (EN 1992-1-1
    Table 3.1), in MPa (quartzite aggregate)."""
    return 22_000.0 * ((np.asarray(fck, dtype=float) + 8.0) / 10.0) ** 0.3


def gross(bw: np.ndarray | float, h: np.ndarray | float, bf: np.ndarray | float,
          hf: np.ndarray | float) -> dict[str, np.ndarray]:
    """Gross concrete section with the flange (``bf`` x ``hf``) on the compression face:
    ``area``, ``y_comp`` (centroid from the compression face), ``ig`` (about the centroid)
    and ``yt`` (centroid to the extreme tension fibre)."""
    bw, h, bf, hf = _arrays(bw, h, bf, hf)
    over = (bf - bw) * hf
    area = bw * h + over
    y = (bw * h * h / 2.0 + over * hf / 2.0) / area
    ig = (bw * h**3 / 12.0 + bw * h * (h / 2.0 - y) ** 2
          + (bf - bw) * hf**3 / 12.0 + over * (hf / 2.0 - y) ** 2)
    return {"area": area, "y_comp": y, "ig": ig, "yt": h - y}


def cracked(bw: np.ndarray | float, bf: np.ndarray | float, hf: np.ndarray | float,
            As: np.ndarray | float, d: np.ndarray | float, n: np.ndarray | float,
            As2: np.ndarray | float = 0.0, d2: np.ndarray | float = 0.0
            ) -> dict[str, np.ndarray]:
    """Cracked transformed section: neutral axis depth ``c`` from the compression face
    and ``icr`` about it.

    The first moments balance: S_c(c) + (n - 1) As2 (c - d2) = n As (d - c), with the
    compression zone the web bw over c plus the flange overhang (bf - bw) over min(c, hf).
    Solved as a quadratic in each of the two cases (c <= hf, c > hf) and the consistent
    root taken.  Where that c is above ``d2`` the compression steel lies in the cracked
    tension zone: it displaces no concrete in compression and counts at n As2 (solved
    again).  Without tension steel c and icr are NaN."""
    bw, bf, hf, As, d, n, As2, d2 = _arrays(bw, bf, hf, As, d, n, As2, d2)
    first = _cracked(bw, bf, hf, As, d, n, (n - 1.0) * As2, d2)
    below = (As2 > 0) & (first["c"] < d2)
    if np.any(below):
        again = _cracked(bw, bf, hf, As, d, n, n * As2, d2)
        first = {k: np.where(below, again[k], v) for k, v in first.items()}
    return first


def _cracked(bw: np.ndarray, bf: np.ndarray, hf: np.ndarray, As: np.ndarray,
             d: np.ndarray, n: np.ndarray, nc: np.ndarray, d2: np.ndarray
             ) -> dict[str, np.ndarray]:
    """:func:`cracked` with the transformed area of the second layer ``nc`` given."""
    ns = n * As

    def root(a: np.ndarray, b: np.ndarray, k: np.ndarray) -> np.ndarray:
        with np.errstate(invalid="ignore", divide="ignore"):
            return (-b + np.sqrt(b * b - 4.0 * a * k)) / (2.0 * a)

    # c <= hf: bf c^2/2 + (ns + nc) c - (ns d + nc d2) = 0
    c1 = root(bf / 2.0, ns + nc, -(ns * d + nc * d2))
    # c > hf: bw c^2/2 + ((bf - bw) hf + ns + nc) c - ((bf - bw) hf^2/2 + ns d + nc d2) = 0
    over = (bf - bw) * hf
    c2 = root(bw / 2.0, over + ns + nc, -(over * hf / 2.0 + ns * d + nc * d2))
    in_flange = c1 <= hf
    c = np.where(in_flange, c1, c2)
    concrete = np.where(
        in_flange, bf * c**3 / 3.0,
        bw * c**3 / 3.0 + (bf - bw) * hf**3 / 12.0 + over * (c - hf / 2.0) ** 2)
    icr = concrete + nc * (c - d2) ** 2 + ns * (d - c) ** 2
    none = ~(As > 0)
    return {"c": np.where(none, np.nan, c), "icr": np.where(none, np.nan, icr)}


def ie_aci(ma: np.ndarray | float, mcr: np.ndarray | float, ig: np.ndarray | float,
           icr: np.ndarray | float) -> np.ndarray:
    """Effective moment of inertia, ACI 318-19 Table 24.2.3.5: Ig where Ma <= (2/3) Mcr,
    else Icr / (1 - ((2/3) Mcr / Ma)^2 (1 - Icr/Ig)), capped at Ig.  ``ma`` is the
    magnitude of the largest service moment of the member (or region) at the load level
    the deflection is taken for."""
    ma, mcr, ig, icr = _arrays(ma, mcr, ig, icr)
    ma = np.abs(ma)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = (2.0 / 3.0) * mcr / ma
        cracked_ie = icr / (1.0 - ratio**2 * (1.0 - icr / ig))
    return np.where(ma <= (2.0 / 3.0) * mcr, ig, np.minimum(cracked_ie, ig))


def xi_aci(months: np.ndarray | float) -> np.ndarray:
    """Time-dependent factor xi for sustained loads, ACI 318-19 Table 24.2.4.1.3 (see
    :data:`XI_MONTHS`); 2.0 from 60 months on."""
    return np.interp(np.asarray(months, dtype=float), XI_MONTHS, XI_VALUES)


def lambda_delta(months: np.ndarray | float, rho_prime: np.ndarray | float
                 ) -> np.ndarray:
    """Multiplier for the additional long-term deflection, lambda_Delta = xi / (1 +
    50 rho'), ACI 318-19 24.2.4.1.1 (Eq. 24.2.4.1.1)."""
    return xi_aci(months) / (1.0 + 50.0 * np.asarray(rho_prime, dtype=float))


def zeta_en(m: np.ndarray | float, mcr: np.ndarray | float, beta: float) -> np.ndarray:
    """Distribution coefficient zeta = 1 - beta (Mcr/M)^2 where |M| > Mcr, else 0 (the
    section is uncracked): EN 1992-1-1 7.4.3(3), eq. 7.19 with sigma_sr/sigma_s =
    Mcr/M for flexure."""
    m, mcr = _arrays(m, mcr)
    m = np.abs(m)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = 1.0 - beta * (mcr / m) ** 2
    return np.where(m > mcr, z, 0.0)


def e_eff_en(ecm: np.ndarray | float, creep: np.ndarray | float) -> np.ndarray:
    """Effective modulus Ec,eff = Ecm / (1 + phi(inf, t0)), EN 1992-1-1 7.4.3(5), eq.
    7.20."""
    return np.asarray(ecm, dtype=float) / (1.0 + np.asarray(creep, dtype=float))


def flexibility_en(zeta: np.ndarray | float, e: np.ndarray | float,
                   i_uncracked: np.ndarray | float, i_cracked: np.ndarray | float
                   ) -> np.ndarray:
    """Curvature per unit moment 1/r / M = zeta / (E I_II) + (1 - zeta) / (E I_I), the
    interpolation of EN 1992-1-1 7.4.3(3), eq. 7.18, applied to curvature (7.4.3(4))."""
    zeta, e, i1, i2 = _arrays(zeta, e, i_uncracked, i_cracked)
    cracked_part = np.where(zeta > 0.0, zeta / (e * i2), 0.0)
    return cracked_part + (1.0 - zeta) / (e * i1)
