"""Trace figures as a reader sees them: every candidate named, the favoured one first, no-favourite cases in words.

Small invented traces (300 star draws, 20 association draws, straight lines without forces) keep this fast;
the stars and associations ("Testar", "Fenwold Test-A", "Garrow Test-B") are fictitious.
"""

import numpy as np
import pytest

from kinage import scenario_from_dict
from kinage.orbits import trace

HEADER = ("name,ra,dec,distance,distance_error,pm_ra_cosdec,pm_ra_cosdec_error,pm_dec,pm_dec_error,"
          "radial_velocity,radial_velocity_error,radius,age")
ROWS = ("Fenwold Test-A,100.0,5.0,450,10,-1.5,0.2,-0.5,0.2,18,2,25,5",
        "Garrow Test-B,280.0,-5.0,400,10,1.0,0.2,-2.0,0.2,-10,2,15,5")


def _trace(tmp_path, name, star_ra, pm_ra, distance_pc=450.0, max_age_myr=1.0):
    path = tmp_path / f"{name}.csv"
    path.write_text("\n".join((HEADER,) + ROWS) + "\n")
    plx = 1000.0 / distance_pc
    star = {"name": name, "ra": star_ra, "dec": 5.0, "parallax": plx, "parallax_error": 0.02 * plx,
            "pm_ra_cosdec": pm_ra, "pm_ra_cosdec_error": 0.2, "pm_dec": -0.5, "pm_dec_error": 0.2}
    tr = {"associations": str(path), "samples": 300, "association_samples": 20, "max_age": max_age_myr, "seed": 5,
          "control_runs": 2, "potential": "none"}
    return trace(scenario_from_dict({"star": star, "trace": tr}))


@pytest.fixture(scope="module")
def traces(tmp_path_factory):
    d = tmp_path_factory.mktemp("traces")
    # moving away from Fenwold Test-A (10 deg, 60 mas/yr: about 0.6 Myr ago); the same star heading elsewhere;
    # a star 40 pc away whose past track sweeps across the sky
    return {"born": _trace(d, "Testar J0001", 110.0, 60.0), "field": _trace(d, "Testar J0002", 140.0, 60.0),
            "wide": _trace(d, "Testar J0003", 100.5, 800.0, distance_pc=40.0, max_age_myr=2.0)}


def _legend_labels(ax):
    leg = ax.get_legend()
    return [t.get_text() for t in leg.get_texts()] if leg else []


def test_sky_map_ranks_the_favoured_association_first_and_names_every_candidate(traces):
    import matplotlib.pyplot as plt

    from kinage.orbits.trace_figures import plot_sky
    from kinage.display.style import FAVOURED_COLOR

    res = traces["born"]
    assert res.favoured == "Fenwold Test-A"  # the set-up: the star left it ~0.6 Myr ago
    fig = plot_sky(res)
    ax = fig.axes[0]
    labels = _legend_labels(ax)
    assoc_labels = [lab for lab in labels if "Test-" in lab]
    assert assoc_labels and assoc_labels[0].startswith("Fenwold Test-A") and "favoured" in assoc_labels[0]
    # drawn in vermilion, named on the map, with its radius as a circle
    assert any(line.get_color() == FAVOURED_COLOR for line in ax.get_lines())
    names = {t.get_text() for t in ax.texts}
    assert "Fenwold Test-A" in names
    # a candidate is either named on the map or counted as outside it
    assert "Garrow Test-B" in names or any("outside the map" in lab for lab in labels)
    # the graticule is the grid: no second, rectangular grid over it
    assert not any(g.get_visible() for g in ax.xaxis.get_gridlines())
    plt.close(fig)


def test_wide_tracks_are_drawn_in_galactic_longitude_and_latitude(traces):
    # beyond 60 deg from the star an azimuthal projection about it distorts everything: plain l, b instead
    import matplotlib.pyplot as plt

    from kinage.orbits.trace_figures import plot_sky

    fig = plot_sky(traces["wide"])
    ax = fig.axes[0]
    assert ax.get_xlim() == (180.0, -180.0) and ax.get_ylim() == (-90.0, 90.0)
    assert "Galactic longitude" in ax.get_xlabel() and "Galactic latitude" in ax.get_ylabel()
    ticks = [t.get_text() for t in ax.get_xticklabels()]
    assert all(t.endswith("°") for t in ticks if t)
    plt.close(fig)


def test_per_association_figures_say_when_none_is_favoured(traces):
    import matplotlib.pyplot as plt

    from kinage.orbits.trace_figures import plot_birth_xyz, plot_dmin_control, plot_dmin_tau

    res = traces["field"]
    assert res.favoured is None
    assert "none favoured" in plot_dmin_tau(res).axes[0].get_legend().get_title().get_text()
    fig = plot_dmin_control(res)
    labels = _legend_labels(fig.axes[0])
    # no encounters: a common-origin curve fitted to draws that never came near would test nothing
    assert not any(lab.startswith("common origin") for lab in labels)
    assert "none favoured" in fig.axes[0].get_legend().get_title().get_text()
    fig = plot_birth_xyz(res)
    assert "not a birth time" in fig.texts[0].get_text()
    plt.close("all")


