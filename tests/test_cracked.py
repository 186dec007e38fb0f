"""Cracked section stiffness and curvature integration (envelope.sizing.cracked,
envelope.sizing.curvature), against closed forms and the codes' equations.

Sources beside each check: ACI 318-19 (clauses and tables named), EN 1992-1-1:2004
(clauses and equations named), closed forms of elastic beams (common practice).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from envelope.sizing import cracked, curvature


def test_gross_rectangle_and_tee() -> None:
    # rectangle: Ig = b h^3 / 12, yt = h/2 (closed form)
    g = cracked.gross(300.0, 600.0, 300.0, 0.0)
    assert g["ig"] == pytest.approx(300 * 600**3 / 12)
    assert g["yt"] == pytest.approx(300.0)
    # tee 1000 x 150 flange on a 300 x 600 web: centroid by first moments, Ig by the
    # parallel-axis theorem (common practice)
    g = cracked.gross(300.0, 600.0, 1000.0, 150.0)
    area = 300 * 600 + 700 * 150
    y = (300 * 600 * 300 + 700 * 150 * 75) / area
    ig = 300 * 600**3 / 12 + 300 * 600 * (300 - y) ** 2 + 700 * 150**3 / 12 \
        + 700 * 150 * (75 - y) ** 2
    assert g["y_comp"] == pytest.approx(y)
    assert g["ig"] == pytest.approx(ig)
    assert g["yt"] == pytest.approx(600 - y)


def test_cracked_rectangle_matches_the_k_d_closed_form() -> None:
    # k = sqrt(2 rho n + (rho n)^2) - rho n; Icr = b (kd)^3 / 3 + n As (d - kd)^2
    # (elastic cracked section, common practice)
    b, d, As, n = 300.0, 540.0, 1500.0, 200_000 / (4700 * math.sqrt(30))
    rn = As / (b * d) * n
    kd = d * (math.sqrt(2 * rn + rn * rn) - rn)
    out = cracked.cracked(b, b, 0.0, As, d, n)
    assert out["c"] == pytest.approx(kd, rel=1e-12)
    assert out["icr"] == pytest.approx(b * kd**3 / 3 + n * As * (d - kd) ** 2, rel=1e-12)


def test_cracked_tee_with_the_axis_below_the_flange_balances_first_moments() -> None:
    bw, bf, hf, As, d, n = 250.0, 900.0, 60.0, 4000.0, 540.0, 8.0
    out = cracked.cracked(bw, bf, hf, As, d, n)
    c = float(out["c"])
    assert c > hf
    # compression zone: the flange over hf and the web below it
    first = bf * hf * (c - hf / 2) + bw * (c - hf) ** 2 / 2
    assert first == pytest.approx(n * As * (d - c), rel=1e-10)
    icr = bf * hf**3 / 12 + bf * hf * (c - hf / 2) ** 2 + bw * (c - hf) ** 3 / 3 \
        + n * As * (d - c) ** 2
    assert out["icr"] == pytest.approx(icr, rel=1e-10)
    # a flange wide enough keeps the axis inside it: a rectangle of width bf
    wide = cracked.cracked(bw, 3000.0, 150.0, 1000.0, d, n)
    rect = cracked.cracked(3000.0, 3000.0, 0.0, 1000.0, d, n)
    assert wide["c"] <= 150.0
    assert wide["icr"] == pytest.approx(rect["icr"])


def test_compression_steel_enters_at_n_minus_1() -> None:
    b, d, d2, As, As2, n = 300.0, 540.0, 60.0, 2000.0, 800.0, 7.0
    c = float(cracked.cracked(b, b, 0.0, As, d, n, As2, d2)["c"])
    assert b * c * c / 2 + (n - 1) * As2 * (c - d2) == pytest.approx(n * As * (d - c))


def test_doubly_reinforced_icr_matches_a_hand_transformed_section() -> None:
    # Transformed cracked section of a doubly reinforced rectangle and tee (common
    # practice; the Icr of ACI 318-19 24.2.3.5 and the cracked state of EN 1992-1-1:2004
    # 7.4.3): concrete above the axis, (n - 1) As' for the compression bars (they displace
    # concrete already counted), n As for the tension bars.  The axis solved by SymPy
    # from the first moments, Icr integrated about it.
    import sympy as sp
    c = sp.symbols("c", positive=True)
    for b, bf, hf, d, d2, As, As2, n in ((300, 300, 0, 515, 60, 4516, 1290, 7.8),
                                         (300, 600, 100, 540, 50, 5000, 1600, 7.0)):
        first = (sp.Rational(b, 2) * c**2 + (bf - b) * hf * (c - sp.Rational(hf, 2))
                 + (n - 1) * As2 * (c - d2) - n * As * (d - c))
        root = [r for r in sp.solve(first, c) if r > hf]
        assert len(root) == 1
        x = float(root[0])
        icr = (b * x**3 / 3 + (bf - b) * hf**3 / 12 + (bf - b) * hf * (x - hf / 2) ** 2
               + (n - 1) * As2 * (x - d2) ** 2 + n * As * (d - x) ** 2)
        got = cracked.cracked(b, bf, hf, As, d, n, As2, d2)
        assert float(got["c"]) == pytest.approx(x, rel=1e-12)
        assert float(got["icr"]) == pytest.approx(icr, rel=1e-12)
        # without the compression bars the axis drops and Icr falls
        bare = cracked.cracked(b, bf, hf, As, d, n)
        assert float(bare["c"]) > x and float(bare["icr"]) < icr


def test_compression_bars_below_the_axis_count_as_tension_steel_at_n() -> None:
    # lightly reinforced with the top bars deep: the axis (about 0.2 d) lies above them,
    # so they are in the cracked tension zone, displace no compressed concrete and count
    # at n As' (transformed section, common practice)
    b, d, d2, As, As2, n = 1000.0, 540.0, 150.0, 600.0, 600.0, 7.0
    got = cracked.cracked(b, b, 0.0, As, d, n, As2, d2)
    c = float(got["c"])
    assert c < d2
    assert b * c * c / 2 == pytest.approx(n * As * (d - c) + n * As2 * (d2 - c), rel=1e-12)
    icr = b * c**3 / 3 + n * As * (d - c) ** 2 + n * As2 * (d2 - c) ** 2
    assert float(got["icr"]) == pytest.approx(icr, rel=1e-12)


def test_aci_modulus_and_rupture_19_2_2_1_and_19_2_3_1() -> None:
    # 4000 psi: Ec = 57000 sqrt(4000) = 3.605e6 psi; fr = 7.5 sqrt(4000) = 474.3 psi
    assert cracked.ec_aci(4000.0, "US") == pytest.approx(3_604_997, rel=1e-6)
    assert cracked.fr_aci(4000.0, "US") == pytest.approx(474.34, rel=1e-4)
    # 30 MPa: Ec = 4700 sqrt(30) = 25 743 MPa; fr = 0.62 sqrt(30) = 3.396 MPa
    assert cracked.ec_aci(30.0, "SI") == pytest.approx(25_742.96, rel=1e-6)
    assert cracked.fr_aci(30.0, "SI") == pytest.approx(3.3959, rel=1e-4)


def test_ie_table_24_2_3_5() -> None:
    ig, icr, mcr = 5.4e9, 1.8e9, 100.0
    # at or below (2/3) Mcr the gross section
    assert cracked.ie_aci(66.0, mcr, ig, icr) == ig
    # above: Icr / (1 - ((2/3) Mcr / Ma)^2 (1 - Icr / Ig)), e.g. Ma = 2 Mcr
    expected = icr / (1 - (2 / 3 / 2) ** 2 * (1 - icr / ig))
    assert cracked.ie_aci(200.0, mcr, ig, icr) == pytest.approx(expected)
    # continuous at (2/3) Mcr and tending to Icr for large Ma
    assert cracked.ie_aci(2 / 3 * mcr * (1 + 1e-12), mcr, ig, icr) == pytest.approx(ig)
    assert cracked.ie_aci(1e9, mcr, ig, icr) == pytest.approx(icr, rel=1e-9)


def test_lambda_delta_table_24_2_4_1_3() -> None:
    # xi: 3 months 1.0, 6 months 1.2, 12 months 1.4, 5 years or more 2.0
    assert cracked.xi_aci(np.array([3, 6, 12, 60, 120])) == pytest.approx([1, 1.2, 1.4, 2, 2])
    # lambda = xi / (1 + 50 rho'), Eq. 24.2.4.1.1: rho' = 0.005 at 5 years -> 1.6
    assert cracked.lambda_delta(60, 0.005) == pytest.approx(2.0 / 1.25)


def test_en_modulus_table_3_1() -> None:
    # Table 3.1: C30/37 Ecm = 33 GPa, C25/30 31 GPa, C40/50 35 GPa (rounded in the table)
    assert cracked.ecm_en(np.array([25.0, 30.0, 40.0])) / 1000 == pytest.approx(
        [31.0, 33.0, 35.0], abs=0.5)


def test_zeta_eq_7_19_and_interpolated_flexibility_eq_7_18() -> None:
    assert cracked.zeta_en(50.0, 60.0, 1.0) == 0.0  # uncracked
    assert cracked.zeta_en(120.0, 60.0, 1.0) == pytest.approx(0.75)
    assert cracked.zeta_en(120.0, 60.0, 0.5) == pytest.approx(0.875)
    f = cracked.flexibility_en(0.75, 30000.0, 5e9, 2e9)
    assert f == pytest.approx(0.75 / (30000 * 2e9) + 0.25 / (30000 * 5e9))
    # eq. 7.20: Ec,eff = Ecm / (1 + phi)
    assert cracked.e_eff_en(33000.0, 2.0) == pytest.approx(11000.0)


def test_simple_span_uniform_load_is_5_w_l4_over_384_ei() -> None:
    L, w, ei = 8.0, 30.0, 1.0e5
    xi = np.linspace(0.0, L, 401)
    kappa = w * xi * (L - xi) / 2 / ei
    out = curvature.simple_span(xi, kappa)
    assert out["w"][200] == pytest.approx(5 * w * L**4 / (384 * ei), rel=1e-5)
    # end slopes w L^3 / (24 EI), downwards from the left support
    assert out["slope_left"] == pytest.approx(w * L**3 / (24 * ei), rel=1e-5)
    assert out["slope_right"] == pytest.approx(-w * L**3 / (24 * ei), rel=1e-5)


def _simple_span_dense(xi: np.ndarray, kappa: np.ndarray, w_left: float, w_right: float
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The reference: the whole matrix of the simply supported span's G (xi (L - x) / L
    up to x, x (L - xi) / L beyond) times the trapezoidal weights, as a product."""
    s = xi - xi[0]
    L = s[-1]
    x, t = s[:, None], s[None, :]
    g = np.where(t <= x, t * (L - x), x * (L - t)) / L
    h = np.diff(s)
    wts = np.zeros_like(s)
    wts[:-1] += h / 2
    wts[1:] += h / 2
    chord = w_left + (w_right - w_left) * (s[:, None] / L)
    w = (g * wts) @ kappa + chord
    return (w, (w_right - w_left) / L + ((L - s) * wts) @ kappa / L,
            (w_right - w_left) / L - (s * wts) @ kappa / L)


