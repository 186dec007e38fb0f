"""Envelopes as reductions over unit-case responses.

A combination set (strength or service) becomes coefficients over unit cases:

* explicit cases (patterning ``none`` and ``code``): a matrix ``coef``
  (units x cases); the envelope is max / min over ``R @ coef``;
* superposition (``exhaustive`` and ``segments``): per combination, ``fixed``
  coefficients always applied and ``patterned`` factors of the patterned unit
  cases.  Over every subset of cells, the largest value is
  ``R @ fixed + sum(max(R * patterned, 0))``, the smallest the same with
  ``min``: exact, with no subset ever enumerated.  With ``favourable_dead`` not
  1, a cell carrying no patterned load takes its dead load at ``favourable_dead``
  times the factor; the choice still separates cell by cell, so each cell takes
  the better of "unloaded" and "loaded by the best non-empty choice of its
  patterned unit cases".

``R`` is (rows x units) for one quantity: stations, support reactions, or any
points.  Every reduction returns the governing combination and the loaded
cells at each row.
"""

from __future__ import annotations

import json
from dataclasses import dataclass

import numpy as np

from envelope.loading import Cells, UnitCases
from envelope.model import Beam, Combination, Patterning
from envelope.patterns import arrangements, loaded_label


@dataclass(frozen=True, slots=True)
class CaseSet:
    """One combination set as coefficients over unit cases (see the module docstring)."""

    combinations: tuple[Combination, ...]
    cell_labels: tuple[str, ...]
    unit_case_name: tuple[str, ...]  # per unit
    unit_cell: np.ndarray  # per unit
    # explicit method
    coef: np.ndarray | None  # (units, cases)
    case_combo: np.ndarray | None  # (cases,)
    case_loaded: tuple[str, ...]
    # superposition method
    fixed: np.ndarray | None  # (units, combos)
    patterned: np.ndarray | None
    dead_var: np.ndarray | None
    favourable_dead: float

    @property
    def is_empty(self) -> bool:
        return not self.combinations

    @property
    def superposed(self) -> bool:
        return self.coef is None

    def case_rows(self, explicit: bool = False) -> list[dict[str, str]]:
        """What was run: one row per explicit case, or per combination ("any") for the
        superposition methods.  With ``explicit``, a superposed set also lists each
        combination with every span loaded ("all"), the cases of :meth:`explicit_cases`."""
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
        explicit cases: those run for ``none`` and ``code``; for the superposition
        methods, each combination with every cell loaded."""
        if not self.superposed:
            assert self.coef is not None and self.case_combo is not None
            return self.coef, self.case_combo, self.case_loaded
        assert self.fixed is not None and self.patterned is not None
        assert self.dead_var is not None
        coef = self.fixed + self.patterned + self.dead_var
        n_k = len(self.combinations)
        return coef, np.arange(n_k), ("all",) * n_k


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


def build_case_set(beam: Beam, combos: tuple[Combination, ...], units: UnitCases,
                   cells: Cells) -> CaseSet:
    """Coefficient data of ``combos`` over the unit cases, for the beam's patterning."""
    pat: Patterning = beam.patterning
    cases = beam.cases
    n_u, n_k = units.n_units, len(combos)
    factor = np.array([[c.factor(cases[i].name) for c in combos] for i in units.case]
                      ).reshape(n_u, n_k)
    is_patterned = np.array([cases[i].patterned for i in units.case], dtype=bool)
    is_dead = np.array([cases[i].kind == "dead" for i in units.case], dtype=bool)
    has_pattern = (np.abs(factor) * is_patterned[:, None]).sum(axis=0) > 0  # per combo
    unit_span = cells.span[units.cell]
    common = dict(combinations=combos, cell_labels=cells.label,
                  unit_case_name=tuple(cases[i].name for i in units.case),
                  unit_cell=units.cell, favourable_dead=pat.favourable_dead)

    sets = arrangements(pat, beam.n_spans)
    if sets is not None:
        every = frozenset(range(beam.n_spans))
        columns, combo_of, labels = [], [], []
        for k in range(n_k):
            for s in (sets if has_pattern[k] else (every,)):
                on = np.isin(unit_span, list(s))
                col = np.where(is_patterned, np.where(on, factor[:, k], 0.0), factor[:, k])
                col = np.where(is_dead & ~on, factor[:, k] * pat.favourable_dead, col)
                columns.append(col)
                combo_of.append(k)
                labels.append(loaded_label([str(j + 1) for j in sorted(s)],
                                           [True] * len(s), s == every))
        coef = np.array(columns).T.reshape(n_u, len(columns))
        return CaseSet(coef=coef, case_combo=np.array(combo_of, dtype=np.int64),
                       case_loaded=tuple(labels), fixed=None, patterned=None, dead_var=None,
                       **common)

    patterned = np.where(is_patterned[:, None], factor, 0.0)
    variable_dead = is_dead[:, None] & has_pattern[None, :] & (pat.favourable_dead != 1.0)
    dead_var = np.where(variable_dead, factor, 0.0)
    fixed = np.where(is_patterned[:, None] | variable_dead, 0.0, factor)
    return CaseSet(coef=None, case_combo=None, case_loaded=(), fixed=fixed,
                   patterned=patterned, dead_var=dead_var, **common)


