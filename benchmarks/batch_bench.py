"""Benchmark of `envelope batch`: beams per second, and the batch's own cost per beam.

    python benchmarks/batch_bench.py [--n 1000] [--workers W] [--seed S] [--max-spans K]

Generates ``n`` invented beams (benchmarks/make_cases.py) in a temporary folder, runs
one batch on the local pool and prints:

* beams per second over the whole batch (wall clock, pool start-up included);
* per beam, in milliseconds, measured inside the workers: the analysis (read, check,
  analyse) and the writing of its Parquet files and manifest (api.write and
  .complete.json, fsync included);
* the batch's own cost per beam against that write time: its extra writes (the
  beam's partition of OUT/_all/envelope and its manifest) and the pool overhead (pool
  wall time x workers / n, less all the work measured in the workers: start-up, task
  transport, idle workers at the end); and the time spent outside the pool
  (discovery, hashing, resume checks, combining);
* the time of a second, resumed run that skips every beam (the cost of the
  completeness check), and of the combine step alone (every partition already in place).

A benchmark, not a test: nothing is asserted.  Use ``--n 50`` for a quick look.
"""

from __future__ import annotations

import argparse
import importlib.util
import statistics
import sys
import tempfile
import time
from pathlib import Path

from envelope.batch import combine, default_workers, run_batch


def _make_cases():  # type: ignore[no-untyped-def]
    path = Path(__file__).resolve().parent / "make_cases.py"
    spec = importlib.util.spec_from_file_location("make_cases", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.make_cases


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--n", type=int, default=1000, help="beams (default 1000)")
    parser.add_argument("--workers", type=int, default=default_workers(),
                        help="local worker processes (default: every core)")
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--max-spans", type=int, default=12)
    args = parser.parse_args(argv)

    with tempfile.TemporaryDirectory(prefix="envelope-bench-") as tmp:
        cases, out = Path(tmp) / "cases", Path(tmp) / "out"
        _make_cases()(args.n, cases, args.seed, max_spans=args.max_spans)
        summary = run_batch([str(cases)], out, workers=args.workers, progress=sys.stderr)
        done = summary.written
        if not done:
            print("no beam was written")
            return
        n_run = len(summary.outcomes)
        analyse = statistics.mean(o.analyse_seconds for o in done) * 1e3
        write = statistics.mean(o.write_seconds for o in done) * 1e3
        worker_ms = summary.run_seconds * args.workers / n_run * 1e3
        batch_ms = statistics.mean(o.batch_seconds for o in done) * 1e3
        work_ms = sum(o.analyse_seconds + o.write_seconds + o.batch_seconds
                      for o in summary.outcomes) / n_run * 1e3
        overhead = worker_ms - work_ms
        around = summary.seconds - summary.run_seconds  # discovery, checks, combining

        t0 = time.perf_counter()
        resumed = run_batch([str(cases)], out, workers=args.workers)
        resume_s = time.perf_counter() - t0
        manifests = {o.beam_id: o.manifest for o in done if o.manifest is not None}
        t0 = time.perf_counter()
        combine(out, manifests)
        combine_s = time.perf_counter() - t0

    print(f"beams: {args.n} ({len(done)} written, {len(summary.failed)} failed), "
          f"workers: {args.workers}")
    print(f"wall: {summary.seconds:.2f} s, {len(summary.outcomes) / summary.seconds:.1f} "
          "beams/s")
    print(f"per beam (ms): analysis {analyse:.1f}, write {write:.1f} (api.write), "
          f"batch writes {batch_ms:.1f} (partition, manifest), pool overhead "
          f"{overhead:.1f} (worker time {worker_ms:.1f} less the three)")
    print(f"batch's own cost per beam / write: {(batch_ms + overhead) / write:.2f}; "
          f"outside the pool (discovery, hashing, resume checks, combining): "
          f"{around:.2f} s, {around / n_run * 1e3:.1f} ms per beam")
    print(f"resumed run, all {len(resumed.skipped)} skipped: {resume_s:.2f} s "
          f"({resume_s / args.n * 1e3:.2f} ms per beam); combine alone: {combine_s:.2f} s")


if __name__ == "__main__":
    main()
