"""Small shared helpers for tests: build case-file TOML texts, solve them, and read
per-case reactions and responses.

Everything here is in the engine's consistent units (SI: m, kN; the texts use unit
strings such as ``"1 kN/m^2"`` where a plain number would be read in MPa or mm^4).
Sign conventions are the case-format contract's: loads downward positive, applied
point moments clockwise positive, reactions upward positive, shear = sum of upward
forces left of the point, moment sagging positive, deflection downward positive,
rotation = d(deflection)/dx.
"""

from __future__ import annotations

import importlib.util
import json
import tomllib
from collections.abc import Mapping, Sequence
from pathlib import Path
from types import ModuleType
from typing import Any

import numpy as np

from envelope.analysis import analyse
from envelope.casefile import parse_case
from envelope.model import Beam
from envelope.recovery import Response, make_points
from envelope.solved import Solved, case_responses, solve_beam

#: Section giving EI = 1 kN*m^2 (E and I as unit strings, so no MPa / mm^4 scaling).
UNIT_EI = {"E": "1 kN/m^2", "I": "1 m^4"}


def toml_value(value: Any) -> str:
    """One TOML value: numbers (float repr round-trips exactly), strings, lists, inline tables."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int | float):
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, Mapping):
        return "{ " + ", ".join(f"{k} = {toml_value(v)}" for k, v in value.items()) + " }"
    if isinstance(value, Sequence):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    raise TypeError(f"no TOML form for {value!r}")


def _table(header: str, items: Mapping[str, Any]) -> str:
    return header + "\n" + "".join(f"{k} = {toml_value(v)}\n" for k, v in items.items())


def beam_text(
    spans: Sequence[float | Mapping[str, Any]],
    supports: Sequence[str | Mapping[str, Any]],
    loads: Sequence[Mapping[str, Any]],
    *,
    section: Mapping[str, Any] = UNIT_EI,
    cases: Mapping[str, str | Mapping[str, Any]] | None = None,
    units: str = "SI",
    combinations: Mapping[str, Any] | None = None,
    patterning: Mapping[str, Any] | None = None,
    output: Mapping[str, Any] | None = None,
    design: Mapping[str, Any] | None = None,
    top: Mapping[str, Any] | None = None,
) -> str:
    """A whole case file (SI unless ``units`` says ``"US"``).

    ``spans``: lengths in m, or tables of span keys (a ``sections`` entry is a list of
    stretch tables, written as ``[[spans.sections]]``).  ``supports``: a type name or a
    support table.  ``loads``: load tables; ``case`` defaults to ``"D"``.  ``cases``:
    name -> kind, or name -> table of case keys; default one dead case ``D``.
    ``combinations``: the ``[combinations]`` table, default none for strength and the
    characteristic service set, so every case can be read with ``case_responses``.
    ``patterning``, ``output`` and ``design``: those tables, left out when None.
    ``top``: other top-level keys (``id``, ``title``), written after ``units``.
    """
    cases = {"D": "dead"} if cases is None else cases
    if combinations is None:
        combinations = {"strength": "none", "service": "characteristic"}
    head = "".join(f"{k} = {toml_value(v)}\n" for k, v in {"units": units, **(top or {})}.items())
    parts = [head, _table("[section]", section)]
    for sp in spans:
        table = {"length": sp} if isinstance(sp, int | float) else dict(sp)
        stretches = table.pop("sections", ())
        parts.append(_table("[[spans]]", table))
        parts.extend(_table("[[spans.sections]]", st) for st in stretches)
    for su in supports:
        parts.append(_table("[[supports]]", {"type": su} if isinstance(su, str) else su))
    parts.append(_table("[cases]", {name: {"kind": kind} if isinstance(kind, str) else kind
                                    for name, kind in cases.items()}))
    for ld in loads:
        parts.append(_table("[[loads]]", {"case": "D", **ld}))
    parts.append(_table("[combinations]", combinations))
    for header, table in (("[patterning]", patterning), ("[output]", output),
                          ("[design]", design)):
        if table is not None:
            parts.append(_table(header, table))
    return "\n".join(parts)


def parse_text(text: str, name: str = "test.toml") -> Beam:
    return parse_case(tomllib.loads(text), name)


def solve_text(text: str) -> Solved:
    """Parse and solve a case-file text."""
    return solve_beam(parse_text(text))



def case_reactions(solved: Solved) -> np.ndarray:
    """(n_joints, n_cases) upward support reactions of each load case on every span."""
    return solved.solution.reaction @ solved.per_case


def case_reaction_moments(solved: Solved) -> np.ndarray:
    """(n_joints, n_cases) support moment reactions on the beam (counter-clockwise positive,
    the solver's convention)."""
    return solved.solution.reaction_moment @ solved.per_case


def responses(solved: Solved, span: Sequence[int] | np.ndarray | int,
              x_span: Sequence[float] | np.ndarray | float,
              right: Sequence[bool] | np.ndarray | bool = True) -> Response:
    """Each load case at the given points (span 0-based, span-local x; ``right=False``
    for the left-side limit).  Scalars broadcast."""
    x_arr = np.atleast_1d(np.asarray(x_span, dtype=float))
    span_arr = np.broadcast_to(np.asarray(span, dtype=np.int64), x_arr.shape)
    right_arr = np.broadcast_to(np.asarray(right, dtype=bool), x_arr.shape)
    return case_responses(solved, make_points(solved.beam, span_arr, x_arr, right_arr))


def peak(solved: Solved, span: int, quantity: str, case: int = 0, sign: float = 1.0,
         n: int = 20001, zooms: int = 4) -> tuple[float, float]:
    """(x, value) of the largest ``sign * quantity`` inside ``span``: a dense search over
    ``n`` equally spaced points, then ``zooms`` rounds of a dense search of the bracket
    round the best point (so the position is found far below the first grid step)."""
    length = solved.beam.spans[span].length
    lo, hi = 0.0, length
    for _ in range(zooms + 1):
        xs = np.linspace(lo, hi, n)
        vals = sign * getattr(responses(solved, span, xs), quantity)[:, case]
        i = int(np.argmax(vals))
        step = xs[1] - xs[0]
        lo, hi = max(0.0, xs[i] - step), min(length, xs[i] + step)
    return float(xs[i]), float(getattr(responses(solved, span, xs[i]), quantity)[0, case])


def make_cases_module() -> ModuleType:
    """benchmarks/make_cases.py (the generator of invented beams) loaded as a module."""
    path = Path(__file__).resolve().parents[1] / "benchmarks" / "make_cases.py"
    spec = importlib.util.spec_from_file_location("make_cases", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def concrete_sizing(design: Mapping[str, Any], spans: Sequence[float], dead: float,
                    live: float, supports: Sequence[str] | None = None,
                    extra: Mapping[str, Any] | None = None,
                    stretches: Sequence[str] = ()) -> dict[str, np.ndarray]:
    """sizing.parquet's columns of an SI beam: uniform dead and live load (kN/m) on every
    span, pinned supports unless given, code patterning, strength 1.4 D + 1.7 L, the
    characteristic service set, ``[design]`` = ``design`` with ``extra``; ``stretches``
    adds TOML lines (``[[spans.sections]]``) to the spans in order."""
    from envelope.sizing import size

    sup = supports or ("pinned",) * (len(spans) + 1)
    parts = ['units = "SI"', "[section]\nE = 30000\nI = 5.4e9"]
    parts += [f"[[spans]]\nlength = {L!r}" + (f"\n{stretches[j]}" if j < len(stretches)
                                               else "") for j, L in enumerate(spans)]
    parts += [f'[[supports]]\ntype = "{s}"' for s in sup]
    parts.append('[cases]\nD = { kind = "dead" }\nL = { kind = "live" }')
    parts.append(f'[[loads]]\ncase = "D"\ntype = "uniform"\nspans = "all"\nw = {dead!r}')
    parts.append(f'[[loads]]\ncase = "L"\ntype = "uniform"\nspans = "all"\nw = {live!r}')
    parts.append('[patterning]\nmethod = "code"')
    parts.append('[combinations]\nstrength = "none"\nservice = "characteristic"\n'
                 '[[combinations.custom]]\nname = "U"\nset = "strength"\n'
                 'factors = { D = 1.4, L = 1.7 }')
    given = {**design, **(extra or {})}
    parts.append("[design]\n" + "\n".join(f"{k} = {toml_value(v)}"
                                           for k, v in given.items()))
    beam = parse_case(tomllib.loads("\n\n".join(parts) + "\n"), "t.toml")
    return size(analyse(beam))
