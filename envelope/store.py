"""Result tables as Arrow, and their Parquet files (the only pyarrow user).

Columns and names follow the outputs contract.  Values are in the customary
units of the case's system (deflection in mm or in); every file carries the
``envelope:units`` metadata, the engine version and the SHA-256 of the input.
Files are written to a temporary name in the same folder and renamed, so a
crash never leaves a half-written file under a final name.
"""

from __future__ import annotations

import functools
import itertools
import json
import os
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import BinaryIO

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq

from envelope import config, engine_version
from envelope.analysis import Analysis, explicit_case_blocks, left_out_of_explicit_cases
from envelope.enveloper import CaseSet, Extremes
from envelope.errors import StaticsError
from envelope.files import sha256_hex, write_atomic, write_new
from envelope.model import Beam
from envelope.reduction import span_factors

CAUTION = ("Results are for checking by a licensed engineer and defer to local codes; "
           "they are not a design.")
_ENVELOPE_QUANTITIES = (("moment", 1.0), ("shear", 1.0), ("deflection", None))


# Column builders straight from buffers: pyarrow's pa.array() imports pandas when it is
# installed (about 0.4 s at start-up), and these need nothing but numpy.


def float_column(values: np.ndarray | list[float], null: np.ndarray | None = None) -> pa.Array:
    """float64 column; ``null`` marks missing entries (None: none missing)."""
    data = np.ascontiguousarray(values, dtype=np.float64)
    if null is None or not np.any(null):
        return pa.Array.from_buffers(pa.float64(), data.size, [None, pa.py_buffer(data)])
    valid = np.packbits(~np.asarray(null, dtype=bool), bitorder="little")
    return pa.Array.from_buffers(pa.float64(), data.size,
                                 [pa.py_buffer(valid), pa.py_buffer(data)],
                                 null_count=int(np.count_nonzero(null)))


def int_column(values: np.ndarray | list[int]) -> pa.Array:
    """An int32 Arrow column from the values' buffer."""
    data = np.ascontiguousarray(values, dtype=np.int32)
    return pa.Array.from_buffers(pa.int32(), data.size, [None, pa.py_buffer(data)])


def string_column(values: np.ndarray | list[str], null: np.ndarray | None = None) -> pa.Array:
    """UTF-8 string column from Python strings; ``null`` marks missing entries.

    Each distinct string is encoded once (a ``_loaded`` text of a long beam is several
    kilobytes and repeats over many rows; a repeated object hashes once), and the
    offsets are built straight as int32, so no cast (and no pyarrow.compute) is needed."""
    index: dict[str, int] = {}
    codes = np.fromiter((index.setdefault(v, len(index)) for v in map(str, values)),
                        dtype=np.int64, count=len(values))
    encoded = [v.encode() for v in index]
    # every row distinct: the codes are 0, 1, 2... and the rows' bytes one join
    return _coded_strings(encoded, codes, null, codes.size == len(encoded))


def coded_string_column(texts: Sequence[str], codes: np.ndarray,
                        null: np.ndarray | None = None) -> pa.Array:
    """The string column of ``texts[codes]`` (a combination's name per row, "left" or
    "right"...): each text encoded once, no Python step per row; the same column as
    :func:`string_column` of those strings."""
    return _coded_strings([t.encode() for t in texts], np.asarray(codes, dtype=np.int64),
                          null, False)


def _coded_strings(encoded: list[bytes], codes: np.ndarray, null: np.ndarray | None,
                   in_order: bool) -> pa.Array:
    """The string column whose row i holds ``encoded[codes[i]]`` (``in_order``: the
    codes are 0, 1, 2...)."""
    lengths = np.fromiter(map(len, encoded), dtype=np.int64, count=len(encoded))
    offsets = np.zeros(codes.size + 1, dtype=np.int64)
    np.cumsum(lengths[codes], out=offsets[1:])
    total = int(offsets[-1])
    # the rows' bytes: one join of references to the distinct encodings
    data = b"".join(encoded) if in_order else b"".join(
        [encoded[c] for c in codes.tolist()])
    bufs = [None, pa.py_buffer(offsets.astype(np.int32) if total < 2**31 else offsets),
            pa.py_buffer(data)]
    count = 0
    if null is not None and np.any(null):
        bufs[0] = pa.py_buffer(np.packbits(~np.asarray(null, dtype=bool), bitorder="little"))
        count = int(np.count_nonzero(null))
    kind = pa.string() if total < 2**31 else pa.large_string()
    return pa.Array.from_buffers(kind, codes.size, bufs, null_count=count)


