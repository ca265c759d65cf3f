"""Orbits: Galactocentric frames, galpy back-integration, closest approaches and encounter statistics."""

from .closest import straight_line_closest_approach
from .common_origin import compare_common_origin, separation_cdf, separation_pdf
from .frames import SolarFrame, solar_frame
from .integrate import integrate_orbits, time_grid
from .plane import plane_crossing_age
from .result import TraceResult
from .trace import trace

__all__ = ["trace", "TraceResult", "straight_line_closest_approach", "compare_common_origin",
           "separation_cdf", "separation_pdf", "SolarFrame", "solar_frame", "integrate_orbits", "time_grid",
           "plane_crossing_age"]
