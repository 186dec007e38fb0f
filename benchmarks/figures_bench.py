"""Cost of the figures in a batch, as ratios (target: a batch with figures at most 1.5
times one without).

    python benchmarks/figures_bench.py batch [N] [--repeats R] [--json OUT.json]
                                             [--against TREE]
    python benchmarks/figures_bench.py worker [N] [--repeats R] [--json OUT.json]

``batch`` (the target): whole processes, ``envelope batch <N files> -o OUT --workers 2
--force -q`` with ``--plots`` and with ``--no-plots``, on the first N beams of
``make_cases.py`` (seed 7), timed from start to exit (wall time, as a user waits for
it); the two sides are interleaved (A B B A ...) and the ratio is taken of the medians
(the best of each side is printed too).  The CPU time of each batch (user and system,
the batch and its workers) is recorded beside it: on a machine shared with other work
it varies less than the wall time.  N defaults to 60.  ``--against TREE`` also runs the
engine of another source tree (a worktree of an earlier commit) in the same rounds, its
with and without figures interleaved with this tree's (A B B A for each), and reports
each tree's ratios and the figures' CPU per beam of both.  Each tree's batches run in
that tree's folder (``python -m`` puts the working folder first on the path, before
PYTHONPATH: run from this tree's folder, the other "tree" ran this engine), and the
engine version each wrote into its manifests is recorded (``engines``), with a warning
when both are the same.

``worker``: one batch worker's chunk in this process (:func:`run_chunk`, as a worker
runs it, so the figure is reused across beams), with and without figures; the CPU time
of the process (``time.process_time``), so that a busy machine slows both sides alike,
per beam.  A first untimed pass imports everything and warms the caches on both sides.

Every raw timing, the load average at the start and the end and the engine's commit go
to the JSON file.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from make_cases import make_cases  # noqa: E402
from provenance import short_commit  # noqa: E402

from envelope.batch.worker import run_chunk  # noqa: E402


def _worker_side(tasks: list, work: Path, plots: bool) -> tuple[float, float]:
    out = work / ("with" if plots else "without")
    shutil.rmtree(out, ignore_errors=True)
    wall, cpu = time.perf_counter(), time.process_time()
    outcomes = run_chunk(tasks, str(out), plots)
    cpu, wall = time.process_time() - cpu, time.perf_counter() - wall
    failed = [o.error for o in outcomes if o.error]
    if failed:
        raise SystemExit(f"a beam failed: {failed[0]}")
    return cpu, wall


def bench_worker(n: int, repeats: int, work: Path) -> dict:
    """CPU time per beam of one worker's chunk, with and without figures."""
    paths = sorted((work / "cases").glob("*.toml"))
    tasks = [(str(p), str(p), None, None, None) for p in paths]
    _worker_side(tasks[:3], work, True)   # imports and caches, untimed
    _worker_side(tasks[:3], work, False)
    raw: dict[str, list[tuple[float, float]]] = {"without": [], "with": []}
    for plots in ([False, True, True, False] * repeats)[: 2 * repeats]:
        raw["with" if plots else "without"].append(_worker_side(tasks, work, plots))
    best = {k: min(v) for k, v in raw.items()}
    ratio = best["with"][0] / best["without"][0]
    print(f"worker, {n} beams: without figures {best['without'][0] / n * 1e3:.0f} ms CPU "
          f"per beam, with {best['with'][0] / n * 1e3:.0f} ms: {ratio:.2f}x")
    return {"ratio_cpu": ratio,
            "ratio_wall": min(w for _, w in raw["with"]) / min(w for _, w in raw["without"]),
            "per_beam_cpu_without_s": best["without"][0] / n,
            "per_beam_cpu_with_s": best["with"][0] / n, "raw_cpu_wall_s": raw}


