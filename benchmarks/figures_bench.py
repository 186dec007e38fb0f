"""Cost of the figures in a batch: the work of one batch worker with and without
``--plots``, on the same generated beams, as a ratio (target: at most 1.5).

    python benchmarks/figures_bench.py [N] [--json OUT.json]

Each side runs :func:`envelope.batch.worker.run_chunk` on N generated beams (see
``make_cases.py``) in this process, as a worker does, so the figure is reused across
beams as it is in a batch.  CPU time of the process (``time.process_time``) is the
measure, so that a busy machine slows both sides alike; wall time is kept as well.  The
sides are interleaved (A B B A) and each figure is the best of the repeats.  A first
untimed pass imports everything and warms the caches on both sides.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import shutil
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from make_cases import make_cases  # noqa: E402

from envelope.batch.worker import run_chunk  # noqa: E402


def _side(tasks: list, work: Path, plots: bool) -> tuple[float, float]:
    out = work / ("with" if plots else "without")
    shutil.rmtree(out, ignore_errors=True)
    wall, cpu = time.perf_counter(), time.process_time()
    outcomes = run_chunk(tasks, str(out), plots)
    cpu, wall = time.process_time() - cpu, time.perf_counter() - wall
    failed = [o.error for o in outcomes if o.error]
    if failed:
        raise SystemExit(f"a beam failed: {failed[0]}")
    return cpu, wall


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("n", nargs="?", type=int, default=30)
    parser.add_argument("--repeats", type=int, default=2)
    parser.add_argument("--json", type=Path)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        make_cases(args.n, work / "cases", seed=7)
        paths = sorted((work / "cases").glob("*.toml"))
        tasks = [(str(p), str(p), None, None, None) for p in paths]
        _side(tasks[:3], work, True)   # imports and caches, untimed
        _side(tasks[:3], work, False)
        raw: dict[str, list[tuple[float, float]]] = {"without": [], "with": []}
        order = [False, True, True, False] * args.repeats
        for plots in order[: 2 * args.repeats]:
            raw["with" if plots else "without"].append(_side(tasks, work, plots))
    best = {k: min(v) for k, v in raw.items()}
    ratio = best["with"][0] / best["without"][0]
    result = {
        "beams": args.n, "ratio_cpu": ratio,
        "ratio_wall": min(w for _, w in raw["with"]) / min(w for _, w in raw["without"]),
        "per_beam_cpu_without_s": best["without"][0] / args.n,
        "per_beam_cpu_with_s": best["with"][0] / args.n,
        "raw_cpu_wall_s": raw, "target": 1.5,
        "date": time.strftime("%Y-%m-%d %H:%M:%S"), "machine": platform.platform(),
        "cpus": os.cpu_count(), "load_average": os.getloadavg(),
    }
    print(f"{args.n} beams: without figures {result['per_beam_cpu_without_s'] * 1e3:.0f} ms "
          f"CPU per beam, with {result['per_beam_cpu_with_s'] * 1e3:.0f} ms: "
          f"{ratio:.2f}x (target at most 1.5x)")
    if args.json:
        args.json.write_text(json.dumps(result, indent=1) + "\n")


if __name__ == "__main__":
    main()
