"""The whole analysis of one beam as frozen arrays: what every output is made of."""

from __future__ import annotations

from collections.abc import Iterator

import numpy as np

from envelope import config
from envelope.actions import design_actions
from envelope.enveloper import CaseSet, Extremes, SuperposedCaseSet, reduce
from envelope.limits import WorkLimits
from envelope.limits import check as check_work
from envelope.model import Beam
from envelope.moving import MovingEffect, moving_loads, reaction_effects
from envelope.recovery import Points, evaluate, evaluate_some, stations
from envelope.redistribution import requested
from envelope.solved import Solved, envelopes_at, solve_beam
from envelope.values import dataclass


@dataclass(frozen=True, slots=True)
class Analysis:
    """Envelopes at stations and supports and the design actions (consistent units)."""

    solved: Solved
    stations: Points
    station_envelopes: dict[str, Extremes | None]  # moment, shear (strength); deflection (service)
    support_joints: np.ndarray  # 0-based joints that restrain something
    reaction_envelopes: dict[str, Extremes | None]  # reaction, service_reaction, support_moment
    unfactored_reactions: np.ndarray  # (n_support_joints, n_cases): each case alone, every
    # span (a moving case: its largest reaction)
    design_actions: dict[str, np.ndarray]  # per span, see envelope.actions
    #: sizings it took to settle redistribution = "max" (0: not asked for)
    redistribution_sizings: int = 0

    @property
    def beam(self) -> Beam:
        """The beam analysed."""
        return self.solved.beam

    def __repr__(self) -> str:
        beam = self.beam
        sets = ", ".join(f"{name} {len(cs.combinations)}" for name, cs in
                         (("strength", self.solved.strength), ("service", self.solved.service))
                         if not cs.is_empty)
        title = beam.title if len(beam.title) <= 40 else beam.title[:39] + "…"
        return (f"<Analysis {beam.id!r}{f' {title!r}' if title else ''}: "
                f"{beam.n_spans} spans, {self.stations.n} stations, "
                f"combinations {sets or 'none'}{', sized' if beam.design else ''}>")


def analyse(beam: Beam, limits: WorkLimits | None = None) -> Analysis:
    """Solve every unit case once, envelope at the stations and supports, find the
    design actions.  A beam whose estimated memory or time exceeds ``limits`` (default:
    half the machine's memory, ``config.WORK_MAX_SECONDS``) is refused before any work
    (:mod:`envelope.limits`)."""
    check_work(beam, limits)
    analysis = analyse_solved(solve_beam(beam))
    if requested(beam)[1].any():
        # "max" redistribution depends on the section designed: settled by sizing
        # (imported here: sizing is built on this module)
        from envelope.sizing.redistributed import settle_largest
        analysis = settle_largest(analysis, analyse_solved)
    return analysis


def analyse_solved(solved: Solved) -> Analysis:
    """:func:`analyse` of a beam already solved (with its redistribution, if any)."""
    beam = solved.beam
    pts = stations(beam, solved.mesh, solved.unit_cases)
    # each distinct _loaded text built once per case set, at the stations and supports
    known: dict[str, dict[bytes, str]] = {"strength": {}, "service": {}}
    env = envelopes_at(solved, pts, {"moment": "strength", "shear": "strength",
                                     "deflection": "service"}, known=known)

    sol = solved.solution
    joints = np.array([j for j, s in enumerate(beam.supports) if s.is_restrained], dtype=int)
    support_moment = support_moments(sol.reaction_moment)
    strength = solved.solution_for("strength")
    moving = reaction_effects(beam, joints) if moving_loads(beam) else (None, None)
    reactions: dict[str, Extremes | None] = {
        "reaction": _reduce_rows(strength.reaction[joints], solved.strength, moving[0],
                                 known["strength"]),
        "service_reaction": _reduce_rows(sol.reaction[joints], solved.service, moving[0],
                                         known["service"]),
        "support_moment": _reduce_rows(support_moment[joints], solved.strength, moving[1],
                                       known["strength"]),
    }
    unfactored = sol.reaction[joints] @ solved.per_case
    if moving[0] is not None:  # a moving case alone: its largest reaction
        index = {c.name: i for i, c in enumerate(beam.cases)}
        for m, name in enumerate(moving[0].names):
            unfactored[:, index[name]] = moving[0].max[:, m]
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


