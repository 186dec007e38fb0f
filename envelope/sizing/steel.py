"""Sizing columns of a steel beam (AISC 360-22, LRFD): the section used (given, or the
lightest of the user's table that passes every check) and what governs each row.

One section serves the whole beam (a continuous member): it must pass at every row.
Checks (:mod:`envelope.sizing.steel_checks`): flexure with lateral-torsional buckling of
each flange's unbraced segments (F2, Cb by F1-1 from the exact moments of the governing
cases) and flange local buckling (F3); shear (G2.1); web local yielding and crippling at
the supports and under point loads (J10.2, J10.3); deflection limits; DG11 walking
vibration (with ``vibration`` given); a camber suggestion.  The section's
``fabrication`` picks the flange limits of Table B4.1b (case 10 rolled, case 11 welded)
and whether a stocky web takes G2.1(a); the notes say which.

Moments are taken at the support centrelines (no face reduction for steel) and shears at
the span ends.  Deflections rescale the analysed ones (made with the ``[section]`` I of
each span) to each section's Ix: exact for a prismatic beam on rigid supports, an
estimate where spans differ in stiffness or supports are springs.  The analysis (self
weight included) is not repeated with the chosen section.

A strength-only table (``name,Zx,Ix,Aw,weight``) checks the plastic moment, shear on Aw
and deflection, and says in every status what it cannot check.
"""

from __future__ import annotations

import numpy as np

from envelope.analysis import Analysis
from envelope.design import Bracing, SteelDesign, SteelSection
from envelope.sizing import ltb, web
from envelope.sizing import steel_aisc as aisc
from envelope.sizing.bracing import BracingSpec
from envelope.sizing.layout import AISC_SCALES, SECTION_UNITS, Rows, Sized, design_rows
from envelope.sizing.sections import read_sections
from envelope.sizing.shapes import MISSING, NOT_CHECKED, Shapes, from_columns
from envelope.sizing.steel_checks import (
    MIN_FREQUENCY,
    Checks,
    SteelInput,
    Vibration,
    check_all,
    worst,
)

#: The checks a section must pass, in the order rejections name them.
CHECK_NAMES = {"moment": "moment", "shear": "shear", "bearing": "web bearing (J10)",
               "deflection": "deflection", "vibration": "vibration"}


def _pct(ratio: float) -> str:
    return f"{100.0 * (ratio - 1.0):.1f}%"


def _g(v: float) -> str:
    return f"{v:.4g}"


def steel_input(analysis: Analysis) -> SteelInput:
    """The steel design values of the case (section units for Fy and the bearing length;
    consistent units for positions and the vibration keys)."""
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, SteelDesign)
    bracing = design.bracing or Bracing()
    vib = design.vibration
    vibration = None
    if vib is not None:
        vibration = Vibration(
            damping=vib.damping, live=vib.live, spacing=vib.spacing,
            effective_width=vib.spacing if vib.effective_width is None
            else vib.effective_width, tolerance=vib.tolerance)
    return SteelInput(
        Fy=float(design.Fy), E=ltb.E_STEEL[beam.units.name], top=bracing.top,
        bottom=bracing.bottom, bracing_given=design.bracing is not None,
        bearing_length=design.bearing_length, camber_fraction=design.camber_fraction,
        vibration=vibration)


def given_shape(section: SteelSection) -> Shapes:
    """The one given section: full properties or the strength-only Zx, Ix, Aw."""
    cols = {k: np.array([float(v)]) for k, v in section.properties().items()}
    if "weight" not in cols:
        cols["weight"] = np.array([1.0])
    return from_columns([section.name], cols, [section.fabrication])


def _bracing_text(spec: BracingSpec, flange: str) -> str:
    if spec == "continuous":
        return f"{flange} flange braced continuously"
    if spec == "supports":
        return f"{flange} flange braced at the supports only"
    return f"{flange} flange braced at the supports and at listed points"


def _selection(shapes: Shapes, checks: Checks, compact_web: np.ndarray
               ) -> tuple[int, bool, np.ndarray, np.ndarray]:
    """Index of the chosen section, whether it passes, and per section its worst
    utilisation and the check that governs it (index into CHECK_NAMES; -1: web)."""
    w = worst(checks)
    names = list(CHECK_NAMES)
    stack = np.array([w[k] for k in names])
    gov = np.argmax(stack, axis=0)
    worst_u = stack.max(axis=0)
    gov = np.where(compact_web, gov, -1)
    ok = (worst_u <= 1.0) & compact_web
    if ok.any():
        rows = np.flatnonzero(ok)
        return int(rows[np.argmin(shapes.weight[rows])]), True, worst_u, gov
    score = np.where(compact_web, worst_u, np.inf)
    if not np.isfinite(score).any():
        score = worst_u
    return int(np.argmin(score)), False, worst_u, gov


