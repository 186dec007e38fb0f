"""Unit systems: customary input units, consistent working units, output labels.

A case file's plain numbers are in the system's *customary* unit for each
quantity (case-format contract: MPa for E, mm^4 for I in SI, ...).  The engine
works in *consistent* units (SI: m and kN; US: ft and kip) so that E*I comes
out in force*length^2 with no further factor.

Unit strings (``"7.5 m"``, ``"1.5 kip/ft"``, ``"6.75e9 mm^4"``) are read by a small
grammar of our own, in one pass over the text (no backtracking, at most
:data:`MAX_UNIT_TEXT` characters): a decimal number, then unit names joined by ``*``,
``/``, ``·`` or spaces, each with an optional small integer power.  Nothing in the
string is computed.  The common spellings of the trade are in a built-in table
(:data:`UNIT_TABLE`, exact factors to N and m); pint, whose import costs 0.4-0.8 s, is
imported only for a spelling the table does not hold, and named constants (``pi``,
``c``, ``gravity``...) are refused there.
"""

from __future__ import annotations

from fractions import Fraction
from functools import cache
from typing import Any

from envelope.values import dataclass

#: quantity -> (customary unit, consistent unit), as pint unit expressions.
_SI: dict[str, tuple[str, str]] = {
    "length": ("m", "m"),
    "force": ("kN", "kN"),
    "line_load": ("kN/m", "kN/m"),
    "moment": ("kN*m", "kN*m"),
    "modulus": ("MPa", "kN/m**2"),
    "inertia": ("mm**4", "m**4"),
    "area": ("mm**2", "m**2"),
    "unit_weight": ("kN/m**3", "kN/m**3"),
    "k_vertical": ("kN/m", "kN/m"),
    "k_rotation": ("kN*m/rad", "kN*m/rad"),
    "deflection": ("mm", "m"),
}
_US: dict[str, tuple[str, str]] = {
    "length": ("ft", "ft"),
    "force": ("kip", "kip"),
    "line_load": ("kip/ft", "kip/ft"),
    "moment": ("kip*ft", "kip*ft"),
    "modulus": ("ksi", "kip/ft**2"),
    "inertia": ("in**4", "ft**4"),
    "area": ("in**2", "ft**2"),
    "unit_weight": ("kip/ft**3", "kip/ft**3"),
    "k_vertical": ("kip/ft", "kip/ft"),
    "k_rotation": ("kip*ft/rad", "kip*ft/rad"),
    "deflection": ("in", "ft"),
}
#: customary -> consistent multipliers, exact.
_SI_FACTORS = {"modulus": 1e3, "inertia": 1e-12, "area": 1e-6, "deflection": 1e-3}
_US_FACTORS = {"modulus": 144.0, "inertia": 1.0 / 20736.0, "area": 1.0 / 144.0,
               "deflection": 1.0 / 12.0}


@dataclass(frozen=True, slots=True)
class UnitSystem:
    """One of the two unit systems of the case-format contract."""

    name: str  # "SI" or "US"

    @property
    def _table(self) -> dict[str, tuple[str, str]]:
        return _SI if self.name == "SI" else _US

    def customary(self, quantity: str) -> str:
        """The customary unit of ``quantity`` (what plain numbers are read in)."""
        return self._table[quantity][0]

    def consistent(self, quantity: str) -> str:
        """The consistent unit of ``quantity`` (what the engine computes in)."""
        return self._table[quantity][1]

    def to_consistent(self, quantity: str) -> float:
        """Multiplier from the customary to the consistent unit of ``quantity``."""
        factors = _SI_FACTORS if self.name == "SI" else _US_FACTORS
        return factors.get(quantity, 1.0)

    @property
    def deflection_factor(self) -> float:
        """Multiplier from consistent length (m, ft) to output deflection (mm, in)."""
        return 1.0 / self.to_consistent("deflection")

    @property
    def labels(self) -> dict[str, str]:
        """Output unit labels, the ``envelope:units`` metadata of every Parquet file."""
        if self.name == "SI":
            return {"length": "m", "force": "kN", "moment": "kN*m", "deflection": "mm",
                    "line_load": "kN/m", "rotation": "rad"}
        return {"length": "ft", "force": "kip", "moment": "kip*ft", "deflection": "in",
                "line_load": "kip/ft", "rotation": "rad"}


SI = UnitSystem("SI")
US = UnitSystem("US")
SYSTEMS = {"SI": SI, "US": US}


