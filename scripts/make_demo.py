"""Make the invented demo data in data_demo/ (scenario and association table).

Everything here is invented: the star "Aurel-1" and the association names.
The star is placed at the centre of one association ("Serrat OB3") 0.52 Myr
ago and given a kick of about 190 km/s; both then move on straight lines in
the heliocentric Galactic frame (over 0.5 Myr the Galactic tide changes the
relative position of two objects 0.1 kpc apart by ~0.02 pc, far below the
association sizes) and are "observed" today with realistic errors.  The
radial velocity of the star is not given, as for real isolated neutron stars.

The TOA table is made afterwards by kinage itself::

    kinage simulate data_demo/scenario.toml --output data_demo/toas.ecsv --seed 20270301

Run:  python scripts/make_demo.py
"""

from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.coordinates import CartesianDifferential, CartesianRepresentation, SkyCoord
from astropy.table import Table

OUT = Path(__file__).resolve().parents[1] / "data_demo"
RNG = np.random.default_rng(20261202)
KMS_PC_PER_MYR = 1.0227121650537077  # 1 km/s = 1.0227 pc/Myr (astropy units)

NAMES = ["Halvard OB1", "Quillon Group", "Serrat OB3", "Tamsin Moving Group", "Verdane OB2", "Yarrow Group",
         "Oskell OB1", "Pellis Group", "Ravenne OB2", "Ebbrin Association", "Lumeth OB1", "Dovrin Group",
         "Castell Stream", "Fennick OB4"]
TRUE_PARENT = "Serrat OB3"
BIRTH_AGO_MYR = 0.52
KICK_KMS = np.array([95.0, -120.0, 118.0])  # relative to the parent, heliocentric Galactic (U, V, W)


def galactic(xyz_pc, uvw_kms):
    rep = CartesianRepresentation(*(xyz_pc * u.pc), differentials=CartesianDifferential(*(uvw_kms * u.km / u.s)))
    return SkyCoord(rep, frame="galactic").icrs


def main():
    rows = []
    parent = None
    for name in NAMES:
        if name == TRUE_PARENT:
            d, l, b = 330.0, np.radians(292.0), np.radians(9.0)
            age, radius = 14.0, 22.0
        else:
            d = RNG.uniform(150, 950)
            l = RNG.uniform(0, 2 * np.pi)
            b = np.arcsin(RNG.uniform(-0.35, 0.35))
            age, radius = RNG.uniform(3, 40), RNG.uniform(10, 45)
        xyz = d * np.array([np.cos(b) * np.cos(l), np.cos(b) * np.sin(l), np.sin(b)])
        # heliocentric velocity of a young group: minus the solar peculiar motion
        # (Schoenrich et al. 2010) plus a few km/s of its own
        uvw = np.array([-11.1, -12.24, -7.25]) + RNG.normal(0, 4.0, 3)
        c = galactic(xyz, uvw)
        rows.append({
            "name": name, "ra": c.ra.deg, "dec": c.dec.deg, "distance": c.distance.to_value(u.pc),
            "pm_ra_cosdec": c.pm_ra_cosdec.to_value(u.mas / u.yr), "pm_dec": c.pm_dec.to_value(u.mas / u.yr),
            "radial_velocity": c.radial_velocity.to_value(u.km / u.s),
            "distance_error": 0.04 * d, "pm_ra_cosdec_error": 0.3, "pm_dec_error": 0.3, "radial_velocity_error": 2.0,
            "radius": radius, "age": age,
        })
        if name == TRUE_PARENT:
            parent = (xyz, uvw)

    xyz0, uvw0 = parent
    t_pc = BIRTH_AGO_MYR * KMS_PC_PER_MYR
    birth = xyz0 - uvw0 * t_pc
    v_star = uvw0 + KICK_KMS
    now = birth + v_star * t_pc
    star = galactic(now, v_star)

    tab = Table(rows)
    units = {"ra": u.deg, "dec": u.deg, "distance": u.pc, "pm_ra_cosdec": u.mas / u.yr, "pm_dec": u.mas / u.yr,
             "radial_velocity": u.km / u.s, "distance_error": u.pc,
             "pm_ra_cosdec_error": u.mas / u.yr, "pm_dec_error": u.mas / u.yr,
             "radial_velocity_error": u.km / u.s, "radius": u.pc, "age": u.Myr}
    for k, un in units.items():
        tab[k].unit = un
        tab[k].info.format = ".4f" if k in ("ra", "dec") else ".3f"
    tab.meta["description"] = "Invented candidate birth associations for the kinage demo (not real objects)."
    tab.write(OUT / "associations.ecsv", overwrite=True)

    plx_true = 1000.0 / star.distance.to_value(u.pc)
    obs = {
        "ra": star.ra.deg, "dec": star.dec.deg,
        "parallax": plx_true + RNG.normal(0, 0.25), "pm_ra_cosdec": star.pm_ra_cosdec.to_value(u.mas / u.yr) + RNG.normal(0, 1.5),
        "pm_dec": star.pm_dec.to_value(u.mas / u.yr) + RNG.normal(0, 1.5),
    }
    print(f"true distance {star.distance.to_value(u.pc):.1f} pc, radial velocity {star.radial_velocity:.1f} "
          f"(not given to kinage), speed {np.linalg.norm(v_star):.0f} km/s")
    text = SCENARIO.format(**obs)
    (OUT / "scenario.toml").write_text(text)
    print(text)
    make_population(rows)


