"""Envelopes as reductions over unit-case responses.

A combination set (strength or service) becomes *columns* of coefficients over unit
cases.  A column is one combination under one arrangement of its patterned cases;
the two kinds of set are two types (:data:`CaseSet` names either):

* :class:`ExplicitCaseSet` (patterning ``none`` and ``code``): one column per
  combination and loaded span set;
* :class:`SuperposedCaseSet` (``exhaustive`` and ``segments``): one column per
  combination, whose ``patterned`` factors put each patterned unit case (one case
  on one cell) on or off independently.

Coefficients are dimensionless: a response of the set is ``R @ coefficients`` in
the units of ``R``.

Every column holds ``fixed`` coefficients, always applied, and on/off parts that
act only where they make the value worse: the patterned unit cases (superposition)
and *groups*, each a variable case that is not patterned, acting or not as one
over the whole beam.  Under explicit patterning the patterned cases follow the
column's spans; a combination whose patterned cases may all be left out also has a
column with none of them acting (no span loaded).  Over every subset of those parts the
largest value of a column is ``R @ fixed + sum(max(R @ part, 0))`` and the
smallest the same with ``min``: exact, with no subset ever enumerated.  With
``favourable_dead`` not 1 (strength sets), a cell carrying no patterned load
takes its dead load at ``favourable_dead`` times the factor; the choice still
separates cell by cell, so each cell takes the better of "unloaded" and "loaded
by the best non-empty choice of its patterned unit cases".

``R`` is (rows x units) for one quantity: stations, support reactions, or any
points, in the engine's consistent units (shear and reactions kN or kip, moment
kN*m or kip*ft, deflection m or ft, rotation rad).  Every reduction returns the
governing combination and, as ``_loaded`` text, which switchable cases act and
where.
"""

from __future__ import annotations

import itertools
import json
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any, cast

import numpy as np

from envelope import config
from envelope.loading import Cells, UnitCases
from envelope.model import Beam, Combination, Patterning
from envelope.patterns import arrangements, loaded_label
from envelope.values import dataclass

if TYPE_CHECKING:
    from envelope.moving import MovingEffect

#: A case's loaded cells, by case name.
Masks = tuple[tuple[str, tuple[bool, ...]], ...]


@dataclass(frozen=True, slots=True)
class _Columns:
    """What every case set holds: its combinations as columns of coefficients over
    the unit cases, and the whole-case on/off groups of each column.

    Coefficients are dimensionless factors on unit-case responses.  Shapes: units x
    columns for ``fixed``; units x distinct groups for ``groups``.
    """

    combinations: tuple[Combination, ...]
    cell_labels: tuple[str, ...]
    unit_case_name: tuple[str, ...]  # per unit
    case_names: tuple[str, ...]  # the distinct case names of the units, in order of appearance
    unit_case: np.ndarray  # per unit: the index of its case name in ``case_names``
    unit_cell: np.ndarray  # per unit
    col_combo: np.ndarray  # (columns,) combination index
    fixed: np.ndarray  # factors always applied
    groups: np.ndarray  # whole-case on/off factors, each distinct vector once
    group_src: np.ndarray  # (groups,) column of ``groups`` holding each group's factors
    group_col: np.ndarray  # (groups,) column of each group, ascending
    group_case: tuple[str, ...]  # case name of each group
    group_mask: np.ndarray  # (groups, cells) bool: where the group's case acts when on
    group_runs: np.ndarray  # the distinct columns of ``group_col``, ascending
    group_run_start: np.ndarray  # the first group of each of them
    switchable: tuple[tuple[str, ...], ...]  # per combination: cases named in _loaded
    all_patterned: tuple[bool, ...]  # per combination: every switchable case patterned

    @property
    def is_empty(self) -> bool:
        """True for a set with no combination (nothing to envelope)."""
        return not self.combinations

    @property
    def n_columns(self) -> int:
        """Number of columns (combination and arrangement pairs)."""
        return int(self.col_combo.size)

    def membership(self) -> np.ndarray:
        """(groups, columns) 0/1 matrix: which column each group belongs to."""
        m = np.zeros((self.group_col.size, self.n_columns))
        m[np.arange(self.group_col.size), self.group_col] = 1.0
        return m

    def _group_coefficients(self) -> np.ndarray:
        """(units x columns) every group of each column acting."""
        return self.groups[:, self.group_src] @ self.membership()

    def _row(self, k: int, loaded: str) -> dict[str, str]:
        c = self.combinations[k]
        return {"combination": c.name, "loaded": loaded, "factors": json.dumps(dict(c.factors))}


@dataclass(frozen=True, slots=True)
class ExplicitCaseSet(_Columns):
    """A combination set under explicit arrangements (patterning ``none`` or
    ``code``): one column per combination and loaded span set, its patterned cases
    on the arrangement's spans and, with ``favourable_dead`` below 1, the dead load of
    the other spans at that factor, all folded into ``fixed``."""

    col_cells: np.ndarray  # (columns, cells) bool: the arrangement's loaded cells
    col_masks: tuple[Masks, ...]  # per column: cells of its patterned cases always acting

    def _column_text(self, c: int) -> str:
        cells = self.col_cells[c]
        return loaded_label(self.cell_labels, list(cells), bool(cells.all()))

    def case_rows(self, explicit: bool = False) -> list[dict[str, str]]:
        """What was run: one row per arrangement of each combination, giving the
        combination, the ``loaded`` text and the factors (JSON).  ``explicit`` is
        accepted for symmetry with :meth:`SuperposedCaseSet.case_rows`: every row
        already is an explicit case."""
        # the texts of explicit_cases() without its coefficients; each combination's
        # row made once and copied with each arrangement's text
        rows = [self._row(k, "") for k in range(len(self.combinations))]
        return [{**rows[int(self.col_combo[c])], "loaded": self._column_text(c)}
                for c in range(self.n_columns)]

    def explicit_cases(self) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
        """Coefficients (units x cases), combination index and ``loaded`` text of each
        arrangement run, every case of its combination acting."""
        coef = self.fixed + self._group_coefficients()
        return coef, self.col_combo, tuple(self._column_text(c) for c in range(self.n_columns))


