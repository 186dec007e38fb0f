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
    """Extreme (sign=+1: max, -1: min) of combination k over all subsets of cells.

    Returns the value per row, the chosen patterned units (rows x units, bool) and
    the loaded cells (rows x cells, bool)."""
    assert cs.fixed is not None and cs.patterned is not None and cs.dead_var is not None
    X = sign * (R * cs.patterned[:, k])  # the worse direction made positive
    take = X > 0.0
    base = R @ cs.fixed[:, k]
    dead_k = cs.dead_var[:, k]
    if not dead_k.any():
        value = base + sign * np.where(take, X, 0.0).sum(axis=1)
        return value, take, (take.astype(float) @ onehot) > 0
    # favourable dead: each cell chooses "unloaded" (fav * A) or "loaded" (A + best)
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


def _reduce_superposed(R: np.ndarray, cs: CaseSet, labels: bool) -> Extremes:
    n_rows, n_k = R.shape[0], len(cs.combinations)
    onehot = _cell_onehot(cs)
    out = {}
    for sign, name in ((1.0, "max"), (-1.0, "min")):
        best_val = np.full(n_rows, -np.inf)
        best_k = np.zeros(n_rows, dtype=np.int64)
        best_units = np.zeros((n_rows, R.shape[1]), dtype=bool)
        best_cells = np.zeros((n_rows, onehot.shape[1]), dtype=bool)
        for k in range(n_k):
            val, units, cells = _superposed_values(R, cs, k, sign, onehot)
            val = sign * val
            better = val > best_val
            best_val = np.where(better, val, best_val)
            best_k = np.where(better, k, best_k)
            best_units[better] = units[better]
            best_cells[better] = cells[better]
        text = (_labels(cs, best_k, best_units, best_cells) if labels
                else np.full(n_rows, "", dtype=object))
        out[name] = (sign * best_val, best_k, text)
    return Extremes(out["max"][0], out["min"][0], out["max"][1], out["min"][1],
                    out["max"][2], out["min"][2])


def _labels(cs: CaseSet, combo: np.ndarray, units: np.ndarray,
            cells: np.ndarray) -> np.ndarray:
    """``_loaded`` text per row from the chosen units and loaded cells."""
    assert cs.patterned is not None
    key = np.concatenate([combo[:, None].astype(np.uint8), np.packbits(units, axis=1),
                          np.packbits(cells, axis=1)], axis=1) if units.size else combo[:, None]
    uniq, inverse = np.unique(key, axis=0, return_inverse=True)
    first = np.zeros(uniq.shape[0], dtype=np.int64)
    first[inverse.ravel()[::-1]] = np.arange(key.shape[0])[::-1]
    text = np.empty(uniq.shape[0], dtype=object)
    n_g = len(cs.cell_labels)
    for i, row in enumerate(first):
        k = int(combo[row])
        pat_cases = [name for name in dict.fromkeys(cs.unit_case_name)
                     if cs.combinations[k].factor(name) != 0.0
                     and any(cs.patterned[u, k] != 0.0 for u in range(len(cs.unit_case_name))
                             if cs.unit_case_name[u] == name)]
        by_case: dict[str, list[bool]] = {c: [False] * n_g for c in pat_cases}
        for u in np.flatnonzero(units[row]):
            by_case[cs.unit_case_name[u]][int(cs.unit_cell[u])] = True
        if cs.dead_var is not None and cs.dead_var[:, k].any():
            # a loaded cell may carry a patterned case with no load of its own there
            for c in by_case:
                by_case[c] = [a or (b and not any(by_case[o][g] for o in by_case))
                              for g, (a, b) in enumerate(zip(by_case[c], cells[row],
                                                             strict=True))]
        text[i] = _label_text(cs.cell_labels, by_case)
    return text[inverse.ravel()]


def _label_text(cell_labels: tuple[str, ...], by_case: dict[str, list[bool]]) -> str:
    if not by_case:
        return "all"
    masks = list(by_case.values())
    if all(m == masks[0] for m in masks):
        return loaded_label(cell_labels, masks[0], all(masks[0]))
    return "; ".join(f"{c}: {loaded_label(cell_labels, m, all(m))}" for c, m in by_case.items())
