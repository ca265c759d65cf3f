"""Make the invented demo data in data_demo/ (every case, every file).

Everything here is invented: star names, association names, spin periods,
temperatures, distances, positions and association ages.  The values were
chosen to match no known neutron star, radio pulsar, magnetar or OB
association, and no published traceback (see data_demo/README.md for the
checks made).

Cases (``kinage demo --list``):

``xray`` (default; data_demo/scenario.toml, associations.ecsv, toas.ecsv)
    "Tessaly-3", a slow (4.793 s), thermally emitting (kT = 74 eV) X-ray star
    born 0.75 Myr ago at the centre of the invented association "Vessen OB2"
    (l = 52.0, b = +9.0 deg, 560 pc, 11 Myr).  Astrometry from imaging;
    X-ray timing (25 simulated TOAs of ~0.05 s) cannot measure its motion.
``radio`` (data_demo/radio/)
    "Corvel J...", a 0.4671 s radio pulsar born 0.90 Myr ago in
    "Karrow Group" (l = 236.5, b = +6.5 deg, 780 pc, 7 Myr), timed with 0.4 us
    TOAs for 5 yr from the invented "Corvel Plain" site; timing measures the
    proper motion and parallax, which feed the trace.
``population`` (data_demo/population.ecsv, population_template.toml)
    14 invented "Pop-" stars, half born in the demo associations, for
    ``kinage batch``.

Both stars move on straight lines in the (inertial) Galactocentric frame from
their birth place, as does their parent association: over ~1 Myr the Galactic
tide changes the relative position of two objects 0.3 kpc apart by < 0.5 pc,
far below the association radii.  The associations move on circular orbits
(220 km/s, flat rotation) plus a few km/s of their own.  The stars are then
"observed" today with realistic errors; their radial velocities are not given
to kinage, as for real isolated neutron stars.

The TOA tables are drawn by kinage itself (:func:`kinage.timing.simulate_toas`)
with the true proper motion and parallax injected, so the shipped radio
scenario does not contain the answer.

Run:  python scripts/make_demo.py
"""

import os
import shutil
from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.coordinates import CartesianDifferential, CartesianRepresentation, Galactocentric, SkyCoord
from astropy.table import Table

ROOT = Path(__file__).resolve().parents[1]
OUT = Path(os.environ.get("KINAGE_DEMO_OUT", ROOT / "data_demo"))  # override to try changes elsewhere
KMS_PC_PER_MYR = 1.0227121650537077  # 1 km/s = 1.0227 pc/Myr (astropy units)
V_CIRC_KMS = 220.0  # flat rotation curve of MWPotential2014 (Bovy 2015)

# name, l (deg), b (deg), distance (pc), age (Myr), radius (pc): all invented, placed away from the
# real nearby OB associations and star-forming regions (Sco-Cen, Orion, Perseus, Lacerta, Cepheus,
# Vela, Cygnus, Canis Major, Monoceros, Chamaeleon, Corona Australis...) in position, distance or age
ASSOCIATIONS = [
    ("Vessen OB2", 52.0, 9.0, 560.0, 11.0, 18.0),
    ("Karrow Group", 236.5, 6.5, 780.0, 7.0, 16.0),
    ("Halvard OB1", 18.0, -14.0, 720.0, 23.0, 25.0),
    ("Tamsin Moving Group", 64.0, 15.5, 470.0, 30.0, 22.0),
    ("Verdane OB2", 45.0, 2.5, 690.0, 8.0, 20.0),
    ("Yarrow Group", 248.0, 11.0, 1240.0, 12.0, 22.0),
    ("Oskell OB1", 241.5, -7.5, 1400.0, 9.0, 25.0),
    ("Dovrin Group", 270.0, 20.0, 990.0, 6.0, 15.0),
]

