"""Timing model: spin phase plus astrometric, Shapiro and dispersion delays.

A pulse observed at time t (TDB at the observer) left the barycentre frame
at t_b = t + D(t), with the geometric delay (Lorimer & Kramer 2005, Handbook
of Pulsar Astronomy, ch. 8; Lorimer 2008, Living Rev. Relativ. 11, 8)

    D_geo(t) = r(t).s(t) / c  -  (|r|^2 - (r.s)^2) / (2 c d),

r the observer's barycentric position (Earth centre, or Earth centre plus a
telescope site: :mod:`kinage.timing.geometry`) and s(t) the unit vector to
the star, whose ra*cos(dec) and dec move with the proper motion from the
reference epoch.  The second (parallax) term is linear in the parallax
varpi: (|r|^2 - (r.s)^2)/(2 c d) = varpi (|r|^2 - (r.s)^2)/(2 c AU).  The
full delay (:meth:`TimingModel.total_delay`) also subtracts the solar
Shapiro delay and, with observing frequencies, the dispersion delay
(:mod:`kinage.timing.delays`); for barycentred TOAs it subtracts the delays
the user's barycentring already removed (:mod:`kinage.timing.reference`).

The spin phase is phi(tau) = phi0 + freq tau + freq_dot tau^2/2 + freq_ddot tau^3/6 with
tau = t_b - t_epoch (s).  The timing residual of a TOA numbered N is
R = (phi - N) / freq (s).  Times (seconds from the reference epoch) and the
phase are carried as double-double numbers (:mod:`kinage.timing.precision`,
~1e-30 relative), so a 1.5 ms pulsar over 30 years (6e11 cycles) keeps its
phase to far below 1 ns; the fit works with offsets of the spin parameters
from the model's reference values (``offsets=True``) so that the spin
frequency itself is not rounded to a float64 either.

Parameter vector order: ``ra`` offset (mas, along ra*cos dec), ``dec`` offset
(mas), ``pm_ra_cosdec`` (mas/yr), ``pm_dec`` (mas/yr), ``parallax`` (mas),
``phase`` (cycles), ``freq`` (Hz), ``freq_dot`` (Hz/s), ``freq_ddot`` (Hz/s^2) — the spin
frequency terms present are set by ``spin_terms`` (1 to 3) — and, when
``fit_dispersion``, ``dispersion_measure`` (pc cm^-3) last.
"""

from dataclasses import dataclass, field

import astropy.constants as const
import astropy.units as u
import numpy as np
from astropy.time import Time

from . import precision as pr
from .delays import barycentric_frequency, dispersion_delay, solar_shapiro_delay

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
    from .geometry import earth_and_sun

    t = Time(times).tdb
    return earth_and_sun(np.ravel(t.jd1), np.ravel(t.jd2))[0]


