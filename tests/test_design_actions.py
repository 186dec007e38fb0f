"""Design actions per span (``Analysis.design_actions`` and design.parquet) checked
against the envelope itself and against handbook values.

The outputs contract (design.parquet) defines each action from the envelope:
moment_pos is the largest sagging moment in the span, "exact, not limited to
stations", and moment_pos_x where it occurs; moment_neg_left/right the most
hogging moment at the support centrelines (0 where none); the _face columns
the same at half the support width from the centreline; shear_left/right the
largest shear magnitude at the span ends; deflection_max the largest downward
service deflection, deflection_live the same for the live kinds alone;
span_over_deflection = length / deflection_max.  The reference for the maxima
is a dense evaluation of the envelope (``envelope_at``) at 100,001 equally
spaced points per span, refined near its best point on a finer grid.

Handbook check: references 3.3 "Patterns", 3 equal spans [D], rows matching
AISC Steel Construction Manual Table 3-23 (from memory).  A pinned end carries
no moment and a free tip no moment (statics, common practice).
"""

from __future__ import annotations

import json
import math
import tomllib
from collections.abc import Callable
from functools import cache

import numpy as np
import pytest

import envelope
from envelope.analysis import Analysis, analyse
from envelope.casefile import parse_case
from envelope.recovery import make_points
from envelope.solved import envelope_at

from beams import beam_text
from tolerances import REARRANGED, SMALL_SOLVE, ULPS

DENSE = 100_001
FINE = 4001
METHODS = ["none", "code", "exhaustive"]
CONTRACT_COLUMNS = [
    "beam", "span", "length", "moment_pos", "moment_pos_x", "moment_neg_left",
    "moment_neg_right", "moment_neg_left_face", "moment_neg_right_face", "shear_left",
    "shear_right", "deflection_max", "deflection_live", "span_over_deflection",
]

