"""Schema-driven value checks and the physical checks across keys of a scenario.

:func:`check_bounds` checks one converted value against its :class:`~kinage.io.schema.Key`
declaration (finite, sign, range with its reason, allowed strings, plausible
epochs), so a key gets its checks by being declared.  :func:`physical_checks`
checks what needs several keys: a star outside its Buchdahl radius, an initial
period below the spin period, exposures that fit between visits, and the
number of visits a forecast can plan.
"""

import difflib
import math

import astropy.units as u

from ..errors import InputError
from .quantities import format_quantity, shown

__all__ = ["check_bounds", "physical_checks", "reference_checks", "suggest", "short", "as_given", "MAX_VISITS",
           "MJD_RANGE"]

#: most visits (TOAs) a campaign may plan: a forecast of 10,000 visits takes about a minute (measured on the
#: 2-core development machine, 2026-12-02: 2,000 visits 12 s, 10,000 visits 41 s of CPU time)
MAX_VISITS = 10_000
#: G M_sun / c^2 in km (IAU 2015 nominal solar mass parameter)
_GM_SUN_C2_KM = 1.4766250
#: plausible epochs: MJD 15020 (1900-01-01) to 124593 (2200-01-01)
MJD_RANGE = (15020.0, 124593.0)


def short(name, limit=60):
    """A name as shown in a message: cut when absurdly long."""
    name = str(name)
    return name if len(name) <= limit else f"{name[:limit]}... ({len(name)} characters)"


def suggest(name, choices):
    """' (did you mean X?)' only for a genuinely close match (a typo, not a different word)."""
    if len(name) > 64:
        return ""
    close = difflib.get_close_matches(name, list(choices), n=1, cutoff=0.8)
    return f" (did you mean '{close[0]}'?)" if close else ""


def as_given(out, raw):
    """The value as the user wrote it, for messages (``-52 eV`` stays in eV)."""
    if isinstance(raw, str):
        return raw.strip() if len(raw) <= 60 else short(raw)
    if isinstance(out, u.Quantity):
        return format_quantity(out)
    return shown(out)


def _bound_text(key, x, shown_value):
    """The problem with number ``x`` against the key's sign and range, or None."""
    why = f": {key.reason}" if key.reason else ""
    unit = f" {key.unit}" if key.unit and key.kind != "float" else ""
    sign_why = why if key.lower is not None else ""  # a reason given for an upper bound says nothing of the sign
    if key.positive and not x > 0:
        return f"must be positive{sign_why} (got {shown_value})"
    if key.nonnegative and x < 0:
        return f"must not be negative{sign_why} (got {shown_value})"
    lo, hi = key.lower, key.upper
    if lo is not None and (x < lo or (key.lower_open and x == lo)):
        return f"must be {'above' if key.lower_open else 'at least'} {lo:g}{unit}{why} (got {shown_value})"
    if hi is not None and (x > hi or (key.upper_open and x == hi)):
        return f"must be {'below' if key.upper_open else 'at most'} {hi:g}{unit}{why} (got {shown_value})"
    return None


def check_bounds(key, out, where, raw=None):
    """Schema-driven checks of a converted value: sign, range (with the reason), choices, epochs."""
    if key.kind in ("quantity", "angle", "float", "int"):
        x = float(out.value if isinstance(out, u.Quantity) else out)
        if not math.isfinite(x):
            raise InputError(where, f"must be a finite number (got {as_given(out, raw)})")
        problem = _bound_text(key, x, as_given(out, raw))
        if problem:
            raise InputError(where, problem)
    elif key.kind == "floats":
        for i, x in enumerate(out):
            problem = _bound_text(key, x, shown(x))
            if problem:
                raise InputError(where, f"value {i + 1}: {problem}")
    elif key.kind in ("time", "times"):
        mjd = out.tdb.mjd
        vals = [float(mjd)] if out.isscalar else [float(m) for m in mjd]
        lo, hi = MJD_RANGE
        for v in vals:
            if not lo <= v <= hi:
                raise InputError(where, f"must be between 1900 and 2200 (MJD {lo:.0f} to {hi:.0f}): "
                                        f"a plausible epoch of a measurement or a visit (got MJD {v:.6g})")
    elif key.kind in ("str", "names") and key.choices is not None:
        choices = _choices(key.choices)
        if choices is None:
            return
        given = [out] if key.kind == "str" else list(out)
        lowered = {c.lower() for c in choices}
        for v in given:
            if v.lower() not in lowered:
                raise InputError(where, f"expected one of {', '.join(repr(c) for c in choices)} (got {shown(v)})"
                                 + suggest(v, choices))


