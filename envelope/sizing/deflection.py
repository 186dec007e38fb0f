"""Deflection limits per span: span/limit under live load and under total service load.

Defaults are the common floor limits span/360 (live) and span/240 (total load), as in
IBC Table 1604.3 for floor members; ``[design] deflection_limits`` overrides either.  For
a cantilever span (an end span whose outer joint is free) the span in the ratio is twice
the overhang (footnote to IBC Table 1604.3).  Deflections are those of the analysis: the
section as given in ``[section]`` (for concrete, the gross section: no cracking, creep or
shrinkage).
"""

from __future__ import annotations

import numpy as np

from envelope.design import DeflectionLimits, Design
from envelope.model import Beam

DEFAULT_LIMITS = {"live": DeflectionLimits().live, "total": DeflectionLimits().total}


def limits(design: Design) -> dict[str, float]:
    """The live and total span/limit denominators (defaults filled in when read)."""
    given = design.deflection_limits
    return {"live": float(given.live), "total": float(given.total)}


def ratio_lengths(beam: Beam) -> np.ndarray:
    """The length each span's ratio is taken over (consistent units): the span, or twice
    it for a cantilever (an end span whose outer joint is free)."""
    out = np.array(beam.geometry.span_length)
    n = beam.n_spans
    if n and not beam.supports[0].is_restrained:
        out[0] *= 2.0
    if n and not beam.supports[-1].is_restrained:
        out[-1] *= 2.0
    return out


def check(ell: np.ndarray, live: np.ndarray, total: np.ndarray, limit_live: float,
          limit_total: float) -> dict[str, np.ndarray]:
    """Allowed deflections ell/limit and the utilisations (deflection / allowed), all in
    the units of ``ell``; ``utilisation`` is the larger of live and total (NaN where the
    deflection is unknown, e.g. no service set)."""
    allowed_live = ell / limit_live
    allowed_total = ell / limit_total
    u_live = np.asarray(live, float) / allowed_live
    u_total = np.asarray(total, float) / allowed_total
    return {"allowed_live": allowed_live, "allowed_total": allowed_total,
            "utilisation_live": u_live, "utilisation_total": u_total,
            "utilisation": np.fmax(u_live, u_total)}
