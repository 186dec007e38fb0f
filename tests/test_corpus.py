"""The bad-input corpus (tests/corpus/bad): every malformed case file, run through the
command line, must be refused with exit status 2 and exactly its expected one-line
message on standard error, and must write nothing (contract: ../shared/case-format.md,
"Errors": one line naming the file, the key path and the problem; exit 2; no traceback).

The corpus is made by tests/corpus/make_corpus.py; ``.expected`` holds the message with
the file path written as ``{file}``.
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from envelope.cli import main

CORPUS = Path(__file__).resolve().parent / "corpus" / "bad"
FILES = sorted(CORPUS.glob("*.toml"))

#: Every key of the case-format contract (../shared/case-format.md, "Keys" and
#: "[design]"), as a generic key path: array items unnumbered, a case name or a
#: factor's case name as "*".  The corpus must misuse each at least once.
CONTRACT_KEYS = (
    "id", "title", "units", "section", "spans", "supports", "cases", "loads",
    "combinations", "patterning", "output", "design",
    "section.E", "section.I", "section.A", "section.unit_weight",
    "spans.length", "spans.E", "spans.I", "spans.A", "spans.unit_weight", "spans.sections",
    "spans.sections.from", "spans.sections.to", "spans.sections.E", "spans.sections.I",
    "spans.sections.A", "spans.sections.unit_weight",
    "supports.type", "supports.width", "supports.k_vertical", "supports.k_rotation",
    "supports.columns", "supports.columns.E", "supports.columns.I",
    "supports.columns.height_below", "supports.columns.height_above",
    "supports.columns.far_end",
    "cases.*", "cases.*.kind", "cases.*.pattern", "cases.*.category",
    "loads.case", "loads.type", "loads.spans", "loads.w", "loads.w_start", "loads.w_end",
    "loads.start", "loads.end", "loads.P", "loads.M", "loads.at",
    "combinations.strength", "combinations.service", "combinations.reduced_companion_live",
    "combinations.custom", "combinations.custom.name", "combinations.custom.set",
    "combinations.custom.factors", "combinations.custom.factors.*",
    "patterning.method", "patterning.segments", "patterning.favourable_dead",
    "output.stations_per_span", "output.all_cases", "output.moment_plot",
    "design.material", "design.code", "design.b", "design.h", "design.cover_to_bar_centre",
    "design.flange_width", "design.flange_depth", "design.fc", "design.fy",
    "design.stirrup_fy", "design.deflection_limits", "design.deflection_limits.live",
    "design.deflection_limits.total", "design.Fy", "design.sections", "design.section",
    "design.section.name", "design.section.Zx", "design.section.Ix", "design.section.Aw",
)

KEY_PATH = re.compile(r"\{file\}: ([A-Za-z0-9_.\[\]]+): ")


def expected(path: Path) -> str:
    """The message for ``path`` as the CLI is given it (``{file}`` replaced)."""
    text = path.with_suffix(".expected").read_text(encoding="utf-8")
    assert text.endswith("\n") and text.count("\n") == 1, f"{path.name}: not one line"
    return text.rstrip("\n").replace("{file}", str(path))


def generic(key: str) -> str:
    """``spans[2].sections[1].to`` -> ``spans.sections.to``; case names -> ``*``."""
    parts = re.sub(r"\[\d+\]", "", key).split(".")
    for i in range(1, len(parts)):
        if (parts[i - 1] == "cases" and i == 1) or parts[i - 1] == "factors":
            parts[i] = "*"
    return ".".join(parts)


def test_the_corpus_is_large_and_every_file_has_its_message() -> None:
    assert len(FILES) >= 100
    sidecars = sorted(CORPUS.glob("*.expected"))
    assert [p.stem for p in sidecars] == [p.stem for p in FILES]


def test_the_corpus_is_what_the_generator_makes() -> None:
    """The files on disk are exactly tests/corpus/make_corpus.py's rows (no stale or
    hand-edited file), and the generator's own exact messages still hold."""
    sys.path.insert(0, str(CORPUS.parent))
    try:
        import make_corpus
    finally:
        sys.path.remove(str(CORPUS.parent))
    assert make_corpus.main(["--check"]) == 0


def test_every_contract_key_is_misused_at_least_once() -> None:
    named = set()
    for path in FILES:
        match = KEY_PATH.match(path.with_suffix(".expected").read_text(encoding="utf-8"))
        if match:
            named.add(generic(match.group(1)))
    missing = [k for k in CONTRACT_KEYS if k not in named]
    assert not missing, f"no corpus file names {missing}"


@pytest.mark.parametrize("path", FILES, ids=[p.stem for p in FILES])
def test_run_refuses_with_exactly_the_expected_line(path: Path, tmp_path: Path) -> None:
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["run", str(path), "-o", str(out), "--no-plots"])
    assert result.exit_code == 2, result.output
    assert result.stderr == "error: " + expected(path) + "\n"
    assert result.stdout == ""
    assert "Traceback" not in result.output
    assert not out.exists()


def test_check_reports_every_corpus_file_in_order() -> None:
    result = CliRunner().invoke(main, ["check", *map(str, FILES)])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == ["error: " + expected(p) for p in FILES]
    assert result.stdout == ""
