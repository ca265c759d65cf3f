"""Extended-precision times and phases against exact rational arithmetic (Python ``fractions``/``decimal``).

Requirement (project rule, no source): the phase round-off stays below 1 ns equivalent for a 1.5 ms pulsar over 30 years
(~6e11 cycles, where a float64 phase is rounded to ~1e-4 cycles = 100 ns).
"""

from decimal import Decimal, getcontext
from fractions import Fraction

import astropy.units as u
import numpy as np
import pytest
from astropy.time import Time

from kinage.timing import precision as pr
from kinage.timing.model import TimeGrid, TimingModel

pytestmark = pytest.mark.filterwarnings("ignore:ERFA function")

RNG = np.random.default_rng(5)
A = RNG.uniform(-1e9, 1e9, 500)
B = RNG.uniform(-1e3, 1e3, 500) * np.exp(RNG.uniform(-20, 20, 500))


def _exact(x):
    return Fraction(float(x))


def test_two_sum_and_two_prod_are_error_free():
    # Knuth TwoSum and Dekker TwoProduct: a + b = s + e and a b = p + e exactly (checked with fractions)
    s, e = pr.two_sum(A, B)
    p, f = pr.two_prod(A, B)
    for a, b, s_, e_, p_, f_ in zip(A, B, s, e, p, f):
        assert _exact(s_) + _exact(e_) == _exact(a) + _exact(b)
        assert _exact(p_) + _exact(f_) == _exact(a) * _exact(b)


def test_double_double_multiply_and_add_to_1e_30():
    hi, lo = pr.two_sum(A, B * 1e-9)
    f = 666.6666666666666  # ~1.5 ms pulsar, Hz
    ph, pl = pr.dd_mul_float(hi, lo, f)
    qh, ql = pr.dd_add_float(ph, pl, 0.123456789)
    for h, l_, a, b in zip(qh, ql, hi, lo):
        exact = (_exact(a) + _exact(b)) * _exact(f) + _exact(0.123456789)
        got = _exact(h) + _exact(l_)
        assert abs(got - exact) <= abs(exact) * Fraction(1, 10**30)


def _bare_grid(seconds_hi, seconds_lo):
    """A grid with the observer at the barycentre (no delays): the phase is pure spin."""
    n = seconds_hi.size
    return TimeGrid(Time(60000.0, format="mjd", scale="tdb"), seconds_hi, np.zeros((n, 3)), seconds_lo)


@pytest.mark.parametrize("freq, freq_dot", [(1 / 0.0015, -5e-16), (1 / 0.00273, -1.3e-15)])
def test_phase_of_millisecond_pulsar_over_30_years_below_1ns(freq, freq_dot):
    # 30 years either side of nothing: tau in [-15, 15] yr, 6e11 cycles at the ends
    span = 15 * 365.25 * 86400.0
    hi = np.linspace(-span, span, 301) + RNG.uniform(-1, 1, 301)
    lo = RNG.uniform(-1, 1, 301) * np.spacing(hi) / 2
    model = TimingModel(0.0, 0.0, freq, freq_dot, 0.0, 2)
    theta = model.start_vector(np.zeros(5), offsets=True)
    theta[5] = 0.3125
    theta[6] = 3.1e-12  # a fitted frequency offset, Hz, below float64 resolution of freq itself (1.1e-13)
    ph, pl, _, _ = model.phase_dd(_bare_grid(hi, lo), theta, offsets=True)
    n, frac = pr.split_phase(ph, pl)
    worst = 0.0
    naive_worst = 0.0
    for h, l_, nn, fr, ph_ in zip(hi, lo, n, frac, ph + pl):
        tau = _exact(h) + _exact(l_)
        exact = (_exact(0.3125) + (_exact(freq) + _exact(3.1e-12)) * tau + _exact(freq_dot) * tau * tau / 2)
        worst = max(worst, abs(float(_exact(nn) + _exact(fr) - exact)))
        naive_worst = max(naive_worst, abs(float(_exact(ph_) - exact)))
    assert worst / freq < 1e-12  # far below 1 ns (requirement), in seconds of time
    assert naive_worst / freq > 1e-9  # and the test has teeth: one float64 for the phase is off by > 1 ns


def test_time_grid_from_decimal_mjd_strings_is_exact_to_picoseconds():
    # the TOA table's full-precision decimal MJD -> seconds from the epoch, against decimal arithmetic
    getcontext().prec = 40
    texts = ["47892.000000000123456", "61234.987654321098765", "70123.500000000000001", "60000.1"]
    ref = Time("61000.25", format="mjd", scale="tdb")
    grid = TimeGrid.from_times(Time(np.array(texts), format="mjd", scale="tdb"), ref)
    for text, h, l_ in zip(texts, grid.seconds, grid.seconds_lo):
        exact = (Decimal(text) - Decimal("61000.25")) * 86400
        got = Decimal(float(h)) + Decimal(float(l_))  # exact binary values
        # astropy parses the string into two doubles (~1e-16 d = 10 ps); the seconds add nothing to that
        assert abs(got - exact) < Decimal("2e-11")


def test_simulated_times_survive_writing_and_reading(tmp_path):
    # decimal MJD text in the ECSV: ~1e-15 d; compare the read-back grid with the simulated one (< 10 ps)
    from kinage.io.scenario import scenario_from_dict
    from kinage.timing import read_toas, simulate_toas

    scn = scenario_from_dict({"star": {"ra": 15.0, "dec": -20.0, "spin_period": 0.00263, "distance": "900 pc",
                                       "pm_ra_cosdec": 3.0, "pm_dec": 2.0},
                              "campaign": {"start": "2026-03-01", "baseline": 4, "visits_per_year": 10,
                                           "toa_error": "0.1 us", "sun_avoidance": 0}})
    sim = simulate_toas(scn, rng=2)
    back = read_toas(sim.write(tmp_path / "t.ecsv"))
    ref = Time(61000.0, format="mjd", scale="tdb")
    a = TimeGrid.from_times(sim.table["mjd"], ref)
    b = TimeGrid.from_times(back["mjd"], ref)
    diff = (a.seconds - b.seconds) + (a.seconds_lo - b.seconds_lo)
    assert np.max(np.abs(diff)) < 1e-11
    assert np.max(np.abs((back["mjd"] - sim.table["mjd"]).to_value(u.s))) < 1e-9
