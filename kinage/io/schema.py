"""The keys a scenario file may hold, with their default units and constraints.

This table is the single definition of the scenario format: the reader
validates against it, the documentation lists it (``kinage keys``), and
stages read values from the parsed :class:`~kinage.io.scenario.Section`
objects by these names.

A key with ``error=True`` also accepts a sibling ``<key>_error`` in the same
unit, which must be positive.
"""

from dataclasses import dataclass

__all__ = ["Key", "SCHEMA", "TABLES", "range_text", "ASSOCIATION_COLUMNS"]

#: the columns of an association table (kinage.associations.table.REQUIRED + OPTIONAL; a test keeps them equal)
ASSOCIATION_COLUMNS = ("name", "ra", "dec", "distance", "pm_ra_cosdec", "pm_dec", "radial_velocity", "radius", "age",
                       "distance_error", "pm_ra_cosdec_error", "pm_dec_error", "radial_velocity_error", "ra_error",
                       "dec_error", "age_error", "radius_error")


@dataclass(frozen=True)
class Key:
    """One scenario key.

    Attributes
    ----------
    name : str
    kind : str
        ``quantity`` (needs ``unit``), ``angle`` (ra / dec, sexagesimal
        allowed), ``time``, ``times`` (list of epochs), ``int``, ``float``,
        ``bool``, ``str``, ``path``, ``names`` (list of str), ``floats``
        (list of numbers), ``pulse_shape``, ``correlations`` (a table of
        correlation coefficients, :mod:`kinage.io.correlations`),
        ``column_map`` (a table mapping kinage column names, listed in
        ``choices``, to a file's columns, :mod:`kinage.io.tables`).
    unit : str
        Default unit of a quantity (a plain number is taken in it).
    default : object
        Value when the key is absent (``None``: absent).
    error : bool
        Whether a ``<name>_error`` sibling is allowed.
    positive, nonnegative : bool
        Sign constraints, checked after conversion.
    lower, upper : float or None
        Inclusive bounds in ``unit`` (for numbers: plain).
    lower_open, upper_open : bool
        Make ``lower`` / ``upper`` exclusive (``ra`` in [0, 360), braking index > 1).
    reason : str
        Why the bounds are what they are; quoted in the error message.
    choices : tuple of str, or str
        Allowed string values (for ``str`` / ``names`` keys), or ``"param:<kind>"`` for the names of the
        registered parameter sets of that kind, or ``"envelope"`` for the cooling envelopes.
    max_length : int
        Longest string (names, paths) or list accepted.
    example : str
        A value with its unit (``'1.2 Myr'``) for a quantity whose bare number would be ambiguous (ages and
        timescales: yr, kyr or Myr; exposures: s or ks; TOA errors: s or us): such a key refuses a bare
        number other than 0 and asks for a unit, quoting this example.  Empty: a bare number is taken in
        ``unit``.
    doc : str
        One line for the key listing.

    Every number (strings ``"nan"``/``"inf"`` too) must be finite; every key
    is checked by :func:`kinage.io.scenario.scenario_from_dict` from these
    attributes alone, so a new key gets its checks by being declared here.
    """

    name: str
    kind: str
    unit: str = ""
    default: object = None
    error: bool = False
    positive: bool = False
    nonnegative: bool = False
    lower: float | None = None
    upper: float | None = None
    doc: str = ""
    lower_open: bool = False
    upper_open: bool = False
    reason: str = ""
    choices: tuple | str | None = None
    max_length: int | None = None
    example: str = ""


