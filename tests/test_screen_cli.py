"""The screen, sensitivity and spread commands as a user runs them: output, formats, errors."""

import io
import json
import re

import polars as pl
import pytest

from variantcmp.caution import CAUTION
from variantcmp.cli import main
from variantcmp.table import Conditions
from variantcmp.table.perturbations import spread_table
from variantcmp.units import WeightSpec


def run(capsys, *argv):
    status = main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


def csv(text):
    return pl.read_csv(io.StringIO(text), infer_schema_length=None)


def test_screen_table_ends_with_a_summary_and_the_caution(capsys):
    status, out, err = run(capsys, "screen", "--baseline", "ossel-86", "--weight", "90%mtow,100%mtow", "--isa=0,20")
    assert status == 0, err
    assert "engine options against ossel-86" in out and "Summary per option against ossel-86" in out
    assert "Left out: v70 does not offer ossel-86; t72 does not offer ossel-86" in out
    assert out.index("Summary per option") < out.index(CAUTION)
    for engine in ("ossel-78", "brannick-84t", "brannick-74"):
        assert engine in out.split("Summary per option")[1]


def test_screen_csv_has_the_columns_and_the_default_grid(capsys):
    status, out, err = run(capsys, "screen", "--baseline", "OSSEL-78", "--format", "csv")
    assert status == 0 and CAUTION in err
    frame = csv(out)
    for col in ("variant", "engine", "weight_kg", "isa_dev_c", "max_altitude_ft", "baseline_ft", "delta_ft", "limit",
                "baseline_limit", "limit_changed"):
        assert col in frame.columns
    # v70 (ossel-78 and brannick-74), v88 (ossel-78, -86, brannick-84t): 3 options x 5 weights x 7 days.
    assert frame.height == 3 * 5 * 7 and set(frame["baseline"]) == {"ossel-78"}
    assert sorted(frame["isa_dev_c"].unique()) == [0, 5, 10, 15, 20, 25, 30]


def test_screen_json_is_data_only(capsys):
    status, out, _ = run(capsys, "screen", "--baseline", "ossel-86", "--variant", "v88", "--weight", "95%mtow,100%mtow",
                         "--isa=0,15", "--format", "json")
    assert status == 0
    rows = json.loads(out)
    assert len(rows) == 2 * 2 * 2 and {r["variant"] for r in rows} == {"v88"}


def test_screen_with_a_target_gives_both_heaviest_weights(capsys):
    argv = ("screen", "--baseline", "ossel-86", "--variant", "v104", "--weight", "95%mtow,100%mtow", "--isa=0,15",
            "--target", "FL370")
    status, out, err = run(capsys, *argv, "--format", "csv")
    assert status == 0, err
    frame = csv(out)
    assert (frame["target_ft"] == 37_000).all()
    # The csv's difference is its two weights' at the export precision (0.1 kg).
    assert (frame["target_weight_delta_kg"] - (frame["target_weight_kg"] - frame["baseline_target_weight_kg"])
            ).abs().max() <= 0.2
    status, out, err = run(capsys, *argv)
    assert status == 0
    assert "ΔW" in out and "Mean ΔW" in out and "heaviest weight that reaches FL370" in out
    # The table's tonnes are the csv's weights rounded down to 0.1 t.
    first = frame.row(0, named=True)
    assert f"{int(first['target_weight_kg'] // 100) / 10:.1f}" in out.splitlines()[4]


@pytest.mark.parametrize("argv, words", [
    (["screen"], "required: --baseline"),
    (["screen", "--baseline", "ossel-86", "--target", "FL3700"], "--target"),
    (["screen", "--baseline", "osel-86"], "unknown engine option 'osel-86'"),
    (["screen", "--baseline", "ossel-86", "--variant", "v70"], "v70 does not offer ossel-86"),
    (["spread", "--vary", "cd0=2"], "give cd0's relative standard deviation with %"),
    (["spread", "--vary", "drag=2%"], "unknown parameter 'drag'"),
    (["spread", "--samples", "5"], "from 10 to 100,000"),
    (["spread", "--seed", "-1"], "--seed"),
    (["spread", "--weight", "80%mtow,90%mtow,100%mtow", "--isa=0,5,10,15,20,25,30,35", "--climb", "0,100,300,500",
      "--samples", "100000"], "use fewer samples or a smaller grid"),
])
def test_user_errors_are_one_message_and_exit_2(capsys, argv, words):
    status, out, err = run(capsys, *argv)
    assert status == 2 and words in err and "Traceback" not in err and out == ""


def test_sensitivity_csv_and_table(capsys):
    status, out, err = run(capsys, "sensitivity", "--variant", "v104", "--isa=0,20", "--format", "csv")
    assert status == 0, err
    frame = csv(out)
    for col in ("ft_per_pct_cd0", "ft_per_pct_k", "ft_per_pct_thrust", "ft_per_pct_weight", "ft_per_c_isa",
                "max_altitude_ft", "variant", "engine", "weight_kg", "isa_dev_c"):
        assert col in frame.columns
    assert frame.height == 3 * 2
    status, out, _ = run(capsys, "sensitivity", "--variant", "v104")
    assert status == 0 and "sensitivity of the maximum altitude" in out and out.rstrip().endswith(CAUTION)


def test_spread_same_seed_same_numbers_and_the_target(capsys):
    argv = ["spread", "--weight", "95%mtow", "--isa", "ISA+15", "--samples", "200", "--target", "FL360", "--format", "csv"]
    status, first, _ = run(capsys, *argv, "--seed", "7")
    _, again, _ = run(capsys, *argv, "--seed", "7")
    _, other, _ = run(capsys, *argv, "--seed", "8")
    assert status == 0 and first == again and first != other
    frame = csv(first)
    assert {"p10_ft", "p50_ft", "p90_ft", "no_altitude_pct", "p_reach_target", "target_ft"} <= set(frame.columns)
    assert frame["p_reach_target"].is_between(0.0, 1.0).all()
    # The CSV is the table layer's answer at the export precision.
    from variantcmp.catalogue import demo_catalogue_path, load_catalogue

    direct = spread_table(load_catalogue(demo_catalogue_path()), Conditions(weights=(WeightSpec(95.0, "%mtow"),),
                          isa_devs_c=(15.0,)), {"cd0": 0.02, "thrust": 0.03, "k": 0.02, "weight": 0.01}, 200, 7, 36_000.0)
    assert frame["p10_ft"].to_list() == pytest.approx(direct["p10_ft"].to_list(), abs=0.006)
    status, out, _ = run(capsys, *argv[:-2], "--seed", "7")
    assert status == 0 and "Reaches" in out and "200 samples, seed 7" in out and out.rstrip().endswith(CAUTION)


def test_a_heaviest_weight_above_mtow_is_starred(capsys):
    # The survey type lifts more than its MTOW to FL390 (not capped, as heaviest gives it): the
    # table stars it, the csv has its %MTOW.
    argv = ("screen", "tallon-fells-survey", "--baseline", "wren-20", "--variant", "ha2", "--target", "FL390")
    status, out, _ = run(capsys, *argv, "--format", "csv")
    frame = csv(out)
    assert status == 0 and (frame["target_weight_pct_mtow"] > 100).all()
    status, out, _ = run(capsys, *argv)
    assert status == 0 and re.search(r" \d+\.\d\* ", out) and "* above MTOW" in out
