"""Character drawings: sizes, axis labels, legend, marked points, ASCII fallback, and the commands."""

import re

import numpy as np
import pytest

from variantcmp.caution import CAUTION
from variantcmp.catalogue import demo_catalogue_path, load_catalogue
from variantcmp.cli import main
from variantcmp.envelope import EnvelopeCase, Sweep, compute_envelopes, sweep
from variantcmp.sketch import (
    MARKED_MARK, SERIES_STYLES, TOP_MARK, draw_envelope, draw_sweep, terminal_wants_ascii, terminal_wants_monochrome,
)
from variantcmp.table import Conditions

SIZES = [(80, 24), (120, 40), (200, 60)]


@pytest.fixture(scope="module")
def fleet():
    return load_catalogue(demo_catalogue_path())


@pytest.fixture(scope="module")
def one(fleet):
    return compute_envelopes(fleet, [EnvelopeCase("v88", "ossel-78", 45_200.0)])


@pytest.fixture(scope="module")
def three(fleet):
    return compute_envelopes(fleet, [EnvelopeCase("v88", "ossel-78", 45_200.0), EnvelopeCase("v88", "ossel-86", 40_000.0),
                                     EnvelopeCase("v88", "brannick-84t", 45_200.0, 20.0)])


def fl_rows(lines):
    """Row index -> flight level of the y-axis tick labels."""
    return {i: int(m.group(1)) for i, line in enumerate(lines) if (m := re.match(r"\s*FL(\d{3})[┤+]", line))}


def row_of(lines, char):
    hits = [i for i, line in enumerate(lines) if char in line[6:]]
    return hits[0] if hits else None


@pytest.mark.parametrize("size", SIZES)
@pytest.mark.parametrize("speed, name", [("mach", "Mach"), ("tas", "TAS kt"), ("cas", "CAS kt")])
def test_envelope_drawing_has_axes_legend_and_marks(one, size, speed, name):
    drawing = draw_envelope(one, *size, speed=speed)
    lines = drawing.lines
    assert len(lines) == size[1] and all(len(line) == size[0] for line in lines)
    ticks = fl_rows(lines)
    assert len(ticks) >= 3
    axis_row = next(i for i, line in enumerate(lines) if "└" in line)
    assert lines[axis_row + 1].rstrip().endswith(name)
    assert re.search(r"\d", lines[axis_row + 1])  # tick values under the axis
    text = "\n".join(lines)
    for label in ("stall", "buffet onset at 1.3 g", "buffet onset at 1.0 g", "thrust", "MMO", "VMO", "M0.77 line"):
        assert label in text
    top = one.summary.row(0, named=True)
    # The top mark sits on the plot row of the top's altitude (interpolated from the FL tick rows).
    rows, levels = zip(*sorted(ticks.items()))
    slope, offset = np.polyfit(levels, rows, 1)  # the FL scale is linear: extrapolate beyond the ticks
    expected = slope * top["top_ft"] / 100.0 + offset
    assert abs(row_of(lines, TOP_MARK) - expected) <= 1.0
    assert row_of(lines, MARKED_MARK) is not None
    assert f"FL{int(top['top_ft'] // 100):03d}" in text


@pytest.mark.parametrize("size", SIZES)
def test_ascii_fallback_is_plain_ascii(one, three, fleet, size):
    for drawing in (draw_envelope(one, *size, ascii=True), draw_envelope(three, *size, speed="cas", ascii=True),
                    draw_sweep(sweep(fleet, Conditions(variants=("v88",)), "isa", points=13), *size, ascii=True)):
        text = str(drawing)
        assert text.isascii(), sorted({c for c in text if ord(c) > 127})
        assert "FL" in text and "|" in text
    assert "^" in str(draw_envelope(one, *size, ascii=True))


def test_fine_drawing_uses_braille(one):
    text = str(draw_envelope(one, 80, 24))
    assert any(0x2801 <= ord(c) <= 0x28FF for c in text)


def test_overlay_labels_each_case(three):
    lines = draw_envelope(three, 100, 30).lines
    text = "\n".join(lines)
    for engine in ("ossel-78", "ossel-86", "brannick-84t"):
        assert engine in text
    plot = "\n".join(line[6:] for line in lines[1:-6])
    assert plot.count(TOP_MARK) == 3
    assert all(tag in plot for tag in "123")


