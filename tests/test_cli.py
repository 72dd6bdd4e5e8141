"""The command line as a user runs it: options, output formats, errors and exit codes."""

import contextlib
import io
import json
import re
import shlex
import subprocess
import sys
import types
from pathlib import Path

import numpy as np
import polars as pl
import pytest

from variantcmp.caution import CAUTION
from variantcmp.catalogue import demo_catalogue_path
from variantcmp.cli import main

REQUIRED_COLUMNS = [
    "variant", "engine", "weight_kg", "isa_dev_c", "mach", "climb_fpm",
    "thrust_ceiling_ft", "buffet_ceiling_ft", "max_altitude_ft", "limit",
]
LIMIT_COLUMNS = [
    "thrust_ceiling_ft", "buffet_ceiling_ft", "stall_ceiling_ft",
    "certified_ceiling_ft", "cabin_ceiling_ft",
]
LIMIT_NAMES = {"thrust", "buffet", "stall", "certified", "cabin", "none"}


def pairs(catalogue):
    """Number of variant x engine option combinations in a catalogue."""
    return sum(len(v.engine_options) for v in catalogue.variants.values())


def run(capsys, *argv):
    status = main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


def read_csv(text):
    return pl.read_csv(io.StringIO(text), infer_schema_length=None)


def squash(text):
    return " ".join(text.split())


# --- ceilings: rows and columns ----------------------------------------------------------

