"""Optimised visit schedules: exchange algorithm vs exhaustive search, the schedules' promises checked with an
independent Fisher matrix and astropy's Sun, the forecast's warnings, words and figures, bad input.

Method under test: the exchange algorithm for exact c-optimal designs on the Fisher information
(Fedorov 1972, Theory of Optimal Experiments; Atkinson, Donev & Tobias 2007, Optimum Experimental
Designs, with SAS, ch. 12), nuisance parameters kept in the information matrix.
"""

import itertools
import json

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import SkyCoord, get_body_barycentric, get_sun
from astropy.table import Table
from astropy.time import Time

from kinage.cli import main
from kinage.errors import InputError
from kinage.io.scenario import scenario_from_dict
from kinage.timing.design import criterion, exchange_design, year_blocks
from kinage.timing.plan import SunWindow, candidate_rows, make_plan, regular_epochs, schedule_combinations

pytestmark = pytest.mark.filterwarnings("ignore:ERFA function", "ignore:.*dubious year")

# -- independent references (numpy + astropy only) -----------------------------------------------------
C_M_S = 299792458.0                  # exact (SI)
AU_LIGHT_S = 149597870700.0 / C_M_S  # IAU 2012 au in light-seconds
MAS = np.pi / (180 * 3600e3)


def _delay(r, ra, dec, p, years):
    """Roemer + parallax delay r.s/c - (|r|^2 - (r.s)^2)/(2 c d), s (Lorimer & Kramer 2005, Handbook of
    Pulsar Astronomy, ch. 8); p = (dra*, ddec, pm_ra*, pm_dec [mas, mas/yr], parallax [mas])."""
    d = np.radians(dec) + (p[1] + p[3] * years) * MAS
    a = np.radians(ra) + (p[0] + p[2] * years) * MAS / np.cos(np.radians(dec))
    s = np.stack([np.cos(d) * np.cos(a), np.cos(d) * np.sin(a), np.sin(d)], axis=1)
    rs = np.sum(r * s, axis=1)
    return rs - p[4] * MAS * (np.sum(r * r, axis=1) - rs**2) / (2 * AU_LIGHT_S)


def independent_errors(mjd, ra, dec, sigma_s, direction, epoch_mjd=None, spin_terms=2):
    """Parallax and proper-motion errors from a Fisher matrix built here: numerical partials of the delay
    formula with astropy's Earth positions, spin polynomial 1, t, t^2/2 (white noise sigma_s)."""
    mjd = np.asarray(mjd, float)
    epoch = np.round(0.5 * (mjd[0] + mjd[-1])) if epoch_mjd is None else epoch_mjd
    t = Time(mjd, format="mjd", scale="tdb")
    r = get_body_barycentric("earth", t).xyz.to_value(u.m).T / C_M_S
    years = (mjd - epoch) / 365.25
    cols = []
    for k in range(5):
        h = np.zeros(5)
        h[k] = 10.0
        cols.append((_delay(r, ra, dec, h, years) - _delay(r, ra, dec, -h, years)) / 20.0)
    sec = (mjd - epoch) * 86400.0
    cols += [np.ones_like(sec), sec, sec**2 / 2, sec**3 / 6][: 1 + spin_terms]
    x = np.column_stack(cols) / sigma_s
    scale = np.linalg.norm(x, axis=0)
    cov = np.linalg.inv((x / scale).T @ (x / scale)) / np.outer(scale, scale)
    d = np.asarray(direction, float) / np.hypot(*direction)
    return {"parallax": float(np.sqrt(cov[4, 4])), "pm_along": float(np.sqrt(d @ cov[2:4, 2:4] @ d))}


def sun_angle(mjd, ra, dec):
    """Sun-source angle, deg, from astropy's get_sun (geocentric apparent Sun)."""
    sun = get_sun(Time(np.asarray(mjd, float), format="mjd", scale="tdb"))
    return sun.separation(SkyCoord(ra * u.deg, dec * u.deg).transform_to(sun.frame)).deg


