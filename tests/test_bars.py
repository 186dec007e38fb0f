"""Bar arrangements (envelope.sizing.bars): bar sets, clear spacing, layers, stirrups.

Sources: ASTM A615/A615M nominal bar areas (from memory), EN 10080 nominal diameters
with area pi d^2/4 (common practice), ACI 318-19 25.2.1 and 25.2.2, EN 1992-1-1 8.2(2).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from envelope.sizing import bars


def test_us_bar_areas_are_the_astm_a615_nominal_values() -> None:
    s = bars.bar_set("US", "US")
    assert s.names[0] == "#3" and s.names[-1] == "#11"
    assert dict(zip(s.names, s.area, strict=True))["#8"] == 0.79
    assert dict(zip(s.names, s.area, strict=True))["#11"] == 1.56
    si = bars.bar_set(["#8"], "SI")
    assert si.area[0] == pytest.approx(0.79 * 25.4**2)  # 509.7 mm^2


def test_metric_bars_are_pi_d2_over_4_and_restricted_by_a_list() -> None:
    s = bars.bar_set("metric", "SI")
    assert s.names == ("H8", "H10", "H12", "H16", "H20", "H25", "H32", "H40")
    assert s.area[4] == pytest.approx(math.pi * 400 / 4)  # 314.2 mm^2
    assert bars.bar_set([20, "H16"], "SI").names == ("H16", "H20")
    with pytest.raises(ValueError, match="unknown metric bar diameter"):
        bars.bar_set([18], "SI")
    with pytest.raises(ValueError, match="unknown US bar size"):
        bars.bar_set(["#14"], "US")


def test_clear_spacing_aci_25_2_1_and_en_8_2() -> None:
    # ACI: max(1 in, db, 4/3 dagg): #8 with 3/4 in aggregate -> 1.0 in; #11 -> 1.41 in;
    # 1 in aggregate -> 1.333 in
    assert bars.min_clear_spacing("aci318-19", 1.0, 0.75, "US") == pytest.approx(1.0)
    assert bars.min_clear_spacing("aci318-19", 1.41, 0.75, "US") == pytest.approx(1.41)
    assert bars.min_clear_spacing("aci318-19", 1.0, 1.0, "US") == pytest.approx(4 / 3)
    # EN: max(db, dg + 5 mm, 20 mm): H16 with 20 mm aggregate -> 25 mm; H32 -> 32 mm
    assert bars.min_clear_spacing("en1992-1-1", 16.0, 20.0, "SI") == pytest.approx(25.0)
    assert bars.min_clear_spacing("en1992-1-1", 32.0, 20.0, "SI") == pytest.approx(32.0)
    assert bars.min_clear_spacing("en1992-1-1", 12.0, 10.0, "SI") == pytest.approx(20.0)


def test_bars_per_layer_from_the_width() -> None:
    # 300 mm wide, centres 50 mm from each face: 200 mm between outer centres;
    # H20 at 25 mm clear -> pitch 45 mm -> 1 + floor(200/45) = 5 bars
    assert bars.per_layer(300.0, 50.0, 20.0, 25.0) == 5
    assert bars.per_layer(300.0, 50.0, 20.0, 180.0) == 2  # exactly fits two
    assert bars.per_layer(90.0, 50.0, 20.0, 25.0) == 0


def test_one_layer_least_area_at_least_the_required() -> None:
    s = bars.bar_set("metric", "SI")
    need = np.array([1200.0, 0.0, 300.0])
    out = bars.choose(lambda d: need * 540.0 / d, np.full(3, 540.0), np.full(3, 300.0),
                      50.0, np.full(3, 7200.0), s, "en1992-1-1", 20.0, "SI")
    assert out["fits"].all()
    assert (out["area"] >= need - 1e-9).all()
    # 1200 mm^2: one layer (5 H16 at most, 11 H12 in two layers is refused while one
    # layer works); 4 H20 = 1257 scores 1257 * 1.2 = 1508 against 3 H25 = 1473 * 1.1
    # = 1620 and 2 H32 = 1608
    assert out["label"][0] == "4 H20" and out["layers"][0] == 1
    assert out["area"][0] == pytest.approx(4 * math.pi * 100)
    assert out["d"][0] == 540.0
    assert out["label"][1] == "" and out["area"][1] == 0.0
    # 300 mm^2: 6 H8 = 302 scores 422, 4 H10 = 314 scores 377, 3 H12 = 339 scores 373,
    # 2 H16 = 402
    assert out["label"][2] == "3 H12"


def test_two_layers_reduce_d_and_recompute_the_steel() -> None:
    s = bars.bar_set(["#9"], "US")
    # 12 in wide, 2.5 in to the bar centres: 7 in between outer centres; #9 clear
    # max(1, 1.128, 1) = 1.128 -> pitch 2.256 -> 4 per layer.  6.0 in^2 needs 6 #9 at
    # d = 21.5, but 2 of them in a second layer 2.256 in higher give d = 20.75 and need
    # 6.22 in^2; 7 #9 (4 + 3) at d = 21.5 - 2.256 * 3/7 = 20.53 need 6.28: enough
    req = lambda d: 6.0 * 21.5 / d  # noqa: E731
    out = bars.choose(req, np.array([21.5]), np.array([12.0]), 2.5, np.array([20.0]), s,
                      "aci318-19", 0.75, "US")
    d2 = 21.5 - 2.256 * 3 / 7
    assert out["layers"][0] == 2
    assert out["label"][0] == "7 #9"  # 6 #9 = 6.0 < 6.0 * 21.5 / (21.5 - 0.752)
    assert out["d"][0] == pytest.approx(d2)
    assert out["area"][0] >= req(out["d"])[0]


def test_no_arrangement_fits_is_reported() -> None:
    s = bars.bar_set(["#4"], "US")
    out = bars.choose(lambda d: np.array([10.0]), np.array([21.5]), np.array([12.0]), 2.5,
                      np.array([20.0]), s, "aci318-19", 0.75, "US")
    assert not out["fits"][0] and out["label"][0] == ""
    # more than as_max is refused as well
    out = bars.choose(lambda d: np.array([1.0]), np.array([21.5]), np.array([12.0]), 2.5,
                      np.array([0.5]), s, "aci318-19", 0.75, "US")
    assert not out["fits"][0]


def test_stirrups_size_legs_and_spacing() -> None:
    sizes = bars.stirrup_set(bars.bar_set("US", "US"), "US")
    # Av/s = 0.02 in^2/in with 2 #3 legs (0.22 in^2): s = 11 in, capped at s_max 10.75
    # and rounded down to 10 in
    out = bars.stirrups(np.array([0.02, 0.0, 0.2]), np.array([10.75, 10.75, 5.0]),
                        np.full(3, 12.0), np.full(3, 21.5), 2.5, np.full(3, 21.5),
                        sizes, "US")
    assert out["label"][0] == "#3 x2 @ 10 in"
    assert out["label"][1] == ""
    # 0.2 in^2/in: #3 x2 -> 1.1 in (< 3 in), #3 x4 -> 2.2, #4 x2 -> 2 in, #4 x4 -> 4 in
    assert out["label"][2] == "#4 x4 @ 4 in"
    assert out["fits"].all()