def make_population(assoc_rows, n_stars=22):
    """An invented population for ``kinage batch``: half born in the demo associations, half field stars."""
    from kinage.kinematics.velocity_prior import velocity_prior

    rng = np.random.default_rng(7)
    prior = velocity_prior("hobbs2005")
    out = []
    for i in range(n_stars):
        if i % 2 == 0:
            a = assoc_rows[rng.integers(len(assoc_rows))]
            c = SkyCoord(ra=a["ra"] * u.deg, dec=a["dec"] * u.deg, distance=a["distance"] * u.pc,
                         pm_ra_cosdec=a["pm_ra_cosdec"] * u.mas / u.yr, pm_dec=a["pm_dec"] * u.mas / u.yr,
                         radial_velocity=a["radial_velocity"] * u.km / u.s).galactic
            xyz = c.cartesian.xyz.to_value(u.pc)
            uvw = c.velocity.d_xyz.to_value(u.km / u.s)
            age = rng.uniform(0.2, 1.5)
            v = uvw + prior.sample_velocity(1, rng)[0] * 0.6
            # born at the group's centre `age` Myr ago, then straight lines for both
            now = xyz - uvw * age * KMS_PC_PER_MYR + v * age * KMS_PC_PER_MYR
        else:
            d = rng.uniform(150, 800)
            l, b = rng.uniform(0, 2 * np.pi), np.arcsin(rng.uniform(-0.5, 0.5))
            now = d * np.array([np.cos(b) * np.cos(l), np.cos(b) * np.sin(l), np.sin(b)])
            v = np.array([-11.1, -12.24, -7.25]) + prior.sample_velocity(1, rng)[0] * 0.6
            age = rng.uniform(0.3, 3.0)
        st = galactic(now, v)
        plx = 1000 / st.distance.to_value(u.pc)
        P = rng.uniform(3, 12)
        tau_c = age * rng.uniform(1.5, 6) * 1e6 * 3.15576e7  # characteristic age above the true age (s)
        out.append({
            "name": f"Pop-{i + 1:02d}", "ra": st.ra.deg, "dec": st.dec.deg,
            "parallax": plx + rng.normal(0, 0.2), "parallax_error": 0.2,
            "pm_ra_cosdec": st.pm_ra_cosdec.to_value(u.mas / u.yr) + rng.normal(0, 1.0), "pm_ra_cosdec_error": 1.0,
            "pm_dec": st.pm_dec.to_value(u.mas / u.yr) + rng.normal(0, 1.0), "pm_dec_error": 1.0,
            "spin_period": P, "spin_period_derivative": P / (2 * tau_c),
            "temperature": rng.uniform(50, 110), "temperature_error": 5.0,
        })
    tab = Table(out)
    for k, un in {"ra": u.deg, "dec": u.deg, "parallax": u.mas, "parallax_error": u.mas,
                  "pm_ra_cosdec": u.mas / u.yr, "pm_ra_cosdec_error": u.mas / u.yr, "pm_dec": u.mas / u.yr,
                  "pm_dec_error": u.mas / u.yr, "spin_period": u.s, "temperature": u.eV,
                  "temperature_error": u.eV}.items():
        tab[k].unit = un
        tab[k].info.format = ".5f" if k in ("ra", "dec") else ".4g"
    tab["spin_period_derivative"].info.format = ".4g"
    tab.meta["description"] = "Invented neutron-star population for the kinage batch demo (not real objects)."
    tab.write(OUT / "population.ecsv", overwrite=True)
    (OUT / "population_template.toml").write_text(POPULATION_TEMPLATE)


