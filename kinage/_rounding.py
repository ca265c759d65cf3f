"""How many decimals a number shown with an error gets (one rule for every printed number)."""

import math

__all__ = ["pdg_decimals"]


def pdg_decimals(err, sig=None):
    """Decimals that show an error ``err`` rounded by the Particle Data Group rule (may be negative).

    The three leading digits of the error decide: 100-354 keep two significant
    figures, 355-949 one, 950-999 round up to 1000 and keep two (Particle Data
    Group, Review of Particle Physics, Introduction: rounding).  ``sig`` forces
    a number of significant figures instead.

    Parameters
    ----------
    err : float, > 0
    sig : int, optional

    Returns
    -------
    int
        E.g. 2 for 0.017 (-> '0.017'), 0 for 4.8 (-> '5'), -1 for 270 (-> '270').
    """
    exp = int(math.floor(math.log10(abs(err))))
    if sig is not None:
        return sig - 1 - exp
    lead = int(abs(err) / 10.0 ** (exp - 2))
    if lead < 355:
        return 1 - exp
    return -exp  # 355-949: one figure; 950-999 round up to 1000, i.e. two figures of the next decade
