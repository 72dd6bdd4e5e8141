"""Shared test helpers: catalogues written from dicts, the demo fleet."""

import pytest
import tomli_w

from variantcmp.catalogue import demo_catalogue_path, load_catalogue


def write_catalogue(path, engines, variants, title="test catalogue"):
    """Write a catalogue TOML from plain dicts and load it."""
    doc = {"catalogue": {"title": title}, "engine": engines, "variant": variants}
    path.write_text(tomli_w.dumps(doc))
    return load_catalogue(path)


@pytest.fixture(scope="session")
def demo():
    return load_catalogue(demo_catalogue_path())
