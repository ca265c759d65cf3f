"""Observing plan: visit epochs with a Sun-avoidance constraint.

Visits are evenly spaced at ``visits_per_year`` from ``start`` over
``baseline`` (the first and last visit are ``baseline`` apart when
``baseline * visits_per_year`` is a whole number), or given as an explicit
list of ``dates``.  No visit may fall while the source is closer to the Sun
than ``sun_avoidance``: the Sun's apparent (geocentric) position is taken from
astropy's :func:`~astropy.coordinates.get_sun` and compared with the source's
ICRS position.  Regular visits that fall inside the exclusion window move to
the nearest allowed day (a day not already taken by another visit); explicit
dates inside it are an error that names them.

``schedule`` chooses where the visits of a start/baseline plan go:
``"even"`` (the regular cadence above), ``"parallax"`` (minimum parallax
error) or ``"motion"`` (minimum proper-motion error along the expected
direction of motion, direction-averaged when unknown).  The optimised
schedules keep the even plan's number of visits in every campaign year, put
each visit at 00:00 TDB of a Sun-allowed day (one visit a day) and marginalise
every other timing parameter; the optimiser is :mod:`kinage.timing.design`.
"""

from dataclasses import dataclass, field

import astropy.units as u
import numpy as np
from astropy.time import Time

from ..errors import InputError
from .design import SCHEDULES, criterion, exchange_design, year_blocks

#: default Sun avoidance by ``[campaign] band``, deg: X-ray and optical space telescopes keep roughly 45-50 deg
#: from the Sun, radio telescopes observe to within a few degrees (timing that close suffers from the solar
#: wind, hence 10 deg); typical values of the trade (common practice, values from memory)
BAND_SUN_AVOIDANCE_DEG = {"xray": 45.0, "optical": 45.0, "radio": 10.0}
#: without a band the X-ray value (the default of kinage 0.2)
DEFAULT_SUN_AVOIDANCE_DEG = 45.0


def sun_avoidance(campaign):
    """The Sun-avoidance angle (deg) and where it comes from.

    Parameters
    ----------
    campaign : Section
        The scenario's ``[campaign]``.

    Returns
    -------
    (float, str)
        The angle and "given", "default for band 'radio'" or "default (no band given)".
    """
    given = campaign.value("sun_avoidance", "deg", None)
    if given is not None:
        return float(given), "given"
    band = campaign.get("band")
    if band in BAND_SUN_AVOIDANCE_DEG:
        return BAND_SUN_AVOIDANCE_DEG[band], f"default for band '{band}'"
    return DEFAULT_SUN_AVOIDANCE_DEG, "default (no band given)"


def sun_avoidance_words(campaign):
    """'to keep 45 deg from the Sun (default for band 'xray'; set [campaign] sun_avoidance or band to change it)'."""
    angle, source = sun_avoidance(campaign)
    if source == "given":
        return f"to keep {angle:g} deg from the Sun ([campaign] sun_avoidance)"
    return f"to keep {angle:g} deg from the Sun ({source}; set [campaign] sun_avoidance or band to change it)"

__all__ = ["ObservingPlan", "SunWindow", "sun_separation", "regular_epochs", "make_plan", "optimised_epochs",
           "schedule_of", "scenario_plan", "schedule_combinations", "candidate_rows", "SUN_MARGIN_DEG", "SCHEDULES"]

_YEAR_D = 365.25
#: optimised visits keep this much more than the Sun-avoidance angle, deg (common practice, no source:
#: covers the ~0.01 deg differences between ways of computing the Sun's direction)
SUN_MARGIN_DEG = 0.05