_STAR = [
    Key("name", "str", default="star", doc="name used in reports and file names"),
    Key("ra", "angle", "deg", error=True,
        doc="right ascension (ICRS): degrees, '52.3 deg' or '03:29:12.3' (hours); ra_error is the error of ra*cos(dec) in mas"),
    Key("dec", "angle", "deg", error=True, lower=-90, upper=90,
        doc="declination (ICRS): degrees or '+12:34:56'; dec_error in mas"),
    Key("epoch", "time", doc="reference epoch of position and proper motion (MJD TDB or ISO date); default: campaign middle or J2000"),
    Key("parallax", "quantity", "mas", error=True, doc="parallax (may be negative when measured; error must be positive)"),
    Key("distance", "quantity", "pc", error=True, positive=True,
        doc="distance estimate (e.g. from the dispersion measure), combined with any parallax into one distance "
            "posterior; distance_error is its Gaussian error in pc or a fraction ('20%'); without it the distance "
            "is taken as exact"),
    Key("distance_error_low", "quantity", "pc", positive=True,
        doc="asymmetric distance error below the estimate (pc or '20%'; with distance_error_high: a split normal)"),
    Key("distance_error_high", "quantity", "pc", positive=True,
        doc="asymmetric distance error above the estimate (pc or '30%'; with distance_error_low)"),
    Key("distance_from", "str", choices=("parallax", "distance"),
        doc="use only the 'parallax' or only the 'distance' when both are given (default: both are combined)"),
    Key("pm_ra_cosdec", "quantity", "mas/yr", error=True, doc="proper motion in ra*cos(dec)"),
    Key("pm_dec", "quantity", "mas/yr", error=True, doc="proper motion in dec"),
    Key("pm_correlation", "float", default=0.0, lower=-1, upper=1, doc="correlation coefficient of the two proper-motion errors"),
    Key("correlations", "correlations",
        doc="table [star.correlations] of correlation coefficients between ra, dec, parallax, pm_ra_cosdec, pm_dec errors (keys like parallax_pm_ra_cosdec)"),
    Key("radial_velocity", "quantity", "km/s", error=True, doc="measured radial velocity (rare for neutron stars; otherwise drawn from a prior)"),
    Key("transverse_velocity", "quantity", "km/s", positive=True, doc="expected transverse speed for the forecast; default: median of the velocity prior"),
    Key("spin_period", "quantity", "s", error=True, positive=True, doc="spin period"),
    Key("spin_period_derivative", "quantity", "s/s", error=True, doc="spin period derivative (dimensionless, s/s)"),
    Key("temperature", "quantity", "K", error=True, positive=True, doc="redshifted surface temperature as seen at infinity (K, or eV as kT)"),
    Key("luminosity", "quantity", "erg/s", error=True, positive=True, doc="redshifted bolometric thermal luminosity"),
    Key("dispersion_measure", "quantity", "pc / cm3", default=0.0, nonnegative=True, upper=1e4,
        doc="dispersion measure, starting value of the fit (used with a TOA 'frequency' column)"),
]