class UnitError(ValueError):
    """A unit string that cannot be read, or has the wrong dimension."""


#: Longest unit string read, in characters (after surrounding blanks are removed): far
#: more than any real quantity needs ("-1.25e+3 kip*ft/rad" is 19), and it bounds the
#: work of reading one.
MAX_UNIT_TEXT = 64

# ---------------------------------------------------------------------------
# The built-in table: exact factors to newtons and metres
# ---------------------------------------------------------------------------

_FT = Fraction(3048, 10000)                     # international foot (exact by definition)
_IN = _FT / 12
_LBF = Fraction("9.80665") * Fraction("0.45359237")   # pound-force: g_n x pound (exact)
_KIP = 1000 * _LBF

#: A dimension as exponents of (length, force); angles are dimensionless.
Dims = tuple[int, int]

#: Unit name -> (factor to the SI base unit of its dimension, dimension).  Every entry is
#: compared with pint in the tests (pint as the independent reference).
UNIT_TABLE: dict[str, tuple[Fraction, Dims]] = {
    # length
    "m": (Fraction(1), (1, 0)), "mm": (Fraction(1, 1000), (1, 0)),
    "cm": (Fraction(1, 100), (1, 0)), "km": (Fraction(1000), (1, 0)),
    "ft": (_FT, (1, 0)), "in": (_IN, (1, 0)), "yd": (3 * _FT, (1, 0)),
    "metre": (Fraction(1), (1, 0)), "meter": (Fraction(1), (1, 0)),
    "foot": (_FT, (1, 0)), "feet": (_FT, (1, 0)), "inch": (_IN, (1, 0)),
    # force
    "N": (Fraction(1), (0, 1)), "kN": (Fraction(1000), (0, 1)),
    "MN": (Fraction(10**6), (0, 1)), "lbf": (_LBF, (0, 1)), "kip": (_KIP, (0, 1)),
    # stress and modulus
    "Pa": (Fraction(1), (-2, 1)), "kPa": (Fraction(1000), (-2, 1)),
    "MPa": (Fraction(10**6), (-2, 1)), "GPa": (Fraction(10**9), (-2, 1)),
    "psi": (_LBF / _IN**2, (-2, 1)), "ksi": (_KIP / _IN**2, (-2, 1)),
    "psf": (_LBF / _FT**2, (-2, 1)), "ksf": (_KIP / _FT**2, (-2, 1)),
    # line load and unit weight (US abbreviations, common practice)
    "plf": (_LBF / _FT, (-1, 1)), "klf": (_KIP / _FT, (-1, 1)),
    "pcf": (_LBF / _FT**3, (-3, 1)), "kcf": (_KIP / _FT**3, (-3, 1)),
    # plane angle (dimensionless)
    "rad": (Fraction(1), (0, 0)), "radian": (Fraction(1), (0, 0)),
}

#: The consistent (working) unit of each quantity as a factor and a dimension, per system.
_CONSISTENT: dict[str, dict[str, tuple[Fraction, Dims]]] = {
    "SI": {"length": (Fraction(1), (1, 0)), "force": (Fraction(1000), (0, 1))},
    "US": {"length": (_FT, (1, 0)), "force": (_KIP, (0, 1))},
}
#: quantity -> its dimension.
_DIMENSIONS: dict[str, Dims] = {
    "length": (1, 0), "force": (0, 1), "line_load": (-1, 1), "moment": (1, 1),
    "modulus": (-2, 1), "inertia": (4, 0), "area": (2, 0), "unit_weight": (-3, 1),
    "k_vertical": (-1, 1), "k_rotation": (1, 1), "deflection": (1, 0),
}


def _consistent_factor(system: UnitSystem, quantity: str) -> Fraction:
    """Factor from SI base units (m, N) to the consistent unit of ``quantity``."""
    base = _CONSISTENT[system.name]
    length, force = _DIMENSIONS[quantity]
    return base["length"][0] ** length * base["force"][0] ** force


@cache
def _registry() -> Any:
    import pint  # deferred: only spellings outside the built-in table need it

    reg: Any = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    # the trade's abbreviations for US loads (common practice)
    for line in ("psf = lbf / ft ** 2", "ksf = kip / ft ** 2", "plf = lbf / ft",
                 "klf = kip / ft", "pcf = lbf / ft ** 3", "kcf = kip / ft ** 3"):
        reg.define(line)
    return reg


