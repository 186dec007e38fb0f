"""Is the beam a mechanism?  Checked once, when the case file is read.

Without internal hinges the only possible mechanism is rigid-body motion
v(x) = a + b*x.  Springs count as restraints whenever their
stiffness is above zero.  Rigid-body motion is prevented if and only if

* two distinct joints restrain vertical movement (k_vertical > 0), or
* one joint restrains vertical movement and some joint (the same or another)
  restrains rotation (k_rotation > 0).

The reason (common practice, derived from v = a + b*x): a vertical restraint at
x_j forces a + b*x_j = 0; a second one at x_k != x_j forces a = b = 0, and so
does a rotational restraint anywhere (it forces b = 0).

With hinges the beam is a chain of parts, each free to move as v = a_p + b_p x; a
hinge keeps the deflection continuous (a_p + b_p x_h = a_q + b_q x_h), a vertical
restraint holds the deflection of its part at its joint, a rotational restraint the
slope of the part that carries the joint's rotation (the part on the right of a
hinge at the joint).  The beam is stable if and only if these constraints leave no
motion: the constraint matrix has full column rank.  A motion it leaves names the
parts that can move (common practice, the kinematic method for hinged beams).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from envelope.errors import UnstableBeamError
from envelope.geometry import joint_positions
from envelope.model import Span, Support


def check(spans: Sequence[Span], supports: Sequence[Support], source: str,
          length_unit: str = "") -> None:
    """Raise :class:`UnstableBeamError` (key ``supports``) if the beam can move as a rigid body.

    ``length_unit`` ("m" or "ft") labels the position of the pivot in the message.
    Supports are numbered from 1 in messages, left to right.
    """
    if len(supports) != len(spans) + 1:
        raise ValueError(f"{len(supports)} supports for {len(spans)} spans")
    if any(sp.hinges for sp in spans):
        _check_hinged(spans, supports, source, length_unit)
        return
    vertical = [j for j, s in enumerate(supports) if s.restrains_vertical]
    rotational = any(s.restrains_rotation for s in supports)
    if not vertical:
        extra = " (a rotational restraint alone does not hold it up)" if rotational else ""
        raise UnstableBeamError(
            source, "supports",
            "unstable beam: no support restrains vertical movement; the whole beam can drop"
            + extra + "; add vertical supports",
        )
    if len(vertical) == 1 and not rotational:
        j = vertical[0]
        x = joint_positions(spans)[j]
        where = f"{x:.6g} {length_unit}".rstrip()
        raise UnstableBeamError(
            source, "supports",
            f"unstable beam: the whole beam can rotate about support {j + 1} (x = {where}); "
            "add a second vertical support or a rotational restraint",
        )


def hinge_positions(spans: Sequence[Span]) -> list[float]:
    """Global positions of the hinges, left to right."""
    joints = joint_positions(spans)
    return sorted(joints[j] + h for j, sp in enumerate(spans) for h in sp.hinges)


def _check_hinged(spans: Sequence[Span], supports: Sequence[Support], source: str,
                  length_unit: str) -> None:
    """The kinematic check of a beam with hinges (module docstring)."""
    joints = joint_positions(spans)
    hinges = hinge_positions(spans)
    total = joints[-1]
    n_parts = len(hinges) + 1

    def part(x: float) -> int:  # the part carrying the beam's rotation at x
        return int(np.searchsorted(hinges, x, side="right")) if x < total else n_parts - 1

    rows: list[np.ndarray] = []
    for k, xh in enumerate(hinges):  # continuity of deflection at each hinge
        row = np.zeros(2 * n_parts)
        row[2 * k: 2 * k + 2] = (1.0, xh / total)
        row[2 * k + 2: 2 * k + 4] = (-1.0, -xh / total)
        rows.append(row)
    for xj, sup in zip(joints, supports, strict=True):
        p = part(xj)
        if sup.restrains_vertical:
            row = np.zeros(2 * n_parts)
            row[2 * p: 2 * p + 2] = (1.0, xj / total)
            rows.append(row)
        if sup.restrains_rotation:
            row = np.zeros(2 * n_parts)
            row[2 * p + 1] = 1.0
            rows.append(row)
    a = np.array(rows) if rows else np.zeros((0, 2 * n_parts))
    _, sv, vt = np.linalg.svd(a if a.shape[0] >= a.shape[1]
                              else np.vstack([a, np.zeros((a.shape[1] - a.shape[0],
                                                           a.shape[1]))]))
    if sv.size and sv.min() > 1e-9 * max(sv.max(), 1.0):
        return
    motion = vt[-1]
    moving = [p for p in range(n_parts)
              if np.hypot(motion[2 * p], motion[2 * p + 1]) > 1e-6 * np.abs(motion).max()]
    ends = [0.0, *hinges, total]

    def at(x: float) -> str:
        return f"x = {x:.6g} {length_unit}".rstrip()

    where = "; ".join(f"the part from {at(ends[p])} to {at(ends[p + 1])}" for p in moving)
    raise UnstableBeamError(
        source, "spans",
        f"unstable beam: the hinges make a mechanism ({where} can move); "
        "remove a hinge or add a support")