def test_simple_span_running_sums_equal_the_whole_influence_matrix() -> None:
    # an uneven grid with a repeated point (a jump of curvature at a point load or a
    # change of section), several diagrams at once, settled supports
    rng = np.random.default_rng(5)
    xi = np.sort(np.r_[0.0, 7.3, rng.uniform(0.0, 7.3, 120), [2.5, 2.5]])
    kappa = np.c_[np.sin(xi) + 2.0, rng.normal(size=xi.size), np.where(xi < 2.5, 1.0, -3.0)]
    kappa *= 1e-3
    out = curvature.simple_span(xi, kappa, 0.004, -0.002)
    w, slope_left, slope_right = _simple_span_dense(xi, kappa, 0.004, -0.002)
    scale = np.abs(w).max()
    np.testing.assert_allclose(out["w"], w, rtol=0, atol=1e-13 * scale)
    np.testing.assert_allclose(out["slope_left"], slope_left, rtol=1e-12)
    np.testing.assert_allclose(out["slope_right"], slope_right, rtol=1e-12)


def test_fixed_ended_span_uniform_load_is_w_l4_over_384_ei() -> None:
    # fixed-ended moments -wL^2/12 superposed: midspan deflection w L^4 / (384 EI)
    L, w, ei = 6.0, 20.0, 4.0e4
    xi = np.linspace(0.0, L, 601)
    kappa = (w * xi * (L - xi) / 2 - w * L**2 / 12) / ei
    out = curvature.simple_span(xi, np.c_[kappa, 2 * kappa])
    assert out["w"][300, 0] == pytest.approx(w * L**4 / (384 * ei), rel=1e-4)
    assert out["w"][300, 1] == pytest.approx(2 * w * L**4 / (384 * ei), rel=1e-4)
    assert np.abs(out["slope_left"]) == pytest.approx([0, 0], abs=1e-6 * w * L**3 / ei)


