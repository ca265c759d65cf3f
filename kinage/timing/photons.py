"""Photon-limited pulse-phase precision: Cramér–Rao bound, Z^2_n, detection.

A pulse profile is a normalised photon rate per unit phase f(phi) with mean 1
over one cycle.  Its Fourier form

    f(phi) = 1 + sum_k [alpha_k cos(2 pi k phi) + beta_k sin(2 pi k phi)]

covers the three shapes a scenario may give: a sinusoid
(``alpha_1 = a``, a = (max-min)/(max+min)), a list of harmonic amplitudes, and a
template table (phase, relative rate) expanded in its Fourier series.  The
shape fixes the form of the pulse; ``pulsed_fraction`` fixes its depth (the
profile's non-constant part is scaled so that (max-min)/(max+min) equals it).

For N photons drawn from f(phi - phi0) the Fisher information on phi0
(cycles) is N I with

    I = int_0^1 f'(phi)^2 / f(phi) dphi,

so sigma_phi >= 1/sqrt(N I) (Cramér–Rao bound; the unbinned template
likelihood of Ray et al. 2011, ApJS 194, 17 attains it for large N).  For the
sinusoid the integral is closed-form, I = 4 pi^2 (1 - sqrt(1 - a^2)).  A
background of rate B under a source of rate S dilutes the profile to
f_B = (S f + B)/(S + B) and N counts all S + B photons.

The Z^2_n statistic (Buccheri et al. 1983, A&A 128, 245) of n harmonics is
chi^2 with 2n degrees of freedom for unpulsed photons; for a pulsed profile its
expectation is 2n + (N/2) sum_{k<=n} (alpha_k^2 + beta_k^2) (to leading order
in N, from E[cos 2 pi k phi] = alpha_k / 2).
"""

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = [
    "PulseProfile",
    "profile_from_campaign",
    "sinusoid_phase_error",
    "phase_error",
    "expected_z2",
    "detection_sigma",
    "simulate_photon_phases",
    "fit_phase_ml",
]

_GRID = 4096  # phase grid for numerical integrals (exact for < ~2000 harmonics)
_MAX_TEMPLATE_HARMONICS = 32


