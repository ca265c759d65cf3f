"""What a timing campaign will tell about the birthplace: preposterior analysis of the trace's probabilities.

Above timing (the forecast's covariance) and orbits (the trace's draws and kernels); used by the front doors
(``kinage forecast --birthplace``, ``kinage.forecast(..., birthplace=True)``, ``[campaign] birthplace_forecast``).
"""

from .birthplace import birthplace_forecast, check_birthplace_inputs, check_outcomes, forecast_with_birthplace
from .result import BirthplaceForecast

__all__ = ["birthplace_forecast", "forecast_with_birthplace", "check_birthplace_inputs", "check_outcomes",
           "BirthplaceForecast"]
