"""Built-in cooling-model parameter sets (kind ``"cooling_model"``).

``modified-urca`` (the default) is slow cooling WITHOUT nucleon pairing:
an isothermal core losing heat by modified-Urca neutrinos and surface
photons.  It leaves out nucleon superfluidity/superconductivity and the
Cooper pair-breaking-and-formation neutrinos that come with it, direct Urca,
and heating.  It is therefore not the "minimal cooling" paradigm of Page,
Lattimer, Prakash & Steiner 2004 (ApJS 155, 623; also Gusakov et al. 2004),
which includes pairing.  Its curves are checked against the closed-form
solutions of their own equations (tests/reference/test_cooling_closed_forms.py);
they are not fitted to or digitised from published cooling curves, and the
report claims no numerical agreement with any.  The old name ``minimal`` is still accepted and
resolves to this set.  ``direct-urca`` adds fast cooling above an
illustrative threshold mass.

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

from .sets import _REGISTRY, ParameterSet, _builtin

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

_SLOW = _builtin(ParameterSet(
    "cooling_model", "modified-urca",
    dict(_COMMON, direct_urca_erg_s=0.0, direct_urca_threshold_msun=0.0, direct_urca_width_msun=0.1),
    references=_REFS + (
        "curves checked against the closed-form solutions of the same equations: neutrino era "
        "T9 = (1e9 C0 / (6 L0 t))^(1/6), photon era with the Gudmundsson, Pethick & Epstein 1983 envelope; "
        "not fitted to or digitised from published cooling curves (e.g. the non-superfluid curves of Yakovlev & "
        "Pethick 2004 or the no-pairing curves of Page, Lattimer, Prakash & Steiner 2004, ApJS 155, 623), so no "
        "numerical agreement with them is claimed",),
    description=("slow cooling without nucleon pairing: isothermal core, modified-Urca neutrinos, no direct Urca, "
                 "no superfluidity or pair-breaking emission, no heating. Not the 'minimal cooling' of Page et al. "
                 "2004, which includes pairing; a stand-in for non-superfluid slow cooling, not fitted to "
                 "published curves"),
))
# the name this set had before it was described honestly: still accepted in scenario files, recorded under
# its new name (the registry lists every set once)
_REGISTRY["cooling_model"]["minimal"] = _SLOW
_builtin(ParameterSet(
    "cooling_model", "direct-urca",
    dict(_COMMON, direct_urca_erg_s=1.0e46, direct_urca_threshold_msun=1.5, direct_urca_width_msun=0.1),
    references=_REFS + (
        "Lattimer, Pethick, Prakash & Haensel 1991, PRL 66, 2701 (direct Urca above a threshold density)",),
    description=("modified Urca plus direct Urca above 1.5 solar masses (illustrative threshold); "
                 "no pairing, no heating"),
))

_NPE_REFS = (
    "Yakovlev, Kaminker, Gnedin & Haensel 2001, Phys. Rep. 354, 1 (modified Urca and nucleon bremsstrahlung "
    "emissivities, Fermi-liquid heat capacity, superfluid reduction factors; coefficients from memory)",
    "Levenfish & Yakovlev 1994, Astron. Rep. 38, 247; Yakovlev, Kaminker & Levenfish 1999, A&A 343, 650; "
    "Leinson & Perez 2006, Phys. Lett. B 638, 114; Page, Lattimer, Prakash & Steiner 2009, ApJ 707, 1131 "
    "(heat capacity of paired nucleons, pair breaking and formation; with a pairing set)",
    "Gnedin, Yakovlev & Potekhin 2001, MNRAS 324, 725 (isothermal interior after thermal relaxation)",
    "Read, Lackey, Owen & Friedman 2009, PRD 79, 124032 (equation of state; see the eos sets)",
    "Gudmundsson, Pethick & Epstein 1983, ApJ 272, 286; Potekhin, Chabrier & Yakovlev 1997, A&A 323, 415 (envelopes)",
)
for _eos in ("SLy", "APR4"):
    # heat_capacity_erg_K, modified_urca_erg_s and the reference star are required by the format but not used:
    # an eos model integrates both over the TOV star of each mass (kinage.ages.star_cooling)
    _builtin(ParameterSet(
        "cooling_model", f"npe-{_eos}",
        dict(_COMMON, direct_urca_erg_s=0.0, direct_urca_threshold_msun=0.0, direct_urca_width_msun=0.1,
             eos=_eos, effective_mass_n=0.8, effective_mass_p=0.8),
        references=_NPE_REFS,
        description=(f"npe core of a TOV star ({_eos} EOS): heat capacity, modified Urca and nucleon "
                     "bremsstrahlung integrated over the volume with redshift factors, radius from the EOS; nucleon "
                     "pairing from the [ages] pairing set (default SFB-EEHOr-CCDK: reduced heat capacity and "
                     "emission, pair breaking and formation; 'none' for unpaired nucleons); crust left out, no "
                     "direct Urca, no heating"),
    ))
