"""Limits on what a case file and a sections table may hold, each a clear refusal.

Each test is a reproduction of an input that once crashed, hung or leaked: a file nested
thousands deep (RecursionError, a 3000-line traceback from `envelope check`), control
characters in text, `[design]` numbers that skipped the magnitude rule (fc = 1e-300
accepted, h = 1e308 exiting 3), a unit string with a constant, and a sections path that
read /etc/passwd or /proc/self/environ and echoed its content.  The expectation is the
contract's (../shared/case-format.md, "Errors"): one line naming the file, the key path
and the problem, exit status 2, no traceback, nothing written.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from click.testing import CliRunner

from envelope import config
from envelope.casefile import load_case
from envelope.casefile.document import nesting
from envelope.cli import main
from envelope.errors import CaseError
from envelope.sizing.sections import parse_sections, read_sections

from bad_inputs import doc


def refused(tmp_path: Path, text: str | bytes, *args: str) -> str:
    """Run `envelope run` on the text; assert exit 2, one line, nothing written; return
    the message after the file name."""
    case = tmp_path / "case.toml"
    case.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(out), *args])
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    lines = result.stderr.splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith(f"error: {case}: "), lines[0]
    assert not out.exists()
    return lines[0][len(f"error: {case}: "):]


# ---------------------------------------------------------------------------
# Size and nesting
# ---------------------------------------------------------------------------

def test_a_file_over_the_size_limit_is_refused_before_parsing(tmp_path: Path) -> None:
    text = doc() + "#" * config.CASE_FILE_MAX_BYTES + "\n"
    message = refused(tmp_path, text)
    assert message == (f"the file is {len(text)} bytes, more than the limit of "
                       f"{config.CASE_FILE_MAX_BYTES} bytes")


@pytest.mark.parametrize("value", ["[" * 5000 + "]" * 5000, "{a=" * 3000 + "1" + "}" * 3000,
                                   "[" * 17 + "]" * 17])
def test_deep_nesting_is_refused_with_the_file_named(tmp_path: Path, value: str) -> None:
    """Regression: 5000 nested arrays or 3000 nested inline tables gave "internal error
    (RecursionError)"; 17 levels parse but are still more than the limit of 16."""
    message = refused(tmp_path, doc(header=f'units = "SI"\ntitle = {value}\n'))
    assert message == (f"values nested more than {config.CASE_NESTING_MAX} levels deep "
                       "(arrays or tables inside each other); a case file needs a few")


def test_check_reports_deep_nesting_in_one_line(tmp_path: Path) -> None:
    """Regression: `envelope check` printed a 3000-line traceback."""
    case = tmp_path / "deep.toml"
    case.write_text("title = " + "[" * 5000 + "]" * 5000 + "\n")
    result = CliRunner().invoke(main, ["check", str(case)])
    assert result.exit_code == 2
    assert result.stderr.count("\n") == 1 and "nested more than" in result.stderr


def test_nesting_is_counted_without_recursion() -> None:
    assert nesting({}) == 1
    assert nesting({"a": [1, {"b": [[2]]}]}) == 5
    deep: list = []
    for _ in range(100_000):
        deep = [deep]
    assert nesting({"t": deep}) == 100_002


def test_the_contract_cases_are_within_the_nesting_limit() -> None:
    repo = Path(__file__).resolve().parent.parent
    import tomllib
    for path in sorted((repo / "cases").glob("*.toml")):
        assert nesting(tomllib.loads(path.read_text(encoding="utf-8"))) <= 6


# ---------------------------------------------------------------------------
# Text
# ---------------------------------------------------------------------------

@pytest.mark.parametrize(("where", "text", "key"), [
    ("title", "a\\u0000b", "title"),
    ("title", "line\\nbreak", "title"),
    ("title", "bell\\u0007", "title"),
    ("title", "next\\u0085line", "title"),
    ("title", "sep\\u2028x", "title"),
    ("combination", "1.2D\\u0000", "combinations.custom[1].name"),
])
def test_control_characters_are_refused_at_the_key(tmp_path: Path, where: str, text: str,
                                                   key: str) -> None:
    """Regression: a NUL in the title leaked a font warning with a source line."""
    if where == "title":
        body = doc(header=f'units = "SI"\ntitle = "{text}"\n')
    else:
        body = doc().replace('name = "1.2D+1.6L"', f'name = "{text}"')
    message = refused(tmp_path, body)
    assert message.startswith(f"{key}: control character U+"), message