#: The Arrow type of every ``_loaded`` column: a dictionary of the distinct texts
#: (each several kilobytes on a long beam, and repeated over many rows) and one int32
#: index a row.
LOADED_TYPE = pa.dictionary(pa.int32(), pa.string())


def dictionary_column(values: np.ndarray | list[str],
                      null: np.ndarray | None = None) -> pa.Array:
    """Dictionary-encoded string column (:data:`LOADED_TYPE`): each distinct text once,
    in the order of its first row, and an int32 index per row; ``null`` marks missing
    entries."""
    index: dict[str, int] = {}
    codes = np.fromiter((index.setdefault(v, len(index)) for v in map(str, values)),
                        dtype=np.int32, count=len(values))
    bufs: list[pa.Buffer | None] = [None, pa.py_buffer(codes)]
    count = 0
    if null is not None and np.any(null):
        bufs[0] = pa.py_buffer(np.packbits(~np.asarray(null, dtype=bool), bitorder="little"))
        count = int(np.count_nonzero(null))
    indices = pa.Array.from_buffers(pa.int32(), codes.size, bufs, null_count=count)
    # the distinct texts in order: string_column of them, without looking for repeats
    texts = [v.encode() for v in index]
    return pa.DictionaryArray.from_arrays(
        indices, _coded_strings(texts, np.arange(len(texts), dtype=np.int64), None, True))


def repeated_string(value: str, n: int) -> pa.Array:
    """A string column holding one value n times (the beam id)."""
    return coded_string_column((value,), np.zeros(n, dtype=np.int64))


def make_table(cols: Mapping[str, pa.Array]) -> pa.Table:
    """An Arrow table of the columns, in order."""
    return pa.Table.from_arrays(list(cols.values()), names=list(cols.keys()))


def _metadata(analysis: Analysis) -> dict[bytes, bytes]:
    beam = analysis.beam
    return {
        b"envelope:units": json.dumps(beam.units.labels).encode(),
        b"envelope:version": engine_version().encode(),
        b"envelope:input_sha256": beam.input_sha256.encode(),
        b"envelope:beam": beam.id.encode(),
        b"envelope:caution": CAUTION.encode(),
        b"envelope:title": beam.title.encode(),
        b"envelope:moment_plot": beam.output.moment_plot.encode(),
        b"envelope:warnings": json.dumps(list(analysis.solved.solution.warnings)).encode(),
    }


def _extreme_columns(prefix: str, ext: Extremes | None, cs: CaseSet, n: int,
                     scale: float, mask: np.ndarray | None = None,
                     rows: slice = slice(None)) -> dict[str, pa.Array]:
    """``<prefix>_max``, ``_min`` and their ``_combo`` / ``_loaded`` columns (null where the
    set is empty or ``mask`` is False) for the ``n`` rows ``rows`` of ``ext``."""
    if ext is None:
        null = np.ones(n, dtype=bool)
        null_f = float_column(np.zeros(n), null)
        null_s = string_column([""] * n, null)
        null_d = dictionary_column([""] * n, null)
        return {f"{prefix}_max": null_f, f"{prefix}_min": null_f,
                f"{prefix}_max_combo": null_s, f"{prefix}_max_loaded": null_d,
                f"{prefix}_min_combo": null_s, f"{prefix}_min_loaded": null_d}
    names = [c.name for c in cs.combinations]
    valid = None if mask is None else ~np.asarray(mask, dtype=bool)[rows]

    def f(v: np.ndarray) -> pa.Array:
        return float_column(v[rows] * scale, valid)

    def s(v: np.ndarray) -> pa.Array:
        return coded_string_column(names, v[rows], valid)

    def d(v: np.ndarray) -> pa.Array:
        return dictionary_column(list(v[rows]), valid)

    return {f"{prefix}_max": f(ext.max), f"{prefix}_min": f(ext.min),
            f"{prefix}_max_combo": s(ext.max_combo),
            f"{prefix}_max_loaded": d(ext.max_loaded),
            f"{prefix}_min_combo": s(ext.min_combo),
            f"{prefix}_min_loaded": d(ext.min_loaded)}


