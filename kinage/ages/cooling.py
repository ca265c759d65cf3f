"""Isothermal-core cooling of a neutron star: cooling curves T_inf(t), L_inf(t).

After ~100 yr the core of a neutron star is isothermal (Yakovlev & Pethick
2004, ARA&A 42, 169, sec. 4), and its redshifted internal temperature T
obeys one ordinary differential equation:

    C(T) dT/dt = -L_nu(T) - L_gamma(T) + H(t),

with heat capacity C = C0 s_C T9, neutrino luminosity
L_nu = L_MU s_L T9^8 (modified Urca) + L_DU f(M) T9^6 (direct Urca, when the
model has it and the mass is above its threshold), photon luminosity
L_gamma = 4 pi sigma R^2 Ts^4 (1 - rg/R) through an envelope relation
Ts(Tb, g) (:mod:`.envelope`) with Tb = T / sqrt(1 - rg/R), and optional
heating H from field decay.  All luminosities are redshifted (as seen at
infinity), T9 = T / 1e9 K.  Coefficients come from a ``cooling_model``
parameter set (:mod:`kinage.params.cooling`, where their sources are cited);
s_C = (M/M_ref)(rho/rho_ref)^(-2/3) and s_L = (M/M_ref)(rho/rho_ref)^(-1/3)
scale them to other masses and radii (mean density rho ~ M/R^3).

Models with an equation of state and a ``pairing`` set replace C0 s_C T9 and
L_MU s_L T9^8 by C(T) and L_nu(T) tabulated over the paired star
(:func:`.star_cooling.paired_core_tables`: reduced heat capacity and
emission, pair-breaking neutrinos), interpolated in log-log; the starting
temperature then comes from int_T^inf C/L_nu dT = t_start.

The equation is solved in log-time, y = ln T against x = ln t, with
:func:`scipy.integrate.solve_ivp` (LSODA, stiff-capable), starting at the
model's ``t_start_yr`` from the temperature an arbitrarily hot star reaches
by then under neutrino cooling alone (photon losses are negligible then).
Observed quantities: T_inf = Ts sqrt(1 - rg/R), L_inf = 4 pi sigma R^2 Ts^4 (1 - rg/R).
"""

from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np
from scipy.integrate import quad, solve_ivp
from scipy.optimize import brentq

from .._units import quantity_edge
from ..errors import InputError, ModelRangeError
from ..params import ParameterSet, get
from .envelope import TB_MAX_K, TB_MIN_K, TS_MIN_K, envelope_relation, star_structure
from .spindown import SECONDS_PER_YEAR

__all__ = ["CoolingModel", "CoolingCurve", "cooling_curve", "field_decay_heating", "default_times"]

_SIGMA_SB = 5.670374419e-5  # erg cm^-2 s^-1 K^-4


def default_times(model=None, n=301):
    """Log-spaced grid from the model's start to end time, in yr."""
    m = CoolingModel.resolve(model)
    return np.geomspace(m.t_start_yr, m.t_end_yr, n)


