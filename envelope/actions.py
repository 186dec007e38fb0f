"""Design actions per span for member sizing (design.parquet), exact.

The largest sagging moment and the largest service deflection of each span are
not limited to stations: every local maximum of the station envelope is
refined.  Where the maximum is smooth, the case governing at the station has a
root of its slope (shear for moment, rotation for deflection) between the
neighbouring stations and still governs there: that root is the maximum, exact to
round-off.  Elsewhere (a kink, a change of governing case) golden-section search
on the envelope itself, evaluated exactly at any point, brackets the maximum to
:data:`envelope.config.GOLDEN_XTOL` of the span, and the root of the case governing
there finishes it where one exists.  Hogging
moments are taken at the support centrelines and at the support faces (half
the support width from the centreline; the centreline where no width is given).

One search serves every quantity (the moment, the service deflection and the live
deflection): each step evaluates the points of all of them at once.  Between
neighbouring stations the governing case's slope is one polynomial of degree at most
four (the load terms of linearly varying loads), so its root is found from five values
of it on the root's side of the station (:func:`envelope.search.quartic_roots`, in
Python floats): on a small beam every unit case's slope at those points times the
governing coefficients (one evaluation), on a long beam the case contracted on its span
(:mod:`envelope.contracted`: a point costs the span's loaded items, not every unit
case).  Where a break (a load edge, a point load, an element end) lies inside, regula
falsi steps along the contracted slope instead.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from envelope import config
from envelope.contracted import (
    SpanCases,
    breaks_inside,
    contract,
    item_values,
    response,
    span_breaks,
)
from envelope.enveloper import CaseSet, Extremes, column_max, governing_coefficients
from envelope.moving import MovingEffect, moving_loads, point_effects
from envelope.recovery import Points, evaluate_some, make_points, pair_count
from envelope.search import LOBATTO_NODES, anderson_bjorck_root, golden_max, quartic_roots
from envelope.solved import QUANTITY_SET, Solved, chunk_rows, envelope_at
from envelope.solver import Solution
from envelope.unitpoints import ElementItems, element_items, evaluate_points
from envelope.values import dataclass

#: Machine epsilon and the smallest normal number of a float (round-off scales).
_EPS = float(np.finfo(float).eps)
_TINY = float(np.finfo(float).tiny)

#: One maximum to refine: the envelope maximum at the stations, the quantity (moment or
#: deflection) and the case set (None: the quantity's own, see ``QUANTITY_SET``).
Request = tuple[np.ndarray, str, str | None]


def refine_max(solved: Solved, pts: Points, env_max: np.ndarray, quantity: str,
               case_set: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Largest value of the envelope maximum of ``quantity`` in each span, and its x_span.

    ``env_max`` is the envelope maximum at the stations ``pts``.  Each local maximum
    among the stations is bracketed by its neighbouring distinct positions and refined;
    the result is never below the best station.  (One request of :func:`refine_maxima`.)"""
    return refine_maxima(solved, pts, [(env_max, quantity, case_set)])[0]


@dataclass(frozen=True, slots=True)
class _Brackets:
    """Every local maximum among the stations, of every request: its request (``task``),
    span, span length, station position and neighbouring positions [a, b], and the
    largest station value there (``v``: of either side, at a jump)."""

    task: np.ndarray
    span: np.ndarray
    length: np.ndarray
    x: np.ndarray
    a: np.ndarray
    b: np.ndarray
    v: np.ndarray


def _starts(v: np.ndarray) -> np.ndarray:
    """Where each run of equal values of ``v`` starts (True at its first element)."""
    out = np.empty(v.size, dtype=bool)
    out[:1] = True
    np.not_equal(v[1:], v[:-1], out=out[1:])
    return out


@dataclass(frozen=True, slots=True)
class _StationMaxima:
    """Per group of rows (a span of a request): the best station's value, x_span and row
    (the first best; -1 for a group without rows).  Per local maximum among the distinct
    station positions of a group: its group, position with the neighbouring positions (a,
    x, b), the largest value there (of either side at a jump), and the last row at that
    position (the right-side limit at a jump)."""

    best: np.ndarray
    best_x: np.ndarray
    best_row: np.ndarray
    group: np.ndarray
    a: np.ndarray
    x: np.ndarray
    b: np.ndarray
    v: np.ndarray
    row: np.ndarray


def _in_order(span: np.ndarray, x_span: np.ndarray, values: np.ndarray) -> bool:
    """Whether the rows are in order of span, then position (and no value is NaN)."""
    step = np.diff(span)
    return bool(np.all((step > 0) | ((step == 0) & (np.diff(x_span) >= 0.0)))) and not bool(
        np.isnan(values).any())