def reduce(R: np.ndarray, cs: CaseSet, labels: bool = True) -> Extremes:
    """Envelope of the responses ``R`` (rows x units) over the case set; with
    ``labels=False`` the ``_loaded`` texts are left empty."""
    if cs.superposed:
        return _reduce_superposed(R, cs, labels)
    assert cs.coef is not None and cs.case_combo is not None
    values = R @ cs.coef
    i_max = np.argmax(values, axis=1)
    i_min = np.argmin(values, axis=1)
    rows = np.arange(R.shape[0])
    texts = np.array(cs.case_loaded, dtype=object)
    return Extremes(values[rows, i_max], values[rows, i_min], cs.case_combo[i_max],
                    cs.case_combo[i_min], texts[i_max], texts[i_min])


def _cell_onehot(cs: CaseSet) -> np.ndarray:
    n_g = len(cs.cell_labels)
    onehot = np.zeros((cs.unit_cell.size, n_g))
    onehot[np.arange(cs.unit_cell.size), cs.unit_cell] = 1.0
    return onehot


def _superposed_values(R: np.ndarray, cs: CaseSet, k: int, sign: float,
                       onehot: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Extreme (sign=+1: max, -1: min) of combination k over all subsets of cells, with
    the cell-by-cell choice that ``favourable_dead`` needs.

    Returns the value per row, the chosen patterned units (rows x units, bool) and
    the loaded cells (rows x cells, bool)."""
    assert cs.fixed is not None and cs.patterned is not None and cs.dead_var is not None
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


def superposed_extremes(R: np.ndarray, cs: CaseSet) -> tuple[np.ndarray, np.ndarray]:
    """Largest and smallest value of every combination over all subsets of cells:
    two (rows x combinations) arrays.

    Where dead load does not depend on the pattern, the sum of positive parts is
    sum(max(R_u p_u, 0)) = (R @ P + |R| @ |P|) / 2, since max(a, 0) = (a + |a|) / 2
    term by term: two matrix products, no loop over unit cases or combinations.
    Combinations with a pattern-dependent (favourable) dead load take the cell-by-cell
    choice of :func:`_superposed_values`."""
    assert cs.fixed is not None and cs.patterned is not None and cs.dead_var is not None
    base = R @ cs.fixed
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
    return vmax, vmin


def _choices(R: np.ndarray, cs: CaseSet, combo: np.ndarray,
             sign: float) -> tuple[np.ndarray, np.ndarray | None]:
    """The governing choice at each row for its own combination: chosen patterned
    units (rows x units) and, where dead load is pattern-dependent, loaded cells."""
    assert cs.patterned is not None and cs.dead_var is not None
    P = cs.patterned.T[combo]  # rows x units: each row's own combination
    units = (sign * R * P) > 0.0
    fav = np.flatnonzero(cs.dead_var.any(axis=0))
    if not fav.size:
        return units, None
    onehot = _cell_onehot(cs)
    cells = (units.astype(float) @ onehot) > 0
    for k in fav:
        rows = np.flatnonzero(combo == k)
        if rows.size:
            _, u_k, c_k = _superposed_values(R[rows], cs, int(k), sign, onehot)
            units[rows], cells[rows] = u_k, c_k
    return units, cells


def governing_coefficients(R: np.ndarray, cs: CaseSet) -> np.ndarray:
    """Coefficients over unit cases (rows x units) of the case that governs the maximum
    at each row: the explicit case, or the combination with its chosen subset of cells.
    The response of that one fixed case is smooth where the envelope is, so its
    derivative locates the envelope's extreme exactly."""
    if not cs.superposed:
        assert cs.coef is not None
        return cs.coef.T[np.argmax(R @ cs.coef, axis=1)]
    assert cs.fixed is not None and cs.patterned is not None and cs.dead_var is not None
    vmax, _ = superposed_extremes(R, cs)
    k = np.argmax(vmax, axis=1)
    units, cells = _choices(R, cs, k, 1.0)
    coef = cs.fixed.T[k] + cs.patterned.T[k] * units
    dead = cs.dead_var.T[k]
    if cells is not None:
        on = cells[:, cs.unit_cell]
        coef += np.where(on, dead, dead * cs.favourable_dead)
    return coef


def _reduce_superposed(R: np.ndarray, cs: CaseSet, labels: bool) -> Extremes:
    vmax, vmin = superposed_extremes(R, cs)
    rows = np.arange(R.shape[0])
    k_max, k_min = np.argmax(vmax, axis=1), np.argmin(vmin, axis=1)
    if labels:
        t_max = _labels(cs, k_max, *_choices(R, cs, k_max, 1.0))
        t_min = _labels(cs, k_min, *_choices(R, cs, k_min, -1.0))
    else:
        t_max = t_min = np.full(R.shape[0], "", dtype=object)
    return Extremes(vmax[rows, k_max], vmin[rows, k_min], k_max, k_min, t_max, t_min)


def _patterned_cases(cs: CaseSet) -> list[list[str]]:
    """Per combination, the names of its patterned cases (in declaration order)."""
    assert cs.patterned is not None
    out = []
    for k in range(len(cs.combinations)):
        names = [cs.unit_case_name[u] for u in np.flatnonzero(cs.patterned[:, k] != 0.0)]
        out.append(list(dict.fromkeys(names)))
    return out


def _labels(cs: CaseSet, combo: np.ndarray, units: np.ndarray,
            cells: np.ndarray | None) -> np.ndarray:
    """``_loaded`` text per row from the chosen units (and loaded cells, where dead load
    depends on the pattern)."""
    parts = [combo[:, None].astype(np.uint16).view(np.uint8), np.packbits(units, axis=1)]
    if cells is not None:
        parts.append(np.packbits(cells, axis=1))
    key = np.ascontiguousarray(np.concatenate(parts, axis=1))
    # one text per distinct (combination, choice): rows as opaque byte strings
    raw = key.view(np.dtype((np.void, key.shape[1]))).ravel()
    _, first, inverse = np.unique(raw, return_index=True, return_inverse=True)
    text = np.empty(first.size, dtype=object)
    n_g = len(cs.cell_labels)
    pat_cases = _patterned_cases(cs)
    assert cs.patterned is not None
    present = [{c: {int(cs.unit_cell[u]) for u in np.flatnonzero(cs.patterned[:, k] != 0.0)
                    if cs.unit_case_name[u] == c} for c in pat_cases[k]}
               for k in range(len(cs.combinations))]
    case_names = list(dict.fromkeys(cs.unit_case_name))
    unit_case = np.array([case_names.index(n) for n in cs.unit_case_name], dtype=np.int64)
    for i, row in enumerate(first):
        k = int(combo[row])
        by_case: dict[str, list[bool]] = {c: [False] * n_g for c in pat_cases[k]}
        for name, cells_of in _cells_by_case(case_names, unit_case, cs.unit_cell,
                                             np.flatnonzero(units[row]), n_g):
            by_case[name] = cells_of
        if cells is not None:
            # a cell loaded with none of its own patterned units carries a patterned case
            # that has no load there (so its dead load takes the full factor)
            for g in np.flatnonzero(cells[row]):
                if not any(mask[g] for mask in by_case.values()):
                    empty = [c for c in by_case if int(g) not in present[k][c]]
                    if empty:
                        by_case[empty[0]][int(g)] = True
        text[i] = _label_text(cs.cell_labels, by_case)
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


def _label_text(cell_labels: tuple[str, ...], by_case: dict[str, list[bool]]) -> str:
    if not by_case:
        return "all"
    masks = list(by_case.values())
    if all(m == masks[0] for m in masks):
        return loaded_label(cell_labels, masks[0], all(masks[0]))
    return "; ".join(f"{c}: {loaded_label(cell_labels, m, all(m))}" for c, m in by_case.items())
