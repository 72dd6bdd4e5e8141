"""A small benchmark run: the command works and vectorised and scalar answers agree."""

import json

from variantcmp.cli import main


def test_bench_small_run_agrees_with_scalar_reference(capsys):
    assert main(["bench", "--cases", "3000", "--best-cases", "200", "--scalar-cases", "150", "--spread-samples", "10",
                 "--format", "json"]) == 0
    figures = json.loads(capsys.readouterr().out)
    for key in ("cases", "seconds", "cases_per_s", "best_speed_cases_per_s", "oei_cases_per_s", "scalar_cases_per_s",
                "speedup", "max_abs_diff_ft", "grid_ms", "spread_demo_s", "peak_rss_mb", "turboprop_cases_per_s",
                "turboprop_best_cases_per_s", "turboprop_scalar_cases_per_s", "turboprop_max_abs_diff_ft",
                "turboprop_oei_cases_per_s", "cruise_cases_per_s", "mrc_cases_per_s",
                "turboprop_cruise_cases_per_s", "turboprop_mrc_cases_per_s"):
        assert key in figures
    assert figures["cases"] == figures["turboprop_cases"] == 3000
    # Independent scalar method (floats, math, brentq; propeller thrust eta P / V): agreement
    # within 1 ft is the target, for the jets and for the turboprops.
    for prefix in ("", "turboprop_"):
        assert figures[f"{prefix}max_abs_diff_ft"] is not None and figures[f"{prefix}max_abs_diff_ft"] < 1.0
        assert figures[f"{prefix}scalar_mismatched_cases"] == 0
    # The cruise workloads run on --cases cases and find answers for most of them.
    assert figures["cruise_cases"] == figures["mrc_cases"] == 3000
    assert figures["cruise_found_share"] > 0.9 and figures["mrc_found_share"] > 0.5
    assert figures["turboprop_mrc_found_share"] > 0.5
    # The inverse answers' figures, and their round trip: the heaviest weight gives the level back.
    for key in ("heaviest_cases_per_s", "hottest_cases_per_s", "heaviest_best_cases_per_s", "hottest_best_cases_per_s"):
        assert figures[key] > 0
    assert figures["heaviest_round_trip_max_ft"] is not None and figures["heaviest_round_trip_max_ft"] < 1.0


def test_bench_table_output(capsys):
    assert main(["bench", "--cases", "500", "--best-cases", "50", "--scalar-cases", "20", "--spread-samples", "10"]) == 0
    out = capsys.readouterr().out
    assert "scalar" in out and "speed-up" in out and "Caution" in out and "turboprops: best speed" in out
    assert "warmest day for a level" in out


def test_bench_rejects_bad_counts(capsys):
    assert main(["bench", "--cases", "lots"]) == 2
    assert "whole number" in capsys.readouterr().err