def test_chord_follows_support_settlements() -> None:
    xi = np.linspace(0.0, 4.0, 5)
    out = curvature.simple_span(xi, np.zeros(5), w_left=0.01, w_right=0.03)
    assert out["w"] == pytest.approx([0.01, 0.015, 0.02, 0.025, 0.03])
    assert out["slope_left"] == pytest.approx(0.005)


@pytest.mark.parametrize("root_at_left", [True, False])
def test_cantilever_tip_under_uniform_load_is_w_l4_over_8_ei(root_at_left: bool) -> None:
    L, w, ei = 2.5, 12.0, 3.0e4
    xi = np.linspace(0.0, L, 501)
    s = (L - xi) if root_at_left else xi  # distance to the free end
    kappa = -w * s**2 / 2 / ei
    out = curvature.cantilever(xi, kappa, root_at_left)
    tip = out[-1] if root_at_left else out[0]
    assert tip == pytest.approx(w * L**4 / (8 * ei), rel=1e-5)
    # a root rotation adds theta * L at the tip (dw/dx at the root)
    slope = 0.002 if root_at_left else -0.002
    out = curvature.cantilever(xi, kappa, root_at_left, w_root=0.001, slope_root=slope)
    tip = out[-1] if root_at_left else out[0]
    assert tip == pytest.approx(w * L**4 / (8 * ei) + 0.001 + 0.002 * L, rel=1e-5)