def test_sky_map_of_a_star_from_nowhere_shows_the_candidates(traces):
    import matplotlib.pyplot as plt

    from kinage.orbits.trace_figures import plot_sky

    fig = plot_sky(traces["field"])
    ax = fig.axes[0]
    assert "no association favoured" in ax.get_title()
    labels = _legend_labels(ax)
    assert not any("favoured" in lab and "Test-" in lab for lab in labels)
    names = {t.get_text() for t in ax.texts}
    assert names & {"Fenwold Test-A", "Garrow Test-B"} or any("outside the map" in lab for lab in labels)
    plt.close(fig)


def test_positions_between_output_times_follow_a_straight_line():
    # closed form: on straight lines x(t) = x0 + v t linear interpolation between grid times is exact
    from kinage.orbits.trace_figures import _at_time

    times = np.linspace(0.0, -3.0, 21)
    x0, v = np.array([[-8.0, 0.1, 0.02], [-7.5, -0.2, 0.0]]), np.array([[0.3, -0.1, 0.05], [0.0, 0.2, -0.1]])
    pos = x0[:, None, :] + v[:, None, :] * times[None, :, None]
    t = -0.4137
    assert np.allclose(_at_time(pos, times, t), x0 + v * t, rtol=0, atol=1e-12)


@pytest.mark.parametrize("n, total, expected", [(1, 1500, "1 of 1500 draws"), (1290, 1500, "86% of draws"),
                                                (1499, 1500, "1499 of 1500 draws")])
def test_plane_crossing_share_never_rounds_a_few_draws_to_zero(n, total, expected):
    # '0% of draws crossed' beside a histogram bar would contradict the bar (common practice, no source)
    from kinage.orbits.trace_figures import _share_text

    assert _share_text(n, total) == expected


def test_association_table_closes_with_the_field():
    # the birth probabilities of the listed candidates and of the field add up to one (Bayes' rule over the
    # hypotheses, the model of kinage.orbits.probability); the table shows the field row beside them
    from kinage.report.numbers import association_rows

    assocs = [{"rank": 1, "name": "Fenwold Test-A", "probability": 0.57, "probability_error": 0.034,
               "neighbourhood_probability": 0.095, "neighbourhood_probability_error": 0.006,
               "encounter_fraction": 0.025, "chance_fraction": 0.0022,
               "age_yr": {"median": 4.13e5, "lo68": 3.59e5, "hi68": 4.8e5},
               "dmin_pc": {"median": 110.0, "lo68": 40.0, "hi68": 250.0}},
              {"rank": 2, "name": "Garrow Test-B", "probability": 1e-9, "probability_error": 1e-9,
               "neighbourhood_probability": 0.006, "neighbourhood_probability_error": 0.001,
               "encounter_fraction": 0.0, "chance_fraction": 0.0, "age_yr": {"median": None},
               "dmin_pc": {"median": 208.0, "lo68": 172.0, "hi68": 308.0}}]
    header, rows = association_rows(assocs, field=(0.43, 0.034), favoured="Fenwold Test-A")
    assert header[2] == "birth probability"
    assert rows[0][1] == "Fenwold Test-A (favoured)" and rows[0][2] == "57.0 ± 3.4%"
    assert rows[-1][1].startswith("none listed") and rows[-1][2] == "43.0 ± 3.4%"
    assert rows[-1][3] == "of which 10% near a candidate"
    assert all(len(r) == len(header) for r in rows)


def test_caption_names_the_candidate_shown_when_none_is_favoured():
    from kinage.report.document import _stage_caption

    data = {"favoured": None, "associations": [{"name": "Fenwold Test-A"}]}
    text = _stage_caption("trace", "trace/trace_birth_xyz.png", data)
    assert "No association is favoured" in text and "Fenwold Test-A" in text and "not an established birth" in text
    assert "No association" not in _stage_caption("trace", "trace/trace_birth_xyz.png",
                                                  dict(data, favoured="Fenwold Test-A"))


def test_encounter_crosses_sit_inside_the_radius(traces):
    # an encounter is a draw whose closest approach to its association draw is below the radius criterion
    # (the encounter definition of the trace); the crosses of the birth figure are those offsets, so their
    # lengths are the draws' d_min (to the ~1% of a linear step between output times)
    from kinage.orbits.trace_figures import _encounter_offsets

    res = traces["born"]
    s = res.best()
    j = res.data["index"][s["name"]]
    off = _encounter_offsets(res, s, j, res.data["adraws"].rows(j))
    assert len(off) == s["n_encounters"] > 0
    mask = np.asarray(res.data["masks"][s["name"]], bool)
    dmin = np.sort(np.asarray(res.data["main"]["dmin"][j], float)[mask])
    assert np.allclose(np.sort(np.linalg.norm(off, axis=1)), dmin, rtol=0.02, atol=0.05)
    assert np.all(np.linalg.norm(off, axis=1) <= 1.02 * s["radius_pc"] * res.settings["encounter_radius_factor"])
