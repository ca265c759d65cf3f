"""The result object of the tracing stage."""

from dataclasses import dataclass, field

import numpy as np

from ..display.protocol import ResultDisplay, _age, _first, _with_error, fmt
from ..io.results import interval
from .statistics import MIN_EFFECTIVE, with_n_effective
from .probability import (DEFAULT_FIELD_PRIOR, DEFAULT_NEIGHBOURHOOD_SCALE_PC, DEFAULT_NEIGHBOURHOOD_SHARE, MODEL_TEXT,
                          PROBABILITY_THRESHOLD)

__all__ = ["TraceResult"]

_MAX_FAILED_LISTED = 1000


# ------------------------------------------------------------------ display
def _trace_numbers(r):
    out = [("star", r.star_name), ("samples", r.n_samples), ("favoured", r.favoured or "none")]
    best = r.best()
    if best is not None:
        out.append(("top association", best.get("name")))
        p = _first(best, "probability")
        if isinstance(p, dict):
            p = _first(p, "value", "median", "p")
        p_err = best.get("probability_error")
        if isinstance(p, float) and isinstance(p_err, float) and p_err > 0:
            out.append(("probability", _with_error(p, p_err, "")))
        else:
            out.append(("probability", fmt(p, "", 2) if isinstance(p, float) else None))
        out.append(("encounter fraction", fmt(_first(best, "encounter_fraction"), "", 2)))
        age = _first(best, "age_yr") or {}
        out.append(("kinematic age", _age(age.get("median"))))
    return out


def _trace_table(r):
    from .products import association_table

    return association_table(r)


