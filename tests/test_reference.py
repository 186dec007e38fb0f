"""The engine against the slow reference of tests/reference.py, on seeded random beams.

Random beams have 2 to 6 spans, sections that change inside spans
([[spans.sections]]), pinned, fixed, free and spring supports, and several load
cases (dead, a second dead, patterned live, roof live patterned or not, wind not
patterned) with every load type.  Every patterning method is run with
favourable_dead 1.0 and 0.9.  The reference solves each case on each cell
separately with a dense direct-stiffness solve and lists every load arrangement
explicitly, so agreement to 1e-9 of the largest value of each quantity checks the
engine's banded solve, closed-form recovery and superposition enveloper.

The reference itself is first checked by hand cases: the single-span and
equal-span coefficients of ../shared/references.md sections 3.1 to 3.3 (AISC
Steel Construction Manual Table 3-23 and Hicks, Civil Engineering Formulas,
Table 2.1, as tagged there; all re-derived, [D]), the closed-form consistent load
vector, and its own statics.

Governing choices are checked two ways: at every row, the combination and the
``_loaded`` text the engine names must, when the reference applies that arrangement,
give the extreme the engine reports; where a single (combination, arrangement) gives
the extreme, the engine must name exactly that one.  A few fixed beams put load edges
and point loads on section changes, and short stretches of another section in a span.

The random-beam builder (BeamSpec, render, mirror, TO_US) is also used by
tests/test_properties.py.
"""

from __future__ import annotations

import functools
import math
import tomllib
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import pytest

from envelope.analysis import Analysis, analyse
from envelope.casefile import parse_case
from envelope.combinations import build as build_combinations
from envelope.combinations import variable_alone
from envelope.errors import CaseError
from envelope.model import Beam, Combination
from envelope.recovery import make_points
from envelope.solved import case_responses

import reference as ref
from beams import beam_text
from tolerances import DISPLACEMENT, INTEGRATED, ROUND_OFF, SMALL_SOLVE, SOLVE

#: Agreement asked of the engine: relative to the largest magnitude of the quantity.
RTOL = 1e-9
#: Choices closer than this (relative) tie: only the arrangement named is checked, not
#: which of the tied ones it is.
TIE_RTOL = 1e-10

# ---------------------------------------------------------------------------
# Beam specifications (SI customary units: m, kN, kN/m, kN*m, MPa, mm^4, mm^2)
# ---------------------------------------------------------------------------

#: The quantity of every numeric key, for unit conversion (case-format contract table).
QUANTITY = {
    "length": "length", "at": "length", "start": "length", "end": "length",
    "from": "length", "to": "length", "width": "length",
    "E": "modulus", "I": "inertia", "A": "area", "unit_weight": "unit_weight",
    "w": "line_load", "w_start": "line_load", "w_end": "line_load",
    "P": "force", "M": "moment", "k_vertical": "k_vertical", "k_rotation": "k_rotation",
}

# 1 ft = 0.3048 m and 1 lb = 0.45359237 kg exactly (international yard and pound,
# 1959), g = 9.80665 m/s^2 (3rd CGPM, 1901): from memory.  So 1 kip = 4.4482216152605 kN.
FT = 0.3048  # m
KIP = 4.4482216152605  # kN
INCH = FT / 12.0  # m

#: SI customary value -> US customary value (ft, kip, ksi, in^4, in^2, kip/ft^3, ...).
TO_US = {
    "length": 1.0 / FT,
    "modulus": 1e3 * INCH**2 / KIP,  # MPa = 1000 kN/m^2 -> kip/in^2
    "inertia": 1e-12 / INCH**4,  # mm^4 -> in^4
    "area": 1e-6 / INCH**2,
    "unit_weight": FT**3 / KIP,  # kN/m^3 -> kip/ft^3
    "line_load": FT / KIP,
    "force": 1.0 / KIP,
    "moment": 1.0 / (KIP * FT),
    "k_vertical": FT / KIP,  # kN/m -> kip/ft
    "k_rotation": 1.0 / (KIP * FT),  # kN*m/rad -> kip*ft/rad
}


@dataclass
class SpanSpec:
    length: float
    props: dict[str, float] = field(default_factory=dict)  # E, I, A overrides
    sections: list[dict[str, float]] = field(default_factory=list)  # from, to, I, ...


@dataclass
class SupportSpec:
    type: str
    values: dict[str, float] = field(default_factory=dict)  # k_vertical, k_rotation, width


@dataclass
class LoadSpec:
    case: str
    type: str
    span: int  # 1-based
    values: dict[str, float] = field(default_factory=dict)


@dataclass
class BeamSpec:
    spans: list[SpanSpec]
    supports: list[SupportSpec]
    cases: dict[str, dict[str, Any]]  # name -> {"kind": ..., "pattern": ...}
    loads: list[LoadSpec]
    combos: list[tuple[str, str, dict[str, float]]]  # name, set, factors
    section: dict[str, float] = field(
        default_factory=lambda: {"E": 30000.0, "I": 6.0e9, "A": 2.0e5, "unit_weight": 24.0})
    method: str = "none"
    segments: int = 2
    favourable_dead: float = 1.0
    stations: int = 11


def _num(key: str, value: float, units: str) -> str:
    if units == "US":
        value = value * TO_US[QUANTITY[key]]
    return repr(float(value))


def _table(values: dict[str, float], units: str) -> list[str]:
    return [f"{k} = {_num(k, v, units)}" for k, v in values.items()]


