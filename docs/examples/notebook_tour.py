# %% [markdown]
# # kinage in a notebook: one invented star, three questions
#
# A notebook-style script (cells marked ``# %%``; ``jupytext --to notebook`` turns it into a
# notebook).  Every name and number here is **invented**: the star "Tamsin-7" and the associations
# "Corvan OB2", "Lysa Group" and "Merrow Drift" describe no real object.  The star was placed by
# hand where a star leaving Corvan OB2 1.1 Myr ago at ~120 km/s would be today.
#
# The test suite runs this file (``tests/api/test_notebook_tour.py``); set ``KINAGE_TOUR_OUT`` to
# a folder to keep the figure.

# %%
import os
import warnings

import matplotlib

# A notebook chooses its own backend (inline, widget, ...).  Here: a headless, non-Agg one, to show
# that kinage never switches it.
matplotlib.use("svg")

import astropy.units as u  # noqa: E402
import matplotlib.pyplot as plt  # noqa: E402
from astropy.coordinates import SkyCoord  # noqa: E402
from astropy.table import QTable  # noqa: E402
from astropy.time import Time  # noqa: E402

import kinage  # noqa: E402

# %% [markdown]
# ## The star, from a SkyCoord
# Position, distance and proper motion come from the ``SkyCoord``; errors, spin and temperature
# are given beside it.  The result is the ``[star]`` table as a dict of Quantities.

# %%
coord = SkyCoord(ra=175.936 * u.deg, dec=-28.380 * u.deg, distance=320 * u.pc,
                 pm_ra_cosdec=48.05 * u.mas / u.yr, pm_dec=4.02 * u.mas / u.yr)
star = kinage.star_from_skycoord(
    coord, name="Tamsin-7", distance_error=25 * u.pc,
    pm_ra_cosdec_error=0.3 * u.mas / u.yr, pm_dec_error=0.3 * u.mas / u.yr,
    spin_period=0.6271 * u.s, spin_period_derivative=2.1e-15,
    temperature=58 * u.eV, temperature_error=6 * u.eV)

# %% [markdown]
# ## Candidate birth associations, in memory
# A ``QTable`` with units; no file is needed.

# %%
associations = QTable({
    "name": ["Corvan OB2", "Lysa Group", "Merrow Drift"],
    "ra": [160.0, 150.5, 190.2] * u.deg,
    "dec": [-28.0, -40.1, -15.6] * u.deg,
    "distance": [0.42, 0.55, 0.38] * u.kpc,
    "pm_ra_cosdec": [-7.1, -5.2, -9.0] * u.mas / u.yr,
    "pm_dec": [2.3, 3.9, -1.4] * u.mas / u.yr,
    "radial_velocity": [14.0, 18.0, 6.0] * u.km / u.s,
    "radius": [15.0, 20.0, 12.0] * u.pc,
    "age": [1.5, 8.0, 4.0] * u.Myr,
})

# %% [markdown]
# ## The scenario
# Values may be Quantities, Times or strings with units.

# %%
SAMPLES = int(os.environ.get("KINAGE_TOUR_SAMPLES", "300"))
scenario = kinage.scenario_from_dict({
    "title": "Tamsin-7 (invented)",
    "star": star,
    "campaign": {"start": Time("2028-02-01"), "baseline": 4 * u.yr, "visits_per_year": 6,
                 "toa_error": 0.15 * u.ms},
    "trace": {"associations": associations, "samples": SAMPLES, "association_samples": 60,
              "max_age": 3 * u.Myr, "control_runs": 2, "seed": 11},
    "ages": {"braking_index": 3},
})
scenario

# %% [markdown]
# ## 1. Can a timing campaign measure the motion?

# %%
with warnings.catch_warnings():
    warnings.simplefilter("ignore", kinage.KinageWarning)  # shown in a notebook; kept in .warnings
    forecast = kinage.forecast(scenario)
print(repr(forecast))
print(forecast.summary())

# %% [markdown]
# Simulate the campaign's arrival times and fit them: the TOAs go in as an astropy Table.

# %%
toas = kinage.simulate(scenario, rng=5).table
fit = kinage.fit(scenario, toas)
print(repr(fit))

# %% [markdown]
# ## 2. Where and when was it born?

# %%
trace = kinage.trace(scenario)
print(repr(trace))
trace.table()["name", "encounter_fraction", "age_median"]

# %% [markdown]
# ## 3. Do its ages agree?

# %%
ages = kinage.compare_ages(scenario, trace)
print(repr(ages))
print(ages.summary())

# %% [markdown]
# ## Every result into its own Axes

# %%
fig, axes = plt.subplots(2, 2, figsize=(11, 8), layout="constrained")
figures = [forecast.plot(ax=axes[0, 0]), fit.plot(ax=axes[0, 1]), trace.plot("dmin_tau", ax=axes[1, 0]),
           ages.plot(ax=axes[1, 1])]
assert all(f is fig for f in figures), "each plot draws into the Axes it is given"

out = os.environ.get("KINAGE_TOUR_OUT")
if out:
    fig.savefig(os.path.join(out, "notebook_tour.svg"))
    fig.savefig(os.path.join(out, "notebook_tour.png"), dpi=80)
plt.close(fig)

# kinage kept the backend the notebook chose
assert matplotlib.get_backend().lower() == "svg", matplotlib.get_backend()
print("backend kept:", matplotlib.get_backend())
