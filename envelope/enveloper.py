"""Envelopes as reductions over unit-case responses.

A combination set (strength or service) becomes *columns* of coefficients over unit
cases.  A column is one combination under one arrangement of its patterned cases:

* explicit arrangements (patterning ``none`` and ``code``): one column per
  combination and loaded span set;
* superposition (``exhaustive`` and ``segments``): one column per combination,
  whose ``patterned`` factors put each patterned unit case (one case on one
  cell) on or off independently.

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
points.  Every reduction returns the governing combination and, as ``_loaded``
text, which switchable cases act and where.
"""

from __future__ import annotations

import json
from dataclasses import dataclass

import numpy as np

from envelope.loading import Cells, UnitCases
from envelope.model import Beam, Combination, Patterning
from envelope.patterns import arrangements, loaded_label

#: A case's loaded cells, by case name.
Masks = tuple[tuple[str, tuple[bool, ...]], ...]


@dataclass(frozen=True, slots=True)
class CaseSet:
    """One combination set as columns of coefficients over unit cases (see the module
    docstring).  Shapes: units x columns for ``fixed``, ``patterned``, ``dead_var``;
    units x groups for ``groups``."""

    combinations: tuple[Combination, ...]
    cell_labels: tuple[str, ...]
    unit_case_name: tuple[str, ...]  # per unit
    unit_cell: np.ndarray  # per unit
    superposed: bool
    col_combo: np.ndarray  # (columns,) combination index
    col_cells: np.ndarray  # (columns, cells) bool: the arrangement's loaded cells
    col_masks: tuple[Masks, ...]  # per column: cells of its patterned cases always acting
    fixed: np.ndarray
    patterned: np.ndarray  # per-unit on/off factors (superposition), else zeros
    dead_var: np.ndarray  # dead factors that depend on the pattern (superposition)
    groups: np.ndarray  # whole-case on/off factors, each distinct vector once
    group_src: np.ndarray  # (groups,) column of ``groups`` holding each group's factors
    group_col: np.ndarray  # (groups,) column of each group, ascending
    group_case: tuple[str, ...]  # case name of each group
    group_mask: np.ndarray  # (groups, cells) bool: where the group's case acts when on
    switchable: tuple[tuple[str, ...], ...]  # per combination: cases named in _loaded
    all_patterned: tuple[bool, ...]  # per combination: every switchable case patterned
    favourable_dead: float

    @property
    def is_empty(self) -> bool:
        return not self.combinations

    @property
    def n_columns(self) -> int:
        return int(self.col_combo.size)

    def membership(self) -> np.ndarray:
        """(groups, columns) 0/1 matrix: which column each group belongs to."""
        m = np.zeros((self.group_col.size, self.n_columns))
        m[np.arange(self.group_col.size), self.group_col] = 1.0
        return m

    def _column_text(self, c: int) -> str:
        cells = self.col_cells[c]
        return loaded_label(self.cell_labels, list(cells), bool(cells.all()))

    def case_rows(self, explicit: bool = False) -> list[dict[str, str]]:
        """What was run: one row per explicit case, or per combination ("any") for the
        superposition methods.  With ``explicit``, a superposed set also lists each
        combination with every span loaded ("all"), the cases of :meth:`explicit_cases`.
        Each row gives the combination, the loaded text and the factors (JSON)."""
        rows = []
        if self.superposed:
            rows = [{"combination": c.name, "loaded": "any",
                     "factors": json.dumps(dict(c.factors))} for c in self.combinations]
            if not explicit:
                return rows
        _, combo, loaded = self.explicit_cases()
        for k, text in zip(combo, loaded, strict=True):
            c = self.combinations[int(k)]
            rows.append({"combination": c.name, "loaded": text,
                         "factors": json.dumps(dict(c.factors))})
        return rows

    def explicit_cases(self) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
        """Coefficients (units x cases), combination index and ``loaded`` text of the
        explicit cases, every case of the combination acting: the arrangements run for
        ``none`` and ``code``; for the superposition methods, each combination with
        every cell loaded."""
        coef = (self.fixed + self.patterned + self.dead_var
                + self.groups[:, self.group_src] @ self.membership())
        if self.superposed:
            return coef, self.col_combo, ("all",) * self.n_columns
        return coef, self.col_combo, tuple(self._column_text(c) for c in range(self.n_columns))


