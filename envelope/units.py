"""Unit systems: customary input units, consistent working units, output labels.

A case file's plain numbers are in the system's *customary* unit for each
quantity (case-format contract: MPa for E, mm^4 for I in SI, ...).  The engine
works in *consistent* units (SI: m and kN; US: ft and kip) so that E*I comes
out in force*length^2 with no further factor.  pint is imported only when a
string with units is met, so plain-number case files never pay for it.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import cache
from typing import Any

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
        return self._table[quantity][0]

    def consistent(self, quantity: str) -> str:
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


@cache
def _registry() -> Any:
    import pint  # deferred: only case files with unit strings need it

    reg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    # the trade's abbreviations for US loads (common practice)
    for line in ("psf = lbf / ft ** 2", "ksf = kip / ft ** 2", "plf = lbf / ft",
                 "klf = kip / ft", "pcf = lbf / ft ** 3", "kcf = kip / ft ** 3"):
        reg.define(line)
    return reg


#: What each quantity is called in messages.
QUANTITY_NAMES = {
    "length": "length", "force": "force", "line_load": "line load (force per length)",
    "moment": "moment", "modulus": "stress or modulus", "inertia": "second moment of area",
    "area": "area", "unit_weight": "unit weight (force per volume)",
    "k_vertical": "vertical spring stiffness (force per length)",
    "k_rotation": "rotational spring stiffness (moment per radian)",
    "deflection": "deflection",
}

# A quantity string is a decimal number and a unit made of names, '*', '/', '·', spaces
# and small integer powers ('^2', '**-1').  Anything else (arithmetic, brackets, comments,
# huge powers) is refused before pint sees it: pint would compute it.
_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d{1,3})?"
_POWER = r"(?:\^|\*\*)-?\d{1,2}"
_NAME = r"[A-Za-zµμΩ°]+(?:" + _POWER + r")?"
_UNIT = _NAME + r"(?:\s*(?:\*|/|·)?\s*" + _NAME + r")*"
_QUANTITY = re.compile(r"\s*(" + _NUMBER + r")\s*(" + _UNIT + r")?\s*")


def pretty_unit(expr: str) -> str:
    """A pint unit expression as users write it: ``mm**4`` -> ``mm^4``."""
    return expr.replace("**", "^")


def parse_quantity(text: str, system: UnitSystem, quantity: str) -> float:
    """Read a string such as ``"7.5 m"`` and return its value in consistent units.

    The string must be a number and a unit (checked first, so nothing is ever computed
    from it); pint then reads the unit.  Raises :class:`UnitError` with a message fit
    for the user.
    """
    name = QUANTITY_NAMES.get(quantity, quantity.replace("_", " "))
    expected = pretty_unit(system.customary(quantity))
    form = _QUANTITY.fullmatch(text)
    if form is None:
        raise UnitError(f"cannot read {text!r} as a quantity: write a number and a unit, "
                        f"such as '2.5 {expected}'")
    number, unit = form.group(1), form.group(2)
    if not unit:
        raise UnitError(f"{text!r} has no unit; give a plain number (read in {expected}) "
                        f"or a number with a unit")
    reg = _registry()
    target = system.consistent(quantity)
    try:
        value = reg.Quantity(float(number), unit.replace("^", "**"))
    except Exception:  # pint raises many types for unknown units
        raise UnitError(f"cannot read {text!r} as a quantity: unknown unit {unit!r}"
                        ) from None
    if value.dimensionless and quantity != "k_rotation":
        raise UnitError(f"{text!r} has no unit; give a plain number (read in {expected}) "
                        f"or a number with a unit")
    try:
        if quantity == "k_rotation":
            # radians are dimensionless in pint: accept kN*m and kN*m/rad alike
            out = value.to(target.replace("/rad", "")).magnitude
        else:
            out = value.to(target).magnitude
        out = float(out)
    except OverflowError:
        raise UnitError(f"{text!r} is too large a number") from None
    except Exception:
        article = "an" if name[0] in "aeiou" else "a"
        raise UnitError(f"{text!r} is not {article} {name} (expected units like {expected})"
                        ) from None
    return out
