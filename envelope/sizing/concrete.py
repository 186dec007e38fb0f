"""Sizing columns of a reinforced concrete beam (ACI 318-19 or EN 1992-1-1).

Turns the design rows (:mod:`envelope.sizing.layout`) and the ``[design]`` table into
arrays in output units: areas mm^2 / in^2, depths mm / in, Av/s mm^2/mm / in^2/in,
moments kN*m / kip*ft, forces kN / kip.  Each row gets ``notes`` (what governs) and
``failures`` (what fails and by how much); :mod:`envelope.sizing` joins them into the
``note`` and ``status`` columns.

Tension steel for shear (rho_w, rho_l) at an end is the design steel of that face where
it hogs; where it does not (a pinned end), a quarter of the span's design bottom steel,
the least that reaches a support (ACI 318-19 9.7.3.8.1; EN 1992-1-1 9.2.1.4(1) with the
recommended beta_2 = 0.25), so that the shear strength of the concrete is not overstated.
"""

from __future__ import annotations

import numpy as np

from envelope.analysis import Analysis
from envelope.design import ConcreteDesign
from envelope.sizing import concrete_aci as aci
from envelope.sizing import concrete_en as en
from envelope.sizing import depths, doubly
from envelope.sizing.layout import (
    ACI_SCALES,
    EN_SCALES,
    FACE_REASONS,
    SECTION_UNITS,
    Rows,
    Sized,
    design_rows,
    section_to_consistent,
)
from envelope.sizing.seats import fixed_end_floor, seat_rows


def _pct(demand: float, capacity: float) -> str:
    return f"{100.0 * (demand / capacity - 1.0):.1f}%"


def _fmt(v: float) -> str:
    return f"{v:.4g}" if abs(v) < 1e4 else f"{v:.4e}"


def _end_steel(rows: Rows, as_des: np.ndarray) -> np.ndarray:
    """Tension steel for shear at each row (see the module docstring); NaN on span rows."""
    span_steel = np.repeat(as_des[rows.is_span], 3)
    steel = np.where(as_des > 0, as_des, aci.BOTTOM_BARS_AT_END * span_steel)
    return np.where(rows.is_end, np.nan_to_num(steel), np.nan)


def min_steel_width(analysis: Analysis, rows: Rows, h: np.ndarray | None = None
                    ) -> np.ndarray:
    """Width for the minimum tension steel at each row (section units): the web, except
    where a T-beam's flange is in tension (hogging rows): ACI 318-19 9.6.1.2 takes the
    lesser of bf and 2 bw in a statically determinate member (a cantilever), the web in
    a continuous one; EN 1992-1-1 9.2.1.1(1) takes bt, the mean width of the tension
    zone, here of the gross section above its centroid (of depth ``h`` per row, the
    ``[design]`` h where None)."""
    design = analysis.beam.design
    assert isinstance(design, ConcreteDesign)  # sized as concrete: [design] says so
    b = float(design.b)
    out = np.full(rows.n, b)
    if design.flange_width is None or design.flange_depth is None:
        return out
    bf, hf = float(design.flange_width), float(design.flange_depth)
    h = np.full(rows.n, float(design.h)) if h is None else np.asarray(h, dtype=float)
    hog = rows.is_end
    if design.code == "aci318-19":
        beam = analysis.beam
        n = beam.n_spans
        cantilever = np.zeros(n, dtype=bool)
        if n and not beam.supports[0].restrains_vertical:
            cantilever[0] = True
        if n and not beam.supports[-1].restrains_vertical:
            cantilever[-1] = True
        return np.where(hog & cantilever[rows.span], min(bf, 2.0 * b), out)
    area = b * h + (bf - b) * hf
    y_top = (b * h * h / 2.0 + (bf - b) * hf * hf / 2.0) / area
    mean = np.where(y_top > hf, (bf * hf + b * np.maximum(y_top - hf, 0.0)) / y_top, bf)
    return np.where(hog, mean, out)