def render(spec: BeamSpec, units: str = "SI") -> str:
    """The case file of a spec, in SI or US customary plain numbers."""
    out = [f'units = "{units}"', "[section]", *_table(spec.section, units)]
    for sp in spec.spans:
        out += ["[[spans]]", f"length = {_num('length', sp.length, units)}",
                *_table(sp.props, units)]
        for st in sp.sections:
            out += ["  [[spans.sections]]", *_table(st, units)]
    for su in spec.supports:
        out += ["[[supports]]", f'type = "{su.type}"', *_table(su.values, units)]
    out.append("[cases]")
    for name, c in spec.cases.items():
        extra = "" if c.get("pattern") is None else f", pattern = {str(c['pattern']).lower()}"
        out.append(f'{name} = {{ kind = "{c["kind"]}"{extra} }}')
    for ld in spec.loads:
        out += ["[[loads]]", f'case = "{ld.case}"', f'type = "{ld.type}"',
                f"spans = {ld.span}", *_table(ld.values, units)]
    out += ["[combinations]", 'strength = "none"', 'service = "none"']
    for name, set_name, factors in spec.combos:
        text = ", ".join(f"{c} = {f!r}" for c, f in factors.items())
        out += ["  [[combinations.custom]]", f'  name = "{name}"', f'  set = "{set_name}"',
                f"  factors = {{ {text} }}"]
    out += ["[patterning]", f'method = "{spec.method}"', f"segments = {spec.segments}",
            f"favourable_dead = {spec.favourable_dead!r}",
            "[output]", f"stations_per_span = {spec.stations}"]
    return "\n".join(out) + "\n"


def beam_of(spec: BeamSpec, units: str = "SI") -> Beam:
    return parse_case(tomllib.loads(render(spec, units)), f"spec-{units}.toml")


def mirror(spec: BeamSpec) -> BeamSpec:
    """The beam seen from the other side: spans, sections, supports and loads reversed.
    A clockwise moment becomes counter-clockwise; a linear load's ends swap."""
    n = len(spec.spans)
    spans = []
    for sp in reversed(spec.spans):
        L = sp.length
        sections = [{**st, "from": L - st["to"], "to": L - st["from"]}
                    for st in reversed(sp.sections)]
        spans.append(SpanSpec(L, dict(sp.props), sections))
    loads = []
    for ld in spec.loads:
        L = spec.spans[ld.span - 1].length
        v = dict(ld.values)
        if "at" in v:
            v["at"] = L - v["at"]
        if "start" in v or "end" in v:
            start, end = v.get("start", 0.0), v.get("end", L)
            v["start"], v["end"] = L - end, L - start
        if "w_start" in v:
            v["w_start"], v["w_end"] = v["w_end"], v["w_start"]
        if "M" in v:
            v["M"] = -v["M"]
        loads.append(LoadSpec(ld.case, ld.type, n + 1 - ld.span, v))
    return replace(spec, spans=spans, supports=list(reversed(spec.supports)), loads=loads)


# ---------------------------------------------------------------------------
# Seeded random beams
# ---------------------------------------------------------------------------


def _r(x: float, digits: int = 3) -> float:
    return float(round(x, digits))


def _stable(supports: list[SupportSpec]) -> bool:
    """Two vertical restraints, or one and a rotational restraint (rigid-body motion
    v = a + b x prevented; common practice)."""
    vertical = rotation = 0
    for s in supports:
        kv = s.values.get("k_vertical", math.inf if s.type != "free" else 0.0)
        kr = s.values.get("k_rotation", math.inf if s.type == "fixed" else 0.0)
        vertical += s.type != "free" and kv > 0
        rotation += s.type != "free" and kr > 0
    return vertical >= 2 or (vertical >= 1 and rotation >= 1)


def random_supports(rng: np.random.Generator, n_joints: int, ei: float,
                    length: float) -> list[SupportSpec]:
    while True:
        out = []
        for _ in range(n_joints):
            kind = str(rng.choice(["pinned", "fixed", "free", "spring"], p=[.4, .15, .2, .25]))
            values: dict[str, float] = {}
            if kind == "spring":
                variant = int(rng.integers(0, 4))
                kv = _r(ei / length**3 * 10 ** rng.uniform(0.5, 2.5), 1)
                kr = _r(ei / length * 10 ** rng.uniform(-0.5, 1.0), 1)
                if variant == 0:
                    values = {"k_vertical": kv}
                elif variant == 1:
                    values = {"k_rotation": kr}  # rigid vertically
                elif variant == 2:
                    values = {"k_vertical": kv, "k_rotation": kr}
                else:
                    values = {"k_vertical": 0.0, "k_rotation": kr}
            elif kind != "free" and rng.random() < 0.3:
                values = {"width": 0.3}
            out.append(SupportSpec(kind, values))
        if _stable(out):
            return out


def _position(rng: np.random.Generator, sp: SpanSpec) -> float:
    """A point-load position: random, or on a special place (span end, middle, a
    section change) where jumps, cells and elements meet."""
    L = sp.length
    pick = rng.random()
    if pick < 0.1:
        return 0.0
    if pick < 0.2:
        return L
    if pick < 0.35:
        return L / 2
    if pick < 0.45 and sp.sections:
        return sp.sections[0]["from"]
    return _r(rng.uniform(0.05, 0.95) * L, 3)


def _extent(rng: np.random.Generator, L: float) -> dict[str, float]:
    a, b = sorted(rng.uniform(0.0, 1.0, 2))
    if b - a < 0.1:
        a, b = 0.0, 1.0
    return {"start": _r(a * L), "end": _r(b * L) if b < 1.0 else L}


