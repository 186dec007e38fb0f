"""Member sizing from the envelopes: one row per design section of every span.

:func:`size` returns the sizing.parquet columns as arrays in output units: lengths along
the beam m / ft, moments kN*m / kip*ft, forces kN / kip, deflections mm / in, section
quantities in section units (mm, mm^2, mm^3, mm^4, mm^2/mm / in, in^2, in^3, in^4,
in^2/in); :func:`size_with_units` also names the unit of every column.  Rows: for each span
``left`` (the left support face), ``span`` (the largest sagging moment), ``right``.

- concrete, ACI 318-19: :mod:`envelope.sizing.concrete_aci`;
- concrete, EN 1992-1-1: :mod:`envelope.sizing.concrete_en`;
- steel, AISC 360-22: :mod:`envelope.sizing.steel` (checks in
  :mod:`envelope.sizing.steel_checks`);
- concrete bars, stirrups, crack control and cracked, long-term and incremental
  deflections with their code limits: :mod:`envelope.sizing.detailing`;
- deflection limits of the analysed (gross) deflections: :mod:`envelope.sizing.deflection`
  (on span rows; for steel they are the check);
- hogging and sagging extents per span: :func:`extents` (on span rows).

``status`` is ``ok`` or every reason the row fails, each with the amount; ``note`` says
what governs.  Sizing is a first check for a licensed engineer, not a design.
"""

from __future__ import annotations

import numpy as np

from envelope.analysis import Analysis
from envelope.errors import CaseError
from envelope.sizing import deflection
from envelope.sizing.concrete import size_concrete
from envelope.sizing.detailing import detail
from envelope.sizing.extents import EXTENT_KEYS, extents
from envelope.sizing.layout import Sized
from envelope.sizing.redistributed import check as check_redistribution
from envelope.sizing.steel import model_inertia, size_steel

__all__ = ["extents", "size", "size_with_candidates", "size_with_units"]

#: Units of the columns that do not depend on the material (by quantity label key).
COLUMN_UNITS = {"x_span": "length", "x": "length", "moment_design": "moment",
                "shear_design": "force", "shear_x_span": "length",
                "deflection_live": "deflection", "deflection_total": "deflection",
                "deflection_live_allowed": "deflection",
                "deflection_total_allowed": "deflection",
                **{k: "length" for k in EXTENT_KEYS}}

def concrete_sized(analysis: Analysis) -> Sized:
    """A concrete beam's sections, bars and deflections, and its moment redistribution
    checked (:mod:`envelope.sizing.redistributed`)."""
    return check_redistribution(analysis, detail(analysis, size_concrete(analysis)))


def size(analysis: Analysis) -> dict[str, np.ndarray]:
    """The sizing.parquet columns (see the module docstring); the beam must have a
    ``[design]`` table.  Raises :class:`envelope.errors.CaseError` for a sections table
    that cannot be read."""
    return size_with_units(analysis)[0]


def size_with_units(analysis: Analysis) -> tuple[dict[str, np.ndarray], dict[str, str]]:
    """:func:`size`, and the unit of each column that has one (column -> unit text)."""
    out, units, _ = size_with_candidates(analysis)
    return out, units


def size_with_candidates(analysis: Analysis
                         ) -> tuple[dict[str, np.ndarray], dict[str, str], tuple[str, ...]]:
    """:func:`size_with_units`, and for steel with a sections table one line per section
    (lightest first, up to the one chosen) saying what rejects it."""
    beam = analysis.beam
    design = beam.design
    if design is None:
        raise ValueError(f"{beam.source}: no [design] table, nothing to size")
    if analysis.station_envelopes["moment"] is None:
        raise CaseError(beam.source, "design", "member sizing needs strength combinations, "
                                               "and [combinations] gives none")
    d = analysis.design_actions
    limits = deflection.limits(design)
    ell = deflection.ratio_lengths(beam)
    live, total = d["deflection_live"], d["deflection_max"]
    defl = deflection.check(ell, live, total, limits["live"], limits["total"])
    factor = beam.units.deflection_factor
    sized = size_steel(analysis, defl) if design.material == "steel" else \
        concrete_sized(analysis)
    rows = sized.rows
    n = rows.n
    mid = rows.is_span
    if np.all(np.isnan(total)):
        for i in np.flatnonzero(mid):
            sized.notes[i].append("no service combinations: total-load deflection not "
                                  "checked (live-load deflection is)")
    if design.material == "steel":
        # the analysed deflections (made with the [section] I) rescaled to the chosen
        # section's Ix, as its deflection check takes them
        scale = model_inertia(analysis) / np.asarray(sized.columns["Ix"], float)[mid]
        live, total = live * scale, total * scale
    by_span = {"deflection_live": live * factor, "deflection_total": total * factor,
               "deflection_live_allowed": defl["allowed_live"] * factor,
               "deflection_total_allowed": defl["allowed_total"] * factor,
               **extents(analysis)}
    on_span = {k: np.where(mid, np.repeat(v, 3), np.nan) for k, v in by_span.items()}
    out: dict[str, np.ndarray] = {
        "beam": np.full(n, beam.id, dtype=object),
        "span": rows.span + 1,
        "section": rows.section,
        "x_span": rows.x_span,
        "x": beam.geometry.joint_x[rows.span] + rows.x_span,
        "moment_design": rows.moment,
        "shear_design": rows.shear,
        "shear_x_span": rows.shear_x_span,
        **sized.columns,
        **on_span,
        "note": np.array(["; ".join(v) for v in sized.notes], dtype=object),
        "status": np.array(["; ".join(v) if v else "ok" for v in sized.failures],
                           dtype=object),
    }
    labels = beam.units.labels
    units = {k: labels[q] for k, q in COLUMN_UNITS.items()}
    units.update(sized.units)
    return out, {k: units[k] for k in out if k in units}, sized.candidates