@dataclass(frozen=True)
class CoolingModel:
    """Cooling-model coefficients read from a ``cooling_model`` parameter set.

    Attributes
    ----------
    name : str
    heat_capacity_erg_K, modified_urca_erg_s, direct_urca_erg_s : float
        Coefficients for the reference star (see :mod:`kinage.params.cooling`).
    direct_urca_threshold_msun, direct_urca_width_msun : float
    reference_mass_msun, reference_radius_km : float
    t_start_yr, t_end_yr : float
    parameter_set : ParameterSet
    eos : str or None
        An ``eos`` parameter set: C0 and L_MU are then integrated over the
        TOV star of each mass (:mod:`.star_cooling`; npe core, modified Urca
        and nucleon bremsstrahlung; with ``pairing``, tables of C(T) and
        L_nu(T) of the paired core) and the radius follows from the mass,
        instead of the reference-star scalings.
    effective_mass_n, effective_mass_p : float
        Nucleon effective masses (units of the bare masses) for ``eos`` models.
    pairing : str or None
        A ``pairing`` parameter set for ``eos`` models (None: unpaired
        nucleons); C(T) and L_nu(T) then come from tables over the star
        (:func:`.star_cooling.paired_core_tables`).  Set with
        :meth:`with_pairing`.
    """

    name: str
    heat_capacity_erg_K: float
    modified_urca_erg_s: float
    direct_urca_erg_s: float
    direct_urca_threshold_msun: float
    direct_urca_width_msun: float
    reference_mass_msun: float
    reference_radius_km: float
    t_start_yr: float
    t_end_yr: float
    parameter_set: ParameterSet = field(repr=False, compare=False, default=None)
    eos: str | None = None
    effective_mass_n: float = 0.8
    effective_mass_p: float = 0.8
    pairing: str | None = None

    _OPTIONAL = ("name", "parameter_set", "eos", "effective_mass_n", "effective_mass_p", "pairing")

    @classmethod
    def resolve(cls, model, where="[ages] cooling_model"):
        """A CoolingModel from a name, a ParameterSet or a CoolingModel (None: 'modified-urca')."""
        if isinstance(model, CoolingModel):
            return model
        if model is None:
            model = "modified-urca"
        pset = model if isinstance(model, ParameterSet) else get("cooling_model", model, where)
        if pset.kind != "cooling_model":
            raise InputError(where, f"expected a cooling_model parameter set (got kind {pset.kind!r})")
        names = [f for f in cls.__dataclass_fields__ if f not in cls._OPTIONAL]
        missing = [k for k in names if k not in pset.values]
        if missing:
            raise InputError(where, f"cooling model '{pset.name}' lacks values: {', '.join(missing)}")
        extra = {k: float(pset.values[k]) for k in ("effective_mass_n", "effective_mass_p") if k in pset.values}
        eos = pset.values.get("eos")
        if eos is not None:
            get("eos", eos, f"cooling model '{pset.name}' eos")
        return cls(name=pset.name, parameter_set=pset, eos=eos, **extra,
                   **{k: float(pset.values[k]) for k in names})

    def with_pairing(self, pairing, where="[ages] pairing"):
        """This model with a ``pairing`` parameter set (None: :data:`kinage.params.pairing.DEFAULT` for models with
        an equation of state, unpaired otherwise; 'none': unpaired).

        Raises
        ------
        InputError
            Unknown set (naming ``where`` and the sets), or a paired set for a
            model without an equation of state.
        """
        from dataclasses import replace

        from ..params.pairing import DEFAULT

        if pairing is None:
            pairing = DEFAULT if self.eos is not None else "none"
        pset = get("pairing", pairing, where)
        name = None if pset.name == "none" else pset.name
        if name is not None and self.eos is None:
            raise InputError(where, f"pairing set '{pset.name}' needs a cooling model with an equation of state "
                                    f"(npe-SLy, npe-APR4); '{self.name}' has none: use pairing = \"none\"")
        return replace(self, pairing=name)

    @property
    def pairing_label(self):
        """The pairing set's name, or 'none'."""
        return self.pairing or "none"

    @property
    def display_name(self):
        """The model's name with its pairing set, e.g. "npe-SLy, pairing SFB-TToa-CCDK"."""
        return f"{self.name}, pairing {self.pairing}" if self.pairing else self.name

    def key(self):
        """Hashable identity of the coefficients (for caching)."""
        return tuple(getattr(self, f) for f in self.__dataclass_fields__ if f != "parameter_set")

    def radius_for(self, mass_msun, radius_km):
        """The radius (km) a curve uses: the EOS's for this mass for an ``eos`` model, else ``radius_km``."""
        if self.eos is None:
            return radius_km
        from .star_cooling import npe_core_coefficients

        return npe_core_coefficients(self.eos, mass_msun, self.effective_mass_n, self.effective_mass_p)[2]

    def coefficients(self, mass_msun, radius_km):
        """(C0 [erg/K], L_MU [erg/s], L_DU [erg/s]) for a star of given mass and radius.

        Scaled from the reference star, or for an ``eos`` model integrated over
        the TOV star of that mass (the radius then follows from the EOS).
        """
        if self.eos is not None:
            from .star_cooling import npe_core_coefficients

            c0, l0, _ = npe_core_coefficients(self.eos, mass_msun, self.effective_mass_n, self.effective_mass_p)
            return c0, l0, 0.0
        mr = mass_msun / self.reference_mass_msun
        rho = mr * (self.reference_radius_km / radius_km) ** 3
        c0 = self.heat_capacity_erg_K * mr * rho ** (-2.0 / 3.0)
        lmu = self.modified_urca_erg_s * mr * rho ** (-1.0 / 3.0)
        frac = 0.0
        if self.direct_urca_erg_s > 0:
            frac = float(np.clip((mass_msun - self.direct_urca_threshold_msun) / self.direct_urca_width_msun, 0, 1))
        return c0, lmu, self.direct_urca_erg_s * frac


