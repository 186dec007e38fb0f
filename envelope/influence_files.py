"""Influence lines written as a table and drawn as a figure (presentation: pyarrow and
matplotlib, imported here and only here for influence lines).

``influence-<span>-<x_span>.parquet`` holds one row per load position: ``load_x`` (global
position of a unit downward load) and the response at the chosen point to that load,
per unit of load: ``shear`` (force per force, 1), ``moment`` (length), ``rotation``
(rad per force), ``deflection`` (mm per kN or in per kip) and ``reaction_<joint>`` (1) for
every restrained joint.  Each column's unit is in its field metadata; the file carries
the usual ``envelope:`` metadata.  A jump (shear under the load) shows as two rows at one
``load_x``, the left piece first.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from envelope import engine_version
from envelope.influence import influence_at
from envelope.model import Beam

CAUTION = ("Results are for checking by a licensed engineer and defer to local codes; "
           "they are not a design.")


def influence_units(beam: Beam, names: list[str]) -> dict[str, str]:
    """The unit of each influence column: a response per unit downward load."""
    labels = beam.units.labels
    per = f"/{labels['force']}"
    base = {"load_x": labels["length"], "shear": "1", "moment": labels["length"],
            "rotation": f"rad{per}", "deflection": f"{labels['deflection']}{per}"}
    return {n: base.get(n, "1") for n in names}


def influence_table(beam: Beam, span: int, x_span: float, right: bool = True):  # type: ignore[no-untyped-def]
    """The influence lines at one point as a pyarrow Table (see the module docstring);
    ``span`` is 0-based."""
    import pyarrow as pa

    xi, lines = influence_at(beam, span, x_span, right)
    defl = beam.units.deflection_factor
    cols = {"load_x": xi, **{q: v * (defl if q == "deflection" else 1.0)
                             for q, v in lines.items()}}
    units = influence_units(beam, list(cols))
    fields = [pa.field(n, pa.float64(), metadata={b"unit": units[n].encode()}) for n in cols]
    meta = {
        b"envelope:units": json.dumps(beam.units.labels).encode(),
        b"envelope:version": engine_version().encode(),
        b"envelope:input_sha256": beam.input_sha256.encode(),
        b"envelope:beam": beam.id.encode(),
        b"envelope:caution": CAUTION.encode(),
        b"envelope:influence_at": json.dumps(
            {"span": span + 1, "x_span": x_span, "side": "right" if right else "left"}
        ).encode(),
    }
    arrays = [pa.array(np.asarray(v, dtype=float), type=pa.float64()) for v in cols.values()]
    return pa.Table.from_arrays(arrays, schema=pa.schema(fields, metadata=meta))


def write_influence(beam: Beam, span: int, x_span: float, out: Path, right: bool = True,
                    figure: bool = True) -> list[Path]:
    """Write the table (and the figure) of the influence lines at one point into
    ``out``; returns the paths written."""
    import pyarrow.parquet as pq

    from envelope.files import write_atomic

    table = influence_table(beam, span, x_span, right)
    stem = f"influence-{span + 1}-{x_span:g}"
    out.mkdir(parents=True, exist_ok=True)
    paths = [out / f"{stem}.parquet"]
    write_atomic(paths[0], lambda fh: pq.write_table(table, fh))
    if figure:
        paths.append(out / f"{stem}.png")
        draw_influence(beam, table, paths[1], span, x_span)
    return paths


def draw_influence(beam: Beam, table, path: Path, span: int, x_span: float) -> None:  # type: ignore[no-untyped-def]
    """Moment, shear and reaction influence lines on one figure, with the point marked
    and the caution printed."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from envelope.files import write_atomic

    data = {n: table.column(n).to_numpy() for n in table.column_names}
    units = influence_units(beam, table.column_names)
    x = data["load_x"]
    at = float(beam.joint_x[span]) + x_span
    reactions = [n for n in table.column_names if n.startswith("reaction_")]
    panels = [("moment", "M per unit load"), ("shear", "V per unit load"),
              ("deflection", "deflection per unit load")]
    fig, axes = plt.subplots(len(panels) + 1, 1, figsize=(9, 9), sharex=True)
    fig.set_layout_engine("constrained", rect=(0.0, 0.025, 1.0, 0.975))
    for ax, (name, label) in zip(axes, panels, strict=False):
        ax.plot(x, data[name], color="#1b5e8a", lw=1.4)
        ax.fill_between(x, data[name], 0.0, color="#1b5e8a", alpha=0.12, lw=0)
        ax.axhline(0.0, color="0.3", lw=0.6)
        ax.set_ylabel(f"{label} [{units[name]}]", fontsize=8)
    ax = axes[-1]
    for name in reactions:
        ax.plot(x, data[name], lw=1.2, label=f"R{name.split('_')[1]}")
    ax.axhline(0.0, color="0.3", lw=0.6)
    ax.set_ylabel("reaction per unit load [1]", fontsize=8)
    ax.legend(fontsize=7, ncol=max(1, len(reactions)), loc="upper right")
    ax.set_xlabel(f"position of a unit downward load [{units['load_x']}]")
    for ax in axes:
        for xj in beam.joint_x:
            ax.axvline(float(xj), color="0.75", lw=0.5, zorder=0)
        ax.axvline(at, color="#b03a2e", lw=0.8, ls="--")
    title = f"{beam.id}: influence lines at span {span + 1}, x_span = {x_span:g} " \
            f"{beam.units.labels['length']}"
    axes[0].set_title(title, fontsize=10, loc="left", parse_math=False)
    fig.text(0.01, 0.002, CAUTION, fontsize=7, color="0.35")
    write_atomic(path, lambda fh: fig.savefig(fh, format="png", dpi=110))
    plt.close(fig)