@dataclass(repr=False)
class TraceResult(ResultDisplay):
    """Outcome of :func:`kinage.orbits.trace`.

    Attributes
    ----------
    n_samples, seed : int
    associations : list of dict
        Per-association statistics, best first (see :meth:`to_dict`).
    favoured : str or None
    verdict : str
    plane_crossing_myr : ndarray
        Per star draw, Myr (NaN: no crossing within the window or failed).
    failed_draws : list of dict
        ``index``, ``kind`` ('star', 'control', 'association'), ``reason``.
    parameter_sets : list of ParameterSet
    assumptions : list of str
    """

    PLOTS = {"sky": "kinage.orbits.sky_figure:plot_sky",
             "dmin_tau": "kinage.orbits.trace_figures:plot_dmin_tau",
             "dmin_control": "kinage.orbits.trace_figures:plot_dmin_control",
             "tau_hist": "kinage.orbits.trace_figures:plot_tau_hist",
             "plane_crossing": "kinage.orbits.trace_figures:plot_plane_crossing",
             "birth": "kinage.orbits.trace_figures:plot_birth_xyz"}
    KEY_NUMBERS = _trace_numbers
    TABLE = _trace_table

    star_name: str
    n_samples: int
    seed: int | None
    associations: list
    favoured: str | None
    verdict: str
    plane_crossing_myr: np.ndarray
    failed_draws: list
    settings: dict
    parameter_sets: list
    assumptions: list
    data: dict = field(default_factory=dict, repr=False)

    # ---------------------------------------------------------------- building
    @classmethod
    def build(cls, *, scenario, cfg, seed, frame, draws, adraws, ranked, favoured, verdict, failed, main, assoc,
              times, cols, n_control, solution, field=None, precision=None):
        masks = {s["name"]: s.pop("_mask") for s in ranked}
        index = {s["name"]: s.pop("_index") for s in ranked}
        settings = {
            "potential": cfg["potential"].name,
            "solar_parameters": cfg["solar"].name,
            "velocity_prior": cfg["velocity_prior"].name,
            "distance_prior": cfg["distance_prior"].name,
            "distance_source": draws.distance_source,
            "distance_words": None if draws.posterior is None else draws.posterior.words(cfg.get("parallax_origin")),
            "radial_velocity_source": draws.rv_source,
            "max_age_yr": cfg["max_age"] * 1e6,
            "time_steps": cfg["time_steps"],
            "integration_tolerance": cfg["integration_tolerance"],
            "control_relative_error": cfg["control_relative_error"],
            "control_absolute_error": cfg["control_absolute_error"],
            "association_samples": cfg["m"],
            "control_draws": n_control,
            "control_runs": cfg["control_runs"],
            "encounter_radius_factor": cfg["factor"],
            "age_tolerance_yr": cfg["tolerance"] * 1e6,
            "solar_frame": frame.summary(),
            "astrometry_source": solution.source,
            "field_prior": cfg.get("field_prior"),
            "neighbourhood_share": cfg.get("neighbourhood_share"),
            "neighbourhood_scale_pc": cfg.get("neighbourhood_scale"),
        }
        psets = [cfg["potential"], cfg["solar"]]
        from ..params import get

        psets += [get("velocity_prior", cfg["velocity_prior"].name), get("distance_prior", cfg["distance_prior"].name)]
        data = {"masks": masks, "index": index, "draws": draws, "adraws": adraws, "main": main, "assoc": assoc,
                "times": times, "cols": cols, "frame": frame, "field": dict(field or {}),
                "warnings": list(cfg.get("warnings", [])), "precision": dict(precision or {})}
        return cls(scenario.star.get("name") or "star", draws.n, seed, ranked, favoured, verdict, main["plane"],
                   failed, settings, psets, _assumptions(cfg, draws), data)

    # ---------------------------------------------------------------- samples
    def best(self):
        """Summary dict of the favoured association, else of the top-ranked one (None without associations)."""
        if not self.associations:
            return None
        if self.favoured is not None:
            return next(s for s in self.associations if s["name"] == self.favoured)
        return self.associations[0]

    def kinematic_age_samples(self, name=None, favoured_only=True):
        """Kinematic-age samples (yr): tau of the encounters with an association.

        Parameters
        ----------
        name : str, optional
            Association; default the favoured one.
        favoured_only : bool
            With ``name`` None and no favoured association, return an empty
            array (True) or the top-ranked association's encounters (False).

        Returns
        -------
        Quantity, yr
        """
        import astropy.units as u

        if name is None:
            if self.favoured is None and (favoured_only or not self.associations):
                return np.empty(0) * u.yr
            name = self.favoured or self.associations[0]["name"]
        j = self.data["index"][name]
        mask = self.data["masks"][name]
        return self.data["main"]["tau"][j][mask].astype(float) * 1e6 * u.yr

    def distance_pc(self):
        """Median and central 68% / 95% interval (pc) of the star's distance over all its draws."""
        iv = interval(self.data["draws"].distance_pc) if "draws" in self.data else {}
        return {k: iv.get(k) for k in ("median", "lo68", "hi68", "lo95", "hi95")}

    def transverse_velocity_kms(self):
        """Heliocentric transverse speed 4.74047 mu d (km/s; mu in mas/yr, d in kpc) over the same draws."""
        if "draws" not in self.data:
            return {k: None for k in ("median", "lo68", "hi68", "lo95", "hi95")}
        dr = self.data["draws"]
        from .frames import K_MASYR_KPC

        vt = K_MASYR_KPC * np.hypot(dr.pm_ra_cosdec, dr.pm_dec) * dr.distance_pc / 1000.0
        iv = interval(vt)
        return {k: iv.get(k) for k in ("median", "lo68", "hi68", "lo95", "hi95")}

    def plane_crossing_age_samples(self):
        """Plane-crossing ages (yr) of the star draws that crossed within the window."""
        x = np.asarray(self.plane_crossing_myr, float)
        return x[np.isfinite(x)] * 1e6

    def encounter_table(self, top=3):
        """Per-draw encounters of the best ``top`` associations with encounters, as an astropy Table."""
        from .products import encounter_table

        return encounter_table(self, top=top)

    # ---------------------------------------------------------------- probabilities and caveats
    @property
    def field_probability(self):
        """Posterior probability that the star was born outside every listed association (None without control draws)."""
        return self.data.get("field", {}).get("field_probability")

    def plane_crossing_caveats(self):
        """Sentences qualifying the plane-crossing age (empty when none applies).

        Says when most draws never crossed the mid-plane within ``max_age`` and
        when the typical crossing is older than the favoured association's
        kinematic age (then the star was born off the plane and the crossing
        does not date its birth).
        """
        pc = self.plane_crossing_age_samples()
        frac = pc.size / self.n_samples if self.n_samples else 0.0
        max_myr = self.settings["max_age_yr"] / 1e6
        out = []
        if frac == 0:
            out.append(f"No draw crossed the Galactic mid-plane within the {max_myr:.3g} Myr searched: the star "
                       "was born away from the plane or longer ago, so there is no plane-crossing age.")
        elif frac < 0.5:
            out.append(f"Most draws ({_share(1 - frac)}) did not cross the Galactic mid-plane within the "
                       f"{max_myr:.3g} Myr searched, so the plane-crossing age describes only the minority "
                       "that did and is no age estimate for the star.")
        best = self.best() if self.favoured is not None else None
        if best is not None and pc.size and best["age_yr"]["median"] is not None:
            kin = best["age_yr"]
            if np.median(pc) > kin["hi68"]:
                from ..display.sentences import format_age_interval

                out.append(f"The plane-crossing age ({format_age_interval(interval(pc), bare=True)}) is older than "
                           f"the kinematic age from {best['name']} ({format_age_interval(kin, bare=True)}): the star "
                           "was born away from the mid-plane, so the crossing does not date its birth.")
        return out

    def _favoured_implies(self):
        best = self.best() if self.favoured is not None else None
        if best is None:
            return None, None
        return best.get("radial_velocity_if_born_here_kms"), best.get("distance_if_born_here_pc")

    # ---------------------------------------------------------------- protocol
    def to_dict(self):
        """JSON-ready results.

        Besides the encounter statistics, every entry of ``associations`` has
        ``probability`` and ``probability_error`` (posterior probability of
        birth in it and its Monte Carlo error, see :mod:`.probability`),
        ``likelihood_ratio`` (+ ``_error``), and the radial velocity, present
        distance and age implied by birth there (``radial_velocity_if_born_here_kms``,
        ``distance_if_born_here_pc``, ``age_if_born_here_yr``: kernel-weighted
        intervals), ``neighbourhood_probability`` (+ ``_error``: birth in its
        surroundings but not in it, part of the field probability).  Top level:
        ``field_probability`` (+ ``_error``), ``field_prior``, ``neighbourhood_share``,
        ``neighbourhood_scale_pc``, ``probability_threshold``, ``favoured_radial_velocity_kms``,
        ``favoured_distance_pc`` (None unless an association is favoured),
        ``plane_crossing_fraction``, ``plane_crossing_caveats``, ``warnings``, and the Monte Carlo effort:
        ``samples_used`` (star draws, = ``n_samples``), ``precision_reached`` (every probability's error below
        ``probability_precision`` within ``max_samples`` draws) and ``largest_probability_error``.
        """
        pc = self.plane_crossing_age_samples()
        failed = self.failed_draws[:_MAX_FAILED_LISTED]
        field = self.data.get("field", {})
        prec = self.data.get("precision", {})
        rv, dist = self._favoured_implies()
        return {
            "star": self.star_name,
            "n_samples": self.n_samples,
            "samples_used": self.n_samples,
            "precision_reached": prec.get("precision_reached"),
            "probability_precision": prec.get("probability_precision"),
            "max_samples": prec.get("max_samples"),
            "largest_probability_error": prec.get("largest_probability_error"),
            "seed": self.seed,
            "associations": self.associations,
            "field_probability": field.get("field_probability"),
            "field_probability_error": field.get("field_probability_error"),
            "field_prior": field.get("field_prior"),
            "neighbourhood_share": field.get("neighbourhood_share"),
            "neighbourhood_scale_pc": field.get("neighbourhood_scale_pc"),
            "probability_threshold": field.get("probability_threshold"),
            "distance_pc": self.distance_pc(),
            "distance_source": self.settings.get("distance_source"),
            "transverse_velocity_kms": self.transverse_velocity_kms(),
            "plane_crossing_age_yr": with_n_effective(interval(pc)),
            "plane_crossing_fraction": float(pc.size / self.n_samples) if self.n_samples else None,
            "plane_crossing_caveats": self.plane_crossing_caveats(),
            "favoured": self.favoured,
            "favoured_radial_velocity_kms": rv,
            "favoured_distance_pc": dist,
            "verdict": self.verdict,
            "failed_draws": failed,
            "n_failed": len(self.failed_draws),
            "potential": self.settings["potential"],
            "solar_parameters": self.settings["solar_parameters"],
            "velocity_prior": self.settings["velocity_prior"],
            "distance_prior": self.settings["distance_prior"],
            "settings": self.settings,
            "parameter_sets": [p.summary() for p in self.parameter_sets],
            "assumptions": list(self.assumptions),
            "warnings": list(self.data.get("warnings", [])),
        }

    def verdict_line(self):
        """One quotable sentence on the birthplace (see :mod:`kinage.orbits.birthplace_verdict`)."""
        from .birthplace_verdict import birthplace_verdict

        return birthplace_verdict(self.to_dict())

    def summary(self):
        """A few plain sentences for the report's top summary, in probabilities."""
        text = self.verdict
        rv, dist = self._favoured_implies()
        from ..display.sentences import format_age_interval, format_interval

        if rv is not None and rv["median"] is not None and dist["median"] is not None:
            n_eff = rv.get("n_effective")
            if n_eff is not None and n_eff < MIN_EFFECTIVE:
                text += (f" Birth there implies a radial velocity of about "
                         f"{format_interval(rv['median'], rv['lo68'], rv['hi68'], 'km/s', bare=True)} and a present "
                         f"distance of about {format_interval(dist['median'], dist['lo68'], dist['hi68'], 'pc', bare=True)}"
                         f" (from {n_eff:.2g} effective encounters, too few for an interval).")
            else:
                text += (f" Birth there implies a radial velocity of "
                         f"{format_interval(rv['median'], rv['lo68'], rv['hi68'], 'km/s')} and a present distance of "
                         f"{format_interval(dist['median'], dist['lo68'], dist['hi68'], 'pc')}.")
        pc = interval(self.plane_crossing_age_samples())
        if pc["median"] is not None:
            frac = pc["n"] / self.n_samples
            when = (format_age_interval(pc) if pc["n"] >= MIN_EFFECTIVE else
                    f"{format_age_interval(pc, bare=True)} (from {pc['n']} draw{'s' if pc['n'] > 1 else ''}, too few "
                    "for an interval)")
            text += (f" {_share(frac)} of the draws crossed the Galactic mid-plane within the "
                     f"{self.settings['max_age_yr'] / 1e6:.3g} Myr searched, last {when} ago.")
        else:
            text += " No draw crossed the Galactic mid-plane within the integration window."
        for c in self.plane_crossing_caveats():
            if pc["median"] is not None:
                text += " " + c
        prec = self.data.get("precision", {})
        if prec.get("precision_reached") is False:
            text += (f" The probabilities' Monte Carlo errors (largest {prec['largest_probability_error']:.2g}) did "
                     f"not reach the precision asked for ({prec['probability_precision']:.2g}) within "
                     f"{self.n_samples:,} draws ([trace] max_samples); more draws would narrow them.")
        for w in self.data.get("warnings", []):
            text += " Warning: " + w
        return text

    def write_products(self, out_dir):
        """Write the encounter ECSV and the figures into ``out_dir``; returns the paths."""
        from .products import write_products

        return write_products(self, out_dir)