@quantity_edge(None, b0_gauss="G", decay_timescale_yr="yr", radius_km="km")
def field_decay_heating(b0_gauss, decay_timescale_yr, radius_km=12.0, efficiency=1.0):
    """Heating rate from exponential field decay, as a function of time.

    The field energy E_B = (B^2 / 8 pi)(4 pi R^3 / 3) = B^2 R^3 / 6 (a uniform
    internal field: an order-of-magnitude estimate, common practice, no
    source) decays as exp(-2 t / tau_d) and a fraction ``efficiency`` heats
    the core: H = efficiency B0^2 R^3 / (3 tau_d) exp(-2 t / tau_d).

    Parameters
    ----------
    b0_gauss : float (G) or Quantity [magnetic flux density]
        Initial field.
    decay_timescale_yr : float (yr) or Quantity [time]
    radius_km : float (km) or Quantity [length]
    efficiency : float
        Fraction of the released energy that heats the core, in [0, 1].

    Returns
    -------
    callable
        H(t_yr) in erg/s.
    """
    if not 0 <= efficiency <= 1:
        raise InputError("heating efficiency", f"must be in [0, 1] (got {efficiency})")
    if not decay_timescale_yr > 0:
        raise InputError("heating decay_timescale_yr", f"must be positive (got {decay_timescale_yr})")
    r_cm = radius_km * 1e5
    tau_s = decay_timescale_yr * SECONDS_PER_YEAR
    amp = efficiency * b0_gauss**2 * r_cm**3 / (3.0 * tau_s)

    def heating(t_yr):
        return amp * np.exp(-2.0 * np.asarray(t_yr, float) / decay_timescale_yr)

    heating.description = (f"field decay B0 = {b0_gauss:.3g} G, tau_d = {decay_timescale_yr:.3g} yr, "
                           f"efficiency {efficiency}")
    return heating


@dataclass
class CoolingCurve:
    """A cooling curve.

    Attributes
    ----------
    t_yr : ndarray, yr
    T_inf_K : ndarray, K
        Redshifted effective temperature (``nan`` where the envelope relation
        is outside its validity range).
    L_inf_erg_s : ndarray, erg/s
        Redshifted photon luminosity (``nan`` where invalid).
    T_core_K : ndarray, K
        Redshifted isothermal internal temperature.
    L_nu_erg_s : ndarray, erg/s
        Neutrino luminosity.
    valid : ndarray of bool
    mass_msun, radius_km : float
    envelope, model : str
    pairing : str
        ``pairing`` parameter set of the curve ('none': unpaired).
    """

    t_yr: np.ndarray
    T_inf_K: np.ndarray
    L_inf_erg_s: np.ndarray
    T_core_K: np.ndarray
    L_nu_erg_s: np.ndarray
    valid: np.ndarray
    mass_msun: float
    radius_km: float
    envelope: str
    model: str
    pairing: str = "none"

    @property
    def label(self):
        """Short label, e.g. ``'iron, 1.4 Msun'``."""
        return f"{self.envelope}, {self.mass_msun:g} Msun"

    def _invert(self, y, target):
        ok = self.valid & np.isfinite(y)
        if ok.sum() < 2:
            return np.full(np.shape(target), np.nan)
        ly = np.log(y[ok])
        lt = np.log(self.t_yr[ok])
        ly = np.minimum.accumulate(ly)  # enforce a non-increasing curve for interpolation
        order = np.argsort(ly, kind="stable")
        lyo, lto = ly[order], lt[order]
        keep = np.concatenate(([True], np.diff(lyo) > 0))
        lyo, lto = lyo[keep], lto[keep]
        tgt = np.log(np.asarray(target, float))
        out = np.exp(np.interp(tgt, lyo, lto, left=np.nan, right=np.nan))
        return out

    def age_at_temperature(self, T_inf_K):
        """Age(s) in yr at which the curve has the given redshifted temperature(s); nan outside."""
        return self._invert(self.T_inf_K, T_inf_K)

    def age_at_luminosity(self, L_inf_erg_s):
        """Age(s) in yr at which the curve has the given redshifted luminosity(ies); nan outside."""
        return self._invert(self.L_inf_erg_s, L_inf_erg_s)