@dataclass(frozen=True)
class PulseProfile:
    """A normalised pulse profile in Fourier form (mean 1 over a cycle).

    Attributes
    ----------
    cos_amps, sin_amps : ndarray
        alpha_k and beta_k for k = 1, 2, ... (relative to the mean rate).
    name : str
        ``'sinusoid'``, ``'harmonics'`` or ``'template'``.
    """

    cos_amps: np.ndarray
    sin_amps: np.ndarray
    name: str = "profile"

    def __post_init__(self):
        c = np.atleast_1d(np.asarray(self.cos_amps, float))
        s = np.atleast_1d(np.asarray(self.sin_amps, float))
        if c.shape != s.shape:
            raise InputError("pulse profile", "cos and sin amplitude lists differ in length")
        object.__setattr__(self, "cos_amps", c)
        object.__setattr__(self, "sin_amps", s)
        if self.rate(np.linspace(0, 1, _GRID, endpoint=False)).min() < -1e-12:
            raise InputError("[campaign] pulse_shape", "the profile becomes negative; reduce the harmonic amplitudes")

    # -- constructors -------------------------------------------------------
    @classmethod
    def sinusoid(cls, pulsed_fraction):
        """f = 1 + a cos(2 pi phi) with a = (max-min)/(max+min), a in (0, 1]."""
        a = _check_fraction(pulsed_fraction)
        return cls([a], [0.0], "sinusoid")

    @classmethod
    def harmonics(cls, amplitudes, pulsed_fraction=None):
        """f = 1 + sum_k A_k cos(2 pi k phi), optionally rescaled to a pulsed fraction."""
        amps = np.asarray(amplitudes, float)
        prof = cls(amps, np.zeros_like(amps), "harmonics")
        return prof if pulsed_fraction is None else prof.with_pulsed_fraction(pulsed_fraction)

    @classmethod
    def template(cls, path, pulsed_fraction=None):
        """Read a template table (columns ``phase``, ``rate``; or the first two columns).

        The rate is interpolated periodically onto a fine grid and expanded in
        up to 32 harmonics.
        """
        phase, rate = _read_template(Path(path))
        grid = np.linspace(0, 1, 1024, endpoint=False)
        order = np.argsort(phase)
        r = np.interp(grid, phase[order], rate[order], period=1.0)
        coef = np.fft.rfft(r) / r.size
        mean = coef[0].real
        if not mean > 0:
            raise InputError(f"template {path}", "rates must have a positive mean")
        coef = coef[1:_MAX_TEMPLATE_HARMONICS + 1] / mean
        prof = cls(2 * coef.real, -2 * coef.imag, "template")
        return prof if pulsed_fraction is None else prof.with_pulsed_fraction(pulsed_fraction)

    # -- evaluation ---------------------------------------------------------
    def evaluate(self, phi):
        """(phi, f, f', f'') at phases ``phi`` (cycles); derivatives per cycle."""
        phi = np.asarray(phi, float)
        f = np.ones_like(phi)
        d = np.zeros_like(phi)
        d2 = np.zeros_like(phi)
        for k, (al, be) in enumerate(zip(self.cos_amps, self.sin_amps), start=1):
            if al == 0 and be == 0:
                continue
            w = 2 * np.pi * k
            c = np.cos(w * phi)
            s = np.sin(w * phi)
            f += al * c + be * s
            d += w * (be * c - al * s)
            d2 -= w * w * (al * c + be * s)
        return phi, f, d, d2

    def rate(self, phi):
        """f(phi), relative rate (mean 1); ``phi`` in cycles."""
        return self.evaluate(phi)[1]

    def derivative(self, phi):
        """df/dphi, per cycle."""
        return self.evaluate(phi)[2]

    def pulsed_fraction(self):
        """(max-min)/(max+min) of the profile."""
        f = self.rate(np.linspace(0, 1, _GRID, endpoint=False))
        return float((f.max() - f.min()) / (f.max() + f.min()))

    def scaled(self, factor):
        """Profile with its pulsed part multiplied by ``factor`` (background dilution)."""
        return PulseProfile(self.cos_amps * factor, self.sin_amps * factor, self.name)

    def with_pulsed_fraction(self, pulsed_fraction):
        """Rescale the pulsed part so that (max-min)/(max+min) = ``pulsed_fraction``."""
        a = _check_fraction(pulsed_fraction)
        f = self.rate(np.linspace(0, 1, _GRID, endpoint=False)) - 1.0
        lo, hi = f.min(), f.max()
        if hi - lo <= 0:
            raise InputError("[campaign] pulse_shape", "the profile is flat (no pulsation)")
        # (1 + s hi - 1 - s lo) / (2 + s (hi + lo)) = a  ->  s = 2 a / ((hi - lo) - a (hi + lo))
        den = (hi - lo) - a * (hi + lo)
        scale = 2 * a / den if den > 0 else np.inf
        if not np.isfinite(scale) or 1 + scale * lo < -1e-9:
            raise InputError("[campaign] pulsed_fraction",
                             f"this pulse shape cannot reach a pulsed fraction of {a} without negative rates")
        return self.scaled(scale)

    def fisher_per_photon(self):
        """I = int f'^2 / f dphi (per photon, cycles^-2).

        Closed form for a single harmonic, 4 pi^2 k^2 (1 - sqrt(1 - r^2)) with
        r = sqrt(alpha^2 + beta^2); numerical on a fine grid otherwise.
        """
        nz = np.flatnonzero(np.hypot(self.cos_amps, self.sin_amps) > 0)
        if nz.size == 1:
            k = nz[0] + 1
            r = float(np.hypot(self.cos_amps[nz[0]], self.sin_amps[nz[0]]))
            return 4 * np.pi**2 * k**2 * _one_minus_sqrt(r)
        phi = (np.arange(_GRID) + 0.5) / _GRID
        f = self.rate(phi)
        d = self.derivative(phi)
        ok = f > 0
        return float(np.sum(d[ok] ** 2 / f[ok]) / _GRID)


