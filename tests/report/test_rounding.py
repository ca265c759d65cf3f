"""The one rounding rule for printed numbers, against the Particle Data Group's own examples."""

import pytest

from kinage._rounding import pdg_decimals
from kinage.report.numbers import value_error


@pytest.mark.parametrize("error, decimals", [
    # Particle Data Group, Review of Particle Physics, Introduction ("Rounding"): the three leading digits
    # 100-354 keep two significant figures, 355-949 one, 950-999 round up to 1000 with two
    (0.827, 1),   # -> 0.8
    (0.354, 2),   # -> 0.35
    (0.355, 1),   # -> 0.4
    (0.0017, 4),  # -> 0.0017
    (0.97, 1),    # -> 1.0
    (270.0, -1),  # -> 270
    (4.8, 0),     # -> 5
])
def test_pdg_decimals(error, decimals):
    assert pdg_decimals(error) == decimals


def test_value_with_error_follows_the_rule():
    # PDG examples: 0.827 -> one figure; 0.354 -> two figures (value rounded to the same decimal place)
    assert value_error(12.3456, 0.827) == "12.3 ± 0.8"
    assert value_error(12.3456, 0.354) == "12.35 ± 0.35"
    assert value_error(37.7491, 0.0172, "mas/yr") == "37.749 ± 0.017 mas/yr"
