"""Monte Carlo draws of a star's present phase space."""

from .distance import DistancePrior, distance_prior, sample_distance_gaussian, sample_true_parallax
from .distance_posterior import DistancePosterior, distance_posterior
from .star_distance import check_star_distance, scenario_distance_posterior, star_distance_posterior
from .star_draws import (StarDraws, choose_distance_source, draw_astrometry, draw_star, radial_velocity_from_prior,
                         rotated_proper_motions)
from .velocity_prior import VelocityPrior, velocity_prior

__all__ = ["DistancePrior", "distance_prior", "sample_distance_gaussian", "sample_true_parallax", "StarDraws",
           "choose_distance_source", "draw_star", "draw_astrometry", "DistancePosterior", "distance_posterior",
           "scenario_distance_posterior", "star_distance_posterior", "check_star_distance",
           "radial_velocity_from_prior", "rotated_proper_motions", "VelocityPrior", "velocity_prior"]
