"""ACI 318-19 flexure of a singly reinforced section (envelope.sizing.concrete_aci):
the closed-form block depth that seeds the bisection, and the bisection seeded against
the bisection from the whole tension-controlled range.

Source: ACI 318-19 22.2.2.4.1 (the rectangular stress block 0.85 f'c over a = beta_1 c)
and 21.2.2 (phi = 0.90 where tension controlled); the flanged block's two parts are
common practice.
"""

from __future__ import annotations

import numpy as np
import pytest

from envelope.sizing import concrete_aci as aci


def test_tension_controlled_depth_of_a_rectangle_and_of_a_flanged_section() -> None:
    # b = 300 mm, d = 500 mm, f'c = 30 MPa: a block 100 mm deep gives
    # 0.9 * 0.85 * 30 * 300 * 100 * (500 - 100/2) = 309.825 kN*m
    mu = 0.9 * 0.85 * 30 * 300 * 100 * (500 - 50)
    assert mu == pytest.approx(309.825e6)
    got = aci.tension_controlled_depth(np.array([mu]), np.array([300.0]), np.array([500.0]),
                                       np.array([30.0]), np.array([300.0]), np.array([0.0]))
    assert got[0] == pytest.approx(100.0, rel=1e-12)
    # a flange 1200 x 100 over that web: a 60 mm block stays in the flange ...
    mu_f = 0.9 * 0.85 * 30 * 1200 * 60 * (500 - 30)
    # ... a 150 mm block takes the flange whole and 150 mm of web
    mu_w = 0.9 * 0.85 * 30 * (300 * 150 * (500 - 75) + 900 * 100 * (500 - 50))
    got = aci.tension_controlled_depth(np.array([mu_f, mu_w]), np.full(2, 300.0),
                                       np.full(2, 500.0), np.full(2, 30.0),
                                       np.full(2, 1200.0), np.full(2, 100.0))
    np.testing.assert_allclose(got, [60.0, 150.0], rtol=1e-12)
    # a tiny moment keeps its digits (a = x / (d + sqrt(d^2 - x)), no cancellation)
    tiny = aci.tension_controlled_depth(np.array([1e-3]), np.array([300.0]),
                                        np.array([500.0]), np.array([30.0]),
                                        np.array([300.0]), np.array([0.0]))
    assert tiny[0] == pytest.approx(1e-3 / (0.9 * 0.85 * 30 * 300 * 500), rel=1e-9)


@pytest.mark.parametrize("system", ["SI", "US"])
def test_seeded_bisection_gives_the_depth_of_the_whole_range_bisection(system, monkeypatch
                                                                        ) -> None:  # type: ignore[no-untyped-def]
    # random rectangles and flanged sections, moments from none to past the largest
    # (the transition zone and "too small" included): the same answers to the last
    # bit wherever phi*Mn < Mu changes once in floating point, and within a few
    # units in the last place where it flickers at the root
    rng = np.random.default_rng(11)
    n = 4000
    if system == "SI":
        b, d = rng.uniform(200, 600, n), rng.uniform(250, 1000, n)
        fc, fy = rng.uniform(20, 60, n), rng.choice([420.0, 520.0], n)
        flange = rng.uniform(80, 200, n)
    else:
        b, d = rng.uniform(8, 24, n), rng.uniform(10, 40, n)
        fc, fy = rng.uniform(3000, 8000, n), rng.choice([60000.0, 80000.0], n)
        flange = rng.uniform(3, 8, n)
    tee = rng.random(n) < 0.5
    bf = np.where(tee, b * rng.uniform(1, 6, n), b)
    hf = np.where(tee, flange, 0.0)
    top = aci.flexure(1e30, b, d, fc, fy, system, bf, hf)["phi_mn_max"]
    mu = top * rng.uniform(0, 1.05, n) ** 3
    mu[:20] = 0.0
    seeded = aci.flexure(mu, b, d, fc, fy, system, bf, hf)
    calls = []
    real = aci.tension_controlled_depth

    def counted(*args):  # type: ignore[no-untyped-def]
        calls.append(1)
        return real(*args)

    monkeypatch.setattr(aci, "tension_controlled_depth", counted)
    monkeypatch.setattr(aci, "_seeded", lambda short, a0, use, lo, hi: (lo, hi))
    whole = aci.flexure(mu, b, d, fc, fy, system, bf, hf)
    assert calls  # (the seed is asked for and left unused)
    a, a_whole = seeded["a"], whole["a"]
    assert np.mean((a == a_whole) | (np.isnan(a) & np.isnan(a_whole))) > 0.99
    for key in ("as_required", "a", "eps_t", "phi", "phi_mn_max"):
        np.testing.assert_allclose(seeded[key], whole[key], rtol=4e-15, atol=0)
    np.testing.assert_array_equal(seeded["too_small"], whole["too_small"])
    assert np.isnan(seeded["as_required"]).sum() == whole["too_small"].sum()