_CAMPAIGN = [
    Key("start", "time", doc="first visit (MJD TDB or ISO date)"),
    Key("baseline", "quantity", "yr", positive=True, doc="time from the first to the last visit"),
    Key("visits_per_year", "float", positive=True, doc="visits per year, evenly spaced"),
    Key("dates", "times", doc="explicit visit dates instead of start/baseline/visits_per_year"),
    Key("schedule", "str", default="even", choices=("even", "parallax", "motion", "birthplace"),
        doc="where the visits go: 'even' (regular cadence), 'parallax' (minimum parallax error) or 'motion' "
            "(minimum proper-motion error along the expected motion); same visits per year, Sun-allowed days only; "
            "'birthplace' picks among these the one with the most expected information about the birthplace "
            "(with the birthplace forecast)"),
    Key("exposure", "quantity", "s", positive=True, doc="exposure per visit ('20 ks' works)"),
    Key("band", "str", choices=("xray", "radio", "optical"),
        doc="observing band: sets band defaults (sun_avoidance 45 deg for 'xray' and 'optical', 10 deg for "
            "'radio'); keys given explicitly win"),
    Key("sun_avoidance", "quantity", "deg", nonnegative=True, upper=180,
        doc="no visit while the source is closer than this to the Sun (default: by band, 45 deg without one)"),
    Key("source_rate", "quantity", "1/s", positive=True, doc="source count rate (counts/s)"),
    Key("background_rate", "quantity", "1/s", default=0.0, nonnegative=True, doc="background count rate in the source region (counts/s)"),
    Key("pulsed_fraction", "float", lower=0, upper=1, doc="(max-min)/(max+min) of the source pulse, in (0, 1]"),
    Key("pulse_shape", "pulse_shape", default="sinusoid",
        doc="'sinusoid'; a list of harmonic amplitudes relative to the mean [a1, a2, ...]; or a path to a template table (phase, rate)"),
    Key("toa_error", "quantity", "s", positive=True, doc="per-visit TOA error, instead of computing it from photons"),
    Key("toas", "path", doc="TOA table to fit (ECSV or CSV with columns mjd, error)"),
    Key("error_scale", "float", default=1.0, positive=True, doc="white-noise scale factor on TOA errors"),
    Key("added_error", "quantity", "s", default=0.0, nonnegative=True, doc="white noise added in quadrature to TOA errors"),
    Key("red_noise_amplitude", "float", default=0.0, nonnegative=True, doc="red (spin) noise amplitude A at f = 1/yr (dimensionless convention)"),
    Key("red_noise_index", "float", default=4.0, positive=True, doc="spectral index gamma of the red-noise power law"),
    Key("red_noise_modes", "int", default=30, positive=True, doc="number of Fourier frequencies of the red-noise basis"),
    Key("spin_terms", "int", default=2, lower=1, upper=3, doc="spin terms fitted: 1 = frequency, 2 = + derivative, 3 = + second derivative (phase offset always)"),
    Key("target_significance", "float", default=3.0, positive=True, doc="proper-motion significance the baseline search aims for"),
    Key("max_baseline", "quantity", "yr", default=20.0, positive=True, doc="longest baseline the search considers"),
    Key("target_pm_error", "quantity", "mas/yr", positive=True, doc="proper-motion error wanted; the forecast reports the TOA error and exposure needed"),
    Key("prior_pm_ra_cosdec", "quantity", "mas/yr", error=True, doc="external proper-motion measurement to combine with timing"),
    Key("prior_pm_dec", "quantity", "mas/yr", error=True, doc="external proper-motion measurement to combine with timing"),
    Key("prior_parallax", "quantity", "mas", error=True, doc="external parallax measurement to combine with timing"),
    Key("harmonics", "int", default=2, lower=1, upper=20, doc="number of harmonics n of the Z^2_n test"),
    # where the TOAs are referred to (kinage.timing.reference; the TOA table's metadata may carry the same keys)
    Key("toa_reference", "str", default="geocentre", choices=("geocentre", "site", "barycentre"),
        doc="where the TOAs are referred to: 'geocentre' (TDB at the Earth's centre), 'site' (a telescope at "
            "site_longitude/latitude/height) or 'barycentre' (TDB, barycentred for barycentred_ra/dec)"),
    Key("site_longitude", "quantity", "deg", lower=-180, upper=360, doc="telescope longitude, east positive (geodetic WGS84)"),
    Key("site_latitude", "quantity", "deg", lower=-90, upper=90, doc="telescope latitude (geodetic WGS84)"),
    Key("site_height", "quantity", "m", lower=-1000, upper=100000, doc="telescope height above the WGS84 ellipsoid"),
    Key("barycentred_ra", "quantity", "deg", lower=0, upper=360, doc="right ascension (ICRS, degrees) the TOAs were barycentred for"),
    Key("barycentred_dec", "quantity", "deg", lower=-90, upper=90, doc="declination (ICRS, degrees) the TOAs were barycentred for"),
    Key("ephemeris", "str", default="builtin",
        doc="solar-system ephemeris: 'builtin' (astropy's ERFA model) or the path of a JPL file read through astropy "
            "(needs jplephem); nothing downloads"),
    Key("birthplace_forecast", "bool", default=False,
        doc="forecast the birthplace probabilities after the campaign (needs [trace] associations; kinage run)"),
    Key("outcomes", "int", default=200, lower=20, upper=100000,
        reason="fewer than 20 outcomes say little about a distribution; more than 100,000 only cost time",
        doc="simulated campaign outcomes of the birthplace forecast"),
]