# -- the optimiser against brute force -----------------------------------------------------------------
def _exhaustive(rows, cmat, blocks, counts):
    """Brute force: the criterion of every admissible design (every subset of each block); the minimum."""
    scale = np.sqrt(np.mean(rows**2, axis=0))
    x, cm = rows / scale, cmat / scale[:, None]
    info = []
    for b, n in enumerate(counts):
        subsets = np.array(list(itertools.combinations(np.flatnonzero(blocks == b), n)))
        info.append(np.einsum("sni,snj->sij", x[subsets], x[subsets]))
    total = (info[0][:, None] + info[1][None, :]).reshape(-1, x.shape[1], x.shape[1])
    sol = np.linalg.solve(total, np.broadcast_to(cm, (total.shape[0],) + cm.shape))
    return float(np.min(np.einsum("kpc,pc->k", sol, cm)))


@pytest.mark.parametrize("schedule,direction", [("parallax", None), ("motion", (0.6, -0.8)), ("motion", None)])
def test_exchange_finds_the_exhaustive_optimum(schedule, direction):
    # two campaign years, 10 candidate days each (every 36.5 d), 5 visits a year, spin_terms=1 (7 parameters):
    # 252^2 = 63,504 designs searched exhaustively (the definition of the exact optimum)
    start = 61500.0
    cand = start + np.arange(20) * 36.5
    rows = candidate_rows(210.0, 35.0, cand, spin_terms=1)
    block, counts = year_blocks(cand, start + np.arange(10) * 73.05, start, 2)
    assert counts.tolist() == [5, 5]
    cmat = schedule_combinations(schedule, None if direction is None else np.array(direction), rows.shape[1])
    best = _exhaustive(rows, cmat, block, counts)
    res = exchange_design(rows, cmat, block, counts)
    assert res.value == pytest.approx(best, rel=1e-6)
    assert criterion(rows[res.chosen] / res.scale, cmat / res.scale[:, None]) == pytest.approx(best, rel=1e-6)
    assert np.bincount(block[res.chosen], minlength=2).tolist() == [5, 5]


# -- the schedules' promises ---------------------------------------------------------------------------
def _campaign(ra, dec, **kw):
    c = {"start": "2029-02-10", "baseline": 3, "visits_per_year": 4, "toa_error": "1 ms", "sun_avoidance": 50}
    c.update(kw)
    return scenario_from_dict({"star": {"ra": ra, "dec": dec}, "campaign": c}).campaign


# invented stars: ra, dec (deg), position angle of the motion (deg east of north); the third near the ecliptic
STARS = [(247.3, -12.8, 30.0), (31.0, 62.0, 140.0), (118.5, 21.0, 250.0), (300.2, -70.1, 300.0)]


@pytest.mark.parametrize("ra,dec,pa", STARS)
def test_motion_schedule_never_worse_than_even(ra, dec, pa):
    c = _campaign(ra, dec)
    direction = np.array([np.sin(np.radians(pa)), np.cos(np.radians(pa))])
    start = Time("2029-02-10", scale="tdb").mjd
    window = SunWindow.compute(ra, dec, 50.0, start, start + 3.1 * 365.25)
    even = make_plan(c, ra, dec, window=window)
    motion = make_plan(c, ra, dec, window=window, direction=direction, schedule="motion")
    assert motion.n_visits == even.n_visits and motion.schedule == "motion"
    # errors from this test's own Fisher matrix, not kinage's
    e_even = independent_errors(even.mjd, ra, dec, 1e-3, direction)
    e_motion = independent_errors(motion.mjd, ra, dec, 1e-3, direction)
    assert e_motion["pm_along"] <= e_even["pm_along"] * (1 + 1e-6)
    assert np.all(sun_angle(motion.mjd, ra, dec) >= 50.0)
    # as many visits in each campaign year as the regular cadence
    nominal = regular_epochs(start, 3, 4)
    yr = lambda m: np.clip(np.floor((m - start) / 365.25), 0, 2).astype(int)  # noqa: E731
    assert np.bincount(yr(motion.mjd), minlength=3).tolist() == np.bincount(yr(nominal), minlength=3).tolist()
    assert np.unique(np.floor(motion.mjd)).size == motion.n_visits  # one visit a day