def _station_maxima(span: np.ndarray, x_span: np.ndarray, values: np.ndarray,
                    n_groups: int) -> _StationMaxima:
    """The best station of each group of rows (``span``: a group per span and request)
    and each local maximum among the distinct station positions of a group (see
    :class:`_StationMaxima`); a plateau counts once, at its start."""
    best = np.full(n_groups, -np.inf)
    best_x = np.zeros(n_groups)
    best_row = np.full(n_groups, -1, dtype=np.int64)
    rows = np.arange(span.size)
    # the stations come span by span in order of position (as envelope.recovery.stations
    # makes them): then the rows are their own order, and each group's first largest
    # row is found by runs instead of sorting
    ordered = _in_order(span, x_span, values)
    if ordered:
        group_start = np.flatnonzero(_starts(span))
        largest = np.maximum.reduceat(values, group_start)
        at_largest = values == np.repeat(largest, np.diff(np.append(group_start, span.size)))
        head = np.minimum.reduceat(np.where(at_largest, rows, span.size), group_start)
    else:
        first_best = np.lexsort((rows, -values, span))  # per group: largest, first row
        head = first_best[_starts(span[first_best])]
    best[span[head]], best_x[span[head]], best_row[span[head]] = (values[head], x_span[head],
                                                                  head)

    order = rows if ordered else np.lexsort((rows, x_span, span))
    sp, xs, vals = (span, x_span, values) if ordered else (span[order], x_span[order],
                                                            values[order])
    new_span = _starts(sp)
    first = new_span | _starts(xs)
    starts = np.flatnonzero(first)
    uv = np.maximum.reduceat(vals, starts)  # the largest at each distinct position
    us, ux, opens = sp[starts], xs[starts], new_span[starts]
    closes = np.concatenate((opens[1:], [True]))  # the last position of its group
    left = np.where(opens, -np.inf, np.concatenate(([-np.inf], uv[:-1])))
    right = np.where(closes, -np.inf, np.concatenate((uv[1:], [-np.inf])))
    i = np.flatnonzero((uv > left) & (uv >= right))
    a = np.where(opens[i], ux[i], ux[np.maximum(i - 1, 0)])
    b = np.where(closes[i], ux[i], ux[np.minimum(i + 1, ux.size - 1)])
    last = order[np.append(starts[1:], order.size) - 1]  # the last row at each position
    return _StationMaxima(best, best_x, best_row, us[i], a, ux[i], b, uv[i], last[i])


def refine_maxima(solved: Solved, pts: Points, requests: Sequence[Request]
                  ) -> list[tuple[np.ndarray, np.ndarray]]:
    """:func:`refine_max` of several requests in one search: per request, the largest
    value in each span and its x_span.  Each step evaluates the points of every request
    together; each request's brackets stop when its own are done, so each answer is the
    one its search alone would give (to round-off)."""
    return [(f.value, f.x) for f in _refine(solved, pts, requests)]


@dataclass(frozen=True, slots=True)
class _Found:
    """One request's answer per span: the largest value and its x_span; the station row
    where the best station stands (-1 where a refined maximum is above it); the
    combination of the request's case set governing a refined maximum (-1 where not
    known, or at a station)."""

    value: np.ndarray
    x: np.ndarray
    row: np.ndarray
    combo: np.ndarray


def _refine(solved: Solved, pts: Points, requests: Sequence[Request],
            block: _Block | None = None, items: ElementItems | None = None
            ) -> list[_Found]:
    """:func:`refine_maxima`, each answer with where it came from (:class:`_Found`);
    ``block``: the unit responses at the stations, where one evaluation holds them all
    (the governing cases at the bracket stations are then read from it); ``items``: the
    load items laid out by element (:func:`envelope.unitpoints.element_items`)."""
    n_spans = solved.beam.n_spans
    n_req = len(requests)
    if not n_req:
        return []
    # every request's stations at once: a group of rows per (request, span)
    sm = _station_maxima(
        (np.arange(n_req)[:, None] * n_spans + pts.span).ravel(),
        np.tile(pts.x_span, n_req), np.concatenate([env_max for env_max, _, _ in requests]),
        n_req * n_spans)
    best, best_x = sm.best, sm.best_x
    best_row = np.where(sm.best_row >= 0, sm.best_row % max(pts.n, 1), -1)
    combo = np.full(best.size, -1, dtype=np.int64)
    group = sm.group
    if group.size:
        task, span = np.divmod(group, n_spans)
        length = np.asarray(solved.beam.geometry.span_length, dtype=float)[span]
        br = _Brackets(task, span.astype(np.int64), length, sm.x, sm.a, sm.b, sm.v)
        scale = [float(np.max(np.abs(env_max), initial=0.0)) for env_max, _, _ in requests]
        search = _Search(solved, [(q, c or QUANTITY_SET[q]) for _, q, c in requests], scale,
                         items)
        coef = None if block is None else block.governing(search, task, sm.row % pts.n, span)
        xm, vm, cm = search.refine(br, coef)
        # per (request, span): the first of its largest refined maxima, where above the
        # best station
        order = np.lexsort((np.arange(group.size), -vm, group))
        head = order[_starts(group[order])]
        up = head[vm[head] > best[group[head]]]
        best[group[up]], best_x[group[up]] = vm[up], xm[up]
        best_row[group[up]], combo[group[up]] = -1, cm[up]
    return [_Found(*(v[t * n_spans:(t + 1) * n_spans] for v in (best, best_x, best_row, combo)))
            for t in range(n_req)]


