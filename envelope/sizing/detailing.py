"""From steel areas to a concrete design: bars, stirrups, crack control and the cracked,
long-term and incremental deflections, added to the sizing of
:mod:`envelope.sizing.concrete`.

- bars at every design section (:mod:`envelope.sizing.bars`): the steel required is
  recomputed at the depth the bars give (one or two layers) and the bars provide it;
  ``d`` becomes the depth to the centroid of the bars provided; where the compression
  bars take two layers, the compression and tension steel are sized again with the
  compression steel at their centroid (instead of ``cover_to_bar_centre``) and the bars
  chosen again, a few rounds;
- stirrups at the ends from the Av/s required (ACI 318-19 Table 9.7.6.2.2 / EN 1992-1-1
  9.2.2(8) for the lateral spacing of the legs);
- crack control (:mod:`envelope.sizing.crack_control`): ACI 318-19 24.3.2 with
  fs = (2/3) fy; EN 1992-1-1 7.3.3 with the steel stress of the cracked section under
  the largest sustained (quasi-permanent) moment at the section, every subset of the
  variable cells considered;
- deflections per span (:mod:`envelope.sizing.cracked_deflection`) and their limits:
  ACI 318-19 Table 24.2.2 (immediate live span/360 for a floor, span/180 for a roof;
  after attachment of nonstructural elements span/480 where they are likely to be
  damaged, span/240 where not); EN 1992-1-1 7.4.1(4) span/250 long-term under the
  quasi-permanent load and 7.4.1(5) span/500 after construction.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from envelope.analysis import Analysis
from envelope.combinations import PERMANENT_KINDS
from envelope.config import PROVIDED_STRENGTH_RTOL
from envelope.design import ConcreteDesign
from envelope.recovery import evaluate_some, make_points
from envelope.sizing import bars as bar_mod
from envelope.sizing import concrete_aci as aci
from envelope.sizing import concrete_en as en
from envelope.sizing import crack_control, cracked, depths, doubly
from envelope.sizing import cracked_deflection as cdefl
from envelope.sizing.concrete import min_steel_width
from envelope.sizing.deflection import ratio_lengths
from envelope.sizing.layout import ACI_SCALES, EN_SCALES, SECTION_UNITS, Rows, Sized

#: Table 24.2.2 denominators by ``nonstructural`` (the live-load row by ``member`` is
#: set by the reader: span/360 for a floor, span/180 for a roof).
ACI_INCREMENTAL = {"damage-likely": 480.0, "damage-unlikely": 240.0}
#: EN 1992-1-1 7.4.1(4) and (5), recommended.
EN_LONG_TERM = 250.0
EN_INCREMENTAL = 500.0
#: Defaults of ``[design]``: aggregate size (mm), load duration, creep coefficient,
#: crack width (EN, Table 7.1N XC2-XC4, mm).
AGGREGATE_MM = 20.0
MONTHS = 60.0
CREEP = 2.0
CRACK_WIDTH_MM = 0.3


@dataclass(frozen=True, slots=True)
class Params:
    """The ``[design]`` values detailing reads, defaults filled in (section units)."""

    code: str
    bars: Any
    aggregate: float
    design: ConcreteDesign  # the typed [design] values themselves
    sustained: dict[str, float] = field(default_factory=dict)
    months: float = MONTHS
    creep: float = CREEP
    shrinkage: float | None = None
    crack_width: float = CRACK_WIDTH_MM
    member: str = "floor"
    nonstructural: str = "damage-likely"
    limits: dict[str, float] = field(default_factory=dict)
    given: frozenset[str] = frozenset()


def params(design: ConcreteDesign, system: str) -> Params:
    """:class:`Params` from the typed ``[design]`` values, defaults filled in."""
    code = design.code
    bars = design.bars or ("US" if code == "aci318-19" else "metric")
    mm = 1.0 if system == "SI" else 1.0 / bar_mod.IN_MM
    lt = design.long_term
    dl = design.deflection_limits
    limits = {"live": dl.live}
    if dl.long_term is not None:
        limits["long_term"] = dl.long_term
    if dl.incremental is not None:
        limits["incremental"] = dl.incremental
    given = frozenset({"long_term"} if lt.sustained else ())
    return Params(code=code, bars=bars, aggregate=float(design.aggregate or AGGREGATE_MM * mm),
                  design=design,
                  sustained=dict(lt.sustained), months=float(lt.months),
                  creep=float(lt.creep), shrinkage=lt.shrinkage,
                  crack_width=float(design.crack_width),
                  member=design.member, nonstructural=design.nonstructural,
                  limits=limits, given=given)


def _en_flexure(m: np.ndarray, bw: float, bf: np.ndarray, hf: np.ndarray, dm: np.ndarray,
                fck: float, fyk: float, L: float) -> tuple[np.ndarray, dict[str, np.ndarray]]:
    """EN 1992-1-1 flexure (N*mm, mm; ``L`` mm per section unit) on the width
    the sizing takes: a T-section's flange where the block (0.8 x) stays in it, else the
    web alone; returns that width and the flexure on it."""
    width = bf * L
    fl = en.flexure(m, width, dm, fck, fyk)
    inside = 0.8 * fl["x"] <= hf * L
    width = np.where((bf > bw) & ~inside, bw * L, width)
    return width, en.flexure(m, width, dm, fck, fyk)


def _required(analysis: Analysis, p: Params, rows: Rows, bw: float,
              bf: np.ndarray, hf: np.ndarray, h: np.ndarray,
              d2: np.ndarray | float | None = None) -> Any:
    """required(d): tension steel to provide (section units) at depths d (section
    units), by the same sequence as :mod:`envelope.sizing.concrete`; the compression
    steel at ``d2`` from the compression face (section units; the cover to the bar
    centre, as in the sizing, unless given per row)."""
    design = p.design
    system = analysis.beam.units.name
    fc_s, fy_s = float(design.fc), float(design.fy)
    moment = rows.moment
    bt = min_steel_width(analysis, rows, h)
    if d2 is None:
        d2 = float(design.cover_to_bar_centre)  # compression steel, as in the sizing
    if p.code == "aci318-19":
        s = ACI_SCALES[system]
        fc, fy = fc_s * s.stress, fy_s * s.stress
        mu = np.abs(moment) * s.moment

        def need(d: np.ndarray) -> np.ndarray:
            fl = aci.flexure(mu, bw, d, fc, fy, system, bf, hf)
            dbl = doubly.aci_design(mu, bw, d, d2, fc, fy, system, bf, hf)
            req = np.where(fl["too_small"], dbl["as_required"], fl["as_required"])
            as_min = np.where(moment != 0.0, aci.as_min(bt, d, fc, fy, system), 0.0)
            return aci.as_design(req, as_min)
        return need
    s = EN_SCALES[system]
    L = s.length
    fck, fyk = fc_s * s.stress, fy_s * s.stress
    m = np.abs(moment) * s.moment

    def need_en(d: np.ndarray) -> np.ndarray:
        dm = d * L
        width, fl = _en_flexure(m, bw, bf, hf, dm, fck, fyk, L)
        as_min = np.where(moment != 0.0, en.as_min(bt * L, dm, fck, fyk), 0.0)
        dbl = doubly.en_design(m, width, dm, d2 * L, fck, fyk, h * L)
        req = np.where(fl["too_small"] & dbl["ok"], dbl["as_required"], fl["as_required"])
        out = np.where(req > 0, np.maximum(req, as_min), np.where(req == 0, 0.0, np.nan))
        return out * s.area
    return need_en


def _compression_required(analysis: Analysis, p: Params, rows: Rows, bw: float,
                          bf: np.ndarray, hf: np.ndarray, h: np.ndarray,
                          d2: np.ndarray | float | None = None) -> Any:
    """required(d): compression steel (section units; 0 where none, NaN where it cannot
    work) at depths d (section units), at ``d2`` as :func:`_required`, by the same
    sequence."""
    design = p.design
    system = analysis.beam.units.name
    fc_s, fy_s = float(design.fc), float(design.fy)
    if d2 is None:
        d2 = float(design.cover_to_bar_centre)
    if p.code == "aci318-19":
        s = ACI_SCALES[system]
        fc, fy = fc_s * s.stress, fy_s * s.stress
        mu = np.abs(rows.moment) * s.moment

        def need(d: np.ndarray) -> np.ndarray:
            fl = aci.flexure(mu, bw, d, fc, fy, system, bf, hf)
            dbl = doubly.aci_design(mu, bw, d, d2, fc, fy, system, bf, hf)
            return np.where(fl["too_small"], dbl["as_compression"], 0.0)
        return need
    s = EN_SCALES[system]
    L = s.length
    fck, fyk = fc_s * s.stress, fy_s * s.stress
    m = np.abs(rows.moment) * s.moment

    def need_en(d: np.ndarray) -> np.ndarray:
        dm = d * L
        width, fl = _en_flexure(m, bw, bf, hf, dm, fck, fyk, L)
        dbl = doubly.en_design(m, width, dm, d2 * L, fck, fyk, h * L)
        return np.where(fl["too_small"], dbl["as_compression"], 0.0) * s.area
    return need_en


def _scratch(n: int) -> tuple[list[list[str]], list[list[str]]]:
    """Notes and failures to discard (a trial choice of bars)."""
    return [[] for _ in range(n)], [[] for _ in range(n)]


def _sustained_moment(analysis: Analysis, rows: Rows, p: Params) -> np.ndarray:
    """Largest sustained moment magnitude at each design row of the sign of its design
    moment (consistent units): permanent cases, then every variable unit case at its
    sustained fraction where it adds (every subset of cells)."""
    solved = analysis.solved
    pts = make_points(solved.beam, rows.span, np.nan_to_num(rows.x_span),
                      rows.section != "right")
    r = evaluate_some(solved.mesh, solved.unit_cases, solved.solution, pts, ("moment",))["moment"]
    frac = cdefl.sustained_fractions(solved, p.code, p.sustained)
    unit_case = solved.unit_cases.case
    permanent = np.array([c.kind in PERMANENT_KINDS for c in solved.beam.cases])[unit_case]
    sign = np.where(rows.moment >= 0.0, 1.0, -1.0)[:, None]
    fixed = (r * permanent).sum(axis=1)
    var = np.where(permanent, 0.0, r * frac[unit_case])
    total = sign[:, 0] * fixed + np.maximum(sign * var, 0.0).sum(axis=1)
    return np.maximum(total, 0.0)


def detail(analysis: Analysis, sized: Sized) -> Sized:
    """The sizing with bars, stirrups, crack control and deflections added (see the
    module docstring)."""
    beam = analysis.beam
    design = beam.design
    if not isinstance(design, ConcreteDesign):
        raise ValueError(f"{beam.source}: concrete detailing needs a concrete [design] table")
    system = beam.units.name
    p = params(design, system)
    rows = sized.rows
    cols = dict(sized.columns)
    units = dict(sized.units)
    notes, failures = sized.notes, sized.failures
    su = SECTION_UNITS[system]
    bw = float(design.b)
    h = np.asarray(cols["h"], dtype=float)  # the depth at each design section
    side = float(design.cover_to_bar_centre)
    tee = design.is_tee
    sag = rows.is_span & tee
    bf = np.where(sag, float(design.flange_width or bw), bw)
    hf = np.where(sag, float(design.flange_depth or 0.0), 0.0)
    d0 = np.asarray(cols["d"], dtype=float)
    try:
        bar_set = bar_mod.bar_set(p.bars, system)
    except ValueError as exc:  # the reader checks the key; this is a last guard
        raise ValueError(f"design.bars: {exc}") from None
    as_max = np.asarray(cols["as_max"], dtype=float)
    crack = _crack_rule(analysis, rows, p, bw, h, bf, hf, side)
    comp0 = np.nan_to_num(np.asarray(cols["as_compression"], dtype=float))
    comp_rule = _compression_required(analysis, p, rows, bw, bf, hf, h)

    def tension_bars(d2: np.ndarray | float,
                     most: np.ndarray = as_max) -> dict[str, np.ndarray]:
        need = _required(analysis, p, rows, bw, bf, hf, h, d2)
        return bar_mod.choose(need, d0, np.full(rows.n, bw), side, most, bar_set, p.code,
                              p.aggregate, system, lambda *a: crack(*a)["ok"])

    def compression_steel(chosen: dict[str, np.ndarray],
                          rule: Any) -> tuple[np.ndarray, np.ndarray]:
        # two layers of tension bars move d up: the compression bars are chosen for the
        # compression steel of that d (as the tension bars are, through ``need``), not
        # the ``as_compression`` of the one-layer depth
        moved = (comp0 > 0) & (chosen["layers"] == 2)
        comp = comp0
        if moved.any():
            at_d = rule(np.asarray(chosen["d"], dtype=float))
            comp = np.where(moved & np.isfinite(at_d), np.maximum(comp0, at_d), comp0)
        return comp, moved

    chosen = tension_bars(side)
    comp, moved = compression_steel(chosen, comp_rule)
    _, comp_area, comp_depth = _compression_bars(rows, p, cols, comp, bw, side, bar_set,
                                                 system, *_scratch(rows.n))
    # compression bars in two layers sit deeper than ``side``: size the compression and
    # tension steel again with the compression steel at their centroid, and choose the
    # bars again, until the centroid no longer moves (a few rounds; the depth only
    # grows, so the steel is sized at or below where its bars sit). Rows whose
    # compression bars sit at ``side`` keep the first choice.
    why = ("the section cannot be reinforced: no arrangement of the bar set gives the "
           "tension and compression steel in one or two layers within the maximum (ACI "
           "318-19 9.3.3.1, eps_t >= 0.004), or the compression steel is at or below "
           "the neutral axis (22.2.1.2)" if p.code == "aci318-19" else
           "the section cannot be reinforced: no arrangement of the bar set gives the "
           "tension and compression steel in one or two layers within 0.04 Ac (EN "
           "1992-1-1 9.2.1.1(3)), or the compression steel is at or below the neutral "
           "axis")
    d2_rows = np.full(rows.n, side)
    cannot = np.full(rows.n, "", dtype=object)
    deep = np.zeros(rows.n, dtype=bool)
    tol = 1e-9 * max(side, 1.0)
    for _ in range(3):
        deeper = ((comp_area > 0) & (comp_depth > d2_rows + tol) & (cannot == "")
                  & (np.asarray(chosen["index"]) >= 0))
        if not deeper.any():
            break
        trial = np.where(deeper, comp_depth, d2_rows)
        rule = _compression_required(analysis, p, rows, bw, bf, hf, h, trial)
        most = as_max
        if p.code == "aci318-19":  # 9.3.3.1 with the compression steel at its depth
            sc = ACI_SCALES[system]
            # with the compression steel of the tension bars' d (two layers lower it)
            at_chosen = np.fmax(rule(d0), rule(np.asarray(chosen["d"], dtype=float)))
            most = np.where(deeper, doubly.aci_as_max(
                np.nan_to_num(at_chosen), bw, d0, trial, float(design.fc) * sc.stress,
                float(design.fy) * sc.stress, system, bf, hf), as_max)
        again = tension_bars(trial, most)
        at_d = rule(np.asarray(again["d"], dtype=float))
        comp_try = np.where(deeper, np.maximum(comp0, at_d), comp)
        placed = _compression_bars(rows, p, cols, np.nan_to_num(comp_try), bw, side, bar_set,
                                   system, *_scratch(rows.n))[1]
        works = (np.isfinite(np.asarray(_required(analysis, p, rows, bw, bf, hf, h, trial)(
            np.asarray(again["d"], dtype=float)), dtype=float)) & np.isfinite(at_d)
            & (np.asarray(again["index"]) >= 0) & (placed > 0))
        for i in np.flatnonzero(deeper & ~works).tolist():
            cannot[i] = (f"the compression bars chosen sit {comp_depth[i]:.4g} "
                         f"{su['length']} from the compression face (two layers); sized "
                         f"there, {why}: widen or deepen the section")
        take = deeper & works
        if not take.any():
            break
        deep |= take
        d2_rows = np.where(take, trial, d2_rows)
        chosen = {k: np.where(take, again[k], v) for k, v in chosen.items()}
        comp = np.where(take, comp_try, comp)
        _, area_now, depth_now = _compression_bars(rows, p, cols, comp, bw, side, bar_set,
                                                   system, *_scratch(rows.n))
        comp_area = np.where(deep, area_now, comp_area)
        comp_depth = np.where(deep, depth_now, comp_depth)
    for i in range(rows.n):
        if not chosen["fits"][i]:
            failures[i].append(
                f"no arrangement of the bar set ({', '.join(bar_set.names)}) gives the "
                f"steel required in one or two layers of a {bw:g} {su['length']} web "
                f"within the maximum (clear spacing {_spacing_clause(p.code)}, aggregate "
                f"{p.aggregate:g} {su['length']}): widen the section or allow larger bars")
        elif chosen["layers"][i] == 2:
            notes[i].append(f"two layers of bars: d = {chosen['d'][i]:.4g} {su['length']} "
                            f"to their centroid")
    cols["bars"] = chosen["label"]
    for i in np.flatnonzero(moved & ~deep & (comp > comp0)).tolist():
        notes[i].append(f"compression bars for {comp[i]:.4g} {su['area']}, the "
                        f"compression steel at d = {chosen['d'][i]:.4g} "
                        f"{su['length']} of the two layers of tension bars")
    for i in np.flatnonzero(deep).tolist():
        notes[i].append(f"compression and tension steel sized with the compression steel "
                        f"at {d2_rows[i]:.4g} {su['length']} from the compression face, "
                        f"the centroid of its two layers of bars: {comp[i]:.4g} "
                        f"{su['area']} in compression at d = {chosen['d'][i]:.4g} "
                        f"{su['length']}")
    cols["bars_compression"], comp_area, comp_depth = _compression_bars(
        rows, p, cols, comp, bw, side, bar_set, system, notes, failures)
    cols["as_provided"] = chosen["area"]
    cols["bar_layers"] = chosen["layers"]
    units["bar_layers"] = "1"
    cols["d"] = np.where(chosen["index"] >= 0, chosen["d"], d0)
    units["as_provided"] = su["area"]

    # stirrups on the end rows
    ends = rows.is_end
    av_s = np.where(ends, np.asarray(cols["av_over_s_required"], float), np.nan)
    s_max = np.asarray(cols["s_max"], float)
    mm = 1.0 if system == "SI" else 1.0 / bar_mod.IN_MM
    d_now = np.asarray(cols["d"], float)
    if p.code == "aci318-19":
        # Table 9.7.6.2.2, across the width: d and 24 in / 600 mm, halved (d/2, 12 in /
        # 300 mm) where Vs > 4 sqrt(f'c) bw d, as the sizing halves s_max along the length
        # (Vs of the Av/s provided for: Av/s fyt d, so d cancels)
        s = ACI_SCALES[system]
        k = aci.COEFFICIENTS[system]
        fyt = min(float(design.stirrup_strength) * s.stress, k.fyt_cap)
        with np.errstate(invalid="ignore"):
            tight = np.nan_to_num(av_s) * fyt > (k.vs_tight * math.sqrt(float(design.fc)
                                                                       * s.stress) * bw)
        legs_max = np.where(tight, np.minimum(d_now / 2.0, k.s_max_tight),
                            np.minimum(d_now, k.s_max))
    else:
        legs_max = np.minimum(0.75 * d_now, 600.0 * mm)
    st = bar_mod.stirrups(av_s, np.where(np.isfinite(s_max), s_max, 0.75 * d_now),
                          np.full(rows.n, bw), d_now, side, legs_max,
                          bar_mod.stirrup_set(bar_set, system), system)
    cols["stirrups"] = np.where(ends, st["label"], "").astype(object)
    _provided_strength(analysis, p, rows, cols, units, bf, hf, d0, comp_area, comp_depth,
                       st, bar_mod.stirrup_set(bar_set, system))
    _short_of_provided(p, rows, cols, units, failures)
    for i in np.flatnonzero(cannot != "").tolist():  # why, where the bars fall short
        if any("short of the design moment" in f for f in failures[i]):
            failures[i].append(cannot[i])
    for i in np.flatnonzero(ends & ~st["fits"]).tolist():
        failures[i].append("no stirrup arrangement of the set gives the Av/s required "
                           "at 75 mm / 3 in spacing or more: widen the section")

    # deflections per span
    inputs = _inputs(analysis, p, cols, bw, bf, hf, comp_area, comp_depth)
    defl = cdefl.span_deflections(analysis.solved, inputs)
    _crack(analysis, rows, p, cols, units, failures, chosen, side, crack)
    _deflection_columns(analysis, p, defl, cols, units, notes, failures)
    _flags(analysis, rows, p, failures)
    _skin(analysis, p, np.asarray(cols["h"], dtype=float), notes)
    if p.code == "en1992-1-1" and rows.n:
        notes[0].append("minimum reinforcement for crack control (EN 1992-1-1 7.3.2, "
                        "which Table 7.3N's spacing limits assume provided) not checked; "
                        "9.2.1.1(1)'s minimum is")
    if p.code == "aci318-19" and "long_term" not in p.given:
        for i in np.flatnonzero(rows.is_span).tolist():
            notes[i].append("no live load taken as sustained (long_term.sustained not "
                            "given)")
    return Sized(rows, cols, units, notes, failures)


def _provided_strength(analysis: Analysis, p: Params, rows: Rows,
                       cols: dict[str, np.ndarray], units: dict[str, str], bf: np.ndarray,
                       hf: np.ndarray, dt: np.ndarray, comp_area: np.ndarray,
                       comp_depth: np.ndarray, st: dict[str, np.ndarray],
                       sizes: bar_mod.BarSet) -> None:
    """The strength of what is provided: flexure of ``as_provided`` at the ``d`` of its
    layout, with the ``bars_compression`` where there are any (ACI ``phiMn_provided``,
    EN ``MRd_provided``), and shear with the stirrups chosen on the rows that have them
    (ACI ``phiVn``, EN ``VRd``).  By the functions that size the steel
    (:mod:`envelope.sizing.concrete_aci`, :mod:`envelope.sizing.concrete_en`,
    :mod:`envelope.sizing.doubly`), given the area instead of the moment.

    - ACI 318-19: the block of 22.2 (strain compatibility for the compression bars,
      22.2.1.2); phi by Table 21.2.2 from eps_t at the extreme tension bars, ``dt``
      (the depth of the first layer: 21.2.2 takes eps_t there), Mn at the centroid
      ``d``; phiVn = 0.75 (Vc + Vs) with ``Vc`` as tabulated, Vs = Av fyt d / s
      (22.5.8.5.3, fyt <= 60 ksi / 420 MPa by 20.2.2.4) at most 8 sqrt(f'c) bw d /
      0.66 sqrt(f'c) bw d (22.5.1.2); ``Vc`` scaled by d / dt where two layers lowered
      d (on the safe side: its rho_w and lambda_s rise as d falls).
    - EN 1992-1-1: the rectangular block of 3.1.7(3) at alpha_cc fck / gamma_c over
      0.8 x, z = d - 0.4 x <= 0.95 d (as the sizing); a T-section's flange where the
      block stays in it, else the web alone (as the sizing); VRd = min(VRd,s, VRd,max),
      VRd,s = Asw / s z fywd cot(theta) (6.2.3(3), eq. 6.8), VRd,max = bw z nu1 fcd /
      (cot + tan) (eq. 6.9), z = 0.9 d, with the ``cot_theta`` of the stirrup design and
      2.5 (the flattest strut of 6.2.3(2)) on rows that needed only the minimum links
      (no cot(theta) designed there), or the steeper strut at which the two meet where
      VRd,max of that one falls below VRd,s (d lowered by two layers of bars).
    """
    beam = analysis.beam
    system = beam.units.name
    design = p.design
    u = beam.units.labels
    bw = float(design.b)
    ends = rows.is_end
    has = ends & (np.asarray(st["index"]) >= 0)
    idx = np.maximum(np.asarray(st["index"]), 0)
    av = np.where(has, st["legs"] * sizes.area[idx], np.nan)  # section units
    spacing = np.where(has, np.asarray(st["spacing"], float), np.nan)
    d = np.asarray(cols["d"], float)
    area = np.asarray(cols["as_provided"], float)
    placed = comp_area > 0
    if p.code == "aci318-19":
        s = ACI_SCALES[system]
        k = aci.COEFFICIENTS[system]
        fc, fy = float(design.fc) * s.stress, float(design.fy) * s.stress
        one = aci.capacity(area, bw, d, fc, fy, system, bf, hf)
        two = doubly.aci_capacity(area, comp_area, bw, d, comp_depth, fc, fy, system, bf, hf)
        a = np.where(placed, two["a"], one["a"])
        phi_d = np.where(placed, two["phi"], one["phi"])
        phi_mn = np.where(placed, two["phi_mn"], one["phi_mn"])
        c = a / aci.beta1(fc, system)
        with np.errstate(divide="ignore", invalid="ignore"):
            phi_t = aci.phi_flexure(aci.EPS_CU * (np.maximum(dt, d) - c) / c, fy / k.Es)
            strength = np.where(area > 0, phi_mn / phi_d * phi_t, 0.0)
        cols["phiMn_provided"] = strength / s.moment
        fyt = min(float(design.stirrup_strength) * s.stress, k.fyt_cap)
        root = math.sqrt(fc)
        with np.errstate(invalid="ignore"):
            vs = np.minimum(av * fyt * d / spacing, k.vs_max * root * bw * d)
        # Vc was sized at the one-layer depth ``dt``; at the d of two layers it is taken
        # in proportion (Table 22.5.5.1: bw d times a factor that rho_w = As / (bw d)
        # and lambda_s only raise as d falls, so on the safe side)
        with np.errstate(invalid="ignore", divide="ignore"):
            vc = np.asarray(cols["Vc"], float) * s.force * np.where(dt > 0, d / dt, 1.0)
        cols["phiVn"] = np.where(has, aci.PHI_SHEAR * (vc + vs), np.nan) / s.force
        units["phiMn_provided"] = u["moment"]
        units["phiVn"] = u["force"]
        return
    s = EN_SCALES[system]
    L = s.length
    fck, fyk = float(design.fc) * s.stress, float(design.fy) * s.stress
    fywk = float(design.stirrup_strength) * s.stress
    dm, As = d * L, area / s.area
    res = en.resistance(As, bf * L, dm, fck, fyk)
    web = (bf > bw) & (0.8 * res["x"] > hf * L)
    width = np.where(web, bw, bf) * L
    res = en.resistance(As, width, dm, fck, fyk)
    two_en = doubly.en_capacity(As, comp_area / s.area, width, dm, comp_depth * L, fck, fyk)
    m_rd = np.where(placed, two_en["m_rd"], np.where(As > 0, res["m_rd"], 0.0))
    cols["MRd_provided"] = m_rd / s.moment
    # the strut: the flattest of the design (2.5 where none was designed) unless VRd,max
    # of that strut falls below VRd,s, as where two layers of bars lowered d after the
    # links were designed; then the steeper one at which (6.8) and (6.9) meet,
    # cot^2 + 1 = bw nu1 fcd / (Asw/s fywd), which gives the most of the two (6.2.3(2))
    designed = np.asarray(cols["cot_theta"], float)
    flattest = np.where(np.isfinite(designed), designed, 2.5)
    z = 0.9 * dm
    fcd = en.ALPHA_CC * fck / en.GAMMA_C
    nu1 = 0.6 * (1.0 - fck / 250.0)
    fywd = fywk / en.GAMMA_S
    with np.errstate(invalid="ignore", divide="ignore"):
        asw_s = av / s.area / (spacing * L)
        meet = np.sqrt(np.maximum(bw * L * nu1 * fcd / (asw_s * fywd) - 1.0, 1.0))
        cot = np.where(has, np.minimum(meet, flattest), flattest)
        vrd_s = asw_s * z * fywd * cot
    vrd_max = bw * L * z * nu1 * fcd / (cot + 1.0 / cot)
    cols["VRd"] = np.where(has, np.minimum(vrd_s, vrd_max), np.nan) / s.force
    units["MRd_provided"] = u["moment"]
    units["VRd"] = u["force"]


def _short_of_provided(p: Params, rows: Rows, cols: dict[str, np.ndarray],
                       units: dict[str, str], failures: list[list[str]]) -> None:
    """Fail the status of a row whose bars (or stirrups) provided are weaker than its
    design moment (shear): the bars are chosen for ``as_design``, but the depth of their
    layout, a second layer or the compression bars' own layers can leave the section
    short (ACI 318-19 9.5.1.1, EN 1992-1-1 6.1 and 6.2.1(1)), and the report, which
    checks the provided strength, must not disagree with the status."""
    aci_code = p.code == "aci318-19"
    pairs = (("phiMn_provided" if aci_code else "MRd_provided", rows.moment,
              "bars", "design moment"),
             ("phiVn" if aci_code else "VRd", rows.shear, "stirrups", "design shear"))
    for strength_name, action_value, what, action in pairs:
        strength = np.asarray(cols[strength_name], dtype=float)
        demand = np.abs(np.asarray(action_value, dtype=float))
        with np.errstate(invalid="ignore"):
            short = (np.isfinite(strength) & (strength > 0.0) & np.isfinite(demand)
                     & (demand > strength * (1.0 + PROVIDED_STRENGTH_RTOL)))
        unit = units.get(strength_name, "")
        for i in np.flatnonzero(short).tolist():
            given = str(cols[what][i])
            if what == "bars" and cols["bars_compression"][i]:
                given += f", {cols['bars_compression'][i]} in compression"
            failures[i].append(
                f"{what} provided ({given}) give {strength_name} "
                f"{strength[i]:.4g} {unit}, {100.0 * (demand[i] / strength[i] - 1.0):.1f}% "
                f"short of the {action} {demand[i]:.4g} {unit}")


def _compression_bars(rows: Rows, p: Params, cols: dict[str, np.ndarray],
                      comp: np.ndarray, bw: float, side: float, bar_set: bar_mod.BarSet,
                      system: str, notes: list[list[str]], failures: list[list[str]]
                      ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Bars for the compression steel ``comp`` of doubly reinforced rows (section units:
    ``as_compression``, or that of the tension bars' depth), by the same rules as the
    tension bars (one or two layers, clear spacing), at the compression face; ""
    elsewhere.  Also their area (0 where none) and the depth of their centroid from the
    compression face (section units), for the cracked section."""
    if not np.any(comp > 0):
        return (np.full(rows.n, "", dtype=object), np.zeros(rows.n),
                np.full(rows.n, side))
    d0 = np.asarray(cols["d"], dtype=float)
    chosen = bar_mod.choose(lambda d: np.where(comp > 0, comp, 0.0), d0,
                            np.full(rows.n, bw), side, np.full(rows.n, np.inf), bar_set,
                            p.code, p.aggregate, system)
    su = SECTION_UNITS[system]
    for i in np.flatnonzero(comp > 0).tolist():
        if not chosen["fits"][i]:
            failures[i].append(
                f"no arrangement of the bar set gives the compression steel "
                f"{comp[i]:.4g} {su['area']} in one or two layers of a {bw:g} "
                f"{su['length']} web: widen the section or allow larger bars")
        elif p.code == "aci318-19":
            notes[i].append("compression bars to be enclosed by stirrups or ties (ACI "
                            "318-19 9.7.6.4)")
    placed = (comp > 0) & np.asarray(chosen["fits"], dtype=bool)
    area = np.where(placed, np.asarray(chosen["area"], dtype=float), 0.0)
    # a second layer moves the centroid away from the face by what it moves d
    depth = side + (d0 - np.asarray(chosen["d"], dtype=float))
    return np.asarray(chosen["label"], dtype=object), area, np.where(placed, depth, side)


def _flags(analysis: Analysis, rows: Rows, p: Params, failures: list[list[str]]) -> None:
    """What this sizing does not design, put in the status: a support that can lift
    off, and deep-beam regions (ACI 318-19 9.9.1.1: clear span at most 4h, or a point
    load within 2h of a support face; EN 1992-1-1 5.3.1(3): span less than 3h)."""
    beam = analysis.beam
    to_c = beam.units.to_consistent("deflection")
    lab = beam.units.labels
    env = analysis.reaction_envelopes["reaction"]
    if env is not None:
        scale = max(float(np.max(np.abs(env.max))), float(np.max(np.abs(env.min))), 1e-300)
        for k, joint in enumerate(analysis.support_joints):
            low = float(env.min[k])
            if low < -1e-9 * scale:
                text = (f"support {joint + 1} can lift off: its reaction falls to "
                        f"{low:.1f} {lab['force']} under a strength combination: hold it "
                        f"down and check the support (not designed here)")
                for i in np.flatnonzero(((rows.span == joint - 1) & (rows.section == "right"))
                                        | ((rows.span == joint) & (rows.section == "left"))
                                        ).tolist():
                    failures[i].append(text)
    n = beam.n_spans
    for j in range(n):
        left, right = beam.supports[j], beam.supports[j + 1]
        if not (left.restrains_vertical and right.restrains_vertical):
            continue
        h = float(np.max(depths.span_profile(beam, j)[2])) * to_c  # the deepest part
        length = beam.spans[j].length
        clear = length - left.width / 2.0 - right.width / 2.0
        mid = 3 * j + 1
        if p.code == "aci318-19" and clear <= 4.0 * h:
            failures[mid].append(
                f"deep beam (ACI 318-19 9.9.1.1(a)): clear span {clear:.3g} {lab['length']}"
                f" <= 4h = {4 * h:.3g} {lab['length']}: design it by 9.9 (strut-and-tie), "
                f"which this sizing does not do")
        elif p.code == "en1992-1-1" and length < 3.0 * h:
            failures[mid].append(
                f"deep beam (EN 1992-1-1 5.3.1(3)): span {length:.3g} {lab['length']} < "
                f"3h = {3 * h:.3g} {lab['length']}: design it by strut-and-tie (6.5), "
                f"which this sizing does not do")
        if p.code != "aci318-19":
            continue
        face_l, face_r = left.width / 2.0, length - right.width / 2.0
        for ld in beam.loads:
            if ld.type != "point" or ld.span != j:
                continue
            for end, near in (("left", face_l <= ld.at <= face_l + 2 * h),
                              ("right", face_r - 2 * h <= ld.at <= face_r)):
                if near:
                    i = 3 * j + (0 if end == "left" else 2)
                    msg = (f"deep-beam region (ACI 318-19 9.9.1.1(b)): a point load at "
                           f"{ld.at:.3g} {lab['length']} lies within 2h of the {end} face, "
                           f"design that region by 9.9 (strut-and-tie)")
                    if msg not in failures[i]:
                        failures[i].append(msg)


#: Depth above which side-face (skin) reinforcement is asked for, section units: ACI
#: 318-19 9.7.2.3 (h > 36 in / 900 mm), EN 1992-1-1 7.3.3(3) (h >= 1000 mm).
SKIN_DEPTH = {("aci318-19", "SI"): 900.0, ("aci318-19", "US"): 36.0,
              ("en1992-1-1", "SI"): 1000.0, ("en1992-1-1", "US"): 1000.0 / bar_mod.IN_MM}


def _skin(analysis: Analysis, p: Params, h: np.ndarray, notes: list[list[str]]) -> None:
    """Say, once for the beam on the first row concerned, that the skin reinforcement a
    deep section needs on its side faces is not designed here."""
    system = analysis.beam.units.name
    limit = SKIN_DEPTH[(p.code, system)]
    deep = h > limit if p.code == "aci318-19" else h >= limit * (1.0 - 1e-12)
    if not np.any(deep):
        return
    unit = SECTION_UNITS[system]["length"]
    if p.code == "aci318-19":
        rule = (f"ACI 318-19 9.7.2.3 asks for it on both side faces over h/2 from the "
                f"tension face, at the spacing of 24.3.2, where h > {limit:g} {unit}")
    else:
        rule = (f"EN 1992-1-1 7.3.3(3) asks for it between the tension steel and the "
                f"neutral axis, within the links, where h >= {limit:.4g} {unit}")
    notes[int(np.flatnonzero(deep)[0])].append(
        f"skin reinforcement not designed: {rule} (h up to {float(np.max(h)):.4g} {unit} "
        f"here)")


def _spacing_clause(code: str) -> str:
    return "ACI 318-19 25.2.1" if code == "aci318-19" else "EN 1992-1-1 8.2(2)"


def _inputs(analysis: Analysis, p: Params, cols: dict[str, np.ndarray], bw: float,
            bf: np.ndarray, hf: np.ndarray, comp_area: np.ndarray,
            comp_depth: np.ndarray) -> cdefl.Inputs:
    beam = analysis.beam
    system = beam.units.name
    s = ACI_SCALES[system] if p.code == "aci318-19" else EN_SCALES[system]
    L = s.length
    area = np.asarray(cols["as_provided"], float) / s.area  # -> base area
    d = np.asarray(cols["d"], float) * L
    n = beam.n_spans
    left, mid, right = np.arange(n) * 3, np.arange(n) * 3 + 1, np.arange(n) * 3 + 2
    flange_w = float(np.max(bf))
    flange_d = float(np.max(hf))
    to_base_length = 1.0 / beam.units.to_consistent("deflection") * L
    h_row = np.asarray(cols["h"], float) * L
    # ACI 318-19 24.2.4.1.1: rho' = As' / (b d) of the compression steel (the section
    # units cancel)
    with np.errstate(divide="ignore", invalid="ignore"):
        rho = np.nan_to_num(np.asarray(cols["as_compression"], float)
                            / (bw * np.asarray(cols["d"], float)))
    rho_prime = (rho[left], rho[mid], rho[right])
    profiles = None
    if depths.varies(beam):
        profiles = tuple((start * to_base_length, end * to_base_length, depth * L)
                         for start, end, depth in (depths.span_profile(beam, j)
                                                   for j in range(n)))
    return cdefl.Inputs(
        code=p.code, system=system, bw=bw * L, h=float(p.design.h) * L,
        bf=flange_w * L, hf=flange_d * L, h_bottom=h_row[mid], h_top_left=h_row[left],
        h_top_right=h_row[right], profiles=profiles,
        fc=float(p.design.fc) * s.stress,
        as_bottom=area[mid], d_bottom=d[mid], as_top_left=area[left], d_top_left=d[left],
        as_top_right=area[right], d_top_right=d[right], sustained=p.sustained,
        months=p.months, creep=p.creep, shrinkage=p.shrinkage,
        rho_prime=rho_prime, to_base_length=to_base_length,
        as2_bottom=comp_area[mid] / s.area, d2_bottom=comp_depth[mid] * L,
        as2_top_left=comp_area[left] / s.area, d2_top_left=comp_depth[left] * L,
        as2_top_right=comp_area[right] / s.area, d2_top_right=comp_depth[right] * L,
        to_base_moment=s.moment, to_section=1.0 / L)


def _crack_rule(analysis: Analysis, rows: Rows, p: Params, bw: float, h: np.ndarray,
                bf: np.ndarray, hf: np.ndarray, side: float) -> Any:
    """rule(db, spacing, area, d) -> ``ok`` per section and the limits, in section units:
    ACI 318-19 24.3.2 (fs = 2/3 fy) or EN 1992-1-1 7.3.3 (the steel stress of the
    cracked section under the sustained moment at the section)."""
    system = analysis.beam.units.name
    design = p.design
    if p.code == "aci318-19":
        s = ACI_SCALES[system]
        fs = 2.0 / 3.0 * float(design.fy) * s.stress

        def rule_aci(db: float | np.ndarray, spacing: np.ndarray, area: np.ndarray,
                     d: np.ndarray) -> dict[str, np.ndarray]:
            limit = crack_control.aci_spacing_limit(fs, side - np.asarray(db) / 2.0, system)
            with np.errstate(invalid="ignore"):
                return {"ok": ~(spacing > limit), "max_spacing": limit + 0.0 * spacing}
        return rule_aci
    s = EN_SCALES[system]
    L = s.length
    fck = float(design.fc) * s.stress
    m_s = _sustained_moment(analysis, rows, p) * s.moment
    n_mod = cracked.ES["SI"] / float(cracked.ecm_en(fck))
    sag = rows.is_span
    g = cracked.gross(bw * L, h * L, float(np.max(bf)) * L, float(np.max(hf)) * L)
    hcr = np.where(sag, g["yt"], g["y_comp"])  # depth in tension before cracking
    fct = float(en.fctm(fck))

    def rule_en(db: float | np.ndarray, spacing: np.ndarray, area: np.ndarray,
                d: np.ndarray) -> dict[str, np.ndarray]:
        d_b = np.asarray(d, float) * L
        cr = cracked.cracked(bw * L, bf * L, hf * L, np.asarray(area) / s.area, d_b, n_mod)
        with np.errstate(invalid="ignore", divide="ignore"):
            sigma = n_mod * m_s * (d_b - cr["c"]) / cr["icr"]
        out = crack_control.en_check(sigma, np.asarray(db) * L, np.asarray(spacing) * L,
                                     p.crack_width, fct, hcr, h * L, d_b)
        return {**out, "ok": out["ok"] | ~(m_s > 0), "sigma": sigma}
    return rule_en


def _crack(analysis: Analysis, rows: Rows, p: Params, cols: dict[str, np.ndarray],
           units: dict[str, str], failures: list[list[str]], chosen: dict[str, np.ndarray],
           side: float, rule: Any) -> None:
    """Crack-control columns (bar spacing and its limit; EN: the steel stress) and the
    failures of the bars chosen."""
    system = analysis.beam.units.name
    su = SECTION_UNITS[system]
    bw = float(p.design.b)
    has = chosen["index"] >= 0
    db = np.where(has, chosen["diameter"], np.nan)
    clear = bar_mod.min_clear_spacing(p.code, np.nan_to_num(db), p.aggregate, system)
    fit1 = bar_mod.per_layer(bw, side, np.nan_to_num(db), clear)
    n1 = np.minimum(chosen["count"], np.maximum(fit1, 1))
    with np.errstate(divide="ignore", invalid="ignore"):
        spacing = np.where(has & (n1 > 1), (bw - 2.0 * side) / (n1 - 1), np.nan)
    cols["bar_spacing"] = spacing
    units["bar_spacing"] = su["length"]
    out = rule(db, np.nan_to_num(spacing), chosen["area"], chosen["d"])
    limit = np.where(has, out["max_spacing"], np.nan)
    cols["bar_spacing_max"] = limit
    units["bar_spacing_max"] = su["length"]
    bad = np.flatnonzero(has & ~out["ok"])
    if p.code == "aci318-19":
        for i in bad:
            failures[i].append(
                f"bar spacing {spacing[i]:.4g} {su['length']} exceeds the crack-control "
                f"limit {limit[i]:.4g} {su['length']} (ACI 318-19 24.3.2, fs = 2/3 fy) by "
                f"{100 * (spacing[i] / limit[i] - 1):.1f}%: no bar of the set meets it")
        return
    s = EN_SCALES[system]
    L = s.length
    sigma = out["sigma"]
    cols["steel_stress"] = np.where(has, sigma, np.nan) / s.stress
    units["steel_stress"] = su["stress"]
    cols["bar_spacing_max"] = limit / L
    for i in bad:
        failures[i].append(
            f"crack control (EN 1992-1-1 7.3.3, wk = {p.crack_width:g} mm): at "
            f"sigma_s = {sigma[i]:.0f} MPa neither the bar diameter "
            f"({db[i] * L:.0f} mm, Table 7.2N limit {out['max_diameter'][i]:.0f} mm) nor "
            f"the spacing ({spacing[i] * L:.0f} mm, Table 7.3N limit "
            f"{out['max_spacing'][i]:.0f} mm) is within the tables: no bar of the set "
            f"meets them")


def _deflection_columns(analysis: Analysis, p: Params, defl: dict[str, Any],
                        cols: dict[str, np.ndarray], units: dict[str, str],
                        notes: list[list[str]], failures: list[list[str]]) -> None:
    beam = analysis.beam
    n = beam.n_spans
    ell = ratio_lengths(beam) / beam.units.to_consistent("deflection")  # section units
    lab = SECTION_UNITS[beam.units.name]["length"]
    if p.code == "aci318-19":
        live_lim = float(p.limits["live"])
        inc_lim = float(p.limits.get("incremental",
                                     ACI_INCREMENTAL.get(p.nonstructural, np.nan)))
        checks = [("immediate_live", "immediate live-load", live_lim,
                   "ACI 318-19 Table 24.2.2")]
        if p.nonstructural != "none":
            checks.append(("incremental", "after attachment of nonstructural elements",
                           inc_lim, "ACI 318-19 Table 24.2.2"))
    else:
        lt_lim = float(p.limits.get("long_term", EN_LONG_TERM))
        inc_lim = float(p.limits.get("incremental", EN_INCREMENTAL))
        checks = [("long_term", "long-term quasi-permanent", lt_lim,
                   "EN 1992-1-1 7.4.1(4)")]
        if p.nonstructural == "damage-likely":  # 7.4.1(5): parts liable to damage
            checks.append(("incremental", "after construction", inc_lim,
                           "EN 1992-1-1 7.4.1(5)"))
    util = np.full(n, np.nan)
    span_rows = np.arange(n) * 3 + 1
    mid = np.zeros(3 * n, dtype=bool)
    mid[span_rows] = True
    # each limit as a length (span / N), on the span rows of the checks this code makes
    limited = ("immediate_live", "incremental") if p.code == "aci318-19" else \
        ("long_term", "incremental")
    for key in limited:
        limit = next((c[2] for c in checks if c[0] == key), np.nan)
        col = f"deflection_{key}_allowed"
        cols[col] = np.where(mid, np.repeat(ell / limit, 3), np.nan)
        units[col] = lab
    for j in range(n):
        i = int(span_rows[j])
        notes[i].extend(defl["notes"][j])
        failures[i].extend(defl["failures"][j])
        for key, text, limit, clause in checks:
            value = defl[key][j]
            if not np.isfinite(value):
                continue
            allowed = ell[j] / limit
            u = value / allowed
            util[j] = np.fmax(util[j], u)
            if u > 1.0:
                failures[i].append(
                    f"{text} deflection {value:.2f} {lab} (cracked) exceeds span/{limit:g} "
                    f"= {allowed:.2f} {lab} ({clause}) by {100 * (u - 1):.1f}%")
    for key, col in (("immediate", "deflection_immediate"),
                     ("immediate_live", "deflection_immediate_live"),
                     ("long_term", "deflection_long_term"),
                     ("incremental", "deflection_incremental"),
                     ("lambda_delta", "lambda_delta")):
        cols[col] = np.where(mid, np.repeat(defl[key], 3), np.nan)
        units[col] = lab if col != "lambda_delta" else "1"
    cols["utilisation_deflection"] = np.where(mid, np.repeat(util, 3), np.nan)
