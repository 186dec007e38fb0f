"""Arrow columns built from buffers (envelope.store) against pyarrow's own constructor
(pa.array): the same values, nulls and type, for repeated, distinct, empty, non-ASCII
and long strings (the ``_loaded`` texts of a long beam run to kilobytes)."""

from __future__ import annotations

import numpy as np
import pyarrow as pa
import pytest

from envelope.store import repeated_string, string_column

WORDS = ["all", "1 3 5", "", "L: 1.2 2.4; W: none", "h\u00e9llo w\u00f6rld", "1.1 1.3 " * 700]


@pytest.mark.parametrize("n", [0, 1, 6, 500])
@pytest.mark.parametrize("with_nulls", [False, True])
def test_string_column_equals_pyarrow(n: int, with_nulls: bool) -> None:
    rng = np.random.default_rng(n)
    values = [WORDS[i] for i in rng.integers(0, len(WORDS), n)]
    null = rng.random(n) < 0.3 if with_nulls else None
    got = string_column(values, null)
    want = pa.array([None if null is not None and null[i] else v
                     for i, v in enumerate(values)], pa.string())
    got.validate(full=True)
    assert got.type == pa.string()
    assert got.equals(want)


def test_string_column_of_distinct_strings_and_an_object_array() -> None:
    values = np.array([f"{i} " * (i % 7) for i in range(300)], dtype=object)
    assert string_column(values).to_pylist() == list(values)


def test_repeated_string() -> None:
    got = repeated_string("beam-7", 4)
    assert got.type == pa.string() and got.to_pylist() == ["beam-7"] * 4
    assert len(repeated_string("x", 0)) == 0
