"""Turn a scenario into the plain numbers the timing stage works with.

Spin: freq = 1/P, freq_dot = -Pdot/P^2 (from ``[star] spin_period`` and
``spin_period_derivative``).  Expected proper motion: the scenario's, else a
transverse speed (``[star] transverse_velocity``, else the median projected
speed of the velocity prior named in ``[trace] velocity_prior``, else
'hobbs2005') over the distance (the median of the star's distance posterior, as in the trace):
mu [mas/yr] = v_t [km/s] / (4.74047 d [kpc]).  Per-visit TOA errors: the
scenario's ``toa_error`` when given (it takes precedence), else the photon
Cramér–Rao bound of :mod:`kinage.timing.photons` times the spin period.
"""

from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from . import photons

__all__ = ["K_KMS_PER_MASYR_KPC", "ExpectedMotion", "spin_from_star", "expected_proper_motion", "visit_errors",
           "distance_pc", "dispersion_measure", "phase_connection", "DETECTION_THRESHOLD_SIGMA"]

#: km/s per (mas/yr * kpc): 1 AU/yr in km/s (IAU 2012 au, Julian year)
K_KMS_PER_MASYR_KPC = 4.74047
#: a visit needs an expected pulse detection at least this significant to give a TOA
#: (common practice, no source)
DETECTION_THRESHOLD_SIGMA = 3.0
#: phase-connection warning threshold, cycles (common practice, no source)
PHASE_CONNECTION_LIMIT = 0.1


def spin_from_star(star, required=False, where="timing"):
    """(freq [Hz], freq_dot [Hz/s], period [s] or None) from a ``[star]`` section."""
    p = star.value("spin_period", "s")
    if p is None:
        if required:
            raise InputError("[star] spin_period", f"required for {where} (pulse numbering needs the spin period)")
        return 1.0, 0.0, None
    pdot = star.value("spin_period_derivative", "", 0.0) or 0.0
    return 1.0 / p, -pdot / p**2, p


def dispersion_measure(star):
    """The ``[star] dispersion_measure`` in pc/cm^3 (0 when not given)."""
    try:
        return float(star.value("dispersion_measure", "pc / cm3", 0.0) or 0.0)
    except (AttributeError, KeyError):
        return 0.0


def distance_pc(star, scenario=None):
    """Distance in pc: the median of the star's distance posterior (the one the trace and the ages use).

    Without a ``scenario`` or without a posterior (no position, a parallax without error): ``distance``, else
    1/``parallax``; None if neither is usable.
    """
    if scenario is not None and star.get("ra") is not None and star.get("dec") is not None \
            and (star.get("distance") is not None or star.get("parallax_error") is not None):
        from ..astrometry import AstrometricSolution
        from ..errors import InputError
        from ..kinematics.star_distance import scenario_distance_posterior

        try:
            return scenario_distance_posterior(scenario, AstrometricSolution.from_star(star)).summary()["median"]
        except InputError:
            pass
    d = star.value("distance", "pc")
    if d is not None:
        return d
    plx = star.value("parallax", "mas")
    if plx is not None and plx > 0:
        return 1000.0 / plx
    return None


@dataclass
class ExpectedMotion:
    """Proper motion the forecast aims to detect.

    Attributes
    ----------
    pm_masyr : float or None
        Total proper motion, mas/yr.
    direction : ndarray or None
        Unit vector (ra*cos dec, dec) when the direction is known.
    source : str
        ``'scenario'`` or ``'velocity prior <name>'`` or ``'transverse_velocity'``.
    """

    pm_masyr: float | None
    direction: np.ndarray | None
    source: str
    transverse_velocity_kms: float | None = None
    distance_pc: float | None = None
    parameter_sets: list = field(default_factory=list)
    note: str = ""

    def to_dict(self):
        return {"pm_masyr": self.pm_masyr, "known_direction": self.direction is not None,
                "source": self.source, "transverse_velocity_kms": self.transverse_velocity_kms,
                "distance_pc": self.distance_pc, "note": self.note}