def sun_separation(mjd_tdb, ra_deg, dec_deg):
    """Angle between the Sun and the source, degrees, at MJD(TDB) epochs.

    Parameters
    ----------
    mjd_tdb : float or ndarray, days (TDB)
    ra_deg, dec_deg : float, degrees (ICRS)
    """
    import warnings

    from astropy.coordinates import SkyCoord, get_sun
    from astropy.utils import iers
    from erfa import ErfaWarning

    t = Time(np.atleast_1d(np.asarray(mjd_tdb, float)), format="mjd", scale="tdb")
    with warnings.catch_warnings(), iers.conf.set_temp("auto_download", False):
        # future epochs lie beyond the leap-second table ("dubious year"): harmless
        # at the degree level of this check; never download Earth-orientation data
        warnings.simplefilter("ignore", ErfaWarning)
        warnings.filterwarnings("ignore", module="astropy.utils.iers")
        sun = get_sun(t)
        src = SkyCoord(ra_deg * u.deg, dec_deg * u.deg, frame="icrs")
        # compare directions in the GCRS frame of each epoch
        return sun.separation(src.transform_to(sun.frame)).to_value(u.deg)


@dataclass
class SunWindow:
    """Allowed observing days on a daily grid, for one source and one angle.

    Attributes
    ----------
    mjd : ndarray
        Daily grid, MJD (TDB).
    allowed : ndarray of bool
        Source at least ``angle_deg`` from the Sun on that day.
    """

    ra_deg: float
    dec_deg: float
    angle_deg: float
    mjd: np.ndarray
    allowed: np.ndarray
    separation_deg: np.ndarray | None = None
    _rows: dict = field(default_factory=dict, repr=False, compare=False)

    @classmethod
    def compute(cls, ra_deg, dec_deg, angle_deg, mjd_start, mjd_stop):
        """Evaluate the constraint daily from ``mjd_start - 200`` to ``mjd_stop + 200``."""
        grid = np.arange(np.floor(mjd_start) - 200, np.ceil(mjd_stop) + 201, 1.0)
        if angle_deg <= 0:
            return cls(ra_deg, dec_deg, angle_deg, grid, np.ones(grid.size, bool))
        sep = sun_separation(grid, ra_deg, dec_deg)
        return cls(ra_deg, dec_deg, angle_deg, grid, sep >= angle_deg, sep)

    def safe(self, margin_deg=SUN_MARGIN_DEG):
        """Days at least ``angle + margin`` from the Sun (all days when there is no constraint)."""
        if self.separation_deg is None:
            return self.allowed.copy()
        return self.separation_deg >= self.angle_deg + margin_deg

    def check_cadence(self, start_mjd, visits_per_year):
        """InputError when a year from ``start_mjd`` has fewer allowed days than visits."""
        day0 = np.floor(start_mjd)
        year = (self.mjd >= day0) & (self.mjd < day0 + 365)
        n_ok = int(np.count_nonzero(self.allowed[year]))
        if n_ok < np.ceil(visits_per_year - 1e-9):
            raise InputError("[campaign] visits_per_year",
                             f"{visits_per_year:g} visits a year but only {n_ok} days a year keep "
                             f"{self.angle_deg:g} deg from the Sun: lower visits_per_year or sun_avoidance")

    def shift(self, mjd):
        """Move epochs to the nearest allowed, not yet used day; returns new MJDs.

        The fractional part of each epoch is kept.  Epochs are handled in time
        order, so an earlier visit has the first claim on a day.  A day is
        allowed with :data:`SUN_MARGIN_DEG` to spare, and, for epochs during the
        day, only when the next day's 00:00 is allowed too.
        """
        mjd = np.asarray(mjd, float)
        ok = self.safe()
        if np.any(mjd - np.floor(mjd) > 1e-9):
            ok = ok & np.append(ok[1:], False)
        ok_days = self.mjd[ok]
        if ok_days.size == 0:
            raise InputError("[campaign] sun_avoidance",
                             f"the source is never {self.angle_deg:g} deg from the Sun; lower the angle")
        out = mjd.copy()
        taken = set()
        allowed_set = set(ok_days.tolist())
        for i in np.argsort(mjd):
            day = float(np.floor(mjd[i]))
            if day in allowed_set and day not in taken:
                taken.add(day)
                continue
            # walk outwards from the nearest allowed day until a free one is found
            k = int(np.searchsorted(ok_days, day))
            left, right = k - 1, k
            while True:
                dl = day - ok_days[left] if left >= 0 else np.inf
                dr = ok_days[right] - day if right < ok_days.size else np.inf
                if not np.isfinite(dl) and not np.isfinite(dr):
                    raise InputError("[campaign] visits_per_year",
                                     "more visits than allowed days: lower the cadence or the Sun-avoidance angle")
                if dl <= dr:
                    cand, left = ok_days[left], left - 1
                else:
                    cand, right = ok_days[right], right + 1
                if cand not in taken:
                    taken.add(float(cand))
                    out[i] = cand + (mjd[i] - day)
                    break
        return out


