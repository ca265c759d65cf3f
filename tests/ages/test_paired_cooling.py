"""Cooling of a paired npe core: critical temperatures, paired-core tables, curves against published behaviour."""

import json

import numpy as np
import pytest

from kinage.ages.cooling import cooling_curve
from kinage.ages.pairing import K_PER_MEV, critical_temperature
from kinage.ages.star_cooling import core_profile, fermi_heat_capacity, npe_core_coefficients, paired_core_tables
from kinage.cli import main
from kinage.params import available, get

STRONG, DEFAULT = "SFB-TToa-CCDK", "SFB-EEHOr-CCDK"


def _table_at(table, temp):
    lt, lc, ll = table
    return float(np.exp(np.interp(np.log(temp), lt, lc))), float(np.exp(np.interp(np.log(temp), lt, ll)))


def test_critical_temperature_follows_bcs_and_the_published_singlet_gap():
    # BCS: Delta(T = 0) = 1.764 k_B T_c for an isotropic gap (e.g. Tinkham, Introduction to Superconductivity, ch. 3);
    # the SFB neutron 1S0 gap (Schwenk, Friman & Brown 2003, Nucl. Phys. A 713, 191) peaks at ~0.8 MeV near
    # k_F ~ 0.8 fm^-1 (value from memory), and no channel pairs outside its k_F range
    kf = np.linspace(0.05, 1.6, 311)
    tc = critical_temperature(kf, get("pairing", STRONG)["neutron_singlet_gap"], "A")
    assert tc.max() * 1.764 / K_PER_MEV == pytest.approx(0.8, rel=0.15)
    assert kf[np.argmax(tc)] == pytest.approx(0.8, abs=0.15)
    assert critical_temperature([0.05, 1.6], get("pairing", STRONG)["neutron_singlet_gap"]).tolist() == [0.0, 0.0]
    assert critical_temperature(kf, None).max() == 0.0


def test_paired_tables_reduce_to_normal_matter_above_every_tc_and_without_pairing():
    # unpaired npe matter: C = C0 T9, L = L0 T9^8 (Yakovlev et al. 2001, Phys. Rep. 354, 1); pairing changes nothing
    # above every critical temperature (all T_c of these gap models are below 1e10 K)
    c0, l0, _ = npe_core_coefficients("SLy", 1.4)
    for t in (3e8, 1e9):
        c, lum = _table_at(paired_core_tables("SLy", 1.4, pairing="none"), t)
        assert c == pytest.approx(c0 * t / 1e9, rel=1e-6) and lum == pytest.approx(l0 * (t / 1e9) ** 8, rel=1e-6)
    hot = 3e10
    for name in (STRONG, DEFAULT):
        c, lum = _table_at(paired_core_tables("SLy", 1.4, pairing=name), hot)
        assert c == pytest.approx(c0 * hot / 1e9, rel=1e-3) and lum == pytest.approx(l0 * (hot / 1e9) ** 8, rel=1e-3)


def test_fully_paired_core_keeps_only_the_electron_heat_capacity_and_emits_a_pbf_burst():
    # neutrons and protons paired everywhere, far below T_c: the nucleon heat capacities vanish (exp(-v)) and the
    # electrons' remain (Page et al. 2004, ApJS 155, 623, sec. 3; Yakovlev & Pethick 2004, ARA&A 42, 169, sec. 5);
    # the electron heat capacity here is integrated from the profile (degenerate relativistic gas, m* = p_F / c)
    p = core_profile("SLy", 1.4)
    t_red = 1e6
    c_e = fermi_heat_capacity(p["np"], np.sqrt(9.1093837015e-28**2 + (p["pfe"] / 2.99792458e10) ** 2),
                              t_red / p["exp_phi"])
    c, _ = _table_at(paired_core_tables("SLy", 1.4, pairing=STRONG), t_red)
    assert c == pytest.approx(np.trapezoid(c_e * p["dv"], p["r"]), rel=0.01)
    # just below the triplet's critical temperature pair breaking outshines the suppressed modified Urca: the
    # neutrino luminosity exceeds the unpaired one (the PBF episode; Page et al. 2004, sec. 5; Page et al. 2009)
    ratios = [_table_at(paired_core_tables("SLy", 1.4, pairing=STRONG), t)[1]
              / _table_at(paired_core_tables("SLy", 1.4, pairing="none"), t)[1] for t in (7e8, 1e9, 1.5e9)]
    assert max(ratios) > 2


def test_default_pairing_curve_lies_in_the_minimal_cooling_band():
    # 1.4 Msun, iron envelope, nucleon pairing with pair breaking: the band of the minimal-cooling predictions of Page,
    # Lattimer, Prakash & Steiner 2004 (ApJS 155, 623, the figures comparing minimal cooling with the data; band
    # edges in log T_inf read by eye, from memory): 6.0-6.3 at 1e3 yr, 5.9-6.2 at 1e4 yr, 5.6-6.05 at 1e5 yr and
    # 5.0-5.7 at 1e6 yr; 0.05 dex allowed for reading the figure
    band = {1e3: (6.0, 6.3), 1e4: (5.9, 6.2), 1e5: (5.6, 6.05), 1e6: (5.0, 5.7)}
    c = cooling_curve(1.4, 12.0, "iron", sorted(band), model="npe-SLy")
    assert c.pairing == DEFAULT
    for t, lg in zip(c.t_yr, np.log10(c.T_inf_K)):
        lo, hi = band[t]
        assert lo - 0.05 <= lg <= hi + 0.05, (t, lg)