def envelope_row_groups(analysis: Analysis) -> list[slice]:
    """The stations of each row group of envelope.parquet: whole spans,
    :data:`envelope.config.ENVELOPE_ROW_GROUP_SPANS` at a time (one group for an empty
    table)."""
    span = analysis.stations.span
    step = max(1, config.ENVELOPE_ROW_GROUP_SPANS)
    cuts = np.searchsorted(span, np.arange(step, analysis.beam.n_spans, step), side="left")
    bounds = [0, *cuts.tolist(), int(span.size)]
    return [slice(lo, hi) for lo, hi in itertools.pairwise(bounds) if hi > lo] or [
        slice(0, 0)]


def envelope_table(analysis: Analysis) -> pa.Table:
    """envelope.parquet: one row per station, sorted by x (left side first at a jump).

    Built one row group at a time (:func:`envelope_row_groups`): each is a chunk of
    the table's columns with its own dictionary of ``_loaded`` texts, and
    :func:`write_parquet` writes each chunk as one Parquet row group."""
    beam = analysis.beam
    solved = analysis.solved
    parts = []
    for rows in envelope_row_groups(analysis):
        pts = analysis.stations.take(rows)
        cols: dict[str, pa.Array] = {
            "beam": repeated_string(beam.id, pts.n),
            "span": int_column(pts.span + 1),
            "x": float_column(pts.x),
            "x_span": float_column(pts.x_span),
            "side": coded_string_column(("left", "right"), pts.right),
        }
        for q, scale in _ENVELOPE_QUANTITIES:
            cs = solved.strength if q != "deflection" else solved.service
            factor = scale if scale is not None else beam.units.deflection_factor
            cols.update(_extreme_columns(q, analysis.station_envelopes[q], cs, pts.n,
                                         factor, rows=rows))
        parts.append(make_table(cols))
    from envelope.sketch import encode

    meta = _metadata(analysis)
    meta[b"envelope:sketch"] = encode(beam)  # the beam strip of the figure
    table = parts[0] if len(parts) == 1 else pa.concat_tables(parts)
    return table.replace_schema_metadata(meta)


def reactions_table(analysis: Analysis) -> pa.Table:
    """reactions.parquet: one row per restrained support."""
    beam = analysis.beam
    joints = analysis.support_joints
    n = joints.size
    solved = analysis.solved
    rot = np.array([beam.supports[j].restrains_rotation for j in joints], dtype=bool)
    cols: dict[str, pa.Array] = {
        "beam": repeated_string(beam.id, n),
        "support": int_column(joints + 1),
        "x": float_column(beam.geometry.joint_x[joints]),
        "type": string_column([beam.supports[j].kind for j in joints]),
    }
    cols.update(_extreme_columns("reaction", analysis.reaction_envelopes["reaction"],
                                 solved.strength, n, 1.0))
    reactions = analysis.reaction_envelopes
    cols.update(_extreme_columns("service_reaction", reactions["service_reaction"],
                                 solved.service, n, 1.0))
    cols.update(_extreme_columns("support_moment", reactions["support_moment"],
                                 solved.strength, n, 1.0, mask=rot))
    for i, case in enumerate(beam.cases):
        cols[f"unfactored_{case.name}"] = float_column(analysis.unfactored_reactions[:, i])
    return make_table(cols).replace_schema_metadata(_metadata(analysis))


