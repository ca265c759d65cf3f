"""kinage: timing astrometry, birthplace tracing and age comparison for isolated neutron stars.

The pipeline runs scenario -> timing (forecast or fit) -> astrometric solution
-> Monte Carlo draws -> orbits -> encounters -> ages -> report; each stage is
usable on its own from Python.
"""

from ._version import __version__
from .astrometry import AstrometricSolution
from .errors import InputError, KinageError, ScenarioError
from .io.scenario import Scenario, load_scenario, scenario_from_dict

__all__ = [
    "__version__",
    "AstrometricSolution",
    "InputError",
    "KinageError",
    "ScenarioError",
    "Scenario",
    "load_scenario",
    "scenario_from_dict",
]