def _one_minus_sqrt(a):
    """1 - sqrt(1 - a^2) without cancellation at small a."""
    return a * a / (1 + np.sqrt(1 - a * a))


def _check_fraction(a):
    if a is None or not np.isfinite(a) or not 0 < a <= 1:
        raise InputError("[campaign] pulsed_fraction", f"must be in (0, 1] (got {a})")
    return float(a)


def _read_template(path):
    from astropy.table import Table

    where = f"template {path}"
    try:
        fmt = "ascii.ecsv" if path.suffix.lower() == ".ecsv" else "ascii"
        tab = Table.read(path, format=fmt)
    except Exception as exc:  # noqa: BLE001 - any parse failure is an input problem
        raise InputError(where, f"could not read the table ({exc})") from None
    names = [n.lower() for n in tab.colnames]
    if "phase" in names and "rate" in names:
        phase = np.asarray(tab.columns[names.index("phase")], float)
        rate = np.asarray(tab.columns[names.index("rate")], float)
    elif len(names) >= 2:
        phase = np.asarray(tab.columns[0], float)
        rate = np.asarray(tab.columns[1], float)
    else:
        raise InputError(where, "expected columns 'phase' and 'rate'")
    if phase.size < 4:
        raise InputError(where, f"need at least 4 rows (got {phase.size})")
    bad = np.flatnonzero(~np.isfinite(phase) | ~np.isfinite(rate) | (rate < 0))
    if bad.size:
        raise InputError(where, f"row {bad[0] + 1}: phase and rate must be finite, rate >= 0")
    return np.mod(phase, 1.0), rate


def profile_from_campaign(campaign):
    """The pulse profile a ``[campaign]`` section describes (source only, no background)."""
    shape = campaign.get("pulse_shape", "sinusoid")
    pf = campaign.get("pulsed_fraction")
    if isinstance(shape, str) and shape == "sinusoid":
        return PulseProfile.sinusoid(pf)
    if isinstance(shape, tuple):
        return PulseProfile.harmonics(shape, pf)
    return PulseProfile.template(shape, pf)


def sinusoid_phase_error(n_photons, pulsed_fraction):
    """Cramér–Rao bound for f = 1 + a cos 2 pi phi (cycles).

    sigma_phi = 1 / (2 pi sqrt(N (1 - sqrt(1 - a^2)))); small-a limit
    1 / (2 pi a sqrt(N/2)).
    """
    a = np.asarray(pulsed_fraction, float)
    return 1.0 / (2 * np.pi * np.sqrt(np.asarray(n_photons, float) * _one_minus_sqrt(a)))


def phase_error(profile, source_rate, background_rate, exposure):
    """Per-visit Cramér–Rao phase error (cycles) with background dilution.

    Parameters
    ----------
    profile : PulseProfile
        Source pulse profile.
    source_rate, background_rate : float, counts/s
    exposure : float or ndarray, s

    Returns
    -------
    ndarray
        sigma_phi in cycles (``inf`` where there are no photons).
    """
    s, b = _check_rates(source_rate, background_rate)
    info = profile.scaled(s / (s + b)).fisher_per_photon()
    n = (s + b) * np.asarray(exposure, float)
    with np.errstate(divide="ignore"):
        return 1.0 / np.sqrt(n * info)


def _check_rates(source_rate, background_rate):
    s = float(source_rate)
    b = float(background_rate or 0.0)
    if not (np.isfinite(s) and s > 0):
        raise InputError("[campaign] source_rate", f"must be positive (got {source_rate} counts/s)")
    if not (np.isfinite(b) and b >= 0):
        raise InputError("[campaign] background_rate", f"must not be negative (got {background_rate} counts/s)")
    return s, b


def expected_z2(profile, source_rate, background_rate, exposure, harmonics=2):
    """Expected Z^2_n of one visit: 2n + (N/2) sum_k<=n (alpha_k^2 + beta_k^2) (diluted)."""
    s, b = _check_rates(source_rate, background_rate)
    dil = profile.scaled(s / (s + b))
    n = int(harmonics)
    power = np.sum(dil.cos_amps[:n] ** 2 + dil.sin_amps[:n] ** 2)
    return 2 * n + 0.5 * (s + b) * np.asarray(exposure, float) * power


