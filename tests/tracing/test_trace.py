"""The tracing front door: synthetic recovery, reproducibility, failures, products."""

import json

import astropy.units as u
import numpy as np
import pytest

from kinage import scenario_from_dict
from kinage.errors import InputError
from kinage.io.results import to_jsonable
from kinage.kinematics import StarDraws
from kinage.orbits import trace
from tracing_helpers import galpy_flown_star

HEADER = ("name,ra,dec,distance,distance_error,pm_ra_cosdec,pm_ra_cosdec_error,pm_dec,pm_dec_error,"
          "radial_velocity,radial_velocity_error,radius,age")


def _synthetic(tmp_path, seed, age_myr=1.5):
    """A star born at the centre of 'Lyra Nova-1' age_myr ago with a 350 km/s kick, flown with galpy directly.

    Returns the scenario dict (observed astrometry with errors) and the true age.
    """
    rng = np.random.default_rng(seed)
    # invented association at l = 52 deg, b = -4.5 deg (no young association known there within ~1 kpc)
    a = dict(ra=295.91, dec=14.72, distance=450.0, pm_ra_cosdec=-1.5, pm_dec=-0.5, rv=18.0)
    # flown with galpy alone (tracing_helpers.galpy_flown_star), so kinage's integrator errors cannot cancel
    c = galpy_flown_star(a, age_myr, 350.0, rng)
    plx, plx_err, pm_err = 1000 / c.distance.to_value(u.pc), 0.05, 0.2  # VLBI-like errors
    star = {"name": "Testar J0001", "ra": float(c.ra.deg), "dec": float(c.dec.deg),
            "parallax": plx + plx_err * rng.normal(), "parallax_error": plx_err,
            "pm_ra_cosdec": float(c.pm_ra_cosdec.to_value(u.mas / u.yr)) + pm_err * rng.normal(),
            "pm_ra_cosdec_error": pm_err,
            "pm_dec": float(c.pm_dec.to_value(u.mas / u.yr)) + pm_err * rng.normal(), "pm_dec_error": pm_err}
    rows = [f"Lyra Nova-1,{a['ra']},{a['dec']},{a['distance']},10,{a['pm_ra_cosdec']},0.2,{a['pm_dec']},0.2,{a['rv']},2,15,5",
            # decoy: 250 pc away on the other side of the sky
            "Cetra Decoy-2,114.1,-15.7,400,10,1.0,0.2,-2.0,0.2,-10,2,15,5"]
    path = tmp_path / "assoc.csv"
    path.write_text("\n".join([HEADER] + rows) + "\n")
    trace_tab = {"associations": str(path), "samples": 2000, "association_samples": 100, "max_age": 4.0,
                 "time_steps": 401, "seed": seed, "control_runs": 4, "potential": "MWPotential2014",
                 "solar_parameters": "galpy-default"}
    return {"star": star, "trace": trace_tab}, age_myr


@pytest.mark.slow
def test_synthetic_recovery(tmp_path):
    # ranking, decoy and bookkeeping per trial; the coverage of the 68% age interval is measured over 40
    # galpy-flown trials in tests/reference/test_birth_recovery.py (fails below 60%)
    trials = 3
    for seed in range(trials):
        raw, age = _synthetic(tmp_path, seed)
        res = trace(scenario_from_dict(raw))
        d = res.to_dict()
        names = [s["name"] for s in d["associations"]]
        assert names[0] == "Lyra Nova-1"
        assert d["favoured"] == "Lyra Nova-1"
        decoy = d["associations"][1]
        assert not decoy["favoured"] and decoy["encounter_fraction"] < 0.01
        assert d["associations"][0]["age_yr"]["median"] == pytest.approx(age * 1e6, rel=0.1)
        ages = res.kinematic_age_samples()
        assert ages.size == d["associations"][0]["n_encounters"]


def _small(tmp_path, **trace_kw):
    raw, _ = _synthetic(tmp_path, 7)
    raw["trace"].update(samples=120, association_samples=30, control_runs=2, time_steps=201, **trace_kw)
    return scenario_from_dict(raw)


def test_same_seed_same_numbers_and_chunking_does_not_matter(tmp_path):
    s1 = _small(tmp_path)
    s2 = _small(tmp_path, chunk_size=37)
    a = json.dumps(to_jsonable(trace(s1).to_dict()["associations"]))
    b = json.dumps(to_jsonable(trace(s2).to_dict()["associations"]))
    assert a == b


def test_overrides_keys_and_products(tmp_path):
    s = _small(tmp_path)
    res = trace(s, samples=50, potential="none", rng=5)
    d = res.to_dict()
    for key in ("n_samples", "seed", "associations", "plane_crossing_age_yr", "favoured", "verdict",
                "failed_draws", "potential", "solar_parameters", "velocity_prior", "distance_prior"):
        assert key in d
    assert d["n_samples"] == d["samples_used"] and 50 <= d["samples_used"] <= 200  # max_samples: 4 x samples
    assert d["seed"] == 5 and d["potential"] == "none"
    for s_ in d["associations"]:
        for key in ("name", "encounter_fraction", "chance_fraction", "age_yr", "dmin_pc", "ratio",
                    "required_radial_velocity_kms", "common_origin", "n_encounters"):
            assert key in s_
        assert set(("median", "lo68", "hi68")) <= set(s_["age_yr"]) and set(("median", "lo68", "hi68")) <= set(s_["dmin_pc"])
    json.dumps(to_jsonable(d), allow_nan=False)
    assert isinstance(res.summary(), str) and res.assumptions and res.parameter_sets
    paths = res.write_products(tmp_path / "out")
    names = {p.name for p in paths}
    assert {"trace_encounters.ecsv", "trace_sky.png", "trace_dmin_tau.png", "trace_tau_hist.png",
            "trace_birth_xyz.png"} <= names
    assert all(p.stat().st_size > 0 for p in paths)


def test_failed_orbit_recorded_with_index_and_warning(tmp_path, monkeypatch):
    original = StarDraws.galactocentric

    def broken(self, frame):
        pos, vel = original(self, frame)
        pos[3] = np.nan
        return pos, vel

    monkeypatch.setattr(StarDraws, "galactocentric", broken)
    with pytest.warns(RuntimeWarning, match="could not be integrated"):
        res = trace(_small(tmp_path), samples=40, max_samples=40)
    d = res.to_dict()
    assert {"index": 3, "kind": "star"}.items() <= d["failed_draws"][0].items()
    assert d["associations"][0]["n_valid"] == 39


@pytest.mark.parametrize("override, match", [({"potential": "Nowhere2020"}, "choose one of"),
                                             ({"samples": 0}, "samples")])
def test_bad_trace_input(tmp_path, override, match):
    with pytest.raises(InputError, match=match):
        trace(_small(tmp_path), **override)
