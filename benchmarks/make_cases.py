"""Generate invented continuous beams as case files, for batch runs and benchmarks.

    python benchmarks/make_cases.py N OUTDIR [--seed S] [--max-spans K]

or, from Python, ``make_cases(n, folder, seed)``.  Every beam is an invented floor
beam: 1 to 12 spans of varied length, concrete or steel sections (SI or US units,
plain numbers and unit strings), stretches of a different section inside a span,
pinned, fixed, spring (vertical and rotational, or columns framing in) and free
supports including cantilevers, loads of every type (uniform, partial uniform,
linear, point, moment, self weight), every combination set (asce7-lrfd,
asce7-asd, en1990-6.10, en1990-6.10ab, characteristic, custom) and every
patterning method (none, code, exhaustive, segments).

The output is deterministic: beam ``i`` depends only on ``seed`` and ``i`` (not
on ``n``), so ``make_cases(10, ...)`` writes the first ten files of
``make_cases(1000, ...)`` byte for byte.  Every beam is stable (two vertical
restraints, or one and a rotational restraint), and its loads lie inside its spans.
"""

from __future__ import annotations

import argparse
import json
import random
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

STRENGTH_SETS = ("asce7-lrfd", "asce7-asd", "en1990-6.10", "en1990-6.10ab", "custom")
PATTERN_METHODS = ("none", "code", "exhaustive", "segments")
#: Number of spans 1..12, small beams more often (as on a real floor plate).
SPAN_WEIGHTS = (14, 22, 20, 14, 8, 6, 4, 3, 3, 2, 2, 2)


