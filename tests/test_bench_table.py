"""bench/bench_table.py's pure parts: the regression and target decisions, the number of
repeats and draws, and the baseline file's format. Nothing here is timed (timings are noisy and
stay in the benchmark)."""

from __future__ import annotations

import importlib.util
import json
import sys
from pathlib import Path

import pytest

BENCH = Path(__file__).resolve().parents[1] / "bench"


def _load():
    spec = importlib.util.spec_from_file_location("bench_table", BENCH / "bench_table.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules["bench_table"] = module
    spec.loader.exec_module(module)
    return module


bench_table = _load()


# --- the decisions -------------------------------------------------------------------------


def test_a_ratio_more_than_the_margin_above_its_baseline_is_a_regression():
    assert bench_table.regression_status(1.51, 1.0, margin=1.5) == "REGRESSED"


def test_a_ratio_within_the_margin_is_ok_on_both_sides():
    assert bench_table.regression_status(1.5, 1.0, margin=1.5) == "ok"
    assert bench_table.regression_status(0.7, 1.0, margin=1.5) == "ok"


def test_a_ratio_well_below_its_baseline_is_an_improvement_not_a_failure():
    assert bench_table.regression_status(0.5, 1.0, margin=1.5) == "improved"


def test_a_row_without_baseline_is_new():
    assert bench_table.regression_status(3.0, None) == "new"


def test_a_broken_baseline_ratio_is_refused():
    with pytest.raises(ValueError):
        bench_table.regression_status(1.0, 0.0)
    with pytest.raises(ValueError):
        bench_table.regression_status(float("nan"), 1.0)


def test_the_target_is_met_up_to_and_including_it():
    assert bench_table.target_status(0.1, 0.1) == "met"
    assert bench_table.target_status(0.1000001, 0.1) == "MISSED"


def test_the_margin_is_wider_than_noise_and_narrower_than_a_doubling():
    # judgement (see MARGIN's docstring): noise ±30 % between runs, a 2x slowdown must fail
    assert 1.3 < bench_table.MARGIN < 2.0


def test_repeats_fill_the_budget_within_their_bounds():
    assert bench_table.repeats_for(1.0, budget=6.0, low=3, high=21) == 6
    assert bench_table.repeats_for(10.0, budget=6.0, low=3, high=21) == 3
    assert bench_table.repeats_for(1e-4, budget=6.0, low=3, high=21) == 21
    assert bench_table.repeats_for(0.0, budget=6.0, low=3, high=21) == 21


def test_uncertainty_runs_every_draw_when_they_fit_and_fewer_when_not():
    assert bench_table.uncertainty_draws(0.003, samples=1000, budget=4.0) == 1000
    assert bench_table.uncertainty_draws(0.4, samples=1000, budget=4.0) == 10
    assert bench_table.uncertainty_draws(0.01, samples=1000, budget=4.0) == 400


# --- the baseline file ---------------------------------------------------------------------


def _document(ratio=2.0):
    return {"format": bench_table.BASELINE_FORMAT,
            "calibration": bench_table.CALIBRATION_VERSION,
            "modes": {"auto": {"measured": "2026-12-04", "machine": {"cpu": "x"},
                               "rows": {"simulate": {"ratio": ratio, "min_s": 0.1}}}}}


def test_the_committed_baseline_has_this_format():
    bench_table.check_baseline(json.loads((BENCH / "baseline.json").read_text()))


def test_a_baseline_of_another_format_or_with_a_bad_ratio_is_refused():
    with pytest.raises(ValueError):
        bench_table.check_baseline({**_document(), "format": 99})
    for bad in (0.0, -1.0, float("inf"), "1.0"):
        with pytest.raises(ValueError):
            bench_table.check_baseline(_document(bad))


def test_ratios_are_read_for_the_mode_asked_only():
    document = _document()
    assert bench_table.baseline_ratios(document, "auto") == {"simulate": 2.0}
    assert bench_table.baseline_ratios(document, "python") == {}


def test_ratios_of_another_calibration_version_are_not_compared():
    document = {**_document(), "calibration": bench_table.CALIBRATION_VERSION + 1}
    assert bench_table.baseline_ratios(document, "auto") == {}


def test_an_update_replaces_the_rows_measured_and_keeps_the_others():
    new = bench_table.updated_baseline(_document(), "auto", {"steady": {"ratio": 0.2}},
                                       {"cpu": "y"}, "2026-12-05")
    rows = new["modes"]["auto"]["rows"]
    assert rows["steady"] == {"ratio": 0.2}
    assert rows["simulate"]["ratio"] == 2.0
    assert new["modes"]["auto"]["machine"] == {"cpu": "y"}


def test_an_update_of_one_mode_keeps_the_other_modes():
    new = bench_table.updated_baseline(_document(), "python", {"steady": {"ratio": 0.2}},
                                       {}, "2026-12-05")
    assert set(new["modes"]) == {"auto", "python"}


def test_a_missing_baseline_file_reads_as_empty(tmp_path):
    document = bench_table.load_baseline(tmp_path / "none.json")
    assert document["modes"] == {}
    bench_table.check_baseline(document)


def test_the_baseline_text_reads_back_as_the_same_document():
    document = bench_table.updated_baseline(_document(), "python", {"steady": {"ratio": 0.2}},
                                            {"cpu": "y"}, "2026-12-05")
    assert json.loads(bench_table.baseline_text(document)) == document
