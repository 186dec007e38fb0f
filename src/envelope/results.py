"""The whole analysis of one beam as frozen arrays: what every output is made of."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from envelope.actions import design_actions
from envelope.analysis import Solved, envelope_at, solve_beam
from envelope.enveloper import CaseSet, Extremes, reduce
from envelope.model import Beam
from envelope.recovery import Points, stations


@dataclass(frozen=True, slots=True)
class Analysis:
    """Envelopes at stations and supports and the design actions (consistent units)."""

    solved: Solved
    stations: Points
    envelope: dict[str, Extremes | None]  # moment, shear (strength); deflection (service)
    support_joints: np.ndarray  # 0-based joints that restrain something
    reactions: dict[str, Extremes | None]  # reaction, service_reaction, support_moment
    unfactored: np.ndarray  # (n_support_joints, n_cases): each case alone, every span
    design: dict[str, np.ndarray]  # per span, see envelope.actions

    @property
    def beam(self) -> Beam:
        return self.solved.beam


def analyse(beam: Beam) -> Analysis:
    """Solve every unit case once, envelope at the stations and supports, find the
    design actions."""
    solved = solve_beam(beam)
    pts = stations(beam, solved.mesh, solved.units)
    env = {q: envelope_at(solved, pts, q) for q in ("moment", "shear", "deflection")}

    sol = solved.solution
    joints = np.array([j for j, s in enumerate(beam.supports) if s.is_restrained], dtype=int)
    support_moment = support_moments(sol.reaction_moment)
    reactions: dict[str, Extremes | None] = {
        "reaction": _reduce_rows(sol.reaction[joints], solved.strength),
        "service_reaction": _reduce_rows(sol.reaction[joints], solved.service),
        "support_moment": _reduce_rows(support_moment[joints], solved.strength),
    }
    per_case = np.zeros((solved.units.n_units, len(beam.cases)))
    per_case[np.arange(solved.units.n_units), solved.units.case] = 1.0
    unfactored = sol.reaction[joints] @ per_case
    return Analysis(solved, pts, env, joints, reactions, unfactored,
                    design_actions(solved, pts, env))


def support_moments(reaction_moment: np.ndarray) -> np.ndarray:
    """Support moment in the beam's sign convention (sagging positive): the beam's end
    moment at an end support, the jump M(right) - M(left) at an interior one.

    ``reaction_moment`` (joints x units) is the counter-clockwise moment on the beam
    from each support: M(x+) - M(x-) = -reaction, and at the right end M(L-) = +reaction.
    """
    out = -reaction_moment.copy()
    out[-1] *= -1.0
    return out


def _reduce_rows(R: np.ndarray, cs: CaseSet) -> Extremes | None:
    return None if cs.is_empty else reduce(R, cs)