def size_concrete(analysis: Analysis) -> Sized:
    """Columns, units, notes and failures of every design row of a concrete beam."""
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    b = float(design.b)
    cover = float(design.cover_to_bar_centre)
    geo = beam.geometry
    n = beam.n_spans
    faces = np.c_[geo.face_left, np.full(n, np.nan), geo.face_right].ravel()
    d_faces = depths.depth_at(beam, np.repeat(np.arange(n), 3), faces) - cover
    rows = design_rows(analysis, at_faces=True,
                       shear_shift=d_faces * section_to_consistent(beam))
    rows, seat_notes = seat_rows(analysis, rows)
    if design.code == "en1992-1-1":
        rows, floor_notes = fixed_end_floor(analysis, rows)
        seat_notes += floor_notes
    sag = rows.is_span & design.is_tee
    bf = np.where(sag, float(design.flange_width if design.flange_width is not None else b), b)
    hf = np.where(sag, float(design.flange_depth or 0.0), 0.0)
    notes: list[list[str]] = [[] for _ in range(rows.n)]
    for i, text in seat_notes:
        notes[i].append(text)
    failures: list[list[str]] = [[] for _ in range(rows.n)]
    for i in range(rows.n):
        if rows.moment[i] == 0.0:
            kind = "sagging moment in this span" if rows.is_span[i] else \
                "hogging moment at this face"
            notes[i].append(f"no {kind}: no tension steel required")
    h = depths.depth_at(beam, rows.span, rows.x_span)
    d = h - cover
    for i in np.flatnonzero(h != float(design.h)).tolist():
        notes[i].append(f"designed with the depth of its stretch, h = {h[i]:.4g} "
                        f"{SECTION_UNITS[beam.units.name]['length']}")
    if design.code == "aci318-19":
        cols, units = _aci(analysis, rows, b, d, bf, hf, notes, failures, h)
    else:
        cols, units = _en(analysis, rows, b, h, d, bf, hf, notes, failures)
    for i, why in enumerate(rows.face_reason):
        if why:
            notes[i].append(f"shear taken at the face: {FACE_REASONS[why]}")
    su = SECTION_UNITS[beam.units.name]
    # b: the web, or the flange where a flange carries the compression (the width the
    # flexure used; ``_en`` gives its own where its T-section falls back to the web)
    base = {"b": bf.astype(float), "h": h, "d": d}
    units.update({k: su["length"] for k in base})
    return Sized(rows, {**base, **cols}, units, notes, failures)


