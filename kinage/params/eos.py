"""Built-in equations of state (kind ``"eos"``): piecewise polytropes of Read et al. 2009.

Read, Lackey, Owen & Friedman 2009 (PRD 79, 124032) fit tabulated nuclear
equations of state with a four-piece polytropic crust (their Table II, a fit
to SLy) and three core polytropes p = K_i rho^Gamma_i joined at rest-mass
densities rho_1 = 10^14.7 and rho_2 = 10^15 g/cm^3, fixed by the pressure p_1
at rho_1 (their Table III).  Values (plain floats) used by
:mod:`kinage.ages.structure`:

log10_p1_dyn_cm2
    log10 of the pressure at rho_1, dyn/cm^2.
gamma1, gamma2, gamma3
    Adiabatic indices of the three core pieces.
max_mass_msun, radius_1p4_km
    Maximum mass and radius of a 1.4 Msun star that Read et al. (Table III)
    give for the fit; kept for the tests and listings, never used by the
    solver.

The tables of the 2009 paper could not be consulted when this was written:
the parameters and the published masses and radii are from memory (value
from memory); the tests check that they are consistent with each other
through kinage's own TOV solution.
"""

from .sets import ParameterSet, _builtin

_READ09 = "Read, Lackey, Owen & Friedman 2009, PRD 79, 124032, Tables II-III (piecewise-polytrope fit; memory)"

#: crust of Read et al. 2009 (Table II, fit to SLy): lower rest-mass density of each piece (g/cm^3), K (cgs,
#: pressure as p/c^2 in g/cm^3) and Gamma
CRUST_RHO_G_CM3 = (0.0, 2.44034e7, 3.78358e11, 2.62780e12)
CRUST_K = (6.80110e-9, 1.06186e-6, 5.36100e1, 3.99874e-8)
CRUST_GAMMA = (1.58425, 1.28733, 0.62223, 1.35692)
#: dividing densities of the core pieces, g/cm^3
RHO1_G_CM3 = 10**14.7
RHO2_G_CM3 = 1.0e15

_builtin(ParameterSet(
    "eos", "SLy",
    {"log10_p1_dyn_cm2": 34.384, "gamma1": 3.005, "gamma2": 2.988, "gamma3": 2.851,
     "max_mass_msun": 2.049, "radius_1p4_km": 11.736},
    references=(_READ09, "Douchin & Haensel 2001, A&A 380, 151 (the SLy equation of state)"),
    description="SLy (Skyrme Lyon, Douchin & Haensel 2001) as a piecewise polytrope; Mmax 2.05 Msun, R(1.4) 11.7 km",
))
_builtin(ParameterSet(
    "eos", "APR4",
    {"log10_p1_dyn_cm2": 34.269, "gamma1": 2.830, "gamma2": 3.445, "gamma3": 3.348,
     "max_mass_msun": 2.213, "radius_1p4_km": 11.428},
    references=(_READ09, "Akmal, Pandharipande & Ravenhall 1998, PRC 58, 1804 (A18 + dv + UIX*)"),
    description="APR4 (Akmal, Pandharipande & Ravenhall 1998) as a piecewise polytrope; Mmax 2.21 Msun, "
                "R(1.4) 11.4 km",
))
