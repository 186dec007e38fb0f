"""Benchmark of the support envelopes alone (the three reductions of section h's
``supports`` stage): CPU time by the number of spans, and its growth against n².

    python benchmarks/supports_bench.py [--spans 64 128 256 512] [--repeats R] [--json OUT]

The beam is section h's long segmented beam (4 segments and 41 stations a span), solved
once per size (not timed).  Each round times the three reductions (strength reaction,
service reaction, support moment) of every size twice: in blocks of rows
(``envelope.analysis._reduce_rows``, as the engine does) and all rows at once
(``envelope.enveloper.reduce``, as before the blocks), the sizes and the two ways
interleaved (A B B A ...).  The figure is the median CPU time of the rounds; each
doubling of the spans is reported as the time ratio over 4 (n²: supports x unit cases).
The largest difference between the two ways is printed too (relative to each column's
largest value).  A benchmark, not a test: nothing is asserted.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from run import segmented_beam  # noqa: E402

from envelope.analysis import _reduce_rows, support_moments  # noqa: E402
from envelope.casefile import load_case  # noqa: E402
from envelope.enveloper import reduce  # noqa: E402
from envelope.solved import solve_beam  # noqa: E402


def _rows(path: Path) -> list[tuple[np.ndarray, Any]]:
    """The three support reductions' inputs of the beam in ``path``: (rows, case set)."""
    solved = solve_beam(load_case(path))
    sol = solved.solution
    joints = np.array([j for j, s in enumerate(solved.beam.supports) if s.is_restrained],
                      dtype=int)
    moment = support_moments(sol.reaction_moment)
    return [(np.ascontiguousarray(solved.solution_for("strength").reaction[joints]),
             solved.strength),
            (np.ascontiguousarray(sol.reaction[joints]), solved.service),
            (np.ascontiguousarray(moment[joints]), solved.strength)]


def _worst(a: Any, b: Any) -> float:
    worst = 0.0
    for field in ("max", "min"):
        x, y = getattr(a, field), getattr(b, field)
        scale = float(np.max(np.abs(y), initial=0.0))
        if scale > 0.0:
            worst = max(worst, float(np.max(np.abs(x - y))) / scale)
    return worst


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--spans", type=int, nargs="+", default=[64, 128, 256, 512])
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--json", type=Path)
    args = parser.parse_args(argv)
    load_start = os.getloadavg()
    inputs = {}
    with tempfile.TemporaryDirectory(prefix="envelope-supports-") as tmp:
        for n in args.spans:
            path = Path(tmp) / f"long-{n}.toml"
            path.write_text(segmented_beam(n))
            inputs[n] = _rows(path)
    ways = {"blocks": lambda R, cs: _reduce_rows(R, cs),
            "whole": lambda R, cs: reduce(R, cs)}
    cpu: dict[str, dict[int, list[float]]] = {w: {n: [] for n in args.spans} for w in ways}
    for r in range(args.repeats):
        for n in (args.spans if r % 2 == 0 else args.spans[::-1]):
            for w in (list(ways) if r % 2 == 0 else list(ways)[::-1]):
                t0 = time.process_time()
                for R, cs in inputs[n]:
                    ways[w](R, cs)
                cpu[w][n].append(time.process_time() - t0)
    worst = max(_worst(ways["blocks"](R, cs), ways["whole"](R, cs))
                for n in args.spans for R, cs in inputs[n])
    med = {w: {n: statistics.median(v) for n, v in by.items()} for w, by in cpu.items()}
    growth = {w: [m[b] / m[a] / (b / a) ** 2 for a, b in zip(args.spans, args.spans[1:],
                                                               strict=False)]
              for w, m in med.items()}
    for w in ways:
        print(f"supports, {w}: " + ", ".join(f"{n} spans {med[w][n]:.4f} s"
                                             for n in args.spans)
              + "; each doubling / n^2: " + ", ".join(f"{g:.2f}" for g in growth[w]))
    print(f"largest difference blocks against whole: {worst:.2g} of the column's largest")
    if args.json:
        source = subprocess.run(["git", "-C", str(HERE.parent), "rev-parse", "--short",
                                 "HEAD"], capture_output=True, text=True).stdout.strip()
        args.json.write_text(json.dumps({
            "date": datetime.datetime.now().astimezone().isoformat(timespec="seconds"),
            "source": source, "spans": args.spans, "repeats": args.repeats,
            "units": {n: int(inputs[n][0][0].shape[1]) for n in args.spans},
            "supports": {n: int(inputs[n][0][0].shape[0]) for n in args.spans},
            "cpu_s": cpu, "median_cpu_s": med, "doubling_over_n2": growth,
            "largest_relative_difference": worst,
            "load_average_start": load_start, "load_average_end": os.getloadavg(),
        }, indent=1) + "\n")


if __name__ == "__main__":
    main()
