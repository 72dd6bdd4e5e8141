"""Same answers: the ceilings of every bundled fleet against answers stored under tests/snapshots/.

The stored CSVs hold ``ceilings_table`` rows for every bundled fleet at 70, 85 and 100 %MTOW,
ISA -10, 0, +15 and +30, the cruise Mach and the best speed, climbing 0 ft/min (absolute) and
300 ft/min (cruise). They are the answers of the solver as it was before a restructure, kept so
that a change meant to keep the answers can show it does. Rows are matched by (variant, engine,
weight_kg, isa_dev_c, speed, climb_fpm) and values by column name: every stored row must still be
produced with the same values (altitudes within FIXED_TOL_FT at a fixed Mach, BEST_TOL_FT at the
best speed; the same limit and note text), while rows and columns the table has gained since are
allowed. The best speed's Mach is not compared: where a flat limit (certified, cabin) binds, many
speeds give the same altitude.

Regenerate deliberately, after a change that is meant to move answers (and say why in the commit):

    python tests/test_snapshots.py --update
"""

from __future__ import annotations

import sys
from pathlib import Path

import polars as pl
import pytest

from variantcmp.catalogue import bundled_fleet_dir, load_catalogue
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import WeightSpec

SNAPSHOTS = Path(__file__).parent / "snapshots"
WEIGHTS_PCT_MTOW = (70.0, 85.0, 100.0)
ISA_DEVS_C = (-10.0, 0.0, 15.0, 30.0)
SPEEDS = ("cruise", "best")
CLIMBS_FPM = (0.0, 300.0)  # absolute and cruise ceilings
KEY = ("variant", "engine", "weight_kg", "isa_dev_c", "speed", "climb_fpm")
FIXED_TOL_FT = 0.05  # fixed Mach: the roots are solved to about 0.01 ft
BEST_TOL_FT = 0.5  # best speed: a maximisation over speed, flat at its optimum
EXACT = ("limit", "note", "over_mtow", "below_empty_weight")  # compared as they are


def _fleets() -> list[Path]:
    return sorted(bundled_fleet_dir().glob("*.toml"))


def current_answers(fleet: Path) -> pl.DataFrame:
    """The ceilings table of a fleet over the snapshot grid, one frame with a ``speed`` column."""
    catalogue = load_catalogue(fleet)
    frames = []
    for speed in SPEEDS:
        conditions = Conditions(weights=tuple(WeightSpec(w, "%mtow") for w in WEIGHTS_PCT_MTOW),
                                isa_devs_c=ISA_DEVS_C, mach=speed, climb_fpm=CLIMBS_FPM)
        frames.append(ceilings_table(catalogue, conditions).with_columns(speed=pl.lit(speed)))
    return pl.concat(frames, how="diagonal_relaxed")


def _keyed(frame: pl.DataFrame) -> dict[tuple, dict]:
    rows = {}
    for row in frame.iter_rows(named=True):
        key = tuple(round(row[k], 6) if isinstance(row[k], float) else row[k] for k in KEY)
        assert key not in rows, f"two rows for {key}"
        rows[key] = row
    return rows


def _mismatches(stored: dict, fresh: dict, speed: str) -> list[str]:
    """What differs between a stored row and a fresh one (empty: they match)."""
    tol = FIXED_TOL_FT if speed != "best" else BEST_TOL_FT
    out = []
    for col, want in stored.items():
        if col in KEY or (col == "mach" and speed == "best"):
            continue
        if col not in fresh:
            out.append(f"{col}: column gone")
            continue
        got = fresh[col]
        if want is None or got is None or col in EXACT or isinstance(want, str):
            if want != got:
                out.append(f"{col}: {want!r} -> {got!r}")
        elif col == "flight_level":
            # Derived from the maximum altitude: may tip over only where that lies within the
            # tolerance of a hundred-ft boundary.
            alt = stored["max_altitude_ft"]
            if got != want and not (alt is not None and abs(alt - 100.0 * max(got, want)) <= tol):
                out.append(f"{col}: {want} -> {got}")
        elif col.endswith("_ft"):
            if abs(got - want) > tol:
                out.append(f"{col}: {want!r} -> {got!r} ({got - want:+.3f} ft)")
        elif abs(got - want) > 1e-9 * max(1.0, abs(want)):
            out.append(f"{col}: {want!r} -> {got!r}")
    return out


@pytest.mark.parametrize("fleet", _fleets(), ids=lambda p: p.stem)
def test_every_stored_answer_is_still_given(fleet):
    # Self-consistency over time, no external source: see the module docstring.
    path = SNAPSHOTS / f"{fleet.stem}.csv"
    assert path.is_file(), f"no snapshot for {fleet.name}: python tests/test_snapshots.py --update"
    stored = _keyed(pl.read_csv(path, infer_schema_length=None))
    fresh = _keyed(current_answers(fleet))
    problems = []
    for key, row in stored.items():
        if key not in fresh:
            problems.append(f"{key}: row no longer produced")
            continue
        problems += [f"{key}: {m}" for m in _mismatches(row, fresh[key], key[KEY.index("speed")])]
    assert not problems, f"{len(problems)} differences from {path.name}:\n" + "\n".join(problems[:40])


def test_the_comparison_can_fail():
    # The comparison itself: a moved altitude, a changed note and a lost row are each caught.
    row = {"variant": "a", "engine": "e", "weight_kg": 1.0, "isa_dev_c": 0.0, "speed": "cruise", "climb_fpm": 0.0,
           "max_altitude_ft": 35_000.0, "flight_level": 350, "limit": "thrust", "note": "", "mach": 0.78}
    assert _mismatches(row, dict(row), "cruise") == []
    assert _mismatches(row, {**row, "max_altitude_ft": 35_000.06}, "cruise")
    assert not _mismatches(row, {**row, "max_altitude_ft": 35_000.4}, "best")
    assert _mismatches(row, {**row, "note": "cannot climb"}, "best")
    assert _mismatches(row, {**row, "limit": None}, "best")
    assert _mismatches(row, {k: v for k, v in row.items() if k != "limit"}, "cruise")
    assert not _mismatches(row, {**row, "extra_column": 1.0}, "cruise")


def update() -> None:
    """Write the snapshot of every bundled fleet from the code as it is now."""
    SNAPSHOTS.mkdir(exist_ok=True)
    for fleet in _fleets():
        frame = current_answers(fleet)
        frame.select(list(KEY) + [c for c in frame.columns if c not in KEY]).write_csv(SNAPSHOTS / f"{fleet.stem}.csv")
        print(f"wrote {SNAPSHOTS.name}/{fleet.stem}.csv ({frame.height} rows)")


if __name__ == "__main__":
    if sys.argv[1:] == ["--update"]:
        update()
    else:
        sys.exit("usage: python tests/test_snapshots.py --update")