def random_spec(seed: int, method: str = "none", favourable_dead: float = 1.0,
                n_spans: int | None = None) -> BeamSpec:
    """A random continuous beam, different for each method; ``segments`` beams keep
    2^(cells) small (<= 4096).  ``n_spans`` fixes the number of spans (roof live load is
    then not patterned beyond 6 spans, so brute force stays at 2^n arrangements)."""
    rng = np.random.default_rng([seed, ("none", "code", "exhaustive", "segments").index(method)])
    segments = int(rng.integers(2, 4)) if method == "segments" else 2
    max_spans = 6 if method != "segments" else 12 // segments
    n = n_spans if n_spans is not None else int(rng.integers(2, max_spans + 1))
    I0 = _r(rng.uniform(3.0, 9.0), 2) * 1e9
    spans = []
    for _ in range(n):
        L = _r(rng.uniform(2.5, 8.0), 2)
        props: dict[str, float] = {}
        if rng.random() < 0.25:
            props["I"] = _r(rng.uniform(3.0, 9.0), 2) * 1e9
        if rng.random() < 0.1:
            props["E"] = 25000.0
        sections = []
        if rng.random() < 0.5:
            cuts = sorted({_r(x * L, 2) for x in rng.uniform(0.05, 0.95, 2 * int(
                rng.integers(1, 3)))})
            # stretches at least 5 cm long and 5 cm from the next one: the engine
            # withholds results for a stretch a few millimetres long (its round-off
            # then fails its own statics check), which is not what is tested here
            for a, b in zip(cuts[0::2], cuts[1::2], strict=False):
                if b - a > 0.05 and (not sections or a - sections[-1]["to"] > 0.05):
                    st = {"from": a, "to": b, "I": _r(I0 * rng.uniform(0.3, 3.0), -6)}
                    if rng.random() < 0.3:
                        st["A"] = 3.0e5
                    sections.append(st)
        spans.append(SpanSpec(L, props, sections))
    mean_L = sum(s.length for s in spans) / n
    supports = random_supports(rng, n + 1, 30000e3 * I0 * 1e-12, mean_L)

    cases: dict[str, dict[str, Any]] = {"D": {"kind": "dead"}}
    if rng.random() < 0.5:
        cases["SD"] = {"kind": "dead"}
    cases["L"] = {"kind": "live"}
    cases["Lr"] = {"kind": "roof_live",
                   "pattern": bool(rng.random() < 0.6) and method != "segments" and n <= 6}
    if rng.random() < 0.6:
        cases["W"] = {"kind": "wind"}

    def some_span() -> int:
        return int(rng.integers(1, n + 1))

    loads: list[LoadSpec] = []
    for j in range(1, n + 1):
        loads.append(LoadSpec("D", "self_weight", j))
        loads.append(LoadSpec("D", "uniform", j, {"w": _r(rng.uniform(5.0, 20.0), 2)}))
    j = some_span()
    loads.append(LoadSpec("D", "point", j, {"P": _r(rng.uniform(5, 40), 1),
                                            "at": _position(rng, spans[j - 1])}))
    if "SD" in cases:
        j = some_span()
        loads.append(LoadSpec("SD", "linear", j, {"w_start": _r(rng.uniform(0, 8), 2),
                                                  "w_end": _r(rng.uniform(0, 8), 2),
                                                  **_extent(rng, spans[j - 1].length)}))
        for j in range(1, n + 1):
            loads.append(LoadSpec("SD", "uniform", j, {"w": 2.5}))
    for j in range(1, n + 1):
        if rng.random() < 0.8:
            loads.append(LoadSpec("L", "uniform", j, {"w": _r(rng.uniform(4.0, 16.0), 2)}))
    for _ in range(int(rng.integers(1, 3))):
        j = some_span()
        kind = rng.random()
        if kind < 0.4:
            loads.append(LoadSpec("L", "point", j, {"P": _r(rng.uniform(5, 60), 1),
                                                    "at": _position(rng, spans[j - 1])}))
        elif kind < 0.7:
            loads.append(LoadSpec("L", "uniform", j, {"w": _r(rng.uniform(2, 10), 2),
                                                      **_extent(rng, spans[j - 1].length)}))
        else:
            loads.append(LoadSpec("L", "linear", j, {"w_start": _r(rng.uniform(-2, 10), 2),
                                                     "w_end": _r(rng.uniform(0, 10), 2),
                                                     **_extent(rng, spans[j - 1].length)}))
    for j in sorted({some_span() for _ in range(2)}):
        loads.append(LoadSpec("Lr", "uniform", j, {"w": _r(rng.uniform(1.0, 6.0), 2)}))
    j = some_span()
    loads.append(LoadSpec("Lr", "point", j, {"P": _r(rng.uniform(5, 30), 1),
                                             "at": _position(rng, spans[j - 1])}))
    if "W" in cases:
        for j in sorted({some_span() for _ in range(2)}):
            loads.append(LoadSpec("W", "uniform", j, {"w": _r(-rng.uniform(2.0, 12.0), 2)}))
        j = some_span()
        loads.append(LoadSpec("W", "moment", j, {"M": _r(rng.uniform(-40, 40), 1),
                                                 "at": _position(rng, spans[j - 1])}))

    dead = {c: 1.0 for c in cases if cases[c]["kind"] == "dead"}

    def scaled(f: float) -> dict[str, float]:
        return {c: f for c in dead}

    combos: list[tuple[str, str, dict[str, float]]] = [
        ("S1", "strength", {**scaled(1.2), "L": 1.6, "Lr": 0.5}),
        ("S2", "strength", {**scaled(1.2), "Lr": 1.6, "L": 1.0}),
        ("S3", "strength", scaled(1.4)),
    ]
    if "W" in cases:
        combos += [("S4", "strength", {**scaled(0.9), "W": 1.0}),
                   ("S5", "strength", {**scaled(1.2), "W": 1.0, "L": 1.0})]
    combos += [("K1", "service", {c: 1.0 for c in cases}),
               ("K2", "service", {"L": 1.0, "Lr": 1.0})]
    return BeamSpec(spans, supports, cases, loads, combos, method=method, segments=segments,
                    favourable_dead=favourable_dead, stations=int(rng.choice([7, 11])))


# ---------------------------------------------------------------------------
# The reference checked first: hand cases and statics
# ---------------------------------------------------------------------------

def hand_beam(lengths: list[float], supports: list[str],
              loads: list[dict[str, object]]) -> Beam:
    """Spans of EI = 1 on the given supports, the loads all of one dead case Q, and one
    strength combination of Q alone."""
    text = beam_text(lengths, supports, [{"case": "Q", **ld} for ld in loads],
                     cases={"Q": "dead"},
                     combinations={"strength": "none", "service": "none",
                                   "custom": [{"name": "Q", "set": "strength",
                                               "factors": {"Q": 1.0}}]})
    return parse_case(tomllib.loads(text), "hand.toml")