def _aci(analysis: Analysis, rows: Rows, b: float, d: np.ndarray, bf: np.ndarray,
         hf: np.ndarray, notes: list[list[str]], failures: list[list[str]], h: np.ndarray
         ) -> tuple[dict[str, np.ndarray], dict[str, str]]:
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    system = beam.units.name
    s = ACI_SCALES[system]
    u = beam.units.labels
    su = SECTION_UNITS[system]
    fc, fy = float(design.fc) * s.stress, float(design.fy) * s.stress
    fyt = float(design.stirrup_strength) * s.stress
    mu = np.abs(rows.moment) * s.moment
    fl = aci.flexure(mu, b, d, fc, fy, system, bf, hf)
    d2 = float(design.cover_to_bar_centre)
    dbl = doubly.aci_design(mu, b, d, d2, fc, fy, system, bf, hf)
    two = fl["too_small"] & dbl["ok"]
    as_req = np.where(two, dbl["as_required"], fl["as_required"])
    as_comp = np.where(two, dbl["as_compression"], 0.0)
    bt = min_steel_width(analysis, rows, h)
    as_min = np.where(rows.moment != 0.0, aci.as_min(bt, d, fc, fy, system), 0.0)
    as_des = aci.as_design(as_req, as_min)
    cap = aci.capacity(np.nan_to_num(as_des), b, d, fc, fy, system, bf, hf)
    cap2 = doubly.aci_capacity(np.nan_to_num(as_des), as_comp, b, d, d2, fc, fy, system,
                               bf, hf)
    cap = {k: np.where(two, cap2[k], v) if k in cap2 else v for k, v in cap.items()}
    as_max = np.where(two, doubly.aci_as_max(as_comp, b, d, d2, fc, fy, system, bf, hf),
                      fl["as_max"])
    too_small = fl["too_small"] & ~dbl["ok"]
    phi_mn = np.where(too_small, fl["phi_mn_max"], cap["phi_mn"]) / s.moment

    for i in range(rows.n):
        if too_small[i]:
            failures[i].append(
                f"section too small: Mu = {mu[i] / s.moment:.1f} {u['moment']} exceeds the "
                f"largest singly reinforced phiMn = {phi_mn[i]:.1f} {u['moment']} with "
                f"eps_t >= 0.004 (ACI 318-19 9.3.3.1) by {_pct(mu[i], fl['phi_mn_max'][i])}"
                f", and compression steel cannot help (at or below the neutral axis at the "
                f"tension-controlled limit); deepen or widen the section, or raise f'c")
            continue
        if two[i]:
            notes[i].append(
                f"doubly reinforced: compression steel {_fmt(as_comp[i])} "
                f"{SECTION_UNITS[system]['area']} at fs' = "
                f"{dbl['fs_prime'][i] / s.stress:.4g} {SECTION_UNITS[system]['stress']} by "
                f"strain compatibility (ACI 318-19 22.2.1.2), the neutral axis at the "
                f"tension-controlled limit (Table 21.2.2)")
        if rows.moment[i] == 0.0:
            continue
        if as_min[i] > fl["as_required"][i]:
            if as_des[i] >= as_min[i]:
                notes[i].append("minimum steel governs (ACI 318-19 9.6.1.2)")
            else:
                notes[i].append("4/3 of the required steel governs, below the 9.6.1.2 "
                                "minimum (ACI 318-19 9.6.1.3)")
        if cap["phi"][i] < aci.PHI_TENSION_CONTROLLED - 1e-9:
            notes[i].append(f"transition zone: phi = {cap['phi'][i]:.3f} "
                            f"(ACI 318-19 Table 21.2.2)")
        if rows.is_span[i] and bf[i] > b:
            where = "within" if cap["block_in_flange"][i] else "below"
            notes[i].append(f"T-section: stress block {where} the flange")

    ends = rows.is_end
    steel = _end_steel(rows, np.nan_to_num(as_des))
    vu = np.where(ends, rows.shear, 0.0) * s.force
    sh = aci.shear(vu, b, d, fc, fyt, steel / (b * d), system)
    for i in np.flatnonzero(ends).tolist():
        if sh["too_small"][i]:
            limit = aci.PHI_SHEAR * (sh["vc"][i] + sh["vs_limit"][i]) / s.force
            failures[i].append(
                f"section too small for shear: Vu = {rows.shear[i]:.1f} {u['force']} "
                f"exceeds phi(Vc + Vs,max) = {limit:.1f} {u['force']} (ACI 318-19 22.5.1.2) "
                f"by {_pct(rows.shear[i], limit)}; widen or deepen the section")
        elif not sh["needs_stirrups"][i]:
            notes[i].append("no stirrups needed: Vu <= phi Vc without them (Table "
                            "22.5.5.1(c)) and Vu <= phi lambda sqrt(f'c) bw d (ACI 318-19 "
                            "9.6.3.1)")
        elif sh["av_over_s_required"][i] <= sh["av_over_s_min"][i]:
            notes[i].append("minimum stirrups govern (ACI 318-19 Table 9.6.3.4)")
        if sh["tight"][i] and not sh["too_small"][i]:
            notes[i].append("stirrup spacing limits halved: Vs > 4 sqrt(f'c) bw d "
                            "(ACI 318-19 9.7.6.2.2)")
    end_only = np.where(ends, 1.0, np.nan)
    return {
        "beta1": fl["beta1"],
        "a": np.where(too_small, np.nan, cap["a"]),
        "as_required": as_req, "as_min": as_min, "as_max": as_max,
        "as_design": as_des, "as_compression": np.where(too_small, np.nan, as_comp),
        "phi": np.where(too_small, np.nan, cap["phi"]),
        "eps_t": np.where(too_small, np.nan, cap["eps_t"]),
        "phiMn": phi_mn,
        "Vc": sh["vc"] / s.force * end_only,
        "phiVc": aci.PHI_SHEAR * sh["vc"] / s.force * end_only,
        "av_over_s_min": sh["av_over_s_min"] * end_only,
        "av_over_s_required": sh["av_over_s_required"] * end_only,
        "s_max": sh["s_max"] * end_only,
    }, {"a": su["length"], "as_required": su["area"], "as_min": su["area"],
        "as_compression": su["area"],
        "as_max": su["area"], "as_design": su["area"], "phiMn": u["moment"],
        "Vc": u["force"], "phiVc": u["force"], "av_over_s_min": su["area_per_length"],
        "av_over_s_required": su["area_per_length"], "s_max": su["length"]}


