"""Catalogue entries as plain dicts for tests: a jet airframe and a density-lapse engine (invented
numbers), each with keyword overrides; ``conftest.write_catalogue`` turns them into a catalogue."""


def engine_spec(**kw):
    e = {"id": "e1", "model": "density-lapse", "static_thrust_kn": 60.0, "lapse_exponent": 1.0}
    e.update(kw)
    return e


def variant_spec(**kw):
    v = {"id": "a1", "engine_options": ["e1"], "engine_count": 2, "wing_area_m2": 80.0, "aspect_ratio": 9.0,
         "oswald_e": 0.8, "cd0": 0.022, "cl_max": 1.5, "mtow_kg": 40_000.0, "cruise_mach": 0.7}
    v.update(kw)
    return v