def design_table(analysis: Analysis) -> pa.Table:
    """design.parquet: one row per span, the design actions for member sizing."""
    beam = analysis.beam
    d = analysis.design_actions
    n = beam.n_spans
    defl = beam.units.deflection_factor

    def col(key: str, scale: float = 1.0) -> pa.Array:
        v = np.asarray(d[key], dtype=float)
        return float_column(v * scale, np.isnan(v))

    cols = {
        "beam": repeated_string(beam.id, n),
        "span": int_column(np.arange(1, n + 1)),
        "length": col("length"),
        "moment_pos": col("moment_pos"),
        "moment_pos_x": col("moment_pos_x"),
        "moment_neg_left": col("moment_neg_left"),
        "moment_neg_right": col("moment_neg_right"),
        "moment_neg_left_face": col("moment_neg_left_face"),
        "moment_neg_right_face": col("moment_neg_right_face"),
        "shear_left": col("shear_left"),
        "shear_right": col("shear_right"),
        "deflection_max": col("deflection_max", defl),
        "deflection_live": col("deflection_live", defl),
        "deflection_live_combo": string_column(
            list(d["deflection_live_combo"]),
            np.array([not v for v in d["deflection_live_combo"]], dtype=bool)),
        "span_over_deflection": col("span_over_deflection"),
        "live_reduction": float_column(live_reduction_by_span(beam)),
    }
    return make_table(cols).replace_schema_metadata(_metadata(analysis))


def live_reduction_by_span(beam: Beam) -> np.ndarray:
    """Per span, the live load reduction factor of the reduced live cases (the least
    where several are reduced differently), 1.0 where none is reduced."""
    reduced = [i for i, c in enumerate(beam.cases) if c.reduction is not None]
    if not reduced:
        return np.ones(beam.n_spans)
    return span_factors(beam)[reduced].min(axis=0)


def _reductions_acting(beam: Beam, factors_json: str,
                       factors: np.ndarray) -> str:
    """JSON {case: [factor per span]} of the reduced cases a row of cases.parquet uses."""
    acting = json.loads(factors_json)
    out = {c.name: [round(float(f), 12) for f in factors[i]]
           for i, c in enumerate(beam.cases)
           if c.reduction is not None and acting.get(c.name, 0.0) != 0.0}
    return json.dumps(out)


def cases_table(analysis: Analysis, all_cases: bool = False) -> pa.Table:
    """cases.parquet: what was run, set by set (with ``all_cases``, also the explicit
    cases of stations.parquet, which indexes this table's rows)."""
    rows = []
    solved = analysis.solved
    reductions = span_factors(analysis.beam)
    acting: dict[str, str] = {}  # factors (JSON) -> live_reduction: once per combination
    for name, cs in (("strength", solved.strength), ("service", solved.service)):
        by_name = {c.name: c for c in cs.combinations}
        optional = {c.name: json.dumps([n for n, _ in c.factors if n in c.optional])
                    for c in cs.combinations}
        for r in cs.case_rows(explicit=all_cases):
            c = by_name[r["combination"]]
            factors = r["factors"]
            if factors not in acting:
                acting[factors] = _reductions_acting(analysis.beam, factors, reductions)
            rows.append({"set": name, **r, "source": c.source, "rule": c.rule,
                         "leading": c.leading, "optional": optional[c.name],
                         "derivation": c.derivation, "live_reduction": acting[factors]})
    names = ("set", "combination", "loaded", "factors", "source", "live_reduction", "rule",
             "leading", "optional", "derivation")
    table = make_table({k: string_column([r[k] for r in rows]) for k in names})
    meta = _metadata(analysis)
    text = input_text(analysis.beam)
    if text is not None:  # the input itself, for the calculation report's echo
        meta[b"envelope:input"] = text.encode()
    return table.replace_schema_metadata(meta)


def input_text(beam: Beam) -> str | None:
    """The case file's text when the file still holds the input the beam was read from
    (same SHA-256), else None (a beam built in memory, or a file changed since)."""
    if not beam.input_sha256:
        return None
    try:
        raw = Path(beam.source).read_bytes()
    except OSError:
        return None
    if sha256_hex(raw) != beam.input_sha256:
        return None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        return None