def test_a_text_over_the_length_limit_is_refused(tmp_path: Path) -> None:
    n = config.TEXT_MAX_CHARS + 1
    message = refused(tmp_path, doc(header=f'units = "SI"\ntitle = "{"x" * n}"\n'))
    assert message == (f"title: a text of {n} characters is too long (at most "
                       f"{config.TEXT_MAX_CHARS})")


def test_a_unit_string_with_a_constant_is_refused(tmp_path: Path) -> None:
    """Regression: "2 pi m" was read as 6.283 m although nothing in a unit string is
    computed."""
    message = refused(tmp_path, doc().replace("length = 6.0", 'length = "2 pi m"', 1))
    assert message.startswith("spans[1].length: cannot read '2 pi m' as a quantity: 'pi' "
                              "is a constant, not a unit")


# ---------------------------------------------------------------------------
# [design] numbers
# ---------------------------------------------------------------------------

CONCRETE = ('[design]\nmaterial = "concrete"\ncode = "aci318-19"\nb = 350\nh = 650\n'
            "cover_to_bar_centre = 65\nfc = 32\nfy = 500\n")
STEEL = ('[design]\nmaterial = "steel"\ncode = "aisc360-22"\nFy = 345\n'
         'section = { name = "S1", Zx = 2.1e6, Ix = 4.2e8, Aw = 5400 }\n')


@pytest.mark.parametrize(("table", "old", "new", "key"), [
    (CONCRETE, "fc = 32", "fc = 1e-300", "design.fc"),
    (CONCRETE, "fy = 500", "fy = 1e300", "design.fy"),
    (CONCRETE, "b = 350", "b = 5e-324", "design.b"),
    (CONCRETE, "h = 650", "h = 1e308", "design.h"),
    (CONCRETE, "fy = 500", "fy = 500\nflange_width = 1e300\nflange_depth = 100",
     "design.flange_width"),
    (STEEL, "Zx = 2.1e6", "Zx = 1e-300", "design.section.Zx"),
    (STEEL, "Ix = 4.2e8", 'Ix = "1e-300 mm^4"', "design.section.Ix"),
    (CONCRETE, "fy = 500", "fy = 500\ndeflection_limits = { live = 1e300 }",
     "design.deflection_limits.live"),
])
def test_design_numbers_follow_the_magnitude_rule(tmp_path: Path, table: str, old: str,
                                                  new: str, key: str) -> None:
    """Regression: these were accepted, printed numpy warnings or exited 3 with 13
    lines; each is now refused at its key."""
    message = refused(tmp_path, doc(extra=table.replace(old, new)))
    assert message.startswith(f"{key}: "), message
    assert "outside the range" in message and "(1e-30 to 1e+30" in message, message


# ---------------------------------------------------------------------------
# The sections table
# ---------------------------------------------------------------------------

TABLE = "name,Zx,Ix,Aw,weight\nS1,2.1e6,4.2e8,5400,50\nS2,3.0e6,6.0e8,6000,60\n"


def steel_case(folder: Path, sections: str) -> Path:
    case = folder / "steel.toml"
    case.write_text(doc(extra=STEEL.replace(
        'section = { name = "S1", Zx = 2.1e6, Ix = 4.2e8, Aw = 5400 }',
        f"sections = {sections!r}".replace("'", '"'))), encoding="utf-8")
    return case


def check(*args: str) -> tuple[int, str]:
    result = CliRunner().invoke(main, ["check", *args])
    assert "Traceback" not in result.output
    return result.exit_code, result.stderr


@pytest.mark.parametrize("path", ["/etc/passwd", "/proc/self/environ", "../outside.csv",
                                  "/dev/zero", "sub/../../outside.csv"])