@dataclass(frozen=True, slots=True)
class SuperposedCaseSet(_Columns):
    """A combination set under superposition (patterning ``exhaustive`` or
    ``segments``): one column per combination whose ``patterned`` factors put each
    patterned unit case (one case on one cell) on or off independently.

    ``dead_var`` holds the dead factors whose value depends on the pattern: with
    ``favourable_dead`` below 1, a cell without patterned load takes its dead load at
    ``favourable_dead`` times the factor.  Shapes: units x columns.
    """

    patterned: np.ndarray  # per-unit on/off factors
    dead_var: np.ndarray  # dead factors that depend on the pattern
    favourable_dead: float  # dead-load factor multiplier on cells left unloaded
    #: the columns whose dead load depends on the pattern, and of each what its
    #: cell-by-cell choice needs that does not depend on the responses
    fav_cols: np.ndarray
    fav_parts: tuple[_FavParts, ...]

    def case_rows(self, explicit: bool = False) -> list[dict[str, str]]:
        """What was run: one row per combination (``loaded`` ``"any"``); with
        ``explicit`` also each combination with every cell loaded (``"all"``), the
        cases of :meth:`explicit_cases`.  Each row gives the combination, the loaded
        text and the factors (JSON)."""
        rows = [self._row(k, "any") for k in range(len(self.combinations))]
        if explicit:
            rows += [{**rows[int(k)], "loaded": "all"} for k in self.col_combo]
        return rows

    def explicit_cases(self) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
        """Coefficients (units x cases), combination index and ``loaded`` text
        (``"all"``) of each combination with every case acting on every cell."""
        coef = self.fixed + self.patterned + self.dead_var + self._group_coefficients()
        return coef, self.col_combo, ("all",) * self.n_columns


#: A combination set as coefficients over unit cases, either kind.
CaseSet = ExplicitCaseSet | SuperposedCaseSet


@dataclass(frozen=True, slots=True)
class Extremes:
    """Envelope of one quantity at each row: values (in the units of the responses
    reduced), governing combination, loaded cells (the ``_loaded`` text)."""

    max: np.ndarray
    min: np.ndarray
    max_combo: np.ndarray  # int index into CaseSet.combinations
    min_combo: np.ndarray
    max_loaded: np.ndarray  # object array of str
    min_loaded: np.ndarray

    @staticmethod
    def concat(parts: list[Extremes]) -> Extremes:
        """The rows of ``parts`` one after another (chunks of points joined)."""
        return Extremes(*(np.concatenate([getattr(p, f) for p in parts])
                          for f in ("max", "min", "max_combo", "min_combo", "max_loaded",
                                    "min_loaded")))



def _switchable(combo: Combination, units_case: list[str], patterned: dict[str, bool],
                ) -> tuple[str, ...]:
    """Cases of a combination named in ``_loaded``: its patterned cases and the cases
    that act only where unfavourable, each with load and a factor, in the order of
    their first unit case (the order of their first load item)."""
    out: list[str] = []
    for name in units_case:
        if name in out or combo.factor(name) == 0.0:
            continue
        if patterned[name] or name in combo.optional:
            out.append(name)
    return tuple(out)


@dataclass(frozen=True, slots=True)
class _Inputs:
    """Per unit case and per combination, what both builders need (units x
    combinations for ``factor`` and ``optional``)."""

    names: list[str]  # case name per unit
    factor: np.ndarray  # the combination's factor on each unit's case
    is_patterned: np.ndarray  # per unit: its case is patterned
    is_dead: np.ndarray  # per unit: its case is dead load
    optional: np.ndarray  # the case acts only where unfavourable
    has_pattern: np.ndarray  # per combination: some patterned case has a factor
    whole: np.ndarray  # non-patterned cases acting or not, over the whole beam
    switchable: tuple[tuple[str, ...], ...]
    all_patterned: tuple[bool, ...]
    pattern_of: dict[str, bool]


def _inputs(beam: Beam, combos: tuple[Combination, ...], units: UnitCases) -> _Inputs:
    """Factors, kinds and switches of every unit case under every combination."""
    cases = beam.cases
    n_u, n_k = units.n_units, len(combos)
    names = [cases[i].name for i in units.case]
    factor = np.array([[c.factor(n) for c in combos] for n in names]).reshape(n_u, n_k)
    is_patterned = np.array([cases[i].patterned for i in units.case], dtype=bool)
    is_dead = np.array([cases[i].kind == "dead" for i in units.case], dtype=bool)
    optional = np.array([[n in c.optional for c in combos] for n in names],
                        dtype=bool).reshape(n_u, n_k)
    has_pattern = (np.abs(factor) * is_patterned[:, None]).sum(axis=0) > 0
    pattern_of = {c.name: c.patterned for c in cases}
    switchable = tuple(_switchable(c, names, pattern_of) for c in combos)
    return _Inputs(
        names=names, factor=factor, is_patterned=is_patterned, is_dead=is_dead,
        optional=optional, has_pattern=has_pattern,
        whole=~is_patterned[:, None] & optional, switchable=switchable,
        all_patterned=tuple(all(pattern_of[n] for n in sw) for sw in switchable),
        pattern_of=pattern_of)