STATIONS_SCHEMA = pa.schema([("beam", pa.string()), ("case", pa.int32()),
                             ("span", pa.int32()), ("x", pa.float64()),
                             ("x_span", pa.float64()), ("shear", pa.float64()),
                             ("moment", pa.float64()), ("rotation", pa.float64()),
                             ("deflection", pa.float64())])


def write_stations(path: Path, analysis: Analysis, durable: bool = True,
                   staged: bool = False) -> None:
    """stations.parquet: every explicit case at every station, long format, written in
    row groups as the blocks are computed, so the whole table is never in memory.  Its
    ``envelope:left_out`` metadata lists the moving cases the rows leave out
    (``staged``: see :func:`write_parquet`)."""
    meta = _metadata(analysis)
    meta[b"envelope:left_out"] = json.dumps(list(left_out_of_explicit_cases(
        analysis.beam))).encode()
    schema = with_field_units(STATIONS_SCHEMA.with_metadata(meta).empty_table()).schema
    beam_id = analysis.beam.id

    def write(fh: object) -> None:
        with pq.ParquetWriter(fh, schema) as writer:
            for block in explicit_case_blocks(analysis):
                n = block["case"].size
                cols = [repeated_string(beam_id, n), int_column(block["case"]),
                        int_column(block["span"])]
                cols += [float_column(block[f.name]) for f in list(STATIONS_SCHEMA)[3:]]
                part = pa.Table.from_arrays(cols, schema=schema)
                check_finite(part, str(path))
                writer.write_table(part, row_group_size=config.STATIONS_ROW_GROUP)

    (write_new if staged else write_atomic)(path, write, durable)


def tables(analysis: Analysis, all_cases: bool = False) -> dict[str, pa.Table]:
    """Every result table of the outputs contract, by file stem (stations.parquet, which
    may be far larger than memory, is written by :func:`write_stations`)."""
    return {
        "envelope": envelope_table(analysis),
        "reactions": reactions_table(analysis),
        "design": design_table(analysis),
        "cases": cases_table(analysis, all_cases),
    }


def _values_and_validity(column: pa.ChunkedArray | pa.Array) -> tuple[np.ndarray, np.ndarray]:
    """A float64 or int32 column's values (as float) and validity, read from the buffers
    (``to_numpy`` imports pandas when it is installed)."""
    chunks = column.chunks if isinstance(column, pa.ChunkedArray) else [column]
    dtype = np.float64 if pa.types.is_floating(column.type) else np.int32
    values, valid = [np.zeros(0)], [np.zeros(0, dtype=bool)]
    for a in chunks:
        n, off = len(a), a.offset
        if not n:
            continue
        bufs = a.buffers()
        values.append(np.frombuffer(bufs[1], dtype=dtype)[off:off + n].astype(float))
        if a.null_count:
            bits = np.unpackbits(np.frombuffer(bufs[0], dtype=np.uint8), bitorder="little")
            valid.append(bits[off:off + n].astype(bool))
        else:
            valid.append(np.ones(n, dtype=bool))
    return np.concatenate(values), np.concatenate(valid)


def numeric_values(column: pa.ChunkedArray | pa.Array) -> np.ndarray:
    """A float64 or int32 column as a float numpy array, nulls as NaN."""
    values, valid = _values_and_validity(column)
    return np.where(valid, values, np.nan)


def _all_finite(column: pa.ChunkedArray) -> bool:
    """Whether every entry of a float64 column, nulls' slots included, is finite: read
    from the buffers, one numpy test per chunk (the quick answer for nearly every
    table; a column that fails is looked at again with its nulls left out)."""
    for a in column.chunks:
        n = len(a)
        if n and not np.isfinite(np.frombuffer(a.buffers()[1], dtype=np.float64)[
                a.offset:a.offset + n]).all():
            return False
    return True


