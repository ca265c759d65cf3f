"""The reshaped coarse search picks the same grid points as a direct computation."""

import numpy as np

from kinage.orbits.closest import CoarseStar


def test_coarse_star_argmin_matches_direct_computation():
    # reference: brute-force squared separations with the pairing i -> (offset + i) % m (common practice, no source)
    rng = np.random.default_rng(4)
    n, nc, m, offset = 37, 11, 5, 13
    star = rng.normal(size=(n, nc, 3)).astype(np.float32)
    assoc = rng.normal(size=(m, nc, 3)).astype(np.float32)
    pair = (offset + np.arange(n)) % m
    direct = np.argmin(((star - assoc[pair]) ** 2).sum(-1), axis=1)
    assert np.array_equal(CoarseStar(star, offset, m).argmin(assoc), direct)