def _share(f):
    """A share of the draws as a percentage that neither rounds a few draws to '0%' nor 99.9% to '100%'."""
    pc = 100.0 * f
    if 0 < pc < 1:
        return f"{pc:.2g}%"
    if 99 < pc < 100:
        return f"{np.floor(pc * 10) / 10:.1f}%"
    return f"{pc:.0f}%"


def _assumptions(cfg, draws):
    out = [
        f"Galactic potential {cfg['potential'].name} ("
        + ("; ".join(cfg["potential"].references) or "straight lines, no forces") + ")",
        f"Sun's position and motion: {cfg['solar'].name} (" + "; ".join(cfg["solar"].references) + ")",
        "The velocity prior describes the peculiar velocity relative to a flat rotation curve with the local "
        "circular speed v_sun_y - 12.24 km/s (Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829)",
        "Closest approaches are found by a coarse grid search refined by locally linear relative motion; "
        "association positions between grid points by cubic Hermite interpolation",
        "Association centres move as points with the table's mean motion; their epoch is taken equal to the "
        "star's (differences of decades are negligible)",
        "Chance rate from control draws with the proper-motion direction turned at random (speed kept) "
        "(randomised inputs as in Tetzlaff et al. 2010, MNRAS 402, 2369)",
        "d_min compared with the common-origin distribution of Hoogerwerf, de Bruijne & de Zeeuw 2001, "
        "A&A 365, 49, Appendix A (sigma fitted; KS distance only, no p-value)",
        MODEL_TEXT.format(field=cfg.get("field_prior", DEFAULT_FIELD_PRIOR),
                          share=cfg.get("neighbourhood_share", DEFAULT_NEIGHBOURHOOD_SHARE),
                          scale=cfg.get("neighbourhood_scale", DEFAULT_NEIGHBOURHOOD_SCALE_PC))
        + f"; an association is favoured when its probability is at least {PROBABILITY_THRESHOLD:.2g}",
    ]
    if draws.rv_source == "prior":
        out.append(f"Unknown radial velocity drawn from the {cfg['velocity_prior'].name} velocity distribution "
                   "conditional on the transverse peculiar speed")
    if draws.posterior is not None:
        out.append(draws.posterior.assumption(cfg.get("parallax_origin")))
    return out