def test_isa_list_with_equals_gives_three_rows_per_case(capsys, demo):
    status, out, err = run(capsys, "ceilings", "--weight", "100%mtow", "--isa=-10,0,15", "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    assert frame.height == pairs(demo) * 3
    per_case = frame.group_by("variant", "engine", "weight_kg").agg(pl.col("isa_dev_c").sort())
    assert per_case.height == pairs(demo)
    assert all(devs.to_list() == [-10.0, 0.0, 15.0] for devs in per_case["isa_dev_c"])


@pytest.mark.parametrize("isa_args", [["--isa", "-10,0,15"], ["--isa", "ISA-10,ISA,ISA+15"],
                                      ["--isa", "-10", "--isa", "0,15"]])
def test_negative_isa_without_equals(capsys, isa_args):
    # argparse alone would take "-10,0,15" for an option; the CLI must not.
    status, expected, _ = run(capsys, "ceilings", "--isa=-10,0,15", "--format", "csv")
    assert status == 0
    status, out, err = run(capsys, "ceilings", *isa_args, "--format", "csv")
    assert status == 0, err
    assert out == expected


def test_weights_rows_and_unit_conversion(capsys, demo):
    variant = next(iter(demo.variants.values()))
    status, out, err = run(capsys, "ceilings", "--variant", variant.id, "--weight",
                           f"{variant.mtow_kg * 0.9:.0f},90%mtow,140000lb", "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    assert frame.height == 3 * len(variant.engine_options)
    weights = sorted(set(frame["weight_kg"].to_list()))
    # 140,000 lb x 0.45359237 kg/lb (exact pound definition, 1959) = 63,502.93 kg
    assert any(abs(w - 140000 * 0.45359237) <= 0.05 for w in weights)  # exports keep 0.1 kg
    # 90 %MTOW typed as a share or in kg (rounded to 1 kg) gives the same ceilings
    near = frame.filter((pl.col("weight_kg") - variant.mtow_kg * 0.9).abs() < 1.0)
    assert near.height == 2 * len(variant.engine_options)
    spread = near.group_by("engine").agg(
        (pl.col("max_altitude_ft").max() - pl.col("max_altitude_ft").min()).alias("spread"))
    assert (spread["spread"].fill_null(0.0) < 5.0).all()


def test_csv_is_data_only_with_required_columns(capsys):
    status, out, err = run(capsys, "ceilings", "--weight", "95%mtow", "--isa=0,20", "--format", "csv")
    assert status == 0, err
    header = out.splitlines()[0].split(",")
    for column in REQUIRED_COLUMNS + LIMIT_COLUMNS + ["flight_level"]:
        assert column in header
    frame = read_csv(out)
    assert set(frame["limit"].drop_nulls().to_list()) <= LIMIT_NAMES
    assert "Caution" not in out and squash(CAUTION) in squash(err)
    assert not re.search(r"\b(nan|NaN|inf|None)\b", out)


def test_max_altitude_never_above_any_limit(capsys):
    status, out, _ = run(capsys, "ceilings", "--weight", "80%mtow,100%mtow", "--isa=-10,0,25",
                         "--climb", "absolute,service,cruise", "--format", "csv")
    assert status == 0
    frame = read_csv(out)
    for column in LIMIT_COLUMNS:
        both = frame.filter(pl.col("max_altitude_ft").is_not_null() & pl.col(column).is_not_null())
        assert (both["max_altitude_ft"] <= both[column] + 1e-6).all(), column


def test_unavailable_values_are_empty_csv_fields_and_json_nulls(capsys):
    # At twice MTOW on an ISA+60 day no transport can hold 5,000 ft/min: no altitude exists.
    args = ["ceilings", "--weight", "200%mtow", "--isa=60", "--climb", "5000"]
    status, out, err = run(capsys, *args, "--format", "csv")
    assert status == 0, err
    header = out.splitlines()[0].split(",")
    col = header.index("max_altitude_ft")
    rows = [line.split(",") for line in out.splitlines()[1:]]
    assert rows and all(row[col] == "" for row in rows)
    frame = read_csv(out)
    assert frame["max_altitude_ft"].null_count() == frame.height
    assert frame["note"].drop_nulls().str.len_chars().min() > 0  # each row says why

    status, out, err = run(capsys, *args, "--format", "json")
    assert status == 0, err
    records = json.loads(out)
    assert len(records) == frame.height
    assert all(r["max_altitude_ft"] is None and r["flight_level"] is None for r in records)
    assert squash(CAUTION) in squash(err)


def test_json_matches_csv(capsys):
    _, csv_out, _ = run(capsys, "ceilings", "--isa=0,15", "--format", "csv")
    _, json_out, _ = run(capsys, "ceilings", "--isa=0,15", "--format", "json")
    records = json.loads(json_out)
    frame = read_csv(csv_out)
    assert isinstance(records, list) and len(records) == frame.height
    assert set(REQUIRED_COLUMNS) <= set(records[0])
    assert [r["max_altitude_ft"] for r in records] == pytest.approx(
        frame["max_altitude_ft"].to_list(), abs=1e-6)


def test_table_shows_flight_levels_limits_and_caution(capsys):
    status, out, err = run(capsys, "ceilings", "--weight", "100%mtow", "--isa=0,15")
    assert status == 0, err
    assert re.search(r"FL\d{3}", out)
    assert re.search(r"\b(thrust|buffet|stall|certified|cabin)\b", out)
    assert squash(CAUTION) in squash(out)


@pytest.mark.parametrize("width", [80, 100, 140])
def test_narrow_terminal_never_cuts_numbers(capsys, monkeypatch, width):
    # Rich shortens cells that do not fit ("38,…"); a cut altitude would mislead, so the CLI
    # hides whole optional columns instead and keeps every shown number whole.
    monkeypatch.setenv("COLUMNS", str(width))  # piped output takes the width COLUMNS says
    args = ["ceilings", "--weight", "100%mtow", "--isa=0,15", "--target", "FL370"]
    status, out, err = run(capsys, *args)
    assert status == 0, err
    assert "…" not in out
    assert max(len(line) for line in out.splitlines() if not line.startswith(("Caution", "—", "speed", "Hidden"))) <= width
    monkeypatch.undo()
    _, csv_out, _ = run(capsys, *args, "--format", "csv")
    frame = read_csv(csv_out)
    for value in frame["max_altitude_ft"].drop_nulls():
        assert f"FL{int(value // 100):03d}" in out
    for value in frame["thrust_ceiling_ft"].drop_nulls():
        assert f"{int(value):,d}" in out


def test_target_adds_margin_columns(capsys):
    status, out, err = run(capsys, "ceilings", "--target", "FL350", "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    assert {"target_ft", "margin_ft", "reaches_target"} <= set(frame.columns)
    assert (frame["target_ft"] == 35000.0).all()


def test_variant_and_engine_selection(capsys, demo):
    variant = next(iter(demo.variants.values()))
    engine = variant.engine_options[0]
    status, out, err = run(capsys, "ceilings", "--variant", variant.id, "--engine", engine, "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    assert frame["variant"].unique().to_list() == [variant.id]
    assert frame["engine"].unique().to_list() == [engine]


def test_positional_catalogue_and_bundled_name(capsys):
    path = str(demo_catalogue_path())
    status, by_path, _ = run(capsys, "ceilings", path, "--format", "csv")
    assert status == 0
    status, by_default, _ = run(capsys, "ceilings", "--format", "csv")
    status2, by_name, _ = run(capsys, "ceilings", demo_catalogue_path().stem, "--format", "csv")
    assert status == status2 == 0
    assert by_path == by_default == by_name


def _pressure_altitude_ft(pressure_pa):
    """Pressure altitude by the reference library ambiance (U.S. Standard Atmosphere 1976).

    ambiance works in geometric altitude; pressure altitude is geopotential:
    H = r0 h / (r0 + h), r0 = 6,356,766 m (U.S. Standard Atmosphere 1976, eq. 18).
    """
    from ambiance import Atmosphere

    r0 = 6_356_766.0
    h = np.linspace(-1_000.0, 30_000.0, 310_001)  # geometric m, 0.1 m steps
    p = Atmosphere(h).pressure
    geometric = np.interp(-np.asarray(pressure_pa), -p, h)
    return r0 * geometric / (r0 + geometric) / 0.3048


def test_closed_form_limits_match_a_reference_atmosphere(capsys, demo):
    # End to end through the CLI: buffet, stall and cabin ceilings are closed forms in pressure.
    # Lift with q = (gamma/2) p M^2 (Anderson, Introduction to Flight, eq. 4.83), gamma = 1.4:
    #   buffet: n m g = 0.7 p M^2 S CL_buffet(M) at n = 1.3 (common practice)
    #   stall:    m g = 0.7 p M^2 S cl_max
    #   cabin:    p = p_ISA(cabin altitude) - max differential
    g0 = 9.80665  # standard gravity (ISO 80000-3)
    status, out, err = run(capsys, "ceilings", "--weight", "100%mtow", "--isa=0", "--format", "csv")
    assert status == 0, err
    frame = read_csv(out)
    checked = 0
    for row in frame.iter_rows(named=True):
        v = demo.variants[row["variant"]]
        m, mach, q_per_p = row["weight_kg"], row["mach"], 0.7 * row["mach"] ** 2
        stall_p = m * g0 / (q_per_p * v.wing_area_m2 * v.cl_max)
        assert row["stall_ceiling_ft"] == pytest.approx(_pressure_altitude_ft(stall_p), abs=2.0)
        if v.has_buffet:
            cl_buffet = np.interp(mach, v.buffet_mach, v.buffet_cl)
            buffet_p = 1.3 * m * g0 / (q_per_p * v.wing_area_m2 * cl_buffet)
            assert row["buffet_ceiling_ft"] == pytest.approx(_pressure_altitude_ft(buffet_p), abs=2.0)
        if v.has_cabin:
            from ambiance import Atmosphere

            r0, cabin_m = 6_356_766.0, v.cabin_altitude_ft * 0.3048
            cabin_p = Atmosphere(r0 * cabin_m / (r0 - cabin_m)).pressure[0] - v.max_cabin_dp_kpa * 1000
            assert row["cabin_ceiling_ft"] == pytest.approx(_pressure_altitude_ft(cabin_p), abs=2.0)
        checked += 1
    assert checked == pairs(demo)


# --- user errors: one message, exit 2, no traceback ---------------------------------------------

@pytest.mark.parametrize(
    "args, fragment",
    [
        (["--weight", "heavy"], "--weight: cannot use 'heavy'"),
        (["--weight", "62,000"], "thousands separator"),
        (["--weight", "-5t"], "--weight"),
        (["--isa", "hot"], "--isa: cannot use 'hot'"),
        (["--mach", "1.2"], "--mach: cannot use '1.2'"),
        (["--mach", "0"], "--mach"),
        (["--climb", "-100"], "--climb: cannot use '-100'"),
        (["--climb=-100"], "0 ft/min or more"),
        (["--g-margin", "0.5"], "--g-margin"),
        (["--target", "FL9999"], "--target"),
        (["--variant", "no-such-variant"], "no-such-variant"),
        (["--engine", "no-such-engine"], "no-such-engine"),
        (["--format", "xml"], "--format"),
        (["--isa"], "--isa"),
        (["--bogus"], "--bogus"),
    ],
)
def test_bad_ceilings_options_exit_2(capsys, args, fragment):
    status, out, err = run(capsys, "ceilings", *args)
    assert status == 2
    assert fragment in err
    assert "Traceback" not in err
    assert out == ""


def test_missing_catalogue_exits_2(capsys, tmp_path):
    missing = tmp_path / "nowhere.toml"
    status, out, err = run(capsys, "ceilings", str(missing))
    assert status == 2
    assert str(missing) in err and "Traceback" not in err and out == ""


def test_broken_catalogue_lists_every_problem(capsys, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text('[catalogue]\ntitel = "x"\n\n[[engine]]\nid = "e1"\nmodel = "rocket"\n', encoding="utf-8")
    for command in ("check", "ceilings"):
        status, out, err = run(capsys, command, str(bad))
        assert status == 2
        lines = err.strip().splitlines()
        assert len(lines) >= 3  # unknown key, missing title, bad model, no variant ...
        assert all(line.startswith(f"{bad}: ") for line in lines)
        assert "Traceback" not in err and out == ""


def test_binary_file_as_catalogue(capsys, tmp_path):
    blob = tmp_path / "blob.toml"
    blob.write_bytes(b"\x00\x01\x02\xff" * 64)
    status, _, err = run(capsys, "check", str(blob))
    assert status == 2 and str(blob) in err


def test_unknown_command_suggests(capsys):
    status, _, err = run(capsys, "ceiling", "--isa=0")
    assert status == 2
    assert "did you mean 'ceilings'" in err


# --- check, help, version ------------------------------------------------------------------

def test_check_demo(capsys, demo):
    status, out, err = run(capsys, "check", str(demo_catalogue_path()))
    assert status == 0, err
    assert "OK" in out
    for variant_id in demo.variants:
        assert variant_id in out
    assert squash(CAUTION) in squash(out)


def test_help_and_version(capsys):
    status, out, _ = run(capsys, "--help")
    assert status == 0 and "ceilings" in out and "check" in out
    status, out, _ = run(capsys, "ceilings", "--help")
    assert status == 0 and "--isa" in out and "--weight" in out
    status, out, _ = run(capsys, "--version")
    assert status == 0 and re.search(r"\d+\.\d+", out)


# --- the app launcher ------------------------------------------------------------------------

@pytest.fixture
def fake_app(monkeypatch):
    calls = []
    module = types.ModuleType("variantcmp.app")
    module.run_app = lambda path: calls.append(path) or 0
    monkeypatch.setitem(sys.modules, "variantcmp.app", module)
    import variantcmp.cli as cli

    monkeypatch.setattr(cli, "stdout_is_terminal", lambda: True)
    return calls


def test_the_app_is_not_started_without_a_terminal(capsys, monkeypatch):
    # `variantcmp > file` must not write a full-screen app's escape codes into the file and hang.
    module = types.ModuleType("variantcmp.app")
    module.run_app = lambda path: pytest.fail("the app must not start without a terminal")
    monkeypatch.setitem(sys.modules, "variantcmp.app", module)
    status, out, err = run(capsys)
    assert status == 2 and out == ""
    assert "needs a terminal" in err and "variantcmp ceilings" in err and len(err.strip().splitlines()) == 1


def test_no_command_opens_app_on_demo(capsys, fake_app):
    assert main([]) == 0
    assert [str(p) for p in fake_app] == [str(demo_catalogue_path())]


def test_catalogue_path_opens_app(capsys, fake_app):
    path = str(demo_catalogue_path())
    assert main([path]) == 0
    assert [str(p) for p in fake_app] == [path]


def test_app_refuses_broken_catalogue_before_starting(capsys, fake_app, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("not toml at all = = =\n", encoding="utf-8")
    status, _, err = run(capsys, str(bad))
    assert status == 2 and str(bad) in err and "line 1" in err
    assert fake_app == []


# --- as a separate process --------------------------------------------------------------------

def test_python_dash_m_runs_and_fails_cleanly():
    ok = subprocess.run([sys.executable, "-m", "variantcmp", "ceilings", "--isa", "-10,0,15",
                         "--format", "csv"], capture_output=True, text=True, timeout=300)
    assert ok.returncode == 0, ok.stderr
    assert ok.stdout.splitlines()[0].startswith("variant,engine,")
    bad = subprocess.run([sys.executable, "-m", "variantcmp", "ceilings", "--mach", "1.2"],
                         capture_output=True, text=True, timeout=300)
    assert bad.returncode == 2
    assert "--mach" in bad.stderr and "Traceback" not in bad.stderr


# --- the README shows real runs ----------------------------------------------------------------

README = Path(__file__).resolve().parents[1] / "README.md"
RUN_BLOCK = re.compile(
    r"(<!-- ceilings-run:start[^\n]*-->\n```text\n\$ variantcmp (?P<args>[^\n]*)\n)(?P<out>.*?)"
    r"(```\n<!-- ceilings-run:end -->)", re.S)


def _fresh_output(args: str) -> str:
    """Output of `variantcmp ARGS` as the README shows it (trailing blanks stripped)."""
    import os

    buffer = io.StringIO()
    saved = os.environ.get("COLUMNS")
    os.environ["COLUMNS"] = "160"  # as piped output without COLUMNS (another test may leave it set)
    try:
        with contextlib.redirect_stdout(buffer):
            status = main(shlex.split(args))
    finally:
        if saved is None:
            os.environ.pop("COLUMNS", None)
        else:
            os.environ["COLUMNS"] = saved
    assert status == 0, args
    return "".join(line.rstrip() + "\n" for line in buffer.getvalue().splitlines())


@pytest.mark.skipif(not README.is_file(), reason="README.md is not next to the tests")
def test_readme_runs_are_real_and_current():
    # The README's example output must be what the program prints today, never typed by hand.
    # Regenerate with: python tests/test_cli.py --update-readme
    blocks = list(RUN_BLOCK.finditer(README.read_text(encoding="utf-8")))
    assert blocks, "README.md has no ceilings-run block"
    for block in blocks:
        assert block["out"] == _fresh_output(block["args"]), (
            f"README run of 'variantcmp {block['args']}' is out of date: "
            "python tests/test_cli.py --update-readme")


@pytest.mark.skipif(not README.is_file(), reason="README.md is not next to the tests")
def test_readme_documents_every_catalogue_key():
    import dataclasses

    from variantcmp.catalogue import Engine, Variant

    text = README.read_text(encoding="utf-8")
    for cls in (Engine, Variant):
        for field in dataclasses.fields(cls):
            assert f"`{field.name}`" in text, f"README's catalogue format lacks {cls.__name__}.{field.name}"


def _update_readme() -> None:
    text = README.read_text(encoding="utf-8")
    text = RUN_BLOCK.sub(lambda m: m.group(1) + _fresh_output(m["args"]) + m.group(4), text)
    README.write_text(text, encoding="utf-8")


if __name__ == "__main__":
    if sys.argv[1:] == ["--update-readme"]:
        _update_readme()
    else:
        sys.exit("usage: python tests/test_cli.py --update-readme")


def test_empty_ids_and_empty_catalogue_are_refused(capsys):
    assert main(["ceilings", "--variant", ""]) == 2
    assert "empty id list" in capsys.readouterr().err
    assert main(["ceilings", ""]) == 2
    assert "catalogue argument is empty" in capsys.readouterr().err


# --- what a new user tripped over (each fails on the code before its fix) ---------------------

def test_a_bare_small_weight_is_refused_with_a_hint(capsys):
    # A bare number is kg; 70 kg is no aircraft weight: the user meant 70 t or 70 %MTOW.
    status, out, err = run(capsys, "ceilings", "--weight", "70")
    assert status == 2 and out == ""
    assert "did you mean 70t or 70%mtow?" in err
    assert run(capsys, "ceilings", "--weight", "45000", "--format", "csv")[0] == 0


def test_sketches_fall_back_to_ascii_on_a_dumb_terminal(capsys, monkeypatch):
    monkeypatch.setenv("TERM", "dumb")
    status, out, err = run(capsys, "envelope", "--variant", "v88", "--engine", "ossel-78", "--size", "80x22")
    assert status == 0, err
    assert out.isascii() or set(out) - set(map(chr, range(128))) <= {"—", "±"}
    assert not any(0x2800 <= ord(ch) <= 0x28FF for ch in out)  # no braille dots


def test_piped_check_is_as_wide_as_columns_with_no_trailing_spaces(capsys, monkeypatch):
    for width in ("100", None):
        if width:
            monkeypatch.setenv("COLUMNS", width)
        else:
            monkeypatch.delenv("COLUMNS", raising=False)
        status, out, err = run(capsys, "check")
        assert status == 0, err
        lines = out.splitlines()
        assert not any(line != line.rstrip() for line in lines)
        limit = int(width) if width else 160
        assert max(len(line) for line in lines if not line.startswith("Caution")) <= limit


@pytest.mark.parametrize("args, fragment", [
    (["--wieght", "70t"], "unknown option '--wieght' (did you mean '--weight'?); see 'variantcmp ceilings --help'"),
    (["--weight", "70t", "80t"], "--weight takes one value, a comma list: --weight 70t,80t"),
    (["--mach", "0.7", "--mach", "0.8"], "--mach: given twice ('0.7', then '0.8')"),
    (["--variant", "v8"], "did you mean 'v88'?"),
    (["--format", "cvs"], "did you mean 'csv'?"),
])
def test_command_line_mistakes_get_a_hint(capsys, args, fragment):
    status, out, err = run(capsys, "ceilings", *args)
    assert status == 2 and out == "" and "Traceback" not in err
    assert fragment in err


def test_ids_and_keywords_match_whatever_their_case(capsys):
    status, out, err = run(capsys, "ceilings", "--variant", "V88", "--engine", "OSSEL-78", "--climb", "Service",
                           "--mach", "BEST", "--format", "CSV")
    assert status == 0, err
    frame = read_csv(out)
    assert set(frame["variant"]) == {"v88"} and set(frame["engine"]) == {"ossel-78"}


def test_an_unknown_catalogue_name_lists_the_bundled_fleets(capsys):
    status, out, err = run(capsys, "ceilings", "fernholt")
    assert status == 2 and out == ""
    assert "did you mean 'fernholt-regional'?" in err and "tallon-fells-survey" in err


def test_every_option_value_is_checked(capsys):
    # Fuzzing found --OPTION=-- giving a traceback (argparse passes on an empty list) or being
    # silently ignored: every value option of every command gets a usage error instead.
    from variantcmp.cli import build_parser

    parser = build_parser()
    subs = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction").choices
    for name, sub in subs.items():
        for action in sub._actions:
            if not action.option_strings or action.nargs is not None or action.option_strings[0] == "--help":
                continue
            option = action.option_strings[-1]
            status, out, err = run(capsys, name, f"{option}=--")
            assert status == 2 and "Traceback" not in err, (name, option, err)
            assert option in err, (name, option, err)


@pytest.mark.parametrize("target", ["FL-10", "-2000ft", "-1"])
def test_targets_below_the_floor_are_refused(capsys, target):
    status, out, err = run(capsys, "ceilings", f"--target={target}")
    assert status == 2 and "FL000" in err and out == ""


def test_long_values_are_cut_in_messages(capsys):
    status, _, err = run(capsys, "ceilings", "--isa", "x" * 1000)
    assert status == 2 and len(err) < 300 and "..." in err


def test_exports_keep_a_stated_precision(capsys):
    # README: ft to 0.01, kg to 0.1, deg C to 0.01, Mach to 0.0001.
    status, out, err = run(capsys, "ceilings", "--weight", "140000lb,91.7%mtow", "--isa=-7.123", "--mach", "best",
                           "--format", "csv")
    assert status == 0, err
    header, *rows = out.splitlines()
    names = header.split(",")
    decimals = {"max_altitude_ft": 2, "thrust_ceiling_ft": 2, "weight_kg": 1, "isa_dev_c": 2, "mach": 4}
    for row in rows:
        for name, value in zip(names, row.split(",")):
            if name in decimals and "." in value:
                assert len(value.split(".")[1]) <= decimals[name], (name, value)
    frame = read_csv(out)
    assert frame["weight_kg"].round(1).to_list() == frame["weight_kg"].to_list()


def test_help_says_what_best_speed_limit_columns_are(capsys):
    status, out, _ = run(capsys, "ceilings", "--help")
    assert status == 0 and "each limit's own best over speed" in squash(out)


def test_a_large_fleet_table_prints_about_as_fast_as_its_csv(capsys, tmp_path):
    # Not a timed assertion: the table is laid out once, so it must not need more than a few
    # renders of work. Checks the layout stays right at thousands of rows.
    import tomllib

    import tomli_w

    doc = tomllib.loads(demo_catalogue_path().read_text())
    base = doc["variant"][1]
    doc["variant"] = [dict(base, id=f"x{i}", label=f"x{i}") for i in range(60)]
    path = tmp_path / "many.toml"
    path.write_text(tomli_w.dumps(doc))
    status, out, err = run(capsys, "ceilings", str(path), "--isa=0,15,30")
    assert status == 0, err
    rows = [line for line in out.splitlines() if line.startswith("x")]
    assert len(rows) == 60 * len(base["engine_options"]) * 3
