"""Tolerances and chunk sizes, in one place, each with its reason."""

from __future__ import annotations

#: Relative tolerance of the statics check on every solve (sum of reactions
#: against sum of loads, and moments about the left end), relative to the sum
#: of absolute loads.  The issue's contract: 1e-9.
STATICS_RTOL = 1e-9

#: Steps of iterative refinement after the banded solve (same factor, residual from the
#: element deformations).  One step recovers the digits a very short, stiff element
#: costs; the second is a margin.
REFINE_STEPS = 2

#: Relative tolerance of the solve residual at every free degree of freedom,
#: |K d - F| / (|K| |d| + |F|): the backward error of the solve.
RESIDUAL_RTOL = 1e-9

#: Two positions closer than this fraction of the span length are one station
#: (so that a point load placed at a generated station does not add a third row).
STATION_MERGE_RTOL = 1e-12

#: Most rows of stations handled at once by the enveloper (and by the all-cases
#: table); see also :data:`ENVELOPE_CHUNK_VALUES`.
STATION_CHUNK_ROWS = 2048

#: Most (rows x unit cases) values in one block of the enveloper: the response block
#: is that many float64 per quantity (4 MiB), and the reduction's working arrays a few
#: times that, so memory stays bounded however many spans the beam has, and a block
#: stays near the processor's caches (a 512-span beam with 4 segments a span has 4096
#: unit cases: 128 rows a block).
ENVELOPE_CHUNK_VALUES = 1 << 19

#: From this many unit cases on (and whenever the stations are enveloped in more than
#: one block) the enveloper's sums and the responses at points are made by the numba
#: kernels: one pass over memory instead of several numpy passes and temporaries, and
#: each row's values independent of the block it is computed in.  Below it numpy is
#: quicker than importing numba (which also holds about 130 MiB once loaded).
KERNEL_MIN_UNITS = 512

#: Most (supports x unit cases) values in one block of the support envelopes (reactions
#: and support moments): 512 KiB of float64 a block, so that the block and the few arrays
#: of its size that the reduction makes (the governing choice, its products and signs)
#: stay near a core's 1 MiB second-level cache.  All support rows at once left the
#: cache from 256 spans with 4 segments a span (257 x 2048 values, 4 MiB an array) and
#: grew faster than supports x unit cases; of 2^13 to 2^17 values a block this size was
#: quickest at 128 to 512 spans (benchmarks/supports_bench.py).
SUPPORT_CHUNK_VALUES = 1 << 16
#: Most (elements x unit cases) values in one block of columns of the solve: its
#: working arrays are (elements x 4 x unit cases) float64, 2 MiB each at this size
#: (a dozen of them live at once)...
SOLVE_CHUNK_VALUES = 1 << 16

#: ... but at least this many unit cases a block: each block costs a pass of Python
#: steps down and up the banded factor (in proportion to the elements), so blocks of
#: ever fewer columns would make the solve grow faster than elements x unit cases; a
#: block of this many columns is a fixed small share of the solution it fills.
SOLVE_CHUNK_UNITS = 256

#: Spans of stations in one row group of envelope.parquet: each row group is built and
#: written on its own, with its own dictionary of ``_loaded`` texts.
ENVELOPE_ROW_GROUP_SPANS = 64
#: Rows of points whose influence lines are found at once for the moving loads: the
#: lines cut the beam at every point of the chunk, so the solve has 4 x (elements +
#: rows) right-hand sides and the worst-position search holds rows x (axles x pieces)
#: cubics; 256 rows keep both to tens of MiB for beams of a thousand elements.
MOVING_CHUNK_ROWS = 256

#: Rows per Parquet row group of stations.parquet (all cases, long format).
STATIONS_ROW_GROUP = 1_000_000

#: A result table of at most this many values (rows x columns) is encoded as Parquet in
#: memory and written to its file in one call: the encoder's many small writes through
#: a Python file object cost about 0.3 ms a file, a tenth of a small beam's writing.  A
#: larger table streams to its file, so a long beam's peak memory holds no copy of it.
#: The generated beams of a batch (up to 12 spans) make tables of at most some 4 000
#: values; a 512-span beam's reactions table of 12 312 values (1.9 MB of Parquet, with
#: its governing-case texts) cost 16 MiB of peak memory encoded in memory, its envelope
#: table (0.5 M values) 40 MiB more.
BUFFERED_WRITE_MAX_VALUES = 1 << 13