def test_a_sections_path_outside_the_case_folder_is_refused_unread(tmp_path: Path,
                                                                   path: str) -> None:
    """Regression: the first line of /etc/passwd, and the whole environment from
    /proc/self/environ, were echoed in the error; /dev/zero took 6 GB."""
    folder = tmp_path / "cases"
    folder.mkdir()
    (tmp_path / "outside.csv").write_text("SECRET=hunter2\n")
    case = steel_case(folder, path)
    code, stderr = check(str(case))
    assert code == 2
    assert stderr.startswith(f"error: {case}: design.sections: the sections table ")
    assert "is outside the case file's folder" in stderr
    for secret in ("root:", "hunter2", "PATH=", "HOME="):
        assert secret not in stderr


def test_a_link_in_the_case_folder_to_a_file_outside_is_refused(tmp_path: Path) -> None:
    folder = tmp_path / "cases"
    folder.mkdir()
    os.symlink("/etc/passwd", folder / "shapes.csv")
    code, stderr = check(str(steel_case(folder, "shapes.csv")))
    assert code == 2 and "is outside the case file's folder" in stderr
    assert "root:" not in stderr


def test_a_device_or_fifo_inside_the_folder_is_refused_without_reading(tmp_path: Path) -> None:
    os.symlink(os.devnull, tmp_path / "null.csv")  # resolves outside: refused as such
    code, stderr = check(str(steel_case(tmp_path, "null.csv")))
    assert code == 2 and "outside the case file's folder" in stderr
    if hasattr(os, "mkfifo"):
        os.mkfifo(tmp_path / "pipe.csv")
        code, stderr = check(str(steel_case(tmp_path, "pipe.csv")))
        assert code == 2
        assert "cannot read the sections table" in stderr
        assert stderr.rstrip().endswith("not a regular file: a FIFO (named pipe)")


def test_the_sections_option_names_a_table_anywhere(tmp_path: Path) -> None:
    folder = tmp_path / "cases"
    folder.mkdir()
    shared = tmp_path / "library" / "shapes.csv"
    shared.parent.mkdir()
    shared.write_text(TABLE)
    case = steel_case(folder, "../library/shapes.csv")
    assert check(str(case))[0] == 2
    code, stderr = check(str(case), "--sections", str(shared))
    assert code == 0, stderr
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(out), "--no-plots",
                                       "--sections", str(shared)])
    assert result.exit_code == 0, result.output
    assert (out / "case" / "sizing.parquet").exists() or any(out.glob("*/sizing.parquet"))


def test_a_sections_table_over_the_size_limit_is_refused(tmp_path: Path) -> None:
    (tmp_path / "big.csv").write_text(TABLE + "#" * config.SECTIONS_MAX_BYTES)
    beam = load_case(steel_case(tmp_path, "big.csv"))
    with pytest.raises(CaseError, match="more than the limit of"):
        read_sections(beam)


def test_a_huge_csv_field_is_refused_naming_its_line_without_echo() -> None:
    """Regression: a 128 KB field gave a traceback."""
    field = "A" * 200_000
    with pytest.raises(CaseError) as info:
        parse_sections(TABLE + f"{field},1,1,1,1\n", "s.csv")
    message = str(info.value)
    assert message.startswith("s.csv: line 4: not a CSV row")
    assert "AAAAAAAAAA" not in message and len(message) < 200


def test_a_long_bad_field_is_cut_in_the_message() -> None:
    field = "x" * 10_000
    with pytest.raises(CaseError) as info:
        parse_sections(TABLE + f"S3,{field},1,1,1\n", "s.csv")
    message = str(info.value)
    assert message.startswith("s.csv: line 4.Zx: not a number: 'xxxx")
    assert "(cut; 10000 characters)" in message
    assert len(message) < 120 + config.ECHO_CHARS


@pytest.mark.parametrize(("value", "phrase"), [
    ("1e-300", "outside the range sizing can carry"), ("1e300", "outside the range"),
    ("-1", "greater than zero"), ("0", "greater than zero"), ("nan", "finite"),
    ("inf", "finite"), ("1e999", "finite"),
])
def test_every_sections_value_follows_the_magnitude_and_sign_rules(value: str,
                                                                   phrase: str) -> None:
    for column, at in (("Zx", 1), ("Ix", 2), ("Aw", 3), ("weight", 4)):
        row = ["S3", "1", "1", "1", "1"]
        row[at] = value
        with pytest.raises(CaseError, match=phrase) as info:
            parse_sections(TABLE + ",".join(row) + "\n", "s.csv")
        assert str(info.value).startswith(f"s.csv: line 4.{column}: ")
