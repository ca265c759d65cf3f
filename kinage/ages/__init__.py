"""Ages of a neutron star: spin-down, field decay, cooling, and their comparison.

Front door: :func:`compare_ages` (returns :class:`AgesResult`).  Building
blocks usable on their own: :mod:`.spindown`, :mod:`.field_decay`,
:mod:`.envelope`, :func:`cooling_curve`, :func:`cooling_age`.
"""

from .compare import AgesResult, compare_ages
from .cooling import CoolingCurve, CoolingModel, cooling_curve, field_decay_heating
from .cooling_age import CoolingAgeResult, cooling_age
from .envelope import star_structure, surface_temperature
from .field_decay import (exponential_characteristic_age, exponential_decay_timescale,
                          ohm_hall_characteristic_age, ohm_hall_timescale)
from .spindown import (braking_index_age, characteristic_age, dipole_field, implied_initial_period,
                       shklovskii_pdot, spin_down_luminosity)

__all__ = [
    "compare_ages",
    "AgesResult",
    "cooling_curve",
    "CoolingCurve",
    "CoolingModel",
    "field_decay_heating",
    "cooling_age",
    "CoolingAgeResult",
    "star_structure",
    "surface_temperature",
    "characteristic_age",
    "dipole_field",
    "spin_down_luminosity",
    "braking_index_age",
    "implied_initial_period",
    "shklovskii_pdot",
    "exponential_characteristic_age",
    "exponential_decay_timescale",
    "ohm_hall_characteristic_age",
    "ohm_hall_timescale",
]