@dataclass
class ObservingPlan:
    """Visit epochs and exposures.

    Attributes
    ----------
    mjd : ndarray
        Visit epochs, MJD (TDB), sorted.
    exposure : ndarray
        Exposure per visit, s (NaN when not given).
    shift_days : ndarray
        How far each visit was moved to respect the Sun constraint, days.
    requested_baseline_yr : float
        Baseline asked for (the span of explicit dates when dates are given).
    sun_avoidance_deg : float
    notes : list of str
    schedule : str
        ``'even'``, ``'parallax'``, ``'motion'`` or ``'dates'`` (explicit dates or a TOA table).
    sun_avoidance_source : str
        Where the angle comes from (see :func:`sun_avoidance`).
    """

    mjd: np.ndarray
    exposure: np.ndarray
    shift_days: np.ndarray
    requested_baseline_yr: float
    sun_avoidance_deg: float
    notes: list = field(default_factory=list)
    schedule: str = "even"
    sun_avoidance_source: str = "given"

    @property
    def n_visits(self):
        return int(self.mjd.size)

    @property
    def span_yr(self):
        """Time from the first to the last visit, Julian years."""
        return float((self.mjd[-1] - self.mjd[0]) / _YEAR_D) if self.mjd.size > 1 else 0.0

    @property
    def times(self):
        """Visit epochs as astropy Time (TDB)."""
        return Time(self.mjd, format="mjd", scale="tdb")


def regular_epochs(start_mjd, baseline_yr, visits_per_year):
    """Evenly spaced epochs, MJD: start + k / visits_per_year for k = 0 .. floor(B v)."""
    n = int(np.floor(baseline_yr * visits_per_year + 1e-9)) + 1
    return start_mjd + np.arange(n) * _YEAR_D / visits_per_year


def schedule_of(campaign):
    """The ``[campaign] schedule`` name, checked (InputError naming the key otherwise)."""
    name = campaign.get("schedule") or "even"
    name = str(name).strip().lower()
    if name == "birthplace":
        raise InputError("[campaign] schedule", "'birthplace' is chosen by the birthplace forecast: use kinage "
                         "forecast --birthplace, kinage.forecast(..., birthplace=True) or [campaign] "
                         "birthplace_forecast = true")
    if name not in SCHEDULES:
        raise InputError("[campaign] schedule", f"expected one of {', '.join(repr(n) for n in SCHEDULES)} "
                         f"(got {campaign.get('schedule')!r})")
    if name != "even" and campaign.get("dates") is not None:
        raise InputError("[campaign] schedule", f"'{name}' places the visits itself, but explicit dates are given: "
                         "remove schedule or dates")
    return name


