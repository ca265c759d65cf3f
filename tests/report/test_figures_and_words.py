"""Figures and words of the report: sky projection, plot functions, verdicts, cooling-model naming."""

import numpy as np
import pytest

from kinage.ages.verdicts import cooling_explanations


def test_sky_offsets_are_angular_distances():
    # azimuthal equidistant projection: the distance from the centre equals the great-circle separation
    # (checked against astropy's SkyCoord.separation)
    import astropy.units as u
    from astropy.coordinates import SkyCoord

    from kinage.orbits.trace_figures import sky_offsets

    rng = np.random.default_rng(3)
    lon, lat = rng.uniform(0, 360, 50), rng.uniform(-80, 80, 50)
    l0, b0 = 236.5, 6.5
    x, y = sky_offsets(lon, lat, l0, b0)
    sep = SkyCoord(l=lon * u.deg, b=lat * u.deg, frame="galactic").separation(
        SkyCoord(l=l0 * u.deg, b=b0 * u.deg, frame="galactic")).deg
    assert np.allclose(np.hypot(x, y), sep, atol=1e-9)
    # longitude grows along +x, latitude along +y near the centre
    x1, y1 = sky_offsets(np.array([l0 + 0.1]), np.array([b0]), l0, b0)
    assert x1[0] > 0 and abs(y1[0]) < 1e-3


class _Settings:
    def __init__(self, envelopes, masses=(1.2, 1.4, 1.6), cooling_model="modified-urca"):
        self.envelopes, self.masses, self.cooling_model = envelopes, masses, cooling_model


def test_verdict_never_proposes_what_the_range_already_contains():
    colder, hotter = cooling_explanations(_Settings(("iron", "accreted")))
    assert "light-element" not in hotter and "iron" not in colder
    assert "heating" in hotter and "direct Urca" in colder
    colder, hotter = cooling_explanations(_Settings(("iron",)))
    assert "light-element" in hotter
    # with a direct-Urca model and masses above its threshold, direct Urca is in the range already
    colder, _ = cooling_explanations(_Settings(("iron", "accreted"), masses=(1.4, 1.8), cooling_model="direct-urca"))
    assert "direct Urca" not in colder


def test_cooling_model_is_not_called_minimal():
    # a model without nucleon pairing is not the "minimal cooling" of Page, Lattimer, Prakash & Steiner 2004
    # (ApJS 155, 623), which includes pairing
    from kinage.params import available, get

    assert "minimal" not in available("cooling_model")
    p = get("cooling_model", "modified-urca")
    assert "pairing" in p.description and "Not the 'minimal cooling'" in p.description
    assert get("cooling_model", "minimal") is p  # the old name still reads, recorded under the honest one


def test_plot_functions_draw_into_a_given_axes():
    import matplotlib.pyplot as plt  # without a display matplotlib picks its non-interactive backend

    from kinage.ages.cooling import cooling_curve
    from kinage.ages.plots import plot_age_ladder, plot_cooling_curves
    from kinage.report.figures import plot_pm_ellipses

    fig, ax = plt.subplots()
    curves = [cooling_curve(1.4, 12.0, env) for env in ("iron", "accreted")]
    out = plot_cooling_curves(curves, temperature=(8.6e5, 3.5e4), kinematic={"median": 7.5e5, "lo68": 7e5,
                                                                             "hi68": 8e5}, ax=ax)
    assert out is fig
    # the star is one point with error bars at its kinematic age (kyr on the axis)
    xs = [line.get_xdata() for line in ax.lines if len(line.get_xdata()) == 1]
    assert any(np.isclose(x[0], 750.0) for x in xs)
    fig2 = plot_age_ladder([("kinematic", {"median": 7.5e5, "lo68": 7e5, "hi68": 8e5})])
    assert fig2.axes and fig2.axes[0].get_xlabel() == "age (kyr)"
    items = [("timing", np.array([37.7, -14.8]), np.diag([0.017, 0.022]) ** 2),
             ("imaging", np.array([39.7, -15.2]), np.diag([3.0, 3.0]) ** 2)]
    fig3 = plot_pm_ellipses(items)
    assert len(fig3.axes) == 2  # the timing ellipse is 100x smaller: a zoom panel is added
    plt.close("all")


def test_population_figure_keeps_plane_crossing_apart():
    from astropy.table import Table

    from kinage.batch.summary import plot_population

    nan = float("nan")
    t = Table({"name": ["a", "b"], "kinematic_age": [5e5, nan], "kinematic_age_lo68": [4e5, nan],
               "kinematic_age_hi68": [6e5, nan], "plane_crossing_time": [3e6, 2e6], "characteristic_age": [1e6, 3e6],
               "probability": [0.8, 0.1], "probability_error": [0.05, 0.02], "field_probability": [0.2, 0.9]})
    fig = plot_population(t)
    labels = fig.axes[0].get_legend_handles_labels()[1]
    assert any(lab.startswith("kinematic age") for lab in labels)
    assert any("not a kinematic age" in lab for lab in labels)
