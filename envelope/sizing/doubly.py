"""Doubly reinforced beam sections: compression steel where the singly reinforced
section is too small (ACI 318-19; EN 1992-1-1:2004).

Pure functions over numpy arrays in the base units of the code modules
(:mod:`envelope.sizing.concrete_aci`: N, mm, MPa or lb, in, psi; EN: N, mm, MPa).
The compression steel sits at ``d2`` from the compression face (the sizing takes the
cover to the bar centre of the tension side, common practice).

ACI 318-19: the neutral axis is fixed at the tension-controlled limit c = 0.003 dt /
(0.003 + eps_ty + 0.003) (Table 21.2.2, phi = 0.90, and eps_t >= 0.004 of 9.3.3.1 is met);
the concrete block (22.2.2.4.1, a = beta_1 c, flange where there is one) carries Mn1; the
rest of Mu / phi is carried by the couple of compression steel at fs' = Es eps_s' <= fy,
eps_s' = 0.003 (c - d2) / c (strain compatibility, 22.2.1.2), net of the concrete it
displaces (fs' - 0.85 f'c), and an equal extra tension steel:
As' = (Mu/phi - Mn1) / ((fs' - 0.85 f'c)(d - d2)), As = (C + As' (fs' - 0.85 f'c)) / fy.
:func:`aci_capacity` finds c of a given As, As' by the same strain compatibility.

EN 1992-1-1: with K > K' the neutral axis stays at its limit x = (d - z') / 0.4 (5.5(4)
with delta = 1: x/d <= 0.448 for fck <= 50 MPa), z' = d/2 (1 + sqrt(1 - 3.53 K')); the
compression steel takes the rest, As2 = (K - K') fck b d^2 / (fsc (d - d2)), and
As = K' fck b d^2 / (fyd z') + As2 fsc / fyd, fsc = min(Es 0.0035 (x - d2)/x, fyd)
(3.2.7, 3.1.7(3) block; the displaced concrete neglected, common practice of the
rectangular-block method).  :func:`en_capacity` finds x of a given As, As2 by the same
strain compatibility.  Neither tension nor compression steel may exceed 0.04 Ac
(9.2.1.1(3)): where it would, the section cannot be made to work by steel.
"""

from __future__ import annotations

import numpy as np

from envelope.search import bisect
from envelope.sizing import concrete_aci as aci
from envelope.sizing import concrete_en as en

#: Modulus of reinforcement of EN 1992-1-1 3.2.7(4), MPa.
ES_EN = 200_000.0


def aci_design(mu: np.ndarray, b: np.ndarray | float, d: np.ndarray | float,
               d2: np.ndarray | float, fc: float, fy: float, system: str,
               bf: np.ndarray | float | None = None,
               hf: np.ndarray | float | None = None) -> dict[str, np.ndarray]:
    """Tension ``as_required`` and compression ``as_compression`` for ``mu`` (magnitude,
    base units) with c at the tension-controlled limit (see the module docstring);
    ``fs_prime`` (stress of the compression steel), ``c``, ``ok`` (False where the
    compression steel cannot work: it lies at or below the neutral axis, or is no
    stiffer than the concrete it displaces), ``phi_mn`` (= mu where ok)."""
    mu, b_, d_, fc_, fy_, bf_, hf_ = aci._section_arrays(np.abs(np.asarray(mu, float)), b,
                                                         d, fc, fy, bf, hf)
    k = aci.COEFFICIENTS[system]
    b1 = aci.beta1(fc_, system)
    eps_ty = fy_ / k.Es
    c = aci.EPS_CU * d_ / (aci.EPS_CU + eps_ty + 0.003)
    a = b1 * c
    C, m1 = aci._block(a, b_, d_, fc_, bf_, hf_)
    phi = aci.PHI_TENSION_CONTROLLED
    with np.errstate(divide="ignore", invalid="ignore"):
        eps2 = aci.EPS_CU * (c - d2) / c
        fs2 = np.minimum(k.Es * eps2, fy_)
        net = fs2 - np.where(a > d2, 0.85 * fc_, 0.0)
        ok = (c > d2) & (net > 0) & (d_ > d2)
        as2 = np.where(ok, np.maximum(mu / phi - m1, 0.0) / (net * (d_ - d2)), np.nan)
        as1 = np.where(ok, (C + as2 * net) / fy_, np.nan)
    return {"as_required": as1, "as_compression": as2, "fs_prime": fs2, "c": c,
            "ok": ok, "phi_mn": np.where(ok, mu, np.nan)}


