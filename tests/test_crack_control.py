"""Crack control (envelope.sizing.crack_control): ACI 318-19 24.3.2 and EN 1992-1-1
7.3.3 Tables 7.2N / 7.3N (tabulated values from memory)."""

from __future__ import annotations

import numpy as np
import pytest

from envelope.sizing import crack_control as cc


def test_aci_24_3_2_spacing_limit() -> None:
    # Grade 60, fs = 2/3 fy = 40 ksi, 2 in clear cover: min(15 - 5, 12) = 10 in
    assert cc.aci_spacing_limit(40_000.0, 2.0, "US") == pytest.approx(10.0)
    # 1.5 in cover: min(15 - 3.75, 12) = 11.25 in
    assert cc.aci_spacing_limit(40_000.0, 1.5, "US") == pytest.approx(11.25)
    # SI, fy 420 -> fs 280 MPa, 50 mm cover: min(380 - 125, 300) = 255 mm
    assert cc.aci_spacing_limit(280.0, 50.0, "SI") == pytest.approx(255.0)


def test_en_tables_7_2n_and_7_3n() -> None:
    # wk = 0.3: 240 MPa -> 16 mm and 200 mm; 260 MPa interpolates 14 mm and 175 mm
    assert cc.en_max_diameter(240.0, 0.3) == pytest.approx(16.0)
    assert cc.en_max_spacing(240.0, 0.3) == pytest.approx(200.0)
    assert cc.en_max_diameter(260.0, 0.3) == pytest.approx(14.0)
    assert cc.en_max_spacing(260.0, 0.3) == pytest.approx(175.0)
    # below the first row the first value; above the last row no limit is met
    assert cc.en_max_spacing(100.0, 0.4) == pytest.approx(300.0)
    assert np.isnan(cc.en_max_spacing(380.0, 0.3))
    assert np.isnan(cc.en_max_diameter(420.0, 0.2))


def test_en_7_3_3_either_diameter_or_spacing() -> None:
    # eq. 7.6N: phi*_s (fct,eff/2.9) kc hcr / (2 (h - d)); fctm 2.9, hcr = 300,
    # h - d = 60: factor 0.4 * 300 / 120 = 1.0
    assert cc.en_modified_diameter(16.0, 2.9, 300.0, 600.0, 540.0) == pytest.approx(16.0)
    out = cc.en_check(np.array([240.0, 240.0, 240.0]), np.array([16.0, 20.0, 20.0]),
                      np.array([250.0, 150.0, 250.0]), 0.3, 2.9, 300.0, 600.0, 540.0)
    assert out["ok"].tolist() == [True, True, False]
