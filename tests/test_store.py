"""Result columns built from buffers: values and nulls round-trip, NaN and infinity are
refused on write while nulls (meaning "none") pass."""

from __future__ import annotations

import numpy as np
import pyarrow as pa
import pytest

from envelope.errors import StaticsError
from envelope.store import (
    check_finite,
    coded_string_column,
    dictionary_column,
    float_column,
    int_column,
    make_table,
    numeric_values,
    repeated_string,
    string_column,
    with_field_units,
)

from beams import beam_text


def test_columns_round_trip_with_nulls() -> None:
    f = float_column(np.array([1.5, 2.0, -3.25]), np.array([False, True, False]))
    assert f.to_pylist() == [1.5, None, -3.25]
    np.testing.assert_array_equal(numeric_values(f), [1.5, np.nan, -3.25])
    assert int_column([3, 1]).to_pylist() == [3, 1]
    s = string_column(["a", "bé", ""], np.array([False, False, True]))
    assert s.type == pa.string() and s.to_pylist() == ["a", "bé", None]
    assert repeated_string("B-7", 3).to_pylist() == ["B-7"] * 3
    sliced = make_table({"x": f}).slice(1).column("x")
    np.testing.assert_array_equal(numeric_values(sliced), [np.nan, -3.25])


def test_nan_and_infinity_are_refused_but_nulls_pass() -> None:
    check_finite(make_table({"x": float_column([1.0, 0.0], np.array([False, True]))}), "t")
    for bad in (np.nan, np.inf, -np.inf):
        table = make_table({"x": float_column([1.0, bad])})
        with pytest.raises(StaticsError, match="column x holds a non-finite value"):
            check_finite(table, "t")


def test_nan_in_a_null_slot_passes_and_in_a_sliced_column_is_found() -> None:
    # the quick test reads every slot; a column it doubts is read again without nulls
    check_finite(make_table({"x": float_column([1.0, np.nan], np.array([False, True]))}),
                 "t")
    with pytest.raises(StaticsError, match="column y holds a non-finite value"):
        check_finite(make_table({"y": float_column([np.nan, np.inf, 2.0],
                                                   np.array([True, False, False]))}), "t")
    table = make_table({"z": float_column([np.inf, 1.0, 2.0])})
    check_finite(table.slice(1), "t")  # the infinity lies before the slice
    with pytest.raises(StaticsError, match="column z"):
        check_finite(table.slice(0, 2), "t")


def test_coded_strings_are_the_column_of_their_strings() -> None:
    """A column built from texts and codes has the same buffers as the one built from
    the strings row by row (so the files do not change)."""
    texts = ("1.2D+1.6L", "D+L", "é", "")
    codes = np.array([1, 1, 0, 2, 3, 0, 1])
    null = np.array([False, True, False, False, False, False, True])
    rows = [texts[c] for c in codes]
    for mask in (None, null):
        coded = coded_string_column(texts, codes, mask)
        plain = string_column(rows, mask)
        assert coded.equals(plain) and coded.type == plain.type == pa.string()
        assert [b.to_pybytes() if b is not None else None for b in coded.buffers()] == [
            b.to_pybytes() if b is not None else None for b in plain.buffers()]
    assert coded_string_column(texts, np.zeros(0, dtype=int)).equals(string_column([]))
    assert repeated_string("B-7", 4).buffers()[1:] == string_column(["B-7"] * 4).buffers()[1:]


def test_a_dictionary_column_is_pyarrow_s_dictionary_encoding_of_its_strings() -> None:
    """The ``_loaded`` columns: the indices and the dictionary built from the rows are
    those of pyarrow's own dictionary encoding (the reference), nulls included."""
    rows = ["L: 1 3", "all", "L: 1 3", "é; W: none", "", "all"]
    null = np.array([False, False, True, False, False, False])
    for mask in (None, null):
        ours = dictionary_column(rows, mask)
        theirs = pa.array(rows, pa.string(), mask=mask).dictionary_encode()
        assert ours.indices.cast(pa.int32()).equals(theirs.indices.cast(pa.int32()))
        assert ours.dictionary.equals(theirs.dictionary)
        assert ours.dictionary.buffers()[1:] == string_column(
            ours.dictionary.to_pylist()).buffers()[1:]


def test_unit_metadata_is_the_same_cached_and_keeps_a_fields_own_metadata() -> None:
    meta = {b"envelope:units": b'{"length": "m", "moment": "kN*m"}'}
    cols = {"x": float_column([1.0]), "moment_max": float_column([2.0]),
            "side": string_column(["left"])}
    first = with_field_units(make_table(cols).replace_schema_metadata(meta))
    again = with_field_units(make_table(cols).replace_schema_metadata(meta))
    assert first.schema.equals(again.schema, check_metadata=True)
    assert first.schema.field("moment_max").metadata == {b"unit": b"kN*m"}
    assert first.schema.field("side").metadata is None
    assert first.schema.metadata == meta
    # a field with metadata of its own keeps it (the unit replaces a numeric one's)
    table = make_table(cols).replace_schema_metadata(meta)
    schema = pa.schema([table.schema.field(0), table.schema.field(1),
                        table.schema.field(2).with_metadata({b"note": b"n"})], metadata=meta)
    own = with_field_units(pa.Table.from_arrays(table.columns, schema=schema))
    assert own.schema.field("side").metadata == {b"note": b"n"}
    assert own.schema.field("x").metadata == {b"unit": b"m"}


