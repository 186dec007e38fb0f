"""Result tables as Arrow, and their Parquet files (the only pyarrow user).

Columns and names follow the outputs contract.  Values are in the customary
units of the case's system (deflection in mm or in); every file carries the
``envelope:units`` metadata, the engine version and the SHA-256 of the input.
Files are written to a temporary name in the same folder and renamed, so a
crash never leaves a half-written file under a final name.
"""

from __future__ import annotations

import json
import os
from collections.abc import Mapping
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq

from envelope import __version__, config
from envelope.enveloper import CaseSet, Extremes
from envelope.errors import StaticsError
from envelope.files import write_atomic
from envelope.results import Analysis, explicit_case_blocks

CAUTION = ("Results are for checking by a licensed engineer and defer to local codes; "
           "they are not a design.")
_ENVELOPE_QUANTITIES = (("moment", 1.0), ("shear", 1.0), ("deflection", None))


def _metadata(analysis: Analysis) -> dict[bytes, bytes]:
    beam = analysis.beam
    return {
        b"envelope:units": json.dumps(beam.units.labels).encode(),
        b"envelope:version": __version__.encode(),
        b"envelope:input_sha256": beam.input_sha256.encode(),
        b"envelope:beam": beam.id.encode(),
        b"envelope:caution": CAUTION.encode(),
        b"envelope:title": beam.title.encode(),
        b"envelope:moment_plot": beam.output.moment_plot.encode(),
        b"envelope:warnings": json.dumps(list(analysis.solved.solution.warnings)).encode(),
    }


def _extreme_columns(prefix: str, ext: Extremes | None, cs: CaseSet, n: int,
                     scale: float, mask: np.ndarray | None = None) -> dict[str, pa.Array]:
    """``<prefix>_max``, ``_min`` and their ``_combo`` / ``_loaded`` columns (null where the
    set is empty or ``mask`` is False)."""
    if ext is None:
        null_f = pa.nulls(n, pa.float64())
        null_s = pa.nulls(n, pa.string())
        return {f"{prefix}_max": null_f, f"{prefix}_min": null_f,
                f"{prefix}_max_combo": null_s, f"{prefix}_max_loaded": null_s,
                f"{prefix}_min_combo": null_s, f"{prefix}_min_loaded": null_s}
    names = np.array([c.name for c in cs.combinations], dtype=object)
    valid = None if mask is None else ~np.asarray(mask, dtype=bool)

    def f(v: np.ndarray) -> pa.Array:
        return pa.array(v * scale, pa.float64(), mask=valid)

    def s(v: np.ndarray) -> pa.Array:
        return pa.array(list(v), pa.string(), mask=valid)

    return {f"{prefix}_max": f(ext.max), f"{prefix}_min": f(ext.min),
            f"{prefix}_max_combo": s(names[ext.max_combo]),
            f"{prefix}_max_loaded": s(ext.max_loaded),
            f"{prefix}_min_combo": s(names[ext.min_combo]),
            f"{prefix}_min_loaded": s(ext.min_loaded)}


def envelope_table(analysis: Analysis) -> pa.Table:
    """envelope.parquet: one row per station, sorted by x (left side first at a jump)."""
    pts = analysis.stations
    beam = analysis.beam
    cols: dict[str, pa.Array] = {
        "beam": pa.array([beam.id] * pts.n, pa.string()),
        "span": pa.array(pts.span + 1, pa.int32()),
        "x": pa.array(pts.x, pa.float64()),
        "x_span": pa.array(pts.x_span, pa.float64()),
        "side": pa.array(np.where(pts.right, "right", "left"), pa.string()),
    }
    solved = analysis.solved
    for q, scale in _ENVELOPE_QUANTITIES:
        cs = solved.strength if q != "deflection" else solved.service
        factor = scale if scale is not None else beam.units.deflection_factor
        cols.update(_extreme_columns(q, analysis.envelope[q], cs, pts.n, factor))
    return pa.table(cols).replace_schema_metadata(_metadata(analysis))


def reactions_table(analysis: Analysis) -> pa.Table:
    """reactions.parquet: one row per restrained support."""
    beam = analysis.beam
    joints = analysis.support_joints
    n = joints.size
    solved = analysis.solved
    rot = np.array([beam.supports[j].restrains_rotation for j in joints], dtype=bool)
    cols: dict[str, pa.Array] = {
        "beam": pa.array([beam.id] * n, pa.string()),
        "support": pa.array(joints + 1, pa.int32()),
        "x": pa.array(np.asarray(beam.joint_x)[joints], pa.float64()),
        "type": pa.array([beam.supports[j].kind for j in joints], pa.string()),
    }
    cols.update(_extreme_columns("reaction", analysis.reactions["reaction"],
                                 solved.strength, n, 1.0))
    cols.update(_extreme_columns("service_reaction", analysis.reactions["service_reaction"],
                                 solved.service, n, 1.0))
    cols.update(_extreme_columns("support_moment", analysis.reactions["support_moment"],
                                 solved.strength, n, 1.0, mask=rot))
    for i, case in enumerate(beam.cases):
        cols[f"unfactored_{case.name}"] = pa.array(analysis.unfactored[:, i], pa.float64())
    return pa.table(cols).replace_schema_metadata(_metadata(analysis))