@cache
def _constants() -> frozenset[str]:
    """Canonical names of pint's physical and mathematical constants (its
    constants_en.txt), which are numbers, not units: ``pi``, ``speed_of_light``..."""
    from importlib import resources

    text = (resources.files("pint") / "constants_en.txt").read_text(encoding="utf-8")
    names = set()
    for line in text.splitlines():
        line = line.split("#", 1)[0].strip()
        if "=" in line and not line.startswith(("@", "[")):
            names.add(line.split("=", 1)[0].strip())
    return frozenset(names)


#: Dimensionless names accepted in a unit string: plane angles.
_ANGLES = ("radian", "degree", "arcminute", "arcsecond", "turn")


#: What each quantity is called in messages.
QUANTITY_NAMES = {
    "length": "length", "force": "force", "line_load": "line load (force per length)",
    "moment": "moment", "modulus": "stress or modulus", "inertia": "second moment of area",
    "area": "area", "unit_weight": "unit weight (force per volume)",
    "k_vertical": "vertical spring stiffness (force per length)",
    "k_rotation": "rotational spring stiffness (moment per radian)",
    "deflection": "deflection",
}


def pretty_unit(expr: str) -> str:
    """A pint unit expression as users write it: ``mm**4`` -> ``mm^4``."""
    return expr.replace("**", "^")


# ---------------------------------------------------------------------------
# The grammar: one pass, no backtracking
# ---------------------------------------------------------------------------
#   quantity := blanks number blanks [unit] blanks
#   number   := [+-] (digits [. digits?] | . digits) [(e|E) [+-] digit{1,3}]
#   unit     := factor (sep factor)*      sep := blanks ('*' | '/' | '·') blanks | blanks+
#   factor   := name [('^' | '**') [-] digit{1,2}]
#   name     := letter+                   letter := A-Z a-z µ μ Ω °

_LETTERS = frozenset("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyzµμΩ°")
_DIGITS = frozenset("0123456789")
_BLANKS = frozenset(" \t")

#: A unit factor as read: (name, power), the power negative under '/'.
Factor = tuple[str, int]


def _scan(text: str) -> tuple[str, list[Factor]] | None:
    """Split ``text`` into its number and unit factors; None when it is not of the form
    above.  Each character is looked at a bounded number of times."""
    n = len(text)
    i = 0

    def skip_blanks(j: int) -> int:
        while j < n and text[j] in _BLANKS:
            j += 1
        return j

    def digits(j: int, most: int | None = None) -> int:
        k = j
        while k < n and text[k] in _DIGITS and (most is None or k - j < most):
            k += 1
        return k

    i = skip_blanks(i)
    start = i
    if i < n and text[i] in "+-":
        i += 1
    int_end = digits(i)
    frac_end = int_end
    if int_end < n and text[int_end] == ".":
        frac_end = digits(int_end + 1)
    if int_end == i and frac_end <= int_end + 1:
        return None  # no digit before or after the point
    i = frac_end
    if i < n and text[i] in "eE":
        j = i + 1
        if j < n and text[j] in "+-":
            j += 1
        k = digits(j, 3)
        if k < n and text[k] in _DIGITS:
            return None  # more than three exponent digits
        if k > j:
            i = k  # else the 'e' starts the unit
    number = text[start:i]
    factors: list[Factor] = []
    sign = 1
    expect_factor = False
    while True:
        gap = skip_blanks(i)
        if gap == n:
            break
        if factors:
            if text[gap] in "*/·":
                sign = -1 if text[gap] == "/" else 1
                gap = skip_blanks(gap + 1)
                expect_factor = True
            elif gap == i:
                return None  # two factors with neither a blank nor an operator between
            else:
                sign = 1
        elif gap == i and gap > start:
            pass  # "5kN": the unit may follow the number directly
        j = gap
        while j < n and text[j] in _LETTERS:
            j += 1
        if j == gap:
            return None
        name = text[gap:j]
        power = 1
        if j < n and (text[j] == "^" or text.startswith("**", j)):
            j += 1 if text[j] == "^" else 2
            negative = j < n and text[j] == "-"
            if negative:
                j += 1
            k = digits(j, 2)
            if k == j or (k < n and text[k] in _DIGITS):
                return None
            power = int(text[j:k]) * (-1 if negative else 1)
            j = k
        factors.append((name, sign * power))
        expect_factor = False
        i = j
    if expect_factor:
        return None
    return number, factors