@dataclass(frozen=True, slots=True)
class _Block:
    """Every unit case's response at the stations (``n_stations`` rows), then at each
    span's right end as a right-side limit (a row per span), then at the support faces
    (left faces, then right faces), all in one evaluation per solution: per (quantity,
    ``id`` of the solution) its rows x unit cases, in the units of
    :mod:`envelope.recovery`.  ``right``: the stations' side.  ``sums``: whether the
    column sums are the kernel's (as :func:`envelope.solved.envelopes_at` makes them for
    these stations)."""

    n_stations: int
    n_spans: int
    right: np.ndarray
    responses: dict[tuple[str, int], np.ndarray]
    sums: bool

    def rows_at(self, station_rows: np.ndarray, span: np.ndarray) -> np.ndarray:
        """The rows of the points (span, x_span of ``station_rows``) as right-side limits,
        as :func:`envelope.recovery.make_points` makes them: the station's own row, or
        the span's end row where the station is a left-side limit (at x_span = L)."""
        return np.where(self.right[station_rows], station_rows, self.n_stations + span)

    def faces(self, quantity: str, solution: Solution) -> np.ndarray:
        """The responses at the faces (left faces of every span, then right faces)."""
        return self.responses[(quantity, id(solution))][self.n_stations + self.n_spans:]

    def governing(self, search: _Search, task: np.ndarray, station_rows: np.ndarray,
                  span: np.ndarray) -> np.ndarray | None:
        """The coefficients of the case governing each bracket's own request at its
        station (rows x unit cases, :func:`envelope.enveloper.governing_coefficients`),
        or None where the block lacks a request's quantity."""
        rows = self.rows_at(station_rows, span)
        coef = np.empty((task.size, search.solved.unit_cases.n_units))
        for t, mine in search._each_task(task):
            R = self.responses.get((search.quantity[t], id(search.solution[t])))
            if R is None:
                return None
            coef[mine] = governing_coefficients(R[rows[mine]], search.sets[t])
        return coef


def _one_block(solved: Solved, pts: Points, faces: Points | None, items: ElementItems
               ) -> _Block | None:
    """The moment (strength solution) and deflection (service solution) of every unit
    case at the stations, the spans' right ends and ``faces`` (:class:`_Block`), where
    they fit in one block of :func:`envelope.solved.chunk_rows` rows and the beam has no
    moving loads; else None.  The responses are those :func:`envelope.solved.envelopes_at`
    makes at the stations (the same way of summing)."""
    beam = solved.beam
    n_units = solved.unit_cases.n_units
    n = beam.n_spans
    n_faces = 0 if faces is None else faces.n
    if moving_loads(beam) or pts.n + n + n_faces > chunk_rows(n_units):
        return None
    ends = make_points(beam, np.arange(n), np.asarray(beam.geometry.span_length, float))
    parts = [pts, ends] if faces is None else [pts, ends, faces]
    points = Points(*(np.concatenate([getattr(p, f) for p in parts])
                      for f in ("span", "x_span", "right", "x")))
    sums = n_units >= config.KERNEL_MIN_UNITS
    # (the pairs are counted only where they might be that many: at most every station
    # with the most items any element holds)
    most = int(np.diff(solved.unit_cases.elem_first).max(initial=0))
    terms = sums or (pts.n * most > config.KERNEL_MIN_PAIRS and pair_count(
        solved.mesh, solved.unit_cases, pts) > config.KERNEL_MIN_PAIRS)
    wanted: dict[int, tuple[Solution, tuple[str, ...]]] = {}
    for q in ("moment", "deflection"):
        sol = solved.solution_for(QUANTITY_SET[q])
        wanted[id(sol)] = (sol, wanted.get(id(sol), (sol, ()))[1] + (q,))
    responses: dict[tuple[str, int], np.ndarray] = {}
    for key, (sol, names) in wanted.items():
        resp = evaluate_points(solved.mesh, solved.unit_cases, items, sol, points, names,
                               kernel=terms)
        responses.update({(q, key): resp[q] for q in names})
    return _Block(pts.n, n, pts.right, responses, sums)