# spin periods (s) kinage's demos must stay 3% away from: magnetars (McGill catalogue, Olausen & Kaspi 2014),
# the seven nearby thermally emitting neutron stars (Haberl 2007), central compact objects (De Luca 2017) and
# well-known radio and millisecond pulsars (ATNF catalogue, Manchester et al. 2005); values from memory, the same
# list tests/foundation/test_invented_stars.py checks the demo against
AVOID_PERIODS_S = (
    8.02, 8.69, 9.08, 5.76, 8.05, 6.46, 2.07, 4.33, 2.59, 10.61, 11.00, 3.83, 3.76, 7.55, 5.54, 1.36, 8.44, 7.57,
    2.48, 11.79, 11.56, 5.20, 3.25, 6.98, 6.97, 3.86, 0.3266, 0.408,
    7.06, 8.39, 3.39, 11.37, 10.31, 9.43, 3.45,
    0.112, 0.424, 0.105,
    0.0334, 0.0893, 0.2371, 0.3849, 0.1971, 0.2531, 0.2265, 0.4306, 0.7397, 1.188, 0.7145, 1.3373, 1.2922, 1.2738,
    1.3824, 1.2444, 0.5580, 0.3434, 0.3587, 0.5307, 0.5292, 0.5385, 3.7455, 8.51, 23.5, 1.0977, 0.1025, 0.1507,
    0.0505, 0.1564, 0.05903, 0.02270, 2.773, 0.03790, 0.03953, 0.1336, 0.5981,
    0.001558, 0.001396, 0.005757, 0.004865, 0.002886, 0.003151, 0.003054, 0.004570, 0.005362, 0.006219,
    0.002947, 0.003479, 0.003445, 0.004075, 0.004509, 0.005256, 0.001607, 0.001688, 0.001877,
)

XRAY = dict(name="Tessaly-3", parent="Vessen OB2", birth_myr=0.75, kick_kms=(-101.0, 147.0, -83.0),
            period_s=4.793, pdot=4.0e-14, kT_eV=74.0)
RADIO = dict(name="Corvel J", parent="Karrow Group", birth_myr=0.90, kick_kms=(130.0, -120.0, 110.0),
             period_s=0.4671, pdot=4.0e-15)
SITE = dict(site_name="Corvel Plain", longitude_deg=135.81, latitude_deg=-27.46, height_m=212.0)


def _check_period(p):
    for q in AVOID_PERIODS_S:
        if abs(p / q - 1.0) < 0.03:
            raise ValueError(f"demo period {p} s is within 3% of {q} s")
    return p


def _gc_frame():
    # kinage's 'galpy-default' solar parameters (R0 = 8 kpc, Schoenrich et al. 2010 peculiar motion on 220 km/s),
    # the set that goes with MWPotential2014, which the demo scenarios use
    return Galactocentric(galcen_distance=8.0 * u.kpc, z_sun=20.8 * u.pc,
                          galcen_v_sun=CartesianDifferential([11.1, 232.24, 7.25] * u.km / u.s))


def association_state(l_deg, b_deg, d_pc, rng):
    """Present Galactocentric position (pc) and velocity (km/s) of an association on a circular orbit."""
    helio = SkyCoord(l=l_deg * u.deg, b=b_deg * u.deg, distance=d_pc * u.pc, frame="galactic")
    gc = helio.transform_to(_gc_frame())
    x, y, z = (gc.cartesian.xyz.to_value(u.pc))
    r = np.hypot(x, y)
    # astropy Galactocentric is right-handed with the Sun at x < 0 moving towards +y (clockwise seen from +z)
    v = V_CIRC_KMS * np.array([y / r, -x / r, 0.0]) + rng.normal(0.0, 3.0, 3)
    return np.array([x, y, z]), v


def observe(xyz_pc, v_kms):
    """ICRS SkyCoord (with proper motion and radial velocity) of a Galactocentric state."""
    rep = CartesianRepresentation(*(xyz_pc * u.pc), differentials=CartesianDifferential(*(v_kms * u.km / u.s)))
    return SkyCoord(rep, frame=_gc_frame()).icrs