SCENARIO = """\
# kinage demo scenario: an INVENTED nearby thermally emitting neutron star.
# Everything below is fictitious; see scripts/make_demo.py for how it was made.
title = "Aurel-1: a slow, cooling neutron star near Serrat OB3 (invented demo)"

[star]
name = "Aurel-1"
ra = {ra:.6f}                    # deg (ICRS)
dec = {dec:.6f}                  # deg
ra_error = 40.0                   # mas (ra*cos dec), from X-ray imaging
dec_error = 40.0                  # mas
epoch = "2027-01-01"
parallax = "{parallax:.3f} mas"          # optical/X-ray imaging parallax
parallax_error = "0.25 mas"
pm_ra_cosdec = "{pm_ra_cosdec:.2f} mas/yr"
pm_ra_cosdec_error = "1.5 mas/yr"
pm_dec = "{pm_dec:.2f} mas/yr"
pm_dec_error = "1.5 mas/yr"
spin_period = "7.213 s"
spin_period_error = "1e-6 s"
spin_period_derivative = 6.4e-14
spin_period_derivative_error = 0.4e-14
temperature = "86 eV"             # redshifted blackbody kT as seen at infinity
temperature_error = "4 eV"

[campaign]
start = "2027-03-01"
baseline = "6 yr"
visits_per_year = 4
exposure = "30 ks"
sun_avoidance = "45 deg"
source_rate = "1.6 1/s"           # counts/s in the source region
background_rate = "0.08 1/s"
pulsed_fraction = 0.14
pulse_shape = "sinusoid"
toas = "toas.ecsv"                # made by: kinage simulate scenario.toml --output toas.ecsv --seed 20270301

[trace]
associations = "associations.ecsv"
samples = 2000
max_age = "3 Myr"
seed = 20261202
potential = "MWPotential2014"
solar_parameters = "astropy-v4.0"
velocity_prior = "hobbs2005"
distance_prior = "exponential"

[ages]
braking_index = 3
moment_of_inertia = "1e45 g cm2"
mass = "1.4 solMass"
radius = "12 km"
envelopes = ["iron", "accreted"]
"""

POPULATION_TEMPLATE = """\
# Template for: kinage batch population.ecsv --scenario population_template.toml --out population/
# Each row of population.ecsv (invented stars) fills [star]; tracing and ages settings come from here.
title = "invented demo population"

[star]
name = "template"

[trace]
associations = "associations.ecsv"
samples = 400
association_samples = 50
control_runs = 3
max_age = "3 Myr"
time_steps = 601
seed = 42

[ages]
braking_index = 3
samples = 1000
"""

if __name__ == "__main__":
    main()
