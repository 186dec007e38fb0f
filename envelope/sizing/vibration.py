"""Floor serviceability of a steel beam: walking vibration by AISC Design Guide 11 (2nd
edition, 2016) for the beam mode, and a camber suggestion.

Pure functions over numpy arrays.  Deflections in mm (SI) or in (US) with g in the same
length per s^2; weights and the walking force in kN (SI) or kip (US).

- Natural frequency from the deflection under the weight supported (DG11 Eq. 3-3, from
  memory): fn = 0.18 sqrt(g / delta).  For a simply supported beam under uniform load
  this is the closed form (pi/2) sqrt(E I g / (w L^4)) within 0.4%.
- Walking excitation (DG11 Eq. 4-1, from memory): ap/g = P0 exp(-0.35 fn) / (beta W),
  with P0 = 65 lb (0.29 kN), beta the damping ratio and W the effective weight of the
  panel; the tolerance for offices is ap/g <= 0.5% (DG11 Table 4-1, from memory).
- Camber: a stated fraction of the dead-load deflection; 0.8 and no camber below
  3/4 in (19 mm) are common practice.
"""

from __future__ import annotations

import numpy as np

#: Standard gravity in the deflection unit per s^2 (mm/s^2, in/s^2).
GRAVITY = {"SI": 9806.65, "US": 386.088583}
#: DG11 constant walking force P0: 65 lb = 0.29 kN (from memory).
WALKING_FORCE = {"SI": 0.29, "US": 0.065}
#: DG11 tolerance ap/g for offices and residences: 0.5 % (from memory).
OFFICE_TOLERANCE = 0.005
#: Common practice: camber about 80 % of the dead-load deflection.
CAMBER_FRACTION = 0.8
#: Common practice: no camber where the dead-load deflection is under 3/4 in (19 mm).
CAMBER_MINIMUM = {"SI": 19.0, "US": 0.75}


def natural_frequency(delta: np.ndarray | float, gravity: float) -> np.ndarray:
    """Beam-mode natural frequency in Hz, fn = 0.18 sqrt(g / delta) (DG11 Eq. 3-3);
    NaN where the deflection is not positive."""
    delta = np.asarray(delta, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(delta > 0.0, 0.18 * np.sqrt(gravity / delta), np.nan)


def walking_acceleration(fn: np.ndarray | float, damping: float,
                         weight: np.ndarray | float, walking_force: float) -> np.ndarray:
    """Peak acceleration ratio ap/g = P0 exp(-0.35 fn) / (beta W) (DG11 Eq. 4-1)."""
    return walking_force * np.exp(-0.35 * np.asarray(fn, dtype=float)) / (
        damping * np.asarray(weight, dtype=float))


def camber(dead_deflection: np.ndarray | float, fraction: float, minimum: float
           ) -> np.ndarray:
    """Suggested camber: ``fraction`` of the dead-load deflection, 0 where that
    deflection is under ``minimum`` (common practice)."""
    dead = np.asarray(dead_deflection, dtype=float)
    return np.where(dead >= minimum, fraction * dead, 0.0)