_TRACE = [
    Key("associations", "path", doc="association table (ECSV, CSV, FITS or VOTable)"),
    Key("association_columns", "column_map", choices=ASSOCIATION_COLUMNS,
        doc="table [trace.association_columns]: kinage column = \"file column\" or {column = ..., unit = ...}"),
    Key("samples", "int", default=2000, positive=True, doc="Monte Carlo draws of the star"),
    Key("probability_precision", "float", default=0.03, positive=True, upper=0.5, upper_open=True,
        doc="Monte Carlo error wanted for every stated birth probability: star draws are added in batches until "
            "every error is below it or max_samples is reached"),
    Key("max_samples", "int", positive=True,
        doc="most star draws the probability precision may ask for (default 4 x samples; not below samples)"),
    Key("association_samples", "int", default=200, positive=True, doc="Monte Carlo draws of each association"),
    Key("max_age", "quantity", "Myr", default=10.0, positive=True, doc="how far back to integrate"),
    Key("time_steps", "int", default=21, lower=5,
        doc="output times of the integration grid; closest approaches are refined between them by cubic Hermite "
            "interpolation with the velocities, so 21 over 10 Myr agree with 4001 to ~3e-4 pc (DEVELOPERS.md); "
            "raise it with max_age (the error grows as the step^4)"),
    Key("integration_tolerance", "float", default=1e-7, positive=True, lower=1e-14, upper=1e-4,
        doc="relative and absolute tolerance of galpy's adaptive integrator (rtol = atol; galpy's own default is "
            "1e-12); 1e-7 changes d_min by < 2e-3 pc over 10 Myr (convergence study in DEVELOPERS.md)"),
    Key("control_relative_error", "float", default=0.1, positive=True, upper=1.0,
        doc="Monte Carlo standard error wanted for every chance rate f, relative to f; control draws are added "
            "until f (1 - f) / N <= max(control_relative_error x f, control_absolute_error)^2 (never more than "
            "the star draws; the defaults need at most ~5,000 control draws)"),
    Key("control_absolute_error", "float", default=0.002, positive=True, upper=0.5,
        doc="the same as an absolute error, which rules for small chance rates (below "
            "control_absolute_error / control_relative_error = 2% by default)"),
    Key("seed", "int", nonnegative=True, doc="random seed (default: the command-line --seed, else 1)"),
    Key("potential", "str", default="MWPotential2014", doc="Galactic potential parameter set, or 'none' for straight lines"),
    Key("solar_parameters", "str",
        doc="solar position and motion parameter set (default: the one the potential names, e.g. galpy-default "
            "for MWPotential2014, mcmillan17 for McMillan17; another choice gets a warning when inconsistent)"),
    Key("velocity_prior", "str", default="hobbs2005", doc="neutron-star space-velocity distribution for the unknown radial velocity"),
    Key("distance_prior", "str", default="exponential", doc="distance prior used with a parallax"),
    Key("distance_prior_scale", "quantity", "pc", positive=True, doc="length scale of the distance prior (default: the prior's own)"),
    Key("encounter_radius_factor", "float", default=1.0, positive=True, doc="an encounter is d_min below this times the association radius"),
    Key("age_tolerance", "quantity", "Myr", default=0.5, nonnegative=True, doc="an encounter may be this much older than the association's age"),
    Key("control_runs", "int", default=10, nonnegative=True, doc="randomised control runs (proper-motion direction rotated) for the chance rate"),
    Key("chunk_size", "int", default=20000, positive=True, doc="draws integrated at once (bounds memory)"),
    Key("field_prior", "float", default=0.5, positive=True, upper=1.0, upper_open=True,
        doc="prior probability (0 < p < 1) that the star was born outside every listed association; default 0.5 "
            "because most massive stars form in associations but a candidate table lists only a few of them"),
    Key("neighbourhood_share", "float", default=0.4, nonnegative=True, upper=1.0, upper_open=True,
        doc="share (0 <= s < 1) of the births outside the listed associations that happen in their surroundings "
            "(near misses); default 0.4 because star formation is clustered; 0 gives an unrelated field alone"),
    Key("neighbourhood_scale", "quantity", "pc", default=50.0, positive=True,
        doc="extent of an association's surroundings, added in quadrature to its radius; default 50 pc, the "
            "size of a star-forming complex"),
]