UDL_ALL: dict[str, object] = {"type": "uniform", "spans": "all", "w": 1.0}


def test_consistent_loads_match_the_closed_form() -> None:
    """Consistent loads of a linear load over a whole element: l/20 (7q1 + 3q2),
    l^2/60 (3q1 + 2q2), l/20 (3q1 + 7q2), -l^2/60 (2q1 + 3q2) (common practice, e.g.
    any finite-element text's beam-element load vector); and over a part of it, the
    same as a fine composite Simpson rule on the shape functions."""
    L, q1, q2 = 2.5, 3.0, -1.0
    closed = [L * (7 * q1 + 3 * q2) / 20, L * L * (3 * q1 + 2 * q2) / 60,
              L * (3 * q1 + 7 * q2) / 20, -L * L * (2 * q1 + 3 * q2) / 60]
    np.testing.assert_allclose(ref.consistent_loads(L, 0.0, L, q1, q2), closed, rtol=ROUND_OFF)
    lo, hi = 0.4, 1.9
    s = np.linspace(lo, hi, 2001)
    q = q1 + (q2 - q1) * (s - lo) / (hi - lo)
    h = s[1] - s[0]
    shapes = np.array([ref.hermite_shapes(x, L)[0] for x in s]).T
    simpson = [h / 3 * ((f * q)[0] + 4 * (f * q)[1:-1:2].sum() + 2 * (f * q)[2:-1:2].sum()
                        + (f * q)[-1]) for f in shapes]
    np.testing.assert_allclose(ref.consistent_loads(L, lo, hi, q1, q2), simpson, rtol=INTEGRATED)


def test_reference_inside_element_matches_nodes() -> None:
    """Deflection integrated inside an element equals the nodal value when the same
    point is made a node (the two recoveries of the reference agree)."""
    beam = hand_beam([5.0, 4.0], ["fixed", "spring", "pinned"],
                     [{"type": "point", "spans": 1, "P": 3.0, "at": 1.7},
                      {"type": "linear", "spans": 2, "w_start": 1.0, "w_end": 4.0,
                       "start": 0.5, "end": 3.0},
                      {"type": "moment", "spans": 2, "M": 2.0, "at": 2.2}])
    pts = [(0, 2.6, True), (1, 1.3, True), (1, 3.5, True)]
    inside = ref.ReferenceBeam(beam)
    nodes = ref.ReferenceBeam(beam, [(j, x) for j, x, _ in pts])
    items = ref.case_items(beam, "Q")
    r_in, r_node = inside.solve(items), nodes.solve(items)
    for j, x, side in pts:
        assert inside.node_at(j, x) is None and nodes.node_at(j, x) is not None
        np.testing.assert_allclose(inside.response(r_in, j, x, side),
                                   nodes.response(r_node, j, x, side), rtol=INTEGRATED)


def test_reference_simple_span_udl() -> None:
    """Simple span, UDL: R = wL/2, M = wL^2/8, deflection 5wL^4/384EI (references.md
    3.1, AISC Table 3-23 [D])."""
    L = 6.0
    beam = hand_beam([L], ["pinned", "pinned"], [UDL_ALL])
    t = ref.case_table(beam, [(0, L / 2, True), (0, 0.0, True)])
    assert t["reaction"][:, 0] == pytest.approx([L / 2, L / 2], rel=SMALL_SOLVE)
    assert t["moment"][0, 0] == pytest.approx(L * L / 8, rel=SMALL_SOLVE)
    assert t["deflection"][0, 0] == pytest.approx(5 * L**4 / 384, rel=DISPLACEMENT)
    assert t["shear"][1, 0] == pytest.approx(L / 2, rel=SMALL_SOLVE)
    assert t["rotation"][1, 0] == pytest.approx(L**3 / 24, rel=DISPLACEMENT)  # wL^3/24EI, [D]


def test_reference_propped_cantilever_and_fixed_fixed() -> None:
    """Propped cantilever, UDL: 5wL/8 at the fixed end, 3wL/8 at the pin, -wL^2/8,
    +9wL^2/128 at 3L/8 from the pin; fixed-fixed, central P: +-PL/8, PL^3/192EI
    (references.md 3.1, AISC Table 3-23 [D])."""
    L = 4.0
    beam = hand_beam([L], ["fixed", "pinned"], [UDL_ALL])
    t = ref.case_table(beam, [(0, L - 3 * L / 8, True), (0, 0.0, True)])
    assert t["reaction"][:, 0] == pytest.approx([5 * L / 8, 3 * L / 8], rel=SMALL_SOLVE)
    assert t["moment"][0, 0] == pytest.approx(9 * L * L / 128, rel=SMALL_SOLVE)
    assert t["moment"][1, 0] == pytest.approx(-L * L / 8, rel=SMALL_SOLVE)
    beam = hand_beam([L], ["fixed", "fixed"], [{"type": "point", "spans": 1, "P": 1.0, "at": 2.0}])
    t = ref.case_table(beam, [(0, L / 2, True), (0, 0.0, True)])
    assert t["moment"][:, 0] == pytest.approx([L / 8, -L / 8], rel=SMALL_SOLVE)
    assert t["deflection"][0, 0] == pytest.approx(L**3 / 192, rel=DISPLACEMENT)


