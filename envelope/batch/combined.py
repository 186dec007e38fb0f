"""The combined results under OUT/_all (partitions, design and sizing tables) and the
failure list."""

from __future__ import annotations

import csv
import functools
import hashlib
import io
import json
import os
import shutil
import stat
from collections.abc import Collection, Mapping, Sequence
from pathlib import Path
from typing import Any

from envelope import config, engine_version
from envelope.batch.model import COMBINED, Outcome
from envelope.batch.resume import _remove_temporaries, _stamped
from envelope.files import real_folder, write_atomic


def _read(path: Path) -> Any:
    """One Parquet file as a pyarrow Table (ParquetFile: no dataset discovery, which
    costs several times the read of a small file; nor threads or read-ahead, which cost
    more than they save on the small files of one beam)."""
    import pyarrow.parquet as pq

    return pq.ParquetFile(path, pre_buffer=False).read(use_threads=False)


#: The tables combined under OUT/_all, by file stem, one file per beam that has it.
COMBINED_STEMS = ("design", "sizing", "bars")


def to_ipc(table: Any) -> bytes:
    """``table`` as an Arrow IPC stream: how a worker hands its design, sizing and bars
    tables to the coordinator with the beam's outcome (a tenth of the cost of reading
    the Parquet file back, and the same table, metadata included)."""
    import pyarrow as pa

    sink = pa.BufferOutputStream()
    with pa.ipc.new_stream(sink, table.schema) as writer:
        writer.write_table(table)
    return bytes(sink.getvalue().to_pybytes())


def from_ipc(data: bytes) -> Any:
    """The table of :func:`to_ipc`."""
    import pyarrow as pa

    return pa.ipc.open_stream(data).read_all()