_AGES = [
    Key("braking_index", "float", default=3.0, error=True, doc="braking index n (> 1)"),
    Key("initial_period", "quantity", "s", error=True, positive=True, doc="initial spin period P0 for the braking-index age"),
    Key("moment_of_inertia", "quantity", "g cm2", default=1e45, positive=True, doc="moment of inertia for the spin-down luminosity"),
    Key("kinematic_age", "quantity", "yr", error=True, positive=True, doc="kinematic age when no trace is run"),
    Key("mass", "quantity", "solMass", default=1.4, positive=True, doc="neutron-star mass"),
    Key("radius", "quantity", "km", default=12.0, positive=True, doc="neutron-star radius"),
    Key("envelopes", "names", default=("iron", "accreted"), doc="envelope compositions for the cooling age"),
    Key("masses", "floats", default=(1.2, 1.4, 1.6), doc="masses (solar) spanned by the cooling-age range"),
    Key("light_element_mass", "floats",
        doc="log10(Delta M/M) of light-element envelopes between iron and fully accreted (one value or a list); "
            "each adds an envelope 'light<value>' to the cooling age"),
    Key("cooling_model", "str", default="npe-SLy",
        doc="cooling model parameter set (kinage parameter-sets cooling_model); the default npe-SLy is a TOV star with "
            "nucleon pairing ([ages] pairing), modified-urca the earlier reference-star model without pairing"),
    Key("pairing", "str", default="SFB-EEHOr-CCDK",
        doc="nucleon pairing parameter set (kinage parameter-sets pairing) of a cooling model with an equation of "
            "state (npe-SLy, npe-APR4); 'none' for unpaired nucleons; models without one are unpaired"),
    Key("hall_timescale", "quantity", "yr", positive=True, doc="Hall timescale for the Ohm + Hall decay model"),
    Key("ohmic_timescale", "quantity", "yr", positive=True, doc="Ohmic timescale for the Ohm + Hall decay model"),
    Key("samples", "int", default=4000, positive=True, doc="Monte Carlo draws for age uncertainties"),
    Key("shklovskii", "bool", default=True, doc="correct Pdot for the Shklovskii effect when proper motion and distance are known"),
]

