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

from typing import ClassVar, Literal

from envelope.values import dataclass

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
    #: concrete: long-term (EN 1992-1-1 7.4.1(4)) and after-attachment limits; None:
    #: the code's default (see envelope.sizing.detailing)
    long_term: float | None = None
    incremental: float | None = None


@dataclass(frozen=True, slots=True)
class LongTerm:
    """The sustained part of the service load and its duration (concrete deflection):
    ``sustained`` pairs a load case name with the fraction of it that is sustained
    (cases not named take the code's default), ``months`` is the load duration for
    ACI 318-19 Table 24.2.4.1.3, ``creep`` the creep coefficient of EN 1992-1-1,
    ``shrinkage`` the free shrinkage strain eps_cs of EN 1992-1-1 3.1.4(6) for the
    shrinkage curvature of 7.4.3(6) (None: not included)."""

    sustained: tuple[tuple[str, float], ...] = ()
    months: float = 60.0
    creep: float = 2.0
    shrinkage: float | None = None


Member = Literal["floor", "roof"]
SteelClass = Literal["A", "B", "C"]
#: ``[design] redistribution``: a fraction or "max" for every support, or one per support.
RedistributionValue = float | Literal["max"]
Redistribution = RedistributionValue | tuple[RedistributionValue, ...]
Nonstructural = Literal["damage-likely", "damage-unlikely", "none"]


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
    #: bar set: "US", "metric" or sizes ("#8" or diameters in mm); None: US for ACI,
    #: metric for EN
    bars: str | tuple[str | float, ...] | None = None
    aggregate: float | None = None  # largest aggregate size; None: 20 mm
    long_term: LongTerm = LongTerm()
    crack_width: float = 0.3  # mm, EN 1992-1-1 Tables 7.2N / 7.3N
    member: Member = "floor"
    nonstructural: Nonstructural = "damage-likely"
    #: moment redistribution at interior supports (envelope.redistribution): a fraction,
    #: "max" (the largest the code allows), or one of those per support; None: none
    redistribution: Redistribution | None = None
    #: reinforcement ductility class of EN 1992-1-1 Annex C (k5 or k6 of 5.5(4))
    steel_class: SteelClass = "B"

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
    """One given doubly symmetric I-shape (section units): the full set (d, bf, tf, tw,
    Ix, Zx, Sx, Iy, ry, J, Cw) for every check, or the strength-only Zx, Ix, Aw.
    ``rts``, ``ho``, ``k`` and ``Aw`` are derived or assumed where None (see
    :mod:`envelope.sizing.shapes`); ``fabrication`` is "rolled" or "welded" (the
    default, on the safe side)."""

    name: str
    Zx: float
    Ix: float
    Aw: float | None = None
    d: float | None = None
    bf: float | None = None
    tf: float | None = None
    tw: float | None = None
    Sx: float | None = None
    Iy: float | None = None
    ry: float | None = None
    J: float | None = None
    Cw: float | None = None
    weight: float | None = None
    rts: float | None = None
    ho: float | None = None
    k: float | None = None
    fabrication: str = "welded"

    def properties(self) -> dict[str, float]:
        """The numeric properties given (name and fabrication excluded)."""
        return {f: v for f in self.__slots__  # type: ignore[attr-defined]
                if f not in ("name", "fabrication") and (v := getattr(self, f)) is not None}


#: How one flange is braced: "continuous" (a slab or deck), "supports" (at the supports
#: only), or brace positions per span (x from each span's left support, consistent length).
FlangeBracing = Literal["continuous", "supports"] | tuple[tuple[float, ...], ...]


@dataclass(frozen=True, slots=True)
class Bracing:
    """Where each flange is braced against lateral-torsional buckling."""

    top: FlangeBracing = "supports"
    bottom: FlangeBracing = "supports"


@dataclass(frozen=True, slots=True)
class FloorVibration:
    """AISC Design Guide 11 walking check of a floor beam (consistent units: ``live`` a
    force per area, ``spacing`` and ``effective_width`` lengths).  The defaults are the
    damping of an office floor with ceiling and ductwork (0.03, from memory) and the
    office tolerance ap/g = 0.5 % (DG11, from memory)."""

    live: float
    spacing: float
    damping: float = 0.03
    effective_width: float | None = None   # None: the spacing
    tolerance: float = 0.005


@dataclass(frozen=True, slots=True)
class SteelDesign:
    """A steel I-beam: either ``sections`` (a CSV table, path relative to the case file,
    the lightest section passing every check is chosen) or one given ``section``.
    ``bracing`` None: both flanges braced at the supports only (stated in the notes);
    ``bearing_length`` (section units) of point loads, None: 0; ``camber_fraction`` of
    the dead-load deflection (0.8, common practice); ``vibration`` None: not checked."""

    material: ClassVar[Material] = "steel"

    code: SteelCode
    Fy: float
    sections: str | None = None
    section: SteelSection | None = None
    deflection_limits: DeflectionLimits = DeflectionLimits()
    bracing: Bracing | None = None
    bearing_length: float | None = None
    camber_fraction: float = 0.8
    vibration: FloorVibration | None = None


#: What ``Beam.design`` holds when the case file has a ``[design]`` table.
Design = ConcreteDesign | SteelDesign