def _where(checks: Checks, name: str, k: int, rows_span: np.ndarray,
           rows_section: np.ndarray) -> str:
    a = getattr(checks, name)[:, k]
    if np.isnan(a).all():
        return ""
    r = int(np.nanargmax(a))
    return f"span {rows_span[r] + 1} {rows_section[r]}"


def model_inertia(analysis: Analysis) -> np.ndarray:
    """Per span, the I the analysis was made with (the least of its stretches), in
    section units (mm^4 / in^4): the analysed deflections scale by this over Ix."""
    beam = analysis.beam
    to_section = beam.units.to_consistent("inertia")
    return np.array([min(st.section.I for st in sp.stretches) for sp in beam.spans]
                    ) / to_section


def _self_weight_notes(analysis: Analysis, rows: Rows, shapes: Shapes, k: int,
                       notes: list[list[str]], su: dict[str, str]) -> None:
    """On the span rows of every span whose self weight was analysed with a smaller area
    than the chosen shape's plates (2 bf tf + (d - 2 tf) tw, no fillets): the analysis
    is not repeated with the chosen section, so its dead load is that much low."""
    if not shapes.full:
        return
    beam = analysis.beam
    plates = float(2 * shapes.bf[k] * shapes.tf[k]
                   + (shapes.d[k] - 2 * shapes.tf[k]) * shapes.tw[k])
    to_section = 1.0 / beam.units.to_consistent("area")
    for j, sp in enumerate(beam.spans):
        if not any(ld.type == "self_weight" and ld.span == j for ld in beam.loads):
            continue
        areas = [st.section.A for st in sp.stretches
                 if st.section.A is not None and st.section.unit_weight]
        if not areas:
            continue
        analysed = min(areas) * to_section
        if plates > analysed * (1.0 + 1e-3):
            for i in np.flatnonzero((rows.span == j) & rows.is_span).tolist():
                notes[i].append(
                    f"self weight analysed with A = {_g(analysed)} {su['area']}, the "
                    f"chosen section's plates have {_g(plates)} {su['area']} "
                    f"({100 * (plates / analysed - 1):.1f} % more): the analysed self "
                    f"weight is that much low; give [section] A = {_g(plates)} "
                    f"{su['area']} and run again")


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
    inp = steel_input(analysis)
    fy = inp.Fy * s.stress
    rows = design_rows(analysis, at_faces=False, shear_shift=None)
    n = rows.n
    ends, mid = rows.is_end, rows.is_span
    zx_req = aisc.zx_required(rows.moment * s.moment, fy)
    aw_req = np.where(ends, aisc.aw_required(np.nan_to_num(rows.shear) * s.force, fy), np.nan)
    i_model = model_inertia(analysis)
    ratio = np.repeat(defl["utilisation"], 3)
    ix_req = np.where(mid, aisc.ix_required(np.repeat(i_model, 3), ratio), np.nan)

    if design.section is not None:
        shapes = given_shape(design.section)
        source = "given section"
        csv_name = ""
    else:
        shapes = read_sections(beam)
        csv_name = str(design.sections)
        source = f"lightest passing section of {csv_name}"
    checks = check_all(analysis, rows, shapes, inp, defl, i_model, s.moment, s.force)
    compact_web = (ltb.web_is_compact(shapes.h, shapes.tw, inp.E, inp.Fy) if shapes.full
                   else np.ones(shapes.n, dtype=bool))
    k, passes, worst_u, gov = _selection(shapes, checks, compact_web)
    notes: list[list[str]] = [[] for _ in range(n)]
    failures: list[list[str]] = [[] for _ in range(n)]
    if csv_name and not passes:
        for i in range(n):
            failures[i].append(f"no section in {csv_name} passes every check; the closest, "
                               f"{shapes.name[k]}, is checked here")
        source = f"closest section of {csv_name} (none passes)"
    candidates = _candidate_lines(shapes, checks, worst_u, gov, k, passes, rows)
    name = shapes.name[k]
    _row_messages(rows, shapes, checks, inp, k, notes, failures, source,
                  bool(compact_web[k]), u, su)
    _self_weight_notes(analysis, rows, shapes, k, notes, su)
    Zx, Aw, Ix = float(shapes.Zx[k]), float(shapes.Aw[k]), float(shapes.Ix[k])
    u_d = np.where(mid, checks.deflection[:, k], np.nan)
    u_live = np.repeat(defl["utilisation_live"], 3) * np.repeat(i_model, 3) / Ix
    u_total = np.repeat(defl["utilisation_total"], 3) * np.repeat(i_model, 3) / Ix
    for i in np.flatnonzero(mid).tolist():
        if u_d[i] > 1.0:
            which = "live-load" if u_live[i] >= u_total[i] else "total-load"
            failures[i].append(
                f"deflection: with Ix = {_g(Ix)} {su['inertia']} the {which} deflection is "
                f"{_pct(u_d[i])} over its limit; needs Ix >= {_g(ix_req[i])} "
                f"{su['inertia']}")
    phi_mp = aisc.PHI_B * fy * Zx / s.moment
    seg_text = np.full(n, "", dtype=object)
    lu = u["length"]
    for i in range(n):
        g = int(checks.segment[i, k])
        if g >= 0:
            seg_text[i] = (f"{checks.segs.flange[g]} flange {checks.segs.x0[g]:.2f}-"
                           f"{checks.segs.x1[g]:.2f} {lu}")
    full = shapes.full
    cols = {
        "zx_required": zx_req, "aw_required": aw_req, "ix_required": ix_req,
        "steel_section": np.full(n, name, dtype=object),
        "Zx": np.full(n, Zx), "Aw": np.full(n, Aw), "Ix": np.full(n, Ix),
        "phiMn": np.full(n, phi_mp), "phiVn": checks.phi_vn[:, k],
        "lb": np.where(full, checks.lb[:, k], np.nan), "cb": checks.cb[:, k],
        "phi_mn": checks.phi_mn[:, k], "segment": seg_text,
        "moment_segment": checks.moment_segment[:, k],
        "utilisation_moment": checks.moment[:, k], "utilisation_shear": checks.shear[:, k],
        "utilisation_bearing": checks.bearing[:, k],
        "bearing_force": checks.bearing_force[:, k], "phi_rn": checks.bearing_rn[:, k],
        "utilisation_deflection": u_d,
        "camber": checks.camber[:, k], "frequency": checks.frequency[:, k],
        "acceleration": checks.acceleration[:, k],
        "utilisation_vibration": checks.vibration[:, k],
    }
    units = {"zx_required": su["modulus"], "aw_required": su["area"],
             "ix_required": su["inertia"], "Zx": su["modulus"], "Aw": su["area"],
             "Ix": su["inertia"], "phiMn": u["moment"], "phiVn": u["force"],
             "lb": u["length"], "phi_mn": u["moment"], "moment_segment": u["moment"],
             "bearing_force": u["force"], "phi_rn": u["force"], "camber": u["deflection"],
             "frequency": "Hz"}
    return Sized(rows, cols, units, notes, failures, candidates)


