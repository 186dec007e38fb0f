"""envelope.png: moment, shear and service-deflection envelopes of one beam.

Drawn from the result columns alone (so ``envelope plot`` can redraw from the
Parquet files), with matplotlib's object API on the Agg canvas: no pyplot,
no window.  Supports are drawn under every panel, spans are numbered, and the
governing peaks are labelled with their value and combination.
``moment_plot = "tension-side"`` draws sagging moments below the axis.
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from envelope.files import write_atomic

Columns = Mapping[str, np.ndarray]

_MAX_COLOUR = "#b2182b"  # sagging / positive
_MIN_COLOUR = "#2166ac"  # hogging / negative
_FILL = "#d9d9d9"
#: Raster resolution: legible when printed at A4 width, and quick to encode.
DPI = 110


def _finite(a: np.ndarray) -> np.ndarray:
    return np.asarray(a, dtype=float)


def _span_start(x: np.ndarray, span: np.ndarray, j: int) -> float:
    """Global x of span j's left support (its first station)."""
    return float(x[np.flatnonzero(span == j)].min())


def _supports(ax, joint_x: np.ndarray, kinds: list[str], y: float, size: float) -> None:  # type: ignore[no-untyped-def]
    """Support symbols on the zero line: triangle pinned, bar fixed, circle spring."""
    for x, kind in zip(joint_x, kinds, strict=True):
        if kind == "free":
            continue
        marker = {"pinned": "^", "fixed": "s", "spring": "o"}.get(kind, "^")
        ax.plot([x], [y], marker=marker, color="black", markersize=size, zorder=5,
                markerfacecolor="white" if kind == "spring" else "black", clip_on=False)


def _label_peak(ax, x: float, y: float, text: str, above: bool) -> None:  # type: ignore[no-untyped-def]
    lo, hi = ax.get_xlim()
    where = (x - lo) / (hi - lo) if hi > lo else 0.5
    ha = "left" if where < 0.06 else "right" if where > 0.94 else "center"  # keep inside
    ax.annotate(text, (x, y), xytext=(0, 9 if above else -9), textcoords="offset points",
                ha=ha, va="bottom" if above else "top", fontsize=7.5,
                bbox={"boxstyle": "round,pad=0.2", "fc": "white", "ec": "none", "alpha": 0.8})


def _panel(ax, x, hi, lo, unit: str, title: str, flip: bool = False) -> None:  # type: ignore[no-untyped-def]
    ax.fill_between(x, lo, hi, color=_FILL, lw=0, zorder=1)
    ax.plot(x, hi, color=_MAX_COLOUR, lw=1.4, zorder=3, label="max")
    ax.plot(x, lo, color=_MIN_COLOUR, lw=1.4, zorder=3, label="min")
    ax.axhline(0.0, color="black", lw=0.8, zorder=2)
    ax.set_ylabel(f"{title} [{unit}]")
    ax.grid(True, color="#eeeeee", lw=0.6, zorder=0)
    ax.spines[["top", "right"]].set_visible(False)
    if flip:
        ax.invert_yaxis()


def draw_results(results: Mapping[str, Mapping], path: str | Path, durable: bool = True) -> Path:
    """Draw from :func:`envelope.store.read_results` output (columns and metadata)."""
    meta = results["meta"]
    return draw(results["envelope"], results["design"], results["reactions"], meta["units"],
                path, str(meta.get("envelope:moment_plot", "sagging-up")),
                str(meta.get("envelope:title", "")) or str(meta.get("envelope:beam", "")),
                durable)


def figure(results: Mapping[str, Mapping], ax=None) -> Figure:  # type: ignore[no-untyped-def]
    """The figure of :func:`envelope.store.result_columns` output, in a new Figure or in
    the place of ``ax``."""
    meta = results["meta"]
    return _build(results["envelope"], results["design"], results["reactions"], meta["units"],
                  str(meta.get("envelope:moment_plot", "sagging-up")),
                  str(meta.get("envelope:title", "")) or str(meta.get("envelope:beam", "")),
                  ax)


def draw(envelope: Columns, design: Columns, supports: Columns, units: Mapping[str, str],
         path: str | Path, moment_plot: str = "sagging-up", title: str = "",
         durable: bool = True) -> Path:
    """Draw the envelope figure to ``path`` (.png, .svg or .pdf by its suffix)."""
    path = Path(path)
    fig = _build(envelope, design, supports, units, moment_plot, title)
    fmt = path.suffix.lstrip(".").lower() or "png"
    write_atomic(path, lambda fh: fig.savefig(fh, format=fmt, dpi=DPI), durable)
    return path


