"""Reinforced concrete beam sections by ACI 318-19: flexure, minimum steel, one-way shear.

Pure functions over numpy arrays (scalars broadcast).  Each works in one base system,
named by ``system``, because the code's coefficients on the square root of f'c differ:

- ``"SI"``: N, mm, MPa (N/mm^2); moments N*mm.
- ``"US"``: lb, in, psi; moments lb*in.

Flexure uses the rectangular stress block (22.2.2.4: 0.85 f'c over a = beta_1 c, strain
0.003 at the extreme compression fibre, 22.2.2.1) with one layer of tension steel at depth
d (so d_t = d), yielding at fy.  A T-section with its flange in compression is the same
block cut by the flange: width ``bf`` down to ``hf``, the web width ``b`` below it.
Normalweight concrete (lambda = 1) unless ``lam`` says otherwise.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from envelope.search import bisect

#: Concrete strain at the extreme compression fibre (22.2.2.1).
EPS_CU = 0.003
#: Least net tensile strain of a nonprestressed beam (9.3.3.1).
EPS_T_MIN = 0.004
#: Strength reduction factor of a tension-controlled section (Table 21.2.2).
PHI_TENSION_CONTROLLED = 0.90
#: Strength reduction factor for shear (Table 21.2.1).
PHI_SHEAR = 0.75
#: Portion of the largest sagging steel taken as reaching an end that has no hogging
#: (9.7.3.8.1 extends at least 1/4 at continuous and 1/3 at simple supports; 1/4 is the
#: smaller, so rho_w is not overstated).
BOTTOM_BARS_AT_END = 0.25


@dataclass(frozen=True, slots=True)
class Coefficients:
    """ACI 318-19 numbers that depend on the unit system (SI values are the code's SI
    edition; US values are psi-based)."""

    Es: float            # 20.2.2.2: modulus of reinforcement
    beta1_knee: float    # 22.2.2.4.3: f'c up to which beta_1 = 0.85
    beta1_step: float    # beta_1 drops 0.05 per this much f'c
    beta1_floor_fc: float  # f'c at and above which beta_1 = 0.65
    as_min_root: float   # 9.6.1.2(a): coefficient on sqrt(f'c)
    as_min_floor: float  # 9.6.1.2(b)
    vc_a: float          # Table 22.5.5.1(a): 2 sqrt(f'c) / 0.17 sqrt(f'c)
    vc_b: float          # Table 22.5.5.1(b), (c): 8 rho^(1/3) sqrt(f'c) / 0.66 ...
    vc_cap: float        # 22.5.5.1.1: Vc <= 5 sqrt(f'c) bw d / 0.42 ...
    vs_max: float        # 22.5.1.2: Vs <= 8 sqrt(f'c) bw d / 0.66 ...
    vs_tight: float      # 9.7.6.2.2: spacing limits halve where Vs > 4 sqrt(f'c) bw d / 0.33
    av_min_threshold: float  # 9.6.3.1: Av,min where Vu > phi lambda sqrt(f'c) bw d / 0.083
    av_min_root: float   # Table 9.6.3.4(a): 0.75 sqrt(f'c) bw / fyt  / 0.062 ...
    av_min_floor: float  # Table 9.6.3.4(b): 50 bw / fyt / 0.35 bw / fyt
    root_fc_cap: float   # 22.5.3.1: sqrt(f'c) <= 100 psi / 8.3 MPa (without Av,min)
    fyt_cap: float       # 20.2.2.4: fyt for shear <= 60 000 psi / 420 MPa
    s_max: float         # 9.7.6.2.2: d/2 and 24 in / 600 mm
    s_max_tight: float   # d/4 and 12 in / 300 mm
    size_effect: float   # 22.5.5.1.3: lambda_s = sqrt(2 / (1 + d/10)) (in), 1 + 0.004 d (mm)


COEFFICIENTS: dict[str, Coefficients] = {
    "SI": Coefficients(Es=200_000.0, beta1_knee=28.0, beta1_step=7.0, beta1_floor_fc=55.0,
                       as_min_root=0.25, as_min_floor=1.4, vc_a=0.17, vc_b=0.66,
                       vc_cap=0.42, vs_max=0.66, vs_tight=0.33, av_min_threshold=0.083,
                       av_min_root=0.062, av_min_floor=0.35, root_fc_cap=8.3,
                       fyt_cap=420.0, s_max=600.0, s_max_tight=300.0, size_effect=0.004),
    "US": Coefficients(Es=29_000_000.0, beta1_knee=4000.0, beta1_step=1000.0,
                       beta1_floor_fc=8000.0, as_min_root=3.0, as_min_floor=200.0,
                       vc_a=2.0, vc_b=8.0, vc_cap=5.0, vs_max=8.0, vs_tight=4.0,
                       av_min_threshold=1.0, av_min_root=0.75, av_min_floor=50.0,
                       root_fc_cap=100.0, fyt_cap=60_000.0, s_max=24.0, s_max_tight=12.0,
                       size_effect=0.1),
}


def beta1(fc: np.ndarray | float, system: str) -> np.ndarray:
    """Stress-block depth factor beta_1 (Table 22.2.2.4.3): 0.85 up to 28 MPa (4000 psi),
    then 0.05 less per 7 MPa (1000 psi), and 0.65 from 55 MPa (8000 psi) on (the SI line
    reaches 0.657 at 55 MPa; the table's last row still says 0.65)."""
    k = COEFFICIENTS[system]
    fc = np.asarray(fc, dtype=float)
    line = np.clip(0.85 - 0.05 * (fc - k.beta1_knee) / k.beta1_step, 0.65, 0.85)
    return np.where(fc >= k.beta1_floor_fc, 0.65, line)


def phi_flexure(eps_t: np.ndarray | float, eps_ty: np.ndarray | float) -> np.ndarray:
    """Strength reduction factor from the net tensile strain (Table 21.2.2, other than
    spirals): 0.65 at eps_t <= eps_ty, 0.90 at eps_t >= eps_ty + 0.003, linear between."""
    eps_t = np.asarray(eps_t, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.clip(0.65 + 0.25 * (eps_t - eps_ty) / 0.003, 0.65, 0.90)


def _block(a: np.ndarray, b: np.ndarray, d: np.ndarray, fc: np.ndarray, bf: np.ndarray,
           hf: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Compression force C and its moment about the tension steel for a stress block of
    depth ``a`` (force; force*length): width ``bf`` down to ``hf``, ``b`` below."""
    af = np.minimum(a, hf)
    C = 0.85 * fc * (b * a + (bf - b) * af)
    M = 0.85 * fc * (b * a * (d - a / 2) + (bf - b) * af * (d - af / 2))
    return C, M


def _strain(a: np.ndarray, b1: np.ndarray, dt: np.ndarray) -> np.ndarray:
    """Net tensile strain at depth dt for block depth a: 0.003 (dt - c) / c, c = a/beta_1."""
    with np.errstate(divide="ignore", invalid="ignore"):
        c = a / b1
        return np.where(a > 0, EPS_CU * (dt - c) / c, np.inf)


#: Points on which the transition zone is searched before bisection (phi*Mn need not rise
#: with the steel there: in a T-section phi falls faster than Mn grows).
TRANSITION_SAMPLES = 256


def _section_arrays(x: object, b: object, d: object, fc: object, fy: object,
                    bf: object, hf: object) -> tuple[np.ndarray, ...]:
    """The demand (or steel area) and the section as float arrays of one shape; a
    rectangle (no flange) has bf = b and hf = 0."""
    b = np.asarray(b, dtype=float)
    bf_ = b if bf is None else np.asarray(bf, dtype=float)
    hf_ = np.zeros_like(b) if hf is None else np.asarray(hf, dtype=float)
    return np.broadcast_arrays(np.asarray(x, dtype=float), b, np.asarray(d, float),
                               np.asarray(fc, float), np.asarray(fy, float), bf_, hf_)


#: Half-width of the bracket put around the closed-form block depth of a
#: tension-controlled section before bisection (relative to the depth).
SEED_RTOL = 1e-13


def tension_controlled_depth(mu: np.ndarray, b: np.ndarray, d: np.ndarray, fc: np.ndarray,
                             bf: np.ndarray, hf: np.ndarray) -> np.ndarray:
    """Block depth a with 0.90 Mn = Mu where phi is 0.90 (tension controlled): the root of
    the quadratic 0.90 * 0.85 f'c [bf a (d - a/2)] = Mu while the block is in the flange
    (a <= hf; bf = b for a rectangle), else of 0.90 * 0.85 f'c [b a (d - a/2)
    + (bf - b) hf (d - hf/2)] = Mu; written a = x / (d + sqrt(d^2 - x)) so that a small
    moment loses no digits.  NaN where the section cannot reach Mu at any depth."""
    k = 0.9 * 0.85 * fc
    with np.errstate(divide="ignore", invalid="ignore"):
        x_f = 2.0 * mu / (k * bf)
        a_f = x_f / (d + np.sqrt(d * d - x_f))
        x_w = 2.0 * (mu / k - (bf - b) * hf * (d - hf / 2.0)) / b
        a_w = x_w / (d + np.sqrt(d * d - x_w))
    return np.where(a_f <= hf, a_f, a_w)


def _seeded(short: Callable[[np.ndarray], np.ndarray], a0: np.ndarray, use: np.ndarray,
            lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The brackets [lo, hi] narrowed to [a0 (1 - SEED_RTOL), a0 (1 + SEED_RTOL)] where
    ``use`` and that bracket holds the change of ``short`` (True below, False above:
    checked, not assumed), so that bisection starts some forty steps further on; the
    same end as from [lo, hi] wherever ``short`` changes once in floating point."""
    lo_s, hi_s = a0 * (1.0 - SEED_RTOL), a0 * (1.0 + SEED_RTOL)
    with np.errstate(invalid="ignore"):
        ok = use & np.isfinite(a0) & (lo_s > lo) & (hi_s < hi)
    if not ok.any():
        return lo, hi
    both = short(np.stack([np.where(ok, lo_s, lo), np.where(ok, hi_s, hi)]))
    ok &= both[0] & ~both[1]
    return np.where(ok, lo_s, lo), np.where(ok, hi_s, hi)


def flexure(mu: np.ndarray | float, b: np.ndarray | float, d: np.ndarray | float,
            fc: np.ndarray | float, fy: np.ndarray | float, system: str,
            bf: np.ndarray | float | None = None,
            hf: np.ndarray | float | None = None) -> dict[str, np.ndarray]:
    """Least tension steel for a factored moment ``mu`` (magnitude) on a singly reinforced
    section.

    The block depth a runs from 0 to the depth at which eps_t = 0.004 (9.3.3.1).  Up to
    the tension-controlled limit (eps_t = eps_ty + 0.003, phi = 0.90) phi*Mn rises with a
    and the root of phi*Mn = Mu is bisected, from a bracket of :data:`SEED_RTOL` about
    the closed-form depth (:func:`tension_controlled_depth`) where that bracket holds
    it.  Beyond it phi falls (Table 21.2.2) and
    phi*Mn may fall too (a T-section with its block below the flange), so the transition
    zone is sampled for the first depth that reaches Mu, then bisected.  Returns:

    - ``as_required``: As = C / fy (area); NaN where the section is too small;
    - ``as_max``: the steel at eps_t = 0.004, the most a singly reinforced beam may have;
    - ``phi_mn_max``: the largest phi*Mn with eps_t >= 0.004 (moment);
    - ``too_small``: Mu > phi_mn_max;
    - ``a``, ``eps_t``, ``phi`` at ``as_required``; ``beta1``.
    """
    mu, b, d, fc, fy, bf_, hf_ = _section_arrays(np.abs(np.asarray(mu, dtype=float)), b, d,
                                                 fc, fy, bf, hf)
    k = COEFFICIENTS[system]
    b1 = beta1(fc, system)
    eps_ty = fy / k.Es
    dt = d
    a_lim = b1 * EPS_CU * dt / (EPS_CU + EPS_T_MIN)
    a_tc = np.minimum(b1 * EPS_CU * dt / (EPS_CU + eps_ty + 0.003), a_lim)
    c_lim, _ = _block(a_lim, b, d, fc, bf_, hf_)

    def phi_mn(a: np.ndarray) -> np.ndarray:
        _, m = _block(a, b[..., None], d[..., None], fc[..., None], bf_[..., None],
                      hf_[..., None])
        return phi_flexure(_strain(a, b1[..., None], dt[..., None]), eps_ty[..., None]) * m

    # the transition zone on a grid: its largest phi*Mn and the first point reaching Mu
    t = np.linspace(0.0, 1.0, TRANSITION_SAMPLES + 1)
    grid = a_tc[..., None] + (a_lim - a_tc)[..., None] * t
    values = phi_mn(grid)
    phi_mn_max = values.max(axis=-1)
    too_small = mu > phi_mn_max
    reach = values >= mu[..., None]
    first = np.argmax(reach, axis=-1)
    in_tc = reach[..., 0]  # Mu is met by a tension-controlled section
    upper = np.take_along_axis(grid, first[..., None], axis=-1)[..., 0]
    lower = np.take_along_axis(grid, np.maximum(first - 1, 0)[..., None], axis=-1)[..., 0]
    lo = np.where(in_tc, 0.0, lower)
    hi = np.where(in_tc, a_tc, upper)

    def short(a: np.ndarray) -> np.ndarray:
        return phi_mn(a[..., None])[..., 0] < mu

    lo, hi = _seeded(short, tension_controlled_depth(mu, b, d, fc, bf_, hf_), in_tc, lo, hi)
    lo, hi = bisect(short, lo, hi)
    a = np.where(mu > 0, hi, 0.0)
    C, _ = _block(a, b, d, fc, bf_, hf_)
    eps_t = _strain(a, b1, dt)
    phi = phi_flexure(eps_t, eps_ty)
    nan = np.full_like(mu, np.nan)
    return {
        "as_required": np.where(too_small, nan, C / fy),
        "as_max": c_lim / fy,
        "phi_mn_max": phi_mn_max,
        "too_small": too_small,
        "a": np.where(too_small, nan, a),
        "eps_t": np.where(too_small | (mu == 0), nan, eps_t),
        "phi": np.where(too_small | (mu == 0), nan, phi),
        "beta1": b1,
    }


def capacity(As: np.ndarray | float, b: np.ndarray | float, d: np.ndarray | float,
             fc: np.ndarray | float, fy: np.ndarray | float, system: str,
             bf: np.ndarray | float | None = None,
             hf: np.ndarray | float | None = None) -> dict[str, np.ndarray]:
    """Design strength of a section with tension steel ``As`` (yielding): block depth ``a``
    from C = As*fy (inside the flange while As*fy <= 0.85 f'c bf hf), net tensile strain,
    phi (Table 21.2.2) and ``phi_mn`` = phi * Mn (moment units of ``system``)."""
    As, b, d, fc, fy, bf_, hf_ = _section_arrays(As, b, d, fc, fy, bf, hf)
    k = COEFFICIENTS[system]
    tension = As * fy
    in_flange = tension <= 0.85 * fc * bf_ * hf_
    a = np.where(in_flange, tension / (0.85 * fc * bf_),
                 (tension - 0.85 * fc * (bf_ - b) * hf_) / (0.85 * fc * b))
    _, mn = _block(a, b, d, fc, bf_, hf_)
    eps_t = _strain(a, beta1(fc, system), d)
    phi = phi_flexure(eps_t, fy / k.Es)
    none = As <= 0
    return {"a": a, "eps_t": np.where(none, np.nan, eps_t),
            "phi": np.where(none, np.nan, phi), "phi_mn": np.where(none, 0.0, phi * mn),
            "block_in_flange": in_flange}


def as_min(b: np.ndarray | float, d: np.ndarray | float, fc: np.ndarray | float,
           fy: np.ndarray | float, system: str) -> np.ndarray:
    """Minimum flexural steel of a beam (9.6.1.2): the larger of 3 sqrt(f'c) bw d / fy and
    200 bw d / fy (psi); SI 0.25 sqrt(f'c) bw d / fy and 1.4 bw d / fy (MPa)."""
    k = COEFFICIENTS[system]
    fc = np.asarray(fc, dtype=float)
    return (np.maximum(k.as_min_root * np.sqrt(fc), k.as_min_floor)
            * np.asarray(b, float) * np.asarray(d, float) / np.asarray(fy, float))


def as_design(as_required: np.ndarray, as_minimum: np.ndarray) -> np.ndarray:
    """Steel to provide: the required steel, raised to the minimum of 9.6.1.2, which need
    not exceed 4/3 of the required steel (9.6.1.3); 0 where no steel is required."""
    as_required = np.asarray(as_required, dtype=float)
    raised = np.maximum(as_required, np.minimum(as_minimum, 4.0 / 3.0 * as_required))
    return np.where(as_required > 0, raised, np.where(as_required == 0, 0.0, np.nan))


def shear(vu: np.ndarray | float, b: np.ndarray | float, d: np.ndarray | float,
          fc: np.ndarray | float, fyt: np.ndarray | float, rho_w: np.ndarray | float,
          system: str, lam: float = 1.0) -> dict[str, np.ndarray]:
    """One-way shear of a nonprestressed beam with no axial force (Nu = 0).

    - Without stirrups (Av < Av,min) Vc = 8 lambda_s lambda rho_w^(1/3) sqrt(f'c) bw d
      (Table 22.5.5.1(c), size effect 22.5.5.1.3), sqrt(f'c) <= 100 psi (22.5.3.1).
    - Stirrups are needed where Vu > phi*Vc of that, or where Vu > phi lambda sqrt(f'c)
      bw d (9.6.3.1); then at least Av,min is provided and Vc is the larger of (a)
      2 lambda sqrt(f'c) bw d and (b) 8 lambda rho_w^(1/3) sqrt(f'c) bw d.
    - Vc <= 5 lambda sqrt(f'c) bw d (22.5.5.1.1); phi = 0.75.
    - Av/s = (Vu/phi - Vc) / (fyt d) (22.5.8.5.3), at least Av,min/s (Table 9.6.3.4),
      fyt <= 60 ksi (20.2.2.4); the section is too small where Vs > 8 sqrt(f'c) bw d
      (22.5.1.2).  s_max = min(d/2, 24 in), halved where Vs > 4 sqrt(f'c) bw d
      (9.7.6.2.2).

    Returns ``vc`` (force), ``needs_stirrups``, ``av_over_s_min``, ``av_over_s_required``
    (0 where none are needed), ``vs_required``, ``vs_limit``, ``too_small``, ``s_max``
    (NaN without stirrups), ``tight`` (spacing halved), ``lambda_s``.
    """
    vu = np.abs(np.asarray(vu, dtype=float))
    vu, b, d, fc, fyt, rho_w = np.broadcast_arrays(
        vu, *(np.asarray(v, dtype=float) for v in (b, d, fc, fyt, rho_w)))
    k = COEFFICIENTS[system]
    root = np.sqrt(fc)
    root_capped = np.minimum(root, k.root_fc_cap)
    fyt = np.minimum(fyt, k.fyt_cap)
    bd = b * d
    lam_s = np.minimum(np.sqrt(2.0 / (1.0 + k.size_effect * d)), 1.0)
    rho3 = np.cbrt(np.maximum(rho_w, 0.0))
    vc_without = np.minimum(k.vc_b * lam_s * lam * rho3 * root_capped,
                            k.vc_cap * lam * root_capped) * bd
    vc_with = np.minimum(np.maximum(k.vc_a * lam * root, k.vc_b * lam * rho3 * root),
                         k.vc_cap * lam * root) * bd
    threshold = PHI_SHEAR * k.av_min_threshold * lam * root_capped * bd
    needs = (vu > threshold) | (vu > PHI_SHEAR * vc_without)
    vc = np.where(needs, vc_with, vc_without)
    vs_required = np.where(needs, np.maximum(vu / PHI_SHEAR - vc, 0.0), 0.0)
    av_s_min = np.maximum(k.av_min_root * root, k.av_min_floor) * b / fyt
    av_s = np.where(needs, np.maximum(vs_required / (fyt * d), av_s_min), 0.0)
    vs_limit = k.vs_max * root * bd
    too_small = vs_required > vs_limit
    vs_provided = av_s * fyt * d
    tight = needs & (vs_provided > k.vs_tight * root * bd)
    s_max = np.where(tight, np.minimum(d / 4, k.s_max_tight), np.minimum(d / 2, k.s_max))
    return {
        "vc": vc, "needs_stirrups": needs, "av_over_s_min": av_s_min,
        "av_over_s_required": np.where(too_small, np.nan, av_s),
        "vs_required": vs_required, "vs_limit": vs_limit, "too_small": too_small,
        "s_max": np.where(needs & ~too_small, s_max, np.nan), "tight": tight,
        "lambda_s": lam_s, "threshold": threshold,
    }