def detection_sigma(z2, harmonics=2):
    """Gaussian-equivalent significance of a Z^2_n value (chi^2 with 2n dof under no pulsation)."""
    from scipy.special import gammaln, logsumexp, ndtri_exp, xlogy

    # chi^2 with 2n dof: P(>z) = exp(-z/2) sum_{j<n} (z/2)^j / j!, summed in logs
    # so that very significant pulsations do not underflow to p = 0
    half = np.maximum(np.asarray(z2, float), 0.0)[..., None] / 2
    j = np.arange(int(harmonics))
    with np.errstate(divide="ignore"):
        logp = logsumexp(xlogy(j, half) - gammaln(j + 1), axis=-1) - half[..., 0]
    return np.maximum(-ndtri_exp(np.minimum(logp, 0.0)), 0.0)


def simulate_photon_phases(profile, n_photons, rng=None, phase=0.0, size=None):
    """Draw photon phases (cycles, in [0, 1)) from f(phi - phase) by rejection.

    Parameters
    ----------
    profile : PulseProfile
    n_photons : int
    rng : numpy.random.Generator | int | None
    phase : float, cycles
        True phase offset.
    size : int, optional
        Number of independent trials; returns shape (size, n_photons).
    """
    rng = np.random.default_rng(rng)
    shape = (n_photons,) if size is None else (size, n_photons)
    total = int(np.prod(shape))
    grid = profile.rate(np.linspace(0, 1, _GRID, endpoint=False))
    fmin, fmax = max(grid.min(), 0.0), grid.max() * 1.0005
    # f = fmin + (f - fmin): a uniform part of weight fmin and a pulsed part of
    # weight 1 - fmin drawn by rejection (cheap when the pulsation is weak)
    out = rng.random(total)
    pulsed = np.flatnonzero(rng.random(total) >= fmin)
    filled = 0
    while filled < pulsed.size:
        need = pulsed.size - filled
        m = int(need * (fmax - fmin) / max(1 - fmin, 1e-12) * 1.1) + 16
        x = rng.random(m)
        keep = x[rng.random(m) * (fmax - fmin) < profile.rate(x) - fmin]
        take = min(keep.size, need)
        out[pulsed[filled:filled + take]] = keep[:take]
        filled += take
    return np.mod(out.reshape(shape) + phase, 1.0)


def fit_phase_ml(phases, profile, n_iter=8):
    """Unbinned maximum-likelihood phase offset(s) of photon phases (cycles).

    Maximises sum_i log f(phi_i - phi0) by Newton steps (observed
    information) from the first-harmonic estimate.  ``phases`` may be 2-D
    (trials x photons); the fit runs along the last axis.

    Returns
    -------
    ndarray
        phi0 in cycles, wrapped to (-0.5, 0.5].
    """
    x = np.atleast_2d(np.asarray(phases, float))
    k0 = int(np.argmax(np.hypot(profile.cos_amps, profile.sin_amps)))
    ref = np.arctan2(profile.sin_amps[k0], profile.cos_amps[k0])
    w0 = 2 * np.pi * (k0 + 1)
    phi0 = np.empty(x.shape[0])
    for i, row in enumerate(x):  # one trial at a time keeps the arrays in cache
        p0 = (np.arctan2(np.sin(w0 * row).sum(), np.cos(w0 * row).sum()) - ref) / w0
        for _ in range(n_iter):
            _, f, d, d2 = profile.evaluate(row - p0)
            grad = -np.sum(d / f)  # d/dphi0 of log L
            hess = np.sum((d2 * f - d * d) / f**2)  # d2/dphi0^2 of log L
            p0 += float(np.clip(-grad / hess if hess < 0 else 0.0, -0.05, 0.05))
        phi0[i] = p0
    out = np.mod(phi0 + 0.5, 1.0) - 0.5
    return out if np.ndim(phases) > 1 else out[0]
