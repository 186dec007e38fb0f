"""The concrete depth h at any point of a beam: the ``h`` of the stretch there
(``[[spans.sections]]``), else the ``[design]`` h (section units, mm / in).

A haunch or a drop is given as stretches of constant depth; sizing designs each section
with the depth it has (flexure, shear, minimum steel, crack control, cracked stiffness).
Where a point is the common end of two stretches the shallower one is taken (the less
favourable for strength and stiffness).
"""

from __future__ import annotations

import numpy as np

from envelope.design import ConcreteDesign
from envelope.model import Beam


def _design(beam: Beam) -> ConcreteDesign:
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    return design


def span_profile(beam: Beam, span: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Starts, ends (consistent length, span-local) and depths (section units) of the
    stretches of ``span``."""
    h0 = float(_design(beam).h)
    st = beam.spans[span].stretches
    return (np.array([s.start for s in st], dtype=float),
            np.array([s.end for s in st], dtype=float),
            np.array([h0 if s.h is None else float(s.h) for s in st], dtype=float))


def depth_at(beam: Beam, span: np.ndarray, x_span: np.ndarray) -> np.ndarray:
    """The depth h at span-local points (consistent length; NaN: the shallowest of the
    span), in section units."""
    span = np.asarray(span, dtype=np.int64)
    x_span = np.asarray(x_span, dtype=float)
    out = np.empty(span.shape)
    for k, (j, x) in enumerate(zip(span.tolist(), x_span.tolist(), strict=True)):
        start, end, h = span_profile(beam, j)
        if not np.isfinite(x):
            out[k] = float(np.min(h))
            continue
        at = (start <= x) & (x <= end)
        out[k] = float(np.min(h[at])) if at.any() else float(np.min(h))
    return out


def varies(beam: Beam) -> bool:
    """True where some stretch gives its own h different from the ``[design]`` h."""
    h0 = float(_design(beam).h)
    return any(s.h is not None and s.h != h0 for sp in beam.spans for s in sp.stretches)
