"""Helpers for the tracing tests."""

import numpy as np


def random_states(rng, n, spread_kpc=0.5, speed=300.0):
    """Galactocentric positions (kpc) near the Sun and velocities (km/s)."""
    pos = np.column_stack([-8.1 + spread_kpc * rng.normal(size=n), spread_kpc * rng.normal(size=n),
                           0.1 * rng.normal(size=n)])
    vel = np.column_stack([rng.normal(0, speed, n), 230 + rng.normal(0, speed, n), rng.normal(0, speed, n)])
    return pos, vel
