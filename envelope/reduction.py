"""Live load reduction: the factor on a reduced live case, per span.

Floor live load may be reduced on members that support a large area, because the
full intensity is unlikely over all of it at once.  Two rules are implemented:

* ASCE 7-22 4.7.3, Eq. (4.7-1): ``L = Lo (0.25 + 15 / sqrt(KLL AT))`` with AT in ft^2
  (``4.57`` with AT in m^2), only where ``KLL AT >= 400 ft^2`` (37.16 m^2), and not below
  0.50 Lo for members supporting one floor nor 0.40 Lo for members supporting two or
  more.  Heavy live loads over 100 psf (4.79 kN/m^2, 4.7.4) and passenger-vehicle
  garages (4.7.5) are not reduced, except by at most 20 % on members supporting two or
  more floors (and never below Eq. 4.7-1); assembly uses (4.7.6) are not reduced.
* EN 1991-1-1:2002 6.3.1.2(10), Eq. (6.1): ``alpha_A = 5/7 psi_0 + A0 / A <= 1.0`` with
  ``A0 = 10 m^2``, and ``alpha_A >= 0.6`` for categories C and D; the reduction applies
  to categories A to D (categories E to H are not reduced; from memory of 6.3.1.2 and
  6.3.2).

The tributary area of a span is its length times the tributary width: each span of a
continuous beam is taken as the member that supports its own area (common practice
for floor beams; a reaction or a column takes the sum of the spans it supports, which is
a column's check and out of scope here).  Cantilever spans take KLL = 1 (Table 4.7-1,
"cantilever beams") whatever ``kll`` says.  Every fixed item of a reduced case is reduced
(a point item is taken as the reaction of reducible floor load, such as a joist's); a case
holding a moving load (``concentrated`` or ``train``, its only item) keeps the factor 1.0.

Everything is in the beam's consistent units (m and kN, or ft and kip).  Nothing here
is presentation: the factors are plain arrays that :mod:`envelope.loading` applies to
the load items of each reduced case on each span.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from envelope.model import Beam

#: ASCE 7-22 Eq. (4.7-1): the constant 15 with AT in ft^2; 4.57 with AT in m^2.
ASCE7_CONSTANT = {"US": 15.0, "SI": 4.57}
#: ASCE 7-22 4.7.3: no reduction where KLL AT is below 400 ft^2 (37.16 m^2).
ASCE7_MIN_INFLUENCE_AREA = {"US": 400.0, "SI": 37.16}
#: ASCE 7-22 4.7.4: live loads above 100 psf (4.79 kN/m^2) are heavy.  In the
#: consistent units: kip/ft^2 and kN/m^2.
ASCE7_HEAVY_LIVE = {"US": 0.100, "SI": 4.79}
#: ASCE 7-22 4.7.3: floor of L / Lo for members supporting one floor, and more.
ASCE7_FLOOR_ONE, ASCE7_FLOOR_MORE = 0.50, 0.40
#: ASCE 7-22 4.7.4 / 4.7.5 Exception: at most a 20 % reduction.
ASCE7_LIMITED = 0.80
#: EN 1991-1-1 6.3.1.2(10): reference area A0 in m^2, and the floor for C and D.
EN_A0_M2 = 10.0
EN_FLOOR_C_D = 0.6
#: Categories EN 1991-1-1 6.3.1.2(10) reduces (A to D); others are not reduced.
EN_REDUCIBLE = frozenset("ABCD")
#: Square feet per square metre, for A0 in a US-units beam.
FT2_PER_M2 = 1.0 / 0.3048**2

OCCUPANCIES = ("general", "garage", "assembly")


def asce7_factor(influence_area: np.ndarray, floors: int, intensity: np.ndarray,
                 occupancy: str, system: str) -> np.ndarray:
    """L / Lo by ASCE 7-22 4.7.3 to 4.7.6, per span.

    ``influence_area`` is KLL AT (ft^2 in US, m^2 in SI); ``floors`` the number of
    floors the member supports; ``intensity`` the unreduced area load Lo per span (kip/ft^2
    or kN/m^2), for the heavy-load rule; ``occupancy`` one of :data:`OCCUPANCIES`.
    """
    area = np.asarray(influence_area, dtype=float)
    if occupancy == "assembly":
        return np.ones_like(area)  # 4.7.6
    with np.errstate(divide="ignore"):
        raw = 0.25 + ASCE7_CONSTANT[system] / np.sqrt(area)
    floor = ASCE7_FLOOR_ONE if floors <= 1 else ASCE7_FLOOR_MORE
    factor = np.where(area >= ASCE7_MIN_INFLUENCE_AREA[system], np.clip(raw, floor, 1.0), 1.0)
    heavy = np.asarray(intensity, dtype=float) > ASCE7_HEAVY_LIVE[system]
    limited = heavy | (occupancy == "garage")
    # 4.7.4 / 4.7.5: not reduced, except by at most 20 % on members supporting two or
    # more floors, and then never below Eq. (4.7-1)
    capped = np.maximum(factor, ASCE7_LIMITED) if floors >= 2 else np.ones_like(factor)
    return np.where(limited, capped, factor)


def en1991_factor(area: np.ndarray, psi0: float, category: str, system: str) -> np.ndarray:
    """alpha_A by EN 1991-1-1:2002 6.3.1.2(10), Eq. (6.1), per span.

    ``area`` is the loaded area A (m^2 in SI, ft^2 in US); ``psi0`` the case's
    psi_0 (EN 1990 Table A1.1); ``category`` its use category.
    """
    a = np.asarray(area, dtype=float)
    if category not in EN_REDUCIBLE:
        return np.ones_like(a)
    a0 = EN_A0_M2 * (FT2_PER_M2 if system == "US" else 1.0)
    with np.errstate(divide="ignore"):
        alpha = np.minimum(5.0 / 7.0 * psi0 + a0 / a, 1.0)
    if category in ("C", "D"):
        alpha = np.maximum(alpha, EN_FLOOR_C_D)
    return alpha


def standard_of(strength: str) -> str:
    """The reduction rule that goes with a strength rule set: EN 1991-1-1 with the
    EN 1990 sets, ASCE 7-22 otherwise."""
    return "en1991-1-1" if strength.startswith("en1990") else "asce7-22"


def span_factors(beam: Beam) -> np.ndarray:
    """(n_cases, n_spans) factor on each case's loads on each span: 1.0 for cases
    without ``reduction``, else the rule of the case's ``standard`` (by default the one
    that goes with the strength rule set, :func:`standard_of`)."""
    from envelope.combinations import psi0

    n = beam.n_spans
    factors = np.ones((len(beam.cases), n))
    lengths = np.array([s.length for s in beam.spans])
    cantilever = np.array([not (beam.supports[j].restrains_vertical
                                and beam.supports[j + 1].restrains_vertical)
                           for j in range(n)])
    system = beam.units.name
    for i, case in enumerate(beam.cases):
        r = case.reduction
        if r is None:
            continue
        if any(ld.case == case.name and ld.is_moving for ld in beam.loads):
            # a concentrated load or a train (its case's only item) is not reduced:
            # ASCE 7-22 4.7.1 reduces the uniformly distributed Lo, EN 1991-1-1
            # 6.3.1.2(10) the qk; the factor stays 1.0 and the outputs say so
            continue
        area = lengths * r.tributary_width
        standard = r.standard or standard_of(beam.combinations.strength)
        if standard == "en1991-1-1":
            factors[i] = en1991_factor(area, psi0(case), case.category or "B", system)
            continue
        kll = np.where(cantilever, 1.0, r.kll if r.kll is not None else 1.0)
        intensity = _area_load(beam, case.name, n) / r.tributary_width
        factors[i] = asce7_factor(kll * area, r.floors, intensity, r.occupancy, system)
    return factors


def _area_load(beam: Beam, case: str, n: int) -> np.ndarray:
    """Largest distributed intensity (force/length) of a case on each span: its uniform
    and linear items summed where they overlap (two 60 psf items over one stretch are 120
    psf, heavy by ASCE 7-22 4.7.4).  The sum is linear between the items' ends, so its
    largest value is at one of them, from one side or the other."""
    peak = np.zeros(n)
    for j in range(n):
        items = [ld for ld in beam.loads if ld.case == case and ld.span == j
                 and ld.type in ("uniform", "linear") and ld.end > ld.start]
        for x in sorted({ld.start for ld in items} | {ld.end for ld in items}):
            for left in (True, False):
                total = 0.0
                for ld in items:
                    if (ld.start < x <= ld.end) if left else (ld.start <= x < ld.end):
                        t = (x - ld.start) / (ld.end - ld.start)
                        total += ld.w_start + (ld.w_end - ld.w_start) * t
                peak[j] = max(peak[j], total)
    return peak