@dataclass(frozen=True, slots=True)
class Extremes:
    """Envelope of one quantity at each row: values, governing combination, loaded cells."""

    max: np.ndarray
    min: np.ndarray
    max_combo: np.ndarray  # int index into CaseSet.combinations
    min_combo: np.ndarray
    max_loaded: np.ndarray  # object array of str
    min_loaded: np.ndarray

    @staticmethod
    def concat(parts: list[Extremes]) -> Extremes:
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


def build_case_set(beam: Beam, combos: tuple[Combination, ...], units: UnitCases,
                   cells: Cells, favourable_dead: float | None = None) -> CaseSet:
    """Coefficient data of ``combos`` over the unit cases, for the beam's patterning.
    ``favourable_dead`` defaults to the patterning's (give 1.0 for service sets)."""
    pat: Patterning = beam.patterning
    fav = pat.favourable_dead if favourable_dead is None else favourable_dead
    cases = beam.cases
    n_u, n_k, n_g = units.n_units, len(combos), cells.n
    names = [cases[i].name for i in units.case]
    factor = np.array([[c.factor(n) for c in combos] for n in names]).reshape(n_u, n_k)
    is_patterned = np.array([cases[i].patterned for i in units.case], dtype=bool)
    is_dead = np.array([cases[i].kind == "dead" for i in units.case], dtype=bool)
    optional = np.array([[n in c.optional for c in combos] for n in names],
                        dtype=bool).reshape(n_u, n_k)
    has_pattern = (np.abs(factor) * is_patterned[:, None]).sum(axis=0) > 0  # per combo
    unit_span = cells.span[units.cell]
    pattern_of = {c.name: c.patterned for c in cases}
    switchable = tuple(_switchable(c, names, pattern_of) for c in combos)
    all_patterned = tuple(all(pattern_of[n] for n in sw) for sw in switchable)

    cols: dict[str, list[np.ndarray]] = {"fixed": [], "patterned": [], "dead": [],
                                         "cells": []}
    col_combo: list[int] = []
    col_masks: list[Masks] = []
    distinct: list[np.ndarray] = []  # each distinct group vector once
    known: dict[bytes, int] = {}
    group_src: list[int] = []
    group_col: list[int] = []
    group_case: list[str] = []
    group_mask: list[np.ndarray] = []

    of_case = {n: np.array([m == n for m in names], dtype=bool) for n in set(names)}

    def add_groups(k: int, col: int, select: np.ndarray, mask: np.ndarray) -> None:
        """One group per case among the units ``select``: that case's factors there."""
        for name in switchable[k]:
            part = np.where(select & of_case[name], factor[:, k], 0.0)
            if np.any(part != 0.0):
                src = known.setdefault(part.tobytes(), len(distinct))
                if src == len(distinct):
                    distinct.append(part)
                group_src.append(src)
                group_col.append(col)
                group_case.append(name)
                group_mask.append(mask)

    every_cell = np.ones(n_g, dtype=bool)
    sets = arrangements(pat, beam.n_spans)
    superposed = sets is None
    whole = ~is_patterned[:, None] & optional  # non-patterned cases acting or not
    if superposed:
        for k in range(n_k):
            variable_dead = is_dead & has_pattern[k] & (fav != 1.0)
            cols["patterned"].append(np.where(is_patterned, factor[:, k], 0.0))
            cols["dead"].append(np.where(variable_dead, factor[:, k], 0.0))
            cols["fixed"].append(np.where(is_patterned | variable_dead | whole[:, k], 0.0,
                                          factor[:, k]))
            cols["cells"].append(every_cell)
            col_combo.append(k)
            col_masks.append(())
            add_groups(k, k, whole[:, k], every_cell)
    else:
        every = frozenset(range(beam.n_spans))
        assert sets is not None  # explicit arrangements: not superposed
        for k in range(n_k):
            spans = sets if has_pattern[k] else (every,)
            pat_k = is_patterned & (factor[:, k] != 0.0)
            if has_pattern[k] and np.all(optional[pat_k, k]):
                spans = (*spans, frozenset())  # no patterned case acting at all
            for s in spans:
                col = len(col_combo)
                span_on = np.zeros(beam.n_spans, dtype=bool)
                span_on[list(s)] = True
                on, cell_on = span_on[unit_span], span_on[cells.span]
                f = np.where(is_patterned, np.where(on, factor[:, k], 0.0), factor[:, k])
                f = np.where(is_dead & ~on, factor[:, k] * fav, f)
                f = np.where(whole[:, k], 0.0, f)
                cols["fixed"].append(f)
                cols["patterned"].append(np.zeros(n_u))
                cols["dead"].append(np.zeros(n_u))
                cols["cells"].append(cell_on)
                col_combo.append(k)
                col_masks.append(tuple((n, tuple(bool(b) for b in cell_on))
                                       for n in switchable[k] if pattern_of[n]))
                add_groups(k, col, whole[:, k], every_cell)

    def stack(parts: list[np.ndarray], rows: int) -> np.ndarray:
        return np.array(parts).T.reshape(rows, len(parts)) if parts else np.zeros((rows, 0))

    return CaseSet(
        combinations=combos, cell_labels=cells.label, unit_case_name=tuple(names),
        unit_cell=units.cell, superposed=superposed,
        col_combo=np.array(col_combo, dtype=np.int64),
        col_cells=np.array(cols["cells"], dtype=bool).reshape(len(col_combo), n_g),
        col_masks=tuple(col_masks),
        fixed=stack(cols["fixed"], n_u), patterned=stack(cols["patterned"], n_u),
        dead_var=stack(cols["dead"], n_u), groups=stack(distinct, n_u),
        group_src=np.array(group_src, dtype=np.int64),
        group_col=np.array(group_col, dtype=np.int64), group_case=tuple(group_case),
        group_mask=np.array(group_mask, dtype=bool).reshape(len(group_col), n_g),
        switchable=switchable, all_patterned=all_patterned, favourable_dead=fav)