def make_associations(rng):
    rows, states = [], {}
    for name, l, b, d, age, radius in ASSOCIATIONS:
        xyz, v = association_state(l, b, d, rng)
        c = observe(xyz, v)
        states[name] = (xyz, v)
        rows.append({
            "name": name, "ra": c.ra.deg, "dec": c.dec.deg, "distance": c.distance.to_value(u.pc),
            "pm_ra_cosdec": c.pm_ra_cosdec.to_value(u.mas / u.yr), "pm_dec": c.pm_dec.to_value(u.mas / u.yr),
            "radial_velocity": c.radial_velocity.to_value(u.km / u.s),
            "distance_error": 0.04 * d, "pm_ra_cosdec_error": 0.2, "pm_dec_error": 0.2, "radial_velocity_error": 2.0,
            "radius": radius, "age": age,
        })
    tab = Table(rows)
    units = {"ra": u.deg, "dec": u.deg, "distance": u.pc, "pm_ra_cosdec": u.mas / u.yr, "pm_dec": u.mas / u.yr,
             "radial_velocity": u.km / u.s, "distance_error": u.pc, "pm_ra_cosdec_error": u.mas / u.yr,
             "pm_dec_error": u.mas / u.yr, "radial_velocity_error": u.km / u.s, "radius": u.pc, "age": u.Myr}
    for k, un in units.items():
        tab[k].unit = un
        tab[k].info.format = ".4f" if k in ("ra", "dec") else ".3f"
    tab.meta["description"] = "Invented candidate birth associations for the kinage demo (not real objects)."
    return tab, states


def born_star(states, spec):
    """Today's ICRS state of a star born at its parent's centre ``birth_myr`` ago with a kick."""
    xyz0, v0 = states[spec["parent"]]
    t_pc = spec["birth_myr"] * KMS_PC_PER_MYR
    birth = xyz0 - v0 * t_pc
    v_star = v0 + np.asarray(spec["kick_kms"], float)
    return observe(birth + v_star * t_pc, v_star)


def _jname(c):
    """Survey-style name Jhhmm+ddmm from the ICRS position."""
    ra = c.ra.to_string(unit=u.hourangle, sep="", precision=0, pad=True)[:4]
    dec = c.dec.to_string(sep="", precision=0, alwayssign=True, pad=True)[:5]
    return f"J{ra}{dec}"


def _write_table(tab, path):
    path.parent.mkdir(parents=True, exist_ok=True)
    tab.write(path, overwrite=True)


def make_xray(states, rng):
    s = XRAY
    _check_period(s["period_s"])
    star = born_star(states, s)
    obs = {"ra": star.ra.deg, "dec": star.dec.deg,
           "parallax": 1000.0 / star.distance.to_value(u.pc) + rng.normal(0, 0.08),
           "pm_ra_cosdec": star.pm_ra_cosdec.to_value(u.mas / u.yr) + rng.normal(0, 1.0),
           "pm_dec": star.pm_dec.to_value(u.mas / u.yr) + rng.normal(0, 1.0)}
    print(f"{s['name']}: true distance {star.distance.to_value(u.pc):.0f} pc, "
          f"radial velocity {star.radial_velocity:.0f} (not given to kinage)")
    text = XRAY_SCENARIO.format(**obs, **s)
    (OUT / "scenario.toml").write_text(text)
    from kinage.io.scenario import load_scenario
    from kinage.timing import simulate_toas

    scenario = load_scenario(OUT / "scenario.toml", allow_missing=("campaign.toas",))
    simulate_toas(scenario, rng=20270301).write(OUT / "toas.ecsv")


def make_radio(states, rng, assoc_table):
    s = RADIO
    _check_period(s["period_s"])
    star = born_star(states, s)
    s = dict(s, name="Corvel " + _jname(star))
    d_true = star.distance.to_value(u.pc)
    truth = {"pm_ra_cosdec": float(star.pm_ra_cosdec.to_value(u.mas / u.yr)),
             "pm_dec": float(star.pm_dec.to_value(u.mas / u.yr)), "parallax": 1000.0 / d_true}
    print(f"{s['name']}: true distance {d_true:.0f} pc, pm ({truth['pm_ra_cosdec']:.2f}, {truth['pm_dec']:.2f}) "
          f"mas/yr, parallax {truth['parallax']:.3f} mas, radial velocity {star.radial_velocity:.0f} (not given)")
    folder = OUT / "radio"
    folder.mkdir(exist_ok=True)
    # the dispersion-measure distance: the true one scattered by ~25% (a typical electron-density-model error)
    d_dm = d_true * (1.0 + rng.normal(0, 0.25))
    text = RADIO_SCENARIO.format(ra=star.ra.deg, dec=star.dec.deg, dm_distance=d_dm, dm_distance_error=0.3 * d_dm,
                                 pm_ra_img=truth["pm_ra_cosdec"] + rng.normal(0, 3.0),
                                 pm_dec_img=truth["pm_dec"] + rng.normal(0, 3.0), dm=d_true * 0.031, **s, **SITE)
    (folder / "scenario.toml").write_text(text)
    _write_table(assoc_table, folder / "associations.ecsv")
    from kinage.io.scenario import load_scenario
    from kinage.timing import simulate_toas

    scenario = load_scenario(folder / "scenario.toml", allow_missing=("campaign.toas",))
    simulate_toas(scenario, rng=20280412, inject=truth).write(folder / "toas.ecsv")


