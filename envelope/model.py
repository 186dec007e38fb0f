"""The beam as validated, frozen values.

Everything here is in the *consistent* units of the case's unit system
(see :mod:`envelope.units`): SI uses m, kN, kN/m, kN*m, kN/m^2 for E, m^4 for I,
m^2 for A and kN/m^3 for unit weight; US uses ft, kip, kip/ft, kip*ft,
kip/ft^2, ft^4, ft^2 and kip/ft^3.  :mod:`envelope.casefile` is the only
producer of these objects and checks every value once; nothing downstream
re-checks input.

Sign conventions (the case-format contract): loads downward positive,
applied point moments clockwise positive, reactions upward positive.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Literal, get_args

from envelope.geometry import Geometry, geometry_of
from envelope.units import UnitSystem
from envelope.values import dataclass, field

if TYPE_CHECKING:  # [design] is read (and envelope.design loaded) only when given
    from envelope.design import Design

# The allowed choices of the case file.  Each Literal is the single list of its
# choices: the case-file readers derive what they accept (and list in messages,
# in this order) from these types.
SupportKind = Literal["pinned", "fixed", "free", "spring"]
Seat = Literal["monolithic", "bearing"]
LoadType = Literal["uniform", "linear", "point", "moment", "self_weight", "settlement",
                   "concentrated", "train"]
CaseKind = Literal["dead", "live", "roof_live", "snow", "rain", "wind", "settlement"]
#: How a moving load combines with the other cases of its kind (envelope.moving).
WithUniform = Literal["alternative", "added"]
#: EN 1990 Table A1.1 categories of imposed load (psi factors).
Category = Literal["A", "B", "C", "D", "E", "F", "G", "H"]
CombinationSet = Literal["strength", "service"]
StrengthRuleSet = Literal["asce7-lrfd", "asce7-asd", "en1990-6.10", "en1990-6.10ab",
                          "en1990-6.10ab-uk", "none"]
ServiceRuleSet = Literal["characteristic", "frequent", "quasi-permanent", "none"]
PatternMethod = Literal["none", "code", "exhaustive", "segments"]
MomentPlot = Literal["sagging-up", "tension-side"]

CASE_KINDS: tuple[CaseKind, ...] = get_args(CaseKind)
#: Kinds patterned unless the case says ``pattern = false`` (case-format contract).
PATTERNED_BY_DEFAULT: frozenset[str] = frozenset({"live", "roof_live"})
#: Kinds whose deflection is reported as ``deflection_live``.
LIVE_KINDS: frozenset[str] = frozenset({"live", "roof_live"})


@dataclass(frozen=True, slots=True)
class Section:
    """Prismatic cross-section: E (force/length^2), I (length^4), optional A and unit weight."""

    E: float
    I: float  # noqa: E741 - the engineering name
    A: float | None = None
    unit_weight: float | None = None

    @property
    def EI(self) -> float:
        """Flexural stiffness E*I (force*length^2)."""
        return self.E * self.I

    @property
    def self_weight(self) -> float | None:
        """Weight per unit length (force/length), or None when A or unit weight is missing."""
        if self.A is None or self.unit_weight is None:
            return None
        return self.A * self.unit_weight


@dataclass(frozen=True, slots=True)
class Stretch:
    """A stretch of a span, from ``start`` to ``end`` (span-local), with its own section."""

    start: float
    end: float
    section: Section
    #: concrete sizing: the depth of the section here (section units, mm / in); None:
    #: the ``[design]`` h
    h: float | None = None


@dataclass(frozen=True, slots=True)
class Span:
    """One span between two joints.  ``stretches`` cover [0, length] without gaps;
    ``hinges`` are the positions of internal moment releases."""

    length: float
    stretches: tuple[Stretch, ...]
    #: Internal moment releases, span-local positions in (0, length]; a hinge at
    #: ``length`` releases the moment between this span and the joint at its right end.
    hinges: tuple[float, ...] = ()

    @property
    def section(self) -> Section:
        """The section of the first stretch (the span's own section where none is overridden)."""
        return self.stretches[0].section


#: What each support kind restrains, as (k_vertical, k_rotation) in force/length and
#: moment/radian; a spring's stiffnesses take these values where the case file omits them.
RESTRAINTS: dict[str, tuple[float, float]] = {
    "pinned": (math.inf, 0.0),
    "fixed": (math.inf, math.inf),
    "free": (0.0, 0.0),
    "spring": (math.inf, 0.0),
}


@dataclass(frozen=True, slots=True)
class Support:
    """A joint's restraint.  Stiffnesses are force/length and moment/radian;
    ``math.inf`` is rigid, 0 is no restraint."""

    kind: SupportKind
    k_vertical: float
    k_rotation: float
    width: float = 0.0
    #: how the beam sits on it: built in ("monolithic": face moments apply) or on a
    #: bearing or wall ("bearing": EN 1992-1-1 5.3.2.2(4), the centreline moment less
    #: F t / 8; ACI 318-19 takes the centreline moment)
    seat: Seat = "monolithic"

    @property
    def restrains_vertical(self) -> bool:
        """True where the joint cannot move vertically freely."""
        return self.k_vertical > 0.0

    @property
    def restrains_rotation(self) -> bool:
        """True where the joint cannot rotate freely."""
        return self.k_rotation > 0.0

    @property
    def is_restrained(self) -> bool:
        """True where the joint restrains anything."""
        return self.restrains_vertical or self.restrains_rotation


@dataclass(frozen=True, slots=True)
class LiveReduction:
    """A live case's ``reduction`` table (see :mod:`envelope.reduction`).

    ``tributary_width`` is in consistent length (m, ft); ``kll`` is ASCE 7-22 Table
    4.7-1's live load element factor (not read by the EN rule); ``floors`` the number of
    floors the member supports; ``occupancy`` ``general``, ``garage`` (4.7.5) or
    ``assembly`` (4.7.6); ``standard`` ``asce7-22`` or ``en1991-1-1``, or None for the
    one that goes with the strength rule set.
    """

    tributary_width: float
    kll: float | None = None
    floors: int = 1
    occupancy: str = "general"
    standard: str | None = None


@dataclass(frozen=True, slots=True)
class LoadCase:
    """A named load case: its kind, whether it is patterned, its EN 1990 category, and
    its live load reduction, and optional national values of its combination factors
    psi_0, psi_1, psi_2 (None: the recommended value of EN 1990 Table A1.1 for its kind
    and category)."""

    name: str
    kind: CaseKind
    patterned: bool
    category: Category | None = None
    reduction: LiveReduction | None = None
    psi0: float | None = None
    psi1: float | None = None
    psi2: float | None = None


@dataclass(frozen=True, slots=True)
class Load:
    """One load item on one span, span-local coordinates, downward / clockwise positive.

    ``uniform`` and ``linear`` use ``start``, ``end``, ``w_start``, ``w_end``;
    ``point`` uses ``P`` at ``at``; ``moment`` uses ``M`` at ``at``;
    ``self_weight`` uses ``start`` and ``end`` and the span's sections;
    ``settlement`` moves the support of joint ``support`` (0-based) down by ``delta``
    (its ``span`` is a span beside that joint); ``concentrated`` and ``train`` are
    loads placed at their worst position on ``moving_spans`` (``span`` is the first).
    ``key`` is where the item came from in the case file, e.g. ``loads[3]``.
    """

    case: str
    type: LoadType
    span: int  # 0-based
    start: float = 0.0
    end: float = 0.0
    w_start: float = 0.0
    w_end: float = 0.0
    P: float = 0.0
    M: float = 0.0
    at: float = 0.0
    key: str = ""
    support: int = -1
    delta: float = 0.0
    #: ``concentrated`` and ``train``: the spans (0-based) the loads move over, the
    #: loads and their offsets from the first ((P, offset), downward, offsets >= 0),
    #: and whether they replace the other cases of their kind ("alternative", ASCE 7-22
    #: 4.4.1, EN 1991-1-1 6.3.1.2(5)) or act together with them ("added").
    moving_spans: tuple[int, ...] = ()
    axles: tuple[tuple[float, float], ...] = ()
    with_uniform: WithUniform = "alternative"

    @property
    def is_moving(self) -> bool:
        """A load placed at its worst position (``concentrated``, ``train``)."""
        return self.type in ("concentrated", "train")


@dataclass(frozen=True, slots=True)
class Combination:
    """A load combination: factors by case name.  ``source`` cites the clause or says "custom".

    ``optional`` names the cases that act only where they make the effect worse (a
    variable action is left out where it helps, EN 1990 Table A1.2(B) gamma_Q = 0,
    ASCE 7-22 2.3.1 and 2.4.1 "loads not acting"); every other case always acts (a
    patterned one on the cells its patterning chooses).  ``rule`` is the rule set that
    generated the row ("en1990-6.10", "quasi-permanent", ...; "custom" for custom
    rows); ``leading`` the leading variable case of an EN row ("" where none);
    ``derivation`` says how each factor was made ("S: 1.5 = gamma_Q; W: 0.9 = gamma_Q
    1.5 x psi_0 0.6").
    """

    name: str
    set: CombinationSet
    factors: tuple[tuple[str, float], ...]
    source: str = "custom"
    optional: frozenset[str] = frozenset()
    rule: str = "custom"
    leading: str = ""
    derivation: str = ""

    def factor(self, case: str) -> float:
        """The factor on ``case`` (0 where the combination leaves it out)."""
        for name, value in self.factors:
            if name == case:
                return value
        return 0.0

    @property
    def factor_map(self) -> dict[str, float]:
        """The factors as a dict by case name."""
        return dict(self.factors)


@dataclass(frozen=True, slots=True)
class CombinationSpec:
    """The ``[combinations]`` table: rule-set names, national partial factors and custom
    combinations.

    ``service`` is one service set name or several.  ``factors`` holds the national
    choices of the EN sets by key (``G_sup``, ``G_inf``, ``Q``, ``xi``); a key not given
    takes the recommended value of EN 1990 Table A1.2(B) (or the rule set's own, such
    as xi = 0.925 of ``en1990-6.10ab-uk``).
    """

    strength: StrengthRuleSet = "none"
    service: ServiceRuleSet | tuple[ServiceRuleSet, ...] = "none"
    reduced_companion_live: bool = False
    custom: tuple[Combination, ...] = ()
    factors: tuple[tuple[str, float], ...] = ()

    @property
    def service_sets(self) -> tuple[str, ...]:
        """The service set names as a tuple, "none" left out."""
        names = (self.service,) if isinstance(self.service, str) else tuple(self.service)
        return tuple(n for n in names if n != "none")


@dataclass(frozen=True, slots=True)
class Patterning:
    """The ``[patterning]`` table."""

    method: PatternMethod = "code"
    segments: int = 4
    favourable_dead: float = 1.0


@dataclass(frozen=True, slots=True)
class OutputOptions:
    """The ``[output]`` table."""

    stations_per_span: int = 21
    all_cases: bool = False
    moment_plot: MomentPlot = "sagging-up"


@dataclass(frozen=True, slots=True)
class Beam:
    """A validated continuous beam: the whole case file."""

    id: str
    title: str
    units: UnitSystem
    spans: tuple[Span, ...]
    supports: tuple[Support, ...]
    cases: tuple[LoadCase, ...]
    loads: tuple[Load, ...]
    combinations: CombinationSpec = field(default_factory=CombinationSpec)
    patterning: Patterning = field(default_factory=Patterning)
    output: OutputOptions = field(default_factory=OutputOptions)
    design: Design | None = None  # the [design] table, for member sizing
    source: str = "<memory>"
    input_sha256: str = ""
    #: Joint positions, span lengths and support faces, worked out once from the above.
    geometry: Geometry = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "geometry", geometry_of(self.spans, self.supports))

    def __repr__(self) -> str:
        # one line a notebook can show (the fields' own repr runs to thousands of
        # characters); every value is still an attribute
        title = self.title if len(self.title) <= 40 else self.title[:39] + "…"
        return (f"<Beam {self.id!r}{f' {title!r}' if title else ''}: {self.n_spans} spans, "
                f"{len(self.loads)} load items, {len(self.cases)} cases, "
                f"{self.units.name}{', sized' if self.design else ''}>")

    @property
    def n_spans(self) -> int:
        """Number of spans."""
        return len(self.spans)

    @property
    def joint_x(self) -> tuple[float, ...]:
        """Global position of every joint, from the left end of span 1."""
        return tuple(self.geometry.joint_x.tolist())

    @property
    def length(self) -> float:
        """Total length of the beam."""
        return math.fsum(s.length for s in self.spans)

    def case(self, name: str) -> LoadCase:
        """The load case named ``name`` (KeyError if there is none)."""
        for c in self.cases:
            if c.name == name:
                return c
        raise KeyError(name)