def _initial_temperature(c0, lmu, ldu, t_s):
    """Redshifted core temperature (K) reached at t_s by an arbitrarily hot star, neutrino losses only."""

    def elapsed(log_t9):  # time to cool from infinity down to T9 = exp(log_t9): int C/L dT
        f = lambda u: c0 * 1e9 * np.exp(2 * u) / (lmu * np.exp(8 * u) + ldu * np.exp(6 * u))  # noqa: E731
        return quad(f, log_t9, log_t9 + 12.0, limit=200)[0]

    if ldu == 0:
        return 1e9 * (6.0 * lmu * t_s / (c0 * 1e9)) ** (-1.0 / 6.0)
    return 1e9 * np.exp(brentq(lambda u: elapsed(u) - t_s, -8.0, 5.0, xtol=1e-12))


def cooling_curve(mass, radius, envelope="iron", times_yr=None, model="modified-urca", heating=None, *, check=True,
                  pairing=None):
    """Cooling curve of an isothermal-core neutron star.

    Parameters
    ----------
    mass : float (solar masses) or Quantity [mass]
    radius : float (km) or Quantity [length]
        Ignored by models with an ``eos`` (the radius follows from the mass).
    envelope : {'iron', 'accreted', 'gpe83'} or 'light<log10 dM/M>' (e.g. 'light-12')
        Envelope relation (:mod:`.envelope`).
    times_yr : array-like (yr) or Quantity [time], optional
        Output times within the model's span (default: 301 log-spaced
        points from 100 yr to 1e7 yr).
    model : str or ParameterSet or CoolingModel
        Cooling-model parameter set (default 'modified-urca': slow cooling without pairing).
    heating : callable or None
        Redshifted heating rate H(t_yr) in erg/s (e.g. :func:`field_decay_heating`).
    check : bool
        Raise for times outside the model span.
    pairing : str or None
        ``pairing`` parameter set for a model with an equation of state
        (None: :data:`kinage.params.pairing.DEFAULT` for those, unpaired
        otherwise; 'none': unpaired).  A model already carrying a pairing
        set (:meth:`CoolingModel.with_pairing`) keeps it when None.

    Returns
    -------
    CoolingCurve

    Examples
    --------
    >>> c = cooling_curve(1.4, 12.0, "iron", [1e4, 1e5])
    >>> bool(5.8 < np.log10(c.T_inf_K[0]) < 6.2)
    True
    """
    import astropy.units as u

    if isinstance(mass, u.Quantity):
        mass = mass.to_value(u.solMass)
    if isinstance(radius, u.Quantity):
        radius = radius.to_value(u.km)
    if isinstance(times_yr, u.Quantity):
        times_yr = times_yr.to_value(u.yr)
    m = CoolingModel.resolve(model)
    if pairing is not None or not isinstance(model, CoolingModel):
        m = m.with_pairing(pairing)
    env = str(envelope).lower()
    envelope_relation(env)  # an unknown name is an InputError here, before any work
    times = default_times(m) if times_yr is None else np.atleast_1d(np.asarray(times_yr, float))
    if check and (np.any(times < m.t_start_yr * (1 - 1e-9)) or np.any(times > m.t_end_yr * (1 + 1e-9))):
        raise ModelRangeError("times_yr", f"cooling model '{m.name}' covers {m.t_start_yr:g} to {m.t_end_yr:g} yr "
                              f"(isothermal core) (got {np.min(times):.3g} to {np.max(times):.3g} yr)")
    if np.any(np.diff(times) <= 0):
        raise InputError("times_yr", "must be strictly increasing")
    radius = m.radius_for(float(mass), float(radius))
    if heating is None:
        return _cached_curve(float(mass), float(radius), env, m, tuple(times.tolist()))
    return _solve(float(mass), float(radius), env, m, times, heating)