#: Zero crossings of the envelope (detailing extents) are found to this fraction of the
#: span length.
DESIGN_XTOL = 1e-10
#: The detailing extents bracket those crossings on a grid of this many equal steps per
#: span (plus the stations): fine enough that no region narrower than a step is missed
#: on a floor span.
EXTENT_SAMPLES = 200

#: Golden-section search on the envelope brackets each design maximum to this fraction
#: of the span; the root of the governing case's slope then fixes it to round-off.
GOLDEN_XTOL = 1e-6

#: Most golden-section steps (each keeps 0.618 of the bracket: 200 steps would narrow
#: any bracket far below round-off, so the width test always ends the search first).
GOLDEN_MAX_STEPS = 200

#: Most regula-falsi (Illinois) steps for a slope root; it converges superlinearly, in
#: about ten steps to round-off, so the limit only guards against a pathological case.
ROOT_MAX_STEPS = 60

#: Up to this many brackets, the steps of the design search's root (Anderson-Bjorck)
#: keep their bookkeeping in Python floats: a step of the array version is some forty
#: numpy calls of a few microseconds each whatever the size, about as long as the
#: response it waits for; Python's float steps cost about a microsecond a bracket.
ROOT_SCALAR_BRACKETS = 48
#: A slope root is final when a step moves it by at most this many machine epsilons of
#: the span length (at least of 1 length unit): round-off.
ROOT_XTOL_EPS = 4.0

#: A design value counts as still governed by the case found at its station when that
#: case's value there is within this fraction of the envelope (round-off of the sum).
GOVERNS_RTOL = 1e-12

#: Distances (fractions of the span) either side of a station at which the envelope is
#: probed to recognise a vertex at the station itself (under a point load, at a span end).
VERTEX_PROBES = (1e-9, 1e-6, 1e-3, 1e-1)

#: Positions (fractions of the bracket) at which the envelope is probed to confirm a
#: maximum at an end of its bracket (several cases may tie at a support).
END_PROBES = (0.01, 0.1, 0.3, 0.6, 0.9, 0.99)

#: Warn when the estimated condition number of the stiffness matrix exceeds this:
#: with float64 (eps 2.2e-16) about 1e-4 relative accuracy remains at 1e12, and the
#: residual and statics checks still guard every result.
CONDITION_WARN = 1e12

#: A statics failure with a condition estimate above this is reported as a nearly
#: unstable beam (bad input, exit 2), since the lost digits (estimate x 2.2e-16) then
#: reach the statics tolerance; below it a failure is the engine's own (exit 3).
CONDITION_BLAME = 1e6

#: The strength of the bars or stirrups provided may fall below the design action by
#: this fraction (round-off of the layout's depths) before the sizing status fails.
PROVIDED_STRENGTH_RTOL = 1e-9

#: A design value smaller than this fraction of the beam's largest value of the same
#: quantity is round-off (e.g. the moment at a cantilever tip) and is reported as 0.
ZERO_RTOL = 1e-9

#: Half-width (fraction of the span) of the bracket around a refined maximum in which
#: the root of the governing case's slope is sought: golden section leaves the position
#: of a smooth maximum uncertain by about sqrt(eps) ~ 1e-8 of the span.
ROOT_BRACKET = 1e-5

#: Above this many (point, load item) pairs in one block of stations, the load terms
#: are summed by the numba kernel instead of numpy pair arrays (24 bytes a pair, times
#: several temporaries); below it numpy is quicker than importing numba.
KERNEL_MIN_PAIRS = 2_000_000

#: From this many (rows x intervals x loads) values a moving train's worst positions
#: (:func:`envelope.influence._run_extremes`) are found by the numba kernel, one pass
#: without the (rows x intervals x 4 x 4) numpy temporaries, about 0.3 s of numpy
#: passes, near the cost of loading numba; once numba is loaded every train uses it.
KERNEL_MIN_TRAIN_VALUES = 2_000_000