class _Groups:
    """The whole-case on/off groups as they are added, column by column; each distinct
    vector of factors is stored once."""

    def __init__(self, inp: _Inputs) -> None:
        self.inp = inp
        self.distinct: list[np.ndarray] = []
        self.known: dict[bytes, int] = {}
        self.src: list[int] = []
        self.col: list[int] = []
        self.case: list[str] = []
        self.mask: list[np.ndarray] = []
        self.of_case = {n: np.array([m == n for m in inp.names], dtype=bool)
                        for n in set(inp.names)}

    def add(self, k: int, col: int, mask: np.ndarray) -> None:
        """One group per switchable case of combination ``k`` that is not patterned:
        that case's factors, acting where ``mask`` says when on."""
        self.add_columns(k, range(col, col + 1), mask)

    def add_columns(self, k: int, cols: range, mask: np.ndarray) -> None:
        """:meth:`add` for each column of ``cols`` (in order), all of combination ``k``:
        the groups' factors found once for them all."""
        inp = self.inp
        found = []
        for name in inp.switchable[k]:
            part = np.where(inp.whole[:, k] & self.of_case[name], inp.factor[:, k], 0.0)
            if np.any(part != 0.0):
                src = self.known.setdefault(part.tobytes(), len(self.distinct))
                if src == len(self.distinct):
                    self.distinct.append(part)
                found.append((src, name))
        for col in cols:
            for src, name in found:
                self.src.append(src)
                self.col.append(col)
                self.case.append(name)
                self.mask.append(mask)

    def fields(self, n_u: int, n_g: int) -> dict[str, Any]:
        """The group fields of a case set."""
        col = np.array(self.col, dtype=np.int64)
        runs, run_start = np.unique(col, return_index=True)  # col is ascending
        return {"groups": _stack(self.distinct, n_u),
                "group_src": np.array(self.src, dtype=np.int64),
                "group_col": col, "group_runs": runs, "group_run_start": run_start,
                "group_case": tuple(self.case),
                "group_mask": np.array(self.mask, dtype=bool).reshape(len(self.col), n_g)}


def _stack(parts: list[np.ndarray], rows: int) -> np.ndarray:
    """Vectors as the columns of a (rows x len(parts)) array."""
    return np.array(parts).T.reshape(rows, len(parts)) if parts else np.zeros((rows, 0))


def build_case_set(beam: Beam, combos: tuple[Combination, ...], units: UnitCases,
                   cells: Cells, favourable_dead: float | None = None) -> CaseSet:
    """Coefficients of a combination set over the unit cases, for the beam's patterning.

    Parameters
    ----------
    beam : Beam
        The beam; its ``patterning`` chooses explicit arrangements (``none``,
        ``code``) or superposition (``exhaustive``, ``segments``).
    combos : tuple of Combination
        The set's combinations (dimensionless factors by case name).
    units : UnitCases
        The unit cases (one load case on one cell), in solution column order.
    cells : Cells
        The parts of the spans that patterning loads or leaves empty.
    favourable_dead : float, optional
        Factor on the dead load of cells left without patterned load; defaults to
        the patterning's (service sets give 1.0: EN 1990 6.5.3 takes every
        permanent action at 1.0).

    Returns
    -------
    ExplicitCaseSet or SuperposedCaseSet
        The columns and on/off parts that :func:`reduce` envelopes.
    """
    pat: Patterning = beam.patterning
    fav = pat.favourable_dead if favourable_dead is None else favourable_dead
    inp = _inputs(beam, combos, units)
    sets = arrangements(pat, beam.n_spans)
    if sets is None:
        return _superposed(combos, units, cells, inp, fav)
    return _explicit(beam, combos, units, cells, inp, fav, sets)


def _common(combos: tuple[Combination, ...], units: UnitCases, cells: Cells,
            inp: _Inputs, col_combo: list[int], fixed: list[np.ndarray],
            groups: _Groups) -> dict[str, Any]:
    """The fields every case set has, from its columns."""
    n_u = units.n_units
    return {"combinations": combos, "cell_labels": cells.label,
            "unit_case_name": tuple(inp.names), "case_names": tuple(dict.fromkeys(inp.names)),
            "unit_case": _first_seen(inp.names),
            "unit_cell": units.cell,
            "col_combo": np.array(col_combo, dtype=np.int64), "fixed": _stack(fixed, n_u),
            **groups.fields(n_u, cells.n), "switchable": inp.switchable,
            "all_patterned": inp.all_patterned}


def _first_seen(names: Sequence[str]) -> np.ndarray:
    """Per name, the index of its value among the distinct values in order of first
    appearance (``list(dict.fromkeys(names)).index(name)``)."""
    index: dict[str, int] = {}
    return np.array([index.setdefault(n, len(index)) for n in names], dtype=np.int64)


