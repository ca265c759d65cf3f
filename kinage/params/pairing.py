"""Built-in nucleon pairing models (kind ``"pairing"``): critical-temperature profiles of published gap models.

Each channel -- neutron singlet (1S0), neutron triplet (3P2, m_J = 0) and
proton singlet (1S0) -- has a zero-temperature gap as a function of the
Fermi wave number k_F (fm^-1) in the common phenomenological form
(Kaminker, Haensel & Yakovlev 2001, A&A 373, L17; Ho, Elshamouty, Heinke &
Potekhin 2015, PRC 91, 015806, eq. 2)::

    Delta(k_F) = Delta_0 (k_F - k_0)^2 / ((k_F - k_0)^2 + k_1) * (k_F - k_2)^2 / ((k_F - k_2)^2 + k_3)

for k_0 < k_F < k_2 and zero outside, with the critical temperature from the
BCS ratios of the gap at T = 0 (:mod:`kinage.ages.pairing`):
k_B T_c = Delta / 1.764 for a singlet gap and Delta / 1.188 for the triplet
gap amplitude Delta_0 of m_J = 0 pairing.

Values (plain floats and strings) used by :mod:`kinage.ages.star_cooling`:

neutron_singlet, neutron_triplet, proton_singlet
    Name of the published gap model of the channel, or ``"none"``.
neutron_singlet_gap, neutron_triplet_gap, proton_singlet_gap
    (Delta_0 [MeV], k_0 [fm^-1], k_1 [fm^-2], k_2 [fm^-1], k_3 [fm^-2]) of the
    fit, from Ho et al. 2015, Table II (the table could not be consulted when
    this was written: values from memory).

Reading the triplet entries as the m_J = 0 amplitude Delta_0 in MeV is part
of the from-memory caveat: so read, TToa reaches T_c = 4.4e9 K over the
whole core of a 1.4 Msun SLy star (neutron k_F 1.5-2.4 fm^-1) and EEHOr
0.8e9 K at k_F ~ 1.4 fm^-1, paired only at the core's outer edge; CCDK pairs
every proton of that core (k_F 0.5-1.1 fm^-1, T_c up to 6.7e9 K).

Where both neutron channels are open, the larger T_c decides which pairing
the neutrons have (the singlet at the low densities of the outer core, the
triplet deeper in).  Only the core is modelled (kinage.ages.star_cooling):
the neutron singlet gap acts where it reaches into the core; the inner
crust's neutrons, their heat capacity and their pair-breaking emission are
left out.
"""

from .sets import ParameterSet, _builtin

_HO15 = ("Ho, Elshamouty, Heinke & Potekhin 2015, PRC 91, 015806, eq. 2 and Table II (gap fit parameters; "
         "value from memory)")
_CHANNEL_REFS = {
    "SFB": "Schwenk, Friman & Brown 2003, Nucl. Phys. A 713, 191 (neutron 1S0 gap SFB; citation from memory)",
    "CCDK": "Chen, Clark, Dave & Khodel 1993, Nucl. Phys. A 555, 59 (proton 1S0 gap CCDK; citation from memory)",
    "TToa": "Takatsuka & Tamagaki 2004, Prog. Theor. Phys. 112, 37 (neutron 3P2 gap TToa; citation from memory)",
    "EEHOr": "Elgaroy, Engvik, Hjorth-Jensen & Osnes 1996, Nucl. Phys. A 604, 466 (neutron 3P2 gap EEHOr; "
             "citation from memory)",
}
#: gap fits (Delta_0 MeV, k0, k1, k2, k3), Ho et al. 2015, Table II (value from memory)
GAPS = {
    "SFB": (45.0, 0.1, 4.5, 1.55, 2.5),
    "CCDK": (102.0, 0.0, 9.0, 1.3, 1.5),
    "TToa": (2.1, 1.1, 0.6, 3.2, 2.4),
    "EEHOr": (0.23, 1.2, 0.026, 1.6, 0.008),
}
_MINIMAL_REFS = ("Page, Lattimer, Prakash & Steiner 2004, ApJS 155, 623 (minimal cooling: nucleon pairing with "
                 "pair-breaking emission, no direct Urca)",)


def _set(name, ns, nt, ps, description, extra_refs=()):
    values = {}
    refs = [_HO15] if any((ns, nt, ps)) else []
    for key, model in (("neutron_singlet", ns), ("neutron_triplet", nt), ("proton_singlet", ps)):
        values[key] = model or "none"
        values[f"{key}_gap"] = GAPS[model] if model else None
        if model:
            refs.append(_CHANNEL_REFS[model])
    return _builtin(ParameterSet("pairing", name, values, references=tuple(refs) + tuple(extra_refs),
                                 description=description))


_set("none", None, None, None, "unpaired nucleons: no superfluidity, no superconductivity, no pair-breaking emission")
_set("SFB-TToa-CCDK", "SFB", "TToa", "CCDK",
     "neutron 1S0 SFB, neutron 3P2 TToa (strong triplet: T_c up to a few 1e9 K), proton 1S0 CCDK",
     _MINIMAL_REFS)
_set("SFB-EEHOr-CCDK", "SFB", "EEHOr", "CCDK",
     "neutron 1S0 SFB, neutron 3P2 EEHOr (weak triplet confined to the outer core), proton 1S0 CCDK",
     _MINIMAL_REFS)

#: the set cooling models with an equation of state use unless ``[ages] pairing`` names another
DEFAULT = "SFB-EEHOr-CCDK"
