"""Observing plan: cadence, Sun avoidance checked with astropy, bad plans."""

import numpy as np
import pytest
from astropy.coordinates import SkyCoord, get_sun
from astropy.time import Time
import astropy.units as u

from kinage.errors import InputError, ScenarioError
from kinage.io.scenario import scenario_from_dict
from kinage.timing.plan import make_plan, regular_epochs

# an ecliptic-plane source (ra 90 deg, dec ~ +23.4 deg lies on the ecliptic): the Sun passes it every June
RA, DEC = 90.0, 23.44
# future dates lie beyond the leap-second table: ERFA warns "dubious year", harmless here
pytestmark = pytest.mark.filterwarnings("ignore:ERFA function")


def _campaign(**kw):
    c = {"start": "2028-01-01", "baseline": 3, "visits_per_year": 12, "toa_error": "1 ms", "sun_avoidance": 45}
    c.update(kw)
    return scenario_from_dict({"star": {"ra": RA, "dec": DEC}, "campaign": c}).campaign


def _dated_campaign(dates):
    # explicit dates replace start/baseline/visits_per_year (giving both is an input conflict)
    c = {"dates": dates, "toa_error": "1 ms", "sun_avoidance": 45}
    return scenario_from_dict({"star": {"ra": RA, "dec": DEC}, "campaign": c}).campaign


def _sun_angle(mjd):
    # independent check straight from astropy: geocentric Sun vs the source
    t = Time(mjd, format="mjd", scale="tdb")
    sun = get_sun(t)
    return sun.separation(SkyCoord(RA * u.deg, DEC * u.deg).transform_to(sun.frame)).deg


def test_regular_cadence():
    mjd = regular_epochs(60000.0, 2.0, 4)
    assert mjd.size == 9
    assert np.allclose(np.diff(mjd), 365.25 / 4)


def test_visits_respect_sun_avoidance_and_move_to_nearest_day():
    c = _campaign()
    plan = make_plan(c, RA, DEC)
    nominal = regular_epochs(Time("2028-01-01", scale="tdb").mjd, 3, 12)
    assert plan.n_visits == nominal.size
    assert np.all(_sun_angle(plan.mjd) >= 45.0 - 0.05)
    assert np.count_nonzero(plan.shift_days) >= 3  # June/July visits moved every year
    assert np.unique(np.floor(plan.mjd)).size == plan.n_visits  # no two visits on one day
    # an unmoved nominal visit was allowed; a moved one was not
    moved = plan.shift_days != 0
    assert np.all(_sun_angle(nominal[moved]) < 45.0 + 0.05)
    assert np.max(np.abs(plan.shift_days)) < 120


def test_no_avoidance_keeps_nominal_epochs():
    plan = make_plan(_campaign(sun_avoidance=0), RA, DEC)
    assert np.all(plan.shift_days == 0)


def test_explicit_dates_inside_sun_window_are_named():
    c = _dated_campaign(["2028-01-10", "2028-06-21", "2028-10-01"])
    with pytest.raises(InputError, match=r"dates.*2028-06-21"):
        make_plan(c, RA, DEC)


def test_explicit_dates_allowed():
    c = _dated_campaign(["2028-01-10", "2028-03-21", "2028-10-01"])
    plan = make_plan(c, RA, DEC)
    assert plan.n_visits == 3
    assert plan.span_yr == pytest.approx((plan.mjd[-1] - plan.mjd[0]) / 365.25)


def test_explicit_dates_with_regular_plan_keys_is_a_conflict():
    with pytest.raises(ScenarioError, match="dates"):
        _campaign(dates=["2028-01-10", "2028-03-21", "2028-10-01"])


def test_baseline_shorter_than_one_interval():
    with pytest.raises((InputError, ScenarioError), match="baseline"):
        make_plan(_campaign(baseline=0.05, visits_per_year=4), RA, DEC)
    c = _campaign()
    with pytest.raises(InputError, match="baseline"):
        make_plan(c, RA, DEC, baseline_yr=0.01)