def _reduce_rows(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None = None,
                 known: dict[bytes, str] | None = None) -> Extremes | None:
    """Envelope of the support rows ``R`` (supports x unit cases, consistent units) over
    ``cs`` (None for an empty set), in blocks of at most
    :data:`envelope.config.SUPPORT_CHUNK_VALUES` values, so that each block's arrays and
    the reduction's temporaries stay near the processor's cache on a long beam; each
    distinct ``_loaded`` text is built once for all blocks (and once with ``known``'s).
    Each row's values are those of :func:`envelope.enveloper.reduce` of all rows at once,
    to round-off (the matrix products may sum a block differently)."""
    if cs.is_empty:
        return None
    return reduce_blocks(R, cs, moving, known=known)


def reduce_blocks(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None = None,
                  values: int | None = None, known: dict[bytes, str] | None = None
                  ) -> Extremes:
    """:func:`envelope.enveloper.reduce` of ``R`` (rows x unit cases) in blocks of rows
    of at most ``values`` values (default :data:`envelope.config.SUPPORT_CHUNK_VALUES`;
    at least one row a block; the blocks as equal as the rows allow), the blocks' results
    joined in row order; ``known``: the ``_loaded`` texts already built for ``cs``
    (shared with the blocks and added to)."""
    n_rows, n_units = R.shape
    step = max(1, (config.SUPPORT_CHUNK_VALUES if values is None else values)
               // max(n_units, 1))
    known = {} if known is None else known
    if n_rows <= step:
        return reduce(R, cs, known=known, moving=moving)
    step = -(-n_rows // -(-n_rows // step))  # blocks of equal size, none a few rows long
    parts = []
    for lo in range(0, n_rows, step):
        rows = np.arange(lo, min(lo + step, n_rows))
        parts.append(reduce(R[rows], cs, known=known,
                            moving=None if moving is None else moving.rows(rows)))
    return Extremes.concat(parts)


def left_out_of_explicit_cases(beam: Beam) -> tuple[str, ...]:
    """The moving cases (concentrated loads, trains) that the explicit cases of
    stations.parquet leave out: a moving load has no one position for every station (its
    worst position differs at each), so it is no part of a case; it is in the envelopes
    and the design values only."""
    return tuple(ld.case for ld in moving_loads(beam))


def explicit_case_blocks(analysis: Analysis) -> Iterator[dict[str, np.ndarray]]:
    """Every explicit case (strength, then service; see ``explicit_cases`` of the case sets) at
    every station, in blocks of stations, long format: case index (rows of
    cases.parquet with ``all_cases``), span (1-based), x, x_span, shear, moment,
    rotation and deflection in output units.  One block is in memory at a time.  The
    moving cases are left out (:func:`left_out_of_explicit_cases`)."""
    solved = analysis.solved
    beam = solved.beam
    sets = [s for s in (solved.strength, solved.service)]
    coefs, offsets = [], []
    offset = 0
    for cs in sets:
        if isinstance(cs, SuperposedCaseSet):
            offset += len(cs.combinations)  # the "any" rows come first in cases.parquet
        coef, _, _ = cs.explicit_cases()
        coefs.append(coef)
        offsets.append(offset)
        offset += coef.shape[1]
    coef = np.concatenate(coefs, axis=1)
    case_index = np.concatenate([np.arange(c.shape[1]) + o
                                 for c, o in zip(coefs, offsets, strict=True)])
    n_c = coef.shape[1]
    pts = analysis.stations
    defl = beam.units.deflection_factor
    step = max(1, config.STATION_CHUNK_ROWS)
    n_strength = coefs[0].shape[1]
    for lo in range(0, pts.n, step):
        chunk = pts.take(slice(lo, lo + step))
        r = evaluate(solved.mesh, solved.unit_cases, solved.solution, chunk)
        shear, moment = r.shear @ coef, r.moment @ coef
        if solved.strength_solution is not None:  # strength cases redistributed
            rs = evaluate_some(solved.mesh, solved.unit_cases, solved.strength_solution,
                               chunk, ("shear", "moment"))
            shear[:, :n_strength] = rs["shear"] @ coefs[0]
            moment[:, :n_strength] = rs["moment"] @ coefs[0]
        yield {
            "case": np.tile(case_index, chunk.n).astype(np.int32),
            "span": np.repeat(chunk.span + 1, n_c).astype(np.int32),
            "x": np.repeat(chunk.x, n_c),
            "x_span": np.repeat(chunk.x_span, n_c),
            "shear": shear.ravel(),
            "moment": moment.ravel(),
            "rotation": (r.rotation @ coef).ravel(),
            "deflection": (r.deflection @ coef).ravel() * defl,
        }