# Physical ranges and resource caps, with the reason quoted in error messages.  Kept in one block so that
# keys declared above stay short; a key declared with its own bounds keeps them unless listed here.
_GALAXY_AGE = "older than the Galaxy (13.8 Gyr; Planck Collaboration 2020)"
_RANGES = {
    "star": {
        "name": dict(max_length=200),
        "ra": dict(lower=0, upper=360, upper_open=True, reason="right ascension is an angle in [0, 360) deg"),
        "dec": dict(reason="declination is an angle in [-90, 90] deg"),
        "parallax": dict(lower=-1000, upper=1000, lower_open=True, upper_open=True,
                         reason="nothing is closer than ~1 pc, so |parallax| < 1000 mas"),
        "distance": dict(lower=1, upper=1e5, reason="a Galactic neutron star lies between 1 pc and 100 kpc"),
        "pm_ra_cosdec": dict(lower=-1e5, upper=1e5, reason="no star moves 100 arcsec/yr across the sky"),
        "pm_dec": dict(lower=-1e5, upper=1e5, reason="no star moves 100 arcsec/yr across the sky"),
        "pm_correlation": dict(reason="a correlation coefficient lies in [-1, 1]"),
        "radial_velocity": dict(lower=-5000, upper=5000, reason="no neutron star moves faster than ~2000 km/s"),
        "transverse_velocity": dict(upper=5000, reason="no neutron star moves faster than ~2000 km/s"),
        "spin_period": dict(lower=5e-4, upper=1e6,
                            reason="a neutron star spins slower than break-up (~0.5 ms) and no spin period "
                                   "approaches 1e6 s"),
        "spin_period_derivative": dict(lower=-1e-8, upper=1e-8,
                                       reason="|Pdot| > 1e-8 s/s is beyond any spin-down (magnetars reach ~1e-10)"),
        "temperature": dict(upper=1e8, reason="no neutron-star surface is hotter than ~1e7 K (8.6 keV is 1e8 K)"),
        "luminosity": dict(upper=1e39, reason="above the Eddington luminosity of a neutron star (~2e38 erg/s)"),
    },
    "campaign": {
        "baseline": dict(upper=200, reason="a timing campaign lasting more than two centuries"),
        "visits_per_year": dict(upper=8766, reason="more than one visit an hour"),
                "source_rate": dict(upper=1e7, reason="no detector counts 1e7 photons a second from one source"),
        "background_rate": dict(upper=1e7, reason="no detector counts 1e7 photons a second"),
        "pulsed_fraction": dict(reason="a pulsed fraction lies in (0, 1]"),
        "error_scale": dict(upper=1e3, reason="a white-noise scale factor above 1000"),
        "red_noise_amplitude": dict(upper=1.0, reason="a red-noise amplitude above 1"),
        "red_noise_index": dict(upper=20, reason="a red-noise spectral index above 20"),
        "red_noise_modes": dict(upper=200, reason="the forecast's cost grows as modes^2 x visits (1000 modes on "
                                                   "1000 visits: 1.5 minutes) and 200 frequencies resolve any campaign"),
        "target_significance": dict(upper=1000, reason="a significance above 1000 sigma"),
        "max_baseline": dict(upper=200, reason="a baseline search beyond two centuries"),
        "barycentred_ra": dict(upper_open=True, reason="right ascension is an angle in [0, 360) deg"),
        # bare numbers ambiguous between s and ks (exposures) or s and us (TOA errors): a unit is required
        "exposure": dict(upper=3.15576e7, reason="an exposure per visit longer than a year"),
        "toa_error": dict(lower=1e-9, upper=86400,
                          reason="no pulse arrival time is measured to better than ~10 ns (times are kept to "
                                 "~1 ns), and a TOA error longer than a day cannot time a pulse"),
        "added_error": dict(upper=86400, reason="white noise longer than a day"),
    },
    "trace": {
        "samples": dict(upper=1_000_000, reason="memory and run time grow with the draws (1e6 draws peak at "
                                                 "~1.2 GB and run for many minutes)"),
        "max_samples": dict(upper=1_000_000, reason="memory and run time grow with the draws (1e6 draws peak at "
                                                     "~1.2 GB and run for many minutes)"),
        "probability_precision": dict(reason="a Monte Carlo error on a probability, between 0 and 0.5 exclusive"),
        "association_samples": dict(upper=100_000, reason="memory grows as associations x draws x time steps"),
        "max_age": dict(upper=13_800, reason=_GALAXY_AGE),
        "control_runs": dict(upper=1000, reason="run time grows with the control runs"),
        "chunk_size": dict(upper=1_000_000, reason="memory grows as chunk size x time steps"),
        "encounter_radius_factor": dict(upper=1000, reason="an encounter radius 1000 times the association's"),
        "age_tolerance": dict(upper=13_800, reason=_GALAXY_AGE),
        "distance_prior_scale": dict(upper=1e5, reason="a distance prior scale beyond 100 kpc"),
        "time_steps": dict(upper=100_000, reason="at least 5 output times, so that a closest approach can fall between "
                                                  "the ends of the grid; memory grows as draws x time steps (401 steps "
                                                  "already converge)"),
        "field_prior": dict(reason="a prior probability strictly between 0 and 1 (at 1 no listed association "
                                   "could be the birthplace)"),
        "neighbourhood_scale": dict(upper=1e4, reason="an association's surroundings are a star-forming complex "
                                                      "(~50-500 pc); 10 kpc is the size of the Galactic disc"),
        "potential": dict(choices="param:potential"),
        "solar_parameters": dict(choices="param:solar_parameters"),
        "velocity_prior": dict(choices="param:velocity_prior"),
        "distance_prior": dict(choices="param:distance_prior"),
    },
    "ages": {
        "braking_index": dict(lower=1, lower_open=True, upper=100,
                              reason="n > 1 gives a finite spin-down age t = P/((n-1) Pdot); no spin-down law "
                                     "gives n > 100"),
        "initial_period": dict(lower=5e-4, reason="a neutron star spins slower than break-up (~0.5 ms)"),
        "moment_of_inertia": dict(lower=1e43, upper=1e47, reason="a neutron star has I ~ 1e45 g cm2"),
        # ages and timescales: a bare number is ambiguous between yr, kyr and Myr, so a unit is required
        "kinematic_age": dict(upper=1.38e10, reason=_GALAXY_AGE, example="1.2 Myr"),
        "hall_timescale": dict(example="10 kyr"),
        "ohmic_timescale": dict(example="1 Myr"),
        "mass": dict(lower=0.1, upper=3.0,
                     reason="a neutron star weighs ~0.1-3 Msun (none is stable above ~2.3-3 Msun)"),
        "masses": dict(lower=0.1, upper=3.0, max_length=50,
                       reason="a neutron star weighs ~0.1-3 Msun (none is stable above ~2.3-3 Msun)"),
        "radius": dict(upper=30, reason="neutron stars have radii of ~10-15 km"),
        "envelopes": dict(choices="envelope", max_length=20),
        "light_element_mass": dict(lower=-17, upper=-7, max_length=20,
                                   reason="the partially accreted envelope relation of Potekhin, Chabrier & Yakovlev "
                                          "1997 spans log10(Delta M/M) from -17 (iron-like) to -7 (fully accreted)"),
        "cooling_model": dict(choices="param:cooling_model"),
        "pairing": dict(choices="param:pairing"),
        "samples": dict(upper=1_000_000, reason="1e6 Monte Carlo draws already give sub-percent intervals"),
    },
}