@dataclass(frozen=True, slots=True)
class _FavParts:
    """What the cell-by-cell choice of one column with pattern-dependent dead load
    (:func:`_superposed_values`) needs that does not depend on the responses: its
    patterned units, the units ordered cell by cell with the cells present and where
    each starts, and the cells some patterned case of the column leaves unloaded."""

    is_pat: np.ndarray  # (units,) bool
    order: np.ndarray  # units, cell by cell
    cells_present: np.ndarray
    starts: np.ndarray
    can_zero: np.ndarray  # (cells,) bool


def _fav_parts(names: Sequence[str], unit_cell: np.ndarray, n_cells: int,
               patterned: np.ndarray, dead_var: np.ndarray
               ) -> tuple[np.ndarray, tuple[_FavParts, ...]]:
    """The columns with pattern-dependent dead load and their :class:`_FavParts`."""
    fav = np.flatnonzero(dead_var.any(axis=0))
    order = np.argsort(unit_cell, kind="stable")
    cells_present, starts = np.unique(unit_cell[order], return_index=True)
    parts = []
    for k in fav.tolist():
        is_pat = patterned[:, k] != 0.0
        n_pat_cases = len(set(itertools.compress(names, is_pat.tolist())))
        n_pat_in_cell = np.bincount(unit_cell, is_pat.astype(float), n_cells)
        parts.append(_FavParts(is_pat, order, cells_present, starts,
                               n_pat_in_cell < n_pat_cases))
    return fav, tuple(parts)


def _superposed(combos: tuple[Combination, ...], units: UnitCases, cells: Cells,
                inp: _Inputs, fav: float) -> SuperposedCaseSet:
    """One column per combination: its patterned unit cases on/off one by one, the
    dead load of a combination with patterned load pattern-dependent when ``fav`` is
    not 1, the optional whole cases as groups acting over every cell."""
    every_cell = np.ones(cells.n, dtype=bool)
    fixed, patterned, dead = [], [], []
    groups = _Groups(inp)
    for k in range(len(combos)):
        f_k = inp.factor[:, k]
        variable_dead = inp.is_dead & inp.has_pattern[k] & (fav != 1.0)
        patterned.append(np.where(inp.is_patterned, f_k, 0.0))
        dead.append(np.where(variable_dead, f_k, 0.0))
        fixed.append(np.where(inp.is_patterned | variable_dead | inp.whole[:, k], 0.0, f_k))
        groups.add(k, k, every_cell)
    n_u = units.n_units
    patterned_a, dead_a = _stack(patterned, n_u), _stack(dead, n_u)
    fav_cols, fav_parts = _fav_parts(inp.names, units.cell, cells.n, patterned_a, dead_a)
    return SuperposedCaseSet(
        **_common(combos, units, cells, inp, list(range(len(combos))), fixed, groups),
        patterned=patterned_a, dead_var=dead_a, favourable_dead=fav, fav_cols=fav_cols,
        fav_parts=fav_parts)


def _explicit(beam: Beam, combos: tuple[Combination, ...], units: UnitCases, cells: Cells,
              inp: _Inputs, fav: float, sets: tuple[frozenset[int], ...]) -> ExplicitCaseSet:
    """One column per combination and loaded span set (all spans for a combination
    without patterned load; also no span at all where every patterned case of the
    combination is optional), the factors of that arrangement folded into ``fixed``."""
    every = frozenset(range(beam.n_spans))
    every_cell = np.ones(cells.n, dtype=bool)
    unit_span = cells.span[units.cell]
    col_combo: list[int] = []
    fixed: list[np.ndarray] = []
    col_cells: list[np.ndarray] = []
    col_masks: list[Masks] = []
    groups = _Groups(inp)
    for k in range(len(combos)):
        f_k = inp.factor[:, k]
        spans = sets if inp.has_pattern[k] else (every,)
        pat_k = inp.is_patterned & (f_k != 0.0)
        if inp.has_pattern[k] and np.all(inp.optional[pat_k, k]):
            spans = (*spans, frozenset())  # no patterned case acting at all
        # every arrangement of the combination at once, a row each (elementwise
        # choices and one product: each column the same numbers as one at a time)
        span_on = np.zeros((len(spans), beam.n_spans), dtype=bool)
        for row, s in enumerate(spans):
            span_on[row, list(s)] = True
        on, cell_on = span_on[:, unit_span], span_on[:, cells.span]
        f = np.where(inp.is_patterned, np.where(on, f_k, 0.0), f_k)
        f = np.where(inp.is_dead & ~on, f_k * fav, f)
        fixed.extend(np.where(inp.whole[:, k], 0.0, f))
        col_cells.extend(cell_on)
        named = [n for n in inp.switchable[k] if inp.pattern_of[n]]
        for mask in cell_on.tolist():
            loaded = tuple(mask)
            col_masks.append(tuple((n, loaded) for n in named))
        groups.add_columns(k, range(len(col_combo), len(col_combo) + len(spans)),
                           every_cell)
        col_combo.extend([k] * len(spans))
    return ExplicitCaseSet(
        **_common(combos, units, cells, inp, col_combo, fixed, groups),
        col_cells=np.array(col_cells, dtype=bool).reshape(len(col_combo), cells.n),
        col_masks=tuple(col_masks))


