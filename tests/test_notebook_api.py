"""The notebook API follows the habits of the scientific Python ecosystem: ``plot``
returns a Figure (or draws in the place of a given Axes), ``tables`` includes the
sizing, results have a short repr, warnings come through :mod:`warnings`, ``dir()``
finds the lazily loaded names, the public functions have numpydoc docstrings, and the
package ships ``py.typed``."""

from __future__ import annotations

import inspect
from pathlib import Path

import pytest
from matplotlib.figure import Figure

import envelope
from envelope import api
from envelope.errors import EnvelopeWarning

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))


@pytest.fixture(scope="module")
def office() -> api.Analysis:
    case = next(c for c in CASES if c.stem.startswith("office"))
    return envelope.analyse(envelope.load_case(str(case)))


def test_plot_returns_a_new_figure(office: api.Analysis) -> None:
    fig = envelope.plot(office)
    assert isinstance(fig, Figure)
    assert len(fig.axes) >= 4


def test_plot_draws_in_the_place_of_a_given_axes(office: api.Analysis) -> None:
    fig = Figure(figsize=(12, 14))
    left, right = fig.subplots(1, 2)
    box = right.get_position()
    out = envelope.plot(office, ax=right)
    assert out is fig
    assert right not in fig.axes and left in fig.axes
    for ax in fig.axes[1:]:
        p = ax.get_position()
        assert p.x0 >= box.x0 - 1e-9 and p.x1 <= box.x1 + 1e-9
        assert p.y0 >= box.y0 - 1e-9 and p.y1 <= box.y1 + 1e-9


def test_tables_include_the_sizing_of_a_sized_case(office: api.Analysis) -> None:
    tables = envelope.tables(office)
    assert set(tables) == {"envelope", "reactions", "design", "cases", "sizing", "bars"}
    assert tables["sizing"].num_rows == 3 * office.beam.n_spans


def test_results_have_a_short_repr(office: api.Analysis) -> None:
    text = repr(office)
    assert len(text) < 200 and "\n" not in text
    assert office.beam.id in text and f"{office.beam.n_spans} spans" in text


def test_solver_warnings_come_through_the_warnings_module() -> None:
    """A near-rigid spring (1e18 kN/m) makes the stiffness matrix badly conditioned."""
    beam = envelope.load_case(str(next(c for c in CASES if c.stem.startswith("carpark"))))
    import dataclasses
    import math

    supports = list(beam.supports)
    supports[1] = dataclasses.replace(supports[1], k_vertical=1e18, k_rotation=math.inf)
    stiff = dataclasses.replace(beam, supports=tuple(supports))
    with pytest.warns(EnvelopeWarning, match="badly conditioned"):
        envelope.analyse(stiff)


def test_completion_finds_the_public_names() -> None:
    names = dir(envelope)
    for name in ("analyse", "load_case", "plot", "summary_text", "tables", "write",
                 "engine_version"):
        assert name in names
    assert not {"Any", "TYPE_CHECKING", "annotations"} & set(names)  # not our names


def test_a_beam_has_a_short_repr() -> None:
    beam = envelope.load_case(str(next(c for c in CASES if c.stem.startswith("office"))))
    text = repr(beam)
    assert len(text) < 200 and "\n" not in text
    assert text.startswith(f"<Beam {beam.id!r}") and f"{beam.n_spans} spans" in text


def test_public_functions_have_numpydoc_sections() -> None:
    """Every public name of the package and of envelope.api, one docstring style."""
    names = sorted({*(n for n in envelope.__all__ if n != "__version__"), *api.__all__}
                   - {"Analysis"})
    for name in names:
        obj = getattr(envelope, name, None) or getattr(api, name)
        doc = inspect.getdoc(obj) or ""
        assert "Returns\n-------" in doc, name
    for name in ("analyse", "tables", "summary_text", "plot", "write", "redraw", "load_case"):
        doc = inspect.getdoc(getattr(api, name)) or ""
        assert "Parameters\n----------" in doc, name
        assert "Returns\n-------" in doc, name
        params = [p for p in inspect.signature(getattr(api, name)).parameters]
        for p in params:
            assert f"\n{p} :" in doc, (name, p)


def test_the_package_ships_py_typed() -> None:
    assert (Path(envelope.__file__).parent / "py.typed").is_file()
    text = (ROOT / "pyproject.toml").read_text(encoding="utf-8")
    assert '"py.typed"' in text


def test_the_built_wheel_ships_py_typed_and_the_package_data(tmp_path: Path) -> None:
    """What a user installs: the wheel pip builds from a copy of the source tree."""
    import shutil
    import subprocess
    import sys
    import zipfile

    source = tmp_path / "src"
    skip = shutil.ignore_patterns(".*", "__pycache__", "build", "*.egg-info", "results")
    shutil.copytree(ROOT, source, ignore=skip)
    proc = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", str(source),
                           "-w", str(tmp_path / "dist")], capture_output=True, text=True,
                          check=False)
    assert proc.returncode == 0, proc.stderr
    (wheel,) = (tmp_path / "dist").glob("envelope-*.whl")
    names = set(zipfile.ZipFile(wheel).namelist())
    assert "envelope/py.typed" in names
    assert "envelope/data/demo.toml" in names and "envelope/__main__.py" in names
    assert any(n.startswith("envelope/report/templates/") for n in names)


def test_the_summary_text_is_a_function_even_after_the_summary_module_loads(
        office: api.Analysis) -> None:
    import envelope.summary  # the module of the same stem

    text = envelope.summary_text(office)
    assert text.splitlines()[-1].startswith("Sizing is a first check") or \
        "licensed engineer" in text


def test_the_declared_matplotlib_floor_has_the_typing_the_figure_uses() -> None:
    """plots.py types its rc settings with matplotlib.typing.RcKeyType, which matplotlib
    first ships in 3.9 (from memory; 3.8 has matplotlib.typing without it): the floor in
    pyproject.toml must be at least that, or mypy fails on the oldest allowed version."""
    import re
    import tomllib

    import matplotlib.typing

    root = Path(envelope.__file__).resolve().parent.parent
    deps = tomllib.loads((root / "pyproject.toml").read_text())["project"]["dependencies"]
    floor = next(re.fullmatch(r"matplotlib>=(\d+)\.(\d+)", d) for d in deps
                 if d.startswith("matplotlib"))
    assert floor is not None
    assert (int(floor[1]), int(floor[2])) >= (3, 9)
    assert "RcKeyType" in (root / "envelope" / "plots.py").read_text()
    assert hasattr(matplotlib.typing, "RcKeyType")