def _build(envelope: Columns, design: Columns, supports: Columns, units: Mapping[str, str],
           moment_plot: str = "sagging-up", title: str = "", ax=None) -> Figure:  # type: ignore[no-untyped-def]
    x = _finite(envelope["x"])
    span = np.asarray(envelope["span"], dtype=int)
    joint_x = np.asarray(supports["x"], dtype=float)
    kinds = list(supports["type"])
    n_spans = int(span.max()) if span.size else 0

    has_defl = not np.all(np.isnan(_finite(envelope["deflection_max"])))
    n_panels = 3 if has_defl else 2
    height = 2.7 * n_panels + 0.6
    if ax is None:
        fig = Figure(figsize=(11, height))  # fixed margins: a layout engine costs a redraw
        fig.subplots_adjust(left=0.085, right=0.985, top=1 - 0.62 / height,
                            bottom=0.5 / height, hspace=0.14)
        FigureCanvasAgg(fig)
        axes = fig.subplots(n_panels, 1, sharex=True)
    else:
        fig = ax.figure
        grid = ax.get_subplotspec().subgridspec(n_panels, 1, hspace=0.14)
        ax.remove()
        axes = grid.subplots(sharex=True)
    fig.suptitle(title or "Envelopes", fontsize=11, x=0.01, ha="left")

    flip = moment_plot == "tension-side"
    mmax, mmin = _finite(envelope["moment_max"]), _finite(envelope["moment_min"])
    _panel(axes[0], x, mmax, mmin, units["moment"],
           "Moment" + (" (drawn on the tension side)" if flip else ""), flip)
    vmax, vmin = _finite(envelope["shear_max"]), _finite(envelope["shear_min"])
    _panel(axes[1], x, vmax, vmin, units["force"], "Shear")
    if has_defl:
        dmax, dmin = _finite(envelope["deflection_max"]), _finite(envelope["deflection_min"])
        _panel(axes[2], x, dmax, dmin, units["deflection"], "Deflection (service)",
               flip=True)
        axes[2].set_ylabel(f"Deflection, down [{units['deflection']}]")
    axes[-1].set_xlabel(f"x [{units['length']}]")

    # peaks: largest sagging per span, most hogging at each support, largest |V| per span
    combo_max = np.asarray(envelope["moment_max_combo"], dtype=object)
    combo_min = np.asarray(envelope["moment_min_combo"], dtype=object)
    m_pos = _finite(design["moment_pos"])
    m_pos_x = _finite(design["moment_pos_x"])
    for j in range(1, n_spans + 1):
        rows = np.flatnonzero(span == j)
        if not rows.size or np.all(np.isnan(mmax[rows])):
            continue
        k = rows[np.nanargmax(mmax[rows])]
        if m_pos[j - 1] > 0 and not np.isnan(m_pos_x[j - 1]):
            # the exact design value, at its exact position; combination of the peak station
            xp = _span_start(x, span, j) + m_pos_x[j - 1]
            _label_peak(axes[0], xp, m_pos[j - 1], f"{m_pos[j - 1]:.1f}\n{combo_max[k]}",
                        not flip)
        kv = rows[np.nanargmax(np.abs(np.r_[vmax[rows], vmin[rows]])) % rows.size]
        v = vmax[kv] if abs(vmax[kv]) >= abs(vmin[kv]) else vmin[kv]
        _label_peak(axes[1], x[kv], v, f"{v:.1f}", v >= 0)
        if has_defl:
            kd = rows[np.nanargmax(dmax[rows])]
            if dmax[kd] > 0:
                _label_peak(axes[2], x[kd], dmax[kd], f"{dmax[kd]:.2f}", False)
    for xj in joint_x:
        near = np.flatnonzero(np.isclose(x, xj, rtol=0, atol=1e-9 * max(x.max(), 1.0)))
        scale = float(np.nanmax(np.abs(np.r_[mmax, mmin]))) if mmin.size else 0.0
        if near.size and np.nanmin(mmin[near]) < -1e-6 * scale:
            k = near[np.nanargmin(mmin[near])]
            _label_peak(axes[0], x[k], mmin[k], f"{mmin[k]:.1f}\n{combo_min[k]}", flip)

    for ax in axes:
        lo, hi = ax.get_ylim()
        pad = 0.18 * (hi - lo) if hi != lo else 1.0
        ax.set_ylim(lo - pad, hi + pad)
        y0 = 0.0
        _supports(ax, joint_x, kinds, y0, 7)
        for xj in joint_x:
            ax.axvline(xj, color="#bbbbbb", lw=0.6, ls=":", zorder=0)
    # span numbers along the top panel
    top = axes[0]
    for j in range(1, n_spans + 1):
        rows = np.flatnonzero(span == j)
        if rows.size:
            mid = 0.5 * (x[rows].min() + x[rows].max())
            top.text(mid, 1.02, f"span {j}", transform=top.get_xaxis_transform(),
                     ha="center", va="bottom", fontsize=8.5, color="#444444")
    handles, _ = axes[0].get_legend_handles_labels()
    fig.legend(handles, ["envelope maximum", "envelope minimum"], loc="upper right",
               bbox_to_anchor=(0.985, 1.0), fontsize=8, frameon=False, ncol=2)
    fig.text(0.99, 0.005, "For checking by a licensed engineer; defer to local codes.",
             ha="right", va="bottom", fontsize=7, color="#777777")
    return fig