# Invented beams, each a function of the patterning method.
BEAMS: dict[str, Callable[[str], str]] = {
    # Three unequal spans, point loads inside spans 2 (dead) and 3 (live), wide
    # interior supports and a narrower right end support.
    "unequal-points": lambda method: beam_text(
        [5.4, 7.5, 4.8],
        ["pinned", {"type": "pinned", "width": 0.4}, {"type": "pinned", "width": 0.4},
         {"type": "pinned", "width": 0.3}],
        [{"case": "D", "type": "uniform", "spans": "all", "w": 12.0},
         {"case": "D", "type": "point", "spans": 2, "P": 140.0, "at": 3.0},
         {"case": "L", "type": "uniform", "spans": "all", "w": 9.0},
         {"case": "L", "type": "point", "spans": 3, "P": 15.0, "at": 1.6}],
        section={"E": 30000, "I": 4.5e9},
        cases={"D": "dead", "L": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        patterning={"method": method}),
    # A back span with a cantilever overhang: the overhang only hogs, so its
    # moment_pos is 0 with no position, and its free tip carries no moment.
    "overhang": lambda method: beam_text(
        [6.5, 2.0], ["pinned", {"type": "pinned", "width": 0.35}, "free"],
        [{"case": "D", "type": "uniform", "spans": "all", "w": 8.0},
         {"case": "D", "type": "point", "spans": 2, "P": 10.0, "at": 2.0},
         {"case": "L", "type": "uniform", "spans": "all", "w": 6.0}],
        section={"E": 30000, "I": 3.2e9},
        cases={"D": "dead", "L": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        patterning={"method": method}),
    # US units: a fixed left end, two unequal spans, a live point load in span 1.
    "us-fixed-end": lambda method: beam_text(
        [24, 18], [{"type": "fixed", "width": 1.0}, {"type": "pinned", "width": 1.0}, "pinned"],
        [{"case": "D", "type": "uniform", "spans": "all", "w": 1.1},
         {"case": "L", "type": "uniform", "spans": "all", "w": 1.6},
         {"case": "L", "type": "point", "spans": 1, "P": 6.0, "at": 8.0}],
        units="US", section={"E": 29000, "I": 800}, cases={"D": "dead", "L": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        patterning={"method": method}),
}


@cache
def analysis(name: str, method: str) -> Analysis:
    text = BEAMS[name](method)
    return analyse(parse_case(tomllib.loads(text), f"{name}.toml"))


def dense_max(a: Analysis, span: int, quantity: str, case_set: str | None = None
              ) -> tuple[np.ndarray, np.ndarray]:
    """Envelope maximum of ``quantity`` at DENSE points of span ``span`` (0-based)."""
    x = np.linspace(0.0, a.beam.spans[span].length, DENSE)
    pts = make_points(a.beam, np.full(DENSE, span), x)
    ext = envelope_at(a.solved, pts, quantity, case_set, labels=False)
    assert ext is not None
    return x, ext.max


def fine_argmax(a: Analysis, span: int, lo: float, hi: float) -> tuple[float, float]:
    """Best point of the moment envelope maximum on FINE points in [lo, hi]."""
    x = np.linspace(lo, hi, FINE)
    ext = envelope_at(a.solved, make_points(a.beam, np.full(FINE, span), x), "moment",
                      labels=False)
    assert ext is not None
    k = int(np.argmax(ext.max))
    return float(x[k]), float(ext.max[k])


def check_not_below_nor_above(design: float, dense: float, scale: float, what: str) -> None:
    """An exact maximum is never below any dense point and (for a maximum that is
    there at all) within 1e-9 of the best dense point, relative."""
    assert design >= dense - 1e-12 * scale, f"{what}: {design!r} below dense {dense!r}"
    assert design <= dense + 1e-9 * abs(dense) + 1e-12 * scale, (
        f"{what}: {design!r} above dense {dense!r}")


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("name", list(BEAMS))
def test_moment_pos_is_the_exact_span_maximum_of_the_envelope(name: str, method: str) -> None:
    a = analysis(name, method)
    d = a.design_actions
    for j, span in enumerate(a.beam.spans):
        L = span.length
        x, m = dense_max(a, j, "moment")
        k = int(np.argmax(m))
        scale = float(np.max(np.abs(m)))
        if m[k] <= 1e-9 * scale:
            # no sagging anywhere in the span: 0, and no position
            assert d["moment_pos"][j] == 0.0, f"span {j + 1}"
            assert math.isnan(d["moment_pos_x"][j]), f"span {j + 1}"
            continue
        check_not_below_nor_above(d["moment_pos"][j], m[k], scale, f"moment_pos span {j + 1}")
        xd = float(d["moment_pos_x"][j])
        assert 0.0 <= xd <= L
        # the reported position carries the reported value
        at = envelope_at(a.solved, make_points(a.beam, [j], [xd]), "moment", labels=False)
        assert at is not None
        assert abs(at.max[0] - d["moment_pos"][j]) <= 1e-12 * scale
        # and it is where the maximum is, to 1e-6 of the span length
        xf, mf = fine_argmax(a, j, x[max(k - 1, 0)], x[min(k + 1, DENSE - 1)])
        assert abs(xd - xf) <= 1e-6 * L, f"span {j + 1}: x {xd!r}, fine search {xf!r}"
        check_not_below_nor_above(d["moment_pos"][j], mf, scale, f"fine span {j + 1}")


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("name", list(BEAMS))
def test_deflection_max_and_live_are_the_span_maxima_of_their_envelopes(
    name: str, method: str
) -> None:
    a = analysis(name, method)
    d = a.design_actions
    for j in range(a.beam.n_spans):
        for key, case_set in (("deflection_max", None), ("deflection_live", "live")):
            x, v = dense_max(a, j, "deflection", case_set)
            k = int(np.argmax(v))
            # the best dense point, refined on a finer grid round it (a small maximum
            # sags between dense points by more than 1e-9 of itself)
            xf = np.linspace(x[max(k - 1, 0)], x[min(k + 1, DENSE - 1)], FINE)
            ext = envelope_at(a.solved, make_points(a.beam, np.full(FINE, j), xf),
                              "deflection", case_set, labels=False)
            assert ext is not None
            best = max(float(v.max()), float(ext.max.max()), 0.0)
            scale = float(np.max(np.abs(v)))
            check_not_below_nor_above(float(d[key][j]), best, scale, f"{key} span {j + 1}")
        if d["deflection_max"][j] > 0.0:
            assert d["span_over_deflection"][j] == pytest.approx(
                a.beam.spans[j].length / d["deflection_max"][j], rel=ULPS)
        else:
            # a span that never deflects downward has no ratio (the contract is silent;
            # the engine reports NaN, null in design.parquet, rather than infinity)
            assert math.isnan(d["span_over_deflection"][j])


def end_rows(a: Analysis, span: int) -> tuple[int, int]:
    """Station rows of the left end (x_span = 0) and right end (x_span = L) of a span."""
    rows = np.flatnonzero(a.stations.span == span)
    left, right = int(rows[0]), int(rows[-1])
    assert a.stations.x_span[left] == 0.0
    assert a.stations.x_span[right] == a.beam.spans[span].length
    return left, right


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("name", list(BEAMS))
def test_support_moments_faces_and_end_shears_come_from_the_envelope(
    name: str, method: str
) -> None:
    a = analysis(name, method)
    d = a.design_actions
    beam = a.beam
    moment, shear = a.station_envelopes["moment"], a.station_envelopes["shear"]
    assert moment is not None and shear is not None
    scale = float(np.max(np.abs(moment.min)))
    for j, span in enumerate(beam.spans):
        left, right = end_rows(a, j)
        assert d["moment_neg_left"][j] == min(moment.min[left], 0.0)
        assert d["moment_neg_right"][j] == min(moment.min[right], 0.0)
        assert d["moment_neg_left"][j] <= 0.0 and d["moment_neg_right"][j] <= 0.0

        half_l = beam.supports[j].width / 2
        half_r = beam.supports[j + 1].width / 2
        faces = make_points(beam, [j, j], [half_l, span.length - half_r], [True, False])
        ext = envelope_at(a.solved, faces, "moment", labels=False)
        assert ext is not None
        assert d["moment_neg_left_face"][j] == pytest.approx(min(ext.min[0], 0.0),
                                                             rel=REARRANGED, abs=REARRANGED * scale)
        assert d["moment_neg_right_face"][j] == pytest.approx(min(ext.min[1], 0.0),
                                                              rel=REARRANGED,
                                                              abs=REARRANGED * scale)
        if half_l == 0.0:
            assert d["moment_neg_left_face"][j] == d["moment_neg_left"][j]
        if half_r == 0.0:
            assert d["moment_neg_right_face"][j] == d["moment_neg_right"][j]

        assert d["shear_left"][j] == max(abs(shear.max[left]), abs(shear.min[left]))
        assert d["shear_right"][j] == max(abs(shear.max[right]), abs(shear.min[right]))

    # pinned ends and free tips carry no moment (statics): "0 where none"
    first, last = beam.supports[0], beam.supports[-1]
    if first.kind in ("pinned", "free"):
        assert abs(d["moment_neg_left"][0]) <= 1e-9 * scale
    if last.kind in ("pinned", "free"):
        assert abs(d["moment_neg_right"][-1]) <= 1e-9 * scale
    if first.kind == "fixed":  # a fixed end under downward load hogs
        assert d["moment_neg_left"][0] < -0.01 * scale


def test_overhang_has_no_sagging_and_a_null_position_in_the_table() -> None:
    # The overhang carries downward loads only, so its moment is hogging throughout
    # and zero at the free tip (statics).
    for method in METHODS:
        a = analysis("overhang", method)
        assert a.design_actions["moment_pos"][1] == 0.0
        assert math.isnan(a.design_actions["moment_pos_x"][1])
        assert a.design_actions["moment_pos"][0] > 0.0
        row = envelope.tables(a)["design"].to_pylist()[1]
        assert row["moment_pos"] == 0.0
        assert row["moment_pos_x"] is None
        assert row["moment_neg_right"] == pytest.approx(0.0, abs=1e-9)


def test_design_of_three_equal_spans_matches_handbook_patterns() -> None:
    # references 3.3 "Patterns" [D] (AISC Table 3-23 [M]), w = 1, L = 1, EI = 1, live
    # only with exhaustive patterning (influence-line rules, references section 2):
    # max +M in spans 1 and 3 from 1+3 loaded: 81/800 at 0.45 L (0.55 L in span 3);
    # in span 2 from 2 loaded: 0.075 at midspan; max -M at B and C from 1+2 (2+3):
    # -7/60; V_BA = 37/60; largest deflection of span 1 from 1+3: 0.00992 wL^4/EI.
    text = beam_text(
        [1, 1, 1], ["pinned"] * 4, [{"case": "L", "type": "uniform", "spans": "all", "w": 1}],
        cases={"L": "live"},
        combinations={"strength": "none", "service": "none",
                      "custom": [{"name": "L only", "set": "strength", "factors": {"L": 1.0}},
                                 {"name": "L service", "set": "service",
                                  "factors": {"L": 1.0}}]},
        patterning={"method": "exhaustive"}, output={"stations_per_span": 8})
    a = analyse(parse_case(tomllib.loads(text), "three-equal.toml"))
    d = a.design_actions
    assert d["moment_pos"] == pytest.approx([81 / 800, 3 / 40, 81 / 800], rel=SMALL_SOLVE)
    assert d["moment_pos_x"] == pytest.approx([0.45, 0.5, 0.55], abs=1e-6)
    assert d["moment_neg_right"][0] == pytest.approx(-7 / 60, rel=SMALL_SOLVE)
    assert d["moment_neg_left"][2] == pytest.approx(-7 / 60, rel=SMALL_SOLVE)
    assert d["moment_neg_left"][0] == pytest.approx(0.0, abs=SMALL_SOLVE)
    assert d["shear_right"][0] == pytest.approx(37 / 60, rel=SMALL_SOLVE)
    for key in ("deflection_max", "deflection_live"):
        assert abs(d[key][0] - 0.00992) <= 0.5e-5, key
        assert abs(d[key][1] - 0.00677) <= 0.5e-5, key  # 3.3: 3 spans, 2 loaded
    assert d["span_over_deflection"][0] == pytest.approx(1.0 / d["deflection_max"][0])


@pytest.mark.parametrize(("name", "factor", "label"),
                         [("unequal-points", 1000.0, "mm"), ("overhang", 1000.0, "mm"),
                          ("us-fixed-end", 12.0, "in")])
def test_design_table_has_the_contract_columns_and_deflections_in_mm_or_in(
    name: str, factor: float, label: str
) -> None:
    # outputs contract, design.parquet; 1 m = 1000 mm (SI), 1 ft = 12 in (exact)
    a = analysis(name, "exhaustive")
    table = envelope.tables(a)["design"]
    missing = [c for c in CONTRACT_COLUMNS if c not in table.column_names]
    assert not missing, missing
    assert table.num_rows == a.beam.n_spans
    units = json.loads(table.schema.metadata[b"envelope:units"])
    assert units["deflection"] == label
    rows = table.to_pylist()
    d = a.design_actions
    for j, row in enumerate(rows):
        assert row["beam"] == a.beam.id
        assert row["span"] == j + 1
        assert row["length"] == a.beam.spans[j].length
        for key in ("deflection_max", "deflection_live"):
            assert row[key] == pytest.approx(d[key][j] * factor, rel=ULPS)
        # dimensionless: length over deflection in the same unit
        assert row["span_over_deflection"] == pytest.approx(
            row["length"] / (row["deflection_max"] / factor), rel=1e-12)
        for key in ("moment_pos", "moment_neg_left", "moment_neg_right",
                    "moment_neg_left_face", "moment_neg_right_face", "shear_left",
                    "shear_right"):
            assert row[key] == d[key][j], key
