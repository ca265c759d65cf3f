"""The reshaped grid search of the tracing kernel picks the same grid points as a direct computation."""

import numpy as np

from kinage.orbits.hermite import AssociationGrid, StarChunk


class _Bundle:
    """The little of an orbit bundle the grid search reads: draws, times and position components (kpc)."""

    def __init__(self, pos, times):
        self.pos, self.times, self.n = pos, times, len(pos)

    def position_components(self):
        return [self.pos[..., c] for c in range(3)]


def test_grid_search_argmin_matches_direct_computation():
    # reference: brute-force squared separations with the pairing i -> (offset + i) % m (common practice, no source)
    rng = np.random.default_rng(4)
    n, nt, m, offset = 37, 11, 5, 13
    times = -np.linspace(0.0, 10.0, nt)
    star = rng.normal(size=(n, nt, 3))
    assoc = rng.normal(size=(m, nt, 3))
    pair = (offset + np.arange(n)) % m
    direct = np.argmin(((star - assoc[pair]) ** 2).sum(-1), axis=1)
    grid = AssociationGrid(assoc, np.zeros_like(assoc), times)
    k = StarChunk(_Bundle(star, times), offset, m, origin=grid.origin).grid_d2(grid, 0)[0]
    assert np.array_equal(k, direct)