def expected_proper_motion(scenario):
    """The expected proper motion (see module docstring)."""
    star = scenario.star
    pra, pdec = star.value("pm_ra_cosdec", "mas/yr"), star.value("pm_dec", "mas/yr")
    d = distance_pc(star, scenario)
    if pra is not None and pdec is not None:
        mu = float(np.hypot(pra, pdec))
        direc = np.array([pra, pdec]) / mu if mu > 0 else None
        vt = K_KMS_PER_MASYR_KPC * mu * d / 1000 if d else None
        return ExpectedMotion(mu, direc, "scenario", vt, d)
    sets = []
    vt = star.value("transverse_velocity", "km/s")
    source = "transverse_velocity"
    if vt is None:
        from ..kinematics.velocity_prior import velocity_prior
        from ..params import get

        name = "hobbs2005"
        if scenario.trace is not None and scenario.trace.get("velocity_prior"):
            name = scenario.trace.get("velocity_prior")
        vt = velocity_prior(name).median_transverse_speed()
        sets.append(get("velocity_prior", name, "[trace] velocity_prior"))
        source = f"median projected speed of velocity prior '{name}'"
    if d is None:
        return ExpectedMotion(None, None, source, vt, None, sets,
                              "no distance or parallax: expected proper motion unknown")
    mu = vt / (K_KMS_PER_MASYR_KPC * d / 1000.0)
    return ExpectedMotion(float(mu), None, source, float(vt), d, sets)


def visit_errors(scenario, exposure_s):
    """Per-visit TOA errors (s) and photon statistics.

    Parameters
    ----------
    scenario : Scenario
    exposure_s : ndarray
        Exposure of each visit, s.

    Returns
    -------
    errors : ndarray, s
    photon : dict or None
        Counts, phase error, expected Z^2_n and detection significance per
        visit (None when ``toa_error`` is given directly).
    """
    c = scenario.campaign
    n = np.size(exposure_s)
    direct = c.value("toa_error", "s")
    if direct is not None:
        return np.full(n, direct), None
    _, _, period = spin_from_star(scenario.star, required=True, where="TOA errors from photons")
    prof = photons.profile_from_campaign(c)
    s_rate = c.value("source_rate", "1/s")
    b_rate = c.value("background_rate", "1/s", 0.0)
    exposure = np.asarray(exposure_s, float)
    if np.any(~np.isfinite(exposure)) or np.any(exposure <= 0):
        raise InputError("[campaign] exposure", "required and positive to compute TOA errors from photons")
    sig_phi = photons.phase_error(prof, s_rate, b_rate, exposure)
    nh = int(c.get("harmonics", 2))
    z2 = photons.expected_z2(prof, s_rate, b_rate, exposure, nh)
    det = photons.detection_sigma(z2, nh)
    photon = {
        "profile": prof.name,
        "pulsed_fraction": prof.pulsed_fraction(),
        "diluted_pulsed_fraction": prof.scaled(s_rate / (s_rate + b_rate)).pulsed_fraction(),
        "source_counts_per_visit": float(np.median(s_rate * exposure)),
        "background_counts_per_visit": float(np.median(b_rate * exposure)),
        "phase_error_cycles": float(np.median(sig_phi)),
        "harmonics": nh,
        "expected_z2": float(np.median(z2)),
        "detection_sigma_per_visit": float(np.median(det)),
        "detectable": bool(np.all(det >= DETECTION_THRESHOLD_SIGMA)),
        "detection_threshold_sigma": DETECTION_THRESHOLD_SIGMA,
    }
    return sig_phi * period, photon


def phase_connection(star, mjd, toa_error_s):
    """Phase uncertainty accumulated across the longest gap between visits.

    From the a-priori spin uncertainties: sigma_f = sigma_P / P^2 and
    sigma_f1 ~ sigma_Pdot / P^2, phase error over a gap dt is
    sqrt((sigma_f dt)^2 + (sigma_f1 dt^2 / 2)^2 + 2 (sigma_TOA / P)^2) cycles.
    """
    p = star.value("spin_period", "s")
    gaps = np.diff(np.sort(mjd)) * 86400.0
    out = {"max_gap_days": float(gaps.max() / 86400) if gaps.size else None,
           "phase_error_cycles": None, "at_risk": None, "limit_cycles": PHASE_CONNECTION_LIMIT}
    if p is None or not gaps.size:
        out["note"] = "spin period not given: phase connection not assessed"
        return out
    sp = star.value("spin_period_error", "s")
    spd = star.value("spin_period_derivative_error", "")
    if sp is None and spd is None:
        out["note"] = "spin_period_error / spin_period_derivative_error not given: assessed from TOA errors only"
    dt = gaps.max()
    sf = (sp or 0.0) / p**2
    sf1 = (spd or 0.0) / p**2
    err = float(np.sqrt((sf * dt) ** 2 + (sf1 * dt**2 / 2) ** 2 + 2 * (np.median(toa_error_s) / p) ** 2))
    out["phase_error_cycles"] = err
    out["at_risk"] = bool(err > PHASE_CONNECTION_LIMIT)
    return out
