"""The ``[design]`` table as typed, frozen values: what member sizing is given.

Numbers are in *section units*, as the case file gives them (SI: mm, MPa, mm^2,
mm^3, mm^4; US: in, ksi, in^2, in^3, in^4); :mod:`envelope.sizing` converts them.
:mod:`envelope.casefile.design` is the only producer and checks every value
once (all positive, cover < h, a T-beam's flange given whole, one steel section
source), so the properties below need no checks.

To add a ``[design]`` key: add a field (with its default, if optional) to the
class it belongs to, read it in :mod:`envelope.casefile.design` and name it in
``*_KEYS`` there, and document it in docs/case-format.md.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar, Literal

Material = Literal["concrete", "steel"]
ConcreteCode = Literal["aci318-19", "en1992-1-1"]
SteelCode = Literal["aisc360-22"]


@dataclass(frozen=True, slots=True)
class DeflectionLimits:
    """Deflection limits as span/limit denominators (``live``: live load, ``total``:
    total service load).  The defaults are the common floor limits span/360 and
    span/240 (IBC Table 1604.3, floor members)."""

    live: float = 360.0
    total: float = 240.0


@dataclass(frozen=True, slots=True)
class ConcreteDesign:
    """A reinforced-concrete rectangle or T-beam (section units).

    ``cover_to_bar_centre`` is measured from the tension face to the centre of the
    tension bars; ``stirrup_fy`` defaults to ``fy``; a T-beam gives ``flange_width``
    and ``flange_depth`` together.
    """

    material: ClassVar[Material] = "concrete"

    code: ConcreteCode
    b: float
    h: float
    cover_to_bar_centre: float
    fc: float
    fy: float
    stirrup_fy: float | None = None
    flange_width: float | None = None
    flange_depth: float | None = None
    deflection_limits: DeflectionLimits = DeflectionLimits()

    @property
    def d(self) -> float:
        """Effective depth d = h - cover_to_bar_centre (length, section units)."""
        return self.h - self.cover_to_bar_centre

    @property
    def is_tee(self) -> bool:
        """True for a T-beam (a flange is given)."""
        return self.flange_width is not None

    @property
    def stirrup_strength(self) -> float:
        """Yield strength of the shear reinforcement: ``stirrup_fy``, else ``fy``."""
        return self.fy if self.stirrup_fy is None else self.stirrup_fy


@dataclass(frozen=True, slots=True)
class SteelSection:
    """One given steel beam: plastic modulus Zx, moment of inertia Ix, web area Aw
    (section units)."""

    name: str
    Zx: float
    Ix: float
    Aw: float


@dataclass(frozen=True, slots=True)
class SteelDesign:
    """A rolled steel beam: either ``sections`` (a CSV table, path relative to the case
    file, the lightest passing section is chosen) or one given ``section``."""

    material: ClassVar[Material] = "steel"

    code: SteelCode
    Fy: float
    sections: str | None = None
    section: SteelSection | None = None
    deflection_limits: DeflectionLimits = DeflectionLimits()


#: What ``Beam.design`` holds when the case file has a ``[design]`` table.
Design = ConcreteDesign | SteelDesign