def make_population(assoc_rows, n_stars=14):
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
                         radial_velocity=a["radial_velocity"] * u.km / u.s).transform_to(_gc_frame())
            xyz = c.cartesian.xyz.to_value(u.pc)
            v0 = c.velocity.d_xyz.to_value(u.km / u.s)
            age = rng.uniform(0.2, 1.5)
            v = v0 + prior.sample_velocity(1, rng)[0] * 0.6
            now = xyz - v0 * age * KMS_PC_PER_MYR + v * age * KMS_PC_PER_MYR
        else:
            d = rng.uniform(250, 1000)
            l, b = rng.uniform(0, 360), np.degrees(np.arcsin(rng.uniform(-0.4, 0.4)))
            xyz, v0 = association_state(l, b, d, rng)
            v = v0 + prior.sample_velocity(1, rng)[0] * 0.6
            age = rng.uniform(0.3, 3.0)
            now = xyz
        st = observe(now, v)
        plx = 1000 / st.distance.to_value(u.pc)
        while True:
            period = rng.uniform(0.3, 6.0)
            try:
                _check_period(period)
                break
            except ValueError:
                continue
        tau_c = age * rng.uniform(1.2, 5) * 1e6 * 3.15576e7  # characteristic age above the true age (s)
        out.append({
            "name": f"Pop-{i + 1:02d}", "ra": st.ra.deg, "dec": st.dec.deg,
            "parallax": plx + rng.normal(0, 0.15), "parallax_error": 0.15,
            "pm_ra_cosdec": st.pm_ra_cosdec.to_value(u.mas / u.yr) + rng.normal(0, 1.0), "pm_ra_cosdec_error": 1.0,
            "pm_dec": st.pm_dec.to_value(u.mas / u.yr) + rng.normal(0, 1.0), "pm_dec_error": 1.0,
            "spin_period": period, "spin_period_derivative": period / (2 * tau_c),
            "temperature": rng.uniform(45, 120), "temperature_error": 6.0,
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


def main():
    rng = np.random.default_rng(20261202)
    tab, states = make_associations(rng)
    _write_table(tab, OUT / "associations.ecsv")
    make_xray(states, rng)
    make_radio(states, rng, tab)
    make_population(list(tab))
    shutil.rmtree(OUT / "__pycache__", ignore_errors=True)


XRAY_SCENARIO = """\
# kinage demo case 'xray': an INVENTED slow, thermally emitting neutron star.
# Everything below is fictitious; made by scripts/make_demo.py (see data_demo/README.md).
title = "{name}: a slow, cooling X-ray star (invented demo)"

[star]
name = "{name}"
ra = {ra:.6f}                    # deg (ICRS)
dec = {dec:.6f}                  # deg
ra_error = 30.0                   # mas (ra*cos dec), from X-ray imaging
dec_error = 30.0                  # mas
epoch = "2027-01-01"
parallax = "{parallax:.2f} mas"           # optical imaging parallax
parallax_error = "0.08 mas"
pm_ra_cosdec = "{pm_ra_cosdec:.1f} mas/yr"    # optical imaging proper motion
pm_ra_cosdec_error = "1.0 mas/yr"
pm_dec = "{pm_dec:.1f} mas/yr"
pm_dec_error = "1.0 mas/yr"
spin_period = "{period_s} s"
spin_period_error = "1e-6 s"
spin_period_derivative = {pdot:.2e}
spin_period_derivative_error = 0.3e-14
temperature = "{kT_eV:g} eV"             # redshifted blackbody kT as seen at infinity
temperature_error = "3 eV"

[campaign]
start = "2027-03-01"
baseline = "6 yr"
visits_per_year = 4
exposure = "40 ks"
band = "xray"                     # X-ray defaults: sun_avoidance 45 deg
source_rate = "0.9 1/s"           # counts/s in the source region
background_rate = "0.05 1/s"
pulsed_fraction = 0.11
pulse_shape = "sinusoid"
toas = "toas.ecsv"                # simulated by scripts/make_demo.py (kinage.timing.simulate_toas, seed 20270301)

[trace]
associations = "associations.ecsv"
samples = 2000
max_age = "3 Myr"
seed = 20261202
potential = "MWPotential2014"
solar_parameters = "galpy-default"
velocity_prior = "hobbs2005"
distance_prior = "exponential"

[ages]
braking_index = 3
moment_of_inertia = "1e45 g cm2"
mass = "1.4 solMass"
radius = "12 km"
envelopes = ["iron", "accreted"]
"""

RADIO_SCENARIO = """\
# kinage demo case 'radio': an INVENTED radio pulsar timed from an invented site.
# Everything below is fictitious; made by scripts/make_demo.py (see data_demo/README.md).
# The parallax is NOT given and the imaging proper motion is coarse: the timing fit measures both, and the trace
# uses the fit combined with the imaging values (timing dominates).  The dispersion-measure distance below is
# combined with the timing parallax into one distance posterior, used by the trace and the ages stage alike.
title = "{name}: a radio pulsar traced with timing astrometry (invented demo)"

[star]
name = "{name}"
ra = {ra:.7f}                    # deg (ICRS), from interferometric imaging
dec = {dec:.7f}                  # deg
ra_error = 20.0                   # mas (ra*cos dec)
dec_error = 20.0                  # mas
epoch = "2030-07-01"
distance = "{dm_distance:.0f} pc"            # from the dispersion measure and an electron-density model
distance_error = "{dm_distance_error:.0f} pc"
pm_ra_cosdec = "{pm_ra_img:.1f} mas/yr"    # two-epoch interferometric imaging (coarse)
pm_ra_cosdec_error = "3 mas/yr"
pm_dec = "{pm_dec_img:.1f} mas/yr"
pm_dec_error = "3 mas/yr"
spin_period = "{period_s} s"
spin_period_error = "1e-9 s"
spin_period_derivative = {pdot:.2e}
spin_period_derivative_error = 0.02e-15
dispersion_measure = "{dm:.1f} pc / cm3"

[campaign]
# arrival times measured at the {site_name} site, an invented radio telescope (not a real observatory)
toa_reference = "site"
site_longitude = "{longitude_deg} deg"
site_latitude = "{latitude_deg} deg"
site_height = "{height_m:g} m"
start = "2028-01-10"
baseline = "5 yr"
visits_per_year = 26
toa_error = "0.4 us"
band = "radio"                    # radio defaults: sun_avoidance 10 deg
toas = "toas.ecsv"                # simulated by scripts/make_demo.py (kinage.timing.simulate_toas, seed 20280412)

[trace]
associations = "associations.ecsv"
samples = 2000
max_age = "4 Myr"
seed = 20280412
potential = "MWPotential2014"
solar_parameters = "galpy-default"
velocity_prior = "hobbs2005"
distance_prior = "exponential"

[ages]
braking_index = 3
"""

POPULATION_TEMPLATE = """\
# Template for: kinage batch population.ecsv --scenario population_template.toml --out population/
# Each row of population.ecsv (invented stars) fills [star]; tracing and ages settings come from here.
title = "invented demo population"

[star]
name = "template"

[trace]
associations = "associations.ecsv"
samples = 250
association_samples = 40
control_runs = 2
max_age = "3 Myr"
seed = 42

[ages]
braking_index = 3
samples = 1000
"""

if __name__ == "__main__":
    main()
