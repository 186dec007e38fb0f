"""Every check of a steel beam for every section of a table at once (AISC 360-22, LRFD;
AISC Design Guide 11), as utilisations per design row (3 per span) and section.

Non-linear checks come after the envelope: the strength envelope gives the demands at
the design rows; the moments of each unbraced segment for the cases that govern it come
from :mod:`envelope.sizing.unbraced` once, for all sections.  Then every capacity is an
array operation over (rows or segments) x sections.

Rows: ``left`` and ``right`` carry the hogging checks (the bottom flange's segments in
the left or right half of the span, the support moment), the shear at the span end and
the bearing checks at that support (J10.2, J10.3); ``span`` carries the sagging checks
(the top flange's segments), the point loads of the span (J10.2, J10.3 under the load),
the deflection, the vibration and the camber.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from envelope import config
from envelope.analysis import Analysis
from envelope.enveloper import reduce
from envelope.moving import moving_loads
from envelope.recovery import evaluate_some, make_points
from envelope.sizing import ltb, vibration, web
from envelope.sizing.bracing import BracingSpec, Segments, segments
from envelope.sizing.layout import Rows, section_to_consistent
from envelope.sizing.shapes import Shapes
from envelope.sizing.unbraced import SegmentDemand, segment_demands
from envelope.solved import case_responses

#: DG11: walking is checked only where fn >= 3 Hz is met as well (from memory).
MIN_FREQUENCY = 3.0


@dataclass(frozen=True, slots=True)
class Vibration:
    """DG11 walking check inputs (consistent units: kN, m / kip, ft)."""

    damping: float
    live: float            # actual live load, force per area
    spacing: float         # beam spacing: turns the area load into a line load
    effective_width: float  # B of the effective weight W = w B L
    tolerance: float


@dataclass(frozen=True, slots=True)
class SteelInput:
    """The steel design values sizing needs (section units: mm, MPa / in, ksi)."""

    Fy: float
    E: float
    top: BracingSpec
    bottom: BracingSpec
    bracing_given: bool
    bearing_length: float | None   # of point loads, section units; None: not given
    camber_fraction: float
    vibration: Vibration | None


@dataclass(frozen=True, slots=True)
class Checks:
    """Utilisations (rows x sections; NaN where a check does not apply to the row or
    cannot be made) and what governs them."""

    segs: Segments
    demand: SegmentDemand | None
    moment: np.ndarray
    phi_mn: np.ndarray        # capacity of the governing moment check, consistent units
    lb: np.ndarray            # governing segment's length, consistent (0: braced)
    cb: np.ndarray
    segment: np.ndarray       # int: governing segment (-1: the section check governs)
    moment_segment: np.ndarray  # demand of the governing segment (consistent, >= 0)
    ltb_checked: bool
    shear: np.ndarray
    phi_vn: np.ndarray
    bearing: np.ndarray       # J10.2 / J10.3 at the support (end rows) or point loads
    bearing_force: np.ndarray  # Ru (consistent force)
    bearing_rn: np.ndarray    # phi Rn of the governing limit state (consistent force)
    bearing_kind: np.ndarray  # int: 0 web local yielding, 1 web crippling
    bearing_lb: np.ndarray    # length of bearing used (section units)
    deflection: np.ndarray
    frequency: np.ndarray
    acceleration: np.ndarray  # ap/g
    vibration: np.ndarray     # ap/g over the tolerance, or > 1 where fn < 3 Hz
    camber: np.ndarray        # deflection units
    dead_deflection: np.ndarray


def _rows_of_segments(beam_joint_x: np.ndarray, segs: Segments, n_spans: int
                      ) -> list[list[int]]:
    """Per design row (3 per span) the segments whose demand it carries."""
    out: list[list[int]] = [[] for _ in range(3 * n_spans)]
    for s in range(segs.n):
        for j in range(n_spans):
            a, b = beam_joint_x[j], beam_joint_x[j + 1]
            if not (segs.x0[s] < b and segs.x1[s] > a):
                continue
            mid = 0.5 * (a + b)
            if segs.flange[s] == "top":
                out[3 * j + 1].append(s)
            else:
                if segs.x0[s] < mid:
                    out[3 * j].append(s)
                if segs.x1[s] > mid:
                    out[3 * j + 2].append(s)
    return out


def _flexure(analysis: Analysis, rows: Rows, shapes: Shapes, inp: SteelInput,
             scale_m: float, to_cons: float) -> dict[str, np.ndarray | bool | object]:
    beam = analysis.beam
    joint_x = np.asarray(beam.joint_x)
    restrained = np.array([s.restrains_vertical for s in beam.supports])
    segs = segments(joint_x, restrained, inp.top, inp.bottom)
    n_r, n_s = rows.n, shapes.n
    E, Fy = inp.E, inp.Fy
    mp = Fy * shapes.Zx
    if shapes.full:
        m_local = np.minimum(mp, ltb.mn_flb(shapes.bf, shapes.tf, shapes.h, shapes.tw,
                                            shapes.Zx, shapes.Sx, E, Fy, shapes.rolled))
    else:
        m_local = mp
    phi_local = ltb.PHI_B * m_local / scale_m          # consistent units, per shape
    mu_row = np.abs(rows.moment)[:, None]
    u_local = mu_row / phi_local[None, :]
    moment = u_local.copy()
    phi_mn = np.broadcast_to(phi_local, (n_r, n_s)).copy()
    lb = np.zeros((n_r, n_s))
    cb = np.full((n_r, n_s), np.nan)
    seg_of = np.full((n_r, n_s), -1, dtype=np.int64)
    m_seg = np.full((n_r, n_s), np.nan)
    demand = None
    if shapes.full and segs.n:
        demand = segment_demands(analysis.solved, analysis.stations, segs)
        lb_sec = segs.length / to_cons                   # section units
        # (segments, cases, shapes)
        mn = ltb.mn_ltb(lb_sec[:, None, None], demand.cb[:, :, None], shapes.Zx, shapes.Sx,
                        shapes.ry, shapes.rts, shapes.J, shapes.ho, E, Fy)
        phi = ltb.PHI_B * np.minimum(mn, m_local) / scale_m
        util = demand.mu[:, :, None] / phi
        c_gov = np.argmax(util, axis=1)                  # (segments, shapes)
        u_seg = np.take_along_axis(util, c_gov[:, None, :], axis=1)[:, 0, :]
        phi_seg = np.take_along_axis(phi, c_gov[:, None, :], axis=1)[:, 0, :]
        cb_seg = np.take_along_axis(np.broadcast_to(demand.cb[:, :, None], util.shape),
                                    c_gov[:, None, :], axis=1)[:, 0, :]
        mu_seg = np.take_along_axis(np.broadcast_to(demand.mu[:, :, None], util.shape),
                                    c_gov[:, None, :], axis=1)[:, 0, :]
        for r, members in enumerate(_rows_of_segments(joint_x, segs, beam.n_spans)):
            if not members:
                continue
            m = np.array(members)
            k = m[np.argmax(u_seg[m], axis=0)]           # governing segment per shape
            cols = np.arange(n_s)
            seg_of[r] = k
            lb[r] = segs.length[k]
            cb[r] = cb_seg[k, cols]
            m_seg[r] = mu_seg[k, cols]
            worse = u_seg[k, cols] > u_local[r]
            moment[r] = np.where(worse, u_seg[k, cols], u_local[r])
            phi_mn[r] = np.where(worse, phi_seg[k, cols], phi_local)
    return {"segs": segs, "demand": demand, "moment": moment, "phi_mn": phi_mn, "lb": lb,
            "cb": cb, "segment": seg_of, "moment_segment": m_seg,
            "ltb_checked": bool(shapes.full)}


def _bearing(analysis: Analysis, rows: Rows, shapes: Shapes, inp: SteelInput,
             to_cons: float, scale_f: float) -> dict[str, np.ndarray]:
    """J10.2 and J10.3 at the supports (end rows) and under point loads (span rows)."""
    beam = analysis.beam
    n_r, n_s = rows.n, shapes.n
    out = {k: np.full((n_r, n_s), np.nan) for k in ("bearing", "rn", "lb")}
    out["force"] = np.full((n_r, n_s), np.nan)
    out["kind"] = np.zeros((n_r, n_s), dtype=np.int64)
    if not shapes.full:
        return out
    joint_x = np.asarray(beam.joint_x)
    total = float(joint_x[-1] - joint_x[0])
    E, Fy = inp.E, inp.Fy

    def check(r: int, ru: float, lb_sec: float, from_end_sec: float) -> None:
        wly = web.PHI_WLY * web.web_local_yielding(shapes.tw, shapes.k, lb_sec, shapes.d,
                                                   from_end_sec, Fy) / scale_f
        wc = web.PHI_WC * web.web_crippling(shapes.tw, shapes.tf, lb_sec, shapes.d,
                                            from_end_sec, E, Fy) / scale_f
        rn = np.minimum(wly, wc)
        u = ru / rn
        better = ~(u <= out["bearing"][r])  # NaN compares False: the first value wins
        out["bearing"][r] = np.where(better, u, out["bearing"][r])
        out["rn"][r] = np.where(better, rn, out["rn"][r])
        out["kind"][r] = np.where(better, (wc < wly).astype(np.int64), out["kind"][r])
        out["force"][r] = np.where(better, ru, out["force"][r])
        out["lb"][r] = np.where(better, lb_sec, out["lb"][r])

    env = analysis.reaction_envelopes["reaction"]
    if env is not None:
        for k, joint in enumerate(analysis.support_joints):
            ru = max(float(env.max[k]), 0.0)
            sup = beam.supports[int(joint)]
            x = joint_x[int(joint)] - joint_x[0]
            from_end = min(x, total - x) / to_cons
            lb_sec = sup.width / to_cons
            for r in (3 * int(joint) - 1, 3 * int(joint)):   # right of the span before,
                if 0 <= r < n_r and rows.section[r] != "span":  # left of the span after
                    check(r, ru, lb_sec, from_end)
    points = sorted({(ld.span, ld.at) for ld in beam.loads if ld.type == "point"})
    length = [s.length for s in beam.spans]
    points = [(j, a) for j, a in points
              if config.ZERO_RTOL * length[j] < a < length[j] * (1 - config.ZERO_RTOL)]
    if points:
        span = np.array([p[0] for p in points] * 2)
        xs = np.array([p[1] for p in points] * 2)
        side = np.r_[np.zeros(len(points), bool), np.ones(len(points), bool)]
        pts = make_points(beam, span, xs, side)
        solved = analysis.solved
        v = evaluate_some(solved.mesh, solved.unit_cases, solved.solution, pts, ("shear",))
        jump = v["shear"][:len(points)] - v["shear"][len(points):]  # downward force
        if not solved.strength.is_empty:
            ext = reduce(jump, solved.strength, labels=False)
            lb_sec = inp.bearing_length or 0.0
            for i, (j, a) in enumerate(points):
                ru = max(float(ext.max[i]), 0.0)
                x = joint_x[j] + a - joint_x[0]
                check(3 * j + 1, ru, lb_sec, min(x, total - x) / to_cons)
    _moving_bearing(analysis, inp, to_cons, check)
    return out


def _moving_bearing(analysis: Analysis, inp: SteelInput, to_cons: float,
                    check: Callable[[int, float, float, float], None]) -> None:
    """J10.2 and J10.3 under the loads of each moving case on each span it runs on: the
    largest factored load of the case (its largest factor in the strength set) plus the
    largest factored fixed point load of the span (the moving load may stand on it),
    nearest the beam's end that the span reaches (0 on an end span)."""
    beam = analysis.beam
    combos = analysis.solved.strength.combinations
    loads = moving_loads(beam)
    if not loads or not combos:
        return
    joint_x = np.asarray(beam.joint_x) - beam.joint_x[0]
    total = float(joint_x[-1])
    point_max = np.zeros(beam.n_spans)
    for ld in beam.loads:
        if ld.type == "point":
            f = max((c.factor(ld.case) for c in combos), default=0.0)
            point_max[ld.span] = max(point_max[ld.span], f * ld.P)
    lb_sec = inp.bearing_length or 0.0
    for ld in loads:
        f = max(c.factor(ld.case) for c in combos)
        if f <= 0.0:
            continue
        p = max(a[0] for a in ld.axles)
        for j in ld.moving_spans:
            from_end = min(float(joint_x[j]), total - float(joint_x[j + 1]))
            check(3 * j + 1, f * p + point_max[j], lb_sec, from_end / to_cons)


