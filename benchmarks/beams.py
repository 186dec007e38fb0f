"""Generated benchmark beams: one TOML case file text for n spans and k stations.

The beam is an invented continuous floor beam in SI units: spans of 5.0 to 8.0 m,
one concrete-like section (E = 30000 MPa, I = 8.0e9 mm^4), pinned supports 0.4 m
wide (so support faces add stations), a uniform dead load on every span, a dead
point load (a transfer from a secondary beam) at 0.4 L on every third span, and a
uniform live load on every span.  The combinations are four custom rows, two
strength and two service, each carrying the live case, so every combination is
patterned: with ``exhaustive`` patterning a per-case loop has
4 x 2^n explicit cases to run.

Plain numbers are the case format's customary SI units (m, kN, kN/m, MPa, mm^4).
"""

from __future__ import annotations

import random

#: Combination name -> (set, dead factor, live factor); two strength, two service.
COMBINATIONS: dict[str, tuple[str, float, float]] = {
    "1.2D+1.6L": ("strength", 1.2, 1.6),
    "1.35D+1.5L": ("strength", 1.35, 1.5),
    "D+L": ("service", 1.0, 1.0),
    "D+0.3L": ("service", 1.0, 0.3),
}

DEAD_W = 18.0  # kN/m, self weight and finishes
LIVE_W = 12.0  # kN/m, imposed load over the tributary width
POINT_P = 35.0  # kN, secondary-beam reaction
POINT_AT = 0.4  # fraction of the span length
SUPPORT_WIDTH = 0.4  # m


def span_lengths(n_spans: int, seed: int = 0) -> list[float]:
    """Span lengths in m, 5.0 to 8.0 in steps of 0.25 (deterministic for a seed)."""
    rng = random.Random(seed)
    return [5.0 + 0.25 * rng.randint(0, 12) for _ in range(n_spans)]


def combinations(count: int = 4) -> dict[str, tuple[str, float, float]]:
    """``count`` combinations (even, at least 4), half strength and half service: the four
    of :data:`COMBINATIONS`, then invented rows with other dead and live factors (only to
    measure how cost grows with the number of combinations)."""
    if count < 4 or count % 2:
        raise ValueError("count must be an even number, at least 4")
    rows = dict(COMBINATIONS)
    for i in range((count - 4) // 2):
        dead, live = round(1.1 + 0.01 * (i % 30), 2), round(1.2 + 0.4 * i / count, 4)
        rows[f"S{i + 1}: {dead!r}D+{live!r}L"] = ("strength", dead, live)
        rows[f"W{i + 1}: D+{round(0.2 + 0.8 * i / count, 4)!r}L"] = (
            "service", 1.0, round(0.2 + 0.8 * i / count, 4))
    return rows


def beam_toml(n_spans: int, stations: int = 21, method: str = "exhaustive", seed: int = 0,
              beam_id: str | None = None, n_combinations: int = 4) -> str:
    """The case file text of the benchmark beam with ``n_spans`` spans,
    ``stations`` stations per span and patterning ``method`` (and ``n_combinations``
    combinations, see :func:`combinations`)."""
    if n_spans < 1:
        raise ValueError("n_spans must be at least 1")
    lengths = span_lengths(n_spans, seed)
    tag = "" if n_combinations == 4 else f"-{n_combinations}combos"
    out = [
        f'id = "{beam_id or f"bench-{n_spans}span-{stations}st-{method}{tag}"}"',
        f'title = "Benchmark beam, {n_spans} spans"',
        'units = "SI"',
        "",
        "[section]",
        "E = 30000",
        "I = 8.0e9",
        "",
    ]
    for length in lengths:
        out += ["[[spans]]", f"length = {length!r}", ""]
    for _ in range(n_spans + 1):
        out += ["[[supports]]", 'type = "pinned"', f"width = {SUPPORT_WIDTH!r}", ""]
    out += ["[cases]", 'D = { kind = "dead" }', 'L = { kind = "live" }', ""]
    out += ["[[loads]]", 'case = "D"', 'type = "uniform"', 'spans = "all"',
            f"w = {DEAD_W!r}", ""]
    for j, length in enumerate(lengths):
        if j % 3 == 1:
            out += ["[[loads]]", 'case = "D"', 'type = "point"', f"spans = {j + 1}",
                    f"P = {POINT_P!r}", f"at = {round(POINT_AT * length, 6)!r}", ""]
    out += ["[[loads]]", 'case = "L"', 'type = "uniform"', 'spans = "all"',
            f"w = {LIVE_W!r}", ""]
    out += ["[combinations]", 'strength = "none"', 'service = "none"', ""]
    for name, (cset, dead, live) in combinations(n_combinations).items():
        out += ["[[combinations.custom]]", f'name = "{name}"', f'set = "{cset}"',
                f"factors = {{ D = {dead!r}, L = {live!r} }}", ""]
    out += ["[patterning]", f'method = "{method}"', "", "[output]",
            f"stations_per_span = {stations}", ""]
    return "\n".join(out)


def n_explicit_cases(n_spans: int, method: str = "exhaustive", n_combinations: int = 4) -> int:
    """Explicit cases a per-case loop runs for this beam: combinations x live arrangements
    (every subset of spans for ``exhaustive``; the code arrangements for ``code``)."""
    if method == "exhaustive":
        arrangements = 2**n_spans
    elif method == "code":
        arrangements = n_spans + 2 if n_spans >= 3 else {1: 1, 2: 3}[n_spans]
    else:
        arrangements = 1
    return n_combinations * arrangements