_SEGMENTED = beam_text(
    [5.0, 4.0, 6.0, 4.5], ["pinned"] * 4 + ["fixed"],
    [{"case": "D", "type": "uniform", "spans": "all", "w": 2.0},
     {"case": "L", "type": "uniform", "spans": "all", "w": 3.0},
     {"case": "L", "type": "point", "spans": [2, 4], "P": 5.0, "at": 1.5}],
    cases={"D": "dead", "L": "live"},
    combinations={"custom": [
        {"name": "1.2D+1.6L", "set": "strength", "factors": {"D": 1.2, "L": 1.6}},
        {"name": "D+L", "set": "service", "factors": {"D": 1.0, "L": 1.0}}]},
    patterning={"method": "segments", "segments": 3}, output={"stations_per_span": 9},
    top={"id": "chunks"})


def _envelope_file(tmp_path, name: str, text: str):  # type: ignore[no-untyped-def]
    import pyarrow.parquet as pq

    from envelope import api
    from tests.beams import parse_text

    folder = api.write(api.analyse(parse_text(text)), tmp_path / name, durable=False)
    return pq.ParquetFile(folder / "envelope.parquet")


@pytest.mark.parametrize("demo", ["segmented", "office-4span-si.toml",
                                  "carpark-3span-overhang-si.toml", "mezzanine-us.toml"])
def test_envelope_in_small_blocks_and_row_groups_is_the_same_file_content(
        tmp_path, monkeypatch, demo) -> None:
    """envelope.parquet enveloped in blocks of 3 stations, solved in blocks of a few
    unit cases and written one span per row group holds exactly the values and texts
    of one block, one solve and one row group: the same floats bit for bit."""
    from pathlib import Path

    from envelope import config

    root = Path(__file__).resolve().parent.parent
    text = _SEGMENTED if demo == "segmented" else (root / "cases" / demo).read_text()
    monkeypatch.setattr(config, "KERNEL_MIN_UNITS", 0)  # one way of summing
    whole = _envelope_file(tmp_path, "whole", text)
    monkeypatch.setattr(config, "STATION_CHUNK_ROWS", 3)
    monkeypatch.setattr(config, "SOLVE_CHUNK_VALUES", 8)
    monkeypatch.setattr(config, "SOLVE_CHUNK_UNITS", 1)
    monkeypatch.setattr(config, "ENVELOPE_ROW_GROUP_SPANS", 1)
    small = _envelope_file(tmp_path, "small", text)
    n_spans = len(set(whole.read(columns=["span"]).column("span").to_pylist()))
    assert whole.metadata.num_row_groups == 1
    assert small.metadata.num_row_groups == n_spans > 1
    a, b = whole.read(), small.read()
    assert a.schema.equals(b.schema, check_metadata=True)
    for name in a.column_names:
        assert a.column(name).to_pylist() == b.column(name).to_pylist(), name
    assert b.schema.field("moment_max_loaded").type == pa.dictionary(pa.int32(), pa.string())


@pytest.mark.parametrize("demo", ["segmented", "office-4span-si.toml", "mezzanine-us.toml"])
def test_tables_encoded_in_memory_are_the_bytes_streamed_to_the_file(
        tmp_path, monkeypatch, demo) -> None:
    """Every result file written from the encoding in memory (the fast path of small
    tables) is the file streamed to disk by the Parquet writer, byte for byte, in one
    row group and in several (one span a row group)."""
    from pathlib import Path

    from envelope import api, config
    from tests.beams import parse_text

    root = Path(__file__).resolve().parent.parent
    text = _SEGMENTED if demo == "segmented" else (root / "cases" / demo).read_text()
    for spans in (64, 1):
        monkeypatch.setattr(config, "ENVELOPE_ROW_GROUP_SPANS", spans)
        result = api.analyse(parse_text(text))
        files = {}
        for name, limit in (("memory", 1 << 22), ("streamed", 0)):
            monkeypatch.setattr(config, "BUFFERED_WRITE_MAX_VALUES", limit)
            folder = api.write(result, tmp_path / f"{name}-{spans}", durable=False)
            files[name] = {p.name: p.read_bytes() for p in sorted(folder.iterdir())}
        assert files["memory"].keys() == files["streamed"].keys()
        assert len(files["memory"]) >= 4
        for name, data in files["memory"].items():
            assert data == files["streamed"][name], name


def test_a_batch_partition_or_combined_table_streamed_is_the_one_encoded_in_memory(
        tmp_path, monkeypatch) -> None:
    """envelope.batch.combined writes a table above config.BUFFERED_WRITE_MAX_VALUES
    straight to its file (no encoded copy held for a long beam's partition): the same
    bytes as the encoding in memory of a smaller one."""
    from pathlib import Path

    from envelope import api, config
    from envelope.batch import combined

    case = Path(__file__).resolve().parent.parent / "cases" / "office-4span-si.toml"
    table = api.tables(api.analyse(api.load_case(case)))["envelope"]
    files = {}
    for name, limit in (("memory", 1 << 22), ("streamed", 0)):
        monkeypatch.setattr(config, "BUFFERED_WRITE_MAX_VALUES", limit)
        combined._write(tmp_path / f"{name}.parquet", table, durable=False)
        files[name] = (tmp_path / f"{name}.parquet").read_bytes()
    assert len(files["memory"]) > 1000 and files["memory"] == files["streamed"]
