"""Live-load arrangements as data: which cells a patterned case loads.

``none`` and ``code`` give explicit arrangements (sets of loaded spans);
``exhaustive`` and ``segments`` give none: the enveloper takes every subset of
cells at once by superposition (see :mod:`envelope.enveloper`).
"""

from __future__ import annotations

from itertools import compress

from envelope.model import Patterning


def code_arrangements(n_spans: int) -> tuple[frozenset[int], ...]:
    """Loaded span sets (0-based) for ``code`` patterning, in this order:

    * all spans loaded (ACI 318-19 6.4.2, and the UK National Annex to EN 1992-1-1);
    * alternate spans: odd set, even set (ACI 318-19 6.4.2(a) for maximum positive
      moment; EN 1992-1-1 5.1.3(1)P note (a));
    * each pair of adjacent spans (ACI 318-19 6.4.2(b) for maximum negative moment at a
      support; EN 1992-1-1 5.1.3(1)P note (b)).

    Duplicates (for one or two spans) are dropped, keeping the first.
    """
    every = frozenset(range(n_spans))
    sets = [every, frozenset(range(0, n_spans, 2)), frozenset(range(1, n_spans, 2))]
    sets += [frozenset({j, j + 1}) for j in range(n_spans - 1)]
    out: list[frozenset[int]] = []
    for s in sets:
        if s and s not in out:
            out.append(s)
    return tuple(out)


def arrangements(patterning: Patterning, n_spans: int) -> tuple[frozenset[int], ...] | None:
    """Explicit loaded-span sets (0-based span indices) for ``none`` (every span) and
    ``code`` (:func:`code_arrangements`), or None for the superposition methods,
    whose every subset of cells the enveloper takes at once."""
    if patterning.method == "none":
        return (frozenset(range(n_spans)),)
    if patterning.method == "code":
        return code_arrangements(n_spans)
    return None


def loaded_label(cells: list[str] | tuple[str, ...], loaded: list[bool], every: bool) -> str:
    """The contract's ``_loaded`` text: ``"all"``, ``"1 3 5"``, ``"2.1 2.3"`` or ``"none"``.

    ``cells`` are the cell labels (1-based spans, ``"span.segment"`` with segments),
    ``loaded`` one flag per cell and ``every`` whether the whole beam is loaded (then
    ``"all"``, whatever the flags).  ValueError when the flags and cells differ in
    number."""
    if every:
        return "all"
    if len(cells) != len(loaded):
        raise ValueError(f"{len(loaded)} flags for {len(cells)} cells")
    text = " ".join(compress(cells, loaded))
    return text or "none"
