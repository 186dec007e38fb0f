"""Benchmarks of ``envelope``: every figure is a ratio of two timings taken in one run.

    python benchmarks/run.py [--quick] [--json OUT.json] [--only a,b,...]

Sections (see benchmarks/README.md for what each figure means and its target):

a. the engine (a whole ``envelope run`` process) against a per-case loop
   (:mod:`per_case_loop`) on a 16-span beam with exhaustive patterning;
b. growth of the time with spans, stations per span and combinations;
c. start-up: a 2-span run with its plot against starting Python and importing the
   libraries it needs;
d. batch: per-beam cost of ``envelope batch`` with two workers against the time to
   write that beam's Parquet files;
e. memory: peak resident memory of an all-cases run with about 10^7 station rows;
f. start-up to the floor: ``envelope run --no-plots`` of a 2-span beam with unit strings
   and ``envelope check`` against ``python -c "import numpy, pyarrow.parquet"``, with the
   costliest imports that remain;
g. a long segmented beam (4 segments a span, 41 stations a span): time and peak memory
   as the spans grow, and the growth of each doubling against the inherent n^2;
h. the same beams stage by stage (:mod:`stages`, one child process a beam): CPU time of
   each stage and its growth per doubling against n^2, and the peak memory.

The machine may be shared and noisy: each timing is the best of several repeats, and
the two sides of each ratio are interleaved (A B B A A B ...), so that a slow spell
hits both.  Child processes are timed by wall clock from start to exit; their peak
resident memory comes from ``os.wait4`` (``ru_maxrss``, KiB on Linux).
"""

from __future__ import annotations

import argparse
import datetime
import importlib.util
import itertools
import json
import os
import platform
import random
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable, Sequence
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pyarrow.parquet as pq

HERE = Path(__file__).resolve().parent
if str(HERE) not in sys.path:
    sys.path.insert(0, str(HERE))

import per_case_loop as loop  # noqa: E402

from beams import beam_toml, n_explicit_cases  # noqa: E402

#: Agreement of the loop with envelope.parquet, relative to each station's value (or
#: to 1/1000 of the largest value where a station's value is smaller, e.g. the zero
#: moment at an end support).
AGREE_RTOL = 1e-6


@dataclass(frozen=True)
class Plan:
    """How much to run: the full plan (about 15 minutes) or the quick one (about 2)."""

    name: str
    repeats: int  # timings per side of each ratio, best taken
    loop_spans: int  # the 16-span beam of target (a)
    loop_sample: int  # cases the loop runs on it (governing ones plus random ones)
    loop_full_spans: int  # a smaller beam on which the loop runs every case
    growth_spans: tuple[int, ...]
    growth_stations: tuple[int, ...]
    growth_combinations: tuple[int, ...]
    startup_repeats: int
    batch_beams: int
    memory_spans: int
    memory_stations: int
    long_spans: tuple[int, ...] = (32, 64, 128, 256, 512)


FULL = Plan("full", repeats=5, loop_spans=16, loop_sample=400, loop_full_spans=10,
            growth_spans=(4, 8, 16, 32, 64, 128, 256), growth_stations=(21, 101, 501, 2001),
            growth_combinations=(4, 16, 64), startup_repeats=9, batch_beams=1000,
            memory_spans=50, memory_stations=1000)
QUICK = Plan("quick", repeats=2, loop_spans=16, loop_sample=120, loop_full_spans=6,
             growth_spans=(8, 32, 128), growth_stations=(21, 501),
             growth_combinations=(4, 16), startup_repeats=3, batch_beams=16,
             memory_spans=50, memory_stations=1000, long_spans=(32, 64, 128))


# -- running and timing ------------------------------------------------------------


@dataclass(frozen=True)
class Run:
    seconds: float
    maxrss_kib: int
    returncode: int
    cpu: float = 0.0  # user + system seconds of the child and the children it waited for


def run_child(args: Sequence[str], check: bool = True) -> Run:
    """Run a child process to its end: wall time, peak resident memory (of this child
    alone, from ``os.wait4``), exit status."""
    with tempfile.TemporaryFile() as err:
        t0 = time.perf_counter()
        proc = subprocess.Popen(list(args), stdout=subprocess.DEVNULL, stderr=err)
        _, status, usage = os.wait4(proc.pid, 0)
        seconds = time.perf_counter() - t0
        proc.returncode = os.waitstatus_to_exitcode(status)
        if check and proc.returncode != 0:
            err.seek(0)
            tail = err.read().decode(errors="replace")[-2000:]
            raise RuntimeError(f"{' '.join(args)} exited with {proc.returncode}: {tail}")
    return Run(seconds, int(usage.ru_maxrss), proc.returncode,
               usage.ru_utime + usage.ru_stime)


def engine_args(case: Path, out: Path, plots: bool = False, all_cases: bool = False) -> list[str]:
    args = [sys.executable, "-m", "envelope.cli", "run", str(case), "-o", str(out), "-q"]
    if not plots:
        args.append("--no-plots")
    if all_cases:
        args.append("--all-cases")
    return args


def timed(fn: Callable[[], object]) -> float:
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


