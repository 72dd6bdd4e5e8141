"""`variantcmp heaviest` and `variantcmp hottest` as a user runs them: columns, formats, errors."""

import io
import json
import math

import polars as pl
import pytest

from variantcmp.caution import CAUTION
from variantcmp.cli import main

HEAVIEST = ["variant", "engine", "isa_dev_c", "mach", "climb_fpm", "target_ft", "max_weight_kg",
            "max_weight_pct_mtow", "over_mtow", "limit", "note"]
HOTTEST = ["variant", "engine", "weight_kg", "mach", "climb_fpm", "target_ft", "max_isa_dev_c", "limit", "note"]


def run(capsys, *argv):
    status = main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


def pairs(catalogue):
    return sum(len(v.engine_options) for v in catalogue.variants.values())


@pytest.mark.parametrize("command, columns, extra", [("heaviest", HEAVIEST, ["--isa=0,15"]),
                                                     ("hottest", HOTTEST, ["--weight", "90%mtow,100%mtow"])])
def test_csv_and_json_are_data_only_with_the_columns_named(capsys, demo, command, columns, extra):
    status, out, err = run(capsys, command, "--target", "FL350,37000ft", *extra, "--climb", "service,cruise",
                           "--format", "csv")
    assert status == 0, err
    frame = pl.read_csv(io.StringIO(out), infer_schema_length=None)
    assert set(columns) <= set(frame.columns)
    assert frame.height == pairs(demo) * 2 * 2 * 2  # targets x (deviations or weights) x climbs
    assert set(frame["target_ft"]) == {35_000.0, 37_000.0}
    assert CAUTION in err and CAUTION not in out
    status, out_json, _ = run(capsys, command, "--target", "FL350,37000ft", *extra, "--climb", "service,cruise",
                              "--format", "JSON")
    rows = json.loads(out_json)
    assert len(rows) == frame.height and set(columns) <= set(rows[0])
    assert all(not isinstance(v, float) or math.isfinite(v) for row in rows for v in row.values())


def test_exports_keep_the_stated_precision(capsys):
    # README: kg to 0.1, deg C to 0.01, ft to 0.01, percentages to 0.01, Mach to 0.0001.
    for command, extra in (("heaviest", ["--isa=7.3"]), ("hottest", ["--weight", "91.7%mtow"])):
        status, out, err = run(capsys, command, "--target", "FL360", *extra, "--mach", "best", "--format", "csv")
        assert status == 0, err
        header, *rows = out.splitlines()
        decimals = {"max_weight_kg": 1, "max_isa_dev_c": 2, "level_oat_c": 2, "max_weight_pct_mtow": 2, "mach": 4,
                    "target_ft": 2, "thrust_weight_kg": 1}
        for row in rows:
            for name, value in zip(header.split(","), row.split(",")):
                if name in decimals and "." in value:
                    assert len(value.split(".")[1]) <= decimals[name], (name, value)


def test_the_readable_tables_show_levels_tonnes_mtow_and_the_caution(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "200")  # piped output as wide as COLUMNS says
    status, out, err = run(capsys, "heaviest", "--target", "FL350,FL410", "--isa", "ISA+15")
    assert status == 0, err
    assert "FL350" in out and "FL410" in out and "Heaviest" in out and "MTOW" in out and "ISA+15" in out
    assert "above the cabin-pressure ceiling" in out  # the demo's V88 at FL410
    assert out.rstrip().endswith(CAUTION)
    status, out, err = run(capsys, "hottest", "--target", "FL350", "--weight", "44t", "--mach", "best")
    assert status == 0, err
    assert "Warmest" in out and "ISA+" in out and "44.0" in out and out.rstrip().endswith(CAUTION)
    assert "nan" not in out and "inf" not in out


def test_the_readable_weight_is_rounded_down_never_up(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "200")
    # A heaviest weight shown must never be more than the computed one (like altitudes).
    status, out, _ = run(capsys, "heaviest", "--target", "FL370", "--variant", "v88", "--engine", "ossel-78",
                         "--format", "csv")
    exact = pl.read_csv(io.StringIO(out))["max_weight_kg"][0]
    status, out, _ = run(capsys, "heaviest", "--target", "FL370", "--variant", "v88", "--engine", "ossel-78")
    shown = next(line for line in out.splitlines() if line.startswith("v88")).split()
    tonnes = float(shown[5])
    assert tonnes * 1000.0 <= exact < tonnes * 1000.0 + 100.0


@pytest.mark.parametrize("args, fragment", [
    (["heaviest"], "--target: give the flight level"),
    (["heaviest", "--target", "FL350,,FL370"], "--target: empty item"),
    (["heaviest", "--target", "35,000ft"], "thousands separator"),
    (["heaviest", "--target", "FL350", "--isa", "hot"], "--isa"),
    (["heaviest", "--target", "FL350", "--weight", "40t"], "unknown option '--weight'"),
    (["hottest", "--target", "FL350"], "--weight: give the weight"),
    (["hottest", "--target", "FL350", "--weight", "40t", "--isa", "15"], "unknown option '--isa'"),
    (["hottest", "--target", "FL2000", "--weight", "40t"], "--target"),
    (["hottest", "--target", "FL350", "--weight", "40t", "--mach", "fast"], "--mach"),
])
def test_mistakes_are_one_message_and_exit_2(capsys, args, fragment):
    status, out, err = run(capsys, *args)
    assert status == 2 and out == "" and fragment in err and "Traceback" not in err


def test_the_commands_answer_for_the_bundled_survey_fleet_by_name(capsys):
    status, out, err = run(capsys, "hottest", "tallon-fells-survey", "--target", "FL450", "--weight", "90%mtow",
                           "--format", "csv")
    assert status == 0, err
    frame = pl.read_csv(io.StringIO(out), infer_schema_length=None)
    assert frame["max_isa_dev_c"].drop_nulls().len() >= 1
