"""Timing astrometry: forecast, simulate and fit a timing campaign.

Front doors: :func:`forecast`, :func:`simulate_toas`, :func:`read_toas`,
:func:`write_toas`, :func:`fit_toas`.
"""

from .fit import FitResult, fit_toas
from .forecast import forecast
from .forecast_result import ForecastResult
from .simulate import SimulationResult, simulate_toas
from .toas import read_toas, write_toas

__all__ = ["forecast", "ForecastResult", "simulate_toas", "SimulationResult", "read_toas", "write_toas",
           "fit_toas", "FitResult"]
