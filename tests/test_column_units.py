"""Which quantity each result column holds (``envelope.columnunits.quantity``) follows
the naming rules written as regular expressions here (the reference, as the module
stated them before it used plain string tests), for every name in docs/outputs.md and
for names made to sit on the rules' edges."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from envelope.columnunits import quantity

ROOT = Path(__file__).resolve().parents[1]

_TEXT = re.compile(r".*_(combo|loaded)$|^(beam|side|type|set|combination|loaded|factors|"
                   r"source|section|steel_section|note|status|system|bars|mark)$")
_RULES = tuple((re.compile(p), q) for p, q in (
    (r"^(x|x_span|length|moment_pos_x|start|end|lb)$", "length"),
    (r"^(span_over_deflection|utilisation_.*|phi|eps_t|beta1|cb|live_reduction|"
     r"redistribution|redistribution_allowed)$", "dimensionless"),
    (r"^(deflection|deflection_.*|service_deflection.*)$", "deflection"),
    (r"^(moment|moment_.*|support_moment_.*)$", "moment"),
    (r"^(shear|shear_.*|reaction_.*|service_reaction_.*|unfactored_.*)$", "force"),
    (r"^rotation$", "rotation"),
))


def _reference(name: str) -> str | None:
    if _TEXT.match(name):
        return None
    return next((q for pattern, q in _RULES if pattern.match(name)), None)


def _documented_names() -> list[str]:
    text = (ROOT / "docs" / "outputs.md").read_text(encoding="utf-8")
    return sorted(set(re.findall(r"`([A-Za-z0-9_]+)`", text)))


EDGES = ["", "_combo", "x_combo", "moment_loaded", "loaded", "loaded_x", "moment", "moment_",
         "moments", "xmoment", "moment_pos_x", "moment_pos_x2", "support_moment_",
         "support_moment", "deflection", "deflections", "deflection_", "service_deflection",
         "service_deflectionx", "utilisation_", "utilisation", "shear", "shears", "shear_max",
         "reaction_", "reaction", "service_reaction_2", "unfactored_D", "unfactored",
         "rotation", "rotation_max", "x", "x_", "lb", "lbs", "phi", "phi_", "combination",
         "combinations", "redistribution_allowed", "redistribution_", "steel_section",
         "mark", "marks", "beam", "x_span", "length_"]


@pytest.mark.parametrize("names", ["documented", "edges"])
def test_every_column_gets_the_quantity_the_naming_rules_give(names: str) -> None:
    chosen = _documented_names() if names == "documented" else EDGES
    assert len(chosen) > 20
    wrong = {n: (quantity(n), _reference(n)) for n in chosen if quantity(n) != _reference(n)}
    assert not wrong


def test_the_module_compiles_no_pattern() -> None:
    import envelope.columnunits as cu

    assert "re" not in vars(cu)