def interleaved(sides: dict[str, Callable[[], float]], repeats: int) -> dict[str, list[float]]:
    """Each side's timings, taken in turn (the order reversed on every other round)."""
    samples: dict[str, list[float]] = {k: [] for k in sides}
    names = list(sides)
    for r in range(repeats):
        for k in names if r % 2 == 0 else names[::-1]:
            samples[k].append(sides[k]())
    return samples


def in_process(case: Path, out: Path) -> float:
    """Seconds to read, analyse and write one beam (no plot) in this warm process."""
    from envelope import api

    t0 = time.perf_counter()
    api.write(api.analyse(api.load_case(str(case))), out)
    return time.perf_counter() - t0


def say(text: str = "") -> None:
    print(text, flush=True)


def row(*cells: object, widths: Sequence[int] = (34, 14, 14, 14, 14)) -> str:
    out = []
    for cell, w in zip(cells, widths, strict=False):
        text = f"{cell:.4g}" if isinstance(cell, float) else str(cell)
        out.append(text.ljust(w) if not out else text.rjust(w))
    return "".join(out)


@dataclass
class Target:
    figure: str
    measured: float
    limit: str
    met: bool | None  # None: not judged in this run
    note: str = ""


# -- (a) engine against the per-case loop ------------------------------------------


def loop_stations(folder: Path) -> tuple[dict[str, Any], loop.Stations]:
    env = pq.read_table(folder / "envelope.parquet").to_pydict()
    st = loop.Stations(np.array(env["span"]) - 1, np.array(env["x_span"], dtype=float),
                       np.array(env["side"]) == "right")
    return env, st


def parse_loaded(text: str, n_spans: int) -> list[int]:
    """The engine's ``_loaded`` text as 0-based spans (one patterned case)."""
    if text == "all":
        return list(range(n_spans))
    if text == "none":
        return []
    return [int(s) - 1 for s in text.split()]


def governing_cases(env: dict[str, Any], beam: loop.LoopBeam) -> list[tuple[int, list[int]]]:
    """The distinct (combination, loaded spans) the engine names as governing anywhere."""
    index = {name: k for k, (name, _, _) in enumerate(beam.combinations)}
    n = len(beam.lengths)
    seen: dict[tuple[int, tuple[int, ...]], None] = {}
    for q in ("moment", "shear", "deflection"):
        for side in ("max", "min"):
            for combo, loaded in zip(env[f"{q}_{side}_combo"], env[f"{q}_{side}_loaded"],
                                     strict=True):
                seen[(index[combo], tuple(parse_loaded(loaded, n)))] = None
    return [(k, list(s)) for k, s in seen]


def random_cases(beam: loop.LoopBeam, count: int, seed: int) -> list[tuple[int, list[int]]]:
    rng = random.Random(seed)
    n = len(beam.lengths)
    out = []
    for _ in range(count):
        k = rng.randrange(len(beam.combinations))
        mask = rng.getrandbits(n)
        out.append((k, [j for j in range(n) if mask >> j & 1]))
    return out


def agreement(env: dict[str, Any], got: loop.LoopEnvelope) -> dict[str, float]:
    """Largest relative difference per column (see :data:`AGREE_RTOL`)."""
    out = {}
    for q, scale in (("moment", 1.0), ("shear", 1.0), ("deflection", 1000.0)):  # m -> mm
        for side in ("max", "min"):
            ref = np.asarray(env[f"{q}_{side}"], dtype=float)
            mine = getattr(got, f"{q}_{side}") * scale
            floor = 1e-3 * float(np.max(np.abs(ref)))
            out[f"{q}_{side}"] = float(np.max(np.abs(mine - ref) / np.maximum(np.abs(ref), floor)))
    return out


