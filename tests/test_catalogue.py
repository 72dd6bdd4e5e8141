"""Catalogue loading and validation: the demo fleets, the broken corpus, fuzzing.

The accepted ranges are our own engineering choice (plausibility bounds set in
variantcmp/catalogue/schema.py), so validation tests need no outside source; the one physical
formula checked here (K = 1 / (pi A e)) names its textbook.
"""

from __future__ import annotations

import dataclasses
import math
import os
import re
import tomllib
from pathlib import Path

import pytest
import tomli_w
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from variantcmp.catalogue import (
    Catalogue,
    CatalogueError,
    Problem,
    bundled_fleet_dir,
    demo_catalogue_path,
    demo_catalogue_paths,
    load_catalogue,
    summarise,
)

BROKEN = Path(__file__).parent / "broken"
BROKEN_FILES = sorted(BROKEN.glob("*.toml"))
REGIONAL = bundled_fleet_dir() / "fernholt-regional.toml"
SURVEY = bundled_fleet_dir() / "tallon-fells-survey.toml"
EXPECT = re.compile(r"^# expect: (?P<key>.*?) \| (?P<message>.*)$", re.M)


def problems_of(path) -> list[Problem]:
    with pytest.raises(CatalogueError) as info:
        load_catalogue(path)
    assert info.value.problems, "a CatalogueError must carry at least one problem"
    return info.value.problems


# --------------------------------------------------------------------------- broken corpus


def test_corpus_is_there():
    assert len(BROKEN_FILES) >= 15


@pytest.mark.parametrize("path", BROKEN_FILES, ids=[p.stem for p in BROKEN_FILES])
def test_broken_catalogue_names_file_key_and_expectation(path):
    """Each file lists what it must produce in '# expect: key path | message fragment' lines."""
    expects = [(m["key"], m["message"]) for m in EXPECT.finditer(path.read_text())]
    assert expects, f"{path.name} declares no expectation"
    problems = problems_of(path)
    for p in problems:
        assert p.file == str(path)
        assert p.key, f"problem without a key path: {p}"
        assert p.message
    for key, fragment in expects:
        hits = [p for p in problems if p.key == key]
        assert hits, f"no problem at {key!r}; got:\n" + "\n".join(map(str, problems))
        assert any(fragment in p.message for p in hits), (
            f"no problem at {key!r} says {fragment!r}; got:\n" + "\n".join(map(str, hits))
        )


def test_all_problems_reported_at_once():
    problems = problems_of(BROKEN / "out_of_range.toml")
    assert len(problems) >= 7


def test_error_text_is_one_line_per_problem():
    path = BROKEN / "nan_inf.toml"
    with pytest.raises(CatalogueError) as info:
        load_catalogue(path)
    lines = str(info.value).splitlines()
    assert len(lines) == len(info.value.problems)
    assert all(line.startswith(f"{path}: ") for line in lines)
    assert f'{path}: variant[0] "a".cd0: expected a finite number' in str(info.value)


# --------------------------------------------------------------------------- files that are not catalogues


def test_missing_path(tmp_path):
    (p,) = problems_of(tmp_path / "nowhere.toml")
    assert p.file == str(tmp_path / "nowhere.toml")
    assert "no such file" in p.message


def test_directory_is_refused_and_lists_catalogues(tmp_path):
    (tmp_path / "fleet-a.toml").write_text("")
    (p,) = problems_of(tmp_path)
    assert "is a directory" in p.message and "fleet-a.toml" in p.message


@pytest.mark.parametrize("content", [b"", b"   \n\n\t\n"], ids=["empty", "blank"])
def test_empty_file(tmp_path, content):
    path = tmp_path / "empty.toml"
    path.write_bytes(content)
    (p,) = problems_of(path)
    assert "empty" in p.message


def test_comment_only_file_misses_tables(tmp_path):
    path = tmp_path / "comments.toml"
    path.write_text("# nothing here yet\n")
    keys = {p.key for p in problems_of(path)}
    assert {"catalogue", "variant"} <= keys


def test_binary_file(tmp_path):
    path = tmp_path / "image.toml"
    path.write_bytes(bytes(range(256)) * 4)
    (p,) = problems_of(path)
    assert "binary" in p.message


def test_non_utf8_file(tmp_path):
    path = tmp_path / "latin1.toml"
    path.write_bytes('[catalogue]\ntitle = "Flotte à réaction"\n'.encode("latin-1"))
    (p,) = problems_of(path)
    assert "UTF-8" in p.message


