"""Test set-up: tests/ on the import path for the shared helpers (bad_inputs, beams)."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

os.environ.setdefault("MPLBACKEND", "Agg")
sys.path.insert(0, str(Path(__file__).resolve().parent))


#: Files whose every test is long: subprocess batches and killed workers, fuzzing with
#: Hypothesis, property tests on drawn beams, rendering in a browser.
SLOW_FILES = frozenset({
    "test_batch.py", "test_fuzz_casefile.py", "test_properties.py",
    "test_report_rendering.py",
})
#: Single long tests (seconds each on a quiet machine, or many parametrized cases).
SLOW_TESTS: dict[str, frozenset[str]] = {
    "test_reference.py": frozenset({
        "test_station_envelopes_match_brute_force", "test_governing_combination_and_pattern",
        "test_design_actions_match_brute_force"}),
    "test_safe_outputs.py": frozenset({
        "test_sigkill_at_random_moments_leaves_only_complete_files",
        "test_every_file_stays_inside_out_id"}),
    "test_edge_cases.py": frozenset({
        "test_5000_point_loads_on_one_span_match_statics_and_superposition"}),
    "test_reports.py": frozenset({
        "test_combined_tables_name_units_per_system_or_convert_to_one",
        "test_schedule_rows_run_as_their_case_files_would",
        "test_a_bad_schedule_cell_names_sheet_row_and_column_and_the_rest_runs",
        "test_a_failing_section_is_reported_as_failing",
        "test_a_beam_without_design_says_no_check_was_made"}),
    "test_fast_figure.py": frozenset({
        "test_fast_figure_of_generated_beams_is_matplotlibs_drawing"}),
    "test_design_actions.py": frozenset({
        "test_deflection_max_and_live_are_the_span_maxima_of_their_envelopes",
        "test_moment_pos_is_the_exact_span_maximum_of_the_envelope"}),
    "test_determinism.py": frozenset({
        "test_a_fresh_process_with_another_hash_seed_in_another_folder_writes_the_same_bytes"}),
    "test_notebook_api.py": frozenset({"test_the_built_wheel_ships_py_typed_and_the_package_data"}),
    "test_work_limits.py": frozenset({
        "test_the_memory_estimate_bounds_redistribution_and_moving_loads"}),
    "test_cli.py": frozenset({
        "test_run_without_arguments_writes_the_bundled_demo",
        "test_plot_redraws_from_the_parquet_files_in_each_format"}),
}


def pytest_collection_modifyitems(config: pytest.Config, items: list[pytest.Item]) -> None:
    """Mark the long tests ``slow``: ``pytest -m "not slow"`` is the quick loop, plain
    ``pytest`` (CI) runs everything.  The lists above are kept here, in one place."""
    for item in items:
        name = item.path.name
        base = getattr(item, "originalname", item.name)
        if name in SLOW_FILES or base in SLOW_TESTS.get(name, ()):
            item.add_marker(pytest.mark.slow)