def test_switching_pairing_changes_the_curve_the_way_the_literature_describes():
    # Yakovlev & Pethick 2004 (ARA&A 42, 169, sec. 5) and Page et al. 2004 (sec. 6): pairing that suppresses modified
    # Urca keeps the star warmer in the neutrino era; the suppressed heat capacity then makes the photon era faster,
    # so paired stars are colder from ~1e5 yr on
    times = [1e3, 1e5, 3e5]
    normal = np.log10(cooling_curve(1.4, 12.0, "iron", times, model="npe-SLy", pairing="none").T_inf_K)
    strong = np.log10(cooling_curve(1.4, 12.0, "iron", times, model="npe-SLy", pairing=STRONG).T_inf_K)
    assert strong[0] > normal[0] + 0.02
    assert strong[1] < normal[1] - 0.1 and strong[2] < normal[2] - 0.3
    late = [1e6]
    assert (cooling_curve(1.4, 12.0, "iron", late, model="npe-SLy").T_inf_K[0]
            < cooling_curve(1.4, 12.0, "iron", late, model="npe-SLy", pairing="none").T_inf_K[0])


def test_pairing_sets_are_listed_and_cited(capsys):
    assert {"none", STRONG, DEFAULT} <= set(available("pairing"))
    assert main(["parameter-sets", "pairing"]) == 0
    out = capsys.readouterr().out
    assert STRONG in out and "Ho, Elshamouty, Heinke & Potekhin 2015" in out and "Schwenk" in out


def test_pairing_through_the_command_line(tmp_path, capsys):
    # `kinage ages` with the default and with pairing = "none": exit 0, per-envelope cooling ages, the pairing set
    # named in the JSON and in the curves' metadata; an unknown set or a paired set for a model without an equation
    # of state: one line naming the key, exit 2, nothing written
    base = ('[star]\nname = "Orsk-3"\ntemperature = "60 eV"\ntemperature_error = "5 eV"\n\n[ages]\n'
            'cooling_model = "npe-SLy"\nmasses = [1.4]\nsamples = 400\n')
    medians = {}
    for extra, expect in (("", DEFAULT), ('pairing = "none"\n', "none")):
        scn = tmp_path / "s.toml"
        scn.write_text(base + extra)
        out, js = tmp_path / f"o-{expect}", tmp_path / f"{expect}.json"
        assert main(["ages", str(scn), "--out", str(out), "--json", str(js), "--quiet"]) == 0
        d = json.loads(js.read_text())
        cool = d["cooling"]
        assert cool["pairing"] == expect and cool["model"] == "npe-SLy"
        assert [e["envelope"] for e in cool["per_envelope"]] == ["iron", "accreted"]
        medians[expect] = cool["per_envelope"][0]["median"]
        assert f"pairing: {expect}" in next(out.rglob("ages_cooling_curves.ecsv")).read_text()
    assert medians[DEFAULT] != medians["none"]
    for extra, word in (('pairing = "BCS-X"\n', "SFB-TToa-CCDK"),
                        ('pairing = "SFB-TToa-CCDK"\ncooling_model = "modified-urca"\n', "equation of state")):
        scn = tmp_path / "bad.toml"
        scn.write_text(base.replace('cooling_model = "npe-SLy"\n', "") + extra)
        capsys.readouterr()
        assert main(["ages", str(scn), "--out", str(tmp_path / "bad"), "--quiet"]) == 2
        err = capsys.readouterr().err.strip().splitlines()
        assert len(err) == 1 and "[ages] pairing" in err[0] and word in err[0], err
        assert not (tmp_path / "bad").exists()


def test_tabulated_path_reproduces_the_closed_form_neutrino_era():
    # with the unpaired table forced through the tabulated path, the start temperature and the curve match the
    # closed-form solution of C0 T9 dT/dt = -L0 T9^8, T = 1e9 K (6 L0 t / (1e9 K C0))^(-1/6) (Yakovlev & Pethick 2004,
    # ARA&A 42, 169, sec. 4), that the analytic path uses
    from dataclasses import replace

    from kinage.ages.cooling import CoolingModel, _thermal
    from kinage.ages.spindown import SECONDS_PER_YEAR

    m = CoolingModel.resolve("npe-SLy")
    c0, l0, _ = npe_core_coefficients("SLy", 1.4)
    closed = 1e9 * (6 * l0 * 100 * SECONDS_PER_YEAR / (c0 * 1e9)) ** (-1 / 6)
    assert _thermal(replace(m, pairing="none"), 1.4, 12.0)[2] == pytest.approx(closed, rel=2e-3)
    times = [1e3, 1e5]
    a = cooling_curve(1.4, 12.0, "iron", times, model=replace(m, pairing="none")).T_inf_K
    b = cooling_curve(1.4, 12.0, "iron", times, model="npe-SLy", pairing="none").T_inf_K
    np.testing.assert_allclose(a, b, rtol=2e-4)
