"""Doubly reinforced sections (envelope.sizing.doubly) against independent solutions:
the equations of equilibrium and strain compatibility written out and solved by SymPy
(ACI 318-19 22.2.1.2, 22.2.2.1, 22.2.2.4.1, Table 21.2.2; EN 1992-1-1:2004 3.1.7(3),
5.5(4), 9.2.1.1(3))."""

from __future__ import annotations

import math

import pytest
import sympy as sp

from envelope.sizing import doubly

B, D, D2, FC, FY, ES = 300.0, 440.0, 60.0, 30.0, 420.0, 200_000.0
BETA1 = 0.85 - 0.05 * (FC - 28.0) / 7.0  # ACI 318-19 Table 22.2.2.4.3


def test_aci_capacity_by_strain_compatibility_matches_sympy() -> None:
    # As = 3000 mm^2, As' = 1000 mm^2: the compression steel stays elastic, so the neutral
    # axis solves 0.85 f'c b beta1 c + As' (Es 0.003 (c - d')/c - 0.85 f'c) = As fy
    # (22.2.1.2 strain compatibility, 22.2.2.1 eps_cu = 0.003, 22.2.2.4.1 block)
    As, As2 = 3000.0, 1000.0
    c = sp.symbols("c", positive=True)
    fs2 = ES * sp.Rational(3, 1000) * (c - D2) / c
    eq = 0.85 * FC * B * BETA1 * c + As2 * (fs2 - 0.85 * FC) - As * FY
    roots = [r for r in sp.solve(sp.simplify(eq * c), c) if r.is_real and r > D2]
    assert len(roots) == 1
    c_ref = float(roots[0])
    fs2_ref = float(fs2.subs(c, c_ref))
    assert 0 < fs2_ref < FY  # elastic, as assumed
    a = BETA1 * c_ref
    mn = 0.85 * FC * B * a * (D - a / 2) + As2 * (fs2_ref - 0.85 * FC) * (D - D2)
    eps_t = 0.003 * (D - c_ref) / c_ref
    phi = min(0.9, max(0.65, 0.65 + 0.25 * (eps_t - FY / ES) / 0.003))  # Table 21.2.2
    got = doubly.aci_capacity(As, As2, B, D, D2, FC, FY, "SI")
    assert float(got["c"]) == pytest.approx(c_ref, rel=1e-9)
    assert float(got["fs_prime"]) == pytest.approx(fs2_ref, rel=1e-9)
    assert float(got["phi"]) == pytest.approx(phi, rel=1e-9)
    assert float(got["phi_mn"]) == pytest.approx(phi * mn, rel=1e-9)


def test_aci_design_solves_equilibrium_and_the_moment_at_the_tension_controlled_limit(
        ) -> None:
    # unknowns As, As': force equilibrium and phi Mn = Mu with c at eps_t = eps_ty + 0.003
    # (Table 21.2.2, phi = 0.90), solved as a linear system by SymPy
    mu = 465.5e6
    c = 0.003 * D / (0.003 + FY / ES + 0.003)
    a = BETA1 * c
    fs2 = min(ES * 0.003 * (c - D2) / c, FY)
    as1, as2 = sp.symbols("As As2")
    sol = sp.solve([sp.Eq(as1 * FY, 0.85 * FC * B * a + as2 * (fs2 - 0.85 * FC)),
                    sp.Eq(0.9 * (0.85 * FC * B * a * (D - a / 2)
                                 + as2 * (fs2 - 0.85 * FC) * (D - D2)), mu)], [as1, as2])
    got = doubly.aci_design(mu, B, D, D2, FC, FY, "SI")
    assert bool(got["ok"])
    assert float(got["as_required"]) == pytest.approx(float(sol[as1]), rel=1e-9)
    assert float(got["as_compression"]) == pytest.approx(float(sol[as2]), rel=1e-9)
    # and the strength of that steel by strain compatibility is Mu again
    cap = doubly.aci_capacity(got["as_required"], got["as_compression"], B, D, D2, FC, FY,
                              "SI")
    assert float(cap["phi_mn"]) == pytest.approx(mu, rel=1e-9)


def test_aci_compression_steel_below_the_neutral_axis_cannot_work() -> None:
    # d' beyond c at the tension-controlled limit: the "compression" bars would be in
    # tension (22.2.1.2), so no doubly reinforced design exists
    c = 0.003 * D / (0.003 + FY / ES + 0.003)
    got = doubly.aci_design(500e6, B, D, c + 5.0, FC, FY, "SI")
    assert not bool(got["ok"])
    assert math.isnan(float(got["as_compression"]))


def test_en_design_matches_sympy_and_caps_each_steel_at_004_ac() -> None:
    # EN 1992-1-1:2004: x = (d - z')/0.4 at K' = 0.167 (5.5(4), delta = 1); the block
    # 0.8 x at 0.85 fck / 1.5 (3.1.7(3)); force and moment equilibrium about the tension
    # steel solved for As, As2 with fsc = min(Es 0.0035 (x - d2)/x, fyk / 1.15)
    fck, fyk, h, m = 30.0, 500.0, 500.0, 465.5e6
    fyd = fyk / 1.15
    z = D / 2 * (1 + math.sqrt(1 - 3.53 * 0.167))
    x = (D - z) / 0.4
    fsc = min(ES * 0.0035 * (x - D2) / x, fyd)
    fc_force = 0.167 * fck * B * D * D / z  # the block's force that gives K' b d^2 fck
    as1, as2 = sp.symbols("As As2")
    sol = sp.solve([sp.Eq(as1 * fyd, fc_force + as2 * fsc),
                    sp.Eq(fc_force * z + as2 * fsc * (D - D2), m)], [as1, as2])
    got = doubly.en_design(m, B, D, D2, fck, fyk, h)
    assert bool(got["ok"]) and got["over"] == ""
    assert float(got["as_required"]) == pytest.approx(float(sol[as1]), rel=1e-9)
    assert float(got["as_compression"]) == pytest.approx(float(sol[as2]), rel=1e-9)
    # 9.2.1.1(3): As,max = 0.04 Ac = 0.04 x 300 x 500 = 6000 mm^2
    big = doubly.en_design(4 * m, B, D, D2, fck, fyk, h)
    assert not bool(big["ok"]) and big["over"] == "tension"
    assert float(big["as_max"]) == pytest.approx(6000.0)