def check_finite(table: pa.Table, name: str) -> None:
    """Refuse NaN or infinity in any float column (nulls are allowed: they mean "none")."""
    for i, field in enumerate(table.schema):
        if pa.types.is_floating(field.type):
            if pa.types.is_float64(field.type) and _all_finite(table.column(i)):
                continue
            values, valid = _values_and_validity(table.column(i))
            values = values[valid]
            if not np.all(np.isfinite(values)):
                raise StaticsError(f"{name}: column {field.name} holds a non-finite value; "
                                   "result withheld")


@functools.lru_cache(maxsize=64)
def _field_units(names: tuple[str, ...], labels_json: bytes, own_json: bytes
                 ) -> dict[str, dict[bytes, bytes]] | None:
    """The field metadata (``{b"unit": ...}``) of each column of ``names`` that has a
    unit, from the file metadata's ``envelope:units`` and ``envelope:sizing_units``
    texts; None where the units are of several systems.  Cached: a batch writes tables
    of the same columns and units beam after beam (the caller never changes the
    dictionaries it gets)."""
    from envelope.columnunits import column_units

    labels = json.loads(labels_json)
    if labels and all(isinstance(v, dict) for v in labels.values()):
        return None
    units = column_units(names, labels, json.loads(own_json))
    return {name: {b"unit": unit.encode()} for name, unit in units.items()}


def with_field_units(table: pa.Table) -> pa.Table:
    """The table with each numeric column's unit in its field metadata (key ``unit``),
    from the file metadata (``envelope:units``, ``envelope:sizing_units``) and the column
    names (:mod:`envelope.columnunits`); readers that drop file metadata keep these."""
    schema = table.schema
    meta = schema.metadata or {}
    key = (schema.remove_metadata(), meta.get(b"envelope:units", b"{}"),
           meta.get(b"envelope:sizing_units", b"{}"))
    # fields with metadata of their own are not looked up (the cache ignores it)
    unit_fields = _unit_fields if any(f.metadata for f in schema) else _cached_unit_fields
    fields = unit_fields(*key)
    if fields is None:
        return table  # several systems in one table: see the batch's combined files
    # the same columns under the new schema (only field metadata differs): no cast, so no
    # pyarrow.compute import
    return pa.Table.from_arrays(table.columns, schema=fields.with_metadata(meta))


def _unit_fields(schema: pa.Schema, labels_json: bytes, own_json: bytes
                 ) -> pa.Schema | None:
    """``schema`` (no file metadata) with each numeric column's unit in its field
    metadata (see :func:`with_field_units`); None where the units are of several
    systems."""
    units = _field_units(tuple(schema.names), labels_json, own_json)
    if units is None:
        return None
    return pa.schema([f.with_metadata(units[f.name]) if f.name in units else f
                      for f in schema])


#: :func:`_unit_fields` kept per column layout and units: a batch writes tables of the
#: same columns beam after beam (Arrow schemas are immutable, so sharing one is safe).
_cached_unit_fields = functools.lru_cache(maxsize=64)(_unit_fields)


def write_parquet(path: Path, table: pa.Table, durable: bool = True,
                  checked: bool = False, staged: bool = False) -> None:
    """Write one Parquet file atomically (see :mod:`envelope.files`), finite values only
    (``checked``: the caller has checked already), each numeric column's unit in its
    field metadata (:func:`with_field_units`).  ``staged``: ``path`` is in a staging
    folder whose files the caller renames into place once all are written, so the file
    is written under :func:`envelope.files.staged_name` of ``path`` and not renamed here
    (:func:`envelope.files.write_new`)."""
    if not checked:
        check_finite(table, str(path))
    table = with_field_units(table)
    (write_new if staged else write_atomic)(path, lambda fh: _write_row_groups(table, fh),
                                            durable)


def _write_row_groups(table: pa.Table, fh: BinaryIO) -> None:
    """``table`` as Parquet, one row group per chunk of its columns (envelope.parquet is
    built in chunks of whole spans; the other tables have one).  A table of at most
    :data:`envelope.config.BUFFERED_WRITE_MAX_VALUES` values is encoded in memory and
    written in one call (the same bytes), a larger one streamed to ``fh``."""
    small = table.num_rows * table.num_columns <= config.BUFFERED_WRITE_MAX_VALUES
    sink: pa.BufferOutputStream | BinaryIO = pa.BufferOutputStream() if small else fh
    if table.num_rows == 0:
        pq.write_table(table, sink)
    else:
        with pq.ParquetWriter(sink, table.schema) as writer:
            for batch in table.to_batches():
                writer.write_batch(batch)
    if isinstance(sink, pa.BufferOutputStream):
        fh.write(sink.getvalue())