def _choices(spec):
    """Allowed values of a key: a tuple, a parameter-set kind ('param:potential') or 'envelope'."""
    if isinstance(spec, (tuple, list)):
        return tuple(spec)
    if spec.startswith("param:"):
        from .choices import names

        return names("param", spec[len("param:"):])
    if spec == "envelope":
        import sys

        if "kinage.ages.envelope" not in sys.modules:
            return _KNOWN_ENVELOPES  # the built-in ones, without importing the ages stage (slow)
        return tuple(sys.modules["kinage.ages.envelope"].ENVELOPES)
    return None


_KNOWN_ENVELOPES = ("iron", "accreted", "gpe83")


def physical_checks(sections, problems):
    """Checks across keys that need physics: a neutron star, a campaign that fits its visits, sizes that fit."""
    ages = sections.get("ages")
    star = sections["star"]
    if ages is not None:
        # Buchdahl (1959): a static star has R > (9/4) G M / c^2; inside it no neutron star exists
        r_km = ages.value("radius", "km")
        masses = [("mass", ages.value("mass", "solMass"))] + [("masses", m) for m in (ages.get("masses") or ())]
        for key, m in masses:
            limit = 2.25 * _GM_SUN_C2_KM * m
            if r_km is not None and r_km <= limit:
                which = "radius" if key == "mass" or ages.given("radius") else key
                problems.append(InputError(f"[ages] {which}",
                                           f"a {m:g} Msun star of radius {r_km:g} km lies inside its Buchdahl radius "
                                           f"({limit:.3g} km = 9/4 GM/c^2; Schwarzschild radius "
                                           f"{2 * _GM_SUN_C2_KM * m:.3g} km): no such neutron star"))
                break
        p0, p = ages.get("initial_period"), star.get("spin_period")
        if p0 is not None and p is not None and not p0 < p:
            problems.append(InputError("[ages] initial_period", f"must be shorter than [star] spin_period "
                                       f"(a spinning-down star was faster at birth; got {format_quantity(p0)} >= "
                                       f"{format_quantity(p)})"))
    tr = sections.get("trace")
    if tr is not None and tr.get("max_samples") is not None and tr.get("samples") is not None \
            and tr.max_samples < tr.samples:
        problems.append(InputError("[trace] max_samples", f"must not be below [trace] samples ({tr.max_samples:,} < "
                                   f"{tr.samples:,}): it is the most draws the probability precision may ask for"))
    c = sections.get("campaign")
    if c is not None and c.given("dates") and not c.given("schedule"):  # a schedule with dates: the plan says so
        both = [k for k in ("start", "baseline", "visits_per_year") if c.given(k)]
        if both:
            problems.append(InputError("[campaign] dates",
                                       f"given together with {', '.join(repr(k) for k in both)}: explicit dates "
                                       "replace the regular plan, so give either 'dates' or start, baseline and "
                                       "visits_per_year"))
    if c is not None:
        vpy = c.get("visits_per_year")
        if vpy is not None and c.get("exposure") is not None and c.get("dates") is None:
            interval_s = 3.15576e7 / vpy
            if c.exposure.to_value(u.s) > interval_s:
                problems.append(InputError("[campaign] exposure",
                                           f"longer than the time between visits ({format_quantity(c.exposure)} > "
                                           f"{interval_s:.3g} s at {vpy:g} visits per year)"))
        if vpy is not None and c.get("baseline") is not None and c.get("dates") is None:
            n = c.baseline.to_value(u.yr) * vpy + 1
            if n > MAX_VISITS:
                problems.append(InputError("[campaign] visits_per_year",
                                           f"{c.baseline.to_value(u.yr):g} yr x {vpy:g} visits per year is {n:.3g} "
                                           f"visits, above the limit of {MAX_VISITS:,} visits (the forecast's run "
                                           f"time grows with the visits: ~1 minute at the limit)"))
    if c is not None and star.get("spin_period") is not None:
        # a TOA fixes the pulse phase only when its error is well below the period (the fit refuses TOA-table
        # errors of half a period or more for the same reason)
        period = star.spin_period.to_value(u.s)
        for key in ("toa_error", "added_error"):
            err = c.get(key)
            if err is not None and c.given(key) and err.to_value(u.s) >= 0.5 * period:
                problems.append(InputError(f"[campaign] {key}",
                                           f"{format_quantity(err)} is at least half the spin period "
                                           f"({format_quantity(star.spin_period)}), so a TOA fixes no pulse phase; "
                                           "expected an error well below the period"))