def make_plan(campaign, ra_deg, dec_deg, *, baseline_yr=None, window=None, direction=None, schedule=None):
    """The observing plan a ``[campaign]`` section describes.

    Parameters
    ----------
    campaign : Section
        The scenario's ``[campaign]`` table.
    ra_deg, dec_deg : float, degrees
        Source position (ICRS).
    baseline_yr : float, optional
        Override the baseline (used by the baseline sweep), years.
    window : SunWindow, optional
        A precomputed constraint covering the plan (saves recomputation).
    direction : ndarray, optional
        Unit vector (ra*cos dec, dec) of the expected motion, for ``schedule = "motion"``
        (direction-averaged when None).
    schedule : str, optional
        Override ``[campaign] schedule``.

    Returns
    -------
    ObservingPlan
    """
    name = schedule_of(campaign) if schedule is None else schedule
    if name not in SCHEDULES:
        raise InputError("[campaign] schedule", f"expected one of {', '.join(SCHEDULES)} (got {name!r})")
    angle = sun_avoidance(campaign)[0]
    exposure = campaign.value("exposure", "s", np.nan)
    dates = campaign.get("dates")
    if dates is not None and baseline_yr is None:
        mjd = np.sort(np.asarray(dates.tdb.mjd, float).ravel())
        if np.any(np.diff(mjd) <= 0):
            raise InputError("[campaign] dates", "dates must all differ")
        if angle > 0:
            sep = sun_separation(mjd, ra_deg, dec_deg)
            bad = np.flatnonzero(sep < angle)
            if bad.size:
                shown = ", ".join(f"{Time(mjd[i], format='mjd', scale='tdb').isot[:10]} ({sep[i]:.1f} deg)"
                                  for i in bad)
                raise InputError("[campaign] dates",
                                 f"the source is closer than {angle:g} deg to the Sun on {shown}")
        span = (mjd[-1] - mjd[0]) / _YEAR_D
        return ObservingPlan(mjd, np.full(mjd.size, exposure), np.zeros(mjd.size), span, angle, schedule="dates")
    start = campaign.get("start")
    vpy = campaign.get("visits_per_year")
    if start is None or vpy is None:
        raise InputError("[campaign] start", "start, baseline and visits_per_year are needed for a plan")
    if baseline_yr is None:
        baseline_yr = campaign.value("baseline", "yr")
    if baseline_yr is None:
        raise InputError("[campaign] baseline", "required for a plan")
    if baseline_yr < 1.0 / vpy:
        raise InputError("[campaign] baseline",
                         f"shorter than one visit interval ({baseline_yr:.3g} yr < {1 / vpy:.3g} yr)")
    nominal = regular_epochs(float(start.tdb.mjd), baseline_yr, vpy)
    if window is None:
        window = SunWindow.compute(ra_deg, dec_deg, angle, nominal[0], nominal[-1])
    window.check_cadence(nominal[0], vpy)
    if name != "even":
        mjd = optimised_epochs(name, ra_deg, dec_deg, nominal, baseline_yr, window,
                               spin_terms=int(campaign.get("spin_terms", 2)), direction=direction)
        what = "parallax error" if name == "parallax" else "proper-motion error along the expected motion"
        notes = [f"visits placed to minimise the {what} ({mjd.size} visits, as many per year as the even plan)"]
        return ObservingPlan(mjd, np.full(mjd.size, exposure), np.zeros(mjd.size), float(baseline_yr), angle, notes,
                             schedule=name)
    mjd = window.shift(nominal)
    order = np.argsort(mjd)
    shift = (mjd - nominal)[order]
    notes = []
    if np.any(shift != 0):
        notes.append(f"{int(np.count_nonzero(shift))} of {mjd.size} visits moved by up to "
                     f"{np.max(np.abs(shift)):.0f} d {sun_avoidance_words(campaign)}")
    return ObservingPlan(mjd[order], np.full(mjd.size, exposure), shift, float(baseline_yr), angle, notes)


def scenario_plan(scenario, **kw):
    """The plan of a scenario's ``[campaign]``, with the expected direction of motion for ``"motion"``.

    The same plan the forecast uses (forecast and simulation then agree on the dates).
    """
    from .inputs import expected_proper_motion

    c = scenario.campaign
    ra, dec = scenario.star.value("ra", "deg"), scenario.star.value("dec", "deg")
    direction = expected_proper_motion(scenario).direction if schedule_of(c) == "motion" else None
    return make_plan(c, ra, dec, direction=direction, **kw)