def _batch_once(cases: Path, out: Path, plots: bool, tree: Path = ROOT
                ) -> tuple[float, float]:
    """Wall time and CPU time (user and system, of the batch and its workers) of one
    batch with the engine of ``tree``."""
    args = [sys.executable, "-m", "envelope", "batch", str(cases), "-o", str(out),
            "--workers", "2", "--force", "-q", "--plots" if plots else "--no-plots"]
    env = dict(os.environ, PYTHONPATH=str(tree), MPLBACKEND="Agg")
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    # run in the tree: ``python -m`` puts the working folder first on the path, before
    # PYTHONPATH, so from another source tree's folder it would run that tree's engine
    subprocess.run(args, check=True, env=env, stdout=subprocess.DEVNULL, cwd=tree)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def bench_batch(n: int, repeats: int, work: Path) -> dict:
    """Wall time of whole batches with two workers, with and without figures (and their
    CPU time, which a machine shared with other work inflates less)."""
    cases = work / "cases"
    _batch_once(cases, work / "warm", True)  # file cache and compiled modules, untimed
    raw: dict[str, list[float]] = {"without": [], "with": []}
    cpu: dict[str, list[float]] = {"without": [], "with": []}
    for plots in ([False, True, True, False] * repeats)[: 2 * repeats]:
        out = work / ("with" if plots else "without")
        shutil.rmtree(out, ignore_errors=True)
        wall, used = _batch_once(cases, out, plots)
        raw["with" if plots else "without"].append(wall)
        cpu["with" if plots else "without"].append(used)
    median = {k: statistics.median(v) for k, v in raw.items()}
    best = {k: min(v) for k, v in raw.items()}
    median_cpu = {k: statistics.median(v) for k, v in cpu.items()}
    ratio = median["with"] / median["without"]
    print(f"batch, {n} beams, 2 workers: without figures {median['without']:.2f} s, with "
          f"{median['with']:.2f} s (medians of {repeats}): {ratio:.2f}x "
          f"(best {best['with'] / best['without']:.2f}x; target at most 1.5x); CPU "
          f"{median_cpu['without']:.2f} s and {median_cpu['with']:.2f} s: "
          f"{median_cpu['with'] / median_cpu['without']:.2f}x")
    return {"ratio_median_wall": ratio, "ratio_best_wall": best["with"] / best["without"],
            "ratio_median_cpu": median_cpu["with"] / median_cpu["without"],
            "median_wall_s": median, "best_wall_s": best, "raw_wall_s": raw,
            "median_cpu_s": median_cpu, "raw_cpu_s": cpu}


def bench_against(n: int, repeats: int, work: Path, other: Path) -> dict:
    """CPU time of whole batches, with and without figures, of this tree and ``other``
    in the same rounds (each round: this tree A B B A, then the other's)."""
    cases = work / "cases"
    trees = {"this": ROOT, "other": other}
    engines = {}
    for name, tree in trees.items():  # file cache and compiled modules, untimed
        _batch_once(cases, work / "warm", True, tree)
        # the engine that ran, from a manifest: each tree's own
        manifest = next((work / "warm").glob("*/.complete.json"))
        engines[name] = json.loads(manifest.read_text())["version"]
        shutil.rmtree(work / "warm")
    if engines["this"] == engines["other"] and short_commit(ROOT) != short_commit(other):
        print(f"warning: both trees ran the same engine ({engines['this']})")
    cpu: dict[str, dict[str, list[float]]] = {t: {"without": [], "with": []} for t in trees}
    wall: dict[str, dict[str, list[float]]] = {t: {"without": [], "with": []} for t in trees}
    for _ in range(repeats):
        for name, tree in trees.items():
            for plots in (False, True, True, False):
                out = work / ("with" if plots else "without")
                shutil.rmtree(out, ignore_errors=True)
                w, used = _batch_once(cases, out, plots, tree)
                wall[name]["with" if plots else "without"].append(w)
                cpu[name]["with" if plots else "without"].append(used)
    result: dict = {"other_tree_commit": short_commit(other), "engines": engines, "raw_cpu_s": cpu,
                    "raw_wall_s": wall}
    for name in trees:
        med = {k: statistics.median(v) for k, v in cpu[name].items()}
        med_wall = {k: statistics.median(v) for k, v in wall[name].items()}
        result[name] = {"median_cpu_s": med, "ratio_median_cpu": med["with"] / med["without"],
                        "median_wall_s": med_wall,
                        "ratio_median_wall": med_wall["with"] / med_wall["without"],
                        "figures_cpu_per_beam_s": (med["with"] - med["without"]) / n}
        print(f"{name} ({short_commit(trees[name])}): CPU without figures "
              f"{med['without']:.2f} s, with "
              f"{med['with']:.2f} s: {med['with'] / med['without']:.2f}x (wall "
              f"{med_wall['with'] / med_wall['without']:.2f}x); the figures "
              f"{(med['with'] - med['without']) / n * 1e3:.0f} ms CPU a beam "
              f"(medians of {2 * repeats})")
    return result


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("what", choices=("batch", "worker"))
    parser.add_argument("n", nargs="?", type=int, default=60)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--json", type=Path)
    parser.add_argument("--against", type=Path, help="another source tree, run in the "
                        "same rounds (batch only)")
    args = parser.parse_args()
    start = {"date": time.strftime("%Y-%m-%d %H:%M:%S"), "load_average_start": os.getloadavg()}
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        make_cases(args.n, work / "cases", seed=7)
        if args.against is not None:
            measured = bench_against(args.n, args.repeats, work, args.against.resolve())
        else:
            bench = bench_batch if args.what == "batch" else bench_worker
            measured = bench(args.n, args.repeats, work)
        result = {"what": args.what, "beams": args.n, "repeats": args.repeats, **measured}
    result.update(start, load_average_end=os.getloadavg(), target=1.5, commit=short_commit(ROOT),
                  machine=platform.platform(), cpus=os.cpu_count())
    print(f"load average {start['load_average_start'][0]:.1f} at the start, "
          f"{result['load_average_end'][0]:.1f} at the end")
    if args.json:
        args.json.write_text(json.dumps(result, indent=1) + "\n")


if __name__ == "__main__":
    main()
