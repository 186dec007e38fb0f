"""Unit systems (envelope.units) against the exact definitions of the units.

Source: NIST SP 811 (2008), Appendix B: 1 ft = 0.3048 m exactly, 1 lbf =
4.4482216152605 N exactly (1 lb = 0.45359237 kg, g = 9.80665 m/s^2), so
1 kip = 4.4482216152605 kN and 1 ksi = 1 kip/in^2.
"""

from __future__ import annotations

import pytest

from envelope.units import SI, SYSTEMS, US, UnitError, parse_quantity

from tolerances import CONVERSION

FT = 0.3048  # m, exact (NIST SP 811 B.8)
IN = FT / 12.0
KIP = 4.4482216152605  # kN, exact (NIST SP 811 B.8)


def test_customary_to_consistent_factors_are_the_exact_unit_ratios() -> None:
    # SI: MPa -> kN/m^2 is 1e3, mm^4 -> m^4 is 1e-12, mm^2 -> m^2 is 1e-6, mm -> m 1e-3
    assert SI.to_consistent("modulus") == 1e3
    assert SI.to_consistent("inertia") == 1e-12
    assert SI.to_consistent("area") == 1e-6
    assert SI.to_consistent("deflection") == 1e-3
    # US: ksi -> kip/ft^2 is 144 (in^2 per ft^2), in^4 -> ft^4 is 1/12^4
    assert US.to_consistent("modulus") == 144.0
    assert US.to_consistent("inertia") == pytest.approx(1 / 12**4, rel=CONVERSION)
    assert US.to_consistent("area") == pytest.approx(1 / 12**2, rel=CONVERSION)
    assert US.deflection_factor == 12.0 and SI.deflection_factor == 1000.0
    for quantity in ("length", "force", "line_load", "moment", "unit_weight"):
        assert SI.to_consistent(quantity) == US.to_consistent(quantity) == 1.0


def test_unit_strings_convert_across_systems_by_nist_factors() -> None:
    assert parse_quantity("24 ft", SI, "length") == pytest.approx(24 * FT, rel=CONVERSION)
    assert parse_quantity("7.3152 m", US, "length") == pytest.approx(24.0, rel=CONVERSION)
    assert parse_quantity("1 kip", SI, "force") == pytest.approx(KIP, rel=CONVERSION)
    # 1 kip/ft = KIP kN / FT m
    assert parse_quantity("1 kip/ft", SI, "line_load") == pytest.approx(KIP / FT,
                                                                        rel=CONVERSION)
    # 29000 ksi = 29000 kip / in^2 -> kip/ft^2 (x 144)
    assert parse_quantity("29000 ksi", US, "modulus") == pytest.approx(29000 * 144,
                                                                       rel=CONVERSION)
    # 1 in^4 in SI: (0.0254 m)^4
    assert parse_quantity("1 in^4", SI, "inertia") == pytest.approx(IN**4, rel=CONVERSION)


def test_a_unit_of_the_wrong_dimension_is_refused() -> None:
    with pytest.raises(UnitError):
        parse_quantity("3 kN", SI, "length")


def test_the_two_systems_are_named_as_in_the_contract() -> None:
    assert set(SYSTEMS) == {"SI", "US"}
    assert SI.labels["deflection"] == "mm" and US.labels["deflection"] == "in"