def schedule_combinations(schedule, direction, n_parameters):
    """C matrix (p, k) of the schedule's criterion tr(C^T Cov C).

    Parameter order of :mod:`kinage.timing.model`: ra, dec, pm_ra_cosdec, pm_dec, parallax, spin terms.
    """
    cmat = np.zeros((n_parameters, 1 if schedule == "parallax" or direction is not None else 2))
    if schedule == "parallax":
        cmat[4, 0] = 1.0
    elif direction is not None:
        cmat[2:4, 0] = np.asarray(direction, float) / np.hypot(*direction)
    else:  # direction-averaged: (var_ra + var_dec) / 2
        cmat[2, 0] = cmat[3, 1] = np.sqrt(0.5)
    return cmat


def candidate_rows(ra_deg, dec_deg, mjd, spin_terms=2):
    """Timing design-matrix rows (s per parameter unit) at candidate epochs, MJD (TDB).

    The spin frequency only scales the spin columns, so it does not change any
    marginalised astrometric error; a unit frequency is used.
    """
    from .model import TimeGrid, TimingModel

    model = TimingModel(ra_deg, dec_deg, 1.0, 0.0, 0.0, spin_terms)
    mid = Time(np.round(0.5 * (mjd[0] + mjd[-1])), format="mjd", scale="tdb")
    grid = TimeGrid.from_times(Time(mjd, format="mjd", scale="tdb"), mid)
    return model.design_matrix(grid, model.start_vector())


def optimised_epochs(schedule, ra_deg, dec_deg, nominal, baseline_yr, window, *, spin_terms=2, direction=None,
                     rng=None):
    """Visit epochs (MJD TDB, sorted) of an optimised schedule.

    Parameters
    ----------
    schedule : {'parallax', 'motion'}
    ra_deg, dec_deg : float, degrees
    nominal : ndarray
        The even plan's epochs, MJD (TDB): they fix the start and the visits per campaign year.
    baseline_yr : float, yr
    window : SunWindow
    spin_terms : int
    direction : ndarray or None
        Expected direction of motion (ra*cos dec, dec).
    rng : numpy.random.Generator | int | None
        Random starts of the exchange algorithm (default: fixed seed).
    """
    start = float(nominal[0])
    stop = start + baseline_yr * _YEAR_D
    keep = (window.mjd >= np.ceil(start)) & (window.mjd <= stop) & window.safe()
    cand = window.mjd[keep]
    n_years = max(1, int(np.ceil(baseline_yr - 1e-9)))
    block, counts = year_blocks(cand, nominal, start, n_years)
    key = (float(cand[0]), float(cand[-1]), cand.size, spin_terms)
    if key not in window._rows:  # the design rows are shared by the schedules built on one window
        window._rows.clear()
        window._rows[key] = candidate_rows(ra_deg, dec_deg, cand, spin_terms)
    rows = window._rows[key]
    cmat = schedule_combinations(schedule, direction, rows.shape[1])
    even = window.shift(nominal)
    res = exchange_design(rows, cmat, block, counts, start=_nearest_free(cand, block, even, start), rng=rng)
    # the even plan itself is a candidate answer: an optimised schedule is never worse than it
    even_rows = candidate_rows(ra_deg, dec_deg, np.sort(even), spin_terms)
    even_value = criterion(even_rows / res.scale, cmat / res.scale[:, None])
    if even_value <= res.value:
        return np.sort(even)
    return cand[res.chosen]


def _nearest_free(cand, block, epochs, start):
    """Candidate indices nearest to ``epochs``, one per epoch, in the epoch's campaign year."""
    n_years = block.max() + 1
    eb = np.clip(np.floor((np.asarray(epochs) - start) / _YEAR_D + 1e-12).astype(int), 0, n_years - 1)
    free = np.ones(cand.size, bool)
    out = []
    for t, b in zip(epochs, eb):
        idx = np.flatnonzero((block == b) & free)
        if idx.size == 0:
            return None
        k = idx[np.argmin(np.abs(cand[idx] - t))]
        free[k] = False
        out.append(k)
    return np.array(out)