def test_reference_cantilever_and_overhang() -> None:
    """Cantilever tip P: PL^3/3EI, -PL; overhang a past a span L with tip P: far
    reaction -Pa/L, tip deflection Pa^2(L+a)/3EI (references.md 3.1 [D])."""
    L = 3.0
    beam = hand_beam([L], ["fixed", "free"], [{"type": "point", "spans": 1, "P": 2.0, "at": 3.0}])
    t = ref.case_table(beam, [(0, L, False), (0, 0.0, True)])
    assert t["deflection"][0, 0] == pytest.approx(2 * L**3 / 3, rel=DISPLACEMENT)
    assert t["moment"][1, 0] == pytest.approx(-2 * L, rel=SMALL_SOLVE)
    Ls, a = 5.0, 1.5
    beam = hand_beam([Ls, a], ["pinned", "pinned", "free"],
                     [{"type": "point", "spans": 2, "P": 1.0, "at": a}])
    t = ref.case_table(beam, [(1, a, False)])
    assert t["reaction"][:, 0] == pytest.approx([-a / Ls, (Ls + a) / Ls, 0.0], abs=SMALL_SOLVE)
    assert t["deflection"][0, 0] == pytest.approx(a * a * (Ls + a) / 3, rel=DISPLACEMENT)


def test_reference_equal_spans() -> None:
    """Two equal spans, UDL everywhere: 3/8, 10/8 wL, support M -wL^2/8; three equal
    spans: 0.4, 1.1 wL, -0.100 wL^2; three spans with span 2 only: support M -0.05wL^2
    (references.md 3.2, Hicks Table 2.1 [C]; 3.3 [D])."""
    L = 5.0
    beam = hand_beam([L, L], ["pinned"] * 3, [UDL_ALL])
    t = ref.case_table(beam, [(0, L, False)])
    assert t["reaction"][:, 0] == pytest.approx([3 * L / 8, 10 * L / 8, 3 * L / 8], rel=SMALL_SOLVE)
    assert t["moment"][0, 0] == pytest.approx(-L * L / 8, rel=SMALL_SOLVE)
    beam = hand_beam([L] * 3, ["pinned"] * 4, [UDL_ALL])
    t = ref.case_table(beam, [(0, L, False)])
    assert t["reaction"][:, 0] == pytest.approx([0.4 * L, 1.1 * L, 1.1 * L, 0.4 * L],
                                                rel=SMALL_SOLVE)
    assert t["moment"][0, 0] == pytest.approx(-0.1 * L * L, rel=SMALL_SOLVE)
    beam = hand_beam([L] * 3, ["pinned"] * 4, [{"type": "uniform", "spans": 2, "w": 1.0}])
    t = ref.case_table(beam, [(0, L, False), (2, 0.0, True)])
    assert t["moment"][:, 0] == pytest.approx([-0.05 * L * L] * 2, rel=SMALL_SOLVE)


@pytest.mark.parametrize("seed", range(4))
def test_reference_statics_on_random_beams(seed: int) -> None:
    """The reference's own reactions balance its loads (vertical forces and moments
    about the left end), and its free-body moment at the right end is zero."""
    beam = beam_of(random_spec(seed))
    n = beam.n_spans
    L_last = beam.spans[-1].length
    t = ref.case_table(beam, [(n - 1, L_last, False)])
    xj = np.asarray(beam.joint_x)
    for c, case in enumerate(beam.cases):
        items = ref.case_items(beam, case.name)
        force = moment = 0.0
        for it in items:
            x0 = xj[it.span]
            if it.kind == "point":
                force += it.value
                moment += it.value * (x0 + it.a)
            elif it.kind == "moment":
                moment += it.value  # clockwise about the left end
            else:
                h = it.b - it.a
                force += (it.wa + it.wb) * h / 2
                moment += (it.wa * h * (x0 + it.a + h / 2)
                           + (it.wb - it.wa) * h / 2 * (x0 + it.a + 2 * h / 3))
        R, Rm = t["reaction"][:, c], t["reaction_moment"][:, c]
        scale = sum(abs(it.value) + (abs(it.wa) + abs(it.wb)) * (it.b - it.a)
                    for it in items) * xj[-1]
        assert R.sum() == pytest.approx(force, abs=1e-11 * scale)
        assert (R * xj).sum() + Rm.sum() == pytest.approx(moment, abs=1e-11 * scale)
        # just left of the right end, M = the end's reaction moment less any applied
        # moment at the end itself (the free body right of that point is in equilibrium)
        at_end = sum(it.value for it in items if it.kind == "moment"
                     and it.span == n - 1 and it.a == L_last)
        assert t["moment"][0, c] == pytest.approx(Rm[-1] - at_end, abs=1e-11 * scale)


# ---------------------------------------------------------------------------
# Engine against reference
# ---------------------------------------------------------------------------

METHODS = ("none", "code", "exhaustive", "segments")
SEEDS = range(6)
PARAMS = [(s, m, f) for m in METHODS for f in (1.0, 0.9) for s in SEEDS]


@dataclass
class Compared:
    beam: Beam
    a: Analysis
    points: list[tuple[int, float, bool]]
    n_station: int  # the first rows of points are the stations
    dense: slice  # rows of the dense grid
    design_x: slice  # rows at moment_pos_x: left-side limits, then right-side, by span
    faces: slice  # rows at the support faces: left faces, then right faces
    table: ref.UnitTable
    strength: tuple[Combination, ...]
    service: tuple[Combination, ...]


@functools.cache
def compared(seed: int, method: str, fav: float) -> Compared:
    beam = beam_of(random_spec(seed, method, fav))
    a = analyse(beam)
    st = a.stations
    points = list(zip(st.span.tolist(), st.x_span.tolist(), st.right.tolist(), strict=True))
    n_station = len(points)
    for j, sp in enumerate(beam.spans):
        points += [(j, x, True) for x in np.linspace(0.0, sp.length, 41)[1:-1]]
    dense = slice(n_station, len(points))
    start = len(points)
    for side in (False, True):  # at a jump moment_pos may be either side's limit
        for j, x in enumerate(a.design_actions["moment_pos_x"]):
            x = float(x) if np.isfinite(x) else beam.spans[j].length / 2
            # a span's own limits only: right of its start, left of its end
            limit = side if 0.0 < x < beam.spans[j].length else x == 0.0
            points.append((j, x, limit))
    design_x = slice(start, len(points))
    start = len(points)
    n = beam.n_spans
    for j in range(n):
        points.append((j, min(beam.supports[j].width / 2, beam.spans[j].length), True))
    for j in range(n):
        points.append((j, max(beam.spans[j].length - beam.supports[j + 1].width / 2, 0.0),
                       False))
    faces = slice(start, len(points))
    table = ref.unit_table(beam, points)
    combos = build_combinations(beam.cases, beam.combinations)
    return Compared(beam, a, points, n_station, dense, design_x, faces, table,
                    tuple(c for c in combos if c.set == "strength"),
                    tuple(c for c in combos if c.set == "service"))