def _serviceability(analysis: Analysis, rows: Rows, shapes: Shapes, inp: SteelInput,
                    defl: dict[str, np.ndarray], i_model: np.ndarray, units_factor: float,
                    system: str) -> dict[str, np.ndarray]:
    """Deflection (rescaled to each section's Ix), camber and DG11 walking vibration."""
    beam = analysis.beam
    n = beam.n_spans
    n_r, n_s = rows.n, shapes.n
    mid = np.arange(n) * 3 + 1
    scale_i = i_model[:, None] / shapes.Ix[None, :]          # spans x shapes
    out = {k: np.full((n_r, n_s), np.nan) for k in
           ("deflection", "frequency", "acceleration", "vibration", "camber", "dead")}
    out["deflection"][mid] = defl["utilisation"][:, None] * scale_i
    # dead kinds at 1.0 on every span: the deflected shape and the weight per span
    pts = analysis.stations
    resp = case_responses(analysis.solved, pts)
    dead = np.array([c.kind == "dead" for c in beam.cases], dtype=float)
    d_dead = resp.deflection @ dead                          # consistent length
    v_dead = resp.shear @ dead
    delta = np.zeros(n)
    weight = np.zeros(n)
    for j in range(n):
        on = pts.span == j
        delta[j] = max(float(np.max(d_dead[on])), 0.0)
        ends = np.flatnonzero(on)
        weight[j] = float(v_dead[ends[0]] - v_dead[ends[-1]])
    defl_unit = delta * units_factor                         # mm / in, with the model I
    dead_sec = defl_unit[:, None] * scale_i
    out["dead"][mid] = dead_sec
    out["camber"][mid] = vibration.camber(dead_sec, inp.camber_fraction,
                                          vibration.CAMBER_MINIMUM[system])
    vib = inp.vibration
    if vib is None or not shapes.full:
        return out
    lengths = np.array([s.length for s in beam.spans])
    live_w = vib.live * vib.spacing * lengths                # live weight per span
    with np.errstate(divide="ignore", invalid="ignore"):
        grow = np.where(weight > 0.0, (weight + live_w) / weight, np.nan)
    delta_v = dead_sec * grow[:, None]
    fn = vibration.natural_frequency(delta_v, vibration.GRAVITY[system])
    w_eff = (weight + live_w) * vib.effective_width / vib.spacing
    ap = vibration.walking_acceleration(fn, vib.damping, w_eff[:, None],
                                        vibration.WALKING_FORCE[system])
    cantilever = np.array([not beam.supports[j].restrains_vertical
                           or not beam.supports[j + 1].restrains_vertical for j in range(n)])
    ap = np.where(cantilever[:, None], np.nan, ap)
    fn = np.where(cantilever[:, None], np.nan, fn)
    util = ap / vib.tolerance
    util = np.where(fn < MIN_FREQUENCY, np.maximum(util, MIN_FREQUENCY / fn), util)
    out["frequency"][mid] = fn
    out["acceleration"][mid] = ap
    out["vibration"][mid] = util
    return out


