"""Allowed observing days and the cadence limit against astropy's Sun, day by day.

The forecast builds its plan on a ``SunWindow`` (``SunWindow.compute`` then ``make_plan``, as
``kinage.timing.forecast`` calls them): a day (00:00 TDB) is allowed when the source is at least
``sun_avoidance`` from the Sun, and a cadence with more visits a year than allowed days is a one-line input
error.  The reference here is astropy alone: ``get_sun`` (geocentric apparent Sun) and ``SkyCoord.separation``
for every day of the window, and a count of the allowed days in the first year.  Sources and dates are invented.
"""

import numpy as np
import pytest
import astropy.units as u
from astropy.coordinates import SkyCoord, get_sun
from astropy.time import Time

from kinage.errors import InputError
from kinage.io.scenario import scenario_from_dict
from kinage.timing.plan import SunWindow, make_plan

# future dates lie beyond the leap-second table: ERFA warns "dubious year", harmless at this level
pytestmark = pytest.mark.filterwarnings("ignore:ERFA function")

START = "2029-03-10"
# (ra, dec, angle): an ecliptic source with a narrow window (about two months a year) and a high-latitude one
CASES = [(90.0, 23.44, 150.0), (212.5, -41.0, 60.0)]


def _astropy_separation(mjd, ra, dec):
    t = Time(mjd, format="mjd", scale="tdb")
    sun = get_sun(t)  # GCRS at each epoch; the source is put into that frame before the angle is taken
    return sun.separation(SkyCoord(ra * u.deg, dec * u.deg).transform_to(sun.frame)).to_value(u.deg)


@pytest.mark.parametrize("ra, dec, angle", CASES)
def test_allowed_days_match_astropy_day_by_day(ra, dec, angle):
    start = Time(START, scale="tdb").mjd
    window = SunWindow.compute(ra, dec, angle, start, start + 730)
    sep = _astropy_separation(window.mjd, ra, dec)
    clear = np.abs(sep - angle) > 1e-3  # days on the boundary itself are left out (none expected, few at most)
    assert np.count_nonzero(~clear) <= 2
    np.testing.assert_array_equal(window.allowed[clear], sep[clear] >= angle)
    assert 0 < np.count_nonzero(window.allowed) < window.mjd.size  # both kinds of days occur


@pytest.mark.parametrize("ra, dec, angle", CASES)
def test_plan_visits_fall_on_days_astropy_allows(ra, dec, angle):
    c = scenario_from_dict({"star": {"ra": ra, "dec": dec},
                            "campaign": {"start": START, "baseline": 2, "visits_per_year": 20, "toa_error": 1e-3,
                                         "sun_avoidance": angle}}).campaign
    plan = make_plan(c, ra, dec)
    assert plan.n_visits == 41
    assert np.all(_astropy_separation(plan.mjd, ra, dec) >= angle)


def test_cadence_limit_is_the_number_of_allowed_days_in_a_year():
    ra, dec, angle = CASES[0]
    start = Time(START, scale="tdb").mjd
    days = np.arange(np.floor(start), np.floor(start) + 365)
    sep = _astropy_separation(days, ra, dec)
    assert np.min(np.abs(sep - angle)) > 1e-3  # no day on the boundary: the count is exact
    n_allowed = int(np.count_nonzero(sep >= angle))
    assert 40 < n_allowed < 80  # about two months: the Sun is 150 deg away for ~60 days (ecliptic geometry)
    window = SunWindow.compute(ra, dec, angle, start, start + 365)
    window.check_cadence(start, n_allowed)  # as many visits as allowed days: accepted
    with pytest.raises(InputError, match=r"visits_per_year.*only %d days" % n_allowed):
        window.check_cadence(start, n_allowed + 1)
    # the same limit through the plan the forecast builds
    c = scenario_from_dict({"star": {"ra": ra, "dec": dec},
                            "campaign": {"start": START, "baseline": 1, "visits_per_year": n_allowed + 1,
                                         "toa_error": 1e-3, "sun_avoidance": angle}}).campaign
    with pytest.raises(InputError, match="visits_per_year"):
        make_plan(c, ra, dec)