def design_table(analysis: Analysis) -> pa.Table:
    """design.parquet: one row per span, the design actions for member sizing."""
    beam = analysis.beam
    d = analysis.design
    n = beam.n_spans
    defl = beam.units.deflection_factor

    def col(key: str, scale: float = 1.0) -> pa.Array:
        v = np.asarray(d[key], dtype=float)
        return pa.array(v * scale, pa.float64(), mask=np.isnan(v))

    cols = {
        "beam": pa.array([beam.id] * n, pa.string()),
        "span": pa.array(np.arange(1, n + 1), pa.int32()),
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
        "span_over_deflection": col("span_over_deflection"),
    }
    return pa.table(cols).replace_schema_metadata(_metadata(analysis))


def cases_table(analysis: Analysis, all_cases: bool = False) -> pa.Table:
    """cases.parquet: what was run, set by set (with ``all_cases``, also the explicit
    cases of stations.parquet, which indexes this table's rows)."""
    rows = []
    solved = analysis.solved
    for name, cs in (("strength", solved.strength), ("service", solved.service)):
        sources = {c.name: c.source for c in cs.combinations}
        for r in cs.case_rows(explicit=all_cases):
            rows.append({"set": name, **r, "source": sources[r["combination"]]})
    schema = pa.schema([("set", pa.string()), ("combination", pa.string()),
                        ("loaded", pa.string()), ("factors", pa.string()),
                        ("source", pa.string())])
    table = pa.Table.from_pylist(rows, schema=schema)
    return table.replace_schema_metadata(_metadata(analysis))


STATIONS_SCHEMA = pa.schema([("beam", pa.string()), ("case", pa.int32()),
                             ("span", pa.int32()), ("x", pa.float64()),
                             ("x_span", pa.float64()), ("shear", pa.float64()),
                             ("moment", pa.float64()), ("rotation", pa.float64()),
                             ("deflection", pa.float64())])


def write_stations(path: Path, analysis: Analysis) -> None:
    """stations.parquet: every explicit case at every station, long format, written in
    row groups as the blocks are computed, so the whole table is never in memory."""
    meta = _metadata(analysis)
    schema = STATIONS_SCHEMA.with_metadata(meta)
    beam_id = analysis.beam.id

    def write(fh: object) -> None:
        with pq.ParquetWriter(fh, schema) as writer:
            for block in explicit_case_blocks(analysis):
                n = block["case"].size
                cols = [pa.array(np.full(n, beam_id, dtype=object), pa.string())]
                cols += [pa.array(block[f.name], f.type) for f in list(STATIONS_SCHEMA)[1:]]
                part = pa.Table.from_arrays(cols, schema=schema)
                check_finite(part, str(path))
                writer.write_table(part, row_group_size=config.STATIONS_ROW_GROUP)

    write_atomic(path, write)  # type: ignore[arg-type]


def tables(analysis: Analysis, all_cases: bool = False) -> dict[str, pa.Table]:
    """Every result table of the outputs contract, by file stem (stations.parquet, which
    may be far larger than memory, is written by :func:`write_stations`)."""
    return {
        "envelope": envelope_table(analysis),
        "reactions": reactions_table(analysis),
        "design": design_table(analysis),
        "cases": cases_table(analysis, all_cases),
    }


def check_finite(table: pa.Table, name: str) -> None:
    """Refuse NaN or infinity in any float column (nulls are allowed: they mean "none")."""
    for field in table.schema:
        if pa.types.is_floating(field.type):
            values = table.column(field.name).to_numpy(zero_copy_only=False)
            values = values[~np.isnan(values)] if table.column(field.name).null_count else values
            if not np.all(np.isfinite(values)):
                raise StaticsError(f"{name}: column {field.name} holds a non-finite value; "
                                   "result withheld")


def write_parquet(path: Path, table: pa.Table) -> None:
    """Write one Parquet file atomically (see :mod:`envelope.files`), finite values only."""
    check_finite(table, str(path))
    write_atomic(path, lambda fh: pq.write_table(table, fh))


def write_tables(out_dir: Path, result_tables: Mapping[str, pa.Table]) -> list[Path]:
    """Write each table as ``<stem>.parquet`` in ``out_dir``; returns the paths."""
    paths = []
    for stem, table in result_tables.items():
        path = out_dir / f"{stem}.parquet"
        write_parquet(path, table)
        paths.append(path)
    return paths


def read_table(path: str | os.PathLike) -> pa.Table:
    return pq.read_table(path)


def result_columns(result_tables: Mapping[str, pa.Table]) -> dict[str, dict[str, object]]:
    """The envelope, design and reactions tables as plain columns (numpy arrays; strings
    as object arrays) plus their metadata under ``"meta"`` (``units`` decoded)."""
    out: dict[str, dict[str, object]] = {}
    meta: dict[str, object] = {}
    for stem in ("envelope", "design", "reactions"):
        table = result_tables[stem]
        cols: dict[str, object] = {}
        for name in table.column_names:
            col = table.column(name)
            if pa.types.is_string(col.type):
                cols[name] = np.array(col.to_pylist(), dtype=object)
            else:
                cols[name] = col.to_numpy(zero_copy_only=False).astype(float)
        out[stem] = cols
        raw = table.schema.metadata or {}
        meta = {k.decode(): v.decode() for k, v in raw.items()}
    meta["units"] = json.loads(str(meta.get("envelope:units", "{}")))
    out["meta"] = meta
    return out


def read_results(folder: str | os.PathLike) -> dict[str, dict[str, object]]:
    """:func:`result_columns` of the Parquet files in one beam's result folder."""
    folder = Path(folder)
    return result_columns({stem: pq.read_table(folder / f"{stem}.parquet")
                           for stem in ("envelope", "design", "reactions")})