def check_all(analysis: Analysis, rows: Rows, shapes: Shapes, inp: SteelInput,
              defl: dict[str, np.ndarray], i_model: np.ndarray, scale_m: float,
              scale_f: float) -> Checks:
    """Every check for every section (see the module docstring).  ``scale_m`` and
    ``scale_f`` take consistent moments and forces to the section base units (N*mm, N /
    kip*in, kip); ``i_model`` is the I of each span as analysed, in section units."""
    beam = analysis.beam
    to_cons = section_to_consistent(beam)
    flex = _flexure(analysis, rows, shapes, inp, scale_m, to_cons)
    n_r, n_s = rows.n, shapes.n
    ends = rows.is_end
    vu = np.where(ends, np.nan_to_num(rows.shear), np.nan)[:, None]
    if shapes.full:
        phi_vn = web.phi_vn(shapes.d, shapes.tw, shapes.h, inp.E, inp.Fy,
                            shapes.rolled) / scale_f
    else:
        phi_vn = web.PHI_V * 0.6 * inp.Fy * shapes.Aw / scale_f
    shear = vu / phi_vn[None, :]
    bear = _bearing(analysis, rows, shapes, inp, to_cons, scale_f)
    serv = _serviceability(analysis, rows, shapes, inp, defl, i_model,
                           beam.units.deflection_factor, beam.units.name)
    return Checks(
        segs=flex["segs"], demand=flex["demand"], moment=flex["moment"],  # type: ignore[arg-type]
        phi_mn=flex["phi_mn"], lb=flex["lb"], cb=flex["cb"],  # type: ignore[arg-type]
        segment=flex["segment"], moment_segment=flex["moment_segment"],  # type: ignore[arg-type]
        ltb_checked=bool(flex["ltb_checked"]),
        shear=shear, phi_vn=np.broadcast_to(np.where(ends[:, None], phi_vn[None, :], np.nan),
                                            (n_r, n_s)).copy(),
        bearing=bear["bearing"], bearing_force=bear["force"], bearing_rn=bear["rn"],
        bearing_kind=bear["kind"], bearing_lb=bear["lb"],
        deflection=serv["deflection"], frequency=serv["frequency"],
        acceleration=serv["acceleration"], vibration=serv["vibration"],
        camber=serv["camber"], dead_deflection=serv["dead"])


def worst(checks: Checks) -> dict[str, np.ndarray]:
    """Per section, the largest utilisation of each check (NaN rows ignored; 0 where a
    check applies nowhere)."""
    out = {}
    for name in ("moment", "shear", "bearing", "deflection", "vibration"):
        a = getattr(checks, name)
        out[name] = np.where(np.isnan(a).all(axis=0), 0.0, np.nanmax(
            np.where(np.isnan(a), -np.inf, a), axis=0))
    return out

