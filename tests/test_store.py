"""Result columns built from buffers: values and nulls round-trip, NaN and infinity are
refused on write while nulls (meaning "none") pass."""

from __future__ import annotations

import numpy as np
import pyarrow as pa
import pytest

from envelope.errors import StaticsError
from envelope.store import (
    check_finite,
    float_column,
    int_column,
    make_table,
    numeric_values,
    repeated_string,
    string_column,
)


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
