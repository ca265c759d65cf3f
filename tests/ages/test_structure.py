"""Neutron-star structure (TOV) for the piecewise-polytrope EOS sets, against published masses and radii."""

import numpy as np
import pytest

from kinage.ages.structure import eos_model, max_mass, proton_fraction, structure_for_mass, tov
from kinage.errors import InputError
from kinage.params import available


# Read, Lackey, Owen & Friedman 2009 (PRD 79, 124032), Table III: maximum mass and R(1.4 Msun) of the tabulated
# equations of state (values from memory); their piecewise-polytrope fits reproduce these to ~1 % (their stated
# fit residuals), so kinage's TOV solution of the fit must land within 1.5 %
@pytest.mark.parametrize("eos, m_max, r_14", [("SLy", 2.049, 11.736), ("APR4", 2.213, 11.428)])
def test_maximum_mass_and_radius_of_a_1p4_msun_star(eos, m_max, r_14):
    assert max_mass(eos)[0] == pytest.approx(m_max, rel=0.015)
    s = structure_for_mass(eos, 1.4)
    assert s.mass_msun == pytest.approx(1.4, abs=1e-5)
    assert s.radius_km == pytest.approx(r_14, rel=0.015)


def test_eos_is_continuous_and_the_crust_meets_the_core_near_half_saturation():
    # Read et al. 2009: pressure and energy density continuous at every dividing density; the crust-core
    # transition of SLy lies at ~1.3-1.5e14 g/cm^3 (about half of nuclear saturation 2.7e14; Douchin & Haensel
    # 2001 give 0.076 fm^-3 = 1.3e14 g/cm^3; value from memory)
    m = eos_model("SLy")
    for r in m.rho_lo[1:]:
        lo, hi = r * (1 - 1e-12), r * (1 + 1e-12)
        assert m.pressure(lo) == pytest.approx(m.pressure(hi), rel=1e-9)
        assert m.energy_density(lo) == pytest.approx(m.energy_density(hi), rel=1e-9)
    assert 1.2e14 < m.rho_core < 1.6e14
    from kinage.params.eos import CRUST_K

    np.testing.assert_allclose(m.k[:4], CRUST_K, rtol=0.01)  # the tabulated K_i follow from continuity (1 %)
    assert m.density_at_pressure(m.pressure(3e14)) == pytest.approx(3e14, rel=1e-12)


def test_surface_redshift_and_hydrostatic_profile():
    # exp(Phi) at the surface is the Schwarzschild sqrt(1 - 2GM/Rc^2) (Shapiro & Teukolsky 1983, ch. 5);
    # the pressure falls monotonically outwards and the redshift factor rises
    s = structure_for_mass("SLy", 1.4)
    rg = 2 * 6.67430e-8 * s.mass_msun * 1.988409870698051e33 / 2.99792458e10**2
    assert s.exp_phi[-1] == pytest.approx(np.sqrt(1 - rg / (s.radius_km * 1e5)), rel=1e-9)
    assert np.all(np.diff(s.pressure) <= 0) and np.all(np.diff(s.exp_phi) >= 0)
    # a light star is bigger and less compact (the mass-radius relation of soft-to-stiff nucleonic EOSs)
    light = tov("SLy", 6e14)
    assert light.mass_msun < 1.0 and light.radius_km > s.radius_km


def test_proton_fraction_of_npe_matter():
    # parabolic symmetry energy: beta equilibrium 4 S (1 - 2x) = hbar c (3 pi^2 x n)^(1/3), solved here by a
    # fixed-point iteration independent of kinage's root finder; x(n0) ~ 0.04-0.05 for S0 = 32 MeV
    # (Lattimer & Prakash 2016, Phys. Rep. 621, 127; value from memory), well below the direct-Urca 1/9
    for n in (0.08, 0.16, 0.48):
        s = 32.0 * (n / 0.16) ** 0.6
        x = 0.05
        for _ in range(200):
            x = (4 * s * (1 - 2 * x) / 197.3269804) ** 3 / (3 * np.pi**2 * n)
        assert proton_fraction(n) == pytest.approx(x, rel=1e-8)
    assert 0.035 < proton_fraction(0.16) < 0.055
    assert proton_fraction(0.48) < 1 / 9


def test_bad_eos_and_masses_are_one_line():
    assert {"SLy", "APR4"} <= set(available("eos"))
    with pytest.raises(InputError, match=r"\[ages\] eos.*unknown eos 'BSk99'"):
        eos_model("BSk99")
    with pytest.raises(InputError, match=r"\[ages\] masses: 2.3 solMass is outside .*maximum mass"):
        structure_for_mass("SLy", 2.3)
