"""``variantcmp cruise`` as a user runs it: the three answers, their columns, errors and exit codes."""

import math
import subprocess
import sys

import numpy as np
import polars as pl
import pytest
from ambiance import Atmosphere

from test_cli import read_csv, run
from variantcmp.atmosphere import isa_pressure_pa
from variantcmp.caution import CAUTION
from variantcmp.table.cruise import CRUISE_COLUMNS, SPEED_COLUMNS
from variantcmp.table.step_climb import STEP_COLUMNS


def test_cruise_csv_has_the_issue_columns_and_one_row_per_case(capsys, demo):
    status, out, err = run(capsys, "cruise", "--weight", "90%mtow,100%mtow", "--isa=0,20", "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    # The issue's columns, at least.
    for col in ("variant", "engine", "weight_kg", "isa_dev_c", "mach", "optimum_altitude_ft", "max_altitude_ft",
                "cruise_fl", "fuel_flow_kg_h", "specific_range_nm_per_t", "limit", "note"):
        assert col in frame.columns
    assert tuple(frame.columns) == CRUISE_COLUMNS
    assert frame.height == sum(len(v.engine_options) for v in demo.variants.values()) * 4
    assert CAUTION in err and CAUTION not in out
    # Exports at a stated precision: 0.01 NM/t, 0.1 kg/h.
    assert all(round(x, 2) == x for x in frame["specific_range_nm_per_t"].drop_nulls())


def test_cruise_table_ends_with_the_caution_and_says_what_the_columns_mean(capsys):
    status, out, err = run(capsys, "cruise", "--variant", "v88", "--weight", "42t")
    assert status == 0, err
    assert "Cruise" in out and "Opt" in out and "NM/t" in out
    assert "levels: 2000-east" in out and "common practice" in out
    assert out.rstrip().endswith(CAUTION)


def test_speeds_at_levels_and_step_climb_csv(capsys):
    status, out, err = run(capsys, "cruise", "--variant", "v88", "--weight", "42t", "--level", "FL330,FL370",
                           "--mach", "LRC", "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    assert tuple(frame.columns) == SPEED_COLUMNS and frame.height == 3 * 2
    assert (frame["mach"] == frame["lrc_mach"]).all() and (frame["lrc_mach"] > frame["mrc_mach"]).all()
    status, out, err = run(capsys, "cruise", "--variant", "v104", "--from-weight", "51.5t", "--to-weight", "36t",
                           "--levels", "4000", "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    assert tuple(frame.columns) == STEP_COLUMNS
    assert set(frame["flight_level"].to_list()) <= {290, 330, 370}
    assert frame.group_by("engine").agg(pl.col("fuel_kg").sum())["fuel_kg"].to_list() == pytest.approx([15_500.0] * 3,
                                                                                                       abs=0.5)


@pytest.mark.parametrize("argv, words", [
    (["--mach", "mrc"], "--mach mrc: the best-range speeds are at a level"),
    (["--mach", "best"], "cannot use 'best' for cruise answers"),
    (["--from-weight", "50t"], "--from-weight/--to-weight: give both"),
    (["--from-weight", "40t", "--to-weight", "45t"], "must be above the final one"),
    (["--weight", "40t", "--from-weight", "50t", "--to-weight", "40t"], "--weight: not with"),
    (["--levels", "3000"], "expected one of 1000, 2000, 4000"),
    (["--level", "FL0"], "--level"),
    (["--level", "FL350,,FL370"], "empty item"),
    (["--variant", "v88", "--level", "FL350", "--mach", "0.78", "--from-weight", "45t", "--to-weight", "40t"],
     "--level: not with"),
])
def test_user_errors_are_one_clear_message_and_exit_2(capsys, argv, words):
    status, out, err = run(capsys, "cruise", *argv)
    assert status == 2
    assert words in err and "Traceback" not in err and out == ""


def test_an_engine_without_fuel_data_says_so(capsys, tmp_path):
    from conftest import write_catalogue
    from specs import engine_spec, variant_spec

    write_catalogue(tmp_path / "nofuel.toml", [engine_spec()], [variant_spec()])
    status, out, err = run(capsys, "cruise", str(tmp_path / "nofuel.toml"), "--format", "csv")
    assert status == 0, err
    row = read_csv(out).row(0, named=True)
    assert row["max_altitude_ft"] is not None  # the ceiling still works
    assert row["cruise_fl"] is None and row["fuel_flow_kg_h"] is None and "no fuel data for e1" in row["note"]


def test_cruise_runs_as_a_module_without_a_traceback():
    done = subprocess.run([sys.executable, "-m", "variantcmp", "cruise", "--variant", "v70", "--level", "FL390",
                           "--mach", "mrc"], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert "MRC" in done.stdout and "Traceback" not in done.stderr


def test_turboprop_options_of_the_demo_fleet_end_to_end(capsys, demo):
    # The Tarvane turboprops with their Tavish options, through the command: every row has a
    # cruise level within the maximum altitude and the fuel flow there is the issue's PSFC x
    # D V / eta, PSFC = c0 sqrt(theta), written out here: ISA by ambiance (ICAO standard
    # atmosphere), the parabolic polar with the Korn/Lock wave drag (Malone & Mason 1995), the
    # propeller efficiency interpolated linearly in the catalogue's Mach table (numpy.interp).
    status, out, err = run(capsys, "cruise", "--variant", "t72,t78", "--weight", "90%mtow", "--isa=0,15",
                           "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    assert frame.height == 8 and set(frame["engine"]) == {"tavish-20", "tavish-24"}
    for row in frame.iter_rows(named=True):
        v, e = demo.variants[row["variant"]], demo.engines[row["engine"]]
        assert row["cruise_fl"] * 100 <= row["max_altitude_ft"] and row["fuel_flow_kg_h"] > 0
        air = Atmosphere.from_pressure(isa_pressure_pa(row["cruise_fl"] * 100 * 0.3048))
        temp_k, m = air.temperature[0] + row["isa_dev_c"], row["mach"]
        qs = 0.7 * air.pressure[0] * m * m * v.wing_area_m2
        cl = row["weight_kg"] * 9.80665 / qs
        cos = math.cos(math.radians(v.sweep_deg))
        m_crit = v.korn_factor / cos - v.thickness_ratio / cos**2 - cl / (10 * cos**3) - (0.1 / 80) ** (1 / 3)
        drag_n = qs * (v.cd0 + v.k * cl * cl + 20.0 * max(m - m_crit, 0.0) ** 4)
        eta = e.propeller_efficiency or np.interp(m, e.propeller_efficiency_mach, e.propeller_efficiency_table)
        speed_ms = m * math.sqrt(1.4 * 287.05287 * temp_k)
        flow_kg_h = e.psfc_kg_per_kwh / 3.6e6 * math.sqrt(temp_k / 288.15) * drag_n * speed_ms / eta * 3600.0
        assert row["fuel_flow_kg_h"] == pytest.approx(flow_kg_h, rel=1e-3)
        assert row["specific_range_nm_per_t"] == pytest.approx(speed_ms / flow_kg_h * 3.6 / 1.852 * 1000, rel=2e-3)
    # MRC and LRC at a level, as a table for people.
    status, out, err = run(capsys, "cruise", "--variant", "t72", "--weight", "21t", "--level", "FL200,FL240",
                           "--mach", "lrc")
    assert status == 0, err
    assert out.count("tavish-") == 4 and "nan" not in out and "inf" not in out
    assert out.rstrip().endswith(CAUTION)
