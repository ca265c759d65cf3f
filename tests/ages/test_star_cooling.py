"""Cooling of an unpaired npe core integrated over a TOV star (cooling models 'npe-SLy', 'npe-APR4')."""

import json

import numpy as np
import pytest

from kinage.ages.cooling import cooling_curve
from kinage.ages.star_cooling import fermi_heat_capacity, npe_core_coefficients
from kinage.ages.structure import G_CGS, C_CGS, MSUN_G, structure_for_mass
from kinage.cli import main

K_B, HBAR = 1.380649e-16, 1.054571817e-27  # CODATA 2018


def test_fermi_gas_heat_capacity_is_the_textbook_one():
    # non-relativistic degenerate gas: c_V = (pi^2 / 2) n k_B (k_B T / eps_F), eps_F = p_F^2 / 2m (Kittel & Kroemer,
    # Thermal Physics, ch. 7); neutrons at nuclear saturation density 0.16 fm^-3, T = 1e9 K
    n, m, t = 0.16e39, 1.67492749804e-24, 1e9
    pf = HBAR * (3 * np.pi**2 * n) ** (1 / 3)
    assert fermi_heat_capacity(n, m, t) == pytest.approx(np.pi**2 / 2 * n * K_B * K_B * t / (pf**2 / (2 * m)),
                                                         rel=1e-12)


def test_baryon_mass_exceeds_the_gravitational_mass_by_the_binding_energy():
    # the proper volume element with the metric factor: M_baryon = int rho dV; its excess over M is the binding
    # energy, BE/M ~ 0.6 beta / (1 - beta/2), beta = GM/Rc^2 (Lattimer & Prakash 2001, ApJ 550, 426, eq. 21; a fit
    # good to ~10 % across EOSs; value from memory); and int eps/c^2 4 pi r^2 dr is M itself (TOV)
    s = structure_for_mass("SLy", 1.4)
    mb = np.trapezoid(s.rho * s.volume_element, s.r_cm) / MSUN_G
    beta = G_CGS * s.mass_msun * MSUN_G / (s.radius_km * 1e5 * C_CGS**2)
    assert (mb - s.mass_msun) / s.mass_msun == pytest.approx(0.6 * beta / (1 - beta / 2), rel=0.15)
    assert np.trapezoid(s.eps * 4 * np.pi * s.r_cm**2, s.r_cm) / MSUN_G == pytest.approx(1.4, rel=2e-3)


def test_core_heat_capacity_and_neutrino_luminosity_orders_of_magnitude():
    # slow cooling: C ~ 1e39 T9 erg/K and L_nu ~ 1e39-1e41 T9^8 erg/s for a 1.4 Msun star (Yakovlev & Pethick 2004,
    # ARA&A 42, 169, sec. 4; values from memory); heavier stars hold more heat and emit more (denser core)
    c0, l0, r = npe_core_coefficients("SLy", 1.4)
    assert 5e38 < c0 < 5e39 and 1e39 < l0 < 3e41
    c0_h, l0_h, _ = npe_core_coefficients("SLy", 1.8)
    assert c0_h > c0 and l0_h > l0


def test_unpaired_npe_curve_follows_published_non_superfluid_slow_cooling():
    # 1.4 Msun, iron envelope, no pairing: log T_inf ~ 6.1 at 10 kyr, 6.0 at 100 kyr, 5.5 at 1 Myr (non-superfluid
    # slow-cooling curves of Yakovlev & Pethick 2004, fig. 2, and the no-pairing curves of Page et al. 2004,
    # ApJS 155, 623; read by eye from the figures, from memory): within 0.15 dex
    c = cooling_curve(1.4, 12.0, "iron", [1e4, 1e5, 1e6], model="npe-SLy", pairing="none")
    assert c.radius_km == pytest.approx(structure_for_mass("SLy", 1.4).radius_km, rel=1e-9)  # radius from the EOS
    np.testing.assert_allclose(np.log10(c.T_inf_K), [6.1, 6.0, 5.5], atol=0.15)


def test_eos_model_through_the_command_line(tmp_path, capsys):
    # the radius follows from the EOS (a different [ages] radius gets a warning); a mass above the EOS's maximum
    # mass is one line naming the key and the allowed range, exit 2, nothing written
    scn = tmp_path / "s.toml"
    scn.write_text('[star]\nname = "Orsk-3"\ntemperature = "60 eV"\n\n[ages]\ncooling_model = "npe-APR4"\n'
                   'radius = "13 km"\nmasses = [1.4]\n')
    out = tmp_path / "ages.json"
    assert main(["ages", str(scn), "--out", str(tmp_path / "o"), "--json", str(out), "--quiet"]) == 0
    d = json.loads(out.read_text())
    assert any("[ages] radius = 13 km is not used" in w for w in d["warnings"])
    assert [e["envelope"] for e in d["cooling"]["per_envelope"]] == ["iron", "accreted"]
    scn.write_text('[star]\nname = "Orsk-3"\ntemperature = "60 eV"\n\n[ages]\ncooling_model = "npe-SLy"\n'
                   'masses = [1.4, 2.3]\n')
    capsys.readouterr()
    assert main(["ages", str(scn), "--out", str(tmp_path / "bad"), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "[ages] masses" in err[0] and "maximum mass" in err[0] and "2.04" in err[0], err
    assert not (tmp_path / "bad").exists()
