"""Parsing of user-typed aviation units (variantcmp.units)."""

import math

import pytest
import scipy.constants as sc
from hypothesis import given
from hypothesis import strategies as st

from variantcmp.units import (
    FPM_TO_MS,
    FT_PER_M,
    KT_TO_MS,
    LB_TO_KG,
    OptionError,
    WeightSpec,
    format_altitude_ft,
    format_flight_level,
    format_isa_dev,
    format_mach,
    parse_climb,
    parse_climbs,
    parse_flight_level,
    parse_g_margin,
    parse_isa_devs,
    parse_mach,
    parse_weights,
)


# --- constants ------------------------------------------------------------------------

def test_constants_match_scipy_constants():
    # scipy.constants (CODATA / exact definitions): international foot 0.3048 m,
    # avoirdupois pound 0.45359237 kg, knot 1852 m / 3600 s (International Yard and
    # Pound Agreement 1959; nautical mile, International Hydrographic Conference 1929).
    assert FT_PER_M == pytest.approx(1 / sc.foot, rel=1e-15)
    assert LB_TO_KG == pytest.approx(sc.pound, rel=1e-15)
    assert KT_TO_MS == pytest.approx(sc.knot, rel=1e-15)
    assert FPM_TO_MS == pytest.approx(sc.foot / sc.minute, rel=1e-15)


# --- weights --------------------------------------------------------------------------

def test_weights_in_every_unit():
    got = parse_weights("62000, 64.5t, 140000lb, 90%mtow")
    assert got[0] == WeightSpec(62000.0, "kg")
    assert got[1] == WeightSpec(pytest.approx(64500.0), "kg")
    # 140,000 lb x 0.45359237 kg/lb = 63,502.93 kg (exact pound definition, 1959)
    assert got[2].unit == "kg" and got[2].value == pytest.approx(63502.9318)
    assert got[3] == WeightSpec(90.0, "%mtow")


@pytest.mark.parametrize(
    "text, value, unit",
    [
        ("62000kg", 62000.0, "kg"),
        ("62 000 kg", 62000.0, "kg"),
        ("62_000", 62000.0, "kg"),
        ("64.5 T", 64500.0, "kg"),
        ("1e5lbs", 1e5 * 0.45359237, "kg"),
        ("95 %MTOW", 95.0, "%mtow"),
        ("95%", 95.0, "%mtow"),
        ("MTOW", 100.0, "%mtow"),
    ],
)
def test_weight_spellings(text, value, unit):
    (spec,) = parse_weights(text)
    assert spec.unit == unit
    assert spec.value == pytest.approx(value)


def test_weight_resolves_against_each_variants_mtow():
    assert WeightSpec(90.0, "%mtow").resolve_kg(70000.0) == pytest.approx(63000.0)
    assert WeightSpec(62000.0, "kg").resolve_kg(70000.0) == 62000.0


def test_duplicate_weights_are_dropped_order_kept():
    assert parse_weights("64t,62000,64000") == [WeightSpec(64000.0, "kg"), WeightSpec(62000.0, "kg")]


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("heavy", "'heavy'"),
        ("62000kgf", "'62000kgf'"),
        ("-5t", "above 0"),
        ("0", "above 0"),
        ("nan", "'nan'"),
        ("inf", "'inf'"),
        ("250%mtow", "MTOW"),
        ("62000,,64000", "empty item"),
        ("", "expected"),
        ("62,500", "thousands separator"),
    ],
)
def test_bad_weights_name_option_text_and_expectation(text, fragment):
    with pytest.raises(OptionError) as err:
        parse_weights(text)
    message = str(err.value)
    assert message.startswith("--weight:")
    assert fragment in message
    assert "\n" not in message


# --- ISA deviations -------------------------------------------------------------------

@pytest.mark.parametrize(
    "text, expected",
    [
        ("-10,0,15", [-10.0, 0.0, 15.0]),
        ("ISA+15", [15.0]),
        ("isa-5", [-5.0]),
        ("+20", [20.0]),
        ("ISA", [0.0]),
        ("ISA + 15, ISA-5", [15.0, -5.0]),
        ("15C,20°C", [15.0, 20.0]),
        ("-0", [0.0]),
        ("0,0,15", [0.0, 15.0]),
    ],
)
def test_isa_deviations(text, expected):
    got = parse_isa_devs(text)
    assert got == expected
    assert all(math.copysign(1, v) > 0 for v in got if v == 0)  # no "-0" shown later


@pytest.mark.parametrize("text", ["hot", "ISA15", "15F", "+", "200", "-120", "nan", "0,,5"])
def test_bad_isa_deviations(text):
    with pytest.raises(OptionError, match=r"^--isa: "):
        parse_isa_devs(text)


def test_isa_formatting():
    assert [format_isa_dev(v) for v in (0.0, 15.0, -5.0, 2.5)] == ["ISA", "ISA+15", "ISA-5", "ISA+2.5"]


# --- climb criteria -------------------------------------------------------------------

def test_named_climb_criteria():
    # Absolute ceiling 0 ft/min, service ceiling 100 ft/min, cruise ceiling 300 ft/min
    # (trade definitions; common practice, from memory).
    assert parse_climb("absolute") == (0.0, "absolute")
    assert parse_climb("Service") == (100.0, "service")
    assert parse_climb("cruise") == (300.0, "cruise")