@dataclass(frozen=True)
class TimeGrid:
    """Arrival times as seconds from a reference epoch plus the observer's geometry.

    Attributes
    ----------
    ref : astropy.time.Time
        Reference epoch (TDB), also the astrometric and spin epoch.
    seconds : ndarray
        TDB seconds from ``ref`` (float64, rounded).
    earth : ndarray, shape (n, 3)
        Observer barycentric position, light-seconds (Earth centre, plus the
        site for site TOAs).
    seconds_lo : ndarray or None
        Remainder: the exact time is ``seconds + seconds_lo`` (double-double).
    velocity : ndarray (n, 3) or None
        Observer velocity, units of c.
    sun : ndarray (n, 3) or None
        Observer-to-Sun vector, light-seconds; None switches the Shapiro delay off.
    removed : ndarray or None
        Delay already removed by the user's barycentring (s), for barycentred TOAs.
    frequency_mhz : ndarray or None
        Observing frequency of each TOA, MHz; None switches dispersion off.
    notes : tuple of str
    """

    ref: Time
    seconds: np.ndarray
    earth: np.ndarray
    seconds_lo: np.ndarray | None = None
    velocity: np.ndarray | None = None
    sun: np.ndarray | None = None
    removed: np.ndarray | None = None
    frequency_mhz: np.ndarray | None = None
    notes: tuple = field(default=())

    @classmethod
    def from_times(cls, times, ref, reference=None, frequency_mhz=None):
        """Build from astropy Times; differences are taken in two-part form.

        Parameters
        ----------
        times : astropy.time.Time
            Arrival times (TDB at the observer; for a barycentre reference,
            the user's barycentred TDB times).
        ref : astropy.time.Time
            Reference epoch.
        reference : TOAReference, optional
            Where the times are referred to (default: the geocentre, built-in ephemeris).
        frequency_mhz : ndarray, optional
            Observing frequencies, MHz.
        """
        times = Time(times).tdb
        ref = Time(ref).tdb
        jd1 = np.atleast_1d(np.asarray(times.jd1, float))
        jd2 = np.atleast_1d(np.asarray(times.jd2, float))
        return cls.from_jd(jd1, jd2, ref, reference, frequency_mhz)

    @classmethod
    def from_jd(cls, jd1, jd2, ref, reference=None, frequency_mhz=None):
        """Build from two-part TDB Julian dates (see :meth:`from_times`)."""
        from .geometry import observer_geometry

        ref = Time(ref).tdb
        d1, d2 = jd1 - ref.jd1, jd2 - ref.jd2
        ehi, elo = pr.dd_from_days(d1, d2)
        hi = (d1 + d2) * 86400.0  # the float64 seconds as always computed; lo carries the rest exactly
        lo = (ehi - hi) + elo
        freq = None if frequency_mhz is None else np.asarray(frequency_mhz, float)
        if reference is not None and reference.kind == "barycentre":
            return cls._barycentred(jd1, jd2, ref, hi, lo, reference, freq)
        geo = observer_geometry(jd1, jd2, reference)
        return cls(ref, hi, geo.position, lo, geo.velocity, geo.sun, None, freq, tuple(geo.warnings))

    @classmethod
    def _barycentred(cls, jd1, jd2, ref, hi, lo, reference, freq):
        """Undo the user's barycentring to find the observation times, then the removed delay there."""
        from .geometry import observer_geometry

        s_ref = _unit(np.radians(reference.barycentred_ra_deg), np.radians(reference.barycentred_dec_deg))
        obs2 = jd2
        for _ in range(3):  # t_obs = t_bary - D_removed(t_obs): converges by v/c ~ 1e-4 per pass
            geo = observer_geometry(jd1, obs2, reference)
            s = np.broadcast_to(s_ref, geo.position.shape)
            removed = geo.position @ s_ref - solar_shapiro_delay(s, geo.sun)
            obs2 = jd2 - removed / 86400.0
        return cls(ref, hi, geo.position, lo, geo.velocity, geo.sun, removed, freq, tuple(geo.warnings))

    def _lo(self):
        return np.zeros_like(self.seconds) if self.seconds_lo is None else self.seconds_lo

    def times(self):
        """The epochs as astropy Time (TDB), precise to the two-part sum."""
        return (self.ref + self.seconds * u.s) + self._lo() * u.s

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
    dispersion_measure : float, pc cm^-3
        Reference dispersion measure (used when the grid has frequencies).
    fit_dispersion : bool
        Fit a dispersion-measure offset (last parameter).
    """

    ra_deg: float
    dec_deg: float
    freq: float = 1.0
    freq_dot: float = 0.0
    freq_ddot: float = 0.0
    spin_terms: int = 2
    dispersion_measure: float = 0.0
    fit_dispersion: bool = False

    @property
    def parameter_names(self):
        names = ASTRO_PARAMETERS + SPIN_PARAMETERS[: 1 + self.spin_terms]
        return names + ("dispersion_measure",) if self.fit_dispersion else names

    @property
    def n_parameters(self):
        return 5 + 1 + self.spin_terms + int(self.fit_dispersion)

    def start_vector(self, astro=(0.0, 0.0, 0.0, 0.0, 0.0), offsets=False):
        """Parameter vector with the given astrometric values and this model's spin (offsets: zeros)."""
        spin = (0.0, self.freq, self.freq_dot, self.freq_ddot)[: 1 + self.spin_terms]
        if offsets:
            spin = (0.0,) * (1 + self.spin_terms)
        dm = ((0.0 if offsets else self.dispersion_measure),) if self.fit_dispersion else ()
        return np.concatenate([np.asarray(astro, float), spin, dm])

    def absolute(self, delta):
        """Absolute parameter values (float64) from an offsets vector."""
        out = np.array(delta, float)
        ref = (self.freq, self.freq_dot, self.freq_ddot)
        out[6:6 + self.spin_terms] += ref[: self.spin_terms]
        if self.fit_dispersion:
            out[-1] += self.dispersion_measure
        return out

    def _spin(self, theta):
        f = [self.freq, self.freq_dot, self.freq_ddot]
        f[: self.spin_terms] = theta[6:6 + self.spin_terms]
        return f

    def _offsets(self, theta, offsets):
        """(spin offsets [3], dispersion measure) from a parameter vector."""
        k = self.spin_terms
        d = np.zeros(3)
        if offsets:
            d[:k] = theta[6:6 + k]
        else:
            d[:k] = np.asarray(theta[6:6 + k], float) - np.array([self.freq, self.freq_dot, self.freq_ddot])[:k]
        dm = self.dispersion_measure
        if self.fit_dispersion:
            dm = dm + theta[6 + k] if offsets else theta[6 + k]
        return d, dm

    # -- astrometric delays ----------------------------------------------------
    def direction(self, grid, astro):
        """Unit vector to the star at each time, shape (n, 3).

        Offsets and proper motion move the star linearly in the tangent plane
        at the reference position: s = (s0 + a e_ra + b e_dec) / |...| with
        a = ra offset + pm_ra_cosdec t, b = dec offset + pm_dec t (radians) —
        uniform straight-line motion without radial velocity, as astropy's
        ``SkyCoord.apply_space_motion`` (ERFA starpm) gives, also near the poles.
        """
        ra0, dec0 = np.radians(self.ra_deg), np.radians(self.dec_deg)
        a = (astro[0] + astro[2] * grid.years) * MAS_RAD
        b = (astro[1] + astro[3] * grid.years) * MAS_RAD
        s0 = _unit(ra0, dec0)
        e_ra, e_dec = _tangent(ra0, dec0)
        v = s0[None, :] + np.multiply.outer(a, e_ra) + np.multiply.outer(b, e_dec)
        return v / np.linalg.norm(v, axis=1)[:, None]

    def delay(self, grid, astro):
        """Geometric (Roemer and parallax) delay D_geo(t), seconds."""
        return self._geometric(grid, astro, self.direction(grid, astro))

    @staticmethod
    def _geometric(grid, astro, s):
        r = grid.earth
        rs = np.einsum("ij,ij->i", r, s)
        return rs - astro[4] * MAS_RAD * (np.einsum("ij,ij->i", r, r) - rs**2) / (2 * AU_LIGHT_S)

    def total_delay(self, grid, astro, dispersion_measure=None):
        """Full delay: geometric minus solar Shapiro minus dispersion minus the removed delay, seconds."""
        s = self.direction(grid, astro)
        d = self._geometric(grid, astro, s)
        if grid.sun is not None:
            d = d - solar_shapiro_delay(s, grid.sun)
        if grid.frequency_mhz is not None:
            dm = self.dispersion_measure if dispersion_measure is None else dispersion_measure
            d = d - dispersion_delay(dm, self._bary_freq(grid, s))
        if grid.removed is not None:
            d = d - grid.removed
        return d

    @staticmethod
    def _bary_freq(grid, s):
        if grid.velocity is None:
            return grid.frequency_mhz
        return barycentric_frequency(grid.frequency_mhz, grid.velocity, s)

    def astro_partials(self, grid, astro=None):
        """dD/d(ra, dec, pm_ra_cosdec, pm_dec, parallax), shape (n, 5).

        Units: s/mas, s/mas, s/(mas/yr), s/(mas/yr), s/mas.  Evaluated at the
        reference direction (the delay is linear in these parameters to
        better than 1e-8 for offsets below 1 arcsec).  The small dependence of
        the Shapiro and dispersion delays on the position is left out (it
        changes the convergence rate, not the solution).
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
    def phase_dd(self, grid, theta, offsets=False):
        """Spin phase as a double-double (hi, lo) cycles, plus tau (s) and the absolute spin.

        Parameters
        ----------
        grid : TimeGrid
        theta : ndarray
            Parameter vector; with ``offsets`` its spin (and dispersion) entries
            are offsets from this model's reference values.
        """
        dspin, dm = self._offsets(theta, offsets)
        d = self.total_delay(grid, theta[:5], dm)
        th, tl = pr.dd_add_float(grid.seconds, grid._lo(), d)
        ph, pl = pr.dd_mul_float(th, tl, self.freq)
        f1 = self.freq_dot + dspin[1]
        f2 = self.freq_ddot + dspin[2]
        rest = theta[5] + th * (dspin[0] + th * (f1 / 2 + th * f2 / 6)) + tl * th * f1
        ph, pl = pr.dd_add_float(ph, pl, rest)
        return ph, pl, th, (self.freq + dspin[0], f1, f2)

    def phase(self, grid, theta, offsets=False):
        """Spin phase (cycles, float64-rounded), tau (s) and the spin (freq, freq_dot, freq_ddot)."""
        ph, pl, tau, spin = self.phase_dd(grid, theta, offsets)
        return ph + pl, tau, spin

    def residuals(self, grid, theta, pulse_numbers, offsets=False):
        """Timing residuals (phi - N)/freq, seconds (phase difference taken in double-double)."""
        ph, pl, _, (freq, _, _) = self.phase_dd(grid, theta, offsets)
        return ((ph - pulse_numbers) + pl) / freq

    def pulse_numbers(self, grid, theta, offsets=False):
        """Nearest whole pulse numbers for the given parameters (phase connection)."""
        ph, pl, _, _ = self.phase_dd(grid, theta, offsets)
        return pr.split_phase(ph, pl)[0]

    def design_matrix(self, grid, theta, pulse_numbers=None, offsets=False):
        """dR/dtheta, shape (n, p), seconds per parameter unit.

        Astrometric columns are the delay partials times f(tau)/freq; spin
        columns are 1/freq, tau/freq, tau^2/(2 freq), tau^3/(6 freq) (minus R/freq for
        the freq column, from the normalisation of R); the dispersion column is
        -(f(tau)/freq) 4.148808e3 s / f_b^2.
        """
        ph, pl, tau, (freq, freq_dot, freq_ddot) = self.phase_dd(grid, theta, offsets)
        inst = (freq + tau * (freq_dot + tau * freq_ddot / 2)) / freq
        astro = self.astro_partials(grid, theta[:5]) * inst[:, None]
        cols = [np.full(tau.size, 1.0 / freq)]
        r = 0.0 if pulse_numbers is None else ((ph - pulse_numbers) + pl) / freq
        powers = (tau, tau**2 / 2, tau**3 / 6)
        for k in range(self.spin_terms):
            c = powers[k] / freq
            if k == 0:
                c = c - r / freq
            cols.append(c)
        if self.fit_dispersion:
            s = self.direction(grid, theta[:5])
            cols.append(-inst * dispersion_delay(1.0, self._bary_freq(grid, s)))
        return np.column_stack([astro] + cols)
