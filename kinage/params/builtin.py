"""The built-in parameter sets, each with its references.

Units: lengths in kpc, speeds in km/s, masses in solar masses.
"""

from .sets import ParameterSet, _builtin

# --- solar position and motion ----------------------------------------------
# values: r0_kpc (Sun - Galactic centre distance), z0_kpc (height above the
# plane), v_sun_kms (x, y, z) Galactocentric Cartesian velocity of the Sun as in
# astropy's Galactocentric frame (x towards the centre seen from the Sun,
# y in the direction of rotation, z towards the NGP), roll_deg.
_builtin(ParameterSet(
    "solar_parameters", "astropy-v4.0",
    {"r0_kpc": 8.122, "z0_kpc": 0.0208, "v_sun_kms": (12.9, 245.6, 7.78), "roll_deg": 0.0},
    references=(
        "GRAVITY Collaboration 2018, A&A 615, L15 (R0 = 8.122 kpc)",
        "Bennett & Bovy 2019, MNRAS 482, 1417 (z_sun = 20.8 pc)",
        "Reid & Brunthaler 2004, ApJ 616, 872; Drimmel & Poggio 2018, RNAAS 2, 210 (v_sun)",
    ),
    description="astropy Galactocentric frame defaults (parameter set v4.0)",
))
_builtin(ParameterSet(
    "solar_parameters", "galpy-default",
    {"r0_kpc": 8.0, "z0_kpc": 0.0208, "v_sun_kms": (11.1, 220.0 + 12.24, 7.25), "roll_deg": 0.0},
    references=(
        "Bovy 2015, ApJS 216, 29 (R0 = 8 kpc, vc = 220 km/s)",
        "Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829 (U, V, W) = (11.1, 12.24, 7.25) km/s",
        "Bennett & Bovy 2019, MNRAS 482, 1417 (z_sun = 20.8 pc)",
    ),
    description="galpy's default Sun: R0 = 8 kpc, vc = 220 km/s, Schoenrich et al. 2010 solar motion",
))
_builtin(ParameterSet(
    "solar_parameters", "mcmillan17",
    {"r0_kpc": 8.21, "z0_kpc": 0.0208, "v_sun_kms": (11.1, 233.1 + 12.24, 7.25), "roll_deg": 0.0},
    references=(
        "McMillan 2017, MNRAS 465, 76 (R0 = 8.21 kpc, vc = 233.1 km/s)",
        "Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829 (solar motion)",
    ),
    description="Sun consistent with the McMillan17 potential",
))

# --- Galactic potentials ------------------------------------------------------
# values: galpy (name of the galpy object), ro_kpc and vo_kms (its natural units),
# solar_parameters (name of the solar parameter set that goes with the model: the
# same R0 and a circular speed at the Sun equal to vo; used when the scenario names
# none, see kinage.params.registry.galaxy_pair)
_builtin(ParameterSet(
    "potential", "MWPotential2014",
    {"galpy": "MWPotential2014", "ro_kpc": 8.0, "vo_kms": 220.0, "solar_parameters": "galpy-default"},
    references=("Bovy 2015, ApJS 216, 29 (galpy; MWPotential2014, vc = 220 km/s at 8 kpc)",),
    description="bulge + Miyamoto-Nagai disc + NFW halo fitted to Milky Way data",
))
_builtin(ParameterSet(
    "potential", "McMillan17",
    {"galpy": "McMillan17", "ro_kpc": 8.21, "vo_kms": 233.1, "solar_parameters": "mcmillan17"},
    references=("McMillan 2017, MNRAS 465, 76", "Bovy 2015, ApJS 216, 29 (galpy implementation)"),
    description="McMillan (2017) best-fitting Milky Way mass model",
))
_builtin(ParameterSet(
    "potential", "none",
    {"galpy": None, "ro_kpc": 8.0, "vo_kms": 220.0, "solar_parameters": "galpy-default"},
    references=(),
    description="no forces: straight lines in the Galactocentric rest frame",
))

# --- neutron-star space-velocity distributions ---------------------------------
# values: components = ((weight, sigma_kms), ...): a mixture of isotropic 3-D
# Maxwellians, each with 1-D dispersion sigma.
_builtin(ParameterSet(
    "velocity_prior", "hobbs2005",
    {"components": ((1.0, 265.0),)},
    references=("Hobbs, Lorimer, Lyne & Kramer 2005, MNRAS 360, 974 (sigma = 265 km/s; mean 3-D speed ~400 km/s)",),
    description="single Maxwellian, sigma = 265 km/s",
))
_builtin(ParameterSet(
    "velocity_prior", "verbunt2017",
    # abstract: 42% with mean speed sigma*sqrt(8/pi) = 120 km/s, 58% with mean 540 km/s
    {"components": ((0.42, 120.0 / 1.5957691216057308), (0.58, 540.0 / 1.5957691216057308))},
    references=("Verbunt, Igoshev & Cator 2017, A&A 608, A57 (42% mean 120 km/s, 58% mean 540 km/s)",),
    description="two Maxwellians: 42% sigma = 75 km/s, 58% sigma = 338 km/s",
))
_builtin(ParameterSet(
    "velocity_prior", "igoshev2020",
    {"components": ((0.20, 56.0), (0.80, 336.0))},
    references=("Igoshev 2020, MNRAS 494, 3663 (young pulsars: 20% sigma = 56 km/s, sigma = 336 km/s)",),
    description="two Maxwellians for young pulsars: 20% sigma = 56 km/s, 80% sigma = 336 km/s",
))

# --- distance priors ------------------------------------------------------------
# values: form ('exponential' r^2 exp(-r/L), 'uniform' r^2 up to r_max),
# scale_kpc (L), r_max_kpc.
_builtin(ParameterSet(
    "distance_prior", "exponential",
    {"form": "exponential", "scale_kpc": 1.35, "r_max_kpc": 30.0},
    references=("Bailer-Jones 2015, PASP 127, 994 (exponentially decreasing space density; L = 1.35 kpc as in Astraatmadja & Bailer-Jones 2016)",),
    description="exponentially decreasing space density, r^2 exp(-r/L)",
))
_builtin(ParameterSet(
    "distance_prior", "uniform",
    {"form": "uniform", "scale_kpc": 5.0, "r_max_kpc": 5.0},
    references=("Bailer-Jones 2015, PASP 127, 994 (uniform space density, r^2 up to r_lim)",),
    description="uniform space density, r^2 up to r_max = 5 kpc",
))
from . import cooling  # noqa: E402,F401
from . import eos  # noqa: E402,F401
from . import pairing  # noqa: E402,F401