def aci_as_max(As2: np.ndarray, b: np.ndarray | float, d: np.ndarray | float,
               d2: np.ndarray | float,
               fc: float, fy: float, system: str, bf: np.ndarray | float | None = None,
               hf: np.ndarray | float | None = None) -> np.ndarray:
    """The most tension steel that keeps eps_t >= 0.004 (9.3.3.1) with compression steel
    ``As2``: As fy = C + As2 (fs' - 0.85 f'c) at c = 0.003 d / (0.003 + 0.004)."""
    As2, b_, d_, fc_, fy_, bf_, hf_ = aci._section_arrays(As2, b, d, fc, fy, bf, hf)
    k = aci.COEFFICIENTS[system]
    b1 = aci.beta1(fc_, system)
    c = aci.EPS_CU * d_ / (aci.EPS_CU + aci.EPS_T_MIN)
    C, _ = aci._block(b1 * c, b_, d_, fc_, bf_, hf_)
    fs2 = np.clip(k.Es * aci.EPS_CU * (c - d2) / c, -fy_, fy_)
    net = fs2 - np.where(b1 * c > d2, 0.85 * fc_, 0.0)
    return np.asarray((C + As2 * net) / fy_)


def aci_capacity(As: np.ndarray, As2: np.ndarray, b: np.ndarray | float,
                 d: np.ndarray | float, d2: np.ndarray | float, fc: float, fy: float,
                 system: str,
                 bf: np.ndarray | float | None = None,
                 hf: np.ndarray | float | None = None) -> dict[str, np.ndarray]:
    """Design strength of tension steel ``As`` (yielding) with compression steel ``As2``:
    c from C(c) + As2 (fs'(c) - 0.85 f'c) = As fy by bisection (the left side rises
    with c), fs' = Es 0.003 (c - d2)/c within +-fy; returns ``c``, ``a``, ``eps_t``,
    ``phi`` (Table 21.2.2), ``fs_prime`` and ``phi_mn``."""
    As, b_, d_, fc_, fy_, bf_, hf_ = aci._section_arrays(As, b, d, fc, fy, bf, hf)
    As2 = np.broadcast_to(np.asarray(As2, float), As.shape)
    k = aci.COEFFICIENTS[system]
    b1 = aci.beta1(fc_, system)

    def parts(c: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        C, m = aci._block(b1 * c, b_, d_, fc_, bf_, hf_)
        fs2 = np.clip(k.Es * aci.EPS_CU * (c - d2) / c, -fy_, fy_)
        # the displaced concrete only where the bars are inside the block
        net = fs2 - np.where(b1 * c > d2, 0.85 * fc_, 0.0)
        return C + As2 * net, m + As2 * net * (d_ - d2), fs2

    lo = np.full(As.shape, 1e-9) * d_
    hi = d_.copy()
    lo, hi = bisect(lambda mid: parts(mid)[0] < As * fy_, lo, hi)
    c = 0.5 * (lo + hi)
    _, mn, fs2 = parts(c)
    eps_t = aci.EPS_CU * (d_ - c) / c
    phi = aci.phi_flexure(eps_t, fy_ / k.Es)
    return {"c": c, "a": b1 * c, "eps_t": eps_t, "phi": phi, "fs_prime": fs2,
            "phi_mn": phi * mn}


def en_design(m: np.ndarray, b: np.ndarray | float, d: np.ndarray | float,
              d2: np.ndarray | float,
              fck: float, fyk: float, h: np.ndarray | float,
              k_lim: float = en.K_LIM) -> dict[str, np.ndarray]:
    """Tension ``as_required`` and compression ``as_compression`` (mm^2) for ``m``
    (N*mm) with K > K' (see the module docstring); ``fsc``, ``x``, ``z`` and ``ok``
    (False where the compression steel is at or below the neutral axis, or either steel
    exceeds 0.04 Ac); ``over`` says which limit fails ("" where none)."""
    m = np.abs(np.asarray(m, dtype=float))
    m, b_, d_, h_ = np.broadcast_arrays(m, *(np.asarray(v, float) for v in (b, d, h)))
    fyd = fyk / en.GAMMA_S
    z = 0.5 * d_ * (1.0 + np.sqrt(1.0 - 3.53 * k_lim))
    x = (d_ - z) / 0.4
    m_lim = k_lim * fck * b_ * d_ * d_
    with np.errstate(divide="ignore", invalid="ignore"):
        fsc = np.minimum(ES_EN * en.EPS_CU * (x - d2) / x, fyd)
        works = (x > d2) & (fsc > 0)
        as2 = np.where(works, np.maximum(m - m_lim, 0.0) / (fsc * (d_ - d2)), np.nan)
        as1 = np.where(works, m_lim / (fyd * z) + as2 * fsc / fyd, np.nan)
    limit = en.as_max(b_, h_)
    over = np.where(~works, "compression steel at or below the neutral axis",
                    np.where(as1 > limit, "tension", np.where(as2 > limit, "compression",
                                                              "")))
    return {"as_required": as1, "as_compression": as2, "fsc": fsc, "x": x, "z": z,
            "ok": works & (as1 <= limit) & (as2 <= limit), "over": over.astype(object),
            "as_max": limit}


def en_capacity(As: np.ndarray, As2: np.ndarray, b: np.ndarray | float,
                d: np.ndarray | float, d2: np.ndarray | float, fck: float,
                fyk: float) -> dict[str, np.ndarray]:
    """Moment resistance of tension steel ``As`` (yielding, fyd = fyk / gamma_s) with
    compression steel ``As2`` at ``d2`` (mm^2, mm, MPa): x from
    0.8 x b fcd + As2 fsc(x) = As fyd by bisection (the left side rises with x),
    fcd = alpha_cc fck / gamma_c, fsc = Es 0.0035 (x - d2)/x within +-fyd (3.1.7(3)
    block with lambda = 0.8, eta = 1; 3.2.7); the concrete lever arm d - 0.4 x at most
    0.95 d, as :func:`envelope.sizing.concrete_en.resistance`.  Returns ``x``, ``fsc``,
    ``eps_s`` = 0.0035 (d - x)/x and ``m_rd`` (N*mm; 0 without tension steel)."""
    As, b_, d_, d2_ = np.broadcast_arrays(*(np.asarray(v, float) for v in (As, b, d, d2)))
    As2 = np.broadcast_to(np.asarray(As2, float), As.shape)
    fyd = fyk / en.GAMMA_S
    fcd = en.ALPHA_CC * fck / en.GAMMA_C

    def parts(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        fsc = np.clip(ES_EN * en.EPS_CU * (x - d2_) / x, -fyd, fyd)
        block = 0.8 * x * b_ * fcd
        z = np.minimum(d_ - 0.4 * x, 0.95 * d_)
        return block + As2 * fsc, block * z + As2 * fsc * (d_ - d2_), fsc

    lo, hi = bisect(lambda mid: parts(mid)[0] < As * fyd, 1e-9 * d_, d_.copy())
    x = 0.5 * (lo + hi)
    _, m, fsc = parts(x)
    none = As <= 0
    with np.errstate(divide="ignore", invalid="ignore"):
        eps_s = en.EPS_CU * (d_ - x) / x
    return {"x": x, "fsc": fsc, "eps_s": np.where(none, np.nan, eps_s),
            "m_rd": np.where(none, 0.0, m)}
