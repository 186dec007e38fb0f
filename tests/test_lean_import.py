"""The lean matplotlib import of batch workers (:mod:`envelope.leanimport`): the same
figure, byte for byte, as with matplotlib imported as it is; ``set`` works on every
artist; nothing changes where matplotlib is already imported."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import envelope.leanimport

ROOT = Path(__file__).resolve().parents[1]

_DRAW = """
import sys
lean = sys.argv[1] == "lean"
if sys.argv[1] == "no-hook":  # a matplotlib without the private hook: imported as it is
    import envelope.leanimport
    envelope.leanimport._HOOK = "_no_such_hook"
    assert envelope.leanimport.import_lean()
if lean:
    from envelope.leanimport import import_lean
    assert import_lean()
    assert not import_lean()  # the second time: already imported, nothing done
    assert not [name for name in sys.modules if name.startswith("mpl_toolkits.mplot3d")]
import envelope
from envelope import plots, store
from matplotlib.lines import Line2D
from matplotlib.text import Text
line = Line2D([0, 1], [0, 1])
line.set(color="red", lw=2.0, linestyle="--")  # a property, an alias, another
assert (line.get_color(), line.get_linewidth(), line.get_linestyle()) == ("red", 2.0, "--")
Text().set(text="x", fontsize=3)
assert ("lw" in str(Line2D.set.__doc__)) is not lean  # the generated help, or none
cols = store.result_columns(envelope.tables(envelope.analyse(envelope.load_case(sys.argv[2]))))
plots.draw_results(cols, sys.argv[3], durable=False)
"""


def _draw(how: str, case: Path, out: Path) -> bytes:
    subprocess.run([sys.executable, "-c", _DRAW, how, str(case), str(out)], check=True,
                   cwd=ROOT, env=dict(os.environ, PYTHONPATH=str(ROOT)))
    return out.read_bytes()


def test_a_lean_import_draws_the_same_figure(tmp_path: Path) -> None:
    case = sorted((ROOT / "cases").glob("*.toml"))[0]
    lean = _draw("lean", case, tmp_path / "lean.png")
    plain = _draw("plain", case, tmp_path / "plain.png")
    assert lean[:8] == b"\x89PNG\r\n\x1a\n" and lean == plain


def test_a_matplotlib_without_the_hook_is_imported_as_it_is(tmp_path: Path) -> None:
    """The hook is private to matplotlib: where a version lacks it the worker imports
    matplotlib as it is (the help texts written) and draws the same figure."""
    case = sorted((ROOT / "cases").glob("*.toml"))[0]
    assert _draw("no-hook", case, tmp_path / "a.png") == _draw("plain", case,
                                                               tmp_path / "b.png")


def test_nothing_changes_where_matplotlib_is_imported() -> None:
    import matplotlib.artist  # noqa: F401

    assert envelope.leanimport.import_lean() is False
    assert "mpl_toolkits.mplot3d" not in sys.modules or \
        sys.modules["mpl_toolkits.mplot3d"] is not None