def _en(analysis: Analysis, rows: Rows, b: float, h: np.ndarray, d: np.ndarray,
        bf: np.ndarray,
        hf: np.ndarray, notes: list[list[str]], failures: list[list[str]]
        ) -> tuple[dict[str, np.ndarray], dict[str, str]]:
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    system = beam.units.name
    s = EN_SCALES[system]
    u = beam.units.labels
    su = SECTION_UNITS[system]
    L = s.length
    fck, fyk = float(design.fc) * s.stress, float(design.fy) * s.stress
    fywk = float(design.stirrup_strength) * s.stress
    m = np.abs(rows.moment) * s.moment
    bm, dm, hm = b * L, d * L, h * L
    outside = en.outside_scope(fck)
    if outside:
        for i in range(rows.n):
            failures[i].append(outside)
    # T-section: the flange width where the block (depth 0.8x) stays in the flange,
    # else the web alone (on the safe side: the rectangular method does not cover it)
    width = bf * L
    fl = en.flexure(m, width, dm, fck, fyk)
    inside = 0.8 * fl["x"] <= hf * L
    use_web = (bf > b) & ~inside
    width = np.where(use_web, bm, width)
    fl = en.flexure(m, width, dm, fck, fyk)
    bt = min_steel_width(analysis, rows, h) * L
    as_min = np.where(rows.moment != 0.0, en.as_min(bt, dm, fck, fyk), 0.0)
    d2 = float(design.cover_to_bar_centre) * L
    dbl = doubly.en_design(m, width, dm, d2, fck, fyk, hm)
    two = fl["too_small"] & dbl["ok"]
    as_req = np.where(two, dbl["as_required"], fl["as_required"])
    as_comp = np.where(two, dbl["as_compression"], 0.0)
    as_des = np.where(as_req > 0, np.maximum(as_req, as_min),
                      np.where(as_req == 0, 0.0, np.nan))
    res = en.resistance(np.nan_to_num(as_des), width, dm, fck, fyk)
    # doubly: the block at its limit x and the compression steel at fsc
    res = {"m_rd": np.where(two, fl["m_lim"] + (as_des - fl["m_lim"] / (fyk / en.GAMMA_S
                                                                        * dbl["z"]))
                            * fyk / en.GAMMA_S * (dm - d2), res["m_rd"]),
           "eps_s": np.where(two, en.EPS_CU * (dm - dbl["x"]) / dbl["x"], res["eps_s"])}
    too_small = fl["too_small"] & ~dbl["ok"]
    as_max = np.broadcast_to(en.as_max(bm, hm), (rows.n,)).astype(float)
    for i in range(rows.n):
        if too_small[i]:
            why = ("the compression steel would lie at or below the neutral axis"
                   if dbl["over"][i] not in ("tension", "compression") else
                   f"the {dbl['over'][i]} steel it needs exceeds 0.04 Ac = "
                   f"{_fmt(dbl['as_max'][i] * s.area)} {su['area']} (EN 1992-1-1 "
                   f"9.2.1.1(3))")
            failures[i].append(
                f"section too small: K = {fl['K'][i]:.3f} exceeds K' = {en.K_LIM} by "
                f"{_pct(fl['K'][i], en.K_LIM)} (M = {m[i] / s.moment:.1f} {u['moment']} > "
                f"K' b d^2 fck = {fl['m_lim'][i] / s.moment:.1f} {u['moment']}) and "
                f"compression steel cannot make it work: {why}; deepen or widen the "
                f"section, or raise fck")
            continue
        if two[i]:
            notes[i].append(
                f"doubly reinforced: compression steel {_fmt(as_comp[i] * s.area)} "
                f"{su['area']} at fsc = {dbl['fsc'][i]:.0f} MPa, x at its limit "
                f"{dbl['x'][i] / dm[i]:.3f} d (EN 1992-1-1 5.5(4), delta = 1)")
        if rows.moment[i] == 0.0:
            continue
        if as_des[i] > as_max[i]:
            failures[i].append(
                f"tension steel {_fmt(as_des[i] * s.area)} {su['area']} exceeds 0.04 Ac = "
                f"{_fmt(as_max[i] * s.area)} {su['area']} (EN 1992-1-1 9.2.1.1(3)) by "
                f"{_pct(as_des[i], as_max[i])}")
        if as_min[i] > as_req[i]:
            notes[i].append("minimum steel governs (EN 1992-1-1 9.2.1.1(1))")
        if rows.is_span[i] and bf[i] > b:
            notes[i].append("T-section: stress block within the flange" if not use_web[i]
                            else "T-section: stress block below the flange, web alone used "
                                 "(rectangular method)")
    ends = rows.is_end
    steel = _end_steel(rows, np.nan_to_num(as_des))
    ved = np.where(ends, rows.shear, 0.0) * s.force
    sh = en.shear(ved, bm, dm, fck, fywk, steel / (bm * dm))
    for i in np.flatnonzero(ends).tolist():
        if sh["too_small"][i]:
            limit = sh["vrd_max"][i] / s.force
            failures[i].append(
                f"section too small for shear: VEd = {rows.shear[i]:.1f} {u['force']} "
                f"exceeds VRd,max = {limit:.1f} {u['force']} at cot(theta) = 1 (EN 1992-1-1 "
                f"6.2.3(3)) by {_pct(rows.shear[i], limit)}; widen or deepen the section")
        elif not sh["needs_calculated"][i]:
            notes[i].append("VEd <= VRd,c: minimum links only (EN 1992-1-1 9.2.2(5))")
        elif sh["av_over_s_required"][i] <= sh["av_over_s_min"][i]:
            notes[i].append("minimum links govern (EN 1992-1-1 9.2.2(5))")
    end_only = np.where(ends, 1.0, np.nan)
    ok = ~too_small
    return {
        "b": width / L,
        "K": fl["K"], "K_lim": np.full(rows.n, en.K_LIM),
        "z": np.where(ok & (rows.moment != 0.0), np.where(two, dbl["z"], fl["z"]),
                      np.nan) / L,
        "as_compression": np.where(ok, as_comp, np.nan) * s.area,
        "as_required": as_req * s.area, "as_min": as_min * s.area, "as_max": as_max * s.area,
        "as_design": as_des * s.area,
        "phi": np.full(rows.n, np.nan),
        "eps_t": np.where(ok, res["eps_s"], np.nan),
        "MRd": np.where(ok, res["m_rd"] / s.moment, np.nan),
        "VRdc": sh["vrdc"] / s.force * end_only,
        "cot_theta": sh["cot_theta"] * end_only,
        # mm^2/mm -> in^2/in is area / length: s.area * L
        "av_over_s_min": sh["av_over_s_min"] * s.area * L * end_only,
        "av_over_s_required": sh["av_over_s_required"] * s.area * L * end_only,
        "s_max": sh["s_max"] / L * end_only,
    }, {"z": su["length"], "as_required": su["area"], "as_min": su["area"],
        "as_compression": su["area"],
        "as_max": su["area"], "as_design": su["area"], "MRd": u["moment"],
        "VRdc": u["force"], "av_over_s_min": su["area_per_length"],
        "av_over_s_required": su["area_per_length"], "s_max": su["length"]}