#: the ID word that opens a JPL/NAIF SPK kernel (a DAF file): 'DAF/SPK ' (older files 'NAIF/DAF'); NAIF, "DAF
#: Required Reading" (value from memory)
_SPK_MAGIC = (b"DAF/SPK", b"NAIF/DAF")
_SITE_KEYS = ("site_longitude", "site_latitude", "site_height")
_BARY_KEYS = ("barycentred_ra", "barycentred_dec")


def reference_checks(sections, problems, base_dir):
    """The ``[campaign]`` TOA-reference keys taken together, before any stage reads them.

    A JPL ephemeris must be a readable SPK file (resolved against ``base_dir``; the stored value becomes
    its absolute path) and needs ``jplephem``; a site or barycentring position must go with the matching
    ``toa_reference``; without a TOA table (whose metadata may supply them) the reference needs its keys.
    """
    c = sections.get("campaign")
    if c is None:
        return
    eph = c.get("ephemeris")
    if c.given("ephemeris") and eph is not None and eph.strip().lower() != "builtin":
        where = "[campaign] ephemeris"
        try:
            path = _spk_file(eph, where, base_dir)
        except InputError as exc:
            problems.append(exc)
        else:
            sections["campaign"] = c = c.replace(ephemeris=str(path))
    kind = (c.get("toa_reference") or "geocentre").strip().lower()
    stated = c.given("toa_reference")
    has_table = c.get("toas") is not None  # its metadata may carry the reference keys
    for keys, needs in ((_SITE_KEYS, "site"), (_BARY_KEYS, "barycentre")):
        given = [k for k in keys if c.given(k)]
        if given and kind != needs and (stated or not has_table):
            told = f"toa_reference = '{kind}'" if stated else "toa_reference (default 'geocentre')"
            problems.append(InputError(f"[campaign] {given[0]}",
                                       f"given with {told}: the {'site' if needs == 'site' else 'barycentring position'}"
                                       f" is used only with toa_reference = '{needs}'; set it or remove "
                                       f"{', '.join(given)}"))
        missing = [k for k in keys if not c.given(k)]
        if kind == needs and missing and not has_table:
            more = f" (also missing: {', '.join(missing[1:])})" if len(missing) > 1 else ""
            what = ("the telescope's geodetic longitude, latitude and height" if needs == "site" else
                    "the position the times were barycentred for")
            problems.append(InputError(f"[campaign] {missing[0]}",
                                       f"required with toa_reference = '{needs}': {what}{more}"))


def _spk_file(value, where, base_dir):
    """The absolute path of a readable JPL SPK ephemeris file, or InputError naming ``where``."""
    import importlib.util

    from .paths import check_input_file

    path = check_input_file(value.strip(), where, what="JPL ephemeris file ('builtin' or the path of a .bsp file)",
                            base_dir=base_dir)
    try:
        with open(path, "rb") as fh:
            head = fh.read(8)
    except OSError as exc:
        raise InputError(where, f"cannot read {path} ({exc.strerror or exc})") from None
    if not head.startswith(_SPK_MAGIC):
        raise InputError(where, f"{path} is not a JPL SPK ephemeris (a binary DAF file starting 'DAF/SPK'); "
                                "expected 'builtin' or the path of a .bsp kernel")
    if importlib.util.find_spec("jplephem") is None:
        raise InputError(where, "reading a JPL ephemeris file needs the 'jplephem' package (pip install jplephem), "
                                "or use 'builtin'")
    return path
