"""Nothing in a case file is executed or evaluated as code.  Unit strings are read by
the one-pass grammar of envelope.units (a number and unit names; pint only looks up a
name the built-in table lacks), never by Python's eval, so strings that would run code
if evaluated are refused as unreadable quantities and leave no trace; text keys (title,
id, names) are kept as text.
"""

from __future__ import annotations

import json
import os
import resource
import subprocess
import sys
from pathlib import Path

import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

from envelope.cli import main

from bad_inputs import doc

MARKER = "X"

#: Each would create the file X in the working folder if evaluated as Python.
PYTHON = [
    "__import__('os').system('touch X')",
    "open('X', 'w').close()",
    "exec(\"open('X', 'w')\")",
    "(lambda: __import__('os').system('touch X'))()",
    "eval(\"open('X', 'w')\")",
]
#: Shell and template forms, and code glued to a valid quantity.
OTHER = [
    "1 m; import os",
    "1 m; __import__('os').system('touch X')",
    "$(touch X) m",
    "`touch X` m",
    "${touch X}",
    "1 m && touch X",
    "1 m | touch X",
    "eval('1') m",
    "import os",
    "os.system",
    "getattr(m, 'x')",
    "1 m.__class__",
]
PAYLOADS = PYTHON + OTHER

#: Where a unit string may stand, and a file with it there.
PLACES = {
    "spans[1].length": lambda p: doc(spans=f"[[spans]]\nlength = {json.dumps(p)}\n"
                                           "[[spans]]\nlength = 7.0\n"),
    "section.E": lambda p: doc(section=f"[section]\nE = {json.dumps(p)}\nI = 8.0e9\n"),
    "loads[1].w": lambda p: doc(loads='[[loads]]\ncase = "D"\ntype = "uniform"\n'
                                      f'spans = "all"\nw = {json.dumps(p)}\n'),
    "supports[2].k_vertical": lambda p: doc(
        supports='[[supports]]\ntype = "pinned"\n[[supports]]\ntype = "spring"\n'
                 f'k_vertical = {json.dumps(p)}\n[[supports]]\ntype = "pinned"\n'),
    "design.b": lambda p: doc(extra='[design]\nmaterial = "concrete"\ncode = "aci318-19"\n'
                                    f"b = {json.dumps(p)}\nh = 650\ncover_to_bar_centre = 65\n"
                                    "fc = 32\nfy = 500\n"),
}


def test_the_payloads_do_create_the_marker_when_evaluated(tmp_path: Path) -> None:
    """The control: evaluated by Python, each payload leaves the file X behind, so its
    absence below means it was not evaluated."""
    for i, payload in enumerate(PYTHON):
        where = tmp_path / str(i)
        where.mkdir()
        subprocess.run([sys.executable, "-c", f"eval({payload!r})"], cwd=where, check=True,
                       capture_output=True)
        assert (where / MARKER).exists(), payload


@pytest.mark.parametrize("place", sorted(PLACES))
def test_code_in_a_unit_string_is_refused_as_an_unreadable_quantity(
        place: str, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    for i, payload in enumerate(PAYLOADS):
        case = tmp_path / f"case{i}.toml"
        case.write_text(PLACES[place](payload), encoding="utf-8")
        before = set(tmp_path.iterdir())
        result = CliRunner().invoke(main, ["run", case.name, "-o", "out"])
        assert result.exit_code == 2, (payload, result.output)
        assert result.stderr.startswith(f"error: {case.name}: {place}: cannot read "
                                        f"{payload!r} as a quantity"), payload
        assert result.stderr.count("\n") == 1, payload
        assert set(tmp_path.iterdir()) == before, payload
        assert not (tmp_path / MARKER).exists()


def test_code_in_unit_strings_runs_nothing_in_a_fresh_process(tmp_path: Path) -> None:
    """The same through the console entry point, every payload in one `check` call."""
    paths = []
    for i, payload in enumerate(PAYLOADS):
        path = tmp_path / f"case{i}.toml"
        path.write_text(PLACES["spans[1].length"](payload), encoding="utf-8")
        paths.append(path.name)
    proc = subprocess.run([sys.executable, "-m", "envelope.cli", "check", *paths],
                          cwd=tmp_path, capture_output=True, text=True, check=False)
    assert proc.returncode == 2
    lines = proc.stderr.splitlines()
    assert len(lines) == len(PAYLOADS)
    assert all("cannot read" in line for line in lines)
    assert "Traceback" not in proc.stderr
    assert not (tmp_path / MARKER).exists()


def test_code_in_text_keys_is_kept_as_text(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    payload = PYTHON[0]
    text = doc(header=f'units = "SI"\nid = "plain"\ntitle = {json.dumps(payload)}\n',
               combinations="[combinations]\n[[combinations.custom]]\n"
                            f"name = {json.dumps(payload)}\nset = \"strength\"\n"
                            "factors = { D = 1.2, L = 1.6 }\n")
    monkeypatch.chdir(tmp_path)
    Path("case.toml").write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["run", "case.toml", "-o", "out", "--no-plots", "-q"])
    assert result.exit_code == 0, result.output
    assert not Path(MARKER).exists()
    meta = pq.read_schema("out/plain/envelope.parquet").metadata
    assert meta[b"envelope:title"].decode() == payload
    combos = pq.read_table("out/plain/cases.parquet").column("combination").to_pylist()
    assert payload in combos


# ---------------------------------------------------------------------------
# pint's own arithmetic, bounded
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("value", ["2**10000 m", "10**400 m"])
def test_a_huge_integer_power_in_a_unit_string_is_refused(value: str, tmp_path: Path) -> None:
    case = tmp_path / "case.toml"
    case.write_text(PLACES["spans[1].length"](value), encoding="utf-8")
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(tmp_path / "out")])
    assert result.exit_code == 2, result.output
    assert result.stderr.startswith(f"error: {case}: spans[1].length: ")
    assert len(result.stderr.splitlines()) == 1


def _cpu_limit() -> None:
    """At most 5 s of CPU (the answer needs a fraction of one), no core file."""
    resource.setrlimit(resource.RLIMIT_CPU, (5, 5))
    resource.setrlimit(resource.RLIMIT_CORE, (0, 0))


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs a POSIX resource limit")
def test_a_tower_of_powers_in_a_unit_string_is_refused_without_exhausting_the_machine(
        tmp_path: Path) -> None:
    """A resource guard, not a timing: the process gets 5 s of CPU for an answer that
    needs milliseconds; it is killed if pint is still computing the integer."""
    case = tmp_path / "case.toml"
    case.write_text(PLACES["spans[1].length"]("10**10**10 m"), encoding="utf-8")
    proc = subprocess.run([sys.executable, "-m", "envelope.cli", "check", str(case)],
                          capture_output=True, text=True, check=False, preexec_fn=_cpu_limit)
    assert proc.returncode == 2, proc.returncode
    assert proc.stderr.startswith(f"error: {case}: spans[1].length: ")
