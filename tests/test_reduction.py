"""Live load reduction factors against ASCE 7-22 4.7 and EN 1991-1-1:2002 6.3.1.2(10),
each value worked by hand beside its check."""

from __future__ import annotations

import numpy as np
import pytest

from envelope.reduction import asce7_factor, en1991_factor, standard_of

#: The factors are closed forms: agreement to round-off.
EXACT = 1e-12


@pytest.mark.parametrize(("kll_at", "floors", "want"), [
    # ASCE 7-22 Eq. (4.7-1), US: L/Lo = 0.25 + 15 / sqrt(KLL AT), AT in ft^2
    (600.0, 1, 0.25 + 15.0 / 600.0**0.5),   # 30 ft x 10 ft, KLL 2: 0.8624
    (400.0, 1, 1.0),                        # at the 400 ft^2 threshold: 0.25 + 0.75
    (399.0, 1, 1.0),                        # below it: no reduction (4.7.3)
    (3600.0, 1, 0.50),                      # 0.25 + 0.25, at the one-floor floor
    (10000.0, 1, 0.50),                     # 0.40 by Eq. 4.7-1, floored at 0.50
    (10000.0, 2, 0.40),                     # two floors: floor 0.40
    (40000.0, 3, 0.40),                     # 0.325 by Eq. 4.7-1, floored at 0.40
])
def test_asce7_us_factor_follows_eq_4_7_1_and_its_floors(kll_at: float, floors: int,
                                                         want: float) -> None:
    got = asce7_factor(np.array([kll_at]), floors, np.array([0.05]), "general", "US")
    assert got[0] == pytest.approx(want, rel=EXACT)


def test_asce7_si_factor_uses_4_57_and_37_16_m2() -> None:
    # 8 m span x 6 m tributary width, KLL = 2: KLL AT = 96 m^2;
    # 0.25 + 4.57 / sqrt(96) = 0.25 + 0.46643 = 0.71643 (ASCE 7-22 Eq. 4.7-1M)
    got = asce7_factor(np.array([96.0, 37.0, 37.16]), 1, np.zeros(3), "general", "SI")
    assert got[0] == pytest.approx(0.25 + 4.57 / 96.0**0.5, rel=EXACT)
    assert got[1] == 1.0  # below 37.16 m^2
    assert got[2] == pytest.approx(min(1.0, 0.25 + 4.57 / 37.16**0.5), rel=EXACT)


@pytest.mark.parametrize("occupancy_or_heavy", ["heavy", "garage"])
def test_heavy_loads_and_garages_only_20_percent_on_two_floors(
        occupancy_or_heavy: str) -> None:
    """ASCE 7-22 4.7.4 (over 100 psf) and 4.7.5 (passenger-vehicle garages): not
    reduced on members supporting one floor; at most 20 % on two or more, and never
    below Eq. 4.7-1."""
    heavy = occupancy_or_heavy == "heavy"
    occupancy = "general" if heavy else "garage"
    lo = np.array([0.125 if heavy else 0.040] * 2)  # 125 psf is heavy; 40 psf is not
    one = asce7_factor(np.array([10000.0, 600.0]), 1, lo, occupancy, "US")
    two = asce7_factor(np.array([10000.0, 600.0]), 2, lo, occupancy, "US")
    assert one.tolist() == [1.0, 1.0]
    assert two[0] == pytest.approx(0.80, rel=EXACT)  # Eq. 4.7-1 gives 0.40
    assert two[1] == pytest.approx(0.25 + 15.0 / 600.0**0.5, rel=EXACT)  # 0.862 > 0.80


def test_heavy_threshold_is_100_psf_or_4_79_kn_per_m2() -> None:
    at = np.array([10000.0])
    assert asce7_factor(at, 1, np.array([0.100]), "general", "US")[0] == 0.5  # not over
    assert asce7_factor(at, 1, np.array([0.1001]), "general", "US")[0] == 1.0
    si = np.array([1000.0])
    assert asce7_factor(si, 1, np.array([4.80]), "general", "SI")[0] == 1.0
    assert asce7_factor(si, 1, np.array([4.78]), "general", "SI")[0] == 0.5


def test_assembly_uses_are_not_reduced() -> None:
    """ASCE 7-22 4.7.6."""
    got = asce7_factor(np.array([10000.0]), 3, np.array([0.05]), "assembly", "US")
    assert got.tolist() == [1.0]


@pytest.mark.parametrize(("area", "category", "want"), [
    # EN 1991-1-1:2002 Eq. (6.1): alpha_A = 5/7 psi0 + A0/A <= 1.0, A0 = 10 m^2,
    # psi0 = 0.7 for A to D (EN 1990 Table A1.1), so alpha_A = 0.5 + 10/A
    (48.0, "B", 0.5 + 10.0 / 48.0),   # 8 m x 6 m: 0.7083
    (8.0, "B", 1.0),                  # 0.5 + 1.25, capped at 1.0
    (200.0, "B", 0.55),               # no floor for A and B
    (100.0, "C", 0.6),                # 0.5 + 0.1 = 0.6
    (200.0, "D", 0.6),                # 0.55, floored at 0.6 for C and D
    (200.0, "E", 1.0),                # storage: not reduced
])
def test_en1991_alpha_a(area: float, category: str, want: float) -> None:
    got = en1991_factor(np.array([area]), 0.7, category, "SI")
    assert got[0] == pytest.approx(want, rel=EXACT)


def test_en1991_alpha_a_in_us_units_uses_a0_in_square_feet() -> None:
    a_m2 = 48.0
    a_ft2 = a_m2 / 0.3048**2
    got = en1991_factor(np.array([a_ft2]), 0.7, "A", "US")
    assert got[0] == pytest.approx(0.5 + 10.0 / a_m2, rel=EXACT)


def test_the_rule_follows_the_strength_set() -> None:
    assert standard_of("en1990-6.10") == "en1991-1-1"
    assert standard_of("en1990-6.10ab") == "en1991-1-1"
    assert standard_of("asce7-lrfd") == "asce7-22"
    assert standard_of("none") == "asce7-22"
