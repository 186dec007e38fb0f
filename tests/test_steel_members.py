"""Steel members by AISC 360-22 against hand calculations: Cb (F1-1), Lp, Lr and Mn (F2),
flange local buckling (F3, Table B4.1b), shear (G2.1), web local yielding and crippling
(J10.2, J10.3), and the Design Guide 11 walking-vibration formulas.

The hand calculations use an invented welded shape, PG-18x51, made of plates (no
fillets): d = 18, bf = 7.5, tf = 0.60, tw = 0.36 in.  Its properties from the plates,
rounded as a table would give them: Ix = 823.7 in^4, Zx = 103.7 in^3, Sx = 91.5 in^3,
Iy = 42.25 in^4, ry = 1.676 in, J = 1.351 in^4, Cw = 3198 in^6 (Iy ho^2 / 4), 51.2 lb/ft.
Fy = 50 ksi, E = 29,000 ksi.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pytest

from envelope.sizing import ltb, shapes, vibration, web

from tolerances import SOLVE

E, FY = 29_000.0, 50.0
PG = dict(d=18.0, bf=7.5, tf=0.60, tw=0.36, Ix=823.7, Zx=103.7, Sx=91.5, Iy=42.25,
          ry=1.676, J=1.351, Cw=3198.0, weight=51.2)


def test_cb_uniform_load_braced_at_ends_is_1_14() -> None:
    # F1-1 with M(x) = 4 Mmax x (L - x) / L^2: MA = MC = 0.75, MB = 1.0 Mmax;
    # 12.5 / (2.5 + 2.25 + 4 + 2.25) = 1.136 (AISC 360-22 commentary to F1, common practice)
    assert ltb.cb(1.0, 0.75, 1.0, 0.75) == pytest.approx(12.5 / 11.0)
    assert round(float(ltb.cb(1.0, 0.75, 1.0, 0.75)), 2) == 1.14


def test_cb_uniform_moment_is_1_0() -> None:
    # F1-1: every moment equal -> 12.5 / 12.5 (common practice)
    assert ltb.cb(-250.0, -250.0, -250.0, -250.0) == pytest.approx(1.0)


def test_cb_uses_absolute_values_and_broadcasts() -> None:
    # linear moment from +M to -M (reverse curvature): MA = 0.5, MB = 0, MC = 0.5:
    # 12.5 / (2.5 + 1.5 + 0 + 1.5) = 2.27 (F1-1 as written)
    out = ltb.cb(np.array([1.0, 1.0]), np.array([0.5, 0.75]), np.array([0.0, 1.0]),
                 np.array([-0.5, 0.75]))
    assert out == pytest.approx([12.5 / 5.5, 12.5 / 11.0])


def test_lp_lr_by_hand_for_the_invented_shape() -> None:
    # F2-5: Lp = 1.76 ry sqrt(E/Fy) = 1.76 * 1.676 * sqrt(580) = 1.76 * 1.676 * 24.083
    #         = 71.04 in
    assert ltb.lp(PG["ry"], E, FY) == pytest.approx(71.04, abs=0.01)
    # F2-7: rts^2 = sqrt(Iy Cw) / Sx = sqrt(42.25 * 3198) / 91.5 = 367.58 / 91.5 = 4.0172
    rts = ltb.rts(PG["Iy"], PG["Cw"], PG["Sx"])
    assert rts == pytest.approx(2.0043, abs=1e-4)
    # F2-6 with c = 1, ho = d - tf = 17.4:
    #   Jc/(Sx ho) = 1.351 / (91.5 * 17.4) = 8.4856e-4
    #   6.76 (0.7 Fy / E)^2 = 6.76 * (35 / 29000)^2 = 9.8466e-6
    #   sqrt(8.4856e-4^2 + 9.8466e-6) = 3.2506e-3; sqrt(8.4856e-4 + 3.2506e-3) = 0.064025
    #   Lr = 1.95 * 2.0043 * (29000 / 35) * 0.064025 = 207.34 in
    assert ltb.lr(rts, PG["J"], PG["Sx"], 17.4, E, FY) == pytest.approx(207.34, abs=0.05)


def test_mn_f2_by_hand_in_each_range() -> None:
    rts = float(ltb.rts(PG["Iy"], PG["Cw"], PG["Sx"]))
    args = (PG["Zx"], PG["Sx"], PG["ry"], rts, PG["J"], 17.4, E, FY)
    # F2-1: Lb = 5 ft = 60 in < Lp: Mn = Mp = 50 * 103.7 = 5185 kip*in
    assert ltb.mn_ltb(60.0, 1.0, *args) == pytest.approx(5185.0)
    # F2-2: Lb = 12 ft = 144 in, Cb = 1:
    #   Mn = 5185 - (5185 - 0.7*50*91.5) (144 - 71.04)/(207.34 - 71.04)
    #      = 5185 - 1982.5 * 0.53529 = 4123.8 kip*in; phi Mn = 3711.4 kip*in = 309.3 kip*ft
    assert ltb.mn_ltb(144.0, 1.0, *args) == pytest.approx(4123.8, abs=0.5)
    assert ltb.PHI_B * ltb.mn_ltb(144.0, 1.0, *args) / 12 == pytest.approx(309.3, abs=0.05)
    # with Cb = 1.3 the same Lb reaches the cap Mp (1.3 * 4123.8 > 5185)
    assert ltb.mn_ltb(144.0, 1.3, *args) == pytest.approx(5185.0)
    # F2-3, F2-4: Lb = 25 ft = 300 in > Lr: Lb/rts = 149.68, (Lb/rts)^2 = 22404;
    #   Fcr = pi^2 * 29000 / 22404 * sqrt(1 + 0.078 * 8.4856e-4 * 22404)
    #       = 12.775 * sqrt(2.48286) = 20.130 ksi; Mn = Fcr Sx = 1841.9 kip*in
    assert ltb.mn_ltb(300.0, 1.0, *args) == pytest.approx(1841.9, abs=0.5)


def test_worked_example_w18x50_braced_at_third_points() -> None:
    # AISC Design Examples (v15.0), Example F.1-2A, from memory: W18x50, Fy = 50 ksi,
    # 35 ft simple span braced at the ends and third points (Lb = 11.67 ft).  Manual
    # properties from memory: Zx = 101, Sx = 88.9, ry = 1.65, rts = 1.98, ho = 17.4,
    # J = 1.24.  Lp = 5.83 ft, Lr = 16.9 ft, phi Mn = 302 kip*ft with Cb = 1.0.
    assert ltb.lp(1.65, E, FY) / 12 == pytest.approx(5.83, abs=0.005)
    assert ltb.lr(1.98, 1.24, 88.9, 17.4, E, FY) / 12 == pytest.approx(16.9, abs=0.05)
    phi_mn = ltb.PHI_B * ltb.mn_ltb(11.67 * 12, 1.0, 101, 88.9, 1.65, 1.98, 1.24, 17.4,
                                    E, FY) / 12
    assert phi_mn == pytest.approx(302, abs=0.5)


def test_flange_local_buckling_f3_by_hand() -> None:
    # Table B4.1b case 11 (flanges of built-up I-shapes; the shapes here are welded) at
    # Fy = 50, h/tw = 16.8/0.36 = 46.67: kc = 4/sqrt(46.67) = 0.58554 (note [a]),
    # lambda_p = 0.38 * 24.083 = 9.152, lambda_r = 0.95 sqrt(0.58554 * 29000 / 35) =
    # 20.925 (FL = 0.7 Fy for a doubly symmetric section, F4-6a)
    lam_p, lam_r = ltb.flange_limits(E, FY, ltb.kc(16.8, 0.36))
    assert (lam_p, lam_r) == pytest.approx((9.152, 20.925), abs=1e-3)
    # compact: bf/2tf = 7.5/1.2 = 6.25 -> Mp
    assert ltb.mn_flb(7.5, 0.6, 16.8, 0.36, 103.7, 91.5, E, FY) == pytest.approx(5185.0)
    # noncompact: bf = 12, tf = 0.5: lambda = 12; F3-1:
    #   Mn = 5185 - (5185 - 3202.5)(12 - 9.152)/(20.925 - 9.152) = 5185 - 1982.5 * 0.24193
    #      = 4705.4 kip*in
    assert ltb.mn_flb(12.0, 0.5, 16.8, 0.36, 103.7, 91.5, E, FY) == pytest.approx(4705.4,
                                                                                    abs=0.5)
    # slender by case 11 (noncompact by case 10, the rolled-shape limit 24.08, which gave
    # 3479.1): bf = 13.2, tf = 0.3: lambda = 22 > 20.925; F3-2:
    #   Mn = 0.9 * 29000 * 0.58554 * 91.5 / 484 = 2889.2 kip*in
    assert ltb.mn_flb(13.2, 0.3, 16.8, 0.36, 103.7, 91.5, E, FY) == pytest.approx(2889.2,
                                                                                    abs=0.1)
    # slender: bf = 16, tf = 0.3: lambda = 26.67; F3-2:
    #   Mn = 0.9 * 29000 * 0.58554 * 91.5 / 711.11 = 1398360 / 711.11 = 1966.4 kip*in
    assert ltb.mn_flb(16.0, 0.3, 16.8, 0.36, 103.7, 91.5, E, FY) == pytest.approx(1966.4,
                                                                                    abs=0.1)
    assert list(ltb.flange_class(np.array([7.5, 12.0, 13.2, 16.0]),
                                 np.array([0.6, 0.5, 0.3, 0.3]), 16.8, 0.36, E, FY)
                ) == ["compact", "noncompact", "slender", "slender"]


def test_web_compactness_b4_1b_case_15() -> None:
    # 3.76 sqrt(580) = 90.55: h/tw = 16.8/0.36 = 46.7 compact; 16.8/0.15 = 112 not
    assert list(ltb.web_is_compact(np.array([16.8, 16.8]), np.array([0.36, 0.15]), E, FY)
                ) == [True, False]


def test_shear_g2_1_by_hand() -> None:
    # h/tw = 46.7 <= 1.10 sqrt(5.34 * 29000 / 50) = 61.22: Cv1 = 1.0 (G2-3);
    # phi Vn = 0.9 * 0.6 * 50 * 18 * 0.36 = 174.96 kip (G2-1)
    assert web.phi_vn(18.0, 0.36, 16.8, E, FY) == pytest.approx(174.96)
    # a thin web: h/tw = 16.8/0.2 = 84 > 61.22: Cv1 = 61.22/84 = 0.7288 (G2-4)
    assert web.cv1(16.8, 0.2, E, FY) == pytest.approx(1.10 * math.sqrt(5.34 * 580) / 84)


def test_web_local_yielding_j10_2_by_hand() -> None:
    # k = tf = 0.6 (no fillet), lb = 6 in, Fy = 50, tw = 0.36
    # at the member end (J10-3): Rn = 50 * 0.36 * (2.5 * 0.6 + 6) = 135 kip
    assert web.web_local_yielding(0.36, 0.6, 6.0, 18.0, 0.0, FY) == pytest.approx(135.0)
    # farther than d from the end (J10-2): Rn = 50 * 0.36 * (5 * 0.6 + 6) = 162 kip
    assert web.web_local_yielding(0.36, 0.6, 6.0, 18.0, 240.0, FY) == pytest.approx(162.0)


def test_web_crippling_j10_3_by_hand() -> None:
    # (tw/tf)^1.5 = 0.6^1.5 = 0.464758; sqrt(E Fy tf / tw) = sqrt(29000*50*0.6/0.36)
    #   = 1554.56; tw^2 = 0.1296; lb = 6, d = 18: lb/d = 0.3333
    # interior (J10-4): 0.80 * 0.1296 * (1 + 3 * 0.3333 * 0.464758) * 1554.56 = 236.08 kip
    assert web.web_crippling(0.36, 0.6, 6.0, 18.0, 240.0, E, FY) == pytest.approx(236.08,
                                                                                  abs=0.05)
    # at the end, lb/d > 0.2 (J10-5b):
    #   0.40 * 0.1296 * (1 + (4 * 0.3333 - 0.2) * 0.464758) * 1554.56 = 123.04 kip
    assert web.web_crippling(0.36, 0.6, 6.0, 18.0, 0.0, E, FY) == pytest.approx(123.04,
                                                                                abs=0.05)
    # at the end, lb/d = 3/18 <= 0.2 (J10-5a):
    #   0.40 * 0.1296 * (1 + 3 * 0.16667 * 0.464758) * 1554.56 = 99.31 kip
    assert web.web_crippling(0.36, 0.6, 3.0, 18.0, 0.0, E, FY) == pytest.approx(99.31,
                                                                                abs=0.05)


def test_fn_simple_span_matches_the_closed_form() -> None:
    # simple span, w = 1.2 kip/ft on L = 30 ft, I = 823.7 in^4:
    # delta = 5 w L^4 / (384 E I); fn = 0.18 sqrt(g/delta) (DG11) against the exact first
    # bending frequency (pi / 2) sqrt(E I g / (w L^4)) (closed form, common practice)
    w, L, Ix = 1.2 / 12, 30 * 12.0, 823.7
    g = vibration.GRAVITY["US"]
    delta = 5 * w * L**4 / (384 * E * Ix)
    exact = math.pi / 2 * math.sqrt(E * Ix * g / (w * L**4))
    assert vibration.natural_frequency(delta, g) == pytest.approx(exact, rel=0.005)


def test_walking_acceleration_dg11_by_hand() -> None:
    # ap/g = P0 exp(-0.35 fn) / (beta W): P0 = 65 lb, fn = 5 Hz, beta = 0.03, W = 30 kip
    # = 0.065 * exp(-1.75) / 0.9 = 0.065 * 0.17377 / 0.9 = 0.012550
    assert vibration.walking_acceleration(5.0, 0.03, 30.0, 0.065) == pytest.approx(
        0.012550, abs=1e-6)


def test_camber_fraction_and_threshold() -> None:
    out = vibration.camber(np.array([0.5, 1.5]), 0.8, 0.75)
    assert out == pytest.approx([0.0, 1.2])


def test_shapes_derive_rts_ho_aw_and_mark_old_tables() -> None:
    cols = {k: np.array([v]) for k, v in PG.items()}
    s = shapes.from_columns(["PG-18x51"], cols)
    assert s.full
    assert s.rts[0] == pytest.approx(2.0043, abs=1e-4)
    assert s.ho[0] == pytest.approx(17.4)
    assert s.Aw[0] == pytest.approx(18 * 0.36)
    assert s.h[0] == pytest.approx(18 - 1.2)       # no k given: d - 2 tf
    old = shapes.from_columns(["x"], {"Zx": np.array([1.0]), "Ix": np.array([2.0]),
                                      "Aw": np.array([3.0]), "weight": np.array([4.0])})
    assert not old.full and np.isnan(old.rts[0])


# ------------------------------------------------- segments and their exact moments

def _beam(spans: tuple[float, ...], supports: tuple[str, ...], loads: list[dict[str, Any]],
          live: bool = False, strength: dict[str, float] | None = None,
          patterning: str = "none"):  # type: ignore[no-untyped-def]
    from envelope.recovery import stations
    from envelope.solved import solve_beam
    from tests.beams import beam_text, parse_text

    text = beam_text(
        list(spans), list(supports), loads, section={"E": 200000, "I": 4.0e8},
        cases={"D": "dead", "L": "live"} if live else {"D": "dead"},
        combinations={"strength": "none", "service": "characteristic",
                      "custom": [{"name": "s", "set": "strength",
                                  "factors": strength or {"D": 1.4}}]},
        patterning={"method": patterning})
    beam = parse_text(text)
    solved = solve_beam(beam)
    return solved, stations(beam, solved.mesh, solved.unit_cases)


UDL = {"case": "D", "type": "uniform", "spans": "all", "w": 10.0}


def test_segments_from_bracing_keys() -> None:
    from envelope.sizing.bracing import segments

    joints = np.array([0.0, 8.0, 14.0])
    restrained = np.array([True, True, True])
    s = segments(joints, restrained, "continuous", "supports")
    assert list(s.flange) == ["bottom", "bottom"]
    assert list(s.x0) == [0.0, 8.0] and list(s.x1) == [8.0, 14.0]
    s = segments(joints, restrained, ((2.0, 6.0), ()), "continuous")
    assert list(zip(s.x0, s.x1, strict=True)) == [(0, 2), (2, 6), (6, 8), (8, 14)]
    # a free end: the last piece is a cantilever segment
    s = segments(joints, np.array([True, True, False]), "supports", "continuous")
    assert list(s.cantilever) == [False, True]
    # a free interior joint: one segment runs across it
    s = segments(joints, np.array([True, False, True]), "supports", "continuous")
    assert list(zip(s.x0, s.x1, strict=True)) == [(0.0, 14.0)]


def test_cb_from_exact_moments_simple_span_braced_at_ends_is_1_14() -> None:
    from envelope.sizing.bracing import segments
    from envelope.sizing.unbraced import segment_demands

    solved, st = _beam((9.0,), ("pinned", "pinned"), [UDL])
    segs = segments(np.array([0.0, 9.0]), np.array([True, True]), "supports", "continuous")
    dem = segment_demands(solved, st, segs)
    # Mu = 1.4 * 10 * 81 / 8 = 141.75 kN*m (wL^2/8, common practice); Cb = 12.5/11 (F1-1)
    assert dem.mu[0, 0] == pytest.approx(141.75, rel=SOLVE)
    assert dem.cb[0, 0] == pytest.approx(12.5 / 11.0, rel=SOLVE)
    assert dem.quarter[0, 0] == pytest.approx([0.75 * 141.75, 141.75, 0.75 * 141.75])


def test_cb_third_point_bracing_1_46_1_01_1_46() -> None:
    # uniform load, braced at the third points: Cb = 1.46, 1.01, 1.46 (AISC 360-22
    # commentary to F1, from memory; by F1-1: 11.111/7.6111 and 12.5/12.333)
    from envelope.sizing.bracing import segments
    from envelope.sizing.unbraced import segment_demands

    solved, st = _beam((9.0,), ("pinned", "pinned"), [UDL])
    segs = segments(np.array([0.0, 9.0]), np.array([True, True]), ((3.0, 6.0),),
                    "continuous")
    dem = segment_demands(solved, st, segs)
    assert dem.cb[:, 0] == pytest.approx([1.4599, 1.0135, 1.4599], abs=1e-4)
    # end segments: the demand is at the brace point, M(L/3) = 8/9 Mmax
    assert dem.mu[:, 0] == pytest.approx([141.75 * 8 / 9, 141.75, 141.75 * 8 / 9])


def test_uniform_moment_segment_has_cb_1() -> None:
    # two equal point loads at the third points (four-point bending): uniform moment
    # P L / 3 between them; braced at the loads, the middle segment has Cb = 1.0 (F1-1)
    # and each end segment a linear diagram from 0: Cb = 12.5 / (2.5 + 0.75 + 2 + 2.25)
    # = 1.667 (F1-1 by hand)
    from envelope.sizing.bracing import segments
    from envelope.sizing.unbraced import segment_demands

    loads = [{"case": "D", "type": "point", "spans": 1, "P": 30.0, "at": 2.0},
             {"case": "D", "type": "point", "spans": 1, "P": 30.0, "at": 4.0}]
    solved, st = _beam((6.0,), ("pinned", "pinned"), loads, strength={"D": 1.0})
    segs = segments(np.array([0.0, 6.0]), np.array([True, True]), ((2.0, 4.0),),
                    "continuous")
    dem = segment_demands(solved, st, segs)
    assert dem.mu[:, 0] == pytest.approx([60.0, 60.0, 60.0], rel=SOLVE)
    assert dem.cb[:, 0] == pytest.approx([12.5 / 7.5, 1.0, 12.5 / 7.5], rel=SOLVE)


def test_superposed_patterning_gives_the_same_demand_as_the_explicit_cases() -> None:
    # two spans, dead + patterned live; bottom flange braced at supports only: the
    # hogging demand at the interior support for "exhaustive" (governing cases found at
    # each point) equals the worst explicit "code" case (adjacent spans loaded)
    from envelope.sizing.bracing import segments
    from envelope.sizing.unbraced import segment_demands

    loads = [UDL, {"case": "L", "type": "uniform", "spans": "all", "w": 15.0}]
    got = {}
    for method in ("code", "exhaustive"):
        solved, st = _beam((8.0, 8.0), ("pinned", "pinned", "pinned"), loads,
                           live=True, strength={"D": 1.2, "L": 1.6}, patterning=method)
        segs = segments(np.array([0.0, 8.0, 16.0]), np.ones(3, bool), "continuous",
                        "supports")
        dem = segment_demands(solved, st, segs)
        got[method] = dem.mu.max(axis=1)
    # w = 1.2*10 + 1.6*15 = 36 kN/m on both spans: M = -wL^2/8 = -288 kN*m
    assert got["code"] == pytest.approx([288.0, 288.0], rel=SOLVE)
    assert got["exhaustive"] == pytest.approx(got["code"], rel=SOLVE)


# ------------------------------------------------- rolled and welded shapes (fabrication)

def test_rolled_flanges_take_case_10_and_welded_case_11_by_hand() -> None:
    # An invented shape with a noncompact flange, made of plates (no fillets): d = 16,
    # bf = 10, tf = 0.40, tw = 0.30 in; Fy = 50 ksi, E = 29,000 ksi.  bf/2tf = 12.5.
    d, bf, tf, tw = 16.0, 10.0, 0.40, 0.30
    h = d - 2 * tf                                   # 15.2 (no k given)
    zx = bf * tf * (d - tf) + tw * h**2 / 4          # 79.728 in^3
    sx = (bf * d**3 - (bf - tw) * h**3) / 12 / (d / 2)  # 71.828 in^3
    mp = FY * zx                                     # 3986.4 kip*in
    lam = bf / (2 * tf)
    # AISC 360-22 Table B4.1b: lambda_p = 0.38 sqrt(E/Fy) = 9.1516 (cases 10 and 11);
    # case 10 (rolled) lambda_r = 1.0 sqrt(E/Fy) = 24.083; case 11 (built-up) lambda_r =
    # 0.95 sqrt(kc E / FL), kc = 4 / sqrt(h/tw) = 4 / sqrt(50.667) = 0.56195 (note [a]),
    # FL = 0.7 Fy: 0.95 sqrt(0.56195 * 29000 / 35) = 20.499
    lam_p = 0.38 * math.sqrt(E / FY)
    lam_r10 = 1.0 * math.sqrt(E / FY)
    kc = 4 / math.sqrt(h / tw)
    lam_r11 = 0.95 * math.sqrt(kc * E / (0.7 * FY))
    assert (lam_p, lam_r10, kc, lam_r11) == pytest.approx((9.1516, 24.083, 0.56195, 20.499),
                                                          abs=1e-3)
    assert lam_p < lam < lam_r11 < lam_r10           # noncompact by both cases
    assert ltb.flange_limits(E, FY, ltb.kc(h, tw), True)[1] == pytest.approx(lam_r10)
    assert ltb.flange_limits(E, FY, ltb.kc(h, tw), False)[1] == pytest.approx(lam_r11)
    # F3-1: Mn = Mp - (Mp - 0.7 Fy Sx)(lambda - lambda_pf)/(lambda_rf - lambda_pf)
    #   rolled (case 10): 3986.4 - 1472.4 * 3.3484 / 14.932 = 3656.2 kip*in
    #   welded (case 11): 3986.4 - 1472.4 * 3.3484 / 11.348 = 3551.9 kip*in
    rolled = mp - (mp - 0.7 * FY * sx) * (lam - lam_p) / (lam_r10 - lam_p)
    welded = mp - (mp - 0.7 * FY * sx) * (lam - lam_p) / (lam_r11 - lam_p)
    assert (rolled, welded) == pytest.approx((3656.2, 3551.9), abs=0.1)
    assert ltb.mn_flb(bf, tf, h, tw, zx, sx, E, FY, rolled=True) == pytest.approx(rolled)
    assert ltb.mn_flb(bf, tf, h, tw, zx, sx, E, FY, rolled=False) == pytest.approx(welded)
    assert ltb.mn_flb(bf, tf, h, tw, zx, sx, E, FY) == pytest.approx(welded)  # default
    # per section in one call
    both = ltb.mn_flb(np.full(2, bf), tf, h, tw, zx, sx, E, FY, np.array([True, False]))
    assert both == pytest.approx([rolled, welded])
    # the earlier flange (bf = 13.2, tf = 0.3 on PG-18x51's web, lambda = 22): slender by
    # case 11 (F3-2, 2889.2 kip*in), noncompact by case 10 (F3-1):
    #   Mn = 5185 - (5185 - 3202.5)(22 - 9.1516)/(24.083 - 9.1516) = 3479.1 kip*in
    assert ltb.mn_flb(13.2, 0.3, 16.8, 0.36, 103.7, 91.5, E, FY, True) == pytest.approx(
        3479.1, abs=0.1)
    assert list(ltb.flange_class(13.2, 0.3, 16.8, 0.36, E, FY, np.array([True, False]))
                ) == ["noncompact", "slender"]


def test_rolled_web_shear_g2_1a_by_hand() -> None:
    # AISC 360-22 G2.1(a): the web of a rolled I-shape with h/tw <= 2.24 sqrt(E/Fy) =
    # 2.24 * 24.083 = 53.946 takes phi_v = 1.00 and Cv1 = 1.0 in G2-1, Vn = 0.6 Fy Aw Cv1.
    # The invented shape above: h/tw = 15.2 / 0.30 = 50.667, Aw = d tw = 4.8 in^2:
    #   phi_v Vn = 1.00 * 0.6 * 50 * 4.8 * 1.0 = 144.0 kip
    h_tw = 15.2 / 0.30
    assert h_tw <= 2.24 * math.sqrt(E / FY)
    assert web.phi_vn(16.0, 0.30, 15.2, E, FY, rolled=True) == pytest.approx(
        1.00 * 0.6 * FY * 16.0 * 0.30)
    assert web.phi_vn(16.0, 0.30, 15.2, E, FY, rolled=True) == pytest.approx(144.0)
    # the same web welded: G2.1(b), phi_v = 0.90; h/tw = 50.667 <= 1.10 sqrt(kv E/Fy)
    # = 61.22 (kv = 5.34): Cv1 = 1.0 (G2-3): 0.90 * 144.0 = 129.6 kip
    assert web.phi_vn(16.0, 0.30, 15.2, E, FY, rolled=False) == pytest.approx(129.6)
    assert web.phi_vn(16.0, 0.30, 15.2, E, FY) == pytest.approx(129.6)
    # a rolled web beyond 2.24 sqrt(E/Fy): h/tw = 15.2 / 0.25 = 60.8 > 53.946 takes
    # G2.1(b): 0.90 * 0.6 * 50 * 16 * 0.25 * 1.0 (60.8 <= 61.22, G2-3) = 108.0 kip
    assert web.phi_vn(16.0, 0.25, 15.2, E, FY, rolled=True) == pytest.approx(108.0)
    # and thinner still, h/tw = 15.2 / 0.2 = 76 > 61.22: Cv1 = 61.22/76 (G2-4)
    assert web.phi_vn(16.0, 0.20, 15.2, E, FY, rolled=True) == pytest.approx(
        0.9 * 0.6 * FY * 16.0 * 0.2 * 1.10 * math.sqrt(5.34 * 580) / 76)