def test_utf8_bom_is_accepted(tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + REGIONAL.read_bytes())
    assert load_catalogue(path).variants


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0, reason="root reads any file")
def test_unreadable_file(tmp_path):
    path = tmp_path / "locked.toml"
    path.write_bytes(REGIONAL.read_bytes())
    path.chmod(0)
    try:
        (p,) = problems_of(path)
        assert "permission denied" in p.message
    finally:
        path.chmod(0o644)


def test_deep_nesting_is_a_problem_not_a_crash(tmp_path):
    path = tmp_path / "deep.toml"
    path.write_text("x = " + "[" * 5000 + "]" * 5000 + "\n")
    assert problems_of(path)


def test_huge_integer_is_a_problem(tmp_path):
    path = tmp_path / "huge.toml"
    path.write_text("x = " + "9" * 5000 + "\n")
    assert problems_of(path)


# --------------------------------------------------------------------------- demo catalogues


def test_bundled_fleet_dir_lists_the_demos():
    names = {p.name for p in bundled_fleet_dir().glob("*.toml")}
    assert {"fernholt-regional.toml", "tallon-fells-survey.toml"} <= names
    assert demo_catalogue_path() == REGIONAL
    assert [p.name for p in demo_catalogue_paths()] == sorted(names)


@pytest.mark.parametrize("path", demo_catalogue_paths(), ids=lambda p: p.stem)
def test_demo_catalogue_loads(path):
    cat = load_catalogue(path)
    assert isinstance(cat, Catalogue)
    assert cat.title and "invented" in cat.description.lower()
    assert cat.variants and cat.engines
    for v in cat.variants.values():
        assert v.has_buffet and v.max_altitude_ft is not None
        assert all(e in cat.engines for e in v.engine_options)


def test_regional_demo_shape():
    cat = load_catalogue(demo_catalogue_path())
    assert len(cat.variants) >= 3
    assert all(2 <= len(v.engine_options) <= 3 for v in cat.variants.values())
    assert {e.model for e in cat.engines.values()} == {"density-lapse", "turbofan", "table", "turboprop"}
    assert all(v.has_cabin and v.has_wave_drag for v in cat.variants.values())
    # Jets and turboprops side by side: no variant mixes them, and none warns (the turboprops
    # cruise well below M0.7).
    for v in cat.variants.values():
        assert len({cat.engines[e].is_propeller for e in v.engine_options}) == 1
    assert not cat.warnings
    # A table engine's grid must cover every pressure altitude the solver searches (from
    # -2,000 ft) and the family's Mach range up to MMO.
    for e in cat.engines.values():
        if e.model == "table":
            assert e.table_altitude_ft[0] <= -2000 and e.table_altitude_ft[-1] >= 51000
            assert e.table_mach[0] == 0 and e.table_mach[-1] >= max(v.mmo for v in cat.variants.values())
    # File order is kept (shrink, base, stretch; each family).
    for propeller in (False, True):
        weights = [v.mtow_kg for v in cat.variants.values() if cat.engines[v.engine_options[0]].is_propeller == propeller]
        assert len(weights) >= 2 and weights == sorted(weights)


def test_survey_demo_shape():
    cat = load_catalogue(SURVEY)
    assert any(v.aspect_ratio is not None and v.aspect_ratio >= 20 for v in cat.variants.values())
    assert all(v.max_altitude_ft >= 60000 for v in cat.variants.values())
    assert all(not v.has_cabin for v in cat.variants.values())
    assert all(e.static_thrust_kn <= 20 for e in cat.engines.values())


def test_induced_drag_factor_from_aspect_ratio_and_oswald():
    # K = 1 / (pi A e): Anderson, Aircraft Performance and Design (McGraw-Hill 1999), eq. 2.47.
    v = load_catalogue(demo_catalogue_path()).variants["v88"]
    assert v.k == pytest.approx(1 / (math.pi * 9.8 * 0.82), rel=1e-12)
    er = load_catalogue(SURVEY).variants["ha2-er"]
    assert er.oswald_e is None and er.k == 0.0121


def test_loaded_objects_are_frozen():
    cat = load_catalogue(demo_catalogue_path())
    v = next(iter(cat.variants.values()))
    with pytest.raises(dataclasses.FrozenInstanceError):
        v.cd0 = 0.5
    assert isinstance(v.buffet_mach, tuple) and isinstance(v.engine_options, tuple)
    table = next(e for e in cat.engines.values() if e.model == "table")
    assert isinstance(table.table_thrust_fraction[0], tuple)


