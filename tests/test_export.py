"""Exports: a stated precision, and a file written whole or not at all."""

import signal
import subprocess
import sys
import textwrap

import polars as pl
import pytest

from variantcmp.export import for_export, write_table


def test_numbers_keep_the_stated_precision():
    frame = pl.DataFrame({"max_altitude_ft": [38687.123456], "weight_kg": [63502.9318], "isa_dev_c": [-7.1234],
                          "mach": [0.771234567], "note": ["x"], "other": [1.23456789]})
    row = for_export(frame).row(0, named=True)
    assert row == {"max_altitude_ft": 38687.12, "weight_kg": 63502.9, "isa_dev_c": -7.12, "mach": 0.7712,
                   "note": "x", "other": 1.234568}
    assert for_export(pl.DataFrame({"a_ft": [float("nan")]}))["a_ft"].to_list() == [None]


@pytest.mark.parametrize("suffix", [".csv", ".json", ".parquet"])
def test_each_format_replaces_the_file_whole(tmp_path, suffix):
    path = tmp_path / f"out{suffix}"
    write_table(pl.DataFrame({"a_ft": [1.0, 2.0]}), path)
    write_table(pl.DataFrame({"a_ft": [3.0]}), path)
    back = {".csv": pl.read_csv, ".json": pl.read_json, ".parquet": pl.read_parquet}[suffix](path)
    assert back["a_ft"].to_list() == [3.0]
    assert [p.name for p in tmp_path.iterdir()] == [path.name]  # no temporary file left


@pytest.mark.parametrize("suffix", [".csv", ".json", ".parquet"])
def test_an_interrupted_export_leaves_the_old_file(tmp_path, suffix):
    # Fuzzing killed an export mid-write and found 32 of 130 MB of CSV, the old file gone. Kill a
    # large export here once it has started writing: the previous file must still be whole.
    path = tmp_path / f"out{suffix}"
    write_table(pl.DataFrame({"a_ft": [1.0]}), path)
    before = path.read_bytes()
    script = textwrap.dedent("""
        import numpy as np, polars as pl, sys
        from variantcmp.export import write_table
        frame = pl.DataFrame({"a_ft": np.random.default_rng(1).random(30_000_000)})
        print("writing", flush=True)
        write_table(frame, sys.argv[1])
    """)
    proc = subprocess.Popen([sys.executable, "-c", script, str(path)], stdout=subprocess.PIPE, text=True)
    assert proc.stdout.readline().strip() == "writing"
    for _ in range(200):  # until the temporary file has grown
        parts = [p for p in tmp_path.iterdir() if p.name.endswith(".part")]
        if parts and parts[0].stat().st_size > 0:
            break
        subprocess.run(["sleep", "0.02"])
    proc.send_signal(signal.SIGKILL)
    proc.wait()
    assert path.read_bytes() == before