def _cached_curve(mass, radius, env, m, times):
    curve = _cached(mass, radius, env, m.key(), times, m)
    return CoolingCurve(**{k: (v.copy() if isinstance(v, np.ndarray) else v) for k, v in curve.__dict__.items()})


@lru_cache(maxsize=256)
def _cached(mass, radius, env, key, times, m):
    return _solve(mass, radius, env, m, np.asarray(times), None)


def _thermal(m, mass, radius):
    """Heat capacity C(T) [erg/K], neutrino luminosity L_nu(T) [erg/s] of the redshifted core temperature T [K],
    and the temperature [K] at the model's start time."""
    t_start_s = m.t_start_yr * SECONDS_PER_YEAR
    if m.pairing is None:
        c0, lmu, ldu = m.coefficients(mass, radius)
        return ((lambda temp: c0 * temp / 1e9), (lambda temp: lmu * (temp / 1e9) ** 8 + ldu * (temp / 1e9) ** 6),
                _initial_temperature(c0, lmu, ldu, t_start_s))
    from .star_cooling import paired_core_tables

    lt, lc, ll = paired_core_tables(m.eos, mass, m.effective_mass_n, m.effective_mass_p, m.pairing)

    def cap(temp):
        return np.exp(np.interp(np.log(temp), lt, lc))

    def lnu(temp):
        return np.exp(np.interp(np.log(temp), lt, ll))

    # time for an arbitrarily hot star to cool to T by neutrinos alone: int_T^inf C/L dT'; above the table every
    # nucleon is normal (C ~ T, L ~ T^8), which gives the tail (C/L) T / 6
    tt = np.exp(lt)
    g = np.exp(lc - ll)
    seg = 0.5 * (g[1:] + g[:-1]) * np.diff(tt)
    elapsed = g[-1] * tt[-1] / 6 + np.concatenate([np.cumsum(seg[::-1])[::-1], [0.0]])
    temp0 = float(np.exp(np.interp(np.log(t_start_s), np.log(elapsed[::-1]), lt[::-1])))
    return cap, lnu, temp0


def _solve(mass, radius, env, m, times, heating):
    st = star_structure(mass, radius)
    cap, lnu_of, temp0 = _thermal(m, mass, radius)
    relation = envelope_relation(env)
    red = st.redshift_factor
    area = 4.0 * np.pi * (radius * 1e5) ** 2 * red**2 * _SIGMA_SB

    def photon(temp):
        ts = relation(temp / red, st.g14)
        return area * ts**4, ts

    def rhs(x, y):
        t_yr = np.exp(x)
        temp = np.exp(y[0])
        lg = photon(temp)[0]
        h = float(heating(t_yr)) if heating is not None else 0.0
        dtdt = (-lnu_of(temp) - lg + h) / cap(temp)  # K/s
        return [t_yr * SECONDS_PER_YEAR * dtdt / temp]

    t0 = m.t_start_yr
    x_eval = np.log(times)
    span = (np.log(t0), max(x_eval[-1], np.log(t0)))
    sol = solve_ivp(rhs, span, [np.log(temp0)], method="LSODA", t_eval=x_eval, rtol=1e-8, atol=1e-10)
    if not sol.success:  # pragma: no cover - LSODA on this smooth 1-D problem does not fail in practice
        raise RuntimeError(f"cooling integration failed: {sol.message}")
    temp = np.exp(sol.y[0])
    lg, ts = photon(temp)
    tb = temp / red
    valid = (ts >= TS_MIN_K) & (tb >= TB_MIN_K) & (tb <= TB_MAX_K)
    return CoolingCurve(
        t_yr=np.asarray(times, float),
        T_inf_K=np.where(valid, ts * red, np.nan),
        L_inf_erg_s=np.where(valid, lg, np.nan),
        T_core_K=temp,
        L_nu_erg_s=lnu_of(temp),
        valid=valid,
        mass_msun=mass,
        radius_km=radius,
        envelope=env,
        model=m.name,
        pairing=m.pairing_label,
    )
