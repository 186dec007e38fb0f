"""Work limits: a beam whose estimated memory or time exceeds the machine is refused
before any work, naming the key that drives the size and the limit; options raise it.

Regressions (small files that exhausted the machine with no refusal): 300 spans with
``segments = 1000`` (6.4 GB, then MemoryError), 3000 spans (102 s, 5.7 GB), 10000 spans
(MemoryError).  The estimate is checked against the peak memory of a real run (it must
not be below it: the limit is only safe if the estimate is an upper bound).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from envelope import config
from envelope.casefile import load_case
from envelope.cli import main
from envelope.limits import WorkLimits, check, estimate

import beams

REPO = Path(__file__).resolve().parent.parent


def beam_text(n: int, segments: int = 1, stations: int = 21) -> str:
    """An invented beam of ``n`` equal 6 m spans, dead and live uniform loads."""
    return beams.beam_text(
        [6.0] * n, ["pinned"] * (n + 1),
        [{"case": "D", "type": "uniform", "spans": "all", "w": 8.0},
         {"case": "L", "type": "uniform", "spans": "all", "w": 5.0}],
        section={"E": 30000, "I": 8.0e9}, cases={"D": "dead", "L": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        patterning={"method": "segments" if segments > 1 else "code",
                    "segments": max(segments, 1)},
        output={"stations_per_span": stations})


CONCRETE = {"material": "concrete", "code": "aci318-19", "b": 300, "h": 600,
            "cover_to_bar_centre": 60, "fc": 30, "fy": 420}


def member_text(n: int, *, redistribution: float | None = None, moving: bool = False,
                stations: int = 21) -> str:
    """An invented floor beam of ``n`` equal 6 m spans: sized in concrete with moment
    redistribution, or (``moving``) unsized, dead and live load on span 1 only and a
    20 kN concentrated live load anywhere, so the influence lines are the main work."""
    spans = [1] if moving else "all"
    loads: list[dict[str, object]] = [
        {"case": "D", "type": "uniform", "spans": spans, "w": 8.0},
        {"case": "L", "type": "uniform", "spans": spans, "w": 5.0}]
    cases = {"D": "dead", "L": "live"}
    if moving:
        loads.append({"case": "Q", "type": "concentrated", "spans": "all", "P": 20.0})
        cases["Q"] = "live"
    design = None if moving else {**CONCRETE, **(
        {} if redistribution is None else {"redistribution": redistribution})}
    return beams.beam_text(
        [6.0] * n, ["pinned"] * (n + 1), loads, section={"E": 30000, "I": 8.0e9},
        cases=cases, combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        output={"stations_per_span": stations}, design=design)


def write(tmp_path: Path, text: str, name: str = "big.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def run(*args: str) -> tuple[int, str]:
    result = CliRunner().invoke(main, list(args))
    assert "Traceback" not in result.output
    return result.exit_code, result.stderr


@pytest.mark.parametrize(("n", "segments", "key"), [
    (300, 1000, "patterning.segments"), (3000, 1, "spans"), (10000, 1, "spans")])
def test_machine_sized_beams_are_refused_before_any_work(tmp_path: Path, n: int,
                                                         segments: int, key: str) -> None:
    case = write(tmp_path, beam_text(n, segments))
    out = tmp_path / "out"
    code, stderr = run("run", str(case), "-o", str(out))
    assert code == 2
    assert stderr.count("\n") == 1
    assert stderr.startswith(f"error: {case}: {key}: the analysis would ")
    assert "more than the limit of" in stderr and "raise the limit with --max-" in stderr
    assert not out.exists()
    code, stderr = run("check", str(case))
    assert code == 2 and f"{key}: the analysis would" in stderr


def test_many_stations_are_refused_under_a_time_limit_naming_the_key(tmp_path: Path) -> None:
    case = write(tmp_path, beam_text(4, stations=100_001))
    code, stderr = run("check", str(case), "--max-seconds", "10")
    assert code == 2
    assert stderr.startswith(f"error: {case}: output.stations_per_span: the analysis would "
                             "take about ")
    assert "more than the limit of 10 s" in stderr and "--max-seconds" in stderr


def test_the_options_lower_and_raise_the_limits(tmp_path: Path) -> None:
    case = write(tmp_path, beam_text(2))
    assert run("check", str(case))[0] == 0
    code, stderr = run("check", str(case), "--max-memory", "0.0001")
    assert code == 2 and "more than the limit of 0.0001 GiB" in stderr
    beam = load_case(case)
    big = load_case(write(tmp_path, beam_text(300, 1000), "huge.toml"))
    est = estimate(big)
    with pytest.raises(Exception, match="--max-memory"):
        check(big)
    raised = WorkLimits(max_memory=2 * est.memory, max_seconds=2 * est.seconds)
    assert check(big, raised) == est  # refused only by the limits, not by anything else
    assert check(beam).memory < WorkLimits().memory()


def test_a_refused_beam_in_a_batch_is_that_beams_failure(tmp_path: Path) -> None:
    big = write(tmp_path, beam_text(300, 1000), "huge.toml")
    small = write(tmp_path, beam_text(2), "small.toml")
    out = tmp_path / "out"
    code, _ = run("batch", str(big), str(small), "-o", str(out), "--workers", "1")
    assert code == 2
    assert (out / "small" / ".complete.json").is_file()
    failures = (out / "_all" / "failures.csv").read_text(encoding="utf-8")
    assert "patterning.segments: the analysis would need about" in failures
    code, _ = run("batch", str(small), "-o", str(out), "--max-memory", "0.0001", "--force")
    assert code == 2


def test_the_counts_follow_the_case_file() -> None:
    """Unit cases: each (case, span) pair that carries load, times the cells per span."""
    import tomllib

    from envelope.casefile import parse_case

    beam = parse_case(tomllib.loads(beam_text(7, segments=3, stations=11)), "x.toml")
    est = estimate(beam)
    assert (est.spans, est.parts, est.units) == (7, 3, 2 * 7 * 3)
    assert est.stations >= 7 * 11


def test_the_estimate_counts_redistribution_moving_loads_and_sizing() -> None:
    """The strength solution kept by moment redistribution (elements x unit cases), the
    influence-line solve of a moving load (4 x (elements + rows) unit loads, large
    enough to load numba's kernels) and member sizing's block-wise envelopes (kernels
    once the extents' grid needs more than one block) are all in the estimate."""
    from envelope import limits

    def est(text: str) -> limits.Estimate:
        return estimate(beams.parse_text(text))

    plain, redistributed = est(member_text(3)), est(member_text(3, redistribution=0.15))
    assert redistributed.memory - plain.memory == pytest.approx(
        limits.BYTES_PER_REDISTRIBUTED * plain.elements * plain.units)
    small = est(member_text(60, moving=True, stations=3).replace(
        'type = "concentrated"', 'type = "uniform"').replace("P = 20.0", "w = 2.0"))
    moving = est(member_text(60, moving=True, stations=3))
    assert moving.influence_loads >= 4 * (moving.elements + 2 * 60)
    assert moving.memory - small.memory >= limits.KERNEL_BYTES + (
        limits.BYTES_PER_INFLUENCE_VALUE * moving.influence_loads * moving.elements)
    assert moving.seconds > small.seconds
    sized = est(member_text(12))  # 12 x (201 + 21) grid points > one block of 2048
    assert sized.memory - est(member_text(12).split("[design]")[0]).memory \
        == pytest.approx(limits.KERNEL_BYTES)


def _peak(tmp_path: Path, case: Path) -> int:
    """Peak resident memory (bytes) of a fresh process that reads, analyses and writes
    (with the sizing of a [design]) the case at ``case``."""
    # VmHWM (peak resident set of this process image): ru_maxrss would carry the peak of
    # the forking test process across the exec
    code = ("import re\nfrom envelope import api\n"
            f"b = api.load_case({str(case)!r})\n"
            f"api.write(api.analyse(b), {str(tmp_path / 'out')!r})\n"
            "text = open('/proc/self/status').read()\n"
            "print(int(re.search(r'VmHWM:\\s+(\\d+) kB', text).group(1)) * 1024)")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True, env={**os.environ, "PYTHONPATH": str(REPO)})
    return int(proc.stdout.strip().splitlines()[-1])


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc/self/status")
@pytest.mark.parametrize(("n", "segments", "stations"), [(40, 20, 21), (120, 1, 41)])
def test_the_memory_estimate_is_above_the_measured_peak(tmp_path: Path, n: int, segments: int,
                                                         stations: int) -> None:
    """The limit is only safe if the estimate bounds the real peak: measured here as the
    peak resident memory of a process that reads, analyses and writes the beam."""
    case = write(tmp_path, beam_text(n, segments, stations))
    assert estimate(load_case(case)).memory >= _peak(tmp_path, case)


@pytest.mark.slow
@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc/self/status")
def test_the_memory_estimate_of_a_long_segmented_beam_is_near_its_peak(tmp_path: Path) -> None:
    """The responses are enveloped in blocks, so a long segmented beam's peak grows with
    its solution (elements x unit cases) and its rows, not with stations x unit cases:
    256 spans of 4 segments and 41 stations peak at about 295 MiB, which the estimate
    put at 2.0 GiB while it counted every station x unit case (and so refused the beam
    on a 4 GiB machine).  It must still bound the peak, and by at most 3x."""
    case = write(tmp_path, beam_text(256, 4, 41))
    est, peak = estimate(load_case(case)).memory, _peak(tmp_path, case)
    assert peak <= est <= 3 * peak


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc/self/status")
@pytest.mark.parametrize("kind", ["redistribution", "moving"])
def test_the_memory_estimate_bounds_redistribution_and_moving_loads(tmp_path: Path,
                                                                    kind: str) -> None:
    """Measured peaks (about 205 MiB and 220 MiB, numba's kernels loaded by the sizing's
    extents and by the influence solve) above what the estimate said before it counted
    them (about 153 MiB each)."""
    text = (member_text(12, redistribution=0.15) if kind == "redistribution"
            else member_text(60, moving=True, stations=3))
    case = write(tmp_path, text)
    assert estimate(load_case(case)).memory >= _peak(tmp_path, case)


def test_the_default_memory_limit_is_a_share_of_the_machine() -> None:
    from envelope.limits import machine_memory

    assert WorkLimits().memory() == pytest.approx(config.WORK_MEMORY_SHARE * machine_memory())