def _scale(env: ref.Envelope) -> float:
    return max(float(np.abs(env.max).max()), float(np.abs(env.min).max()), 1e-300)


def _ref_env(c: Compared, quantity: str, rows: slice | np.ndarray,
             combos: tuple[Combination, ...] | None = None) -> ref.Envelope:
    combos = combos if combos is not None else (
        c.service if quantity == "deflection" else c.strength)
    R = c.table.values[quantity][rows]
    scale = max(float(np.abs(R).max(initial=0.0)), 1e-300) * max(
        (abs(f) for k in combos for _, f in k.factors), default=1.0)
    return ref.envelope(c.beam, combos, c.table, R, TIE_RTOL * scale)


def _close(got: np.ndarray, want: np.ndarray, scale: float, what: str) -> None:
    bad = np.flatnonzero(~(np.abs(got - want) <= RTOL * scale))  # NaN is bad too
    assert bad.size == 0, (f"{what}: {bad.size} rows differ, first row {bad[0]}: engine "
                           f"{got[bad[0]]!r}, reference {want[bad[0]]!r} (scale {scale:.4g})")


def _ids(p: tuple[int, str, float]) -> str:
    return f"seed{p[0]}-{p[1]}-fav{p[2]}"


@pytest.mark.parametrize("seed", range(6))
def test_single_cases_match_reference(seed: int) -> None:
    """Each case alone on every span (unfactored): shear, moment, rotation and
    deflection at the stations, and the reactions, as the reference gives them."""
    beam = beam_of(random_spec(seed))
    a = analyse(beam)
    st = a.stations
    points = list(zip(st.span.tolist(), st.x_span.tolist(), st.right.tolist(), strict=True))
    want = ref.case_table(beam, points)
    got = case_responses(a.solved, st)
    for q in ref.QUANTITIES:
        w = want[q]
        for c, case in enumerate(beam.cases):
            scale = max(float(np.abs(w[:, c]).max()), 1e-300)
            _close(getattr(got, q)[:, c], w[:, c], scale, f"{q} of case {case.name}")
    R = a.solved.solution.reaction
    per_case = np.zeros((R.shape[1], len(beam.cases)))
    per_case[np.arange(R.shape[1]), a.solved.unit_cases.case] = 1.0
    got_R = R @ per_case
    for c, case in enumerate(beam.cases):
        scale = max(float(np.abs(want["reaction"][:, c]).max()), 1e-300)
        _close(got_R[:, c], want["reaction"][:, c], scale, f"reactions of case {case.name}")


def edges(load: dict[str, object]) -> str:
    """Two spans with a stretch of another I in each (pinned, pinned, fixed), self-weight
    properties, one dead case Q carrying ``load`` and one strength combination of Q."""
    return beam_text(
        [{"length": 6.51, "sections": [{"from": 0.5859, "to": 1.7577, "I": 2.0e9}]},
         {"length": 4.3, "sections": [{"from": 1.1, "to": 2.9, "I": 9.0e9}]}],
        ["pinned", "pinned", "fixed"], [{"case": "Q", **load}],
        section={"E": 30000, "I": 6.0e9, "A": 2.0e5, "unit_weight": 24.0},
        cases={"Q": "dead"},
        combinations={"strength": "none", "service": "none",
                      "custom": [{"name": "U", "set": "strength", "factors": {"Q": 1.0}}]})


#: Distributed loads whose ends sit exactly on a section change (the stretch ends are
#: written as the same decimal numbers as the load ends).
EDGE_LOADS: dict[str, dict[str, object]] = {
    "starts-at-section-end": {"type": "uniform", "spans": 1, "w": 1.0, "start": 1.7577,
                              "end": 1.8228},
    "ends-at-section-start": {"type": "linear", "spans": 1, "w_start": 2.0, "w_end": 5.0,
                              "start": 0.2, "end": 0.5859},
    "covers-the-section": {"type": "uniform", "spans": 1, "w": 3.0, "start": 0.5859,
                           "end": 1.7577},
    "self-weight-from-section-end": {"type": "self_weight", "spans": 2, "start": 2.9,
                                     "end": 4.3},
    "point-on-section-end": {"type": "point", "spans": 1, "P": 10.0, "at": 1.7577},
}


@pytest.mark.parametrize("name", sorted(EDGE_LOADS))
def test_load_edges_on_section_changes(name: str) -> None:
    """A load that starts or ends exactly where the section changes is an ordinary load:
    the engine's single case matches the reference (finite, same values)."""
    text = edges(EDGE_LOADS[name])
    beam = parse_case(tomllib.loads(text), f"{name}.toml")
    a = analyse(beam)
    st = a.stations
    points = list(zip(st.span.tolist(), st.x_span.tolist(), st.right.tolist(), strict=True))
    want = ref.case_table(beam, points)
    got = case_responses(a.solved, st)
    R = a.solved.solution.reaction.sum(axis=1)
    _close(R, want["reaction"][:, 0], float(np.abs(want["reaction"]).max()), "reactions")
    for q in ref.QUANTITIES:
        w = want[q][:, 0]
        _close(getattr(got, q)[:, 0], w, float(np.abs(w).max()), q)