def test_sweep_drawing_shows_limits_along_curves(fleet):
    sw = sweep(fleet, Conditions(variants=("v104",)), "isa", points=31)
    lines = draw_sweep(sw, 80, 24).lines
    assert len(lines) == 24 and all(len(line) == 80 for line in lines)
    text = "\n".join(lines)
    assert "ISA dev" in text and fl_rows(lines)
    assert "limit along the curves" in text
    plot = "".join(line[6:] for line in lines[1:-5])
    for limit in set(sw.frame["limit"].drop_nulls()):
        letter = {"thrust": "T", "buffet": "B", "stall": "S", "certified": "C", "cabin": "P", "none": "N"}[limit]
        assert letter in plot


BRAILLE_CELLS = range(0x2801, 0x2900)


def plot_area(lines):
    """The drawing between the title and the x axis, without the y-axis gutter."""
    axis = next(i for i, line in enumerate(lines) if line.lstrip().startswith(("└", "+-")))
    return [line[6:] for line in lines[1:axis]]


def test_terminal_wants_ascii_for_dumb_terminals_and_narrow_encodings():
    # terminfo's "dumb" entry promises printing characters only (ncurses terminfo database).
    assert terminal_wants_ascii({"TERM": "dumb"})
    assert not terminal_wants_ascii({"TERM": "xterm-256color"})
    assert not terminal_wants_ascii({})  # no TERM at all (e.g. Windows consoles): no reason to fall back
    assert terminal_wants_ascii({"TERM": "xterm"}, encoding="ascii")
    assert terminal_wants_ascii({"TERM": "xterm"}, encoding="latin-1")
    assert not terminal_wants_ascii({"TERM": "xterm"}, encoding="utf-8")
    # NO_COLOR: set and not empty means no colour (no-color.org); a dumb terminal has none either.
    assert terminal_wants_monochrome({"NO_COLOR": "1", "TERM": "xterm"})
    assert not terminal_wants_monochrome({"NO_COLOR": "", "TERM": "xterm"})
    assert terminal_wants_monochrome({"TERM": "dumb"})


def test_sweep_legend_writes_isa_deviations_as_users_type_them(fleet):
    conditions = Conditions(variants=("v104",), engines=("ossel-86",), isa_devs_c=(-10.0, 0.0, 15.0))
    text = str(draw_sweep(sweep(fleet, conditions, "weight", points=7), 100, 30))
    legend = text.split("weight t", 1)[1]
    for label in ("v104/ossel-86 ISA-10", "v104/ossel-86 ISA ", "v104/ossel-86 ISA+15"):
        assert label in legend
    assert ".0" not in legend and "ISA+0" not in legend


