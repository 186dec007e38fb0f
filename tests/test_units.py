"""Unit strings: the one-pass grammar, its limits, the built-in table against pint.

The built-in table (envelope.units.UNIT_TABLE) is checked entry by entry against pint,
the independent reference: pint's own definitions (international foot 0.3048 m, pound
0.45359237 kg, standard gravity 9.80665 m/s^2, kip = 1000 lbf) and the US load
abbreviations defined the same way (common practice).  Every spelling the demo cases
and the tests use is read both ways, through the table and through pint, and must agree
to round-off.
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
from pathlib import Path

import pint
import pytest

from envelope import units
from envelope.units import MAX_UNIT_TEXT, SI, UNIT_TABLE, US, UnitError, parse_quantity

from tolerances import CONVERSION

REPO = Path(__file__).resolve().parent.parent

#: An independent registry: pint's definitions plus the trade's US load abbreviations.
REF = pint.UnitRegistry()
for _line in ("psf = lbf / ft ** 2", "ksf = kip / ft ** 2", "plf = lbf / ft",
              "klf = kip / ft", "pcf = lbf / ft ** 3", "kcf = kip / ft ** 3"):
    REF.define(_line)


@pytest.mark.parametrize("name", sorted(UNIT_TABLE))
def test_every_table_entry_equals_pint(name: str) -> None:
    factor, (length, force) = UNIT_TABLE[name]
    base = f"m ** {length} * N ** {force}" if (length, force) != (0, 0) else "radian"
    reference = REF.Quantity(1.0, name).to(base).magnitude
    assert float(factor) == pytest.approx(reference, rel=CONVERSION)


#: Every quantity and the spellings read for it (demo cases, tests, README, contract).
SPELLINGS = {
    "length": ["7.5 m", "7200 mm", "120 cm", "0.012 km", "24 ft", "8 in", "3 yd",
               "2 metre", "2 meter", "3 foot", "3 feet", "9 inch"],
    "force": ["42 kN", "4200 N", "0.5 MN", "2 kip", "900 lbf", "1 kN*m/m"],
    "line_load": ["5 kN/m", "1.5 kip/ft", "300 plf", "1.2 klf", "5 N/mm", "1 kip/in",
                  "4 kN m^-1", "2 kip·ft^-1"],
    "moment": ["12 kN*m", "12 kN m", "12 kN·m", "30 kip*ft", "300 lbf*in", "5 N*mm",
               "1 m*kN"],
    "modulus": ["30000 MPa", "30 GPa", "29000 ksi", "4000 psi", "2 ksf", "50 psf",
                "200 kPa", "5 N/mm^2", "10 kN/m^2", "1e6 Pa", "1 kip/in^2", "3 kN/m**2"],
    "inertia": ["6.75e9 mm^4", "800 in^4", "0.00675 m^4", "1e8 mm**4", "1 ft^4"],
    "area": ["180000 mm^2", "20 in^2", "0.18 m^2", "1 ft^2", "100 cm^2"],
    "unit_weight": ["24 kN/m^3", "150 pcf", "0.15 kcf", "0.15 kip/ft^3", "24 kN/m/m/m"],
    "k_vertical": ["2e5 kN/m", "50 kip/in", "600 kip/ft", "2 kN/mm"],
    "k_rotation": ["8e4 kN*m/rad", "8e4 kN*m", "1e4 kip*ft/rad", "1e4 kip*ft",
                   "5 kN*m/radian"],
    "deflection": ["12 mm", "0.5 in"],
}
CASES = [(q, text) for q, texts in SPELLINGS.items() for text in texts]


@pytest.mark.parametrize("system", [SI, US], ids=["SI", "US"])
@pytest.mark.parametrize(("quantity", "text"), CASES)
def test_the_table_reads_each_spelling_as_pint_does(system: units.UnitSystem, quantity: str,
                                                    text: str) -> None:
    """Both paths of parse_quantity on one spelling: the table's exact factors, and pint
    on the same number and unit (the fallback path, called directly)."""
    form = units._scan(text)
    assert form is not None
    number, factors = form
    assert units._table_value(number, factors) is not None  # the table holds it
    fast = parse_quantity(text, system, quantity)
    slow = units._pint_value(text, number, factors, system, quantity, "", "")
    target = system.consistent(quantity).replace("/rad", "")
    reference = REF.Quantity(float(number), text.strip()[len(number):].strip()
                             .replace("^", "**").replace("·", "*")).to(target).magnitude
    assert fast == pytest.approx(slow, rel=CONVERSION)
    assert fast == pytest.approx(reference, rel=CONVERSION)


def test_common_spellings_do_not_import_pint() -> None:
    """pint costs 0.4-0.8 s to import: the table must answer every common spelling."""
    texts = [text for _, text in CASES]
    code = ("import sys\nfrom envelope.units import SI, parse_quantity\n"
            f"for q, t in {CASES!r}:\n    parse_quantity(t, SI, q)\n"
            "print('pint' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True, env={**os.environ, "PYTHONPATH": str(REPO)})
    assert out.stdout.strip() == "False", texts


def test_an_unusual_spelling_falls_back_to_pint() -> None:
    assert parse_quantity("2 yards", SI, "length") == pytest.approx(1.8288, rel=CONVERSION)
    assert parse_quantity("2 kips", US, "force") == 2.0
    assert parse_quantity("1 kN*m/deg", SI, "k_rotation") == pytest.approx(57.29577951308232)


@pytest.mark.parametrize("text", ["2 pi m", "1 pi", "1000 kg gravity", "3 percent m",
                                  "1 c", "2 m tansec", "1 dozen kN", "1 eulers_number m"])
def test_constants_and_plain_numbers_in_a_unit_are_refused(text: str) -> None:
    """Nothing in a unit string is computed (README), so "2 pi m" is not 6.283 m."""
    with pytest.raises(UnitError, match=r"constant, not a unit|cannot read"):
        parse_quantity(text, SI, "length" if "kg" not in text else "force")


def test_a_unit_string_longer_than_the_limit_is_refused_before_reading() -> None:
    text = "1 " + "m" * MAX_UNIT_TEXT
    with pytest.raises(UnitError, match=f"too long to be read \\(at most {MAX_UNIT_TEXT}\\)"):
        parse_quantity(text, SI, "length")
    assert parse_quantity("  1 m  ", SI, "length") == 1.0


@pytest.mark.parametrize("text", ["1 m/", "1 */m", "1 m^", "1 m^123", "1e1234 m", "1 m**",
                                  ". m", "1 m*/m", "nan m", "inf m", "1 m !", "1 m (m)",
                                  "+ m", "1 2 m", "0x10 m", "1 m_2"])
def test_malformed_quantities_are_refused(text: str) -> None:
    with pytest.raises(UnitError, match="cannot read"):
        parse_quantity(text, SI, "length")


def test_dimension_mismatch_and_missing_unit_are_named() -> None:
    with pytest.raises(UnitError, match="is not a length"):
        parse_quantity("3 kN", SI, "length")
    with pytest.raises(UnitError, match="has no unit"):
        parse_quantity("3 rad", SI, "length")
    with pytest.raises(UnitError, match="too large a number"):
        parse_quantity("1e305 GPa", SI, "modulus")


def _cpu_limit() -> None:
    """At most 20 s of CPU for work that needs milliseconds, and no core file."""
    resource.setrlimit(resource.RLIMIT_CPU, (20, 20))
    resource.setrlimit(resource.RLIMIT_CORE, (0, 0))


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs a POSIX resource limit")
def test_repeated_letters_do_not_backtrack() -> None:
    """Regression: "1 mmm...m!" (30 letters) or "5 kNkN...kN?" never returned from the
    backtracking pattern (26 letters took 10 s, each more doubled it).  A resource guard,
    not a timing: the one-pass scanner reads 100 000 characters in milliseconds."""
    code = ("from envelope import units\n"
            "for t in ['1 ' + 'm' * 30 + '!', '5 ' + 'kN' * 15 + '?', '1 ' + 'm ' * 50000 + '!',"
            " '1 ' + 'm' * 100000 + '!', '5 ' + 'kN*' * 30000 + '?']:\n"
            "    assert units._scan(t) is None\n")
    subprocess.run([sys.executable, "-c", code], check=True, preexec_fn=_cpu_limit,
                   env={**os.environ, "PYTHONPATH": str(REPO)})