def short_stretch(to: float) -> str:
    """A 12 m simple span with a stretch of another I from 3.0 to ``to`` m, a clockwise
    end moment of 10 kN*m and 1 kN/m over [2, 5] m, one dead case Q."""
    return beam_text(
        [{"length": 12.0, "sections": [{"from": 3.0, "to": to, "I": 2.0e9}]}],
        ["pinned", "pinned"],
        [{"case": "Q", "type": "moment", "spans": 1, "M": 10.0, "at": 0.0},
         {"case": "Q", "type": "uniform", "spans": 1, "w": 1.0, "start": 2.0, "end": 5.0}],
        section={"E": 30000, "I": 6.0e9}, cases={"Q": "dead"},
        combinations={"strength": "none", "service": "none",
                      "custom": [{"name": "U", "set": "strength", "factors": {"Q": 1.0}}]})


def test_stretch_too_short_to_resolve_is_refused() -> None:
    """A 5 mm stretch in a 12 m span: double precision cannot resolve its end forces to the
    statics tolerance, so the reader refuses it, naming the stretch (not a silent result)."""
    with pytest.raises(CaseError, match=r"spans\[1\]\.sections\[1\]: this stretch is "
                                        r"0\.005 m long.*too short"):
        parse_case(tomllib.loads(short_stretch(3.005)), "short-stretch.toml")


@pytest.mark.parametrize("to", [3.1, 3.025])
def test_short_stretch_is_analysed(to: float) -> None:
    """A simple span with a short stretch of another section (10 cm down to 5 mm) is an
    ordinary, stable beam.  Reactions by statics (the section does not matter): a
    clockwise end moment M and w over [2, 5] on a 12 m span give
    R_right = (w * 3 * 3.5 + M) / 12, R_left = 3 w - R_right (moments about the left
    support; common practice); the
    engine must analyse it and agree with the reference everywhere."""
    beam = parse_case(tomllib.loads(short_stretch(to)), "short-stretch.toml")
    right = (3.0 * 3.5 + 10.0) / 12.0
    hand = [3.0 - right, right]
    st = ref.case_table(beam, [(0, 0.0, True)])
    # the reference too loses digits on a 5 mm element (its residual floor in extended
    # precision is about |K| |d| 1e-19), but stays well inside the engine's 1e-9
    assert st["reaction"][:, 0] == pytest.approx(hand, rel=1e-10)
    a = analyse(beam)
    assert a.solved.solution.reaction.sum(axis=1) == pytest.approx(hand, rel=SOLVE)
    stations = a.stations
    points = list(zip(stations.span.tolist(), stations.x_span.tolist(),
                      stations.right.tolist(), strict=True))
    want = ref.case_table(beam, points)
    got = case_responses(a.solved, stations)
    for q in ref.QUANTITIES:
        w = want[q][:, 0]
        _close(getattr(got, q)[:, 0], w, float(np.abs(w).max()), q)


@pytest.mark.parametrize("params", PARAMS, ids=_ids)
def test_station_envelopes_match_brute_force(params: tuple[int, str, float]) -> None:
    """Moment and shear (strength) and deflection (service) envelopes at every station."""
    c = compared(*params)
    rows = slice(0, c.n_station)
    for q in ("moment", "shear", "deflection"):
        want = _ref_env(c, q, rows)
        got = c.a.station_envelopes[q]
        assert got is not None
        scale = _scale(want)
        _close(got.max, want.max, scale, f"{q} max")
        _close(got.min, want.min, scale, f"{q} min")


def _check_governing(c: Compared, got: Any, want: ref.Envelope, R: np.ndarray,
                     combos: tuple[Combination, ...], what: str) -> list[str]:
    """Problems with the engine's governing choice at each row of R (rows x units):

    * at every row, the arrangement its ``_loaded`` text names, under the combination it
      names, must give the extreme it reports (ties may name any of the tied choices);
    * where the reference finds one choice alone at the extreme, the engine must name
      that combination and that text."""
    problems = []
    scale = _scale(want)
    for side in ("max", "min"):
        combo_idx = getattr(got, f"{side}_combo")
        texts = getattr(got, f"{side}_loaded")
        values = getattr(got, f"{side}")
        for i in range(R.shape[0]):
            combo = combos[int(combo_idx[i])]
            named = float(ref.label_value(c.beam, combo, c.table, R[i:i + 1], str(texts[i]))[0])
            if not abs(named - values[i]) <= RTOL * scale:  # NaN fails too
                problems.append(f"{what} {side} row {i}: engine names ({combo.name}, "
                                f"{texts[i]!r}), which gives {named!r}, but reports "
                                f"{values[i]!r}")
        for i in np.flatnonzero(getattr(want, f"{side}_unique")):
            g = (int(combo_idx[i]), str(texts[i]))
            w = (int(getattr(want, f"{side}_combo")[i]), getattr(want, f"{side}_loaded")[i])
            if g != w:
                problems.append(f"{what} {side} row {i}: engine names {g}, the one governing "
                                f"choice is {w}")
    return problems


@pytest.mark.parametrize("params", PARAMS, ids=_ids)
def test_governing_combination_and_pattern(params: tuple[int, str, float]) -> None:
    """The governing combination and loaded cells named at each station describe the
    extreme (see _check_governing)."""
    c = compared(*params)
    rows = slice(0, c.n_station)
    problems = []
    for q in ("moment", "shear", "deflection"):
        combos = c.service if q == "deflection" else c.strength
        got = c.a.station_envelopes[q]
        assert got is not None
        problems += _check_governing(c, got, _ref_env(c, q, rows), c.table.values[q][rows],
                                     combos, q)
    assert not problems, f"{len(problems)} problems; first: " + "; ".join(problems[:3])