def _candidate_lines(shapes: Shapes, checks: Checks, worst_u: np.ndarray, gov: np.ndarray,
                     chosen: int, passes: bool, rows: Rows) -> tuple[str, ...]:
    """One line per section of the table in weight order, up to the chosen one (all of
    them when none passes): every check that rejects it, worst first, by how much and
    where."""
    if shapes.n <= 1:
        return ()
    order = np.argsort(shapes.weight, kind="stable")
    w = worst(checks)
    out = []
    for k in order:
        k = int(k)
        failing = sorted(((w[name][k], name) for name in CHECK_NAMES if w[name][k] > 1.0),
                         reverse=True)
        if not failing:   # the worst check, for the chosen section's line
            failing = [(w[name][k], name) for name in CHECK_NAMES if w[name][k] ==
                       worst_u[k]][:1]
        whys = [f"{CHECK_NAMES[name]} {u:.2f} at "
                f"{_where(checks, name, k, rows.span, rows.section)}" for u, name in failing]
        if gov[k] < 0:
            whys.insert(0, "web noncompact (F4/F5 not covered)")
        why = "; ".join(whys)
        if k == chosen:
            out.append(f"{shapes.name[k]}: {'chosen' if passes else 'closest'} "
                       f"(worst: {why})")
            if passes:
                break
        else:
            out.append(f"{shapes.name[k]}: "
                       f"{'rejected: ' + why if gov[k] < 0 or worst_u[k] > 1.0 else 'passes'}")
    return tuple(out)


