"""A beam solved once, and its envelopes at any points.

:func:`solve_beam` builds the elements, the unit cases and the combination
sets and solves every unit case at once.  :func:`envelope_at` envelopes one
quantity at any points, in chunks of rows so that memory stays bounded.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from envelope import config
from envelope.combinations import build as build_combinations
from envelope.combinations import variable_alone
from envelope.enveloper import CaseSet, Extremes, build_case_set, reduce
from envelope.geometry import Geometry
from envelope.loading import Cells, UnitCases, build_cells, build_unit_cases
from envelope.mesh import Mesh, build_mesh
from envelope.model import Beam, Combination
from envelope.moving import alternatives, moving_loads, point_effects
from envelope.recovery import Points, Response, evaluate, evaluate_some, pair_count
from envelope.redistribution import redistribute, requested
from envelope.solver import Solution, solve
from envelope.values import dataclass

#: Which combination set envelopes which quantity (outputs contract).
QUANTITY_SET = {"moment": "strength", "shear": "strength", "deflection": "service",
                "rotation": "service"}


@dataclass(frozen=True, slots=True)
class Solved:
    """A beam with every unit case solved and its combination sets as coefficients."""

    beam: Beam
    mesh: Mesh
    cells: Cells
    unit_cases: UnitCases
    solution: Solution
    strength: CaseSet
    service: CaseSet  # every service set together
    live: CaseSet  # each variable kind alone at 1.0: for deflection_live
    service_sets: tuple[tuple[str, CaseSet], ...] = ()  # each service rule set alone
    #: fraction of the elastic moment redistributed at each joint (all 0: none), and the
    #: solution whose moments, shears and reactions carry it (envelope.redistribution)
    redistribution: np.ndarray | None = None
    strength_solution: Solution | None = None

    @property
    def per_case(self) -> np.ndarray:
        """(n_units, n_cases) 0/1 matrix summing unit cases into their load cases."""
        m = np.zeros((self.unit_cases.n_units, len(self.beam.cases)))
        m[np.arange(self.unit_cases.n_units), self.unit_cases.case] = 1.0
        return m

    @property
    def geometry(self) -> Geometry:
        """Joint positions, span lengths and support faces (those of the beam)."""
        return self.beam.geometry

    def solution_for(self, case_set: str) -> Solution:
        """The solution whose responses ``case_set`` combines: the redistributed one for
        ``strength``, the elastic one for every service set."""
        if case_set == "strength" and self.strength_solution is not None:
            return self.strength_solution
        return self.solution

    def redistributed(self, fraction: np.ndarray) -> Solved:
        """This beam with ``fraction`` of the elastic moment redistributed at each joint
        (the solve is not repeated)."""
        fraction = np.asarray(fraction, dtype=float)
        strength = redistribute(self.beam, self.mesh, self.unit_cases, self.solution,
                                fraction)
        return dataclasses.replace(self, redistribution=fraction,
                                   strength_solution=strength)

    def case_set(self, name: str) -> CaseSet:
        """``strength``, ``service`` (every service set), ``live`` (each variable kind
        alone), or one service rule set by name (``characteristic``, ``frequent``,
        ``quasi-permanent``, ``custom``); KeyError for a set the beam does not have."""
        named = {"strength": self.strength, "service": self.service, "live": self.live}
        return named[name] if name in named else dict(self.service_sets)[name]


def live_combination(beam: Beam) -> tuple[Combination, ...]:
    """Each variable kind alone at 1.0, every case acting only where it deflects the beam
    more (for ``deflection_live``); empty with no variable case."""
    return alternatives(beam, variable_alone(beam.cases))


def solve_beam(beam: Beam) -> Solved:
    """Mesh, cells, unit cases, one solve for all of them, and the combination sets."""
    mesh = build_mesh(beam)
    cells = build_cells(beam)
    units = build_unit_cases(beam, mesh, cells)
    solution = solve(mesh, beam.supports, units, beam.source)
    combos = alternatives(beam, build_combinations(beam.cases, beam.combinations))
    strength = tuple(c for c in combos if c.set == "strength")
    service = tuple(c for c in combos if c.set == "service")
    rules = tuple(dict.fromkeys(c.rule for c in service))
    # favourable_dead is a strength-set option: service sets take every dead load at 1.0
    every_service = build_case_set(beam, service, units, cells, favourable_dead=1.0)
    solved = Solved(
        beam, mesh, cells, units, solution,
        strength=build_case_set(beam, strength, units, cells),
        service=every_service,
        live=build_case_set(beam, live_combination(beam), units, cells, favourable_dead=1.0),
        # one rule set (the usual case) is the whole service set: built once
        service_sets=((rules[0], every_service),) if len(rules) == 1 else tuple(
            (r, build_case_set(beam, tuple(c for c in service if c.rule == r), units, cells,
                               favourable_dead=1.0)) for r in rules),
    )
    fraction, _ = requested(beam)
    return solved.redistributed(fraction) if fraction.any() else solved


def envelopes_at(solved: Solved, points: Points, requests: dict[str, str],
                 labels: bool = True, known: dict[str, dict[bytes, str]] | None = None
                 ) -> dict[str, Extremes | None]:
    """Envelopes at ``points`` for each ``quantity -> case set`` of ``requests``, in
    blocks of rows (:func:`chunk_rows`), each block's response computed once for all
    quantities (with the worst effects of the moving cases, from the influence lines at
    the block's points); None for an empty case set.  ``labels=False`` skips the
    ``_loaded`` texts (for searches that need values only); each distinct text is built
    once per case set, whichever block and quantity it governs (``known``: the texts
    built so far, by case set name, shared with other calls for the same beam and
    added to; see :func:`envelope.enveloper.reduce`)."""
    sets = {q: solved.case_set(name) for q, name in requests.items()}
    wanted = tuple(q for q, cs in sets.items() if not cs.is_empty)
    parts: dict[str, list[Extremes]] = {q: [] for q in wanted}
    # strength sets read the redistributed solution, service sets the elastic one
    by_solution: dict[int, tuple[Solution, tuple[str, ...]]] = {}
    for q in wanted:
        sol = solved.solution_for(requests[q])
        by_solution[id(sol)] = (sol, by_solution.get(id(sol), (sol, ()))[1] + (q,))
    known = {} if known is None else known
    for name in requests.values():
        known.setdefault(name, {})
    n_units = solved.unit_cases.n_units
    step = chunk_rows(n_units)
    # one way of summing for every block, so that a row's values do not depend on the
    # block it falls in (see envelope.enveloper.column_extremes)
    sums = points.n > step or n_units >= config.KERNEL_MIN_UNITS
    terms = sums or pair_count(solved.mesh, solved.unit_cases, points) > config.KERNEL_MIN_PAIRS
    if wanted:
        for lo in range(0, max(points.n, 1), step):
            chunk = points.take(slice(lo, lo + step))
            moving = (point_effects(solved.beam, chunk, wanted) if moving_loads(solved.beam)
                      else {})
            for sol, names in by_solution.values():
                resp = evaluate_some(solved.mesh, solved.unit_cases, sol, chunk, names,
                                     kernel=terms)
                for q in names:
                    parts[q].append(reduce(resp[q], sets[q], labels, known[requests[q]],
                                           moving.get(q), sums))
    return {q: Extremes.concat(parts[q]) if q in parts else None for q in requests}


def chunk_rows(n_units: int) -> int:
    """Rows of points enveloped at once: at most
    :data:`envelope.config.STATION_CHUNK_ROWS`, and at most
    :data:`envelope.config.ENVELOPE_CHUNK_VALUES` (rows x unit cases) values, so that a
    block's arrays do not grow with the beam; at least one row."""
    return max(1, min(config.STATION_CHUNK_ROWS,
                      config.ENVELOPE_CHUNK_VALUES // max(n_units, 1)))


def envelope_at(solved: Solved, points: Points, quantity: str,
                case_set: str | None = None, labels: bool = True) -> Extremes | None:
    """Envelope of one ``quantity`` (shear, moment, rotation, deflection) at ``points``
    over ``case_set`` (default: strength for moment and shear, service otherwise)."""
    name = case_set or QUANTITY_SET[quantity]
    return envelopes_at(solved, points, {quantity: name}, labels)[quantity]


def case_responses(solved: Solved, points: Points) -> Response:
    """Each load case alone on every span at ``points``: (n_points, n_cases) arrays, in
    the order of ``beam.cases`` (consistent units, contract sign conventions); the
    elastic responses (unfactored cases are not redistributed)."""
    per_case = solved.per_case
    r = evaluate(solved.mesh, solved.unit_cases, solved.solution, points)
    return Response(r.shear @ per_case, r.moment @ per_case, r.rotation @ per_case,
                    r.deflection @ per_case)
