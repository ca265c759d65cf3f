"""[star.correlations]: the star's draws carry the full astrometric covariance a catalogue quotes.

Checks: the sample covariance of the draws the trace makes equals the covariance built from the quoted
errors and correlations, within its sampling error (for Gaussian draws var(S_ij) = (C_ii C_jj + C_ij^2)/n,
Anderson 2003, An Introduction to Multivariate Statistical Analysis, sect. 3.3 / Wishart moments); sets
that are not positive definite are refused (a correlation matrix must be positive semi-definite, and a
singular one makes the draws degenerate: common practice, no source).  Invented star and values.
"""

import astropy.units as u
import numpy as np
import pytest
from astropy.table import Table

import kinage
from kinage.astrometry import AstrometricSolution
from kinage.errors import InputError
from kinage.kinematics import distance_prior, draw_star, velocity_prior
from kinage.orbits.frames import solar_frame
from kinage.params.registry import galaxy_pair

SIG = {"ra": 0.8, "dec": 0.6, "pm_ra_cosdec": 0.3, "pm_dec": 0.25, "parallax": 0.02}  # mas, mas/yr
CORR = {"ra_dec": -0.35, "parallax_ra": 0.4, "pm_ra_cosdec_parallax": 0.3, "pm_dec_pm_ra_cosdec": -0.2,
        "dec_pm_dec": 0.15}


def star(correlations=CORR):
    return {"name": "Invented-4", "ra": 211.3, "dec": 17.8, "ra_error": f"{SIG['ra']} mas",
            "dec_error": f"{SIG['dec']} mas", "parallax": "2.0 mas", "parallax_error": f"{SIG['parallax']} mas",
            "pm_ra_cosdec": "14.0 mas/yr", "pm_ra_cosdec_error": f"{SIG['pm_ra_cosdec']} mas/yr",
            "pm_dec": "-9.0 mas/yr", "pm_dec_error": f"{SIG['pm_dec']} mas/yr", "correlations": dict(correlations)}


def expected_covariance():
    names = ("ra", "dec", "pm_ra_cosdec", "pm_dec", "parallax")
    s = np.array([SIG[n] for n in names])
    r = np.eye(5)
    for key, rho in CORR.items():
        a, b = next((a, key[len(a) + 1:]) for a in names if key.startswith(a + "_") and key[len(a) + 1:] in names)
        i, j = names.index(a), names.index(b)
        r[i, j] = r[j, i] = rho
    return r * np.outer(s, s)


def test_draws_reproduce_the_input_covariance():
    scn = kinage.scenario_from_dict({"star": star()})
    sol = AstrometricSolution.from_star(scn.star)  # what the trace builds from [star]
    _, solar, _ = galaxy_pair("MWPotential2014", None)
    n = 40_000
    d = draw_star(sol, n, np.random.default_rng(11), frame=solar_frame(solar.name),
                  velocity_prior=velocity_prior("hobbs2005"), distance_prior=distance_prior("exponential", None))
    ra_off = (d.ra_deg - sol.ra_deg) * 3.6e6 * np.cos(np.radians(d.dec_deg))
    dec_off = (d.dec_deg - sol.dec_deg) * 3.6e6
    x = np.column_stack([ra_off, dec_off, d.pm_ra_cosdec, d.pm_dec, 1000.0 / d.distance_pc])
    got = np.cov(x, rowvar=False)
    want = expected_covariance()
    se = np.sqrt((np.outer(np.diag(want), np.diag(want)) + want**2) / n)
    # a 1% parallax: the distance prior moves the true-parallax draws by far less than their scatter
    assert np.all(np.abs(got - want) < 4.5 * se), (got - want) / se


def test_pm_correlation_and_the_table_agree():
    a = AstrometricSolution.from_star(kinage.scenario_from_dict(
        {"star": {**star({}), "pm_correlation": -0.2}}).star)
    b = AstrometricSolution.from_star(kinage.scenario_from_dict(
        {"star": star({"pm_ra_cosdec_pm_dec": -0.2})}).star)
    np.testing.assert_allclose(a.covariance, b.covariance)


@pytest.mark.parametrize("corr, text", [
    ({"parallax_pm_dec": 1.2}, "lies in [-1, 1]"),
    ({"ra_dec": 0.9, "ra_parallax": 0.9, "dec_parallax": -0.9}, "positive-definite"),
    ({"parallax_parallax": 0.5}, "with itself"),
    ({"parallax_pmra": 0.5}, "joined by '_'"),
    ({"ra_dec": 0.1, "dec_ra": 0.1}, "given twice"),
])
def test_bad_correlations_are_refused(corr, text):
    with pytest.raises(InputError, match=r"\[star.correlations\]") as exc:
        kinage.scenario_from_dict({"star": star(corr)})
    assert text in str(exc.value)


def test_both_ways_of_giving_the_pm_correlation_is_refused():
    with pytest.raises(InputError, match="pm_correlation.*give it once"):
        kinage.scenario_from_dict({"star": {**star({"pm_dec_pm_ra_cosdec": 0.1}), "pm_correlation": 0.1}})


def test_star_from_a_catalogue_row_with_its_correlations():
    t = Table({"Src": ["Invented-4"], "RA_ICRS": [211.3], "DE_ICRS": [17.8], "Plx": [2.0], "e_Plx": [0.02],
               "pmRAcosDE": [14.0], "e_pmRA": [0.3], "pmDE": [-9.0], "e_pmDE": [0.25], "Plx_pmRA": [0.3],
               "Dist_kpc": [0.48]})
    t["RA_ICRS"].unit = t["DE_ICRS"].unit = u.deg
    t["Plx"].unit = t["e_Plx"].unit = u.mas
    t["pmRAcosDE"].unit = t["e_pmRA"].unit = t["pmDE"].unit = t["e_pmDE"].unit = u.mas / u.yr
    cols = {"name": "Src", "ra": "RA_ICRS", "dec": "DE_ICRS", "parallax": "Plx", "parallax_error": "e_Plx",
            "pm_ra_cosdec": "pmRAcosDE", "pm_ra_cosdec_error": "e_pmRA", "pm_dec": "pmDE", "pm_dec_error": "e_pmDE",
            "correlations": {"parallax_pm_ra_cosdec": "Plx_pmRA"}}
    s = kinage.star_from_table(t[0], columns=cols, spin_period="0.8123 s")
    assert s["parallax"].to_value(u.mas) == pytest.approx(2.0)
    assert s["correlations"] == {"pm_ra_cosdec_parallax": pytest.approx(0.3)}
    sol = AstrometricSolution.from_star(kinage.scenario_from_dict({"star": s}).star)
    assert sol.correlation[2, 4] == pytest.approx(0.3)
    # a unitless column mapped without a unit is refused; with one, astropy converts it (kpc -> pc)
    with pytest.raises(InputError, match="'Dist_kpc' has no unit"):
        kinage.star_from_table(t[0], columns={**cols, "distance": "Dist_kpc"}, distance_from="parallax")
    s2 = kinage.star_from_table(t[0], columns={**cols, "distance": {"column": "Dist_kpc", "unit": "kpc"}},
                                distance_from="parallax")
    assert s2["distance"].to_value(u.pc) == pytest.approx(480.0)
    with pytest.raises(InputError, match="nearest: 'pmDE'"):
        kinage.star_from_table(t[0], columns={**cols, "pm_dec": "pmDEx"})
