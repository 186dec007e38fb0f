"""Limits on work: the memory and time an analysis will take, estimated before solving.

A small case file can ask for more than a machine has (300 spans cut into 1000
segments each, a hundred thousand stations per span, thousands of spans).  The work
grows with two counts that the file fixes before anything is solved:

* unit cases U: one load case on one cell (a span, or one segment of a span), so at
  most the (case, span) pairs that carry load times the segments per span;
* stations S: ``stations_per_span`` per span, plus the segment boundaries and two rows
  at every point load, support and load edge.

The responses at the stations are S x U numbers per quantity, but they are made and
reduced in blocks of at most ``config.ENVELOPE_CHUNK_VALUES`` values (the supports in
smaller ones), so only a block of them lives at once, with several temporaries each;
what grows with the beam is the unit-case solution (elements x U) and the tables, a
row per station.  Moment
redistribution keeps a second, strength solution of every unit case beside it.  A
moving load (concentrated, train) is placed by influence lines: a solve with 4 x
(elements + rows) unit loads for a block of rows (at most
``config.MOVING_CHUNK_ROWS`` stations, or the 2 x spans rows beside the supports for
the reactions), whose solution and responses are held together, and that solve is
large enough to load numba's kernels.  The constants below were fitted to peak memory
and CPU time measured on beams of 2 to 512 spans, up to 50 segments and 200 000
stations (an x86-64 machine; they overestimate, which is the safe side: by about 2x
for memory on long segmented beams, where the estimate before the blocks were counted
was 15x, 7.1 GiB for a 512-span beam that peaks at 486 MiB).  A beam whose estimate
exceeds the limits is refused with exit status 2, naming the key that drives the
size, before any work; ``--max-memory`` and ``--max-seconds`` raise the limits.
"""

from __future__ import annotations

import math
import os

from envelope import config
from envelope.errors import CaseError
from envelope.model import Beam
from envelope.values import dataclass

#: Bytes per (station x unit case) of the block of responses being enveloped:
#: responses, products and choices together ...
BYTES_PER_CELL = 48.0
#: ... in blocks of at most this many (station x unit case) values (four blocks of the
#: enveloper, to cover the all-cases table and the sizing's extents beside it).
BLOCK_CELLS = 4 * config.ENVELOPE_CHUNK_VALUES
#: Bytes per station: the rows of the tables (envelope, supports' neighbours, service
#: and design columns) and their Arrow buffers while written; measured about 650.
BYTES_PER_STATION = 2048.0
#: Bytes per (element x unit case): the solution and the element end forces (measured
#: about 13 on segmented beams of 64 to 512 spans).
BYTES_PER_ELEMENT_UNIT = 32.0
#: Memory of the engine itself (interpreter, numpy, pyarrow), bytes.
BASE_BYTES = 160e6
#: Memory numba holds once its kernels are loaded, bytes (measured about 130 MiB); the
#: kernels run on large beams (:data:`envelope.config.KERNEL_MIN_UNITS`, or stations
#: enveloped in more than one block of :data:`envelope.config.ENVELOPE_CHUNK_VALUES`).
KERNEL_BYTES = 140e6
#: Bytes per (element x unit case) of the strength solution that moment redistribution
#: keeps beside the elastic one: new element start moments and shears and their changes.
BYTES_PER_REDISTRIBUTED = 32.0
#: Bytes per (influence unit load x (elements + rows + joints)) of one influence-line
#: solve of a moving load: its solution, the responses of the rows and their cubics.
BYTES_PER_INFLUENCE_VALUE = 24.0
#: CPU seconds per (influence unit load x (elements + rows + joints)) and solve.
SECONDS_PER_INFLUENCE_VALUE = 4.0e-6
#: CPU seconds per (station x unit case) and per station, and a fixed start.
SECONDS_PER_CELL = 1.0e-6
SECONDS_PER_STATION = 1.0e-4
BASE_SECONDS = 0.5


@dataclass(frozen=True, slots=True)
class WorkLimits:
    """The most an analysis may take: memory in bytes (None: ``config.WORK_MEMORY_SHARE``
    of the machine's memory) and estimated CPU seconds."""

    max_memory: float | None = None
    max_seconds: float = config.WORK_MAX_SECONDS

    def memory(self) -> float:
        """The memory a beam may use, in bytes (given, or half the machine's)."""
        if self.max_memory is not None:
            return self.max_memory
        return config.WORK_MEMORY_SHARE * machine_memory()


def from_options(max_memory_gib: float | None, max_seconds: float | None) -> WorkLimits:
    """The limits given by the command-line options ``--max-memory`` (GiB) and
    ``--max-seconds``; the defaults where an option is not given."""
    return WorkLimits(max_memory_gib * 2**30 if max_memory_gib is not None else None,
                      max_seconds if max_seconds is not None else config.WORK_MAX_SECONDS)


