"""Built-in cooling-model parameter sets (kind ``"cooling_model"``).

Values (plain floats) used by :mod:`kinage.ages.cooling`:

heat_capacity_erg_K
    C0 in C = C0 s_C T9 (erg/K) for the reference star, T9 the redshifted
    core temperature in 1e9 K.  Yakovlev & Pethick 2004, ARA&A 42, 169,
    sec. 4: C ~ 1e39 T9 erg/K (value from memory).
modified_urca_erg_s
    L0 in L_MU = L0 s_L T9^8 (erg/s).  Yakovlev & Pethick 2004: slow
    (modified Urca) cooling L ~ 1e40 T9^8 erg/s (value from memory).
direct_urca_erg_s, direct_urca_threshold_msun, direct_urca_width_msun
    L_DU = L1 f(M) T9^6 with f rising linearly from 0 at the threshold mass
    to 1 a width above it.  Yakovlev & Pethick 2004: fast cooling
    L ~ 1e46 T9^6 erg/s (value from memory); the threshold and the linear
    ramp are illustrative (common practice, no source): the direct-Urca
    threshold depends on the equation of state.
reference_mass_msun, reference_radius_km
    The star the coefficients refer to.  Other masses and radii scale as
    C ~ M rho^(-2/3) and L_MU ~ M rho^(-1/3) with mean density rho ~ M / R^3
    (Shapiro & Teukolsky 1983, ch. 11; value from memory).
t_start_yr, t_end_yr
    Time span of the isothermal-core model (core isothermal after ~100 yr:
    Yakovlev & Pethick 2004, sec. 4).
"""

from .registry import ParameterSet, _builtin

_COMMON = {
    "heat_capacity_erg_K": 1.0e39,
    "modified_urca_erg_s": 1.0e40,
    "reference_mass_msun": 1.4,
    "reference_radius_km": 12.0,
    "t_start_yr": 100.0,
    "t_end_yr": 1.0e7,
}
_REFS = (
    "Yakovlev & Pethick 2004, ARA&A 42, 169 (C ~ 1e39 T9 erg/K; L_MU ~ 1e40 T9^8, L_DU ~ 1e46 T9^6 erg/s; memory)",
    "Shapiro & Teukolsky 1983, Black Holes, White Dwarfs and Neutron Stars, ch. 11 (mass-density scalings; memory)",
    "Gudmundsson, Pethick & Epstein 1983, ApJ 272, 286; Potekhin, Chabrier & Yakovlev 1997, A&A 323, 415 (envelopes)",
)

_builtin(ParameterSet(
    "cooling_model", "minimal",
    dict(_COMMON, direct_urca_erg_s=0.0, direct_urca_threshold_msun=0.0, direct_urca_width_msun=0.1),
    references=_REFS + ("Page, Lattimer, Prakash & Steiner 2004, ApJS 155, 623 (minimal cooling: no direct Urca)",),
    description="isothermal core, modified Urca neutrinos only (no superfluidity, no direct Urca)",
))
_builtin(ParameterSet(
    "cooling_model", "direct-urca",
    dict(_COMMON, direct_urca_erg_s=1.0e46, direct_urca_threshold_msun=1.5, direct_urca_width_msun=0.1),
    references=_REFS + (
        "Lattimer, Pethick, Prakash & Haensel 1991, PRL 66, 2701 (direct Urca above a threshold density)",),
    description="modified Urca plus direct Urca above 1.5 solar masses (illustrative threshold)",
))