def range_text(key):
    """The accepted values of a key in words, e.g. ``'0 <= value < 360 deg'`` or ``"one of 'even', ..."``."""
    parts = []
    unit = f" {key.unit}" if key.unit and key.kind != "float" else ""
    lo = key.lower if key.lower is not None else (0 if key.positive or key.nonnegative else None)
    lo_open = key.lower_open or (key.lower is None and key.positive)
    if lo is not None or key.upper is not None:
        text = "value"
        if lo is not None:
            text = f"{lo:g} {'<' if lo_open else '<='} {text}"
        if key.upper is not None:
            text += f" {'<' if key.upper_open else '<='} {key.upper:g}"
        parts.append(text + unit)
    if isinstance(key.choices, tuple):
        parts.append("one of " + ", ".join(repr(c) for c in key.choices))
    if key.max_length:
        parts.append(f"at most {key.max_length} {'characters' if key.kind == 'str' else 'items'}")
    if key.example:
        parts.append(f"a unit is required, e.g. '{key.example}'")
    return "; ".join(parts)


def _with_ranges(table, keys):
    from dataclasses import replace

    extra = _RANGES.get(table, {})
    return {k.name: (replace(k, **extra[k.name]) if k.name in extra else k) for k in keys}


SCHEMA = {
    "star": _with_ranges("star", _STAR),
    "campaign": _with_ranges("campaign", _CAMPAIGN),
    "trace": _with_ranges("trace", _TRACE),
    "ages": _with_ranges("ages", _AGES),
}
TABLES = tuple(SCHEMA)
TOP_LEVEL_KEYS = ("title", "description")
