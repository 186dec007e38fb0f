"""Moment redistribution at the interior supports of a continuous concrete beam.

ACI 318-19 6.6.5 and EN 1992-1-1:2004 5.5 let the elastic hogging moment at a support
be reduced, provided the section there is ductile enough, and the moments everywhere
else be found from equilibrium with the reduced one.

**It is linear.**  Reducing the moment at interior support ``j`` by the fraction
``r_j`` of its elastic value adds ``-r_j M_j phi_j(x)`` to the moment diagram, where
``M_j`` is the elastic moment at the support and ``phi_j`` the diagram of a unit
self-equilibrating support moment: 1 at support ``j``, falling linearly to 0 at the
supports either side, 0 elsewhere.  Its slope adds a constant shear to the two spans,
and the reactions of the three supports change by amounts that sum to zero, so every
arrangement stays in equilibrium (ACI 318-19 6.6.5: the reduced moment used for the
moments within the spans, shears and reactions from statics; EN 1992-1-1 5.5(1), (4)).
Because the change is linear in each unit case's own support moment, it is applied
once to every unit case's strength responses (:func:`redistribute`); every
combination, pattern and exact superposed envelope built from them is then the
envelope of the redistributed arrangements, still exact.

The reading is that each arrangement's support moment is reduced by the same fraction:
the peak hogging at the support is reduced by exactly ``r``, and every arrangement's
span moments rise by ``r`` times its own support hogging (the arrangement that
governs the span is redistributed too, which is on the safe side of the practice of
redistributing only the arrangement of the peak hogging).  An arrangement whose support
moment sags is scaled towards zero by the same fraction.

**Where.**  Only at an interior support of continuous spans: a rigid vertical support
with no rotational restraint (a column built in, a spring or a rotational spring is not
redistributed here: the support would take part of the moment), both neighbouring
joints rigid vertical supports (a cantilever's moment is statically determinate) and no
hinge in either span.  End supports are never redistributed.  Where the case asks for a
fraction at one of these supports, :func:`excluded` says why it is refused.

**Service stays elastic.**  Deflections, rotations, service reactions and the service
moments of cracked deflection and crack control are those of the elastic analysis
(common practice: redistribution is an ultimate limit state device).

**How much.**  :func:`aci_allowed` (ACI 318-19 6.6.5: at most the lesser of 1000 eps_t
percent and 20 percent, only where eps_t >= 0.0075) and :func:`en_allowed`
(EN 1992-1-1 5.5(4): delta >= k1 + k2 xu/d, delta >= k5 or k6, adjacent spans 0.5 to 2)
give the largest fraction the section actually designed permits; sizing checks the
fraction used against it, and ``redistribution = "max"`` iterates to it
(:mod:`envelope.sizing.redistributed`).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from envelope.recovery import evaluate_some, make_points

if TYPE_CHECKING:
    from envelope.design import ConcreteDesign
    from envelope.loading import UnitCases
    from envelope.mesh import Mesh
    from envelope.model import Beam, Span, Support
    from envelope.solver import Solution

#: ACI 318-19 6.6.5: the largest reduction, 20 percent.
ACI_LARGEST = 0.20
#: ACI 318-19 6.6.5: no redistribution where the net tensile strain is below this.
ACI_EPS_T_MIN = 0.0075
#: ACI 318-19 6.6.5: the reduction, in percent, is at most 1000 eps_t (a fraction 10 eps_t).
ACI_PER_STRAIN = 10.0
#: EN 1992-1-1:2004 5.5(4), recommended values: k1 (fck <= 50 MPa), k3 (fck > 50 MPa,
#: from memory), k5 (steel class B or C), k6 (class A).
EN_K1 = 0.44
EN_K3 = 0.54
EN_K5 = 0.7
EN_K6 = 0.8
#: EN 1992-1-1 5.5(4): redistribution without a rotation check only where the ratio of
#: adjacent spans is within these.
EN_SPAN_RATIO = (0.5, 2.0)
#: Steel ductility classes of EN 1992-1-1 Annex C.
STEEL_CLASSES = ("A", "B", "C")


def largest(design: ConcreteDesign) -> float:
    """The code's ceiling on the fraction, whatever the section: ACI 318-19 6.6.5 20 %;
    EN 1992-1-1 5.5(4) 1 - k5 (class B, C) or 1 - k6 (class A)."""
    if design.code == "aci318-19":
        return ACI_LARGEST
    return 1.0 - (EN_K6 if design.steel_class == "A" else EN_K5)


def excluded(beam: Beam) -> tuple[str, ...]:
    """Per joint: "" where moment may be redistributed, else why not (see the module
    docstring)."""
    return excluded_at(beam.spans, beam.supports)


def excluded_at(spans: Sequence[Span], supports: Sequence[Support]) -> tuple[str, ...]:
    """:func:`excluded` of a beam of ``spans`` on ``supports`` (one per joint)."""
    n = len(spans)
    out = []
    for j, sup in enumerate(supports):
        if j in (0, n):
            out.append("an end support")
        elif sup.k_vertical != math.inf:
            out.append("not a rigid vertical support")
        elif sup.restrains_rotation:
            out.append("the support restrains rotation (it takes part of the moment)")
        elif supports[j - 1].k_vertical != math.inf or supports[j + 1].k_vertical != math.inf:
            out.append("a neighbouring joint is not a rigid vertical support (a "
                       "cantilever's or a spring's moments are not redistributed)")
        elif spans[j - 1].hinges or spans[j].hinges:
            out.append("a hinge in an adjacent span")
        else:
            out.append("")
    return tuple(out)


def requested(beam: Beam) -> tuple[np.ndarray, np.ndarray]:
    """Per joint, the fraction the case asks for and whether it asks for the largest
    allowed (``"max"``, whose trial value is :func:`largest`); 0 at every joint that
    :func:`excluded` rules out.  No redistribution without a concrete ``[design]``."""
    design = beam.design
    n = len(beam.supports)
    fraction = np.zeros(n)
    as_max = np.zeros(n, dtype=bool)
    if design is None:  # (envelope.design is loaded only for a case with [design])
        return fraction, as_max
    from envelope.design import ConcreteDesign

    if not isinstance(design, ConcreteDesign) or design.redistribution is None:
        return fraction, as_max
    given = design.redistribution
    values = list(given) if isinstance(given, tuple) else [given] * n
    why = excluded(beam)
    for j, v in enumerate(values):
        if why[j]:
            continue
        if v == "max":
            as_max[j] = True
            fraction[j] = largest(design)
        else:
            fraction[j] = float(v)
    return fraction, as_max


def support_moments(beam: Beam, mesh: Mesh, units: UnitCases, solution: Solution,
                    joints: np.ndarray) -> np.ndarray:
    """(len(joints), n_units) elastic moment at each interior joint of ``joints``: the
    mean of its left and right limits (they differ only under a point moment applied
    at the support)."""
    joints = np.asarray(joints, dtype=int)
    lengths = beam.geometry.span_length
    left = make_points(beam, joints - 1, lengths[joints - 1], np.zeros(joints.size, bool))
    right = make_points(beam, joints, np.zeros(joints.size), np.ones(joints.size, bool))
    m_left = evaluate_some(mesh, units, solution, left, ("moment",))["moment"]
    m_right = evaluate_some(mesh, units, solution, right, ("moment",))["moment"]
    return 0.5 * (m_left + m_right)


def redistribute(beam: Beam, mesh: Mesh, units: UnitCases, solution: Solution,
                 fraction: np.ndarray) -> Solution:
    """The strength solution: ``solution`` with fraction ``fraction[j]`` of each unit
    case's moment at joint ``j`` redistributed (module docstring).  Element start
    moments ``M0`` and shears ``V0`` and the reactions change; rotations and
    deflections are left elastic (they are not strength results).  Returns
    ``solution`` itself where every fraction is 0."""
    fraction = np.asarray(fraction, dtype=float)
    joints = np.flatnonzero(fraction != 0.0)
    if joints.size == 0:
        return solution
    moment = support_moments(beam, mesh, units, solution, joints)   # (k, units)
    change = -fraction[joints][:, None] * moment                     # the added support moment
    lengths = beam.geometry.span_length
    dM0 = np.zeros_like(solution.M0)
    dV0 = np.zeros_like(solution.V0)
    reaction = solution.reaction.copy()
    for k, j in enumerate(joints.tolist()):
        dm = change[k]
        left, right = j - 1, j
        ll, lr = float(lengths[left]), float(lengths[right])
        on_left = mesh.span == left
        on_right = mesh.span == right
        # phi_j rises from 0 to 1 over the left span and falls back to 0 over the right
        dM0[on_left] += (mesh.start[on_left] / ll)[:, None] * dm
        dV0[on_left] += dm / ll
        dM0[on_right] += (1.0 - mesh.start[on_right] / lr)[:, None] * dm
        dV0[on_right] -= dm / lr
        # reactions: the jumps of the added shear at the three joints (they sum to zero)
        reaction[j - 1] += dm / ll
        reaction[j] -= dm / ll + dm / lr
        reaction[j + 1] += dm / lr
    return dataclasses.replace(solution, M0=solution.M0 + dM0, V0=solution.V0 + dV0,
                               reaction=reaction)


def aci_allowed(eps_t: np.ndarray | float) -> np.ndarray:
    """Largest fraction ACI 318-19 6.6.5 allows at a section with net tensile strain
    ``eps_t``: the lesser of 1000 eps_t percent and 20 percent, none where
    eps_t < 0.0075 (or not known)."""
    eps = np.asarray(eps_t, dtype=float)
    ok = np.nan_to_num(eps, nan=-1.0) >= ACI_EPS_T_MIN
    return np.where(ok, np.minimum(ACI_PER_STRAIN * np.nan_to_num(eps), ACI_LARGEST), 0.0)


def eps_cu2(fck: np.ndarray | float) -> np.ndarray:
    """Ultimate strain of the parabola-rectangle diagram, EN 1992-1-1 Table 3.1:
    3.5 per mille up to fck = 50 MPa, 2.6 + 35 ((90 - fck)/100)^4 per mille above."""
    fck = np.asarray(fck, dtype=float)
    above = (2.6 + 35.0 * ((90.0 - np.minimum(fck, 90.0)) / 100.0) ** 4) / 1000.0
    return np.where(fck <= 50.0, 0.0035, above)


def en_delta_min(xu_d: np.ndarray | float, fck: np.ndarray | float,
                 steel_class: str = "B") -> np.ndarray:
    """Least ratio delta of redistributed to elastic moment, EN 1992-1-1:2004 5.5(4)
    with the recommended values: delta >= k1 + k2 xu/d (fck <= 50 MPa) or
    k3 + k4 xu/d (fck > 50 MPa), k2 = k4 = 1.25 (0.6 + 0.0014/eps_cu2), and
    delta >= k5 = 0.7 (class B, C steel) or k6 = 0.8 (class A).  NaN where xu/d is not
    known."""
    xu_d = np.asarray(xu_d, dtype=float)
    fck = np.asarray(fck, dtype=float)
    k2 = 1.25 * (0.6 + 0.0014 / eps_cu2(fck))
    k1 = np.where(fck <= 50.0, EN_K1, EN_K3)
    floor = EN_K6 if steel_class == "A" else EN_K5
    return np.maximum(k1 + k2 * xu_d, floor)


def en_allowed(xu_d: np.ndarray | float, fck: np.ndarray | float,
               steel_class: str = "B") -> np.ndarray:
    """Largest fraction 1 - delta that EN 1992-1-1 5.5(4) allows at a section with
    neutral axis depth ratio ``xu_d`` (see :func:`en_delta_min`); 0 where xu/d is not
    known or the section is not ductile enough for any."""
    allowed = 1.0 - en_delta_min(xu_d, fck, steel_class)
    return np.clip(np.nan_to_num(allowed, nan=0.0), 0.0, None)


def en_span_ratio(beam: Beam, joint: int) -> float:
    """Ratio of the spans either side of an interior joint, left over right."""
    lengths = beam.geometry.span_length
    return float(lengths[joint - 1] / lengths[joint])


def en_span_ratio_ok(beam: Beam, joint: int) -> bool:
    """EN 1992-1-1 5.5(4): the ratio of adjacent spans within 0.5 to 2."""
    lo, hi = EN_SPAN_RATIO
    return lo <= en_span_ratio(beam, joint) <= hi