def _fabrication_notes(shapes: Shapes, k: int, inp: SteelInput) -> tuple[str, str]:
    """What the chosen section's fabrication decides, for the notes: the flange limit of
    Table B4.1b (every row) and the shear clause of G2.1 (end rows)."""
    rolled = bool(shapes.rolled[k])
    made = "rolled" if rolled else "welded"
    if not shapes.full:
        if not rolled:
            return "", ""
        return "", ("rolled, but a strength-only section gives no h/tw for G2.1(a): shear "
                    "by phi_v = 0.90 (AISC 360-22 G2.1(b))")
    E, Fy = inp.E, inp.Fy
    lam = float(shapes.bf[k] / (2.0 * shapes.tf[k]))
    lam_p, lam_r = ltb.flange_limits(E, Fy, ltb.kc(shapes.h[k], shapes.tw[k]), rolled)
    limit = "1.0 sqrt(E/Fy)" if rolled else "0.95 sqrt(kc E/FL)"
    case = "10 (rolled)" if rolled else "11 (welded, built-up)"
    klass = ltb.flange_class(shapes.bf[k], shapes.tf[k], shapes.h[k], shapes.tw[k], E, Fy,
                             rolled)
    flange = (f"{made} section: flange bf/2tf = {lam:.2f} {klass} by AISC 360-22 Table "
              f"B4.1b case {case}, lambda_pf = 0.38 sqrt(E/Fy) = {lam_p:.2f}, lambda_rf = "
              f"{limit} = {float(lam_r):.2f} (F3)")
    h_tw = float(shapes.h[k] / shapes.tw[k])
    limit_a = web.ROLLED_LIMIT * float(np.sqrt(E / Fy))
    if bool(web.g2_1a(shapes.h[k], shapes.tw[k], E, Fy, rolled)):
        shear = (f"shear by AISC 360-22 G2.1(a): rolled web, h/tw = {h_tw:.2f} <= 2.24 "
                 f"sqrt(E/Fy) = {limit_a:.2f}, phi_v = 1.00, Cv1 = 1.0")
    else:
        cv1 = float(web.cv1(shapes.h[k], shapes.tw[k], E, Fy))
        why = (f"rolled web with h/tw = {h_tw:.2f} > 2.24 sqrt(E/Fy) = {limit_a:.2f}"
               if rolled else "welded web")
        shear = f"shear by AISC 360-22 G2.1(b): {why}, phi_v = 0.90, Cv1 = {cv1:.3g}"
    return flange, shear