def test_fully_cracked_prismatic_span_uses_icr() -> None:
    # a simply supported span whose moments are far above cracking: Ie -> Icr
    # (Table 24.2.3.5) and zeta -> 1 (eq. 7.19): 5 w L^4 / (384 Ec Icr), closed form
    b, d, As, fc = 300.0, 540.0, 3000.0, 30.0
    ec = float(cracked.ec_aci(fc, "SI"))
    n = cracked.ES["SI"] / ec
    icr = float(cracked.cracked(b, b, 0.0, As, d, n)["icr"])
    L, w = 8000.0, 60.0  # mm, N/mm
    xi = np.linspace(0.0, L, 801)
    m = w * xi * (L - xi) / 2
    ie = cracked.ie_aci(m.max(), 1e-6, 300 * 600**3 / 12, icr)
    out = curvature.simple_span(xi, m / (ec * ie))
    assert out["w"].max() == pytest.approx(5 * w * L**4 / (384 * ec * icr), rel=1e-5)
    zeta = cracked.zeta_en(m, 1e-6, 1.0)
    flex = cracked.flexibility_en(zeta, ec, 300 * 600**3 / 12, icr)
    out = curvature.simple_span(xi, m * flex)
    assert out["w"].max() == pytest.approx(5 * w * L**4 / (384 * ec * icr), rel=1e-4)
