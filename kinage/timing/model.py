"""Timing model: spin phase plus astrometric (Roemer and parallax) delays.

A pulse observed at the geocentre at time t (TDB) left the barycentre frame
at t_b = t + D(t), with the delay (Lorimer & Kramer 2005, Handbook of Pulsar
Astronomy, ch. 8; Lorimer 2008, Living Rev. Relativ. 11, 8)

    D(t) = r(t).s(t) / c  -  (|r|^2 - (r.s)^2) / (2 c d),

r the Earth's barycentric position (astropy's built-in ephemeris, TDB) and
s(t) the unit vector to the star, whose ra*cos(dec) and dec move with the
proper motion from the reference epoch.  The second (parallax) term is linear
in the parallax varpi: (|r|^2 - (r.s)^2)/(2 c d) = varpi (|r|^2 - (r.s)^2)/(2 c AU).

The spin phase is phi(tau) = phi0 + freq tau + freq_dot tau^2/2 + freq_ddot tau^3/6 with
tau = t_b - t_epoch (s).  The timing residual of a TOA numbered N is
R = (phi - N) / freq (s).  Times are held as float64 seconds from the
reference epoch (ulp 0.1 us at 20 yr), computed from two-part astropy Times,
so no float64-MJD rounding (~0.6 us) enters.

Parameter vector order: ``ra`` offset (mas, along ra*cos dec), ``dec`` offset
(mas), ``pm_ra_cosdec`` (mas/yr), ``pm_dec`` (mas/yr), ``parallax`` (mas),
``phase`` (cycles), ``freq`` (Hz), ``freq_dot`` (Hz/s), ``freq_ddot`` (Hz/s^2) — the spin
frequency terms present are set by ``spin_terms`` (1 to 3).
Not modelled (documented limits): observatory offset from the geocentre,
solar Shapiro delay, dispersion; all negligible or absorbed for X-ray timing
of slow stars at the microsecond-to-millisecond level.
"""

from dataclasses import dataclass, replace

import astropy.constants as const
import astropy.units as u
import numpy as np
from astropy.time import Time

__all__ = [
    "ASTRO_PARAMETERS",
    "AU_LIGHT_S",
    "MAS_RAD",
    "SECONDS_PER_YEAR",
    "TimeGrid",
    "TimingModel",
    "earth_position",
]

ASTRO_PARAMETERS = ("ra", "dec", "pm_ra_cosdec", "pm_dec", "parallax")
SPIN_PARAMETERS = ("phase", "freq", "freq_dot", "freq_ddot")
C_M_S = const.c.to_value(u.m / u.s)
AU_LIGHT_S = const.au.to_value(u.m) / C_M_S  # 499.004784 s (IAU 2012 au)
MAS_RAD = np.pi / (180 * 3600e3)
SECONDS_PER_YEAR = 365.25 * 86400.0


def earth_position(times):
    """Earth's barycentric position in light-seconds, shape (n, 3), ICRS axes.

    Parameters
    ----------
    times : astropy.time.Time
        Epochs (any scale; converted to TDB by astropy).
    """
    from astropy.coordinates import get_body_barycentric_posvel

    pos, _ = get_body_barycentric_posvel("earth", times)
    return (pos.xyz.to_value(u.m) / C_M_S).T.reshape(-1, 3)


@dataclass(frozen=True)
class TimeGrid:
    """Arrival times as seconds from a reference epoch plus Earth positions.

    Attributes
    ----------
    ref : astropy.time.Time
        Reference epoch (TDB), also the astrometric and spin epoch.
    seconds : ndarray
        TDB seconds from ``ref``.
    earth : ndarray, shape (n, 3)
        Earth barycentric position, light-seconds.
    """

    ref: Time
    seconds: np.ndarray
    earth: np.ndarray

    @classmethod
    def from_times(cls, times, ref):
        """Build from astropy Times; differences are taken in two-part form."""
        times = Time(times).tdb
        ref = Time(ref).tdb
        sec = ((times.jd1 - ref.jd1) + (times.jd2 - ref.jd2)) * 86400.0
        return cls(ref, np.atleast_1d(np.asarray(sec, float)), earth_position(times))

    def times(self):
        """The epochs as astropy Time (TDB), precise to the two-part sum."""
        return self.ref + self.seconds * u.s

    @property
    def years(self):
        """Julian years from the reference epoch."""
        return self.seconds / SECONDS_PER_YEAR


def _unit(ra, dec):
    cd = np.cos(dec)
    return np.stack([cd * np.cos(ra), cd * np.sin(ra), np.sin(dec)], axis=-1)


def _tangent(ra, dec):
    """Unit vectors towards increasing ra (east) and dec (north)."""
    e_ra = np.stack([-np.sin(ra), np.cos(ra), np.zeros_like(ra)], axis=-1)
    e_dec = np.stack([-np.sin(dec) * np.cos(ra), -np.sin(dec) * np.sin(ra), np.cos(dec)], axis=-1)
    return e_ra, e_dec