def _cell_onehot(cs: CaseSet) -> np.ndarray:
    n_g = len(cs.cell_labels)
    onehot = np.zeros((cs.unit_cell.size, n_g))
    onehot[np.arange(cs.unit_cell.size), cs.unit_cell] = 1.0
    return onehot


def _superposed_values(R: np.ndarray, cs: CaseSet, k: int, sign: float,
                       onehot: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Extreme (sign=+1: max, -1: min) of column k over all subsets of cells, fixed and
    patterned parts, with the cell-by-cell choice that ``favourable_dead`` needs.

    Returns the value per row, the chosen patterned units (rows x units, bool) and
    the loaded cells (rows x cells, bool)."""
    X = sign * (R * cs.patterned[:, k])  # the worse direction made positive
    take = X > 0.0
    base = R @ cs.fixed[:, k]
    dead_k = cs.dead_var[:, k]
    # each cell chooses "unloaded" (fav * A) or "loaded" (A + best non-empty choice)
    A = sign * ((R * dead_k) @ onehot)  # rows x cells, loaded dead effect
    is_pat = cs.patterned[:, k] != 0.0
    pos = np.where(take, X, 0.0) @ onehot
    any_pos = (take.astype(float) @ onehot) > 0
    n_pat_cases = len({cs.unit_case_name[u] for u in np.flatnonzero(is_pat)})
    n_pat_in_cell = is_pat.astype(float) @ onehot
    # best single patterned unit per cell where nothing helps (may be negative)
    Xm = np.where(is_pat, X, -np.inf)
    best_single = np.full(A.shape, -np.inf)
    for g in range(onehot.shape[1]):  # cells: few compared with rows x units
        cols = np.flatnonzero(onehot[:, g] > 0)
        if cols.size:
            best_single[:, g] = Xm[:, cols].max(axis=1)
    can_zero = n_pat_in_cell < n_pat_cases  # some patterned case puts nothing here
    best = np.where(any_pos, pos, np.where(can_zero[None, :], 0.0, best_single))
    loaded_val = A + best
    unloaded_val = cs.favourable_dead * A
    loaded = loaded_val > unloaded_val
    value = base + sign * np.where(loaded, loaded_val, unloaded_val).sum(axis=1)
    # chosen units: positives in loaded cells, else the single best unit there
    single = (Xm == best_single[:, cs.unit_cell]) & ~any_pos[:, cs.unit_cell] & ~can_zero[
        cs.unit_cell][None, :]
    chosen = (take | single) & loaded[:, cs.unit_cell] & is_pat[None, :]
    return value, chosen, loaded


def column_extremes(R: np.ndarray, cs: CaseSet) -> tuple[np.ndarray, np.ndarray]:
    """Largest and smallest value of every column over all subsets of its on/off parts:
    two (rows x columns) arrays.

    For the per-unit parts, where dead load does not depend on the pattern, the sum of
    positive parts is sum(max(R_u p_u, 0)) = (R @ P + |R| @ |P|) / 2, since
    max(a, 0) = (a + |a|) / 2 term by term: two matrix products.  Groups add
    max(R @ G, 0) summed by column (one more product).  Columns with a
    pattern-dependent (favourable) dead load take the cell-by-cell choice of
    :func:`_superposed_values`."""
    base = R @ cs.fixed
    if cs.superposed:
        signed = R @ cs.patterned
        spread = np.abs(R) @ np.abs(cs.patterned)
        vmax = base + 0.5 * (signed + spread)
        vmin = base + 0.5 * (signed - spread)
        fav = np.flatnonzero(cs.dead_var.any(axis=0))
        if fav.size:
            onehot = _cell_onehot(cs)
            for k in fav:
                vmax[:, k] = _superposed_values(R, cs, int(k), 1.0, onehot)[0]
                vmin[:, k] = _superposed_values(R, cs, int(k), -1.0, onehot)[0]
    else:
        vmax, vmin = base, base.copy()
    if cs.group_col.size:
        gv = (R @ cs.groups)[:, cs.group_src]
        # groups are stored column by column: sum each column's run of groups
        cols, starts = np.unique(cs.group_col, return_index=True)
        vmax[:, cols] += np.add.reduceat(np.maximum(gv, 0.0), starts, axis=1)
        vmin[:, cols] += np.add.reduceat(np.minimum(gv, 0.0), starts, axis=1)
    return vmax, vmin


def superposed_extremes(R: np.ndarray, cs: CaseSet) -> tuple[np.ndarray, np.ndarray]:
    """Largest and smallest value of every combination (rows x combinations): the
    extreme over its columns (its arrangements) of :func:`column_extremes`."""
    vmax, vmin = column_extremes(R, cs)
    n_k = len(cs.combinations)
    out_max = np.full((R.shape[0], n_k), -np.inf)
    out_min = np.full((R.shape[0], n_k), np.inf)
    for c in range(cs.n_columns):
        k = int(cs.col_combo[c])
        out_max[:, k] = np.maximum(out_max[:, k], vmax[:, c])
        out_min[:, k] = np.minimum(out_min[:, k], vmin[:, c])
    return out_max, out_min


def _choices(R: np.ndarray, cs: CaseSet, col: np.ndarray, sign: float
             ) -> tuple[np.ndarray, np.ndarray | None, np.ndarray]:
    """The governing choice at each row for its own column: chosen patterned units
    (rows x units), where dead load is pattern-dependent the loaded cells, and the
    groups acting (rows x groups)."""
    P = cs.patterned.T[col]  # rows x units: each row's own column
    units = (sign * R * P) > 0.0
    groups = np.zeros((R.shape[0], cs.group_col.size), dtype=bool)
    if cs.group_col.size:
        gv = (R @ cs.groups)[:, cs.group_src]
        groups = ((sign * gv) > 0.0) & (cs.group_col[None, :] == col[:, None])
    fav = np.flatnonzero(cs.dead_var.any(axis=0)) if cs.superposed else np.zeros(0, int)
    if not fav.size:
        return units, None, groups
    onehot = _cell_onehot(cs)
    cells = (units.astype(float) @ onehot) > 0
    for k in fav:
        rows = np.flatnonzero(col == k)
        if rows.size:
            _, u_k, c_k = _superposed_values(R[rows], cs, int(k), sign, onehot)
            units[rows], cells[rows] = u_k, c_k
    return units, cells, groups


def governing_coefficients(R: np.ndarray, cs: CaseSet) -> np.ndarray:
    """Coefficients over unit cases (rows x units) of the case that governs the maximum
    at each row: the column with its chosen subset of on/off parts.  The response of
    that one fixed case is smooth where the envelope is, so its derivative locates the
    envelope's extreme exactly."""
    vmax, _ = column_extremes(R, cs)
    col = np.argmax(vmax, axis=1)
    units, cells, groups = _choices(R, cs, col, 1.0)
    coef = (cs.fixed.T[col] + cs.patterned.T[col] * units
            + groups.astype(float) @ cs.groups[:, cs.group_src].T)
    dead = cs.dead_var.T[col]
    if cells is not None:
        on = cells[:, cs.unit_cell]
        coef += np.where(on, dead, dead * cs.favourable_dead)
    return coef


def reduce(R: np.ndarray, cs: CaseSet, labels: bool = True) -> Extremes:
    """Envelope of the responses ``R`` (rows x units) over the case set; with
    ``labels=False`` the ``_loaded`` texts are left empty."""
    vmax, vmin = column_extremes(R, cs)
    rows = np.arange(R.shape[0])
    c_max, c_min = np.argmax(vmax, axis=1), np.argmin(vmin, axis=1)
    if labels:
        t_max = _labels(cs, c_max, *_choices(R, cs, c_max, 1.0))
        t_min = _labels(cs, c_min, *_choices(R, cs, c_min, -1.0))
    else:
        t_max = t_min = np.full(R.shape[0], "", dtype=object)
    return Extremes(vmax[rows, c_max], vmin[rows, c_min], cs.col_combo[c_max],
                    cs.col_combo[c_min], t_max, t_min)


def _labels(cs: CaseSet, col: np.ndarray, units: np.ndarray, cells: np.ndarray | None,
            groups: np.ndarray) -> np.ndarray:
    """``_loaded`` text per row from its column, the chosen units and groups (and the
    loaded cells, where dead load depends on the pattern)."""
    parts = [col[:, None].astype(np.int64).view(np.uint8), np.packbits(units, axis=1),
             np.packbits(groups, axis=1)]
    if cells is not None:
        parts.append(np.packbits(cells, axis=1))
    key = np.ascontiguousarray(np.concatenate(parts, axis=1))
    # one text per distinct (column, choice): rows as opaque byte strings
    raw = key.view(np.dtype((np.void, key.shape[1]))).ravel()
    _, first, inverse = np.unique(raw, return_index=True, return_inverse=True)
    text = np.empty(first.size, dtype=object)
    n_g = len(cs.cell_labels)
    present: dict[int, dict[str, set[int]]] = {}
    case_names = list(dict.fromkeys(cs.unit_case_name))
    unit_case = np.array([case_names.index(n) for n in cs.unit_case_name], dtype=np.int64)
    for i, row in enumerate(first):
        c = int(col[row])
        k = int(cs.col_combo[c])
        by_case: dict[str, list[bool]] = {n: [False] * n_g for n in cs.switchable[k]}
        for name, mask in cs.col_masks[c]:
            by_case[name] = list(mask)
        for name, cells_of in _cells_by_case(case_names, unit_case, cs.unit_cell,
                                             np.flatnonzero(units[row]), n_g):
            by_case[name] = cells_of
        for g in np.flatnonzero(groups[row]):
            by_case[cs.group_case[g]] = [bool(b) for b in cs.group_mask[g]]
        if cells is not None:
            if c not in present:
                is_pat = cs.patterned[:, c] != 0.0
                present[c] = {}
                for u in np.flatnonzero(is_pat):
                    present[c].setdefault(cs.unit_case_name[u], set()).add(
                        int(cs.unit_cell[u]))
            pat = [n for n in by_case if n in present[c]]
            # a cell loaded with none of its own patterned units carries a patterned case
            # that has no load there (so its dead load takes the full factor)
            for g in np.flatnonzero(cells[row]):
                if not any(by_case[n][g] for n in pat):
                    empty = [n for n in pat if int(g) not in present[c][n]]
                    if empty:
                        by_case[empty[0]][int(g)] = True
        text[i] = _label_text(cs.cell_labels, by_case, cs.all_patterned[k])
    return text[inverse.ravel()]


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
