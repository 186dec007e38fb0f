"""Properties every linear-elastic continuous beam must have, on beams drawn by
hypothesis (bounded example counts; no deadline, so nothing here is timed):

* statics of every unit case (reactions balance the loads of that case on that cell,
  forces and moments about the left end) (common practice);
* Maxwell-Betti reciprocity, force-force and force-moment, on beams with springs and
  sections that change inside spans (Maxwell's reciprocal theorem; common practice);
* superposition and linearity in load magnitude (linear elasticity; common practice);
* mirror symmetry: the beam seen from the other side gives mirrored moments,
  deflections and reactions, shears and rotations negated (common practice);
* one beam written in SI and in US units agrees after conversion with 1 ft = 0.3048 m
  and 1 kip = 4.4482216152605 kN (from memory: international yard and pound, 1959,
  and standard gravity 9.80665 m/s^2);
* the envelope grows with the arrangements enveloped: none within code within
  exhaustive within segments, because each method's arrangements include the
  previous one's (case-format contract, "Patterning methods").
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from test_reference import (
    FT,
    KIP,
    TO_US,
    BeamSpec,
    LoadSpec,
    SpanSpec,
    SupportSpec,
    _stable,
    beam_of,
    mirror,
)

from envelope.model import Beam
from envelope.recovery import Points, make_points
from envelope.solved import case_responses, envelope_at, solve_beam

import reference as ref

RTOL = 1e-9
#: Added to a drawn case so that it is never zero everywhere (tolerances are relative
#: to the largest value of each quantity).
BASELINE = LoadSpec("A", "uniform", 1, {"w": 5.0})
SETTINGS = settings(max_examples=100, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])


# ---------------------------------------------------------------------------
# Strategies
# ---------------------------------------------------------------------------

def _fractions(lo: int = 5, hi: int = 95) -> st.SearchStrategy[float]:
    """A position as a fraction of a span, in steps of 1 %."""
    return st.integers(lo, hi).map(lambda p: p / 100)


@st.composite
def spans_and_supports(draw: st.DrawFn, n_min: int = 2, n_max: int = 5
                       ) -> tuple[list[SpanSpec], list[SupportSpec]]:
    n = draw(st.integers(n_min, n_max))
    spans = []
    for _ in range(n):
        L = draw(st.integers(250, 800)) / 100
        props = {"I": draw(st.integers(3, 9)) * 1e9} if draw(st.booleans()) else {}
        sections = []
        if draw(st.booleans()):
            # at least 5 % of the span long: a stretch of a few centimetres makes the
            # engine withhold its results (see test_reference's short-stretch test)
            a = draw(_fractions(5, 85))
            b = a + draw(_fractions(5, 95 - round(100 * a)))
            sections.append({"from": round(a * L, 4), "to": round(b * L, 4),
                             "I": draw(st.integers(2, 20)) * 1e9})
        spans.append(SpanSpec(L, props, sections))
    supports = []
    for _ in range(n + 1):
        kind = draw(st.sampled_from(["pinned", "pinned", "fixed", "free", "spring"]))
        values: dict[str, float] = {}
        if kind == "spring":
            values = draw(st.sampled_from([
                {"k_vertical": 2.0e4}, {"k_rotation": 5.0e4},
                {"k_vertical": 8.0e3, "k_rotation": 1.5e5}, {"k_vertical": 0.0,
                                                              "k_rotation": 9.0e4}]))
        supports.append(SupportSpec(kind, values))
    assume(_stable(supports))
    return spans, supports


@st.composite
def loads_on(draw: st.DrawFn, spans: list[SpanSpec], case: str, count: int = 3
             ) -> list[LoadSpec]:
    out = []
    for _ in range(draw(st.integers(1, count))):
        j = draw(st.integers(1, len(spans)))
        L = spans[j - 1].length
        kind = draw(st.sampled_from(["uniform", "linear", "point", "moment"]))
        if kind in ("point", "moment"):
            at = round(draw(st.integers(0, 100)) / 100 * L, 4)
            value = draw(st.integers(-40, 60).filter(bool)) * 1.0
            out.append(LoadSpec(case, kind, j, {"P" if kind == "point" else "M": value,
                                                "at": at}))
            continue
        a, b = sorted(draw(st.lists(st.integers(0, 100), min_size=2, max_size=2,
                                    unique=True)))
        extent = {"start": round(a / 100 * L, 4), "end": L if b == 100 else round(b / 100 * L, 4)}
        if kind == "uniform":
            out.append(LoadSpec(case, kind, j, {"w": draw(st.integers(-5, 20).filter(bool))
                                                * 1.0, **extent}))
        else:
            out.append(LoadSpec(case, kind, j, {"w_start": draw(st.integers(-5, 20)) * 1.0,
                                                "w_end": draw(st.integers(-5, 20)) * 1.0,
                                                **extent}))
    return out


def _spec(spans: list[SpanSpec], supports: list[SupportSpec], cases: dict[str, dict],
          loads: list[LoadSpec], **kw: object) -> BeamSpec:
    combos = [("ALL", "strength", {c: 1.0 for c in cases})]
    return BeamSpec(spans, supports, cases, loads, combos, **kw)  # type: ignore[arg-type]


def _points(beam: Beam, per_span: int = 9) -> Points:
    span, xs = [], []
    for j, sp in enumerate(beam.spans):
        for x in np.linspace(0.0, sp.length, per_span):
            span.append(j)
            xs.append(float(x))
    return make_points(beam, np.array(span), np.array(xs))


def _close(got: np.ndarray, want: np.ndarray, what: str, scale: float | None = None) -> None:
    got, want = np.asarray(got, float), np.asarray(want, float)
    s = scale if scale is not None else max(float(np.abs(want).max(initial=0.0)), 1e-300)
    bad = np.flatnonzero(~(np.abs(got - want) <= RTOL * s))  # NaN is bad too
    assert bad.size == 0, (f"{what}: row {bad[0]}: {got.flat[bad[0]]!r} against "
                           f"{want.flat[bad[0]]!r} (scale {s:.4g})")


# ---------------------------------------------------------------------------
# Statics
# ---------------------------------------------------------------------------

@SETTINGS
@given(data=st.data(), segments=st.integers(1, 3))
def test_every_unit_case_is_in_equilibrium(data: st.DataObject, segments: int) -> None:
    """For each unit case (one case on one cell): sum of reactions = sum of loads, and
    moments about the left end balance (upward reactions at x_i, counter-clockwise
    support moments, downward loads, clockwise applied moments)."""
    spans, supports = data.draw(spans_and_supports())
    loads = data.draw(loads_on(spans, "A", 4)) + data.draw(loads_on(spans, "B", 3))
    cases = {"A": {"kind": "dead"}, "B": {"kind": "live"}}
    method = "segments" if segments > 1 else "none"
    beam = beam_of(_spec(spans, supports, cases, loads, method=method,
                         segments=max(segments, 2)))
    solved = solve_beam(beam)
    cells = ref.cells_of(beam)
    assert list(solved.cells.label) == [c.label for c in cells]
    xj = np.asarray(beam.joint_x)
    R, Rm = solved.solution.reaction, solved.solution.reaction_moment
    for u in range(solved.unit_cases.n_units):
        case = beam.cases[int(solved.unit_cases.case[u])].name
        items = ref.case_items(beam, case, cells[int(solved.unit_cases.cell[u])])
        force = moment = size = 0.0
        for it in items:
            x0 = xj[it.span]
            if it.kind == "point":
                force += it.value
                moment += it.value * (x0 + it.a)
                size += abs(it.value)
            elif it.kind == "moment":
                moment += it.value
                size += abs(it.value) / xj[-1]
            else:
                h = it.b - it.a
                force += (it.wa + it.wb) * h / 2
                moment += it.wa * h * (x0 + it.a + h / 2) + (it.wb - it.wa) * h / 2 * (
                    x0 + it.a + 2 * h / 3)
                size += (abs(it.wa) + abs(it.wb)) * h
        assert math.isclose(R[:, u].sum(), force, abs_tol=RTOL * size), (u, case)
        assert math.isclose((R[:, u] * xj).sum() + Rm[:, u].sum(), moment,
                            abs_tol=RTOL * size * xj[-1]), (u, case)


# ---------------------------------------------------------------------------
# Reciprocity
# ---------------------------------------------------------------------------

@SETTINGS
@given(data=st.data())
def test_maxwell_betti_reciprocity(data: st.DataObject) -> None:
    """Unit load at A, unit load at B: deflection at B from A = deflection at A from B.
    Unit load at A, unit clockwise moment at B: rotation at B from the load = deflection
    at A from the moment (work-conjugate pairs; Betti's theorem)."""
    spans, supports = data.draw(spans_and_supports())
    spans = [replace(s, sections=s.sections or [{"from": 0.3 * s.length, "to": 0.6 * s.length,
                                                 "I": 1.2e10}]) for s in spans]
    if not any(s.type == "spring" for s in supports):
        supports = [*supports[:-1], SupportSpec("spring", {"k_vertical": 1.5e4,
                                                           "k_rotation": 4.0e4})]
    ja = data.draw(st.integers(1, len(spans)))
    jb = data.draw(st.integers(1, len(spans)))
    xa = round(data.draw(_fractions()) * spans[ja - 1].length, 4)
    xb = round(data.draw(_fractions()) * spans[jb - 1].length, 4)
    loads = [LoadSpec("PA", "point", ja, {"P": 1.0, "at": xa}),
             LoadSpec("PB", "point", jb, {"P": 1.0, "at": xb}),
             LoadSpec("MB", "moment", jb, {"M": 1.0, "at": xb})]
    cases = {"PA": {"kind": "dead"}, "PB": {"kind": "dead"}, "MB": {"kind": "dead"}}
    beam = beam_of(_spec(spans, supports, cases, loads))
    r = case_responses(solve_beam(beam), make_points(beam, np.array([ja - 1, jb - 1]),
                                                     np.array([xa, xb])))
    d, rot = r.deflection, r.rotation  # rows A, B; columns PA, PB, MB
    scale = float(np.abs(d[:, :2]).max())
    assert math.isclose(d[1, 0], d[0, 1], abs_tol=RTOL * scale), (d[1, 0], d[0, 1])
    scale_m = max(abs(rot[1, 0]), abs(d[0, 2]), 1e-300)
    assert math.isclose(rot[1, 0], d[0, 2], abs_tol=RTOL * scale_m), (rot[1, 0], d[0, 2])


# ---------------------------------------------------------------------------
# Superposition and linearity
# ---------------------------------------------------------------------------

@SETTINGS
@given(data=st.data(), k=st.integers(-30, 30).filter(bool).map(lambda v: v / 10))
def test_superposition_and_linearity(data: st.DataObject, k: float) -> None:
    """Case AB (the loads of A and of B together) = A + B; case kA (A's loads times k)
    = k A; at every point, for shear, moment, rotation, deflection and reactions."""
    spans, supports = data.draw(spans_and_supports())
    a = [BASELINE, *data.draw(loads_on(spans, "A", 4))]
    b = data.draw(loads_on(spans, "B", 4))

    def scaled(ld: LoadSpec, case: str, f: float) -> LoadSpec:
        values = {key: (v * f if key in ("w", "w_start", "w_end", "P", "M") else v)
                  for key, v in ld.values.items()}
        return LoadSpec(case, ld.type, ld.span, values)

    loads = (a + b + [scaled(x, "AB", 1.0) for x in a + b]
             + [scaled(x, "kA", k) for x in a])
    cases = {name: {"kind": "dead"} for name in ("A", "B", "AB", "kA")}
    beam = beam_of(_spec(spans, supports, cases, loads))
    solved = solve_beam(beam)
    r = case_responses(solved, _points(beam))
    R = solved.solution.reaction
    per_case = np.zeros((R.shape[1], 4))
    per_case[np.arange(R.shape[1]), solved.unit_cases.case] = 1.0
    Rc = R @ per_case
    # relative to the largest value of the quantity over the four cases (a case may be
    # zero everywhere, e.g. a point load on a support)
    for q in ("shear", "moment", "rotation", "deflection"):
        v = getattr(r, q)
        scale = max(float(np.abs(v).max()), 1e-300)
        _close(v[:, 2], v[:, 0] + v[:, 1], f"{q}: AB = A + B", scale)
        _close(v[:, 3], k * v[:, 0], f"{q}: kA = k A", scale)
    scale = max(float(np.abs(Rc).max()), 1e-300)
    _close(Rc[:, 2], Rc[:, 0] + Rc[:, 1], "reactions: AB = A + B", scale)
    _close(Rc[:, 3], k * Rc[:, 0], "reactions: kA = k A", scale)


# ---------------------------------------------------------------------------
# Mirror symmetry
# ---------------------------------------------------------------------------

@SETTINGS
@given(data=st.data())
def test_mirrored_beam_gives_mirrored_results(data: st.DataObject) -> None:
    """Seen from the other side: M and deflection at the mirrored point are equal, shear
    and rotation change sign, reactions are reversed.  The right-side limit at x maps
    to the left-side limit at the mirrored point."""
    spans, supports = data.draw(spans_and_supports())
    loads = [BASELINE, *data.draw(loads_on(spans, "A", 5))]
    spec = _spec(spans, supports, {"A": {"kind": "dead"}}, loads)
    beam, seen = beam_of(spec), beam_of(mirror(spec))
    n = beam.n_spans
    s1, s2 = solve_beam(beam), solve_beam(seen)
    span, xs, right = [], [], []
    for j, sp in enumerate(beam.spans):
        marks = {float(x) for x in np.linspace(0.0, sp.length, 7)}
        marks |= {ld.at for ld in beam.loads if ld.span == j and ld.type in ("point", "moment")}
        for x in sorted(marks):
            for side in (False, True):
                if (x == 0.0 and not side) or (x == sp.length and side):
                    continue  # a joint's own limits belong to the neighbouring span
                span.append(j)
                xs.append(x)
                right.append(side)
    span_a, xs_a, right_a = np.array(span), np.array(xs), np.array(right)
    lengths = np.array([sp.length for sp in beam.spans])
    p1 = make_points(beam, span_a, xs_a, right_a)
    p2 = make_points(seen, n - 1 - span_a, lengths[span_a] - xs_a, ~right_a)
    r1, r2 = case_responses(s1, p1), case_responses(s2, p2)
    _close(r2.moment[:, 0], r1.moment[:, 0], "moment")
    _close(r2.deflection[:, 0], r1.deflection[:, 0], "deflection")
    _close(r2.shear[:, 0], -r1.shear[:, 0], "shear")
    _close(r2.rotation[:, 0], -r1.rotation[:, 0], "rotation")
    _close(s2.solution.reaction.sum(axis=1)[::-1], s1.solution.reaction.sum(axis=1),
           "reactions")


# ---------------------------------------------------------------------------
# SI and US
# ---------------------------------------------------------------------------

@SETTINGS
@given(data=st.data())
def test_si_and_us_descriptions_agree(data: st.DataObject) -> None:
    """One beam in SI (m, kN, MPa, mm^4) and in US customary units (ft, kip, ksi, in^4):
    reactions, shears, moments and deflections agree after conversion."""
    spans, supports = data.draw(spans_and_supports())
    loads = [BASELINE, *data.draw(loads_on(spans, "A", 5))]
    spec = _spec(spans, supports, {"A": {"kind": "dead"}}, loads)
    si, us = beam_of(spec, "SI"), beam_of(spec, "US")
    s1, s2 = solve_beam(si), solve_beam(us)
    p1 = _points(si)
    p2 = make_points(us, p1.span, p1.x_span * TO_US["length"])  # as the file was written
    r1, r2 = case_responses(s1, p1), case_responses(s2, p2)
    _close(r2.moment[:, 0] * KIP * FT, r1.moment[:, 0], "moment (kip*ft -> kN*m)")
    _close(r2.shear[:, 0] * KIP, r1.shear[:, 0], "shear (kip -> kN)")
    _close(r2.deflection[:, 0] * FT, r1.deflection[:, 0], "deflection (ft -> m)")
    _close(r2.rotation[:, 0], r1.rotation[:, 0], "rotation (rad)")
    _close(s2.solution.reaction.sum(axis=1) * KIP, s1.solution.reaction.sum(axis=1),
           "reactions (kip -> kN)")


# ---------------------------------------------------------------------------
# Patterning methods nest
# ---------------------------------------------------------------------------

@settings(max_examples=50, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
@given(data=st.data(), fav=st.sampled_from([1.0, 0.9]), segments=st.integers(2, 4))
def test_envelopes_nest_by_method(data: st.DataObject, fav: float, segments: int) -> None:
    """At every point: none within code within exhaustive within segments (max never
    larger, min never smaller), for moment, shear and deflection."""
    spans, supports = data.draw(spans_and_supports(2, 6))
    loads = [LoadSpec("D", "uniform", j, {"w": 10.0}) for j in range(1, len(spans) + 1)]
    loads += data.draw(loads_on(spans, "D", 2))
    loads += data.draw(loads_on(spans, "L", 5)) + data.draw(loads_on(spans, "Lr", 3))
    cases = {"D": {"kind": "dead"}, "L": {"kind": "live"}, "Lr": {"kind": "roof_live"}}
    combos = [("U1", "strength", {"D": 1.2, "L": 1.6, "Lr": 0.5}),
              ("U2", "strength", {"D": 1.4}), ("K", "service", {"D": 1.0, "L": 1.0})]
    base = BeamSpec(spans, supports, cases, loads, combos, favourable_dead=fav,
                    segments=segments)
    beams = {m: beam_of(replace(base, method=m)) for m in ("none", "code", "exhaustive",
                                                         "segments")}
    envs = {}
    for method, beam in beams.items():
        solved = solve_beam(beam)
        pts = _points(beam, 13)
        envs[method] = {q: envelope_at(solved, pts, q, labels=False)
                        for q in ("moment", "shear", "deflection")}
    for q in ("moment", "shear", "deflection"):
        scale = max(float(np.abs(envs["segments"][q].max).max()),
                    float(np.abs(envs["segments"][q].min).max()), 1e-300)
        for inner, outer in (("none", "code"), ("code", "exhaustive"),
                             ("exhaustive", "segments")):
            a, b = envs[inner][q], envs[outer][q]
            over = np.flatnonzero(~(a.max <= b.max + RTOL * scale))  # or NaN
            under = np.flatnonzero(~(a.min >= b.min - RTOL * scale))
            assert over.size == 0, f"{q} max: {inner} {a.max[over[0]]} > {outer} {b.max[over[0]]}"
            assert under.size == 0, (f"{q} min: {inner} {a.min[under[0]]} < {outer} "
                                     f"{b.min[under[0]]}")