def test_defaults_of_optional_engine_keys(tmp_path):
    path = tmp_path / "minimal.toml"
    path.write_text(
        '[catalogue]\ntitle = "minimal"\n[[engine]]\nid = "e"\nmodel = "turbofan"\nstatic_thrust_kn = 50\n'
        '[[variant]]\nid = "v"\nengine_options = ["e"]\nengine_count = 2\nwing_area_m2 = 70\n'
        "induced_drag_k = 0.045\ncd0 = 0.021\ncl_max = 1.5\nmtow_kg = 36000\ncruise_mach = 0.75\n"
    )
    cat = load_catalogue(path)
    e, v = cat.engines["e"], cat.variants["v"]
    assert (e.label, e.rating_fraction, e.throttle_ratio, e.flat_rate_isa_dev_c) == ("e", 1.0, 1.0, None)
    assert isinstance(e.static_thrust_kn, float) and isinstance(v.engine_count, int)
    assert v.aspect_ratio is None and v.k == 0.045
    assert not (v.has_buffet or v.has_wave_drag or v.has_cabin)
    assert v.max_altitude_ft is None and v.mmo is None
    assert cat.description == ""


def test_summary_rows():
    rows = dict(summarise(load_catalogue(demo_catalogue_path())))
    assert rows["variants"] == "5"
    assert rows["engines"].startswith("6:") and "tavish-20 (turboprop, fuel data)" in rows["engines"]
    assert "buffet" in rows["variant v70"] and "cabin" in rows["variant v70"]
    assert "certified 39,000 ft" in rows["variant v104"]
    assert "ossel-86" in rows["variant v104"]


# --------------------------------------------------------------------------- fuzzing


def outcome(path) -> None:
    """Loading anything gives a Catalogue or a CatalogueError with usable problems, nothing else."""
    try:
        load_catalogue(path)
    except CatalogueError as exc:
        assert exc.problems and all(p.file == str(path) and p.message for p in exc.problems)


FUZZ = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


@FUZZ
@given(data=st.binary(max_size=400))
def test_fuzz_random_bytes(tmp_path, data):
    path = tmp_path / "fuzz.toml"
    path.write_bytes(data)
    outcome(path)


@FUZZ
@given(text=st.text(alphabet=st.sampled_from(list('[]{}=",.\n #abcdeilmnortuv_0123456789+-')), max_size=300))
def test_fuzz_toml_like_text(tmp_path, text):
    path = tmp_path / "fuzz.toml"
    path.write_text(text, encoding="utf-8")
    outcome(path)


SCALARS = (
    st.booleans()
    | st.integers(min_value=-(10**20), max_value=10**20)
    | st.floats(allow_nan=True, allow_infinity=True)
    | st.text(max_size=8)
)
VALUES = st.recursive(
    SCALARS,
    lambda inner: st.lists(inner, max_size=4) | st.dictionaries(st.text(min_size=1, max_size=6), inner, max_size=3),
    max_leaves=8,
)
KEYS = sorted(
    {k for doc in (REGIONAL, SURVEY) for kind in ("engine", "variant")
     for table in tomllib.loads(doc.read_text())[kind] for k in table}
)  # fmt: skip


@FUZZ
@given(data=st.data(), source=st.sampled_from([REGIONAL, SURVEY]))
def test_fuzz_mutated_demo(tmp_path, data, source):
    """Change, add or delete keys of a valid catalogue at random."""
    doc = tomllib.loads(source.read_text())
    for _ in range(data.draw(st.integers(1, 4))):
        kind = data.draw(st.sampled_from(["engine", "variant", "catalogue"]))
        table = doc[kind] if kind == "catalogue" else data.draw(st.sampled_from(doc[kind]))
        key = data.draw(st.sampled_from(KEYS + list(table) + ["title", "description"]) | st.text(min_size=1, max_size=6))
        if data.draw(st.booleans()) and key in table:
            del table[key]
        else:
            table[key] = data.draw(VALUES)
    path = tmp_path / "fuzz.toml"
    path.write_text(tomli_w.dumps(doc), encoding="utf-8")
    outcome(path)


# --------------------------------------------------------------------------- propeller, fuel and engine-out keys


def _doc(engine: dict, variant: dict | None = None) -> dict:
    v = {"id": "a1", "engine_options": [engine["id"]], "engine_count": 2, "wing_area_m2": 61.0, "aspect_ratio": 12.0,
         "oswald_e": 0.8, "cd0": 0.028, "cl_max": 1.6, "mtow_kg": 23_000.0, "cruise_mach": 0.45}
    v.update(variant or {})
    return {"catalogue": {"title": "t"}, "engine": [engine], "variant": [v]}


def _load_doc(tmp_path, doc):
    path = tmp_path / "c.toml"
    path.write_text(tomli_w.dumps(doc))
    return load_catalogue(path)


def _messages(tmp_path, doc) -> list[str]:
    path = tmp_path / "c.toml"
    path.write_text(tomli_w.dumps(doc))
    return [f"{p.key} | {p.message}" for p in problems_of(path)]