@pytest.mark.parametrize("params", PARAMS, ids=_ids)
def test_reactions_match_brute_force(params: tuple[int, str, float]) -> None:
    """Strength and service reactions and the support moments of every restrained joint."""
    c = compared(*params)
    joints = c.a.support_joints
    expected = [j for j, s in enumerate(c.beam.supports)
                if s.k_vertical > 0 or s.k_rotation > 0]
    assert joints.tolist() == expected
    # support moment, sagging positive: -(ccw reaction moment), the last joint +
    sign = np.ones(len(c.beam.supports))
    sign[:-1] = -1.0
    checks = (("reaction", c.table.reaction, c.strength),
              ("service_reaction", c.table.reaction, c.service),
              ("support_moment", c.table.reaction_moment * sign[:, None], c.strength))
    for name, R, combos in checks:
        rows = R[joints]
        scale_r = max(float(np.abs(rows).max(initial=0.0)), 1e-300) * 1.6
        want = ref.envelope(c.beam, combos, c.table, rows, TIE_RTOL * scale_r)
        got = c.a.reaction_envelopes[name]
        assert got is not None
        scale = _scale(want)
        _close(got.max, want.max, scale, f"{name} max")
        _close(got.min, want.min, scale, f"{name} min")
        problems = _check_governing(c, got, want, rows, combos, name)
        assert not problems, f"{len(problems)} problems; first: " + "; ".join(problems[:3])


@pytest.mark.parametrize("params", PARAMS[::3], ids=_ids)
def test_design_actions_match_brute_force(params: tuple[int, str, float]) -> None:
    """design: moment_pos is the reference envelope at moment_pos_x and no point of a
    dense grid (39 inner points per span) is higher; hogging and shear at the span ends;
    face moments; deflection_max and deflection_live not below any grid point and
    within the grid's resolution above (relative 1e-3, the sag of a smooth maximum
    between grid points 1/40 of a span apart)."""
    c = compared(*params)
    d = c.a.design_actions
    beam = c.beam
    n = beam.n_spans
    st_rows = slice(0, c.n_station)
    moment = _ref_env(c, "moment", st_rows)
    scale = _scale(moment)
    dense_rows = np.r_[np.arange(c.n_station), np.arange(c.dense.start, c.dense.stop)]
    dense_span = np.array([c.points[i][0] for i in dense_rows])
    dense_m = _ref_env(c, "moment", dense_rows).max
    both = _ref_env(c, "moment", c.design_x).max
    at_x = np.maximum(both[:n], both[n:])
    for j in range(n):
        top = float(dense_m[dense_span == j].max())
        if d["moment_pos"][j] > 0.0:
            assert d["moment_pos"][j] == pytest.approx(at_x[j], abs=RTOL * scale), j
        assert d["moment_pos"][j] >= top - RTOL * scale, (j, d["moment_pos"][j], top)
    st = c.a.stations
    left = np.array([np.flatnonzero(st.span == j)[0] for j in range(n)])
    right = np.array([np.flatnonzero(st.span == j)[-1] for j in range(n)])
    _close(d["moment_neg_left"], np.minimum(moment.min[left], 0.0), scale, "moment_neg_left")
    _close(d["moment_neg_right"], np.minimum(moment.min[right], 0.0), scale,
           "moment_neg_right")
    face = _ref_env(c, "moment", c.faces)
    _close(d["moment_neg_left_face"], np.minimum(face.min[:n], 0.0), scale, "left face")
    _close(d["moment_neg_right_face"], np.minimum(face.min[n:], 0.0), scale, "right face")
    shear = _ref_env(c, "shear", st_rows)
    mag = np.maximum(np.abs(shear.max), np.abs(shear.min))
    _close(d["shear_left"], mag[left], _scale(shear), "shear_left")
    _close(d["shear_right"], mag[right], _scale(shear), "shear_right")

    live = variable_alone(beam.cases)
    for key, combos in (("deflection_max", None), ("deflection_live", live)):
        env = _ref_env(c, "deflection", dense_rows, combos)
        dscale = _scale(env)
        for j in range(n):
            top = max(float(env.max[dense_span == j].max()), 0.0)
            assert d[key][j] >= top - RTOL * dscale, (key, j, d[key][j], top)
            assert d[key][j] <= top + 1e-3 * dscale, (key, j, d[key][j], top)


def test_points_on_demand_match_reference() -> None:
    """envelope_at at arbitrary points (not stations) agrees with the reference."""
    from envelope.solved import envelope_at

    c = compared(1, "exhaustive", 0.9)
    rows = c.dense
    span = np.array([p[0] for p in c.points[rows]])
    xs = np.array([p[1] for p in c.points[rows]])
    pts = make_points(c.beam, span, xs)
    for q in ("moment", "shear", "deflection"):
        got = envelope_at(c.a.solved, pts, q)
        want = _ref_env(c, q, rows)
        assert got is not None
        _close(got.max, want.max, _scale(want), f"{q} max")
        _close(got.min, want.min, _scale(want), f"{q} min")


@pytest.mark.parametrize("n_spans", [7, 8])
@pytest.mark.parametrize("fav", [1.0, 0.9])
def test_exhaustive_matches_every_subset_up_to_eight_spans(n_spans: int, fav: float) -> None:
    """Superposition over all 2^n subsets equals explicit enumeration of every subset for
    7 and 8 spans (the issue's n <= 8), moment and shear at every station."""
    beam = beam_of(random_spec(n_spans, "exhaustive", fav, n_spans=n_spans))
    a = analyse(beam)
    st = a.stations
    points = list(zip(st.span.tolist(), st.x_span.tolist(), st.right.tolist(), strict=True))
    table = ref.unit_table(beam, points, deflection=False)
    combos = tuple(c for c in build_combinations(beam.cases, beam.combinations)
                   if c.set == "strength")
    for q in ("moment", "shear"):
        R = table.values[q]
        want = ref.envelope(beam, combos, table, R, 0.0)
        got = a.station_envelopes[q]
        assert got is not None
        scale = _scale(want)
        _close(got.max, want.max, scale, f"{q} max")
        _close(got.min, want.min, scale, f"{q} min")