def _row_messages(rows: Rows, shapes: Shapes, checks: Checks, inp: SteelInput, k: int,
                  notes: list[list[str]], failures: list[list[str]], source: str,
                  compact_web: bool, u: dict[str, str], su: dict[str, str]) -> None:
    """Notes and failures of every row for the chosen section ``k``."""
    mu_unit, f_unit, l_unit = u["moment"], u["force"], u["length"]
    n = rows.n
    full = shapes.full
    bracing = (f"{_bracing_text(inp.top, 'top')}, {_bracing_text(inp.bottom, 'bottom')}"
               + ("" if inp.bracing_given else " (no bracing given: supports only assumed)"))
    flange_note, shear_note = _fabrication_notes(shapes, k, inp)
    for i in range(n):
        notes[i].append(source)
        if flange_note:
            notes[i].append(flange_note)
        if shear_note and rows.is_end[i]:
            notes[i].append(shear_note)
        if not full:
            failures[i].append(f"not checked: {NOT_CHECKED} ({MISSING})")
        elif not compact_web:
            failures[i].append("not checked: the web is noncompact or slender (h/tw > 3.76 "
                               "sqrt(E/Fy), Table B4.1b): AISC 360-22 F4/F5 are not covered")
    for i in range(n):
        side = "sagging, top flange in compression" if rows.section[i] == "span" else \
            "hogging, bottom flange in compression"
        if full:
            notes[i].append(f"{side}; {bracing}")
        um = checks.moment[i, k]
        g = int(checks.segment[i, k])
        phi = checks.phi_mn[i, k]
        if g >= 0 and full:
            segs = checks.segs
            desc = (f"{segs.flange[g]} flange over x = {segs.x0[g]:.2f}-{segs.x1[g]:.2f} "
                    f"{l_unit} (Lb = {segs.length[g]:.2f} {l_unit}, Cb = "
                    f"{checks.cb[i, k]:.2f}{', cantilever' if segs.cantilever[g] else ''})")
            seg_governs = abs(checks.moment_segment[i, k] / phi - um) <= 1e-9 * max(um, 1.0)
            if seg_governs and checks.moment_segment[i, k] > 0.0:
                notes[i].append(f"governing segment: {desc}, Mu = "
                                f"{checks.moment_segment[i, k]:.1f} {mu_unit}, phi_b Mn = "
                                f"{phi:.1f} {mu_unit} (AISC 360-22 F2)")
                if um > 1.0:
                    failures[i].append(
                        f"moment: lateral-torsional buckling of the {desc}: Mu = "
                        f"{checks.moment_segment[i, k]:.1f} {mu_unit} exceeds phi_b Mn = "
                        f"{phi:.1f} {mu_unit} (AISC 360-22 F2) by {_pct(um)}")
                continue
        if um > 1.0:
            limit = ("0.90 Mp (F2.1)" if not full or
                     ltb.flange_class(shapes.bf[k], shapes.tf[k], shapes.h[k], shapes.tw[k],
                                      inp.E, inp.Fy, shapes.rolled[k]) == "compact"
                     else "0.90 Mn for flange local buckling (F3.2)")
            failures[i].append(
                f"moment: Mu = {abs(rows.moment[i]):.1f} {mu_unit} exceeds phi_b Mn = "
                f"{limit} = {phi:.1f} {mu_unit} (AISC 360-22) by {_pct(um)}")
    rolled_web = full and bool(web.g2_1a(shapes.h[k], shapes.tw[k], inp.E, inp.Fy,
                                         shapes.rolled[k]))
    strength = ("1.00 * 0.6 Fy Aw (Cv1 = 1.0)", "G2.1(a)") if rolled_web else \
        ("0.90 * 0.6 Fy Aw Cv1", "G2.1(b)" if full else "G2.1")
    for i in np.flatnonzero(rows.is_end).tolist():
        us = checks.shear[i, k]
        if us > 1.0:
            failures[i].append(
                f"shear: Vu = {rows.shear[i]:.1f} {f_unit} exceeds phi_v Vn = {strength[0]} "
                f"= {checks.phi_vn[i, k]:.1f} {f_unit} (AISC 360-22 {strength[1]}) by "
                f"{_pct(us)}")
    lb_unit = su["length"]
    for i in range(n):
        ub = checks.bearing[i, k]
        if np.isnan(ub):
            continue
        where = "at the support" if rows.section[i] != "span" else "under a point load"
        state = ("web crippling (J10.3)" if checks.bearing_kind[i, k] == 1
                 else "web local yielding (J10.2)")
        lb = checks.bearing_lb[i, k]
        if rows.section[i] != "span" and lb == 0.0:
            notes[i].append("no support width given: bearing length 0 for J10.2 and J10.3")
        if rows.section[i] == "span" and inp.bearing_length is None:
            notes[i].append("no bearing_length given: point loads bear on length 0 for "
                            "J10.2 and J10.3")
        if ub > 1.0:
            failures[i].append(
                f"{state} {where}: Ru = {checks.bearing_force[i, k]:.1f} {f_unit} exceeds "
                f"phi Rn = {checks.bearing_rn[i, k]:.1f} {f_unit} (lb = {lb:.3g} {lb_unit}) "
                f"by {_pct(ub)}: bearing stiffeners needed (or a longer bearing)")
    for i in np.flatnonzero(rows.is_span).tolist():
        c = checks.camber[i, k]
        dead = checks.dead_deflection[i, k]
        if np.isfinite(c):
            if c > 0.0:
                notes[i].append(f"camber {c:.3g} {u['deflection']} suggested "
                                f"({inp.camber_fraction:g} of the dead-load deflection "
                                f"{dead:.3g} {u['deflection']}, common practice)")
            else:
                notes[i].append(f"no camber: dead-load deflection {dead:.3g} "
                                f"{u['deflection']} is small")
        vib = inp.vibration
        if vib is None:
            continue
        if not full:
            continue
        fn, ap = checks.frequency[i, k], checks.acceleration[i, k]
        if np.isnan(fn):
            if np.isnan(ap):
                notes[i].append("vibration not checked here (a cantilever, or no dead "
                                "load on the span)")
            continue
        notes[i].append(f"DG11 walking: fn = {fn:.2f} Hz, ap/g = {100 * ap:.2f}% against "
                        f"{100 * vib.tolerance:.2f}% (beta = {vib.damping:g}; bare steel "
                        f"Ix, composite action neglected)")
        if fn < MIN_FREQUENCY:
            failures[i].append(f"vibration: fn = {fn:.2f} Hz is below {MIN_FREQUENCY:g} Hz "
                               f"(AISC Design Guide 11)")
        if ap > vib.tolerance:
            failures[i].append(f"vibration: ap/g = {100 * ap:.2f}% exceeds "
                               f"{100 * vib.tolerance:.2f}% (AISC Design Guide 11 walking, "
                               f"fn = {fn:.2f} Hz)")
