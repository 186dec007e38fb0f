"""The repository's reference pages (docs/case-format.md, docs/outputs.md) name exactly
the keys the reader accepts and the columns the engine writes.

A key added to the reader, or a column added to a table, without its row in the
reference fails here; so does a row left behind after a key or column is removed.
"""

from __future__ import annotations

import importlib
import pkgutil
import re
from collections.abc import Iterator
from importlib.resources import files
from pathlib import Path

import pyarrow.parquet as pq
import pytest

import envelope

REPO = Path(__file__).resolve().parent.parent
DOCS = REPO / "docs"
CASES = sorted((REPO / "cases").glob("*.toml"))
DEMO = Path(str(files("envelope") / "data" / "demo.toml"))

#: Columns that stand for a family: the reference names each family once.
FAMILIES = (re.compile(r"unfactored_.+"), "unfactored_<case>")


def _markdown_tables(text: str) -> Iterator[tuple[str, str, list[list[str]]]]:
    """(heading, first header cell, rows) of every Markdown table, under the nearest
    heading of level 2 (``## ...``)."""
    heading = ""
    lines = text.splitlines()
    i = 0
    while i < len(lines):
        line = lines[i]
        if line.startswith("## "):
            heading = line[3:].strip()
        if line.startswith("|") and i + 1 < len(lines) and re.match(r"\|[-| :]+\|$",
                                                                       lines[i + 1]):
            header = [c.strip() for c in line.strip("|").split("|")]
            rows = []
            i += 2
            while i < len(lines) and lines[i].startswith("|"):
                rows.append([c.strip() for c in lines[i].strip("|").split("|")])
                i += 1
            yield heading, header[0], rows
            continue
        i += 1


def _named(rows: list[list[str]]) -> set[str]:
    """The backticked names in the first cell of each row."""
    return {name for row in rows for name in re.findall(r"`([^`]+)`", row[0])}


def _reader_modules() -> Iterator[object]:
    casefile = importlib.import_module("envelope.casefile")
    yield casefile
    for info in pkgutil.walk_packages(getattr(casefile, "__path__", []),
                                      prefix="envelope.casefile."):
        yield importlib.import_module(info.name)


def _reader_keys() -> set[str]:
    """Every key the case-file reader accepts: the union of its ``*_KEYS`` vocabularies
    (tuples of names, or mappings whose values are tuples of names)."""
    keys: set[str] = set()
    for module in _reader_modules():
        for name, value in vars(module).items():
            if not name.endswith("_KEYS"):
                continue
            groups = value.values() if isinstance(value, dict) else [value]
            for group in groups:
                keys.update(k for k in group if isinstance(k, str))
    return keys


def test_case_format_names_every_key_the_reader_accepts() -> None:
    text = (DOCS / "case-format.md").read_text(encoding="utf-8")
    documented = set().union(*(_named(rows) for _, first, rows in _markdown_tables(text)
                               if first == "key"))
    keys = _reader_keys()
    assert keys, "no *_KEYS vocabulary found in envelope.casefile"
    assert keys - documented == set(), "keys the reader accepts but docs do not list"
    assert documented - keys == set(), "keys docs list but the reader does not accept"


def _family(column: str) -> str:
    pattern, name = FAMILIES
    return name if pattern.fullmatch(column) else column


@pytest.fixture(scope="module")
def written_columns(tmp_path_factory: pytest.TempPathFactory) -> dict[str, set[str]]:
    """Columns of every Parquet file written for the demo cases, by file name; the
    concrete demo is also run with the other concrete code so both codes' columns show."""
    out = tmp_path_factory.mktemp("out")
    paths = [*CASES, DEMO]
    for path in list(paths):
        text = path.read_text(encoding="utf-8")
        if 'code = "aci318-19"' in text:
            variant = out / f"en-{path.name}"
            variant.write_text(text.replace('code = "aci318-19"', 'code = "en1992-1-1"')
                               .replace('id = "', 'id = "en-', 1), encoding="utf-8")
            paths.append(variant)
    for path in paths:
        result = envelope.analyse(envelope.load_case(path))
        envelope.write(result, out / "results", plots=False, all_cases=True, durable=False)
    columns: dict[str, set[str]] = {}
    for file in (out / "results").glob("*/*.parquet"):
        columns.setdefault(file.name, set()).update(
            _family(c) for c in pq.read_schema(file).names)
    return columns


def test_outputs_lists_exactly_the_columns_written(
        written_columns: dict[str, set[str]]) -> None:
    text = (DOCS / "outputs.md").read_text(encoding="utf-8")
    documented: dict[str, set[str]] = {}
    for heading, first, rows in _markdown_tables(text):
        if first == "column" and heading.endswith(".parquet"):
            documented.setdefault(heading, set()).update(_named(rows))
    assert set(written_columns) <= set(documented), "a written file has no section"
    for name, columns in written_columns.items():
        assert columns - documented[name] == set(), f"{name}: columns not in docs"
        assert documented[name] - columns == set(), f"{name}: docs list unwritten columns"


def test_reference_pages_carry_the_caution() -> None:
    for page in ("case-format.md", "outputs.md"):
        text = (DOCS / page).read_text(encoding="utf-8")
        assert "licensed engineer" in text and "local codes" in text, page
