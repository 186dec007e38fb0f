"""Bars, not only areas: the number and size of longitudinal bars at each design section,
and the size, legs and spacing of the stirrups.

Arrays in section units (mm, mm^2 / in, in^2).  Bar sets are facts of the trade:

- ``US``: #3 to #11, nominal diameters and areas of ASTM A615/A615M (Table 1 of the
  standard, from memory): #3 0.375 in 0.11 in^2 ... #11 1.410 in 1.56 in^2.
- ``metric``: 8, 10, 12, 16, 20, 25, 32, 40 mm, the preferred nominal diameters of
  EN 10080 with the nominal area pi d^2 / 4 (common practice), labelled ``H20``.

Spacing rules:

- ACI 318-19 25.2.1: clear spacing between parallel bars in a layer at least the
  greatest of 1 in (25 mm), db and (4/3) d_agg; 25.2.2: layers at least 1 in (25 mm)
  apart, the upper bars directly above the lower ones.
- EN 1992-1-1 8.2(2): clear distance at least the greatest of k1 db, d_g + k2 and
  20 mm, with the recommended k1 = 1, k2 = 5 mm; the same between layers (8.2(3)).

The bar centres of the outer bars are ``side`` from each side face (the cover to the
bar centre of ``[design]``, the same at the sides as at the bottom: common practice for
a first arrangement); a second layer sits one bar diameter plus the clear layer spacing
above the first and moves the centroid of the steel, so d is reduced and the steel
required recomputed at the reduced depth.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

IN_MM = 25.4

#: ASTM A615/A615M nominal diameters (in) and areas (in^2), bar sizes #3 to #11.
US_BARS = {"#3": (0.375, 0.11), "#4": (0.500, 0.20), "#5": (0.625, 0.31),
           "#6": (0.750, 0.44), "#7": (0.875, 0.60), "#8": (1.000, 0.79),
           "#9": (1.128, 1.00), "#10": (1.270, 1.27), "#11": (1.410, 1.56)}
#: EN 10080 preferred nominal diameters (mm); areas pi d^2 / 4.
METRIC_BARS = (8, 10, 12, 16, 20, 25, 32, 40)
#: Stirrup sizes tried, smallest first.
US_STIRRUPS = ("#3", "#4", "#5")
METRIC_STIRRUPS = (8, 10, 12)
#: Fewest bars in a layer (a bar in each corner of the stirrups: common practice).
MIN_BARS = 2
#: Each bar beyond the fewest adds this share to an arrangement's area when arrangements
#: are compared: fewer, larger bars where the areas are close (common practice).
BAR_WEIGHT = 0.10
#: Largest number of bars tried per layer.
MAX_PER_LAYER = 12
#: Stirrup spacing is rounded down to this step (section units), SI mm and US in.
SPACING_STEP = {"SI": 25.0, "US": 1.0}
#: Smallest stirrup spacing used before a larger size or more legs (common practice).
SPACING_MIN = {"SI": 75.0, "US": 3.0}


@dataclass(frozen=True, slots=True)
class BarSet:
    """Bar sizes in section units, smallest first, and where their areas come from."""

    names: tuple[str, ...]
    diameter: np.ndarray
    area: np.ndarray
    standard: str

    def label(self, i: int) -> str:
        """The name of bar size ``i``."""
        return self.names[i]


def _metric(d_mm: Sequence[float], system: str) -> BarSet:
    scale = 1.0 if system == "SI" else 1.0 / IN_MM
    d = np.array([float(x) for x in d_mm]) * scale
    return BarSet(tuple(f"H{x:g}" for x in d_mm), d, np.pi * d * d / 4.0,
                  "EN 10080 nominal diameters, area pi d^2/4")


def _us(names: Sequence[str], system: str) -> BarSet:
    scale = 1.0 if system == "US" else IN_MM
    d = np.array([US_BARS[n][0] for n in names]) * scale
    a = np.array([US_BARS[n][1] for n in names]) * scale * scale
    return BarSet(tuple(names), d, a, "ASTM A615/A615M nominal diameters and areas")


def bar_set(spec: str | Sequence[str | float], system: str) -> BarSet:
    """The bar set of ``[design] bars``: ``"US"``, ``"metric"`` or a list of sizes
    (``"#5"``..``"#11"`` or diameters in mm such as ``16`` or ``"H16"``).  ValueError
    names a size that is not in either set."""
    if spec == "US":
        return _us(tuple(US_BARS), system)
    if spec == "metric":
        return _metric(METRIC_BARS, system)
    if isinstance(spec, str):
        raise ValueError(f"bars must be \"US\", \"metric\" or a list of sizes, got {spec!r}")
    us = [s for s in spec if isinstance(s, str) and s.startswith("#")]
    if us and len(us) != len(spec):
        raise ValueError("give US sizes (\"#8\") or metric diameters (20), not both")
    if us:
        bad = [s for s in us if s not in US_BARS]
        if bad:
            raise ValueError(f"unknown US bar size {bad[0]!r} (#3 to #11)")
        return _us(sorted(set(us), key=lambda s: US_BARS[s][0]), system)
    mm = []
    for s in spec:
        text = s[1:] if isinstance(s, str) and s[:1] in "HhTt" else s
        try:
            value = float(text)
        except (TypeError, ValueError):
            raise ValueError(f"unknown bar size {s!r}") from None
        if value not in METRIC_BARS:
            raise ValueError(f"unknown metric bar diameter {s!r} (one of "
                             f"{', '.join(str(x) for x in METRIC_BARS)} mm)")
        mm.append(value)
    if not mm:
        raise ValueError("the list of bar sizes is empty")
    return _metric(sorted(set(mm)), system)


def stirrup_set(bars: BarSet, system: str) -> BarSet:
    """Stirrup sizes of the same family as ``bars`` (#3-#5 or 8-12 mm)."""
    if bars.names[0].startswith("#"):
        return _us(US_STIRRUPS, system)
    return _metric(METRIC_STIRRUPS, system)


def min_clear_spacing(code: str, db: np.ndarray | float, aggregate: float,
                      system: str) -> np.ndarray:
    """Least clear spacing between bars of diameter ``db`` in a layer (section units):
    ACI 318-19 25.2.1 or EN 1992-1-1 8.2(2) (see the module docstring)."""
    db = np.asarray(db, dtype=float)
    mm = 1.0 if system == "SI" else 1.0 / IN_MM
    if code == "aci318-19":
        return np.maximum(np.maximum(25.0 * mm, db), 4.0 / 3.0 * aggregate)
    return np.maximum(np.maximum(db, aggregate + 5.0 * mm), 20.0 * mm)


def per_layer(width: np.ndarray | float, side: np.ndarray | float, db: np.ndarray | float,
              clear: np.ndarray | float) -> np.ndarray:
    """Most bars that fit in one layer: outer bar centres ``side`` from the faces, clear
    spacing at least ``clear``; 0 where not even one bar fits."""
    width, side, db, clear = np.broadcast_arrays(*(np.asarray(v, dtype=float)
                                                   for v in (width, side, db, clear)))
    room = width - 2.0 * side
    n = np.where(room >= 0.0, 1 + np.floor((room + 1e-9) / (db + clear)), 0)
    return np.minimum(n, MAX_PER_LAYER).astype(int)


Acceptable = Callable[[float, np.ndarray, np.ndarray, np.ndarray], np.ndarray]


def choose(required: Callable[[np.ndarray], np.ndarray], d: np.ndarray, width: np.ndarray,
           side: np.ndarray | float, as_max: np.ndarray, bars: BarSet, code: str,
           aggregate: float, system: str,
           acceptable: Acceptable | None = None) -> dict[str, np.ndarray]:
    """Bars for each section: of the arrangements that give at least the steel required
    (``required(d)``, section units, recomputed at the depth the bars give) and at most
    ``as_max``, one layer where any fits, else two; then the least area, each bar beyond
    two weighing :data:`BAR_WEIGHT` more.  Sections needing no steel (required 0 or NaN)
    get none.  ``acceptable(db, spacing, area, d)`` (optional) keeps only the
    arrangements it accepts (crack control): bar diameter, centre-to-centre spacing of
    the layer nearest the tension face, area provided and d, per section; where it
    accepts none, the arrangement is chosen without it (and the check reports it).

    Returns ``index`` (bar size, -1 for none), ``count``, ``layers`` (0, 1 or 2),
    ``area`` (provided), ``d`` (to the centroid of the bars), ``label`` (``"4 #8"``,
    ``"3 H20"`` or ``""``), ``fits`` (False where no size of the set works: too little
    room or more than as_max)."""
    d = np.asarray(d, dtype=float)
    n_sec = d.size
    width = np.broadcast_to(np.asarray(width, dtype=float), d.shape)
    side = np.broadcast_to(np.asarray(side, dtype=float), d.shape)
    as_max = np.broadcast_to(np.asarray(as_max, dtype=float), d.shape)
    need0 = np.asarray(required(d), dtype=float)
    wanted = np.isfinite(need0) & (need0 > 0)
    best_area = np.full(n_sec, np.inf)
    best_score = np.full(n_sec, np.inf)
    fb = {"score": np.full(n_sec, np.inf), "area": np.full(n_sec, np.inf),
          "index": np.full(n_sec, -1), "count": np.zeros(n_sec, int),
          "layers": np.zeros(n_sec, int), "d": d.copy()}
    best = {"index": np.full(n_sec, -1), "count": np.zeros(n_sec, int),
            "layers": np.zeros(n_sec, int), "d": d.copy()}
    for k in range(len(bars.names)):
        db, ab = bars.diameter[k], bars.area[k]
        clear = float(min_clear_spacing(code, db, aggregate, system))
        fit1 = per_layer(width, side, db, clear)
        n1 = np.maximum(np.ceil(need0 / ab - 1e-9), MIN_BARS)
        one = wanted & (n1 <= fit1) & (fit1 >= MIN_BARS)
        # two layers: centroid raised by (db + clear) * n2 / n; required at that depth
        # (only computed where one layer does not hold the bars)
        n = np.maximum(n1, fit1 + 1)
        d2 = d.copy()
        # candidates: two layers can hold the bars needed at the full depth
        maybe = wanted & ~one & (fit1 >= MIN_BARS) & (n1 <= 2 * fit1)
        two = np.zeros(n_sec, dtype=bool)
        for _ in range(3 if maybe.any() else 0):
            n2 = np.maximum(n - fit1, 0)
            d2 = d - (db + clear) * n2 / np.maximum(n, 1)
            with np.errstate(invalid="ignore"):
                n = np.maximum(np.ceil(np.asarray(required(d2), float) / ab - 1e-9),
                               fit1 + 1)
        if maybe.any():
            n2 = np.maximum(n - fit1, 0)
            d2 = d - (db + clear) * n2 / np.maximum(n, 1)
            need2 = np.asarray(required(d2), dtype=float)
            two = maybe & (n <= 2 * fit1) & np.isfinite(need2) & (n * ab >= need2)
        count = np.where(one, n1, np.where(two, n, 0)).astype(int)
        area = count * ab
        ok = (one | two) & (area <= as_max * (1 + 1e-12))
        layers = np.where(one, 1, 2)
        if acceptable is not None:
            first = np.minimum(count, fit1)
            with np.errstate(divide="ignore", invalid="ignore"):
                pitch = np.where(first > 1, (width - 2.0 * side) / (first - 1), 0.0)
            good = np.asarray(acceptable(float(db), pitch, area, np.where(one, d, d2)))
            fallback = ok & ~good
            ok = ok & good
            fb_score = area * (1.0 + BAR_WEIGHT * (count - MIN_BARS))
            fb_better = fallback & ((fb["layers"] == 0) | (layers < fb["layers"])
                                    | ((layers == fb["layers"]) & (fb_score < fb["score"])))
            for key, value in (("score", fb_score), ("area", area), ("index", k),
                               ("count", count), ("layers", layers),
                               ("d", np.where(one, d, d2))):
                fb[key] = np.where(fb_better, value, fb[key])
        score = area * (1.0 + BAR_WEIGHT * (count - MIN_BARS))
        better = ok & ((best["layers"] == 0) | (layers < best["layers"])
                       | ((layers == best["layers"]) & (score < best_score)))
        best_score = np.where(better, score, best_score)
        best_area = np.where(better, area, best_area)
        best["index"] = np.where(better, k, best["index"])
        best["count"] = np.where(better, count, best["count"])
        best["layers"] = np.where(better, layers, best["layers"])
        best["d"] = np.where(better, np.where(one, d, d2), best["d"])
    use_fb = (best["index"] < 0) & (fb["index"] >= 0)
    for key in ("index", "count", "layers", "d"):
        best[key] = np.where(use_fb, fb[key], best[key])
    best_area = np.where(use_fb, fb["area"], best_area)
    fits = ~wanted | (best["index"] >= 0)
    area = np.where(best["index"] >= 0, best_area, 0.0)
    label = np.array([f"{c} {bars.names[i]}" if i >= 0 else ""
                      for i, c in zip(best["index"], best["count"], strict=True)],
                     dtype=object)
    return {**best, "area": area, "label": label, "fits": fits,
            "diameter": np.where(best["index"] >= 0, bars.diameter[best["index"]], np.nan)}


def stirrups(av_over_s: np.ndarray, s_max: np.ndarray, width: np.ndarray,
             d: np.ndarray, side: np.ndarray | float, leg_spacing_max: np.ndarray,
             sizes: BarSet, system: str) -> dict[str, np.ndarray]:
    """Stirrups for a required Av/s (section units per unit length; 0 or NaN: none):
    the smallest size, with the fewest legs that keep the legs' lateral spacing within
    ``leg_spacing_max`` (ACI 318-19 Table 9.7.6.2.2, EN 1992-1-1 9.2.2(8)), at the largest
    spacing that gives Av/s, rounded down to 25 mm / 1 in and at most ``s_max``, not
    below 75 mm / 3 in where a larger size or more legs does better.  Returns
    ``index`` (-1: none), ``legs``, ``spacing``, ``label`` (``"#4 x2 @ 8"``)."""
    av_over_s = np.asarray(av_over_s, dtype=float)
    n = av_over_s.size
    step, smin = SPACING_STEP[system], SPACING_MIN[system]
    room = np.broadcast_to(np.asarray(width, float) - 2.0 * np.asarray(side, float), (n,))
    legs_min = np.maximum(2, 1 + np.ceil(room / np.broadcast_to(leg_spacing_max, (n,))
                                         - 1e-9)).astype(int)
    need = np.isfinite(av_over_s) & (av_over_s > 0)
    out_i = np.full(n, -1)
    out_legs = np.zeros(n, int)
    out_s = np.full(n, np.nan)
    for k in range(len(sizes.names)):
        for extra in (0, 2):
            legs = legs_min + extra
            with np.errstate(divide="ignore", invalid="ignore"):
                s = np.floor(legs * sizes.area[k] / av_over_s / step + 1e-9) * step
            s = np.minimum(s, np.floor(np.asarray(s_max, float) / step + 1e-9) * step)
            take = need & (out_i < 0) & (s >= smin)
            out_i = np.where(take, k, out_i)
            out_legs = np.where(take, legs, out_legs)
            out_s = np.where(take, s, out_s)
    unit = "mm" if system == "SI" else "in"
    label = np.array([f"{sizes.names[i]} x{g} @ {s:g} {unit}" if i >= 0 else ""
                      for i, g, s in zip(out_i, out_legs, out_s, strict=True)], dtype=object)
    return {"index": out_i, "legs": out_legs, "spacing": out_s, "label": label,
            "fits": ~need | (out_i >= 0)}