def machine_memory() -> float:
    """Physical memory of this machine, bytes (8 GiB when it cannot be told)."""
    try:
        return float(os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE"))
    except (AttributeError, ValueError, OSError):
        return 8.0 * 2**30


@dataclass(frozen=True, slots=True)
class Estimate:
    """The counts of one beam and the memory (bytes) and CPU time (s) they imply."""

    spans: int
    parts: int  # cells per span (segments, else 1)
    stations: int
    units: int
    elements: int
    load_items: int
    memory: float
    seconds: float
    influence_loads: int = 0  # unit loads of one influence-line solve (moving loads)


def estimate(beam: Beam) -> Estimate:
    """Counts, memory and time of ``beam``'s analysis, from the model alone (cheap: a
    pass over the spans and load items)."""
    n = beam.n_spans
    parts = beam.patterning.segments if beam.patterning.method == "segments" else 1
    loaded = {(load.case, load.span) for load in beam.loads}
    units = max(1, len(loaded) * parts)
    stretches = sum(len(span.stretches) for span in beam.spans)
    items = len(beam.loads)
    stations = n * (beam.output.stations_per_span + parts + 3) + 4 * items + 2 * stretches
    elements = stretches + n * parts + 2 * items
    kernels = (units >= config.KERNEL_MIN_UNITS
               or stations * units > config.ENVELOPE_CHUNK_VALUES)
    memory = (BASE_BYTES + BYTES_PER_CELL * min(stations * units, BLOCK_CELLS)
              + BYTES_PER_STATION * stations + BYTES_PER_ELEMENT_UNIT * elements * units)
    seconds = BASE_SECONDS + SECONDS_PER_CELL * stations * units \
        + SECONDS_PER_STATION * stations
    if beam.design is not None:
        from envelope.design import ConcreteDesign  # (loaded only for a case with [design])

        # member sizing envelopes each span on the extents' grid (sizing.extents) in
        # blocks of envelope.solved.chunk_rows: more than one block loads the kernels
        grid = n * (config.EXTENT_SAMPLES + 1 + beam.output.stations_per_span)
        block = max(1, min(config.STATION_CHUNK_ROWS,
                           config.ENVELOPE_CHUNK_VALUES // units))
        kernels = kernels or grid > block
        if isinstance(beam.design, ConcreteDesign) and beam.design.redistribution is not None:
            memory += BYTES_PER_REDISTRIBUTED * elements * units
    influence = 0
    if any(load.is_moving for load in beam.loads):
        rows = max(min(stations, config.MOVING_CHUNK_ROWS), 2 * n)
        influence = 4 * (elements + rows)
        values = influence * (elements + rows + n + 1)
        memory += BYTES_PER_INFLUENCE_VALUE * values
        # a train's worst positions: rows x intervals (about axles x pieces) x axles
        axles = max(len(load.axles) for load in beam.loads if load.is_moving)
        train = rows * axles * axles * (elements + rows)
        kernels = (kernels or influence >= config.KERNEL_MIN_UNITS
                   or train >= config.KERNEL_MIN_TRAIN_VALUES)
        solves = 1 + math.ceil(stations / config.MOVING_CHUNK_ROWS)
        seconds += SECONDS_PER_INFLUENCE_VALUE * values * solves
    memory += KERNEL_BYTES * kernels
    return Estimate(n, parts, stations, units, elements, items, memory, seconds, influence)


def _driver(beam: Beam, est: Estimate) -> str:
    """The key that drives the size: stations per span when they outnumber the cells,
    else segments when the spans are cut, else the spans."""
    k = beam.output.stations_per_span
    if k > max(est.parts, 100):
        return "output.stations_per_span"
    if est.parts > 1 and est.parts >= est.spans:
        return "patterning.segments"
    return "spans"


def check(beam: Beam, limits: WorkLimits | None = None) -> Estimate:
    """Refuse (CaseError, exit 2) a beam whose estimated memory or time exceeds the
    limits; returns the estimate otherwise."""
    limits = limits or WorkLimits()
    est = estimate(beam)
    counts = (f"{est.spans} spans, {est.parts} cell{'s' if est.parts > 1 else ''} per span, "
              f"about {est.stations} stations, {est.units} unit cases, "
              f"{est.load_items} load items")
    key = _driver(beam, est)
    memory = limits.memory()
    if est.memory > memory:
        raise CaseError(beam.source, key,
                        f"the analysis would need about {_gib(est.memory)} of memory, more "
                        f"than the limit of {_gib(memory)} ({counts}); reduce {key} or "
                        "raise the limit with --max-memory")
    if est.seconds > limits.max_seconds:
        raise CaseError(beam.source, key,
                        f"the analysis would take about {est.seconds:.0f} s of CPU time, "
                        f"more than the limit of {limits.max_seconds:g} s ({counts}); "
                        f"reduce {key} or raise the limit with --max-seconds")
    return est


def _gib(n: float) -> str:
    return f"{n / 2**30:.3g} GiB" if math.isfinite(n) else "unbounded memory"
