"""Is the beam a mechanism?  Checked once, when the case file is read.

The beam is continuous (no internal hinges), so its only possible mechanism is
rigid-body motion v(x) = a + b*x.  Springs count as restraints whenever their
stiffness is above zero.  Rigid-body motion is prevented if and only if

* two distinct joints restrain vertical movement (k_vertical > 0), or
* one joint restrains vertical movement and some joint (the same or another)
  restrains rotation (k_rotation > 0).

The reason (common practice, derived from v = a + b*x): a vertical restraint at
x_j forces a + b*x_j = 0; a second one at x_k != x_j forces a = b = 0, and so
does a rotational restraint anywhere (it forces b = 0).
"""

from __future__ import annotations

from collections.abc import Sequence

from envelope.errors import UnstableBeamError
from envelope.model import Span, Support


def joint_positions(spans: Sequence[Span]) -> tuple[float, ...]:
    """Global position of every joint (len(spans) + 1 values), from the left end of span 1.

    Summed left to right, the same way as :attr:`envelope.model.Beam.joint_x`.
    """
    xs = [0.0]
    for span in spans:
        xs.append(xs[-1] + span.length)
    return tuple(xs)


def check(spans: Sequence[Span], supports: Sequence[Support], source: str,
          length_unit: str = "") -> None:
    """Raise :class:`UnstableBeamError` (key ``supports``) if the beam can move as a rigid body.

    ``length_unit`` ("m" or "ft") labels the position of the pivot in the message.
    Supports are numbered from 1 in messages, left to right.
    """
    if len(supports) != len(spans) + 1:
        raise ValueError(f"{len(supports)} supports for {len(spans)} spans")
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