def _cell_onehot(cs: _Columns) -> np.ndarray:
    """(units x cells) 0/1 matrix: the cell of each unit case."""
    n_g = len(cs.cell_labels)
    onehot = np.zeros((cs.unit_cell.size, n_g))
    onehot[np.arange(cs.unit_cell.size), cs.unit_cell] = 1.0
    return onehot


def _superposed_values(R: np.ndarray, cs: SuperposedCaseSet, k: int, sign: float,
                       onehot: np.ndarray, part: _FavParts
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Extreme (sign=+1: max, -1: min) of column k over all subsets of cells, fixed and
    patterned parts, with the cell-by-cell choice that ``favourable_dead`` needs
    (``part``: the column's :class:`_FavParts`).

    Returns the value per row, the chosen patterned units (rows x units, bool) and
    the loaded cells (rows x cells, bool)."""
    value, take, Xm, any_pos, best_single, loaded = _cell_choice(R, cs, k, sign, onehot, part)
    # chosen units: positives in loaded cells, else the single best unit there
    can_zero, is_pat = part.can_zero, part.is_pat
    single = (Xm == best_single[:, cs.unit_cell]) & ~any_pos[:, cs.unit_cell] & ~can_zero[
        cs.unit_cell][None, :]
    chosen = (take | single) & loaded[:, cs.unit_cell] & is_pat[None, :]
    return value, chosen, loaded


def _cell_choice(R: np.ndarray, cs: SuperposedCaseSet, k: int, sign: float,
                 onehot: np.ndarray, part: _FavParts
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray,
                            np.ndarray]:
    """The value of :func:`_superposed_values` (per row) and what its choice of units is
    made from: where the responses are worse (rows x units), those of the patterned
    units made positive where worse (-inf elsewhere), whether a cell has a positive
    unit, the best single unit of each cell and the loaded cells (rows x cells).  The value
    alone (the largest value of a column, as searches want it) needs no more."""
    X = sign * (R * cs.patterned[:, k])  # the worse direction made positive
    take = X > 0.0
    base = R @ cs.fixed[:, k]
    dead_k = cs.dead_var[:, k]
    # each cell chooses "unloaded" (fav * A) or "loaded" (A + best non-empty choice)
    A = sign * ((R * dead_k) @ onehot)  # rows x cells, loaded dead effect
    is_pat = part.is_pat
    pos = np.where(take, X, 0.0) @ onehot
    any_pos = (take.astype(float) @ onehot) > 0
    # best single patterned unit per cell where nothing helps (may be negative)
    Xm = np.where(is_pat, X, -np.inf)
    best_single = np.full(A.shape, -np.inf)
    # the units of each cell side by side, then one maximum over each cell's run
    if part.cells_present.size:
        best_single[:, part.cells_present] = np.maximum.reduceat(Xm[:, part.order],
                                                                 part.starts, axis=1)
    can_zero = part.can_zero  # some patterned case puts nothing here
    best = np.where(any_pos, pos, np.where(can_zero[None, :], 0.0, best_single))
    loaded_val = A + best
    unloaded_val = cs.favourable_dead * A
    loaded = loaded_val > unloaded_val
    value = base + sign * np.where(loaded, loaded_val, unloaded_val).sum(axis=1)
    return value, take, Xm, any_pos, best_single, loaded


def moving_factors(cs: CaseSet, names: tuple[str, ...]) -> np.ndarray:
    """(moving cases x columns) factor of each moving case in each column's combination."""
    per_combo = np.array([[c.factor(n) for c in cs.combinations] for n in names],
                         dtype=float).reshape(len(names), len(cs.combinations))
    return per_combo[:, cs.col_combo]


def _add_moving(vmax: np.ndarray, vmin: np.ndarray, cs: CaseSet,
                moving: MovingEffect | None) -> None:
    """Add the moving cases' worst effects to every column, in place: factor f >= 0
    adds f W+ to the largest value and f W- to the least (a moving load acts only where
    unfavourable, W+ >= 0 >= W-); a negative factor swaps them."""
    if moving is None or not moving.n:
        return
    F = moving_factors(cs, moving.names)
    fp, fn = np.maximum(F, 0.0), np.minimum(F, 0.0)
    vmax += moving.max @ fp + moving.min @ fn
    vmin += moving.min @ fp + moving.max @ fn


def column_extremes(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None = None,
                    kernel: bool = False
                    ) -> tuple[np.ndarray, np.ndarray]:
    """Largest and smallest value of every column over all subsets of its on/off parts:
    two (rows x columns) arrays (``moving``, ``kernel``: see :func:`_extremes`)."""
    vmax, vmin, _ = _extremes(R, cs, kernel, moving=moving)
    return vmax, vmin


def column_max(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None = None,
               kernel: bool = False) -> np.ndarray:
    """The largest value of every column (rows x columns): the first array of
    :func:`column_extremes`, without the cost of the smallest (for searches)."""
    return _extremes(R, cs, kernel, smallest=False, moving=moving)[0]


def _extremes(R: np.ndarray, cs: CaseSet, kernel: bool = False, smallest: bool = True,
              moving: MovingEffect | None = None
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """:func:`column_extremes` and the groups' values (rows x groups, None without
    groups); with ``smallest`` False the second array is not the smallest value where
    dead load is pattern-dependent (left undone).

    For the per-unit parts, where dead load does not depend on the pattern, the sum of
    positive parts is sum(max(R_u p_u, 0)) = (R @ P + |R| @ |P|) / 2, since
    max(a, 0) = (a + |a|) / 2 term by term: two matrix products.  Groups add
    max(R @ G, 0) summed by column (one more product).  Columns with a
    pattern-dependent (favourable) dead load take the cell-by-cell choice of
    :func:`_superposed_values`.  ``moving`` adds the moving cases' worst effects at
    each row (:mod:`envelope.moving`).

    With ``kernel`` the sums are those of :func:`envelope._kernels.column_sums`: one
    pass over ``R``, each row summed by itself in unit order (the same to round-off as
    the matrix products, which stay the reference; a row's value then does not depend
    on the block of rows it is computed in)."""
    gv: np.ndarray | None = None
    if kernel:
        base, vmax, vmin, gv = _kernel_sums(R, cs)
    else:
        base = R @ cs.fixed
    if isinstance(cs, SuperposedCaseSet):
        if not kernel:
            signed = R @ cs.patterned
            spread = np.abs(R) @ np.abs(cs.patterned)
            vmax = base + 0.5 * (signed + spread)
            vmin = base + 0.5 * (signed - spread)
        if cs.fav_cols.size:
            onehot = _cell_onehot(cs)
            for k, part in zip(cs.fav_cols.tolist(), cs.fav_parts, strict=True):
                vmax[:, k] = _cell_choice(R, cs, k, 1.0, onehot, part)[0]
                if smallest:
                    vmin[:, k] = _cell_choice(R, cs, k, -1.0, onehot, part)[0]
    else:
        vmax, vmin = base, base.copy()
    if cs.group_col.size:
        gv = (R @ cs.groups if gv is None else gv)[:, cs.group_src]
        # groups are stored column by column: sum each column's run of groups
        cols, starts = cs.group_runs, cs.group_run_start
        vmax[:, cols] += np.add.reduceat(np.maximum(gv, 0.0), starts, axis=1)
        vmin[:, cols] += np.add.reduceat(np.minimum(gv, 0.0), starts, axis=1)
    else:
        gv = None
    _add_moving(vmax, vmin, cs, moving)
    return vmax, vmin, gv


def _kernel_sums(R: np.ndarray, cs: CaseSet
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """By :func:`envelope._kernels.column_sums`: R @ fixed, R @ fixed plus the sum of
    the positive and of the negative per-unit parts (rows x columns; the per-unit parts
    of an explicit set are none), and R @ groups (rows x distinct groups)."""
    from envelope import _kernels  # numba is imported only here

    patterned = cs.patterned if isinstance(cs, SuperposedCaseSet) else cs.fixed[:, :0]
    n_f, n_p, n_g = cs.fixed.shape[1], patterned.shape[1], cs.groups.shape[1]
    coef = np.ascontiguousarray(np.concatenate([cs.fixed, patterned, cs.groups], axis=1))
    out = np.empty((R.shape[0], n_f + 2 * n_p + n_g))
    _kernels.column_sums(np.ascontiguousarray(R, dtype=np.float64), coef,
                         np.array([n_f, n_p, n_g], dtype=np.int64), out)
    base = out[:, :n_f]
    if n_p:
        vmax = base + out[:, n_f:n_f + n_p]
        vmin = base + out[:, n_f + n_p:n_f + 2 * n_p]
    else:
        vmax, vmin = base.copy(), base.copy()
    return base, vmax, vmin, out[:, n_f + 2 * n_p:]


def superposed_extremes(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None = None
                        ) -> tuple[np.ndarray, np.ndarray]:
    """Largest and smallest value of every combination (rows x combinations): the
    extreme over its columns (its arrangements) of :func:`column_extremes`."""
    vmax, vmin = column_extremes(R, cs, moving)
    n_k = len(cs.combinations)
    out_max = np.full((R.shape[0], n_k), -np.inf)
    out_min = np.full((R.shape[0], n_k), np.inf)
    for c in range(cs.n_columns):
        k = int(cs.col_combo[c])
        out_max[:, k] = np.maximum(out_max[:, k], vmax[:, c])
        out_min[:, k] = np.minimum(out_min[:, k], vmin[:, c])
    return out_max, out_min


def _choices(R: np.ndarray, cs: CaseSet, col: np.ndarray, sign: float,
             gv: np.ndarray | None = None
             ) -> tuple[np.ndarray, np.ndarray | None, np.ndarray]:
    """The governing choice at each row for its own column: chosen patterned units
    (rows x units), where dead load is pattern-dependent the loaded cells, and the
    groups acting (rows x groups; ``gv``: their values, when already known)."""
    groups = np.zeros((R.shape[0], cs.group_col.size), dtype=bool)
    if cs.group_col.size:
        gv = (R @ cs.groups)[:, cs.group_src] if gv is None else gv
        groups = ((sign * gv) > 0.0) & (cs.group_col[None, :] == col[:, None])
    if not isinstance(cs, SuperposedCaseSet):  # explicit: no unit is switched
        return np.zeros(R.shape, dtype=bool), None, groups
    P = cs.patterned.T[col]  # rows x units: each row's own column
    units = (sign * R * P) > 0.0
    if not cs.fav_cols.size:
        return units, None, groups
    onehot = _cell_onehot(cs)
    cells = (units.astype(float) @ onehot) > 0
    for k, part in zip(cs.fav_cols.tolist(), cs.fav_parts, strict=True):
        rows = np.flatnonzero(col == k)
        if rows.size:
            _, u_k, c_k = _superposed_values(R[rows], cs, k, sign, onehot, part)
            units[rows], cells[rows] = u_k, c_k
    return units, cells, groups


def governing_columns(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None = None
                      ) -> np.ndarray:
    """The column governing the maximum at each row (moving cases included)."""
    return np.argmax(column_max(R, cs, moving), axis=1)


def governing_coefficients(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None = None
                           ) -> np.ndarray:
    """Coefficients over unit cases (rows x units) of the case that governs the maximum
    at each row: the column with its chosen subset of on/off parts.  The response of
    that one fixed case is smooth where the envelope is, so its derivative locates the
    envelope's extreme exactly.  ``R`` is (rows x units) in any units; the
    coefficients are dimensionless (a response is ``R @ coef[i]``).  With ``moving``,
    the column is chosen with the moving cases' worst effects included (their own part
    is not a unit-case coefficient: see :func:`moving_factors` for the factor of each
    in the column).

    Made in blocks of rows of at most :data:`envelope.config.ENVELOPE_CHUNK_VALUES`
    values, so that the working arrays stay bounded on a long beam; there (and from
    :data:`envelope.config.KERNEL_MIN_UNITS` unit cases on) the sums are the
    kernel's, whose rows do not depend on the block."""
    n_rows, n_units = R.shape
    step = max(1, config.ENVELOPE_CHUNK_VALUES // max(n_units, 1))
    kernel = n_rows > step or n_units >= config.KERNEL_MIN_UNITS
    if n_rows <= step:
        return _governing_block(R, cs, moving, kernel)
    out = np.empty((n_rows, n_units))
    for lo in range(0, n_rows, step):
        rows = np.arange(lo, min(lo + step, n_rows))
        part = None if moving is None else moving.rows(rows)
        out[rows] = _governing_block(R[rows], cs, part, kernel)
    return out


def _governing_block(R: np.ndarray, cs: CaseSet, moving: MovingEffect | None,
                     kernel: bool) -> np.ndarray:
    """:func:`governing_coefficients` of one block of rows."""
    col = np.argmax(column_max(R, cs, moving, kernel), axis=1)
    units, cells, groups = _choices(R, cs, col, 1.0)
    coef = cs.fixed.T[col]
    if isinstance(cs, SuperposedCaseSet):
        coef = coef + cs.patterned.T[col] * units
    coef = coef + groups.astype(float) @ cs.groups[:, cs.group_src].T
    if cells is not None and isinstance(cs, SuperposedCaseSet):
        dead = cs.dead_var.T[col]
        on = cells[:, cs.unit_cell]
        coef += np.where(on, dead, dead * cs.favourable_dead)
    return coef


def reduce(R: np.ndarray, cs: CaseSet, labels: bool = True,
           known: dict[bytes, str] | None = None,
           moving: MovingEffect | None = None, kernel: bool = False) -> Extremes:
    """Envelope of the responses ``R`` over a case set, exact by superposition.

    Parameters
    ----------
    R : ndarray, (rows x units)
        One quantity's response to each unit case at each row (a station, a support
        or any point), in consistent units.
    cs : ExplicitCaseSet or SuperposedCaseSet
        The combination set, from :func:`build_case_set`.
    labels : bool
        Whether to write the ``_loaded`` texts; ``False`` leaves them empty (the
        design-action searches need values only, and the texts cost most).
    known : dict, optional
        Governing choice -> ``_loaded`` text, for this case set: shared by the calls
        over the blocks of rows of one beam, so that each distinct text is built once
        and held once.
    moving : MovingEffect, optional
        The worst effects of the moving cases (concentrated loads, trains) at each
        row (:mod:`envelope.moving`), added to every combination at its factor.
    kernel : bool
        Make the sums by the numba kernel (see :func:`column_extremes`).

    Returns
    -------
    Extremes
        Largest and smallest value per row, in the units of ``R``, with the
        governing combination (an index into ``cs.combinations``) and the loaded
        text of each.
    """
    vmax, vmin, gv = _extremes(R, cs, kernel, moving=moving)
    rows = np.arange(R.shape[0])
    c_max, c_min = np.argmax(vmax, axis=1), np.argmin(vmin, axis=1)
    if labels:
        known = {} if known is None else known
        t_max = _labels(cs, c_max, *_choices(R, cs, c_max, 1.0, gv), known)
        t_min = _labels(cs, c_min, *_choices(R, cs, c_min, -1.0, gv), known)
        if moving is not None and moving.n:
            t_max = _moving_labels(t_max, cs, c_max, moving, 1.0)
            t_min = _moving_labels(t_min, cs, c_min, moving, -1.0)
    else:
        t_max = t_min = np.full(R.shape[0], "", dtype=object)
    return Extremes(vmax[rows, c_max], vmin[rows, c_min], cs.col_combo[c_max],
                    cs.col_combo[c_min], t_max, t_min)


def _labels(cs: CaseSet, col: np.ndarray, units: np.ndarray, cells: np.ndarray | None,
            groups: np.ndarray, known: dict[bytes, str]) -> np.ndarray:
    """``_loaded`` text per row from its column, the chosen units and groups (and the
    loaded cells, where dead load depends on the pattern): an object array whose rows
    refer to one string per distinct choice, taken from ``known`` or built and added."""
    parts = [col[:, None].astype(np.int64).view(np.uint8), np.packbits(units, axis=1),
             np.packbits(groups, axis=1)]
    if cells is not None:
        parts.append(np.packbits(cells, axis=1))
    key = np.ascontiguousarray(np.concatenate(parts, axis=1))
    # one text per distinct (column, choice): rows as opaque byte strings, told apart by
    # a dict in order of first appearance (a few hundred rows: cheaper than a sort)
    keys = cast("list[bytes]", key.view(np.dtype((np.void, key.shape[1]))).ravel().tolist())
    distinct: dict[bytes, int] = {}
    inverse = np.fromiter((distinct.setdefault(k, len(distinct)) for k in keys),
                          dtype=np.intp, count=len(keys))
    first = np.empty(len(distinct), dtype=np.intp)
    first[inverse] = np.arange(len(keys))  # a row of each (equal keys: equal choices)
    text = np.empty(len(distinct), dtype=object)
    n_g = len(cs.cell_labels)
    present: dict[int, dict[str, set[int]]] = {}
    case_names = list(cs.case_names)
    unit_case = cs.unit_case
    for i, (raw, row) in enumerate(zip(distinct, first.tolist(), strict=True)):
        seen = known.get(raw)
        if seen is not None:
            text[i] = seen
            continue
        c = int(col[row])
        k = int(cs.col_combo[c])
        by_case: dict[str, list[bool]] = {n: [False] * n_g for n in cs.switchable[k]}
        if isinstance(cs, ExplicitCaseSet):
            for name, mask in cs.col_masks[c]:
                by_case[name] = list(mask)
        for name, cells_of in _cells_by_case(case_names, unit_case, cs.unit_cell,
                                             np.flatnonzero(units[row]), n_g):
            by_case[name] = cells_of
        for g in np.flatnonzero(groups[row]):
            by_case[cs.group_case[g]] = [bool(b) for b in cs.group_mask[g]]
        if cells is not None and isinstance(cs, SuperposedCaseSet):
            if c not in present:
                present[c] = _patterned_cells(cs, c)
            _mark_empty_cells(by_case, present[c], cells[row])
        text[i] = known[raw] = _label_text(cs.cell_labels, by_case, cs.all_patterned[k])
    return text[inverse]


def _patterned_cells(cs: SuperposedCaseSet, c: int) -> dict[str, set[int]]:
    """The cells where each patterned case of column ``c`` has load."""
    out: dict[str, set[int]] = {}
    for u in np.flatnonzero(cs.patterned[:, c] != 0.0):
        out.setdefault(cs.unit_case_name[u], set()).add(int(cs.unit_cell[u]))
    return out


def _mark_empty_cells(by_case: dict[str, list[bool]], present: dict[str, set[int]],
                      loaded: np.ndarray) -> None:
    """A cell loaded (dead load at its full factor) with none of its own patterned
    units carries a patterned case that has no load there: mark the first such case
    on that cell in ``by_case``."""
    pat = [n for n in by_case if n in present]
    for g in np.flatnonzero(loaded):
        if not any(by_case[n][g] for n in pat):
            empty = [n for n in pat if int(g) not in present[n]]
            if empty:
                by_case[empty[0]][int(g)] = True


def _moving_labels(text: np.ndarray, cs: CaseSet, col: np.ndarray, moving: MovingEffect,
                   sign: float) -> np.ndarray:
    """``text`` with the governing position of each moving case that acts in the row's
    column ("...; Lc at x=3.20 m")."""
    F = moving_factors(cs, moving.names)[:, col].T  # rows x moving
    worse = np.where(sign * F >= 0.0, moving.max if sign > 0 else moving.min,
                     moving.min if sign > 0 else moving.max)
    acts = (F != 0.0) & (worse != 0.0)
    out = text.copy()
    for row in np.flatnonzero(acts.any(axis=1)):
        parts = [moving.text(int(row), int(m), sign * float(np.sign(F[row, m])))
                 for m in np.flatnonzero(acts[row])]
        out[row] = "; ".join([str(text[row]), *parts])
    return out


def _cells_by_case(case_names: list[str], unit_case: np.ndarray, unit_cell: np.ndarray,
                   units: np.ndarray, n_g: int) -> list[tuple[str, list[bool]]]:
    """The cells of the unit cases ``units`` as a loaded-cell mask per case name (only
    the cases among them); ``unit_case`` indexes ``case_names`` per unit.  One array
    operation instead of a step per unit."""
    if not units.size:
        return []
    masks = np.zeros((len(case_names), n_g), dtype=bool)
    masks[unit_case[units], unit_cell[units]] = True
    present = np.zeros(len(case_names), dtype=bool)
    present[unit_case[units]] = True
    return [(case_names[i], masks[i].tolist()) for i in np.flatnonzero(present).tolist()]


def _label_text(cell_labels: tuple[str, ...], by_case: dict[str, list[bool]],
                all_patterned: bool = True) -> str:
    """``"all"`` with nothing switchable; one mask text where every switchable case is
    patterned and all share it; else each case with its own ("L: 1 3; W: none")."""
    if not by_case:
        return "all"
    masks = list(by_case.values())
    if all_patterned and all(m == masks[0] for m in masks):
        return loaded_label(cell_labels, masks[0], all(masks[0]))
    return "; ".join(f"{c}: {loaded_label(cell_labels, m, all(m))}" for c, m in by_case.items())
