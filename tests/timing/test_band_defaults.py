"""[campaign] band sets band defaults (Sun avoidance); keys given explicitly win."""

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import SkyCoord, get_sun
from astropy.time import Time

import kinage
from kinage.errors import InputError
from kinage.timing.plan import scenario_plan, sun_avoidance

STAR = {"name": "Brisk-7 (invented)", "ra": 101.3, "dec": 21.9, "epoch": "2027-01-01", "distance": "400 pc",
        "spin_period": "0.6677 s", "spin_period_derivative": 2e-15}
CAMPAIGN = {"start": "2027-03-01", "baseline": "2 yr", "visits_per_year": 12, "toa_error": "5 us"}


def _scenario(**campaign):
    return kinage.scenario_from_dict({"star": STAR, "campaign": {**CAMPAIGN, **campaign}})


@pytest.mark.parametrize("campaign, angle, source", [
    ({}, 45.0, "default (no band given)"),
    ({"band": "xray"}, 45.0, "default for band 'xray'"),
    ({"band": "radio"}, 10.0, "default for band 'radio'"),
    ({"band": "radio", "sun_avoidance": "30 deg"}, 30.0, "given"),  # an explicit key wins over the band
])
def test_band_sets_the_sun_avoidance_default(campaign, angle, source):
    assert sun_avoidance(_scenario(**campaign).campaign) == (angle, source)


def test_radio_band_keeps_visits_the_x_ray_default_would_move():
    # the plan keeps every visit at least the angle from the Sun, checked against astropy's own solar
    # position (get_sun, geocentric apparent); a radio campaign loses fewer visits than the X-ray default
    star = SkyCoord(STAR["ra"] * u.deg, STAR["dec"] * u.deg)
    moved = {}
    for band in ("radio", "xray"):
        plan = scenario_plan(_scenario(band=band))
        sun = get_sun(Time(plan.mjd, format="mjd", scale="tdb"))
        sep = SkyCoord(sun.ra, sun.dec).separation(star).deg  # GCRS vs ICRS directions differ by < 0.01 deg
        assert np.all(sep >= plan.sun_avoidance_deg - 0.05), band
        moved[band] = int(np.count_nonzero(plan.shift_days))
    assert moved["radio"] < moved["xray"]


def test_unknown_band_is_a_one_line_input_error():
    with pytest.raises(InputError, match="band"):
        _scenario(band="gamma")