def _value(value: Any) -> str:
    """One TOML value (floats by repr, so they read back exactly)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int | float):
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, Mapping):
        return "{ " + ", ".join(f"{k} = {_value(v)}" for k, v in value.items()) + " }"
    if isinstance(value, Sequence):
        return "[" + ", ".join(_value(v) for v in value) + "]"
    raise TypeError(f"no TOML form for {value!r}")


def _sig(x: float, digits: int = 4) -> float:
    """``x`` rounded to ``digits`` significant figures (a tidy number in the file)."""
    return float(f"{x:.{digits}g}")


def _block(header: str, items: Mapping[str, Any]) -> str:
    return header + "\n" + "".join(f"{k} = {_value(v)}\n" for k, v in items.items())


class _System:
    """Customary numbers of one unit system for the generator (the file's plain units)."""

    def __init__(self, name: str) -> None:
        self.name = name
        si = name == "SI"
        self.length_range = (2.5, 12.0) if si else (8.0, 40.0)
        self.cantilever_range = (0.8, 3.0) if si else (3.0, 10.0)
        self.width_range = (0.25, 0.6) if si else (0.75, 2.0)
        self.step = 0.1 if si else 0.5
        self.dead_w = (5.0, 40.0) if si else (0.3, 2.5)      # kN/m | kip/ft
        self.live_w = (3.0, 30.0) if si else (0.2, 2.0)
        self.point = (5.0, 120.0) if si else (1.0, 25.0)     # kN | kip
        self.moment = (2.0, 60.0) if si else (1.5, 45.0)     # kN*m | kip*ft
        self.k_vertical = (2.0e4, 2.0e6) if si else (1.5e3, 1.5e5)  # kN/m | kip/ft
        self.k_rotation = (1.0e4, 5.0e5) if si else (7.0e3, 3.5e5)  # kN*m/rad | kip*ft/rad

    def section(self, rng: random.Random) -> dict[str, Any]:
        """E, I, A, unit_weight of a concrete rectangle or a steel beam, customary units."""
        si = self.name == "SI"
        if rng.random() < 0.65:  # concrete rectangle b x h
            b = rng.randrange(250, 550, 25) if si else rng.randrange(10, 22, 1)
            h = rng.randrange(400, 950, 25) if si else rng.randrange(16, 38, 2)
            props: dict[str, Any] = {
                "E": float(rng.randrange(25000, 37000, 500) if si
                           else rng.randrange(3600, 4800, 100)),
                "I": _sig(b * h**3 / 12.0), "A": float(b * h),
                "unit_weight": 24.0 if si else 0.150,
            }
        else:  # a rolled steel beam, I and A of an invented section
            props = {
                "E": 200000.0 if si else 29000.0,
                "I": round(rng.uniform(1.0e8, 1.2e9), -6) if si else round(rng.uniform(250, 3000)),
                "A": round(rng.uniform(4000, 20000), -1) if si else round(rng.uniform(6, 30), 1),
                "unit_weight": 77.0 if si else 0.490,
            }
        if si and rng.random() < 0.1:  # exercise unit strings now and then
            props["E"] = f"{props['E'] / 1000.0:g} GPa"
        return props

    def length(self, rng: random.Random, lo_hi: tuple[float, float]) -> float:
        lo, hi = lo_hi
        return round(round(rng.uniform(lo, hi) / self.step) * self.step, 3)


def _supports(rng: random.Random, n: int, sysm: _System, left_cant: bool,
              right_cant: bool) -> list[dict[str, Any]]:
    """One support per joint; stable by construction (see the module docstring)."""
    if n == 1:
        kinds = rng.choice([("pinned", "pinned"), ("fixed", "free"), ("free", "fixed"),
                            ("fixed", "pinned"), ("fixed", "fixed"), ("spring", "pinned")])
    else:
        kinds = []
        for j in range(n + 1):
            if (j == 0 and left_cant) or (j == n and right_cant):
                kinds.append("free")
            elif 0 < j < n and rng.random() < 0.06:
                kinds.append("free")  # the beam runs over the joint with no support
            else:
                kinds.append(rng.choices(["pinned", "spring", "fixed"], [70, 22, 8])[0])
        vertical = [j for j, k in enumerate(kinds) if k != "free"]
        if len(vertical) < 2:  # give back a support at the first interior free joint
            j = next(j for j in range(1, n) if kinds[j] == "free")
            kinds[j] = "pinned"
    out = []
    for kind in kinds:
        support: dict[str, Any] = {"type": kind}
        if kind == "spring":
            support["k_vertical"] = float(f"{rng.uniform(*sysm.k_vertical):.3g}")
            if rng.random() < 0.5:
                support["k_rotation"] = float(f"{rng.uniform(*sysm.k_rotation):.3g}")
            else:
                section = sysm.section(rng)
                columns = {"E": section["E"], "I": section["I"],
                           "height_below": sysm.length(rng, (3.0, 4.2) if sysm.name == "SI"
                                                       else (10.0, 14.0)),
                           "far_end": rng.choice(["fixed", "pinned"])}
                if rng.random() < 0.5:
                    columns["height_above"] = columns["height_below"]
                support["columns"] = columns
        if kind != "free" and rng.random() < 0.3:
            support["width"] = round(rng.uniform(*sysm.width_range), 2)
        out.append(support)
    return out


def _cases(rng: random.Random, strength: str) -> dict[str, dict[str, Any]]:
    eurocode = strength.startswith("en1990")
    cases: dict[str, dict[str, Any]] = {"D": {"kind": "dead"}}
    if rng.random() < 0.5:
        cases["SDL"] = {"kind": "dead"}
    live: dict[str, Any] = {"kind": "live"}
    if eurocode and rng.random() < 0.7:
        live["category"] = rng.choice("ABCDEFG")
    cases["L"] = live
    if rng.random() < 0.2:
        roof: dict[str, Any] = {"kind": "roof_live"}
        if eurocode:
            roof["category"] = "H"
        if rng.random() < 0.5:
            roof["pattern"] = False
        cases["Lr"] = roof
    for name, kind, p in (("S", "snow", 0.15), ("W", "wind", 0.15), ("R", "rain", 0.05)):
        if rng.random() < p:
            cases[name] = {"kind": kind}
    return cases


def _extent(rng: random.Random, length: float) -> dict[str, float]:
    """A partial extent [start, end] inside a span of ``length``, or the whole span."""
    if rng.random() < 0.7:
        return {}
    a, b = sorted(rng.sample(range(0, 21), 2))
    return {"start": round(length * a / 20.0, 4), "end": round(length * b / 20.0, 4)}


def _loads(rng: random.Random, lengths: list[float], cases: Mapping[str, Any],
           sysm: _System) -> list[dict[str, Any]]:
    n = len(lengths)
    spans_all: Any = "all"
    loads: list[dict[str, Any]] = []
    if rng.random() < 0.6:
        loads.append({"case": "D", "type": "self_weight", "spans": spans_all})
    loads.append({"case": "D", "type": "uniform", "spans": spans_all,
                  "w": round(rng.uniform(*sysm.dead_w), 2)})
    if "SDL" in cases:
        loads.append({"case": "SDL", "type": "uniform", "spans": spans_all,
                      "w": round(rng.uniform(*sysm.dead_w) / 3.0, 2)})
    some = sorted(rng.sample(range(1, n + 1), rng.randint(1, n)))
    live: dict[str, Any] = {"case": "L", "type": "uniform",
                            "spans": spans_all if len(some) == n else some,
                            "w": round(rng.uniform(*sysm.live_w), 2)}
    if len(some) == 1:
        live.update(_extent(rng, lengths[some[0] - 1]))
    loads.append(live)
    for name in ("Lr", "S", "R"):
        if name in cases:
            loads.append({"case": name, "type": "uniform", "spans": spans_all,
                          "w": round(rng.uniform(*sysm.live_w) / 2.0, 2)})
    if "W" in cases:  # uplift on one span
        span = rng.randint(1, n)
        loads.append({"case": "W", "type": "uniform", "spans": span,
                      "w": -round(rng.uniform(*sysm.live_w) / 2.0, 2)})
    if rng.random() < 0.4:
        span = rng.randint(1, n)
        length = lengths[span - 1]
        extent = _extent(rng, length) or {"start": 0.0, "end": length}
        loads.append({"case": rng.choice(["D", "L"]), "type": "linear", "spans": span,
                      "w_start": round(rng.uniform(0.0, sysm.live_w[1]), 2),
                      "w_end": round(rng.uniform(0.0, sysm.live_w[1]), 2), **extent})
    for _ in range(rng.choice([0, 0, 1, 1, 2, 3])):
        span = rng.randint(1, n)
        loads.append({"case": rng.choice(["D", "L"]), "type": "point", "spans": span,
                      "P": round(rng.uniform(*sysm.point), 1),
                      "at": round(lengths[span - 1] * rng.randint(0, 20) / 20.0, 4)})
    if rng.random() < 0.15:
        span = rng.randint(1, n)
        loads.append({"case": "D", "type": "moment", "spans": span,
                      "M": round(rng.uniform(*sysm.moment) * rng.choice([-1.0, 1.0]), 1),
                      "at": round(lengths[span - 1] * rng.randint(0, 20) / 20.0, 4)})
    return loads


def case_text(seed: int, index: int, max_spans: int = 12, prefix: str = "beam") -> str:
    """The TOML text of generated beam ``index`` (deterministic in seed and index)."""
    rng = random.Random(f"envelope-cases:{seed}:{index}")
    sysm = _System("SI" if rng.random() < 0.7 else "US")
    weights = SPAN_WEIGHTS[:max(1, min(max_spans, len(SPAN_WEIGHTS)))]
    n = rng.choices(range(1, len(weights) + 1), weights)[0]
    left_cant = n >= 3 and rng.random() < 0.15
    right_cant = n >= 2 and rng.random() < 0.25
    lengths = [sysm.length(rng, sysm.length_range) for _ in range(n)]
    if left_cant:
        lengths[0] = sysm.length(rng, sysm.cantilever_range)
    if right_cant:
        lengths[-1] = sysm.length(rng, sysm.cantilever_range)
    strength = rng.choice(STRENGTH_SETS)
    method = rng.choice(PATTERN_METHODS)
    cases = _cases(rng, strength)

    beam_id = f"{prefix}-{index:05d}"
    parts = [_block("", {"id": beam_id,
                         "title": f"Generated beam {index} ({n} span{'s' * (n > 1)}, "
                                  f"{sysm.name}, seed {seed})",
                         "units": sysm.name}).lstrip("\n")]
    section = sysm.section(rng)
    parts.append(_block("[section]", section))
    for length in lengths:
        span: dict[str, Any] = {"length": length}
        if sysm.name == "SI" and rng.random() < 0.05:
            span["length"] = f"{length} m"
        span_i = section["I"]
        if rng.random() < 0.15:
            span_i = _sig(section["I"] * rng.uniform(0.6, 1.6))
            span["I"] = span_i
        parts.append(_block("[[spans]]", span))
        if rng.random() < 0.15:  # a haunch at one end: a stiffer stretch
            cut = round(length * rng.choice([0.1, 0.15, 0.2]), 4)
            start, end = (0.0, cut) if rng.random() < 0.5 else (round(length - cut, 4), length)
            parts.append(_block("  [[spans.sections]]",
                                {"from": start, "to": end,
                                 "I": _sig(span_i * rng.uniform(1.5, 2.5))}))
    for support in _supports(rng, n, sysm, left_cant, right_cant):
        parts.append(_block("[[supports]]", support))
    parts.append(_block("[cases]", cases))
    for load in _loads(rng, lengths, cases, sysm):
        parts.append(_block("[[loads]]", load))

    combos: dict[str, Any] = {"strength": "none" if strength == "custom" else strength,
                              "service": "characteristic" if rng.random() < 0.75 else "none"}
    if "L" in cases and strength.startswith("asce7") and rng.random() < 0.2:
        combos["reduced_companion_live"] = True
    parts.append(_block("[combinations]", combos))
    dead = {c: 1.2 for c, v in cases.items() if v["kind"] == "dead"}
    if strength == "custom":
        parts.append(_block("  [[combinations.custom]]",
                            {"name": "1.2D+1.6L", "set": "strength",
                             "factors": {**dead, "L": 1.6}}))
        parts.append(_block("  [[combinations.custom]]",
                            {"name": "1.4D", "set": "strength",
                             "factors": {c: 1.4 for c in dead}}))
    if combos["service"] == "none":
        parts.append(_block("  [[combinations.custom]]",
                            {"name": "D+L", "set": "service",
                             "factors": {**{c: 1.0 for c in dead}, "L": 1.0}}))
    patterning: dict[str, Any] = {"method": method}
    if method == "segments":
        patterning["segments"] = rng.randint(2, 4)
    if strength.startswith("en1990") and rng.random() < 0.5:
        patterning["favourable_dead"] = round(1.0 / 1.35, 4)  # gamma_G,inf / gamma_G,sup
    parts.append(_block("[patterning]", patterning))
    if rng.random() < 0.5:
        parts.append(_block("[output]", {"stations_per_span": rng.choice([11, 15, 21, 25])}))
    return "\n".join(parts)


def make_cases(n: int, folder: str | Path, seed: int = 0, *, max_spans: int = 12,
               prefix: str = "beam") -> list[Path]:
    """Write ``n`` generated case files ``<prefix>-00000.toml``... into ``folder``;
    returns their paths in order."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for i in range(n):
        path = folder / f"{prefix}-{i:05d}.toml"
        path.write_text(case_text(seed, i, max_spans, prefix), encoding="utf-8")
        paths.append(path)
    return paths


def main(argv: Sequence[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("n", type=int, help="number of beams")
    parser.add_argument("outdir", help="folder for the case files")
    parser.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    parser.add_argument("--max-spans", type=int, default=12, help="most spans (default 12)")
    args = parser.parse_args(argv)
    paths = make_cases(args.n, args.outdir, args.seed, max_spans=args.max_spans)
    print(f"wrote {len(paths)} case files to {args.outdir}")


if __name__ == "__main__":
    main()