def synthetic_sweep(*curves):
    """A sweep over ISA deviation with the given maximum altitudes (ft) per series, for the drawing only."""
    import polars as pl

    isa = [-10.0, 0.0, 10.0, 20.0]
    rows = [dict(series=f"s{i}", variant=f"a{i}", engine="e", weight_kg=40_000.0, isa_dev_c=d, climb_fpm=300.0,
                 mach=0.78, max_altitude_ft=ft, flight_level=int(ft // 100), limit="thrust", note="")
            for i, curve in enumerate(curves) for d, ft in zip(isa, curve)]
    return Sweep("isa", "isa_dev_c", pl.DataFrame(rows), Conditions())


def test_identical_curves_are_said_so_in_the_legend():
    base = [39_000.0, 38_000.0, 36_500.0, 34_000.0]
    drawing = str(draw_sweep(synthetic_sweep(base, [39_500.0, 37_000.0, 35_000.0, 32_000.0], base), 80, 24))
    assert "3 a2/e (same curve as 1)" in drawing
    assert "2 a1/e (same" not in drawing and "1 a0/e (same" not in drawing


def test_identical_overlaid_envelopes_are_said_so(fleet):
    case = EnvelopeCase("v88", "ossel-78", 45_200.0)
    text = str(draw_envelope(compute_envelopes(fleet, [case, EnvelopeCase("v88", "ossel-86", 40_000.0), case]), 100, 30))
    assert "3 v88/ossel-78 45.2t ISA 300fpm (same band as 1):" in text
    assert text.count("(same band") == 1


def test_monochrome_draws_each_series_in_its_own_character(fleet, three):
    drawing = draw_sweep(sweep(fleet, Conditions(variants=("v104",)), "isa", points=13), 100, 30, mono=True)
    lines = drawing.lines
    plot = "".join(plot_area(lines))
    assert not any(ord(c) in BRAILLE_CELLS for c in plot)  # no dash patterns to tell apart
    assert "│" in "".join(lines) and "└" in "".join(lines)  # the frame stays Unicode: not the ASCII fallback
    glyphs = [style.glyph for style in SERIES_STYLES[:3]]
    assert len(set(glyphs)) == 3
    for number, glyph in enumerate(glyphs, start=1):
        assert glyph in plot
        legend = next(line for line in lines if f" {number} v104/" in line)
        sample_cells = legend.split(f" {number} v104/")[0].split("   ")[-1]
        assert set(sample_cells.strip()) - {" "} == {glyph}, legend
    text = str(draw_envelope(three, 100, 30, mono=True))
    assert not any(ord(c) in BRAILLE_CELLS for c in text) and TOP_MARK in text


def test_too_small_is_refused(one):
    with pytest.raises(ValueError):
        draw_envelope(one, 30, 10)


def test_rich_text_matches_the_lines(one):
    drawing = draw_envelope(one, 90, 26)
    assert drawing.text().plain == str(drawing)


# --- commands ----------------------------------------------------------------------------------

def run(capsys, *argv):
    status = main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


def test_envelope_command_sketch_ends_with_caution(capsys):
    status, out, err = run(capsys, "envelope", "--variant", "v88", "--engine", "ossel-78", "--weight", "45t",
                           "--isa", "0", "--size", "80x24")
    assert status == 0, err
    assert "FL" in out and TOP_MARK in out
    assert " ".join(out.split()).endswith(" ".join(CAUTION.split()))


def test_envelope_command_csv_and_json(capsys):
    status, out, err = run(capsys, "envelope", "--variant", "v70", "--engine", "brannick-74", "--weight", "mtow",
                           "--isa=-5", "--format", "csv")
    assert status == 0 and out.startswith("case,") and "nan" not in out.lower()
    assert CAUTION in err
    status, out, _ = run(capsys, "envelope", "--variant", "v70", "--engine", "brannick-74", "--format", "json")
    import json
    doc = json.loads(out)
    assert doc["summary"][0]["top_ft"] > 30_000 and doc["boundaries"]


@pytest.mark.parametrize("argv, message", [
    (["envelope", "--variant", "v88", "--size", "10x3"], "--size"),
    (["envelope", "--variant", "nope"], "unknown id"),
    (["envelope", "--variant", "v88", "--weight", "40t,41t"], "at most 3"),
    (["envelope", "--weight", "40t"], "--variant"),
    (["sweep", "--over", "isa", "--isa", "15"], "--range"),
    (["sweep", "--over", "mach", "--range", "0.9:0.5"], "--range"),
    (["sweep", "--over", "weight", "--range", "30t:80%mtow"], "--range"),
])
def test_bad_options_exit_2(capsys, argv, message):
    status, out, err = run(capsys, *argv)
    assert status == 2 and message in err and "Traceback" not in err


def test_sweep_command(capsys):
    status, out, err = run(capsys, "sweep", "--over", "isa", "--variant", "v104", "--range=-10:30", "--points", "9",
                           "--format", "csv")
    assert status == 0, err
    assert out.splitlines()[0].startswith("series,variant,engine")
    assert len(out.splitlines()) == 1 + 9 * 3
    status, out, err = run(capsys, "sweep", "--over", "weight", "--variant", "v88", "--ascii", "--size", "80x24")
    assert status == 0, err
    drawing, caution = out.rsplit("Caution:", 1)
    assert drawing.isascii() and "weight t" in drawing
    assert " ".join(("Caution:" + caution).split()) == " ".join(CAUTION.split())
