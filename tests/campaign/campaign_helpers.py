"""An invented star with two candidate associations that are both plausible today (all names and values invented).

Geometry: with straight lines (``potential = "none"``) and associations at rest relative to the Sun, the
star's path relative to an association is the heliocentric straight line, so an association placed where
astropy's ``SkyCoord.apply_space_motion`` puts the star ``t`` Myr ago *with a proper motion shifted by
delta* is met (d_min = 0 at tau = t) by the draws with that proper motion.  Two associations, one on each
side of the measured motion, share today's probability; a campaign measuring the proper motion better than
delta tells them apart.
"""

import astropy.units as u
import numpy as np
from astropy.coordinates import SkyCoord
from astropy.table import Table
from astropy.time import Time

STAR = {"name": "Invented Quillan-7", "ra": 212.37, "dec": -31.64, "parallax": "2.05 mas", "parallax_error": "0.03 mas",
        "pm_ra_cosdec": "27.4 mas/yr", "pm_ra_cosdec_error": "4.0 mas/yr", "pm_dec": "-14.2 mas/yr",
        "pm_dec_error": "4.0 mas/yr", "radial_velocity": "18 km/s", "radial_velocity_error": "3 km/s",
        "spin_period": "0.9034 s", "spin_period_derivative": 3.1e-15, "epoch": "2027-06-01"}
#: (name, proper-motion shift in ra*cos dec and dec [mas/yr], flight time [Myr])
ASSOCIATIONS = (("Brennick Group", (4.0, 1.5), 1.8), ("Ostrava Drift", (-4.0, -1.5), 2.2))


def association_table(radius_pc=6.0, age_myr=4.0):
    """The two invented associations as an astropy Table (at rest relative to the Sun)."""
    rows = []
    d_pc = 1000.0 / 2.05
    for name, (dra, ddec), t in ASSOCIATIONS:
        c = SkyCoord(ra=STAR["ra"] * u.deg, dec=STAR["dec"] * u.deg, distance=d_pc * u.pc,
                     pm_ra_cosdec=(27.4 + dra) * u.mas / u.yr, pm_dec=(-14.2 + ddec) * u.mas / u.yr,
                     radial_velocity=18.0 * u.km / u.s, obstime=Time("J2000", scale="tdb"))
        past = c.apply_space_motion(dt=-t * u.Myr)
        rows.append((name, past.ra.deg, past.dec.deg, past.distance.to_value(u.pc), 0.0, 0.0, 0.0, radius_pc,
                     age_myr))
    t = Table(rows=rows, names=("name", "ra", "dec", "distance", "pm_ra_cosdec", "pm_dec", "radial_velocity",
                                "radius", "age"))
    for col, unit in (("ra", u.deg), ("dec", u.deg), ("distance", u.pc), ("pm_ra_cosdec", u.mas / u.yr),
                      ("pm_dec", u.mas / u.yr), ("radial_velocity", u.km / u.s), ("radius", u.pc), ("age", u.Myr)):
        t[col].unit = unit
    return t


def raw_scenario(tmp_path, toa_error="200 us", samples=600, outcomes=200, **trace):
    """Scenario tables (a dict for kinage.scenario_from_dict); the association table is written to tmp_path.

    ``trace`` overrides ``[trace]`` keys (e.g. potential, time_steps).
    """
    path = tmp_path / "invented_associations.ecsv"
    association_table().write(path, format="ascii.ecsv", overwrite=True)
    tr = {"associations": str(path), "samples": samples, "association_samples": 20, "max_age": "3 Myr",
          "time_steps": 41, "potential": "none", "seed": 11, "control_runs": 2}
    tr.update(trace)
    camp = {"start": "2027-03-01", "baseline": "4 yr", "visits_per_year": 6, "toa_error": toa_error,
            "max_baseline": "8 yr", "outcomes": outcomes}
    return {"star": dict(STAR), "campaign": camp, "trace": tr}


def np_seed(*parts):
    return np.random.default_rng(np.random.SeedSequence(list(parts)))


def write_scenario(tmp_path, drop=(), **kwargs):
    """The scenario of :func:`raw_scenario` as a TOML file; ``drop`` names tables or "table.key" to leave out."""
    import json

    raw = raw_scenario(tmp_path, **kwargs)
    lines = []
    for table, content in raw.items():
        if table in drop:
            continue
        lines.append(f"[{table}]")
        for key, value in content.items():
            if f"{table}.{key}" in drop:
                continue
            lines.append(f"{key} = {json.dumps(value) if isinstance(value, (str, bool)) else repr(value)}")
        lines.append("")
    path = tmp_path / "invented_scenario.toml"
    path.write_text("\n".join(lines))
    return path