@dataclass(frozen=True)
class TimingModel:
    """Reference position and spin; evaluates delays, phases and partials.

    Attributes
    ----------
    ra_deg, dec_deg : float, degrees
        Reference position at the reference epoch (ICRS).
    freq : float, Hz
    freq_dot : float, Hz/s
    freq_ddot : float, Hz/s^2
    spin_terms : int
        Number of fitted frequency terms (1: freq; 2: + freq_dot; 3: + freq_ddot).
    """

    ra_deg: float
    dec_deg: float
    freq: float = 1.0
    freq_dot: float = 0.0
    freq_ddot: float = 0.0
    spin_terms: int = 2

    @property
    def parameter_names(self):
        return ASTRO_PARAMETERS + SPIN_PARAMETERS[: 1 + self.spin_terms]

    @property
    def n_parameters(self):
        return 5 + 1 + self.spin_terms

    def start_vector(self, astro=(0.0, 0.0, 0.0, 0.0, 0.0)):
        """Parameter vector with the given astrometric values and this model's spin."""
        spin = (0.0, self.freq, self.freq_dot, self.freq_ddot)[: 1 + self.spin_terms]
        return np.concatenate([np.asarray(astro, float), spin])

    def with_spin(self, theta):
        """Copy whose freq, freq_dot, freq_ddot are taken from a parameter vector."""
        freq, freq_dot, freq_ddot = self._spin(theta)
        return replace(self, freq=float(freq), freq_dot=float(freq_dot), freq_ddot=float(freq_ddot))

    def _spin(self, theta):
        f = [self.freq, self.freq_dot, self.freq_ddot]
        f[: self.spin_terms] = theta[6:6 + self.spin_terms]
        return f

    # -- astrometric delays ----------------------------------------------------
    def direction(self, grid, astro):
        """Unit vector to the star at each time, shape (n, 3) (exact on the sphere)."""
        ra0, dec0 = np.radians(self.ra_deg), np.radians(self.dec_deg)
        off_ra = (astro[0] + astro[2] * grid.years) * MAS_RAD
        off_dec = (astro[1] + astro[3] * grid.years) * MAS_RAD
        return _unit(ra0 + off_ra / np.cos(dec0), dec0 + off_dec)

    def delay(self, grid, astro):
        """Full astrometric delay D(t), seconds."""
        s = self.direction(grid, astro)
        r = grid.earth
        rs = np.einsum("ij,ij->i", r, s)
        return rs - astro[4] * MAS_RAD * (np.einsum("ij,ij->i", r, r) - rs**2) / (2 * AU_LIGHT_S)

    def astro_partials(self, grid, astro=None):
        """dD/d(ra, dec, pm_ra_cosdec, pm_dec, parallax), shape (n, 5).

        Units: s/mas, s/mas, s/(mas/yr), s/(mas/yr), s/mas.  Evaluated at the
        reference direction (the delay is linear in these parameters to
        better than 1e-8 for offsets below 1 arcsec).
        """
        ra0, dec0 = np.radians(self.ra_deg), np.radians(self.dec_deg)
        if astro is not None:
            s = self.direction(grid, astro)
            ra = np.arctan2(s[:, 1], s[:, 0])
            dec = np.arcsin(np.clip(s[:, 2], -1, 1))
        else:
            ra, dec = np.full(grid.seconds.size, ra0), np.full(grid.seconds.size, dec0)
            s = _unit(ra, dec)
        e_ra, e_dec = _tangent(ra, dec)
        r = grid.earth
        rs = np.einsum("ij,ij->i", r, s)
        # the ra offset is along a great circle at dec0: d(ra)/d(offset) = 1/cos(dec0)
        d_ra = np.einsum("ij,ij->i", r, e_ra) * np.cos(dec) / np.cos(dec0) * MAS_RAD
        d_dec = np.einsum("ij,ij->i", r, e_dec) * MAS_RAD
        plx = 0.0 if astro is None else astro[4]
        # the parallax term also moves with s: d/ds of -(varpi)(|r|^2 - (r.s)^2)/(2 AU) = varpi (r.s) r / AU
        corr = plx * MAS_RAD * rs / AU_LIGHT_S
        d_ra = d_ra * (1 + corr)
        d_dec = d_dec * (1 + corr)
        d_plx = -(np.einsum("ij,ij->i", r, r) - rs**2) / (2 * AU_LIGHT_S) * MAS_RAD
        yr = grid.years
        return np.stack([d_ra, d_dec, d_ra * yr, d_dec * yr, d_plx], axis=1)

    # -- spin phase ----------------------------------------------------------
    def phase(self, grid, theta):
        """Spin phase (cycles) at the given arrival times for parameters ``theta``."""
        tau = grid.seconds + self.delay(grid, theta[:5])
        freq, freq_dot, freq_ddot = self._spin(theta)
        return theta[5] + tau * (freq + tau * (freq_dot / 2 + tau * freq_ddot / 6)), tau, (freq, freq_dot, freq_ddot)

    def residuals(self, grid, theta, pulse_numbers):
        """Timing residuals (phi - N)/freq, seconds."""
        phi, _, (freq, _, _) = self.phase(grid, theta)
        return (phi - pulse_numbers) / freq

    def pulse_numbers(self, grid, theta):
        """Nearest whole pulse numbers for the given parameters (phase connection)."""
        return np.round(self.phase(grid, theta)[0])

    def design_matrix(self, grid, theta, pulse_numbers=None):
        """dR/dtheta, shape (n, p), seconds per parameter unit.

        Astrometric columns are the delay partials times f(tau)/freq; spin
        columns are 1/freq, tau/freq, tau^2/(2 freq), tau^3/(6 freq) (minus R/freq for
        the freq column, from the normalisation of R).
        """
        phi, tau, (freq, freq_dot, freq_ddot) = self.phase(grid, theta)
        inst = (freq + tau * (freq_dot + tau * freq_ddot / 2)) / freq
        astro = self.astro_partials(grid, theta[:5]) * inst[:, None]
        cols = [np.full(tau.size, 1.0 / freq)]
        r = 0.0 if pulse_numbers is None else (phi - pulse_numbers) / freq
        powers = (tau, tau**2 / 2, tau**3 / 6)
        for k in range(self.spin_terms):
            c = powers[k] / freq
            if k == 0:
                c = c - r / freq
            cols.append(c)
        return np.column_stack([astro] + cols)