@pytest.mark.parametrize("text", ["250", "250fpm", "250 ft/min", "250FPM", " 250.0 "])
def test_numeric_climb(text):
    assert parse_climb(text) == (250.0, "250 ft/min")


def test_climb_lists_keep_order_and_drop_duplicates():
    assert [f for f, _ in parse_climbs("cruise,absolute,0,service")] == [300.0, 0.0, 100.0]


def test_negative_climb_is_an_error():
    with pytest.raises(OptionError, match=r"--climb: .*'-100'.*0 ft/min or more"):
        parse_climb("-100")


@pytest.mark.parametrize("text", ["fast", "100kt", "", "nan", "1e9"])
def test_bad_climb(text):
    with pytest.raises(OptionError, match=r"^--climb: "):
        parse_climbs(text)


# --- Mach -----------------------------------------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("best", "best"), ("BEST", "best"), ("cruise", "cruise"),
    ("0.78", 0.78), (".78", 0.78), ("M.78", 0.78), ("M0.78", 0.78), ("m 0.78", 0.78),
])
def test_mach(text, expected):
    assert parse_mach(text) == expected


@pytest.mark.parametrize("text", ["1", "1.0", "M1.2", "0", "-0.5", "78", "fast", "nan", "M"])
def test_bad_mach(text):
    # The models are subsonic: Mach >= 1 and Mach <= 0 are refused.
    with pytest.raises(OptionError, match=r"^--mach: "):
        parse_mach(text)


def test_mach_formatting():
    assert format_mach(0.78) == "M0.78"
    assert format_mach(None) == "—"
    assert format_mach(float("nan")) == "—"


# --- flight levels --------------------------------------------------------------------

@pytest.mark.parametrize("text", ["FL350", "fl 350", "350", "35000ft", "35,000 ft", "35000"])
def test_flight_level_spellings(text):
    # A flight level is pressure altitude in hundreds of feet (ICAO Annex 2; from memory).
    assert parse_flight_level(text) == 35000.0


def test_flight_level_in_metres():
    # 10,668 m / 0.3048 m/ft = 35,000 ft (exact foot definition)
    assert parse_flight_level("10668m") == pytest.approx(35000.0)


@pytest.mark.parametrize("text", ["high", "FL", "FL9999", "-5000ft", "nan"])
def test_bad_flight_levels(text):
    with pytest.raises(OptionError, match=r"^--target: "):
        parse_flight_level(text)


@pytest.mark.parametrize("ft, text", [
    (37120.0, "FL371"), (37199.9, "FL371"), (37000.0, "FL370"), (5000.0, "FL050"),
    (0.0, "FL000"), (-1500.0, "FL-015"), (None, "—"), (float("nan"), "—"),
])
def test_format_flight_level(ft, text):
    assert format_flight_level(ft) == text


@given(st.floats(min_value=0.0, max_value=99_999.0))
def test_flight_level_never_overstates(altitude_ft):
    # Rounding down: the flight level shown is never above the altitude computed.
    shown_ft = parse_flight_level(format_flight_level(altitude_ft))
    assert altitude_ft - 100.0 < shown_ft <= altitude_ft


def test_format_altitude_ft_rounds_down():
    assert format_altitude_ft(37120.9) == "37,120"
    assert format_altitude_ft(None) == "—"


# --- buffet margin --------------------------------------------------------------------

def test_g_margin():
    assert parse_g_margin("1.3") == 1.3
    assert parse_g_margin("1.5g") == 1.5
    for bad in ("0.9", "3", "x"):
        with pytest.raises(OptionError, match=r"^--g-margin: "):
            parse_g_margin(bad)


def test_bare_thousands_are_refused_as_ambiguous():
    # "3500" could be FL350 typed without the FL or 3,500 ft: refuse rather than guess
    # (flight levels are hundreds of feet: ICAO Doc 8168, from memory).
    for text in ("3500", "1000", "9999"):
        with pytest.raises(OptionError, match="ambiguous"):
            parse_flight_level(text)
    assert parse_flight_level("350") == 35000.0
    assert parse_flight_level("35000") == 35000.0
    assert parse_flight_level("3500ft") == 3500.0


@pytest.mark.parametrize("text, feet", [("12000", 12000.0), ("12,000 ft", 12000.0), ("12000ft", 12000.0),
                                        ("3658m", 3658 / 0.3048), ("-100", -100.0)])
def test_heights_in_feet_or_metres(text, feet):
    # International foot, 0.3048 m exactly (1959 agreement).
    from variantcmp.units import TERRAIN_RANGE_FT, parse_height_ft

    assert parse_height_ft(text, "--terrain", TERRAIN_RANGE_FT) == pytest.approx(feet)


@pytest.mark.parametrize("text", ["x", "", "40000", "12000kg", "nan"])
def test_bad_heights_are_refused(text):
    from variantcmp.units import TERRAIN_RANGE_FT, OptionError, parse_height_ft

    with pytest.raises(OptionError, match="--terrain"):
        parse_height_ft(text, "--terrain", TERRAIN_RANGE_FT)
