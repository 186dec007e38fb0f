"""Sizing columns of a steel beam (AISC 360-22): required properties, the section used
(given, or the lightest passing one of the user's table) and its utilisations.

One section serves the whole beam (a continuous member): it must pass at every row.
Moments are taken at the support centrelines (no face reduction for steel) and shears at
the span ends.  Required Ix rescales the analysed deflections (made with the
``[section]`` I of each span) to the deflection limits: exact for a prismatic beam on
rigid supports, an estimate where spans differ in stiffness or supports are springs.
The analysis (self weight included) is not repeated with the chosen section.
"""

from __future__ import annotations

import numpy as np

from envelope.design import SteelDesign
from envelope.results import Analysis
from envelope.sizing import steel_aisc as aisc
from envelope.sizing.layout import AISC_SCALES, SECTION_UNITS, Sized, design_rows
from envelope.sizing.sections import read_sections


def _pct(ratio: float) -> str:
    return f"{100.0 * (ratio - 1.0):.1f}%"


def _g(v: float) -> str:
    return f"{v:.4g}"


def size_steel(analysis: Analysis, defl: dict[str, np.ndarray]) -> Sized:
    """Columns, units, notes and failures of every design row of a steel beam.

    ``defl`` is :func:`envelope.sizing.deflection.check` per span: ``utilisation``
    (analysed deflection over allowed, worse of live and total), ``utilisation_live``,
    ``utilisation_total``.
    """
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, SteelDesign)
    system = beam.units.name
    s = AISC_SCALES[system]
    su = SECTION_UNITS[system]
    u = beam.units.labels
    fy = float(design.Fy) * s.stress
    rows = design_rows(analysis, at_faces=False, shear_shift=None)
    n = rows.n
    ends, mid = rows.is_end, rows.is_span
    zx_req = aisc.zx_required(rows.moment * s.moment, fy)
    aw_req = np.where(ends, aisc.aw_required(np.nan_to_num(rows.shear) * s.force, fy), np.nan)
    to_section = beam.units.to_consistent("inertia")
    i_model = np.array([min(st.section.I for st in sp.stretches) for sp in beam.spans]
                       ) / to_section
    ratio = np.repeat(defl["utilisation"], 3)
    ix_req = np.where(mid, aisc.ix_required(np.repeat(i_model, 3), ratio), np.nan)

    need = (float(np.nanmax(zx_req)), float(np.nanmax(np.r_[aw_req, 0.0])),
            float(np.nanmax(np.r_[ix_req, 0.0])))
    notes: list[list[str]] = [[] for _ in range(n)]
    failures: list[list[str]] = [[] for _ in range(n)]
    wanted = (f"Zx >= {_g(need[0])} {su['modulus']}, Aw >= {_g(need[1])} {su['area']}, "
              f"Ix >= {_g(need[2])} {su['inertia']}")
    if design.section is not None:
        given = design.section
        name = given.name
        Zx, Aw, Ix = float(given.Zx), float(given.Aw), float(given.Ix)
        source = "given section"
    else:
        table = read_sections(beam)
        csv_name = str(design.sections)
        k = aisc.lightest_passing(table.Zx, table.Aw, table.Ix, table.weight, *need)
        source = f"lightest passing section of {csv_name}"
        if k is None:
            k = aisc.least_utilised(table.Zx, table.Aw, table.Ix, *need)
            for i in range(n):
                failures[i].append(f"no section in {csv_name} passes (needs {wanted}); "
                                   f"the closest, {table.name[k]}, is checked here")
            source = f"closest section of {csv_name} (none passes)"
        name = table.name[k]
        Zx, Aw, Ix = float(table.Zx[k]), float(table.Aw[k]), float(table.Ix[k])

    u_m = aisc.utilisation(zx_req, Zx)
    u_v = aisc.utilisation(aw_req, Aw)
    u_d = np.where(mid, aisc.utilisation(ix_req, Ix), np.nan)
    phi_mn = aisc.PHI_B * fy * Zx / s.moment
    phi_vn = aisc.PHI_V * 0.6 * fy * Aw * aisc.CV1 / s.force
    u_live = np.repeat(defl["utilisation_live"], 3) * np.repeat(i_model, 3) / Ix
    u_total = np.repeat(defl["utilisation_total"], 3) * np.repeat(i_model, 3) / Ix
    for i in range(n):
        notes[i].append(source)
        if u_m[i] > 1.0:
            failures[i].append(
                f"moment: Mu = {abs(rows.moment[i]):.1f} {u['moment']} exceeds phi_b Mp = "
                f"0.90 Fy Zx = {phi_mn:.1f} {u['moment']} (AISC 360-22 F2.1) by "
                f"{_pct(u_m[i])}; needs Zx >= {_g(zx_req[i])} {su['modulus']}")
        if ends[i] and u_v[i] > 1.0:
            failures[i].append(
                f"shear: Vu = {rows.shear[i]:.1f} {u['force']} exceeds phi_v Vn = 0.90 * 0.6 "
                f"Fy Aw = {phi_vn:.1f} {u['force']} (AISC 360-22 G2.1) by {_pct(u_v[i])}; "
                f"needs Aw >= {_g(aw_req[i])} {su['area']}")
        if mid[i] and u_d[i] > 1.0:
            which = "live-load" if u_live[i] >= u_total[i] else "total-load"
            failures[i].append(
                f"deflection: with Ix = {_g(Ix)} {su['inertia']} the {which} deflection is "
                f"{_pct(u_d[i])} over its limit; needs Ix >= {_g(ix_req[i])} "
                f"{su['inertia']}")
    cols = {
        "zx_required": zx_req, "aw_required": aw_req, "ix_required": ix_req,
        "steel_section": np.full(n, name, dtype=object),
        "Zx": np.full(n, Zx), "Aw": np.full(n, Aw), "Ix": np.full(n, Ix),
        "phiMn": np.full(n, phi_mn), "phiVn": np.where(ends, phi_vn, np.nan),
        "utilisation_moment": u_m, "utilisation_shear": u_v,
        "utilisation_deflection": u_d,
    }
    units = {"zx_required": su["modulus"], "aw_required": su["area"],
             "ix_required": su["inertia"], "Zx": su["modulus"], "Aw": su["area"],
             "Ix": su["inertia"], "phiMn": u["moment"], "phiVn": u["force"]}
    return Sized(rows, cols, units, notes, failures)