class _Search:
    """The envelopes and governing cases that the search evaluates, for its requests
    (``tasks``: quantity and case-set name per request; ``scale``: the largest magnitude
    of each request's envelope at the stations, the size of its round-off)."""

    def __init__(self, solved: Solved, tasks: list[tuple[str, str]],
                 scale: list[float], items: ElementItems | None = None) -> None:
        self.solved = solved
        # the load items laid out by element once, for the evaluations at a few points
        self.items = items if items is not None else element_items(
            solved.unit_cases, solved.mesh.n_elements)
        self._item_values: np.ndarray | None = None  # what a contraction gathers
        self.scale = np.array(scale, dtype=float)
        self.quantity = [q for q, _ in tasks]
        self.sets: list[CaseSet] = [solved.case_set(name) for _, name in tasks]
        # strength sets read the redistributed solution (where moment is redistributed),
        # service sets the elastic one
        self.solution = [solved.solution_for(name) for _, name in tasks]
        self.is_deflection = np.array([q == "deflection" for q, _ in tasks], dtype=bool)
        self.moving = bool(moving_loads(solved.beam))  # asked once, not at every step
        # where a slope may not be one polynomial, per span
        self.breaks = span_breaks(solved.mesh, solved.unit_cases, solved.beam.n_spans)

    def refine(self, br: _Brackets, coef: np.ndarray | None = None
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Position and value of the maximum in each bracket (see the module docstring),
        and the combination governing the envelope there (-1 where not known: a
        maximum left by golden section).  ``coef``: the case governing each bracket at
        its station, where already known."""
        # a smooth maximum: the case governing at the station has a slope root between the
        # neighbouring stations and still governs there -> exact at once
        xm, vm, done, cm = self.root_of_governing(br.task, br.span, br.length, br.x, br.a,
                                                  br.b, coef)
        if not np.all(done):
            # a vertex at the station itself (under a point load, at a span end): the
            # envelope is lower on both sides, near and far, than at the station (its
            # larger side at a jump: a point moment's downward jump has its largest
            # value on the left, which the search's right-side limit does not see)
            rest = np.flatnonzero(~done)
            steps = np.array(config.VERTEX_PROBES) * br.length[rest, None]
            x_rest = br.x[rest, None]
            probes = np.clip(np.concatenate([x_rest - steps, x_rest + steps], axis=1),
                             br.a[rest, None], br.b[rest, None])
            k = probes.shape[1]
            inside = self.envelope_max(np.repeat(br.task[rest], k), np.repeat(br.span[rest], k),
                                       probes.ravel()).reshape(probes.shape)
            own = probes == x_rest  # clipped onto the station: no information
            top = np.maximum(vm[rest], br.v[rest])[:, None]
            done[rest] = np.all(own | (inside <= top), axis=1)
        if not np.all(done):
            # a kink, or the governing case changes: golden section on the envelope itself
            rest = np.flatnonzero(~done)
            task, span, length = br.task[rest], br.span[rest], br.length[rest]

            def f(x: np.ndarray) -> np.ndarray:
                twice = x.size != span.size
                return self.envelope_max(np.concatenate([task, task]) if twice else task,
                                         np.concatenate([span, span]) if twice else span, x)

            xg, vg = golden_max(f, br.a[rest], br.b[rest], config.GOLDEN_XTOL * length,
                                group=task)
            h = config.ROOT_BRACKET * length
            xr, vr, _, cr = self.root_of_governing(task, span, length, xg,
                                                   np.maximum(xg - h, 0.0),
                                                   np.minimum(xg + h, length))
            better = vr >= vg - config.ZERO_RTOL * np.abs(vg)
            xm[rest] = np.where(better, xr, xg)
            vm[rest] = np.where(better, np.maximum(vr, vg), vg)
            cm[rest] = np.where(better, cr, -1)
        return xm, vm, cm

    def _each_task(self, task: np.ndarray) -> list[tuple[int, np.ndarray]]:
        """The requests present in ``task`` and their rows (ascending), in request
        order."""
        count = np.bincount(task, minlength=len(self.sets))
        present = np.flatnonzero(count).tolist()
        if len(present) == 1:
            return [(present[0], np.arange(task.size))]
        order = np.argsort(task, kind="stable")
        end = np.cumsum(count).tolist()
        return [(t, order[end[t] - int(count[t]): end[t]]) for t in present]

    def _by_solution(self, task: np.ndarray
                     ) -> list[tuple[Solution, list[tuple[int, np.ndarray]]]]:
        """The tasks present in ``task`` grouped by the solution they read: each
        solution, and its tasks with their rows."""
        groups: dict[int, tuple[Solution, list[tuple[int, np.ndarray]]]] = {}
        for t, rows in self._each_task(task):
            sol = self.solution[t]
            groups.setdefault(id(sol), (sol, []))[1].append((t, rows))
        return list(groups.values())

    def responses(self, task: np.ndarray, span: np.ndarray, x: np.ndarray
                  ) -> list[tuple[int, np.ndarray, np.ndarray]]:
        """Every unit case's response at the points, for each task present: the task,
        its rows and their responses (rows x units: its quantity from its solution), in
        task order."""
        s = self.solved
        out: list[tuple[int, np.ndarray, np.ndarray]] = []
        for sol, tasks in self._by_solution(task):
            names = tuple(dict.fromkeys(self.quantity[t] for t, _ in tasks))
            rows = np.concatenate([r for _, r in tasks]) if len(tasks) > 1 else tasks[0][1]
            resp = evaluate_points(s.mesh, s.unit_cases, self.items, sol,
                                   make_points(s.beam, span[rows], x[rows]), names)
            at = 0
            for t, r in tasks:
                out.append((t, r, resp[self.quantity[t]][at: at + r.size]))
                at += r.size
        return sorted(out, key=lambda part: part[0])

    def unit_slopes(self, task: np.ndarray, span: np.ndarray, coef: np.ndarray,
                    rows: np.ndarray, x: np.ndarray, right: np.ndarray) -> np.ndarray:
        """The slope (shear for moment, rotation for deflection) of the cases ``coef``
        (one row per bracket) at points of their brackets (``rows``: each point's
        bracket; ``x``, ``right``: its position and side): every unit case's slope there
        times the case's coefficients (one evaluation per solution, for a beam whose
        points fit one block; :func:`envelope.contracted.response` of the contracted
        case is the same to round-off)."""
        s = self.solved
        out = np.empty(x.size)
        deflection = self.is_deflection[task][rows]
        groups = self._by_solution(task)
        for sol, tasks in groups:
            if len(groups) == 1:
                mine = np.arange(x.size)
            else:
                of_sol = np.zeros(task.size, dtype=bool)
                for _, r in tasks:
                    of_sol[r] = True
                mine = np.flatnonzero(of_sol[rows])
            names = tuple(dict.fromkeys("rotation" if self.is_deflection[t] else "shear"
                                        for t, _ in tasks))
            resp = evaluate_points(s.mesh, s.unit_cases, self.items, sol,
                                   make_points(s.beam, span[rows[mine]], x[mine],
                                               right[mine]), names)
            c = coef[rows[mine]]
            slopes = {q: np.einsum("iu,iu->i", resp[q], c) for q in names}
            out[mine] = slopes[names[0]] if len(names) == 1 else np.where(
                deflection[mine], slopes["rotation"], slopes["shear"])
        return out

    def contract(self, task: np.ndarray, span: np.ndarray, coef: np.ndarray) -> SpanCases:
        """The cases ``coef`` (one row per bracket) contracted on each bracket's span
        with the bracket's own solution (:func:`envelope.contracted.contract`)."""
        s = self.solved
        groups = [(sol, np.concatenate([r for _, r in tasks]))
                  for sol, tasks in self._by_solution(task)]
        if self._item_values is None:  # made once, where a contraction is needed
            self._item_values = item_values(s.unit_cases)
        return contract(s.mesh, s.unit_cases, groups, span, coef, self._item_values)

    def envelope_max(self, task: np.ndarray, span: np.ndarray, x: np.ndarray,
                     combo: np.ndarray | None = None,
                     own: tuple[np.ndarray, np.ndarray] | None = None) -> np.ndarray:
        """Envelope maximum of each point's own request (its quantity over its case set),
        in chunks of :func:`envelope.solved.chunk_rows` rows a request; NaN at
        a NaN position (a bracket whose search has finished).  ``combo``, where given, is
        filled with the combination (index into the request's case set) governing each
        point, the first where several give the largest value (as
        :func:`envelope.enveloper.reduce` names it).  ``own`` (coefficients, out), where
        given, has the first ``len(out)`` points' responses (none at NaN) times their
        rows of coefficients (rows x unit cases) written to ``out``: one case's value
        from the responses the envelope is made of."""
        out = np.full(x.size, np.nan)
        if np.isnan(x).any():
            assert own is None  # (the points of a case's own value are never NaN)
            keep = np.flatnonzero(~np.isnan(x))
            part_combo = None if combo is None else np.full(keep.size, -1, dtype=np.int64)
            out[keep] = self.envelope_max(task[keep], span[keep], x[keep], part_combo)
            if combo is not None and part_combo is not None:
                combo[keep] = part_combo
            return out
        step = chunk_rows(self.solved.unit_cases.n_units)
        for lo in range(0, x.size, step):
            part = slice(lo, lo + step)
            for t, rows, resp in self.responses(task[part], span[part], x[part]):
                vmax = column_max(resp, self.sets[t],
                                  self.moving_at(t, span[part][rows], x[part][rows]))
                out[lo + rows] = vmax.max(axis=1)
                if combo is not None:
                    combo[lo + rows] = self.sets[t].col_combo[np.argmax(vmax, axis=1)]
                if own is not None:
                    mine = np.flatnonzero(lo + rows < own[1].size)
                    at = lo + rows[mine]
                    own[1][at] = np.einsum("iu,iu->i", resp[mine], own[0][at])
        return out

    def moving_at(self, t: int, span: np.ndarray, x: np.ndarray) -> MovingEffect | None:
        """The moving cases' worst effects on request ``t``'s quantity at the points
        (None without moving loads): part of the envelope the search maximises."""
        beam = self.solved.beam
        if not self.moving:
            return None
        q = self.quantity[t]
        return point_effects(beam, make_points(beam, span, x), (q,))[q]

    def root_of_governing(self, task: np.ndarray, span: np.ndarray, length: np.ndarray,
                          x: np.ndarray, lo: np.ndarray, hi: np.ndarray,
                          coef: np.ndarray | None = None
                          ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """The root in [lo, hi] of the slope (shear for moment, rotation for deflection)
        of the case governing at ``x``, exact to round-off: from five values of the slope
        on the root's side of ``x`` (a quartic there, :func:`envelope.search.quartic_roots`),
        or by Anderson-Bjorck regula falsi on the contracted slope where a break lies
        inside that side.

        Returns the root, the envelope there, and whether that is a true maximum of the
        envelope: the slope changed sign from + to - (or, with ``x`` at an end of its
        bracket, falls away from it) and the same case still governs there.  Elsewhere
        the root and value are ``x`` and the envelope at ``x``.  Last, the combination
        governing the envelope at the root (see :meth:`envelope_max`).  The brackets are
        searched in blocks of :func:`envelope.solved.chunk_rows` (each holds a row of
        responses and of coefficients over every unit case), so memory stays bounded.
        ``coef``: the case governing at each ``x`` (rows x unit cases), where already
        known (one block only)."""
        step = chunk_rows(self.solved.unit_cases.n_units)
        if x.size <= step:
            return self._root_block(task, span, length, x, lo, hi, coef)
        parts = [self._root_block(*(a[i:i + step] for a in (task, span, length, x, lo, hi)))
                 for i in range(0, x.size, step)]
        root, value, found, combo = (np.concatenate(p) for p in zip(*parts, strict=True))
        return root, value, found, combo

    def _root_block(self, task: np.ndarray, span: np.ndarray, length: np.ndarray,
                    x: np.ndarray, lo: np.ndarray, hi: np.ndarray,
                    coef: np.ndarray | None = None
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """:meth:`root_of_governing` of one block of brackets."""
        s = self.solved
        if coef is None:
            coef = np.empty((x.size, s.unit_cases.n_units))
            for t, rows, resp in self.responses(task, span, x):
                coef[rows] = governing_coefficients(resp, self.sets[t])
        deflection = self.is_deflection[task]
        n = x.size
        # the slope at the bracket's ends and either side of the station, and at the
        # inner Chebyshev-Lobatto nodes of [lo, x] and of [x, hi] (with [x, hi]'s end
        # at hi as a left-side limit): one evaluation for the side test and the root
        nodes = LOBATTO_NODES[1:4]
        mid_l, half_l = 0.5 * (lo + x), 0.5 * (x - lo)
        mid_r, half_r = 0.5 * (x + hi), 0.5 * (hi - x)
        at = np.concatenate([lo, hi, x, x, hi, (mid_l[:, None] + half_l[:, None] * nodes).T.ravel(),
                             (mid_r[:, None] + half_r[:, None] * nodes).T.ravel()])
        sides = np.repeat([True, True, False, True, False, True, True, True, True, True, True],
                          n)
        rows = np.tile(np.arange(n), 11)
        gov: SpanCases | None = None
        if _by_units(11 * n, s.unit_cases.n_units):
            f_all = self.unit_slopes(task, span, coef, rows, at, sides)
        else:
            gov = self.contract(task, span, coef)
            f_all = response(gov.take(rows), at, deflection[rows], slope=True, right=sides)
        f_all = f_all.reshape(11, n)
        f_lo, f_hi, left, right = f_all[0], f_all[1], f_all[2], f_all[3]
        ok = (f_lo > 0.0) & (f_hi < 0.0)
        # the slope just left and right of the station itself: through zero there (a
        # jump under a point load) is the root at once; else the bracket keeps the side
        # of the station where the root lies
        at_x = ok & (left >= 0.0) & (right <= 0.0)
        inner = ok & ~at_x & (x > lo) & (x < hi)
        up = inner & (left > 0.0) & (right > 0.0)
        down = inner & (left < 0.0) & (right < 0.0)
        tol = config.ROOT_XTOL_EPS * _EPS * np.maximum(length, 1.0)
        active = ok & ~at_x
        # the root's side of the station: [x, hi] going up (or with x at lo), [lo, x]
        # going down (or with x at hi); on it the slope is one polynomial of degree at
        # most four where no break (a load edge, point load or element end) lies inside
        use_r = active & (up | (x == lo))
        use_l = active & ~use_r & (down | (x == hi))
        a_side, b_side = np.where(use_r, x, lo), np.where(use_r, hi, x)
        smooth = (use_r | use_l) & ~breaks_inside(self.breaks[span], a_side, b_side)
        values = np.where(use_r, f_all[[3, 8, 9, 10, 4]], f_all[[0, 5, 6, 7, 2]]).T
        half = np.where(use_r, half_r, half_l)
        u = quartic_roots(values, smooth, tol / np.maximum(half, _TINY),
                          np.where(use_r, -1.0, 1.0))
        root = np.where(u == -1.0, a_side, np.where(u == 1.0, b_side, np.minimum(np.maximum(
            np.where(use_r, mid_r, mid_l) + half * u, a_side), b_side)))
        root = np.where(smooth, root, x)
        rest = active & ~smooth
        if rest.any():
            if gov is None:
                gov = self.contract(task, span, coef)
            root = anderson_bjorck_root(lambda xs: response(gov, xs, deflection, slope=True),
                                        np.where(up, x, lo),
                                        np.where(down, x, hi), np.where(up, right, f_lo),
                                        np.where(down, left, f_hi), root, rest, tol,
                                        group=task)
        # a maximum at an end of its bracket (a span end): the case falls away inwards and
        # the envelope is lower at probes inside the bracket (several cases may tie at a
        # support, so the governing one alone does not decide); the envelope at the
        # probes is evaluated with the envelope at the roots
        at_end = ~ok & (((x == lo) & (f_lo <= 0.0)) | ((x == hi) & (f_hi >= 0.0)))
        ends = np.flatnonzero(at_end)
        probes = lo[ends, None] + (hi - lo)[ends, None] * np.array(config.END_PROBES)
        k = probes.shape[1]
        combo = np.full(n + ends.size * k, -1, dtype=np.int64)
        own = np.empty(n)  # the governing case itself at the roots, from the same responses
        both = self.envelope_max(np.concatenate([task, np.repeat(task[ends], k)]),
                                 np.concatenate([span, np.repeat(span[ends], k)]),
                                 np.concatenate([root, probes.ravel()]), combo, (coef, own))
        value = both[:n]
        if ends.size:
            inside = both[n:].reshape(probes.shape)
            at_end[ends] = np.all(inside < value[ends, None], axis=1)
        # round-off of the sums is relative to the envelope's size (a value near zero,
        # e.g. at a free end, is compared with its noise, not with itself)
        scale = np.maximum(np.maximum(np.abs(value), self.scale[task]), _TINY)
        governs = value <= own + config.GOVERNS_RTOL * scale
        return root, value, (ok | at_end) & governs, combo[:n]


def _by_units(n_points: int, n_units: int) -> bool:
    """Whether the slopes at ``n_points`` points are taken from every unit case's
    responses there (one evaluation: they fit one block of
    :func:`envelope.solved.chunk_rows`, and the evaluation is numpy's) rather than from
    each bracket's case contracted on its span (whose work does not grow with the unit
    cases: a long beam's)."""
    return n_points <= chunk_rows(n_units) and n_units < config.KERNEL_MIN_UNITS


def _at_span_ends(pts: Points, n_spans: int) -> tuple[np.ndarray, np.ndarray]:
    """Station rows of each span's left end (x_span = 0) and right end (x_span = L)."""
    order = np.argsort(pts.span, kind="stable")  # each span's rows in their order
    bounds = np.searchsorted(pts.span[order], np.arange(n_spans + 1))
    return order[bounds[:-1]], order[bounds[1:] - 1]


def _least_moment(solved: Solved, points: Points) -> np.ndarray:
    """The strength envelope's least moment at ``points``: ``envelope_at(...).min``, the
    same numbers, as the negated largest value of the negated responses (negation is
    exact in every sum and product), without the largest values, the governing
    combinations or the texts.  Blocks of rows and the way of summing are those of
    :func:`envelope.solved.envelopes_at`; with moving loads it is that function."""
    if moving_loads(solved.beam):
        face = envelope_at(solved, points, "moment", labels=False)
        assert face is not None
        return face.min
    cs = solved.case_set(QUANTITY_SET["moment"])
    sol = solved.solution_for(QUANTITY_SET["moment"])
    mesh, units = solved.mesh, solved.unit_cases
    step = chunk_rows(units.n_units)
    sums = points.n > step or units.n_units >= config.KERNEL_MIN_UNITS
    terms = sums or pair_count(mesh, units, points) > config.KERNEL_MIN_PAIRS
    out = np.empty(points.n)
    for lo in range(0, points.n, step):
        chunk = points.take(slice(lo, lo + step))
        R = evaluate_some(mesh, units, sol, chunk, ("moment",), kernel=terms)["moment"]
        out[lo: lo + chunk.n] = _least(R, cs, sums)
    return out


def _least(R: np.ndarray, cs: CaseSet, sums: bool) -> np.ndarray:
    """The least value over ``cs`` of each row of ``R`` (rows x unit cases), as the
    negated largest of the negated responses (``sums``: the kernel's column sums)."""
    return -column_max(-R, cs, None, sums).max(axis=1)


@dataclass(frozen=True, slots=True)
class _Largest:
    """An envelope's largest value at each row and the combination governing it (an
    index into the case set's combinations): what the search reads of the live
    deflection envelope at the stations."""

    max: np.ndarray
    max_combo: np.ndarray


def _live_at_stations(solved: Solved, block: _Block) -> _Largest | None:
    """The live deflection envelope's largest values at the stations from ``block``:
    ``envelope_at(solved, pts, "deflection", "live", labels=False)``'s ``max`` and
    ``max_combo``, the same sums and the same first largest column (as
    :func:`envelope.enveloper.reduce` takes it), without the least values."""
    cs = solved.case_set("live")
    if cs.is_empty:
        return None
    R = block.responses[("deflection", id(solved.solution_for("live")))][:block.n_stations]
    vmax = column_max(R, cs, None, block.sums)
    col = np.argmax(vmax, axis=1)
    return _Largest(vmax[np.arange(col.size), col], cs.col_combo[col])


def _live_combo(solved: Solved, live: _Largest | Extremes, found: _Found) -> np.ndarray:
    """Per span, the live combination governing at the span's largest live deflection:
    the station envelope's where that is at a station, the search's where it found it,
    else the envelope evaluated there."""
    combo = np.where(found.row >= 0, live.max_combo[np.maximum(found.row, 0)], found.combo)
    unknown = np.flatnonzero(combo < 0)
    if unknown.size:
        at = envelope_at(solved, make_points(solved.beam, unknown, found.x[unknown]),
                         "deflection", "live", labels=False)
        assert at is not None
        combo[unknown] = at.max_combo
    return combo


def design_actions(solved: Solved, pts: Points,
                   env: dict[str, Extremes | None]) -> dict[str, np.ndarray]:
    """Per-span design actions in consistent units (the design.parquet columns)."""
    beam = solved.beam
    n = beam.n_spans
    geometry = beam.geometry
    length = np.array(geometry.span_length)
    nan = np.full(n, np.nan)
    left, right = _at_span_ends(pts, n)
    out: dict[str, np.ndarray] = {"span": np.arange(1, n + 1), "length": length}

    moment, shear, deflection = env["moment"], env["shear"], env["deflection"]
    faces = None if moment is None else make_points(
        beam, np.tile(np.arange(n), 2), np.concatenate([geometry.face_left, geometry.face_right]),
        np.arange(2 * n) < n)
    # a beam whose stations fit one block: every unit case at the stations, span ends and
    # faces in one evaluation, read by the live envelope, the governing cases at the
    # bracket stations and the faces' least moment
    items = element_items(solved.unit_cases, solved.mesh.n_elements)
    block = _one_block(solved, pts, faces, items)
    live: _Largest | Extremes | None = _live_at_stations(
        solved, block) if block is not None else envelope_at(solved, pts, "deflection",
                                                               "live", labels=False)
    # one search for the three maxima: sagging moment, service and live deflection
    wanted = {"moment": (moment, "moment", None), "deflection": (deflection, "deflection", None),
              "live": (live, "deflection", "live")}
    asked = {key: (ext.max, q, c) for key, (ext, q, c) in wanted.items() if ext is not None}
    found = dict(zip(asked, _refine(solved, pts, list(asked.values()), block, items),
                     strict=True))
    if moment is not None and faces is not None:
        pos, pos_x = found["moment"].value, found["moment"].x
        # round-off at a free end is not a sagging moment
        zero = config.ZERO_RTOL * max(float(np.abs(moment.max).max()),
                                      float(np.abs(moment.min).max()))
        out["moment_pos"] = np.where(pos > zero, pos, 0.0)
        out["moment_pos_x"] = np.where(pos > zero, pos_x, np.nan)
        out["moment_neg_left"] = np.minimum(moment.min[left], 0.0)
        out["moment_neg_right"] = np.minimum(moment.min[right], 0.0)
        face = _least_moment(solved, faces) if block is None else _least(
            block.faces("moment", solved.solution_for(QUANTITY_SET["moment"])),
            solved.case_set(QUANTITY_SET["moment"]), block.sums)
        out["moment_neg_left_face"] = np.minimum(face[:n], 0.0)
        out["moment_neg_right_face"] = np.minimum(face[n:], 0.0)
    else:
        for key in ("moment_pos", "moment_pos_x", "moment_neg_left", "moment_neg_right",
                    "moment_neg_left_face", "moment_neg_right_face"):
            out[key] = nan
    if shear is not None:
        mag = np.maximum(np.abs(shear.max), np.abs(shear.min))
        out["shear_left"], out["shear_right"] = mag[left], mag[right]
    else:
        out["shear_left"] = out["shear_right"] = nan

    if deflection is not None:
        out["deflection_max"] = np.maximum(found["deflection"].value, 0.0)
    else:
        out["deflection_max"] = nan
    out["deflection_live_combo"] = np.full(n, "", dtype=object)
    if live is not None:
        lmax = found["live"].value
        out["deflection_live"] = np.maximum(lmax, 0.0)
        # which variable action alone governs, at the span's largest deflection
        names = np.array([c.name for c in solved.live.combinations], dtype=object)
        out["deflection_live_combo"] = np.where(lmax > 0.0,
                                                names[_live_combo(solved, live, found["live"])],
                                                "")
    else:
        out["deflection_live"] = np.zeros(n)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = length / out["deflection_max"]
    out["span_over_deflection"] = np.where(out["deflection_max"] > 0.0, ratio, np.nan)
    return out
