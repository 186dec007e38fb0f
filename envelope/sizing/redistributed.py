"""Moment redistribution checked on the section designed, and ``"max"`` settled.

The analysis redistributes the fraction the case asks for (:mod:`envelope.redistribution`);
whether the code allows it depends on the section sized for the reduced moment, so it is
checked here, after sizing, at each face of every interior support where the beam hogs:

- ACI 318-19 6.6.5: at most the lesser of 1000 eps_t percent and 20 percent, and none
  where eps_t < 0.0075, with eps_t the net tensile strain of the bars provided at the
  face (rectangular block, 22.2.2; d to the centroid of the bars, so with two layers
  eps_t is on the low side);
- EN 1992-1-1:2004 5.5(4): delta = 1 - fraction >= k1 + k2 xu/d (k3 + k4 xu/d above
  fck = 50 MPa) and >= k5 (class B, C steel) or k6 (class A), recommended values, xu the
  neutral axis of the bars provided at the ultimate limit state (the rectangular block
  of 3.1.7(3)), and only where the adjacent spans are within a ratio of 0.5 to 2.

The fraction allowed at a support is the smaller of its two faces' (a face that never
hogs allows the code's ceiling: nothing is reduced there).  A fraction used above it
fails the row's status with the clause; where the case asked for a fraction at every
support and a support cannot redistribute at all, the note says why.

``redistribution = "max"`` (:func:`settle_largest`): the analysis starts from the code's
ceiling; after each sizing every support that asks for more than its section allows is
lowered to the allowed fraction (rounded down to ``config.REDISTRIBUTION_STEP``) and the
beam is analysed and sized again, the solve reused, until every support is within what it
allows (at most ``config.REDISTRIBUTION_MAX_SIZINGS`` sizings).  A larger fraction
means a smaller hogging moment, less steel and a more ductile section, so the fraction
only falls and the loop ends.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable

import numpy as np

from envelope import config
from envelope import redistribution as rd
from envelope.analysis import Analysis
from envelope.design import ConcreteDesign
from envelope.sizing import concrete_aci as aci
from envelope.sizing import concrete_en as en
from envelope.sizing.layout import ACI_SCALES, EN_SCALES, Sized
from envelope.solved import Solved

#: Columns added to a concrete sizing.
COLUMNS = ("redistribution", "redistribution_allowed")


def _joints(sized: Sized) -> np.ndarray:
    """The joint (0-based) of each row: left rows the span's left support, right rows
    its right support, span rows -1."""
    rows = sized.rows
    return np.where(rows.section == "left", rows.span,
                    np.where(rows.section == "right", rows.span + 1, -1))


def _face_allowed(analysis: Analysis, sized: Sized) -> tuple[np.ndarray, np.ndarray]:
    """Per row: the fraction the code allows at that face for the bars provided (the
    code's ceiling where the face does not hog; NaN on span rows), and the strain
    measure it comes from (ACI eps_t, EN xu/d)."""
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    rows = sized.rows
    cols = sized.columns
    system = beam.units.name
    area = np.asarray(cols.get("as_provided", cols["as_design"]), dtype=float)
    area = np.where(np.isfinite(area) & (area > 0), area,
                    np.asarray(cols["as_design"], dtype=float))
    b = np.asarray(cols["b"], dtype=float)
    d = np.asarray(cols["d"], dtype=float)
    hog = rows.is_end & (rows.moment < 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        if design.code == "aci318-19":
            s = ACI_SCALES[system]
            measure = aci.capacity(np.nan_to_num(area), b, d, float(design.fc) * s.stress,
                                   float(design.fy) * s.stress, system)["eps_t"]
            measure = np.where(np.isfinite(area) & (area > 0), measure, np.nan)
            allowed = rd.aci_allowed(measure)
        else:
            s = EN_SCALES[system]
            res = en.resistance(np.nan_to_num(area) / s.area, b * s.length, d * s.length,
                                float(design.fc) * s.stress, float(design.fy) * s.stress)
            measure = np.where(np.isfinite(area) & (area > 0), res["x"] / (d * s.length),
                               np.nan)
            allowed = rd.en_allowed(measure, float(design.fc) * s.stress,
                                    design.steel_class)
    allowed = np.where(hog, allowed, rd.largest(design))
    return np.where(rows.is_end, allowed, np.nan), np.where(hog, measure, np.nan)


def joint_allowed(analysis: Analysis, sized: Sized) -> np.ndarray:
    """Per joint, the fraction the code allows (the smaller of its faces'; 0 where moment
    cannot be redistributed, or, in EN 1992-1-1, where the adjacent spans' ratio is
    outside 0.5 to 2)."""
    beam = analysis.beam
    face, _ = _face_allowed(analysis, sized)
    joint = _joints(sized)
    out = np.full(len(beam.supports), np.inf)
    ends = joint >= 0
    np.minimum.at(out, joint[ends], face[ends])
    why = rd.excluded(beam)
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    for j in range(len(out)):
        if why[j] or (design.code == "en1992-1-1" and not rd.en_span_ratio_ok(beam, j)):
            out[j] = 0.0
    return np.where(np.isfinite(out), out, 0.0)


def check(analysis: Analysis, sized: Sized) -> Sized:
    """The sizing with ``redistribution`` (fraction used at each support row, 0 on span
    rows and where none) and ``redistribution_allowed`` (what the code allows there;
    null on span rows and at supports that cannot redistribute), the check of one against
    the other in the status, and notes saying what was redistributed."""
    beam = analysis.beam
    design = beam.design
    assert isinstance(design, ConcreteDesign)
    fraction = analysis.solved.redistribution
    n_joints = len(beam.supports)
    used_joint = np.zeros(n_joints) if fraction is None else np.asarray(fraction, float)
    joint = _joints(sized)
    ends = joint >= 0
    face, measure = _face_allowed(analysis, sized)
    allowed_joint = joint_allowed(analysis, sized)
    why = rd.excluded(beam)
    used = np.where(ends, used_joint[np.maximum(joint, 0)], 0.0)
    allowed = np.where(ends, allowed_joint[np.maximum(joint, 0)], np.nan)
    allowed = np.where(ends & np.array([not why[j] if j >= 0 else False for j in joint]),
                       allowed, np.nan)
    notes, failures = sized.notes, sized.failures
    asked = design.redistribution is not None
    _, max_at = rd.requested(beam)
    for i in np.flatnonzero(ends).tolist():
        j = int(joint[i])
        if asked and why[j] and j not in (0, n_joints - 1):
            notes[i].append(f"no moment redistribution at support {j + 1}: {why[j]}")
        if (asked and not why[j] and design.code == "en1992-1-1"
                and not rd.en_span_ratio_ok(beam, j)):
            notes[i].append(f"adjacent spans ratio {rd.en_span_ratio(beam, j):.2f} at "
                            f"support {j + 1} is outside 0.5 to 2: no redistribution "
                            f"without a rotation check (EN 1992-1-1 5.5(4))")
        if used[i] <= 0.0:
            if max_at[j] and not why[j]:
                why_none = _limit(analysis, design, measure[i], j)
                notes[i].append(f"redistribution \"max\" at support {j + 1}: the section "
                                f"designed allows none here ({why_none})")
            continue
        notes[i].append(_used_text(design, used[i], j, analysis))
        limit = min(float(face[i]), float(allowed_joint[j]))
        if used[i] > limit + config.REDISTRIBUTION_ATOL:
            failures[i].append(_too_much(analysis, design, used[i], limit, measure[i], j))
    cols = dict(sized.columns)
    cols["redistribution"] = used
    cols["redistribution_allowed"] = allowed
    units = dict(sized.units)
    units.update({c: "1" for c in COLUMNS})
    return dataclasses.replace(sized, columns=cols, units=units)


def _used_text(design: ConcreteDesign, used: float, j: int, analysis: Analysis) -> str:
    clause = "ACI 318-19 6.6.5" if design.code == "aci318-19" else "EN 1992-1-1 5.5(4)"
    how = ""
    if design.redistribution == "max" or (isinstance(design.redistribution, tuple)
                                          and design.redistribution[j] == "max"):
        n = analysis.redistribution_sizings
        how = f", the largest allowed (found in {n} sizing{'' if n == 1 else 's'})"
    return (f"support moment redistributed by {100.0 * used:.1f} % of its elastic value "
            f"in every strength arrangement{how} ({clause}); service deflections elastic")


def _too_much(analysis: Analysis, design: ConcreteDesign, used: float, allowed: float,
              measure: float, j: int) -> str:
    head = (f"moment redistribution {100.0 * used:.1f} % at support {j + 1} exceeds the "
            f"{100.0 * allowed:.1f} % allowed by {100.0 * (used - allowed):.1f} points")
    limit = _limit(analysis, design, measure, j)
    if design.code == "aci318-19":
        return f"{head} ({limit})"
    return f"{head} ({limit}; delta = {1.0 - used:.3f} used, at least {1.0 - allowed:.3f})"


def _limit(analysis: Analysis, design: ConcreteDesign, measure: float, j: int) -> str:
    """The clause limiting redistribution at support ``j`` and the section's value."""
    beam = analysis.beam
    if design.code == "aci318-19":
        strain = "eps_t not known (no steel found)" if not np.isfinite(measure) else \
            f"eps_t = {measure:.4f}"
        return (f"ACI 318-19 6.6.5: the lesser of 1000 eps_t percent and 20 percent, "
                f"none below eps_t = {rd.ACI_EPS_T_MIN}; {strain} here")
    if not rd.en_span_ratio_ok(beam, j):
        return (f"EN 1992-1-1 5.5(4): adjacent spans ratio {rd.en_span_ratio(beam, j):.2f} "
                f"outside {rd.EN_SPAN_RATIO[0]:g} to {rd.EN_SPAN_RATIO[1]:g}, no "
                f"redistribution without a rotation check")
    ratio = "xu/d not known (no steel found)" if not np.isfinite(measure) else \
        f"xu/d = {measure:.3f}"
    floor = "k6" if design.steel_class == "A" else "k5"
    return (f"EN 1992-1-1 5.5(4): delta >= k1 + k2 xu/d and >= {floor}, recommended "
            f"values; {ratio} here, class {design.steel_class} steel")


def settle_largest(analysis: Analysis, rerun: Callable[[Solved], Analysis]) -> Analysis:
    """The analysis with every ``"max"`` support at the largest fraction its designed
    section allows (module docstring); ``rerun`` analyses a re-redistributed beam."""
    from envelope.sizing import concrete_sized

    beam = analysis.beam
    fraction, as_max = rd.requested(beam)
    step = config.REDISTRIBUTION_STEP
    sizings = 0
    for _ in range(config.REDISTRIBUTION_MAX_SIZINGS):
        sized = concrete_sized(analysis)
        sizings += 1
        allowed = joint_allowed(analysis, sized)
        too_much = as_max & (fraction > allowed + config.REDISTRIBUTION_ATOL)
        if not too_much.any():
            break
        lowered = np.floor(allowed / step + config.REDISTRIBUTION_ATOL) * step
        fraction = np.where(too_much, np.minimum(lowered, fraction - step), fraction)
        fraction = np.maximum(fraction, 0.0)
        analysis = rerun(analysis.solved.redistributed(fraction))
    return dataclasses.replace(analysis, redistribution_sizings=sizings)


def summary_line(beam_code: str, cols: dict[str, np.ndarray]) -> str | None:
    """One console line: the fraction used and allowed at each support that
    redistributes or could (from the sizing columns); None where nothing is asked."""
    if "redistribution" not in cols:
        return None
    span, section = cols["span"], cols["section"]
    used, allowed = cols["redistribution"], cols["redistribution_allowed"]
    seen: dict[int, tuple[float, float]] = {}
    for i in range(span.size):
        if section[i] == "span":
            continue
        joint = int(span[i]) + (1 if section[i] == "right" else 0)  # 1-based support
        a = float(allowed[i])
        if np.isnan(a) and used[i] == 0.0:
            continue
        u_prev, a_prev = seen.get(joint, (0.0, np.inf))
        seen[joint] = (max(u_prev, float(used[i])), min(a_prev, a if np.isfinite(a) else 0.0))
    if not any(u > 0.0 for u, _ in seen.values()):
        return None
    clause = "ACI 318-19 6.6.5" if beam_code == "aci318-19" else "EN 1992-1-1 5.5(4)"
    parts = [f"support {j} {100.0 * u:.1f} % (allowed {100.0 * a:.1f} %)"
             for j, (u, a) in sorted(seen.items())]
    return (f"Moment redistribution ({clause}), of the elastic support moment in every "
            f"strength arrangement: {'; '.join(parts)}.  Service deflections are elastic.")
