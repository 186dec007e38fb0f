"""One beam's run split into its stages, in this process: CPU seconds of each stage
and the peak resident memory of the whole run, printed as one JSON line.

    python benchmarks/stages.py CASE.toml OUT_DIR

Used by section h of ``run.py`` (each beam in a fresh child process, so that its peak
memory is its own).  The stages are those of ``envelope.analysis.analyse`` followed by
the tables and their files, as ``envelope run --no-plots`` makes them: read, solve
(mesh, unit cases, one solve, combination sets), stations, station envelopes (moment,
shear, deflection), support envelopes, design actions, tables, write.  CPU time is the
process's (``time.process_time``: every thread, user and system), so that other work on a
shared machine inflates it less than wall time.
"""

from __future__ import annotations

import json
import resource
import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any


def main(case: str, out: str) -> dict[str, Any]:
    import numpy as np

    from envelope import store
    from envelope.actions import design_actions
    from envelope.analysis import Analysis, _reduce_rows, support_moments
    from envelope.casefile import load_case
    from envelope.recovery import stations
    from envelope.solved import envelopes_at, solve_beam

    seconds: dict[str, float] = {}

    def stage(name: str, fn: Callable[[], Any]) -> Any:
        t0 = time.process_time()
        result = fn()
        seconds[name] = time.process_time() - t0
        return result

    beam = stage("read", lambda: load_case(case))
    solved = stage("solve", lambda: solve_beam(beam))
    pts = stage("stations", lambda: stations(beam, solved.mesh, solved.unit_cases))
    env = stage("envelopes", lambda: envelopes_at(
        solved, pts, {"moment": "strength", "shear": "strength", "deflection": "service"}))
    sol = solved.solution
    joints = np.array([j for j, s in enumerate(beam.supports) if s.is_restrained], dtype=int)

    def supports() -> dict[str, Any]:
        moment = support_moments(sol.reaction_moment)
        return {"reaction": _reduce_rows(sol.reaction[joints], solved.strength),
                "service_reaction": _reduce_rows(sol.reaction[joints], solved.service),
                "support_moment": _reduce_rows(moment[joints], solved.strength)}

    reactions = stage("supports", supports)
    actions = stage("design", lambda: design_actions(solved, pts, env))
    analysis = Analysis(solved, pts, env, joints, reactions,
                        sol.reaction[joints] @ solved.per_case, actions)
    tables = stage("tables", lambda: store.tables(analysis))
    folder = Path(out) / beam.id
    folder.mkdir(parents=True, exist_ok=True)
    stage("write", lambda: store.write_tables(folder, tables))
    return {"spans": beam.n_spans, "stations": pts.n, "units": solved.unit_cases.n_units,
            "seconds": seconds,
            "peak_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}


if __name__ == "__main__":
    print(json.dumps(main(sys.argv[1], sys.argv[2])))