def _write(path: Path, table: Any, durable: bool = True) -> None:
    """One Parquet file, atomically (:mod:`envelope.files`).  A table of at most
    :data:`envelope.config.BUFFERED_WRITE_MAX_VALUES` values (most partitions and
    combined tables) is encoded in memory and written in one call, since the encoder's
    many small writes through a Python file object cost more; a larger one (a long
    beam's partition) streams to the file, as store.py writes it, so that no encoded
    copy of it is held (the same bytes either way)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    if table.num_rows * table.num_columns > config.BUFFERED_WRITE_MAX_VALUES:
        write_atomic(path, lambda fh: pq.write_table(table, fh), durable)
        return
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink)
    data = sink.getvalue()
    write_atomic(path, lambda fh: fh.write(data), durable)


def _units_metadata(labels: dict[str, str]) -> bytes:
    """``envelope:units`` of a combined file: the labels when every beam has the same,
    else the labels of each system present (see the ``system`` column)."""
    if len(labels) == 1:
        return next(iter(labels.values())).encode()
    return json.dumps({k: json.loads(v) for k, v in sorted(labels.items())}).encode()


def _combine_table(out: Path, ids: Sequence[str], systems: dict[str, str], stem: str,
                   inputs_sha256: str, to_system: str | None = None,
                   given: Mapping[str, Mapping[str, bytes]] | None = None) -> Any:
    """The ``<stem>.parquet`` tables of ``ids`` one after the other, with a ``system``
    column (SI or US, the beam's own); None when no beam has the file.  A beam in
    ``given`` (id -> its tables by stem, :func:`to_ipc`, as the worker that wrote the
    beam's files in this batch returned them) is not read: it has the file when it has
    the table.  Each numeric
    column names its unit in its field metadata: ``unit`` when every row has the same,
    else ``unit_by_system`` (JSON: system -> unit, read with the ``system`` column).
    ``to_system`` ("SI" or "US") converts every row to that system first, so that one
    unit holds for the whole column; nothing mixes kN and kip in a column unnamed."""
    import pyarrow as pa

    from envelope.columnunits import convert

    tables, labels, caution = [], {}, b""
    units_by_system: dict[str, dict[str, str]] = {}
    for beam_id in ids:
        table = _beam_table(out, beam_id, stem, given)
        if table is None:
            continue
        meta = table.schema.metadata or {}
        system = systems[beam_id]
        labels[system] = meta.get(b"envelope:units", b"{}").decode()
        caution = meta.get(b"envelope:caution", caution)
        units = _column_units(tuple(table.column_names), labels[system],
                              meta.get(b"envelope:sizing_units", b"{}"))
        units_by_system.setdefault(system, {}).update(units)
        if to_system is not None and system != to_system:
            table = _converted(table, units, to_system)
        column = pa.array([system] * table.num_rows, pa.string())
        # the same columns without the field metadata (the units): a new schema over
        # them, no cast
        plain = pa.schema([f.remove_metadata() for f in table.schema])
        tables.append(pa.Table.from_arrays(table.columns, schema=plain)
                      .append_column("system", column))
    if not tables:
        return None
    combined = pa.concat_tables(tables, promote_options="permissive")
    if to_system is not None:
        target = {k: convert(u, to_system)[0] for by in units_by_system.values()
                  for k, u in by.items()}
        units_by_system = {to_system: target}
        labels = {to_system: json.dumps({k: convert(u, to_system)[0] for k, u in
                                         json.loads(next(iter(labels.values()))).items()})}
    fields = []
    for f in combined.schema:
        per = {s: u[f.name] for s, u in sorted(units_by_system.items()) if f.name in u}
        if len(set(per.values())) == 1:
            f = f.with_metadata({b"unit": next(iter(per.values())).encode()})
        elif per:
            f = f.with_metadata({b"unit_by_system": json.dumps(per).encode()})
        fields.append(f)
    meta = {
        b"envelope:units": _units_metadata(labels),
        b"envelope:version": engine_version().encode(),
        b"envelope:input_sha256": inputs_sha256.encode(),
        b"envelope:beams": str(len(tables)).encode(),
        b"envelope:caution": caution,
    }
    if to_system is not None:
        meta[b"envelope:converted_to"] = to_system.encode()
    return pa.Table.from_arrays(combined.columns, schema=pa.schema(fields, metadata=meta))


@functools.lru_cache(maxsize=64)
def _column_units(names: tuple[str, ...], labels: str, own: bytes) -> dict[str, str]:
    """:func:`envelope.columnunits.column_units` of a beam's table from its metadata
    texts (``envelope:units``, ``envelope:sizing_units``), kept per column layout and
    units: the beams of a batch share a few (the callers never change the dictionary)."""
    from envelope.columnunits import column_units

    return column_units(names, json.loads(labels), json.loads(own))


def _beam_table(out: Path, beam_id: str, stem: str,
                given: Mapping[str, Mapping[str, bytes]] | None) -> Any:
    """The beam's ``<stem>.parquet`` table: from ``given`` when the beam is there (see
    :func:`_combine_table`), else read from its folder; None when it has no such file."""
    own = None if given is None else given.get(beam_id)
    if own is not None:
        return from_ipc(own[stem]) if stem in own else None
    path = out / beam_id / f"{stem}.parquet"
    return _read(path) if path.exists() else None


def _converted(table: Any, units: dict[str, str], to_system: str) -> Any:
    """``table`` with every column of ``units`` converted to ``to_system``."""
    import pyarrow as pa
    import pyarrow.compute as pc

    from envelope.columnunits import convert

    for name, unit in units.items():
        factor = convert(unit, to_system)[1]
        if factor != 1.0 and pa.types.is_floating(table.schema.field(name).type):
            i = table.schema.get_field_index(name)
            table = table.set_column(i, table.schema.field(name),
                                     pc.multiply(table.column(name), factor))
    return table


def write_partition(out: Path, beam_id: str, system: str, envelope: Any = None) -> None:
    """``OUT/_all/envelope/beam=<id>/part-0.parquet``: the beam's envelope.parquet
    without its beam column (readers take it from the folder name, and most refuse it
    twice) and with a ``system`` column (SI or US), metadata kept.  Written by the worker
    that ran the beam, so that combining costs the coordinator no more than a check;
    from ``envelope`` (the table just written as envelope.parquet) when given, else read
    back.  Not fsynced: :func:`combine` checks every partition's stamp and writes a
    missing or unreadable one again."""
    if envelope is not None:  # in a worker: the engine is loaded
        from envelope.store import repeated_string, with_field_units

        table = with_field_units(envelope)  # as envelope.parquet holds it
        column = repeated_string(system, table.num_rows)
    else:
        import pyarrow as pa

        table = _read(out / beam_id / "envelope.parquet")
        column = pa.array([system] * table.num_rows, pa.string())
    table = table.drop_columns(["beam"]).append_column("system", column)
    folder = real_folder(out, out / COMBINED / "envelope" / f"beam={beam_id}")
    _write(folder / "part-0.parquet", table, durable=False)


def combine(out: Path, done: dict[str, dict[str, Any]], to_system: str | None = None,
            fresh: Collection[str] = (),
            given: Mapping[str, Mapping[str, bytes]] | None = None) -> None:
    """Refresh ``OUT/_all/`` for the beams in ``done`` (id -> manifest): each beam's
    partition checked (written again when missing or stamped with another input hash or
    engine version; not read for the beams of ``fresh``, whose workers wrote it in this
    batch before their manifests), partitions of other beams removed, design.parquet and
    sizing.parquet rebuilt (converted to ``to_system`` when given, see :func:`_combine_table`;
    the tables of the beams in ``given`` as their workers returned them, not read back).
    ``envelope:input_sha256`` of a combined file is the SHA-256 of the sorted
    ``<id> <input hash>`` lines of its beams."""
    root = real_folder(out, out / COMBINED)
    dataset = real_folder(out, root / "envelope", create=False)
    _remove_temporaries(root)
    ids = sorted(done)
    systems = {beam_id: str(done[beam_id].get("units", "")) for beam_id in ids}
    keep = {f"beam={beam_id}" for beam_id in ids}
    if dataset.is_dir():
        for child in dataset.iterdir():
            # lstat: a link is removed as a link, never followed
            is_dir = stat.S_ISDIR(os.lstat(child).st_mode)
            if child.name not in keep:
                shutil.rmtree(child) if is_dir else child.unlink()
            elif is_dir:
                _remove_temporaries(child)
            else:  # a file or a link where a partition folder belongs
                child.unlink()
    for beam_id in ids:
        if beam_id in fresh:
            continue
        part = dataset / f"beam={beam_id}" / "part-0.parquet"
        if not _stamped(part, done[beam_id]["input_sha256"]):
            write_partition(out, beam_id, systems[beam_id])
    lines = "".join(f"{i} {done[i]['input_sha256']}\n" for i in ids)
    digest = hashlib.sha256(lines.encode()).hexdigest()
    for stem in COMBINED_STEMS:
        target = root / f"{stem}.parquet"
        table = _combine_table(out, ids, systems, stem, digest, to_system, given)
        if table is None:
            target.unlink(missing_ok=True)
        else:
            _write(target, table)


def write_failures(out: Path, failures: Sequence[Outcome], order: dict[str, int]) -> Path:
    """``OUT/_all/failures.csv``: file, id, error, in discovery order (header only when
    nothing failed, so an earlier run's list never stands)."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["file", "id", "error"])
    for o in sorted(failures, key=lambda o: order.get(o.path, -1)):
        writer.writerow([o.path, o.beam_id, o.error])
    data = buffer.getvalue().encode()
    path = real_folder(out, out / COMBINED) / "failures.csv"
    write_atomic(path, lambda fh: fh.write(data))
    return path