def check_tables(out_dir: Path, result_tables: Mapping[str, pa.Table]) -> None:
    """:func:`check_finite` on each table, named as ``<stem>.parquet`` in ``out_dir``."""
    for stem, table in result_tables.items():
        check_finite(table, str(out_dir / f"{stem}.parquet"))


def write_tables(out_dir: Path, result_tables: Mapping[str, pa.Table],
                 durable: bool = True, checked: bool = False, staged: bool = False
                 ) -> list[Path]:
    """Write each table as ``<stem>.parquet`` in ``out_dir``; returns the paths.  Every
    table is checked before the first file is written, so a refusal writes nothing
    (``checked=True``: the caller has already run :func:`check_tables`; ``staged``: see
    :func:`write_parquet`)."""
    if not checked:
        check_tables(out_dir, result_tables)
    paths = []
    for stem, table in result_tables.items():
        path = out_dir / f"{stem}.parquet"
        write_parquet(path, table, durable, checked=True, staged=staged)
        paths.append(path)
    return paths


def result_columns(result_tables: Mapping[str, pa.Table]) -> dict[str, dict[str, object]]:
    """The envelope, design and reactions tables (and sizing and bars, where present)
    as plain columns (numpy arrays; strings as object arrays) plus the metadata of all
    of them under ``"meta"`` (``units`` decoded)."""
    out: dict[str, dict[str, object]] = {}
    meta: dict[str, object] = {}
    for stem in ("envelope", "design", "reactions", "sizing", "bars"):
        table = result_tables.get(stem)
        if table is None:
            continue
        cols: dict[str, object] = {}
        for name in table.column_names:
            col = table.column(name)
            if pa.types.is_dictionary(col.type):
                cols[name] = dictionary_values(col)
            elif pa.types.is_string(col.type):
                cols[name] = np.array(col.to_pylist(), dtype=object)
            elif pa.types.is_floating(col.type) or pa.types.is_integer(col.type):
                cols[name] = numeric_values(col.cast(pa.float64()) if not (
                    pa.types.is_float64(col.type) or pa.types.is_int32(col.type)) else col)
            else:
                cols[name] = np.array(col.to_pylist(), dtype=object)
        out[stem] = cols
        raw = table.schema.metadata or {}
        meta.update({k.decode(): v.decode() for k, v in raw.items()})
    meta["units"] = json.loads(str(meta.get("envelope:units", "{}")))
    out["meta"] = meta
    return out


def dictionary_values(column: pa.ChunkedArray | pa.Array) -> np.ndarray:
    """A dictionary-encoded string column as an object array whose rows refer to one
    Python string per distinct text of each chunk (``to_pylist`` would make a string
    per row); nulls as None."""
    chunks = column.chunks if isinstance(column, pa.ChunkedArray) else [column]
    parts = [np.zeros(0, dtype=object)]
    for a in chunks:
        texts = np.array([*a.dictionary.to_pylist(), None], dtype=object)
        codes, valid = _values_and_validity(a.indices)
        parts.append(texts[np.where(valid, codes, len(texts) - 1).astype(np.int64)])
    return np.concatenate(parts)


def read_results(folder: str | os.PathLike) -> dict[str, dict[str, object]]:
    """:func:`result_columns` of the Parquet files in one beam's result folder
    (sizing.parquet and bars.parquet where the folder has them)."""
    folder = Path(folder)
    stems = ["envelope", "design", "reactions"]
    stems += [s for s in ("sizing", "bars") if (folder / f"{s}.parquet").is_file()]
    return result_columns({stem: pq.read_table(folder / f"{stem}.parquet") for stem in stems})