TURBOPROP = {"id": "p1", "model": "turboprop", "shaft_power_kw": 2000.0, "propeller_efficiency": 0.82}


def test_a_turboprop_needs_power_and_one_kind_of_propeller_efficiency(tmp_path):
    cat = _load_doc(tmp_path, _doc(dict(TURBOPROP, psfc_kg_per_kwh=0.28, mct_thrust_ratio=0.95),
                                   {"oei_cd0_increment": 0.004}))
    e, v = cat.engines["p1"], cat.variants["a1"]
    assert e.is_propeller and e.has_fuel_data and e.static_thrust_kn is None and e.mct_thrust_ratio == 0.95
    assert v.oei_cd0 == 0.004 and v.net_decrement_pct == 1.1 and not cat.warnings
    no_power = {k: v for k, v in TURBOPROP.items() if k != "shaft_power_kw"}
    assert any("shaft_power_kw | missing" in m for m in _messages(tmp_path, _doc(no_power)))
    both = dict(TURBOPROP, propeller_efficiency_mach=[0.2, 0.5], propeller_efficiency_table=[0.7, 0.85])
    assert any("not both" in m for m in _messages(tmp_path, _doc(both)))
    neither = {k: v for k, v in TURBOPROP.items() if k != "propeller_efficiency"}
    assert any("propeller_efficiency | missing" in m for m in _messages(tmp_path, _doc(neither)))
    uneven = dict(neither, propeller_efficiency_mach=[0.2, 0.4, 0.5], propeller_efficiency_table=[0.7, 0.85])
    assert any("one efficiency per Mach" in m for m in _messages(tmp_path, _doc(uneven)))
    jet_key = dict(TURBOPROP, static_thrust_kn=50.0, tsfc_mg_per_ns=15.0)
    messages = _messages(tmp_path, _doc(jet_key))
    assert any("static_thrust_kn | not used by model \"turboprop\"" in m for m in messages)
    assert any("tsfc_mg_per_ns | not used by model \"turboprop\"" in m for m in messages)


def test_jet_fuel_data_is_the_formula_or_a_table(tmp_path):
    jet = {"id": "j1", "model": "density-lapse", "static_thrust_kn": 60.0}
    cat = _load_doc(tmp_path, _doc(dict(jet, tsfc_mg_per_ns=9.5, tsfc_mach_slope=10.5)))
    assert cat.engines["j1"].has_fuel_data
    table = dict(jet, tsfc_table_altitude_ft=[0, 40000], tsfc_table_mach=[0.2, 0.8],
                 tsfc_table_mg_per_ns=[[11.0, 16.0], [10.0, 15.0]])
    assert _load_doc(tmp_path, _doc(table)).engines["j1"].tsfc_table_mg_per_ns == ((11.0, 16.0), (10.0, 15.0))
    assert any("not both" in m for m in _messages(tmp_path, _doc(dict(table, tsfc_mg_per_ns=9.0))))
    assert any("tsfc_mg_per_ns | missing" in m for m in _messages(tmp_path, _doc(dict(jet, tsfc_mach_slope=3.0))))
    short = dict(table, tsfc_table_mg_per_ns=[[11.0, 16.0]])
    assert any("tsfc_table_mg_per_ns | expected 2 rows" in m for m in _messages(tmp_path, _doc(short)))
    assert not _load_doc(tmp_path, _doc(jet)).engines["j1"].has_fuel_data


def test_a_turboprop_on_a_fast_variant_is_warned_about(tmp_path):
    # Common practice, no source: propeller efficiency collapses above about M0.7.
    cat = _load_doc(tmp_path, _doc(TURBOPROP, {"cruise_mach": 0.74}))
    assert len(cat.warnings) == 1 and "cruise_mach" in cat.warnings[0].key
    assert "propeller efficiency collapses" in cat.warnings[0].message
    assert any(label == "warning" for label, _ in summarise(cat))


def test_engine_out_defaults_follow_the_engine_count(tmp_path):
    jet = {"id": "j1", "model": "density-lapse", "static_thrust_kn": 60.0}
    counts = {n: _load_doc(tmp_path, _doc(jet, {"engine_count": n})).variants["a1"] for n in (1, 2, 3, 4)}
    assert counts[1].net_decrement_pct is None
    assert [counts[n].net_decrement_pct for n in (2, 3, 4)] == [1.1, 1.4, 1.6]
    assert counts[2].oei_cd0 == 0.003
    given = _load_doc(tmp_path, _doc(jet, {"net_gradient_decrement_pct": 1.3})).variants["a1"]
    assert given.net_decrement_pct == 1.3
    text = dict(summarise(_load_doc(tmp_path, _doc(jet))))["variant a1"]
    assert "CD0 +0.003 (default)" in text
