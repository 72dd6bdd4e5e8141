"""``variantcmp oei`` as a user runs it: columns, formats, the terrain columns, errors."""

import io
import json

import polars as pl
import pytest

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp.caution import CAUTION, ENGINE_OUT_CAUTION
from variantcmp.cli import main

# The columns the issue asks for, in CSV and JSON.
REQUIRED = ["variant", "engine", "weight_kg", "isa_dev_c", "mach", "gross_ceiling_ft", "net_ceiling_ft", "limit", "note",
            "start_altitude_ft", "driftdown_distance_nm", "driftdown_time_min"]
TERRAIN = ["terrain_ft", "clearance_ft", "net_clearance_ft", "net_clears", "net_crossing_nm"]


def run(capsys, *argv):
    status = main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


def test_csv_has_the_columns_and_only_data(capsys, demo):
    status, out, err = run(capsys, "oei", "--isa=0,20", "--format", "csv")
    assert status == 0 and CAUTION in err and "Caution" not in out
    frame = pl.read_csv(io.StringIO(out), infer_schema_length=None)
    assert frame.columns[:len(REQUIRED)] == REQUIRED and not set(TERRAIN) & set(frame.columns)
    assert frame.height == 2 * sum(len(v.engine_options) for v in demo.variants.values())
    # Net below gross, the drift-down from above the gross ceiling (the definitions).
    assert (frame["net_ceiling_ft"] < frame["gross_ceiling_ft"]).all()
    assert (frame["start_altitude_ft"] > frame["gross_ceiling_ft"]).all()
    assert (frame["driftdown_distance_nm"] > 0).all() and (frame["driftdown_time_min"] > 0).all()


def test_terrain_adds_its_columns_and_json_matches(capsys):
    status, out, _ = run(capsys, "oei", "--terrain", "14000", "--clearance", "1500", "--format", "json")
    assert status == 0
    rows = json.loads(out)
    assert all(set(REQUIRED + TERRAIN) <= set(r) for r in rows)
    assert {r["clearance_ft"] for r in rows} == {1500.0} and {r["terrain_ft"] for r in rows} == {14000.0}
    for r in rows:
        assert r["net_clears"] == (r["net_clearance_ft"] >= 1500.0)
        assert (r["net_crossing_nm"] is None) == r["net_clears"]


def test_table_shows_levels_the_engine_out_caution_and_the_caution(capsys):
    status, out, _ = run(capsys, "oei", "--variant", "v70", "--terrain", "3800m")
    assert status == 0
    assert "Gross" in out and "Net" in out and "FL2" in out and "clears" in out
    assert " ".join(ENGINE_OUT_CAUTION.split()) in " ".join(out.split())
    assert out.rstrip().endswith(CAUTION)


def test_a_single_engine_variant_is_blank_with_a_note(capsys, tmp_path):
    path = tmp_path / "one.toml"
    write_catalogue(path, [engine_spec()], [variant_spec(engine_count=1)])
    status, out, _ = run(capsys, "oei", str(path), "--format", "json")
    row = json.loads(out)[0]
    assert status == 0 and row["gross_ceiling_ft"] is None and row["driftdown_distance_nm"] is None
    assert "single engine" in row["note"]


def test_from_gives_the_start_and_a_start_below_the_ceiling_holds(capsys):
    status, out, _ = run(capsys, "oei", "--variant", "v70", "--from", "FL150", "--format", "csv")
    frame = pl.read_csv(io.StringIO(out), infer_schema_length=None)
    assert status == 0 and (frame["start_altitude_ft"] == 15000.0).all()
    assert (frame["driftdown_distance_nm"] == 0.0).all() and frame["note"].str.contains("no drift-down").all()


@pytest.mark.parametrize("args, fragment", [
    (["--from", "FL3500"], "--from"),
    (["--terrain", "high"], "--terrain"),
    (["--terrain", "40000"], "--terrain"),
    (["--clearance", "1000"], "--clearance: give --terrain too"),
    (["--terrain", "9000", "--clearance", "-5"], "--clearance"),
    (["--climb", "0,300"], "one criterion"),
    (["--weight", "70"], "--weight"),
])
def test_bad_options_exit_2_with_one_message(capsys, args, fragment):
    status, out, err = run(capsys, "oei", *args)
    assert status == 2 and out == "" and fragment in err and "Traceback" not in err
