"""Benchmark of the design-action search: CPU time per beam of ``design_actions`` against
the three-search reference it replaced (tests/reference_actions.py, kept for the tests).

    python benchmarks/design_bench.py [N] [--repeats R] [--json OUT.json] [--before REV]

Generates ``N`` invented beams (benchmarks/make_cases.py, seed 11; default 100), solves
each and envelopes its stations once, then times only the design actions of every beam,
the two paths interleaved (A B B A ...), ``R`` rounds (default 5); the figure is the
median of the rounds' CPU time (user + system of this process) per beam; each beam's
best time of the rounds, summed, is printed as a second figure (steadier on a busy
machine).  The largest difference between the two answers is printed too (relative to
each column's largest value in its beam).  With ``--before REV``,
``envelope/actions.py`` as it was at the git revision REV (run on today's other
modules) is timed as a third side, interleaved with the two: the change of the search
module itself.  A benchmark, not a test: nothing is asserted.
"""

from __future__ import annotations

import argparse
import datetime
import importlib.util
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
import types
from pathlib import Path
from typing import Any

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tests"))

import reference_actions  # noqa: E402

from envelope.actions import design_actions  # noqa: E402
from envelope.casefile import load_case  # noqa: E402
from envelope.recovery import stations  # noqa: E402
from envelope.solved import envelopes_at, solve_beam  # noqa: E402


def _make_cases():  # type: ignore[no-untyped-def]
    spec = importlib.util.spec_from_file_location("make_cases", HERE / "make_cases.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.make_cases


def _git(*args: str) -> str:
    return subprocess.run(["git", "-C", str(HERE.parent), *args], capture_output=True,
                          text=True, check=True).stdout


def _actions_at(rev: str) -> types.ModuleType:
    """``envelope/actions.py`` as it was at git revision ``rev``, as a module of its own
    (importing today's other modules)."""
    module = types.ModuleType("actions_before")
    module.__file__ = f"actions.py@{rev}"
    sys.modules[module.__name__] = module  # its dataclasses look their module up
    exec(compile(_git("show", f"{rev}:envelope/actions.py"), module.__file__, "exec"),
         module.__dict__)
    return module


def _worst(fast: dict[str, np.ndarray], slow: dict[str, np.ndarray]) -> float:
    """Largest difference over the numeric columns, relative to the column's largest."""
    worst = 0.0
    for key, want in slow.items():
        if want.dtype == object:
            continue
        scale = float(np.nanmax(np.abs(want), initial=0.0))
        if scale > 0.0:
            worst = max(worst, float(np.nanmax(np.abs(fast[key] - want), initial=0.0)) / scale)
    return worst


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("n", type=int, nargs="?", default=100)
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--json", type=Path)
    parser.add_argument("--before", metavar="REV")
    args = parser.parse_args(argv)
    load_start = os.getloadavg()
    with tempfile.TemporaryDirectory(prefix="envelope-design-") as tmp:
        _make_cases()(args.n, Path(tmp), seed=11)
        beams = []
        for path in sorted(Path(tmp).glob("*.toml")):
            solved = solve_beam(load_case(path))
            pts = stations(solved.beam, solved.mesh, solved.unit_cases)
            env = envelopes_at(solved, pts, {"moment": "strength", "shear": "strength",
                                             "deflection": "service"})
            beams.append((solved, pts, env))
    sides: dict[str, Any] = {"combined": design_actions,
                             "reference": reference_actions.design_actions}
    if args.before:
        sides["before"] = _actions_at(args.before).design_actions
    cpu: dict[str, list[float]] = {k: [] for k in sides}
    wall: dict[str, list[float]] = {k: [] for k in sides}
    # each beam's best time of the rounds too: a slow spell of a shared machine falls on
    # a few beams of one round, which their best leaves out
    best: dict[str, list[float]] = {k: [float("inf")] * len(beams) for k in sides}
    for r in range(args.repeats):
        for name in (list(sides) if r % 2 == 0 else list(sides)[::-1]):
            c0, w0 = time.process_time(), time.perf_counter()
            for i, (solved, pts, env) in enumerate(beams):
                b0 = time.process_time()
                sides[name](solved, pts, env)
                best[name][i] = min(best[name][i], time.process_time() - b0)
            cpu[name].append((time.process_time() - c0) / len(beams))
            wall[name].append((time.perf_counter() - w0) / len(beams))
    worst = max(_worst(design_actions(*b), reference_actions.design_actions(*b)) for b in beams)
    med = {k: statistics.median(v) for k, v in cpu.items()}
    ratio = med["combined"] / med["reference"]
    best_sum = {k: sum(v) / len(beams) for k, v in best.items()}
    best_ratio = best_sum["combined"] / best_sum["reference"]
    print(f"design actions, {len(beams)} beams: combined {med['combined'] * 1e3:.2f} ms, "
          f"reference {med['reference'] * 1e3:.2f} ms CPU per beam (median of "
          f"{args.repeats}); ratio {ratio:.3f} (target <= 0.25); largest difference "
          f"{worst:.2g} of the column's largest value")
    print(f"each beam's best of the rounds: combined {best_sum['combined'] * 1e3:.2f} ms, "
          f"reference {best_sum['reference'] * 1e3:.2f} ms; ratio {best_ratio:.3f}")
    if args.before:
        print(f"actions.py at {args.before}: {med['before'] * 1e3:.2f} ms (ratio "
              f"{med['before'] / med['reference']:.3f}); combined / before "
              f"{med['combined'] / med['before']:.3f}; each beam's best: "
              f"{best_sum['before'] * 1e3:.2f} ms, combined / before "
              f"{best_sum['combined'] / best_sum['before']:.3f}")
    if args.json:
        args.json.write_text(json.dumps({
            "date": datetime.datetime.now().astimezone().isoformat(timespec="seconds"),
            "beams": len(beams), "seed": 11, "repeats": args.repeats,
            "cpu_per_beam_s": cpu, "wall_per_beam_s": wall, "median_cpu_s": med,
            "ratio": ratio, "best_per_beam_cpu_s": best_sum, "best_ratio": best_ratio,
            "largest_relative_difference": worst,
            "before": args.before, "source": _git("rev-parse", "--short", "HEAD").strip(),
            "load_average_start": load_start, "load_average_end": os.getloadavg(),
        }, indent=1) + "\n")


if __name__ == "__main__":
    main()
