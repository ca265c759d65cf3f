"""Shared helpers for the tracing tests (invented object names only)."""

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))  # for tracing_helpers

from kinage.params import ParameterSet


@pytest.fixture(scope="session")
def null_potential_set():
    """A potential parameter set holding galpy's force-free NullPotential (Bovy 2015, galpy)."""
    from kinage._galpy import import_galpy

    import_galpy()
    from galpy.potential import NullPotential

    return ParameterSet("potential", "test-null", {"object": NullPotential(), "ro_kpc": 8.0, "vo_kms": 220.0})
