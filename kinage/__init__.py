"""kinage: timing astrometry, birthplace tracing and age comparison for isolated neutron stars.

The pipeline runs scenario -> timing (forecast or fit) -> astrometric solution
-> Monte Carlo draws -> orbits -> encounters -> ages -> report; each stage is
usable on its own from Python.

Front doors (see :mod:`kinage.api`)::

    import kinage
    scenario = kinage.load_scenario("star.toml")          # or kinage.scenario_from_dict({...})
    star = kinage.star_from_skycoord(coord, spin_period=...)  # the [star] table from a SkyCoord
    star = kinage.star_from_table(row, columns={...})      # ... or from a catalogue row
    kinage.forecast(scenario)        # can timing measure the motion?
    kinage.fit(scenario, toas)       # TOAs as a path or an astropy Table
    kinage.trace(scenario, associations=table)   # path, Table or QTable
    kinage.compare_ages(scenario, trace_result)
    kinage.run(scenario, "out/")     # every stage, files and a report

Importing kinage is cheap: the names above load their modules on first use
(PEP 562), so ``import kinage`` does not import astropy.coordinates, galpy,
scipy.stats or matplotlib.
"""

import importlib as _importlib

from ._version import __version__
from .errors import ConvergenceError, InputError, KinageError, ModelRangeError, ScenarioError
from .warnings import KinageWarning
from . import params as _params  # noqa: F401  (gives io's scenario checks the parameter-set names; cheap)

__all__ = [
    "__version__",
    "load_scenario",
    "scenario_from_dict",
    "star_from_skycoord",
    "star_from_table",
    "forecast",
    "simulate",
    "fit",
    "trace",
    "compare_ages",
    "run",
    "Scenario",
    "AstrometricSolution",
    "InputError",
    "KinageError",
    "ScenarioError",
    "ModelRangeError",
    "ConvergenceError",
    "UnitInputError",
    "KinageWarning",
]

#: lazily loaded names -> module that defines them
_LAZY = {
    "load_scenario": "kinage.api",
    "scenario_from_dict": "kinage.api",
    "star_from_skycoord": "kinage.api",
    "star_from_table": "kinage.api",
    "forecast": "kinage.api",
    "simulate": "kinage.api",
    "fit": "kinage.api",
    "trace": "kinage.api",
    "compare_ages": "kinage.api",
    "run": "kinage.api",
    "Scenario": "kinage.io.scenario",
    "AstrometricSolution": "kinage.astrometry",
    "UnitInputError": "kinage._units",
}

#: subpackages reachable as attributes (``kinage.ages.characteristic_age``)
_SUBMODULES = ("api", "ages", "associations", "astrometry", "batch", "cli", "commands", "errors", "io",
               "kinematics", "orbits", "params", "pipeline", "progress", "report", "timing", "warnings")


def __getattr__(name):
    if name in _LAZY:
        value = getattr(_importlib.import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    if name in _SUBMODULES:
        return _importlib.import_module(f"{__name__}.{name}")
    raise AttributeError(f"module 'kinage' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(__all__) | set(_SUBMODULES))