def _table_value(number: str, factors: list[Factor]) -> tuple[Fraction, Dims] | None:
    """The quantity in SI base units (exact) and its dimension, when every name is in
    :data:`UNIT_TABLE`; else None."""
    value = Fraction(number)
    length = force = 0
    for name, power in factors:
        entry = UNIT_TABLE.get(name)
        if entry is None:
            return None
        factor, (dl, df) = entry
        value *= factor ** power
        length += dl * power
        force += df * power
    return value, (length, force)


def parse_quantity(text: str, system: UnitSystem, quantity: str) -> float:
    """Read a string such as ``"7.5 m"`` and return its value in consistent units.

    The string must be a number and a unit (checked first, in one pass, so nothing is
    ever computed from it); the built-in table reads the common spellings exactly, pint
    the rest.  Raises :class:`UnitError` with a message fit for the user.
    """
    name = QUANTITY_NAMES.get(quantity, quantity.replace("_", " "))
    expected = pretty_unit(system.customary(quantity))
    if len(text.strip(" \t")) > MAX_UNIT_TEXT:
        raise UnitError(f"a quantity of {len(text)} characters is too long to be read "
                        f"(at most {MAX_UNIT_TEXT}): write a number and a unit, such as "
                        f"'2.5 {expected}'")
    form = _scan(text)
    if form is None:
        raise UnitError(f"cannot read {text!r} as a quantity: write a number and a unit, "
                        f"such as '2.5 {expected}'")
    number, factors = form
    no_unit = (f"{text!r} has no unit; give a plain number (read in {expected}) "
               f"or a number with a unit")
    if not factors:
        raise UnitError(no_unit)
    wrong = (f"{text!r} is not {'an' if name[0] in 'aeiou' else 'a'} {name} "
             f"(expected units like {expected})")
    read = _table_value(number, factors)
    if read is None:
        return _pint_value(text, number, factors, system, quantity, no_unit, wrong)
    value, dims = read
    if dims == (0, 0) and quantity != "k_rotation":
        raise UnitError(no_unit)
    if dims != _DIMENSIONS[quantity]:
        raise UnitError(wrong)
    try:
        return float(value / _consistent_factor(system, quantity))
    except OverflowError:
        raise UnitError(f"{text!r} is too large a number") from None


def _pint_value(text: str, number: str, factors: list[Factor], system: UnitSystem,
                quantity: str, no_unit: str, wrong: str) -> float:
    """A unit string with a spelling outside the built-in table, read by pint.  Only the
    scanned names and powers reach pint (written out again as ``a ** p * b ** q``), and
    named constants and dimensionless numbers other than angles are refused."""
    reg = _registry()
    for unit_name, _ in factors:
        try:
            _, base, _ = reg.parse_unit_name(unit_name)[0]
        except Exception:  # pint raises several types for unknown names
            raise UnitError(f"cannot read {text!r} as a quantity: unknown unit "
                            f"{unit_name!r}") from None
        units = reg.parse_units(base)
        if base in _constants() or (units.dimensionless and base not in _ANGLES):
            raise UnitError(f"cannot read {text!r} as a quantity: {unit_name!r} is a "
                            "constant, not a unit (nothing in a unit string is computed)")
    expression = ""
    for unit_name, power in factors:
        if power == 1:
            expression += f" * {unit_name}" if expression else unit_name
        elif power == -1 and expression:
            expression += f" / {unit_name}"
        else:
            expression += f"{' * ' if expression else ''}{unit_name} ** {power}"
    try:
        value = reg.Quantity(float(number), expression)
    except OverflowError:
        raise UnitError(f"{text!r} is too large a number") from None
    except Exception:  # pint raises many types for unknown units
        unit_text = text.strip(" \t")[len(number):].strip(" \t")
        raise UnitError(f"cannot read {text!r} as a quantity: unknown unit {unit_text!r}"
                        ) from None
    if value.dimensionless and quantity != "k_rotation":
        raise UnitError(no_unit)
    target = system.consistent(quantity)
    try:
        if quantity == "k_rotation":
            # radians are dimensionless in pint: accept kN*m and kN*m/rad alike
            out = value.to(target.replace("/rad", "")).magnitude
        else:
            out = value.to(target).magnitude
        return float(out)
    except OverflowError:
        raise UnitError(f"{text!r} is too large a number") from None
    except Exception:
        raise UnitError(wrong) from None