#: Largest case file read, in bytes: a beam of a thousand spans with a dozen load items
#: each is under 1 MB; anything larger is refused before it is parsed.
CASE_FILE_MAX_BYTES = 4 * 1024 * 1024

#: Deepest nesting of arrays and tables in a case file (the document is level 1, a
#: ``[[spans.sections]]`` item level 5): deeper is refused while parsing.
CASE_NESTING_MAX = 16

#: Longest text value in a case file, in characters (a title, a name, a path).
TEXT_MAX_CHARS = 4096

#: Positions of glyphs within a pixel on the figure's raster canvas (envelope.glyphs):
#: a glyph is rendered once per position step, so 4 steps (a quarter pixel, at most an
#: eighth of a pixel from where the text layout puts it) keep 16 renderings per glyph
#: and letters that look as matplotlib places them.
TEXT_SUBPIXEL_STEPS = 4

#: Entries of each text cache of the raster canvas (glyphs, lines, extents, layouts;
#: a line is a few kilobytes, so at most some tens of MiB): a cache that fills is
#: emptied and starts again.
TEXT_CACHE_ENTRIES = 10_000

#: Keys to the symbols kept as pixels by a batch worker (envelope.stamp): a key is a few
#: hundred kilobytes, and a few dozen sets of symbols cover most beams of a batch.
KEY_STAMPS = 32

#: Largest sections table (CSV) read, in bytes: a full catalogue of rolled shapes with
#: every column is well under 1 MB.
SECTIONS_MAX_BYTES = 4 * 1024 * 1024

#: Longest text shown from an input file in a message (a field of a sections table, a
#: key): the rest is cut and marked, so that no message echoes a file's content.
ECHO_CHARS = 40

#: Share of the machine's physical memory one analysis may be estimated to take
#: (envelope.limits); a batch runs one analysis per worker process.
WORK_MEMORY_SHARE = 0.5

#: Most CPU seconds one analysis may be estimated to take (envelope.limits).
WORK_MAX_SECONDS = 600.0

#: Intervals per span of the grid on which cracked curvatures are integrated for the
#: concrete deflections (trapezoidal rule: relative error about (1/400)^2 / 12 ~ 5e-7
#: of a smooth span's deflection; point-load positions are added to the grid).
DEFLECTION_GRID = 400
#: EN 1992-1-1 7.4.3: with beta = 0.5 (sustained load) the distribution coefficient zeta
#: jumps from 0 to 0.5 where |M| reaches Mcr, and the curvature with it; a grid interval
#: holding the jump costs the trapezoidal rule an error of order (interval / span), about
#: 1e-3 of the long-term deflection at 400 intervals (the shrinkage curvature of 7.4.3(6)
#: jumps likewise where the moment changes sign).  Each interval where |M| crosses Mcr or
#: 0 is cut into this many, twice over (the second time the new interval that holds
#: the crossing), leaving about 1e-6.
CRACKING_SPLIT = 32
CRACKING_PASSES = 2

#: ``redistribution = "max"``: the fraction at a support is lowered to the largest the
#: section designed allows, rounded down to this step (0.1 percent, the precision an
#: engineer quotes), and the beam sized again until no support asks for more than
#: allowed.  The fraction only falls, so the loop ends; it is capped at this many
#: sizings, after which sizing's own check fails the status where it is still too high.
REDISTRIBUTION_STEP = 0.001
REDISTRIBUTION_MAX_SIZINGS = 8
#: Round-off allowed when the fraction used is compared with the fraction allowed.
REDISTRIBUTION_ATOL = 1e-9
#: Offset, as a fraction of the span, of the grid points placed just each side of a
#: stretch end for the concrete deflections: the stiffness steps there, and a point each
#: side lets the trapezoidal rule take each stretch's own curvature up to the step (the
#: sliver between them weighs 1e-9 of the span, far below the rule's own error).
STRETCH_SIDE = 1e-9
