"""A batch's own work per beam, two engines paired: which is cheaper, on a busy machine.

    python benchmarks/batch_pairs.py BEFORE_DIR AFTER_DIR [--beams 60] [--rounds 40]
        [--first 200] [--json OUT.json]

BEFORE_DIR and AFTER_DIR are source trees of the engine (e.g. ``git worktree add
--detach ../before REV``).  Each engine runs in a long-lived process of its own, which
does on every round what a batch does for the same beams of ``make_cases.py`` (seed 11,
beams ``first`` to ``first + beams``): the coordinator's quick read of each file
(``identify``), one worker's chunk (``run_chunk``) and the combining of OUT/_all; the
CPU time of each part by the process clock, per beam.  The two processes take turns (A B
B A ...), so that a busy spell of the shared machine falls on both; the figure is the
median over rounds of the after/before ratio of adjacent runs, with its middle half, and
the median of each side.  Imports and caches are warmed by two untimed rounds.  Not run
by ``run.py``.
"""

from __future__ import annotations

import argparse
import inspect
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

from provenance import short_commit

HERE = Path(__file__).resolve().parent


def serve(cases: Path, beams: int, first: int, out: Path) -> None:
    """The engine side: one round per line of standard input, its CPU seconds a beam
    printed as one JSON line."""
    from envelope.batch.combined import combine
    from envelope.batch.discovery import identify
    from envelope.batch.worker import run_chunk

    paths = sorted(cases.glob("*.toml"))[first:first + beams]
    given_ok = "given" in inspect.signature(combine).parameters  # engines before it
    for k, _ in enumerate(sys.stdin):
        folder = out / f"round-{k % 2}"
        shutil.rmtree(folder, ignore_errors=True)
        c0 = time.process_time()
        tasks = [identify(i, str(p)).task() for i, p in enumerate(paths)]
        c1 = time.process_time()
        outcomes = run_chunk(tasks, str(folder), False)
        c2 = time.process_time()
        done = {o.beam_id: o.manifest for o in outcomes if o.error is None}
        if given_ok:
            combine(folder, done, None, set(done),
                    {o.beam_id: o.tables for o in outcomes if o.error is None})
        else:
            combine(folder, done, None, set(done))
        c3 = time.process_time()
        print(json.dumps({"identify": (c1 - c0) / beams, "worker": (c2 - c1) / beams,
                          "combine": (c3 - c2) / beams}), flush=True)


def _start(tree: Path, cases: Path, args: argparse.Namespace, out: Path
           ) -> subprocess.Popen[str]:
    env = dict(os.environ, PYTHONPATH=str(tree))
    return subprocess.Popen([sys.executable, str(Path(__file__).resolve()), "--serve",
                             str(cases), str(args.beams), str(args.first), str(out)],
                            env=env, cwd=tree, stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                            text=True)


def _round(proc: subprocess.Popen[str]) -> dict[str, float]:
    assert proc.stdin is not None and proc.stdout is not None
    proc.stdin.write("go\n")
    proc.stdin.flush()
    line = proc.stdout.readline()
    if not line:
        raise SystemExit("an engine process ended early")
    return dict(json.loads(line))


def main() -> None:
    if len(sys.argv) > 1 and sys.argv[1] == "--serve":
        serve(Path(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4]), Path(sys.argv[5]))
        return
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("before", type=Path)
    parser.add_argument("after", type=Path)
    parser.add_argument("--beams", type=int, default=60)
    parser.add_argument("--rounds", type=int, default=40)
    parser.add_argument("--first", type=int, default=200)
    parser.add_argument("--json", type=Path)
    args = parser.parse_args()
    sys.path.insert(0, str(HERE))
    from make_cases import make_cases

    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        make_cases(args.first + args.beams, work / "cases", 11)
        sides = {"before": args.before.resolve(), "after": args.after.resolve()}
        procs = {k: _start(tree, work / "cases", args, work / k) for k, tree in sides.items()}
        for proc in procs.values():
            _round(proc)
            _round(proc)
        load0 = os.getloadavg()
        raw: dict[str, list[dict[str, float]]] = {"before": [], "after": []}
        order = []
        for r in range(args.rounds):
            for side in (("before", "after") if r % 2 == 0 else ("after", "before")):
                raw[side].append(_round(procs[side]))
                order.append(side)
        load1 = os.getloadavg()
        for proc in procs.values():
            assert proc.stdin is not None
            proc.stdin.close()
            proc.wait()
    total = {k: [sum(x.values()) for x in v] for k, v in raw.items()}
    ratios = sorted(a / b for a, b in zip(total["after"], total["before"], strict=True))
    quarter = len(ratios) // 4
    result: dict[str, Any] = {
        "median_ratio_after_over_before": statistics.median(ratios),
        "middle_half": [ratios[quarter], ratios[-1 - quarter]],
        "median_ms_a_beam": {k: statistics.median(v) * 1e3 for k, v in total.items()},
        "median_parts_ms_a_beam": {k: {p: statistics.median(x[p] for x in v) * 1e3
                                        for p in v[0]} for k, v in raw.items()},
    }
    print(json.dumps(result, indent=1))
    if args.json:
        args.json.write_text(json.dumps({
            "date": time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()),
            "engines": {k: short_commit(v) for k, v in sides.items()}, "beams": args.beams,
            "first_beam": args.first, "rounds": args.rounds, "order": order,
            "load_average_start": load0, "load_average_end": load1, "results": result,
            "raw_cpu_s_per_beam": raw}, indent=1))


if __name__ == "__main__":
    main()