def bench_loop(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    say("(a) engine (whole process) against a per-case loop")
    out = work / "out-a"
    result: dict[str, Any] = {}

    # a smaller beam on which the loop runs every case: an exact check and a measured ratio
    n_full = plan.loop_full_spans
    text = beam_toml(n_full, 21, "exhaustive")
    case = work / f"loop-{n_full}.toml"
    case.write_text(text)
    run_child(engine_args(case, out))  # warm-up, and the envelope to compare with
    env, st = loop_stations(out / f"bench-{n_full}span-21st-exhaustive")
    beam = loop.read_beam(text)
    every = loop.every_case(beam)
    got = loop.run_cases(beam, st, every)
    agree_full = agreement(env, got)
    t = interleaved({"engine": lambda: run_child(engine_args(case, out)).seconds,
                     "loop": lambda: timed(lambda: loop.run_cases(beam, st, every))},
                    max(2, plan.repeats - 2))
    full = {"spans": n_full, "cases": len(every), "engine_s": min(t["engine"]),
            "loop_s": min(t["loop"]), "ratio": min(t["loop"]) / min(t["engine"]),
            "worst_relative_difference": max(agree_full.values()), "agreement": agree_full}
    result["every_case"] = full
    say(row(f"{n_full} spans, every case run", "cases", "engine s", "loop s", "ratio"))
    say(row("", len(every), full["engine_s"], full["loop_s"], full["ratio"]))
    say(f"    loop against envelope.parquet over all {len(every)} cases: worst relative "
        f"difference {full['worst_relative_difference']:.2g} (moment, shear, deflection)")

    # the 16-span beam: the loop runs the governing cases and random ones, extrapolated
    n = plan.loop_spans
    text = beam_toml(n, 21, "exhaustive")
    case = work / f"loop-{n}.toml"
    case.write_text(text)
    run_child(engine_args(case, out))
    env, st = loop_stations(out / f"bench-{n}span-21st-exhaustive")
    beam = loop.read_beam(text)
    governing = governing_cases(env, beam)
    sample = governing + random_cases(beam, max(0, plan.loop_sample - len(governing)), seed=5)
    got = loop.run_cases(beam, st, sample)
    agree = agreement(env, got)
    t = interleaved({"engine": lambda: run_child(engine_args(case, out)).seconds,
                     "loop": lambda: timed(lambda: loop.run_cases(beam, st, sample))},
                    plan.repeats)
    total = n_explicit_cases(n, "exhaustive")
    per_case = min(t["loop"]) / len(sample)
    loop_s = per_case * total
    ratio = loop_s / min(t["engine"])
    result["sampled"] = {
        "spans": n, "stations_per_span": 21, "explicit_cases": total,
        "sampled_cases": len(sample), "governing_cases": len(governing),
        "engine_s": min(t["engine"]), "loop_sample_s": min(t["loop"]),
        "loop_per_case_s": per_case, "loop_extrapolated_s": loop_s, "ratio": ratio,
        "worst_relative_difference": max(agree.values()), "agreement": agree,
        "samples": t}
    say(row(f"{n} spans, exhaustive", "cases", "engine s", "loop s", "ratio"))
    say(row("", total, min(t["engine"]), loop_s, ratio))
    say(f"    loop time EXTRAPOLATED: {len(sample)} cases run ({len(governing)} the engine "
        f"names as governing, the rest random), {per_case * 1e3:.3f} ms per case, "
        f"x {total} cases")
    say(f"    loop's envelope over those cases against envelope.parquet: worst relative "
        f"difference {max(agree.values()):.2g}")
    ok = max(agree.values()) <= AGREE_RTOL and max(agree_full.values()) <= AGREE_RTOL
    result["agrees"] = ok
    if not ok:
        say("    DISAGREEMENT between the loop and the engine: the ratio is void")
    targets.append(Target(f"(a) loop / engine, {n} spans exhaustive", ratio, ">= 200",
                          ok and ratio >= 200, "loop extrapolated from sampled cases"))
    return result


# -- (b) growth --------------------------------------------------------------------


def growth_series(label: str, cases: dict[int, Path], out: Path, repeats: int) -> dict[str, Any]:
    """Whole-process and in-process best times for each size, interleaved across sizes."""
    for case in cases.values():  # warm-up
        run_child(engine_args(case, out))
        in_process(case, out)
    whole = interleaved({str(k): (lambda c=c: run_child(engine_args(c, out)).seconds)
                         for k, c in cases.items()}, repeats)
    inner = interleaved({str(k): (lambda c=c: in_process(c, out)) for k, c in cases.items()},
                        repeats)
    sizes = list(cases)
    base = sizes[0]
    rows = []
    say(row(label, "process s", "x first", "in-process s", "x first"))
    for k in sizes:
        w, i = min(whole[str(k)]), min(inner[str(k)])
        rows.append({"size": k, "process_s": w, "in_process_s": i,
                     "process_ratio": w / min(whole[str(base)]),
                     "in_process_ratio": i / min(inner[str(base)])})
        say(row(f"  {k}", w, rows[-1]["process_ratio"], i, rows[-1]["in_process_ratio"]))
    return {"rows": rows}


def bench_growth(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    say("(b) growth (exhaustive patterning; best of repeats, sizes interleaved)")
    out = work / "out-b"
    result: dict[str, Any] = {}

    spans = {}
    for n in plan.growth_spans:
        spans[n] = work / f"growth-{n}span.toml"
        spans[n].write_text(beam_toml(n, 21, "exhaustive"))
    s = growth_series("spans (21 stations per span)", spans, out, plan.repeats)
    result["spans"] = s
    by = {r["size"]: r for r in s["rows"]}
    if 8 in by and 128 in by:
        ratio = by[128]["process_s"] / by[8]["process_s"]
        inner = by[128]["in_process_s"] / by[8]["in_process_s"]
        result["spans_128_over_8"] = {"process": ratio, "in_process": inner}
        say(f"    128 spans / 8 spans: {ratio:.3g} (whole process), {inner:.3g} (in-process)")
        targets.append(Target("(b) time 128 spans / 8 spans (process)", ratio, "<= 4",
                              ratio <= 4, f"in-process {inner:.3g}"))

    stations = {}
    for k in plan.growth_stations:
        stations[k] = work / f"growth-16span-{k}st.toml"
        stations[k].write_text(beam_toml(16, k, "exhaustive"))
    s = growth_series("stations per span (16 spans)", stations, out, plan.repeats)
    sizes = list(stations)
    for r in s["rows"]:
        r["station_ratio"] = r["size"] / sizes[0]
        r["process_growth"] = r["process_ratio"] / r["station_ratio"]
        r["in_process_growth"] = r["in_process_ratio"] / r["station_ratio"]
    steps = []
    for a, b in zip(s["rows"], s["rows"][1:], strict=False):
        steps.append({"from": a["size"], "to": b["size"],
                      "process": (b["process_s"] / a["process_s"]) / (b["size"] / a["size"]),
                      "in_process": (b["in_process_s"] / a["in_process_s"])
                      / (b["size"] / a["size"])})
    s["steps"] = steps
    result["stations"] = s
    say("    time ratio / station ratio, against the first size and step by step:")
    for r, st in zip(s["rows"][1:], steps, strict=True):
        say(f"      {r['size']:>5}: {r['process_growth']:.3g} process, "
            f"{r['in_process_growth']:.3g} in-process; step {st['from']}->{st['to']}: "
            f"{st['process']:.3g} process, {st['in_process']:.3g} in-process")
    worst = max(r["process_growth"] for r in s["rows"][1:])
    worst_step = max(st["in_process"] for st in steps)
    targets.append(Target("(b) station growth: time ratio / station ratio", worst, "<= 1",
                          worst <= 1.0, f"worst in-process step {worst_step:.3g}"))

    combos = {}
    for c in plan.growth_combinations:
        combos[c] = work / f"growth-16span-{c}combos.toml"
        combos[c].write_text(beam_toml(16, 21, "exhaustive", n_combinations=c))
    result["combinations"] = growth_series("combinations (16 spans, 21 stations)", combos,
                                           out, plan.repeats)
    return result


# -- (c) start-up ------------------------------------------------------------------

FLOOR_SCRIPT = """\
import sys

import click  # noqa: F401
import numpy as np
import pyarrow.parquet  # noqa: F401
import scipy.linalg  # noqa: F401
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

fig = Figure(figsize=(11.0, 8.7))  # the size and resolution of envelope.png
FigureCanvasAgg(fig)
ax = fig.add_subplot()
ax.plot(np.arange(3.0), np.arange(3.0))
fig.savefig(sys.argv[1], dpi=110)
"""


#: The engine's command line with pandas hidden, as on a machine without it: pandas is
#: no dependency of envelope, but pyarrow imports it (when installed) on the first
#: ``pyarrow.array`` call.  A diagnostic only; the target is the plain run.
NO_PANDAS_SCRIPT = """\
import sys


class _HidePandas:
    def find_spec(self, name, path=None, target=None):
        if name == "pandas" or name.startswith("pandas."):
            raise ModuleNotFoundError(f"No module named {name!r}")
        return None


sys.meta_path.insert(0, _HidePandas())
sys.argv = ["envelope", *sys.argv[1:]]
from envelope.cli import main

main()
"""


def bench_startup(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    say("(c) start-up: a 2-span run with its plot against the import floor")
    case = work / "startup-2span.toml"
    case.write_text(beam_toml(2, 21, "exhaustive"))
    floor = work / "floor.py"
    floor.write_text(FLOOR_SCRIPT)
    hidden = work / "no_pandas.py"
    hidden.write_text(NO_PANDAS_SCRIPT)
    out = work / "out-c"
    floor_args = [sys.executable, str(floor), str(work / "floor.png")]
    run_args = engine_args(case, out, plots=True)
    hidden_args = [sys.executable, str(hidden), *run_args[3:]]
    for args in (run_args, floor_args, hidden_args):
        run_child(args)
    t = interleaved({"run": lambda: run_child(run_args).seconds,
                     "floor": lambda: run_child(floor_args).seconds,
                     "run_without_pandas": lambda: run_child(hidden_args).seconds},
                    plan.startup_repeats)
    ratio = min(t["run"]) / min(t["floor"])
    hidden_ratio = min(t["run_without_pandas"]) / min(t["floor"])
    say(row("", "run s", "floor s", "ratio"))
    say(row("  2 spans, with plot", min(t["run"]), min(t["floor"]), ratio))
    say(row("  the same, pandas hidden", min(t["run_without_pandas"]), min(t["floor"]),
            hidden_ratio))
    say("    floor: python starting, importing numpy, scipy.linalg, pyarrow.parquet, click,")
    say("    matplotlib, and saving one figure of envelope.png's size through the Agg canvas")
    targets.append(Target("(c) 2-span run / import floor", ratio, "<= 1.5", ratio <= 1.5,
                          f"{hidden_ratio:.3g} with pandas hidden"))
    return {"run_s": min(t["run"]), "floor_s": min(t["floor"]), "ratio": ratio,
            "run_without_pandas_s": min(t["run_without_pandas"]),
            "ratio_without_pandas": hidden_ratio, "samples": t}


# -- (d) batch ---------------------------------------------------------------------


def batch_cases(n: int, folder: Path) -> tuple[list[Path], str]:
    """Case files for the batch: the shared generator (make_cases.py) when present,
    else the benchmark beams of :mod:`beams` in varied sizes."""
    folder.mkdir(parents=True, exist_ok=True)
    if (HERE / "make_cases.py").exists():
        from make_cases import make_cases

        make_cases(n, folder, 11)
        return sorted(folder.glob("*.toml")), "make_cases.py (seed 11)"
    paths = []
    for i in range(n):
        method = ("code", "exhaustive", "none")[i % 3]
        path = folder / f"beam-{i:04d}.toml"
        path.write_text(beam_toml(2 + i % 9, 21, method, seed=i, beam_id=f"beam-{i:04d}"))
        paths.append(path)
    return paths, "beams.py"


def analysed(paths: Sequence[Path]) -> list[tuple[Any, dict[str, Any]]]:
    """Each beam that analyses without error, with its result tables (built here, so
    that :func:`write_time` times the writing alone)."""
    from envelope import api, store
    from envelope.errors import EnvelopeError

    out = []
    for path in paths:
        try:
            result = api.analyse(api.load_case(str(path)))
        except EnvelopeError:
            continue
        out.append((result, store.tables(result, result.beam.output.all_cases)))
    return out


#: CPU seconds of the plain writes of the last :func:`write_time` (user + system).
PLAIN_CPU: list[float] = []


def write_time(beams: Sequence[tuple[Any, dict[str, Any]]], scratch: Path) -> tuple[float, float]:
    """Seconds to write the Parquet files of every beam: with the engine's writer
    (temporary name, fsync, rename: what ``envelope run`` and the batch do) and with a
    plain ``pyarrow.parquet.write_table`` of the same tables (its CPU seconds are
    appended to :data:`PLAIN_CPU`)."""
    from envelope import store

    engine, plain, cpu = 0.0, 0.0, 0.0
    for result, built in beams:
        folder = scratch / result.beam.id
        folder.mkdir(parents=True, exist_ok=True)
        t0 = time.perf_counter()
        if result.beam.output.all_cases:
            store.write_stations(folder / "stations.parquet", result)
        store.write_tables(folder, built)
        t1 = time.perf_counter()
        c1 = time.process_time()
        for stem, table in built.items():
            pq.write_table(table, folder / f"plain-{stem}.parquet")
        cpu += time.process_time() - c1
        engine += t1 - t0
        plain += time.perf_counter() - t1
    PLAIN_CPU.append(cpu)
    return engine, plain


def bench_batch(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    say("(d) batch: per-beam cost with two workers against writing the beam's Parquet files")
    if importlib.util.find_spec("envelope.batch") is None:
        say("    batch runner not available")
        return {"available": False}
    paths, source = batch_cases(plan.batch_beams, work / "batch-cases")
    help_text = subprocess.run([sys.executable, "-m", "envelope.cli", "batch", "--help"],
                               capture_output=True, text=True).stdout
    out = work / "out-d"
    args = [sys.executable, "-m", "envelope.cli", "batch", *map(str, paths), "-o", str(out),
            "--workers", "2"]
    if "--no-plots" in help_text:
        args.append("--no-plots")
    beams = analysed(paths)
    n_ok = len(beams)
    write_time(beams[:3], work / "scratch-d")  # warm-up
    runs: list[Run] = []
    small_runs: list[Run] = []
    plain: list[float] = []
    # the first fifth of the beams alone: the difference is the marginal cost of the rest,
    # with the pool's start (the workers, or their fork server, importing the engine) taken out
    n_small = max(1, len(paths) // 5)
    small_args = [a for a in args if a not in set(map(str, paths[n_small:]))]

    def batch_once() -> float:
        shutil.rmtree(out, ignore_errors=True)
        r = run_child(args, check=False)
        runs.append(r)
        return r.seconds

    def small_once() -> float:
        shutil.rmtree(out, ignore_errors=True)
        r = run_child(small_args, check=False)
        small_runs.append(r)
        return r.seconds

    def write_once() -> float:
        shutil.rmtree(work / "scratch-d", ignore_errors=True)
        seconds, plain_seconds = write_time(beams, work / "scratch-d")
        plain.append(plain_seconds)
        return seconds

    PLAIN_CPU.clear()
    t = interleaved({"batch": batch_once, "small": small_once, "write": write_once},
                    max(2, plan.repeats - 2))
    n_beams = max(n_ok, 1)
    n_rest = max(len(paths) - n_small, 1)
    # marginal per beam: wall with two workers, and CPU (all processes) per beam
    marginal = (min(t["batch"]) - min(t["small"])) / n_rest
    marginal_cpu = (min(r.cpu for r in runs) - min(r.cpu for r in small_runs)) / n_rest
    plain_cpu = min(PLAIN_CPU) / n_beams
    # two workers share the work: on two free cores a beam's wall cost is its CPU / 2
    cpu_ratio = marginal_cpu / 2 / plain_cpu
    per_beam = min(t["batch"]) / n_beams
    write_per_beam = min(t["write"]) / n_beams
    ratio = per_beam / write_per_beam
    plain_per_beam = min(plain) / n_beams
    codes = sorted({r.returncode for r in runs})
    say(row(f"  {len(paths)} beams ({source})", "per beam s", "write s", "ratio"))
    say(row("  engine's writer (atomic, fsync)", per_beam, write_per_beam, ratio))
    say(row("  plain pyarrow write_table", per_beam, plain_per_beam, per_beam / plain_per_beam))
    say(f"    batch wall time {min(t['batch']):.3g} s for {len(paths)} beams "
        f"({n_ok} analyse without error; exit status {codes})"
        + ("; plots off" if "--no-plots" in args else "; plots as the runner draws them"))
    targets.append(Target("(d) batch per-beam cost / Parquet write", ratio, "<= 3",
                          ratio <= 3, f"two workers; {per_beam / plain_per_beam:.3g} against "
                          "a plain write_table"))
    say(row("  marginal, wall (pool start out)", marginal, plain_per_beam,
            marginal / plain_per_beam))
    say(row("  marginal, CPU / 2 workers", marginal_cpu / 2, plain_cpu, cpu_ratio))
    targets.append(Target("(d) batch per-beam cost / plain write_table",
                          per_beam / plain_per_beam, "-", None,
                          "wall time over all beams, pool start included"))
    targets.append(Target("(d) batch marginal CPU per beam / 2 workers / plain write_table",
                          cpu_ratio, "<= 2", cpu_ratio <= 2,
                          f"wall {marginal / plain_per_beam:.3g}x; {len(paths)} - {n_small} "
                          "beams"))
    return {"available": True, "beams": len(paths), "beams_ok": n_ok, "source": source,
            "batch_s": min(t["batch"]), "per_beam_s": per_beam,
            "write_per_beam_s": write_per_beam, "ratio": ratio,
            "plain_write_per_beam_s": plain_per_beam,
            "ratio_plain_write": per_beam / plain_per_beam, "exit_status": codes,
            "small_beams": n_small, "marginal_s": marginal, "marginal_cpu_s": marginal_cpu,
            "plain_write_cpu_per_beam_s": plain_cpu, "ratio_marginal_cpu": cpu_ratio,
            "ratio_marginal_wall": marginal / plain_per_beam,
            "cpu_samples": {"batch": [r.cpu for r in runs],
                            "small": [r.cpu for r in small_runs], "plain_write": PLAIN_CPU},
            "command": "envelope batch <files> -o OUT --workers 2"
            + (" --no-plots" if "--no-plots" in args else ""), "samples": t}


# -- (e) memory --------------------------------------------------------------------


def bench_memory(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    n, k = plan.memory_spans, plan.memory_stations
    say(f"(e) memory: all-cases run, {n} spans x {k} stations per span, code patterning")
    case = work / "memory.toml"
    case.write_text(beam_toml(n, k, "code"))
    out = work / "out-e"
    r = run_child(engine_args(case, out, all_cases=True))
    folder = out / f"bench-{n}span-{k}st-code"
    rows = pq.ParquetFile(folder / "stations.parquet").metadata.num_rows
    stations = pq.ParquetFile(folder / "envelope.parquet").metadata.num_rows
    size = (folder / "stations.parquet").stat().st_size
    peak = r.maxrss_kib / 1024**2  # GiB
    say(row("", "rows", "peak GiB", "run s", "file GiB"))
    say(row(f"  {stations} stations x {rows // stations} cases", rows, peak, r.seconds,
            size / 1024**3))
    shutil.rmtree(folder, ignore_errors=True)
    limit_note = "" if rows >= 1e7 else f"measured at {rows:.3g} rows (target is for 1e7)"
    targets.append(Target("(e) peak memory, all-cases run [GiB]", peak, "<= 1",
                          peak <= 1.0 if rows >= 1e7 else None, limit_note))
    return {"spans": n, "stations_per_span": k, "rows": rows, "stations": stations,
            "cases": rows // stations, "peak_rss_gib": peak, "seconds": r.seconds,
            "file_bytes": size}


# -- (f) start-up to the floor -------------------------------------------------------

#: The floor of (f): a Python process that imports what every run needs at least.
FLOOR_MIN = "import numpy, pyarrow.parquet"


def unit_string_beam(n_spans: int) -> str:
    """The benchmark beam with its loads given as unit strings (as every demo case is)."""
    text = beam_toml(n_spans, 21, "exhaustive")
    out = []
    for line in text.splitlines():
        key, _, value = line.partition(" = ")
        if key in ("w", "P"):
            unit = "kN/m" if key == "w" else "kN"
            line = f'{key} = "{value} {unit}"'
        out.append(line)
    return "\n".join(out) + "\n"


def slow_imports(args: Sequence[str], top: int = 6) -> list[tuple[str, float]]:
    """The top-level imports that cost most in one run of ``args`` (``-X importtime``):
    (module, seconds), the engine's own modules left out."""
    proc = subprocess.run([args[0], "-X", "importtime", *args[1:]], capture_output=True,
                          text=True)
    costs: dict[str, float] = {}
    for line in proc.stderr.splitlines():
        if not line.startswith("import time:") or "|" not in line:
            continue
        _, cumulative, name = line.split("|")
        if not cumulative.strip().isdigit():
            continue  # the header line
        if name.startswith(" ") and not name.startswith("  "):  # imported at top level
            mod = name.strip()
            if not mod.startswith("envelope"):
                costs[mod] = costs.get(mod, 0.0) + int(cumulative) / 1e6
    return sorted(costs.items(), key=lambda kv: -kv[1])[:top]


def bench_floor(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    say(f"(f) start-up: 2-span run without plots and check, against `{FLOOR_MIN}`")
    case = work / "floor-2span.toml"
    case.write_text(unit_string_beam(2))
    out = work / "out-f"
    floor_args = [sys.executable, "-c", FLOOR_MIN]
    run_args = engine_args(case, out)
    check_args = [sys.executable, "-m", "envelope.cli", "check", str(case)]
    for args in (run_args, floor_args, check_args):
        run_child(args)  # also writes the engine's bytecode (see main)
    cpu: dict[str, list[float]] = {"run": [], "check": [], "floor": []}

    def side(name: str, args: list[str]) -> Callable[[], float]:
        def once() -> float:
            r = run_child(args)
            cpu[name].append(r.cpu)
            return r.seconds
        return once

    t = interleaved({"run": side("run", run_args), "check": side("check", check_args),
                     "floor": side("floor", floor_args)}, plan.startup_repeats)
    floor = min(t["floor"])
    wall_run, wall_check = min(t["run"]) / floor, min(t["check"]) / floor
    # judged on the medians of CPU time (user + system): a busy machine inflates wall
    # time unevenly, CPU time much less
    med = {k: statistics.median(v) for k, v in cpu.items()}
    run_ratio, check_ratio = med["run"] / med["floor"], med["check"] / med["floor"]
    say(row("", "best wall s", "floor s", "ratio"))
    say(row("  run --no-plots, unit strings", min(t["run"]), floor, wall_run))
    say(row("  check", min(t["check"]), floor, wall_check))
    say(row("", "median CPU s", "floor s", "ratio"))
    say(row("  run --no-plots, unit strings", med["run"], med["floor"], run_ratio))
    say(row("  check", med["check"], med["floor"], check_ratio))
    heavy = {"run": slow_imports(run_args), "check": slow_imports(check_args)}
    for name, items in heavy.items():
        say(f"    costliest imports of {name}: "
            + ", ".join(f"{m} {sec:.2f} s" for m, sec in items))
    targets.append(Target("(f) run --no-plots / import floor (median CPU)", run_ratio,
                          "<= 1.3", run_ratio <= 1.3,
                          f"floor {med['floor']:.3g} s CPU; best wall {wall_run:.3g}x"))
    targets.append(Target("(f) check / import floor (median CPU)", check_ratio, "<= 1.5",
                          check_ratio <= 1.5, f"best wall {wall_check:.3g}x"))
    return {"floor": FLOOR_MIN, "floor_s": floor, "run_s": min(t["run"]),
            "check_s": min(t["check"]), "run_ratio": run_ratio, "check_ratio": check_ratio,
            "wall_run_ratio": wall_run, "wall_check_ratio": wall_check,
            "cpu_median_s": med, "slow_imports": heavy, "samples": t, "cpu_samples": cpu}


# -- (g) a long segmented beam -------------------------------------------------------


def segmented_beam(n_spans: int) -> str:
    """The benchmark beam with 41 stations a span and 4 segments a span."""
    return beam_toml(n_spans, 41, "segments").replace(
        'method = "segments"', 'method = "segments"\nsegments = 4')


def bench_long(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    say("(g) long segmented beam: 4 segments and 41 stations a span, run --no-plots")
    say(row("  spans", "run s", "peak MiB", "x time", "x n^2"))
    rows: list[dict[str, Any]] = []
    for n in plan.long_spans:
        case = work / f"long-{n}.toml"
        case.write_text(segmented_beam(n))
        out = work / "out-g"
        r = run_child(engine_args(case, out))
        shutil.rmtree(out, ignore_errors=True)
        step = rows[-1]["seconds"] if rows else None
        growth = r.seconds / step if step else float("nan")
        n2 = (n / rows[-1]["spans"]) ** 2 if rows else float("nan")
        rows.append({"spans": n, "seconds": r.seconds, "peak_mib": r.maxrss_kib / 1024,
                     "growth": growth, "n2": n2})
        say(row(f"  {n}", r.seconds, r.maxrss_kib / 1024, growth, n2))
    last = rows[-1]
    judged = last["spans"] >= 512
    targets.append(Target(f"(g) peak MiB, {last['spans']} spans segmented", last["peak_mib"],
                          "<= 512", last["peak_mib"] <= 512 if judged else None,
                          "" if judged else "target is for 512 spans"))
    worst = max((r["growth"] / r["n2"] for r in rows[1:]), default=float("nan"))
    targets.append(Target("(g) worst doubling: time growth / n^2", worst, "<= 1",
                          worst <= 1.0, "whole process, start-up included"))
    return {"rows": rows}


# -- (h) the stages of a long segmented beam ------------------------------------------


def bench_stages(plan: Plan, work: Path, targets: list[Target]) -> dict[str, Any]:
    say("(h) stages of the long segmented beam: CPU s per stage, growth per doubling / n^2")
    rows: list[dict[str, Any]] = []
    for n in plan.long_spans:
        case = work / f"long-{n}.toml"
        case.write_text(segmented_beam(n))
        out = work / "out-h"
        proc = subprocess.run([sys.executable, str(HERE / "stages.py"), str(case), str(out)],
                              capture_output=True, text=True, check=True)
        shutil.rmtree(out, ignore_errors=True)
        rows.append(json.loads(proc.stdout.strip().splitlines()[-1]))
    names = list(rows[0]["seconds"])
    say(row("  stage", *(f"{r['spans']} spans" for r in rows),
            widths=(14, *(12,) * len(rows))))
    for name in names:
        say(row(f"  {name}", *(r["seconds"][name] for r in rows),
                widths=(14, *(12,) * len(rows))))
    say(row("  peak MiB", *(r["peak_mib"] for r in rows), widths=(14, *(12,) * len(rows))))
    worst: dict[str, float] = {}
    for name in names:
        for a, b in itertools.pairwise(rows):
            n2 = (b["spans"] / a["spans"]) ** 2
            # stages under 10 ms a run are timing noise, not growth
            if a["seconds"][name] >= 0.01:
                growth = b["seconds"][name] / a["seconds"][name] / n2
                worst[name] = max(worst.get(name, 0.0), growth)
    say("  worst doubling / n^2: " + ", ".join(f"{k} {v:.2f}" for k, v in worst.items()))
    top = max(worst.values(), default=float("nan"))
    targets.append(Target("(h) worst stage doubling: CPU growth / n^2", top, "<= 1", top <= 1.0,
                          f"up to {rows[-1]['spans']} spans"))
    last = rows[-1]
    judged = last["spans"] >= 512
    targets.append(Target(f"(h) peak MiB in-process, {last['spans']} spans", last["peak_mib"],
                          "<= 512", last["peak_mib"] <= 512 if judged else None,
                          "" if judged else "target is for 512 spans"))
    return {"rows": rows, "worst_growth_over_n2": worst}


# -- main --------------------------------------------------------------------------

SECTIONS: dict[str, Callable[[Plan, Path, list[Target]], dict[str, Any]]] = {
    "a": bench_loop, "b": bench_growth, "c": bench_startup, "d": bench_batch,
    "e": bench_memory, "f": bench_floor, "g": bench_long, "h": bench_stages}


def source_state() -> str:
    """The engine's commit, and whether envelope/ has uncommitted changes ("unknown" outside
    a git checkout)."""
    root = HERE.parent
    try:
        commit = subprocess.run(["git", "-C", str(root), "rev-parse", "--short", "HEAD"],
                                capture_output=True, text=True, check=True).stdout.strip()
        dirty = subprocess.run(["git", "-C", str(root), "status", "--porcelain", "envelope"],
                               capture_output=True, text=True, check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return "unknown"
    return commit + (" with uncommitted changes in envelope/" if dirty else "")


def machine() -> dict[str, Any]:
    return {"nproc": os.cpu_count(), "machine": platform.machine(),
            "python": platform.python_version(), "system": platform.system(),
            "source": source_state(), "load_average_start": os.getloadavg()}


def main(argv: Sequence[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--quick", action="store_true", help="a reduced run (about 2 minutes)")
    parser.add_argument("--json", type=Path, help="write every figure to this JSON file")
    parser.add_argument("--only", default="abcdefgh", help="sections to run, e.g. a,c")
    parser.add_argument("--work", type=Path, help="scratch folder (default: a temporary one)")
    opts = parser.parse_args(argv)
    plan = QUICK if opts.quick else FULL
    chosen = [s for s in opts.only.replace(",", "") if s.strip()]
    unknown = sorted(set(chosen) - set(SECTIONS))
    if unknown:
        parser.error(f"--only: no section {', '.join(unknown)} (sections: a to h)")

    work = opts.work or Path(tempfile.mkdtemp(prefix="envelope-bench-"))
    work.mkdir(parents=True, exist_ok=True)
    # children keep the engine's compiled bytecode, as an installed package has it (pip
    # compiles at install); a PYTHONDONTWRITEBYTECODE in the environment would make every
    # timed process compile the engine's modules again.  The cache goes to the work folder.
    os.environ.pop("PYTHONDONTWRITEBYTECODE", None)
    os.environ["PYTHONPYCACHEPREFIX"] = str(work / "pycache")
    info = machine()
    started = datetime.datetime.now().astimezone()
    say(f"envelope benchmarks, {plan.name} plan, {started:%Y-%m-%d %H:%M %Z}; "
        f"{info['nproc']} CPUs {info['machine']}, Python {info['python']}; load average "
        + " ".join(f"{v:.2f}" for v in info["load_average_start"]))
    say(f"engine at {info['source']}")
    say()
    targets: list[Target] = []
    results: dict[str, Any] = {}
    t0 = time.perf_counter()
    try:
        for s in chosen:
            results[s] = SECTIONS[s](plan, work, targets)
            say()
    finally:
        if opts.work is None:
            shutil.rmtree(work, ignore_errors=True)
    info["load_average_end"] = os.getloadavg()
    elapsed = time.perf_counter() - t0

    say("targets")
    say(row("figure", "measured", "target", "met", widths=(46, 12, 10, 6)))
    for tg in targets:
        met = "n/a" if tg.met is None else "yes" if tg.met else "NO"
        say(row(tg.figure, tg.measured, tg.limit, met,
                widths=(46, 12, 10, 6)) + (f"   {tg.note}" if tg.note else ""))
    say(f"\n{elapsed:.0f} s in all; load average at the end "
        + " ".join(f"{v:.2f}" for v in info["load_average_end"]))
    if opts.json:
        report = {"date": started.isoformat(timespec="seconds"), "plan": asdict(plan),
                  "machine": info, "seconds": elapsed, "sections": results,
                  "targets": [asdict(t) for t in targets]}
        opts.json.write_text(json.dumps(report, indent=2, default=float) + "\n")
        say(f"wrote {opts.json}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
