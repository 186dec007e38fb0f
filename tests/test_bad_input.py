"""Parse-level bad input: every row of tests/bad_inputs.py must fail with a
one-line CaseError that starts with the file path, names the key path and
states the problem (the case-format contract, "Errors")."""

from __future__ import annotations

from pathlib import Path

import pytest

from envelope.casefile import load_case, parse_case
from envelope.errors import CaseError, UnstableBeamError

from bad_inputs import BAD_INPUTS


def _write(tmp_path: Path, text: str | bytes) -> Path:
    path = tmp_path / "case.toml"
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8")
    return path


def test_table_has_at_least_thirty_distinct_kinds() -> None:
    names = [row[0] for row in BAD_INPUTS]
    assert len(names) == len(set(names))
    assert len(names) >= 30


@pytest.mark.parametrize(("name", "text", "key", "phrase"), BAD_INPUTS,
                         ids=[row[0] for row in BAD_INPUTS])
def test_bad_input_gives_one_line_message_with_file_key_and_problem(
    tmp_path: Path, name: str, text: str | bytes, key: str, phrase: str
) -> None:
    path = _write(tmp_path, text)
    with pytest.raises(CaseError) as info:
        load_case(path)
    err = info.value
    message = str(err)
    assert "\n" not in message and "\r" not in message
    assert err.source == str(path)
    assert err.key == key, message
    prefix = f"{path}: {key}: " if key else f"{path}: "
    assert message.startswith(prefix), message
    assert phrase, "every row must name a phrase"
    assert phrase in err.problem, message


def test_unstable_beams_raise_the_unstable_error_type(tmp_path: Path) -> None:
    rows = [row for row in BAD_INPUTS if row[0].startswith("unstable_")]
    assert len(rows) >= 2
    for _, text, _, _ in rows:
        with pytest.raises(UnstableBeamError):
            load_case(_write(tmp_path, text))


def test_the_base_beam_of_the_table_is_valid(tmp_path: Path) -> None:
    """Each row breaks one thing in an otherwise valid file, so the unbroken file must load."""
    from bad_inputs import doc

    beam = load_case(_write(tmp_path, doc()))
    assert beam.n_spans == 2


def test_missing_file_is_a_case_error(tmp_path: Path) -> None:
    path = tmp_path / "nowhere.toml"
    with pytest.raises(CaseError) as info:
        load_case(path)
    assert str(info.value).startswith(f"{path}: cannot read the file")


def test_default_id_from_a_bad_file_name_is_refused(tmp_path: Path) -> None:
    from bad_inputs import doc

    path = tmp_path / "level 2 beam.toml"
    path.write_text(doc(), encoding="utf-8")
    with pytest.raises(CaseError) as info:
        load_case(path)
    assert info.value.key == "id"
    assert "the file name 'level 2 beam'" in info.value.problem
    assert "give an id in the file" in info.value.problem


def test_parse_case_refuses_a_document_that_is_not_a_table() -> None:
    with pytest.raises(CaseError):
        parse_case([], "mem.toml")  # type: ignore[arg-type]
