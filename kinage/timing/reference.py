"""Where TOAs are referred to, and the scenario / TOA-table keys that say so.

``[campaign] toa_reference`` is one of

``"geocentre"`` (default)
    TDB arrival times at the Earth's centre.
``"site"``
    Arrival times at a telescope at geodetic (WGS84) ``site_longitude``,
    ``site_latitude`` and ``site_height``; a scale other than TDB (e.g. UTC)
    is converted by astropy with the site's location (topocentric TDB).
``"barycentre"``
    TDB times at the solar-system barycentre, barycentred by the user for a
    fixed reference position ``barycentred_ra``, ``barycentred_dec`` without
    proper motion or parallax (the usual X-ray practice: Roemer and solar
    Shapiro delays removed, Einstein delay through the TDB scale).

``ephemeris`` is ``"builtin"`` (astropy's built-in ERFA epv00 model) or the
path of a JPL planetary ephemeris file read through astropy (needs the
``jplephem`` package).  Each key may also stand in the TOA table's metadata
(ECSV header) under the same name; when the scenario and the table both give
a key they must agree.
"""

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = ["REFERENCE_KINDS", "REFERENCE_KEYS", "TOAReference", "resolve_reference", "timing_assumptions"]

REFERENCE_KINDS = ("geocentre", "site", "barycentre")
#: key -> default unit (None: a string)
REFERENCE_KEYS = {
    "toa_reference": None, "site_longitude": "deg", "site_latitude": "deg", "site_height": "m",
    "barycentred_ra": "deg", "barycentred_dec": "deg", "ephemeris": None,
}
_BOUNDS = {"site_longitude": (-180.0, 360.0), "site_latitude": (-90.0, 90.0), "site_height": (-1.0e3, 1.0e5),
           "barycentred_ra": (0.0, 360.0), "barycentred_dec": (-90.0, 90.0)}
# two given values closer than this agree (deg, deg, m): rounding in a header, not a conflict
_TOLERANCE = {"site_longitude": 1e-9, "site_latitude": 1e-9, "site_height": 1e-6, "barycentred_ra": 1e-9,
              "barycentred_dec": 1e-9}


@dataclass(frozen=True)
class TOAReference:
    """Reference point of a set of TOAs.

    Attributes
    ----------
    kind : {'geocentre', 'site', 'barycentre'}
    site_longitude_deg, site_latitude_deg : float or None, degrees (geodetic, WGS84)
    site_height_m : float or None, m (above the WGS84 ellipsoid)
    barycentred_ra_deg, barycentred_dec_deg : float or None, degrees (ICRS)
    ephemeris : str
        ``'builtin'`` or the path of a JPL ephemeris file.
    """

    kind: str = "geocentre"
    site_longitude_deg: float | None = None
    site_latitude_deg: float | None = None
    site_height_m: float | None = None
    barycentred_ra_deg: float | None = None
    barycentred_dec_deg: float | None = None
    ephemeris: str = "builtin"

    def location(self):
        """The site as an astropy EarthLocation (geodetic WGS84), or None."""
        if self.kind != "site":
            return None
        import astropy.units as u
        from astropy.coordinates import EarthLocation

        return EarthLocation.from_geodetic(self.site_longitude_deg * u.deg, self.site_latitude_deg * u.deg,
                                           self.site_height_m * u.m, ellipsoid="WGS84")

    def to_meta(self):
        """The keys as TOA-table metadata (same names; angles in deg, height in m)."""
        out = {"toa_reference": self.kind, "ephemeris": str(self.ephemeris)}
        if self.kind == "site":
            out.update(site_longitude=f"{self.site_longitude_deg!r} deg", site_latitude=f"{self.site_latitude_deg!r} deg",
                       site_height=f"{self.site_height_m!r} m")
        if self.kind == "barycentre":
            out.update(barycentred_ra=f"{self.barycentred_ra_deg!r} deg",
                       barycentred_dec=f"{self.barycentred_dec_deg!r} deg")
        return out

    def describe(self):
        """A few words for reports."""
        if self.kind == "site":
            return (f"site at longitude {self.site_longitude_deg:.4f} deg, latitude {self.site_latitude_deg:.4f} deg, "
                    f"height {self.site_height_m:.0f} m (WGS84)")
        if self.kind == "barycentre":
            return (f"barycentre (barycentred for ra {self.barycentred_ra_deg:.6f} deg, "
                    f"dec {self.barycentred_dec_deg:.6f} deg)")
        return "geocentre"


def _scenario_value(campaign, key):
    if campaign is None:
        return None
    try:
        if not campaign.given(key):
            return None
    except (AttributeError, KeyError):
        pass
    try:
        v = campaign.get(key)
    except (AttributeError, KeyError):
        return None
    if v is None:
        return None
    unit = REFERENCE_KEYS[key]
    if unit is None:
        return str(v)
    from astropy import units as u

    return float(u.Quantity(v, unit).to_value(unit)) if isinstance(v, u.Quantity) else float(v)


def _meta_value(meta, key, where):
    if key not in meta or meta[key] is None:
        return None
    raw = meta[key]
    unit = REFERENCE_KEYS[key]
    here = f"{where} meta {key}"
    if unit is None:
        if not isinstance(raw, str) or not raw.strip():
            raise InputError(here, f"expected a non-empty string (got {raw!r})")
        return raw.strip()
    from ..io.quantities import parse_quantity

    if isinstance(raw, bool):
        raise InputError(here, f"expected a number in {unit} or a string with a unit (got {raw!r})")
    return float(parse_quantity(raw, unit, here).value)


def _check_range(key, value, where):
    lo, hi = _BOUNDS[key]
    if not np.isfinite(value) or value < lo or value > hi:
        unit = REFERENCE_KEYS[key]
        raise InputError(where, f"must be between {lo:g} and {hi:g} {unit} (got {value!r} {unit})")


def resolve_reference(campaign, meta=None, where="TOA table", *, base_dir=None, table_dir=None):
    """The TOA reference from the scenario and (optionally) a TOA table's metadata.

    Parameters
    ----------
    campaign : Section or None
        ``[campaign]`` table.
    meta : dict, optional
        The TOA table's metadata.
    where : str
        Name of the TOA table for messages (its file path).
    base_dir, table_dir : Path, optional
        Folders a relative ``ephemeris`` path is taken from: the scenario's
        (scenario value) and the TOA table's (metadata value); default: the
        working directory.

    Returns
    -------
    TOAReference

    Raises
    ------
    InputError
        Unknown reference, a value out of range, a scenario value that differs
        from the table's (naming both), a missing site or barycentring
        position, a missing ephemeris file.
    """
    meta = meta or {}
    vals = {}
    for key in REFERENCE_KEYS:
        s = _scenario_value(campaign, key)
        m = _meta_value(meta, key, where)
        if key == "ephemeris":
            s, m = _anchored(s, base_dir), _anchored(m, table_dir)
        if s is not None and key in _BOUNDS:
            _check_range(key, s, f"[campaign] {key}")
        if m is not None and key in _BOUNDS:
            _check_range(key, m, f"{where} meta {key}")
        if s is not None and m is not None:
            same = (s.strip().lower() == m.strip().lower()) if isinstance(s, str) else abs(s - m) <= _TOLERANCE[key]
            if key == "ephemeris" and not same:
                same = Path(s).expanduser().resolve() == Path(m).expanduser().resolve()
            if not same:
                raise InputError(f"[campaign] {key}",
                                 f"{s!r} in the scenario conflicts with {m!r} in the metadata of {where}; "
                                 "make them agree or remove one")
        vals[key] = s if s is not None else m
    kind = (vals["toa_reference"] or "geocentre").strip().lower()
    src = "[campaign] toa_reference"
    if kind in ("geocenter", "barycenter"):
        kind = kind.replace("center", "centre")
    if kind not in REFERENCE_KINDS:
        raise InputError(src, f"expected one of {', '.join(repr(k) for k in REFERENCE_KINDS)} (got {vals['toa_reference']!r})")
    if kind == "site":
        for key in ("site_longitude", "site_latitude", "site_height"):
            if vals[key] is None:
                raise InputError(f"[campaign] {key}", f"required with toa_reference = 'site' (in the scenario or "
                                 f"the metadata of {where})")
    if kind == "barycentre":
        for key in ("barycentred_ra", "barycentred_dec"):
            if vals[key] is None:
                raise InputError(f"[campaign] {key}",
                                 "required with toa_reference = 'barycentre': the position the times were "
                                 f"barycentred for (in the scenario or the metadata of {where})")
    eph = _ephemeris(vals["ephemeris"])
    lon = vals["site_longitude"]
    if lon is not None and lon > 180.0:
        lon -= 360.0
    return TOAReference(kind, lon if kind == "site" else None, vals["site_latitude"] if kind == "site" else None,
                        vals["site_height"] if kind == "site" else None,
                        vals["barycentred_ra"] if kind == "barycentre" else None,
                        vals["barycentred_dec"] if kind == "barycentre" else None, eph)


def _anchored(value, folder):
    """A relative ephemeris path taken from ``folder``; 'builtin' and None unchanged."""
    if value is None or value.strip().lower() == "builtin":
        return value
    path = Path(value).expanduser()
    if not path.is_absolute():
        path = (Path(folder) if folder is not None else Path.cwd()) / path
    return str(path)


def _ephemeris(value):
    if value is None or str(value).strip().lower() == "builtin":
        return "builtin"
    path = Path(str(value))
    if not path.is_file():
        raise InputError("[campaign] ephemeris", f"'builtin' or the path of a JPL ephemeris file; file not found: {path}")
    try:
        import jplephem  # noqa: F401  - astropy reads JPL files through it
    except ImportError:
        raise InputError("[campaign] ephemeris", "reading a JPL ephemeris file needs the 'jplephem' package "
                         "(pip install jplephem), or use 'builtin'") from None
    return str(path)


def timing_assumptions(reference, dispersion=False):
    """The assumption sentences of a simulation or fit with this TOA reference."""
    from .forecast_result import TIMING_ASSUMPTIONS

    eph = ("astropy's built-in ephemeris (ERFA epv00)" if reference.ephemeris == "builtin"
           else f"the JPL ephemeris {Path(reference.ephemeris).name} read through astropy")
    out = [f"Roemer and parallax delays from the observer's barycentric position in {eph} "
           "(Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, ch. 8)",
           f"TOAs referred to the {reference.describe()} in TDB; solar Shapiro delay included"
           + ("; dispersion delay at the barycentric frequency" if dispersion else "; no dispersion delay")
           + ("; the user's barycentring assumed to have removed the Roemer and Shapiro delays for the stated "
              "position" if reference.kind == "barycentre" else "")]
    return out + [a for a in TIMING_ASSUMPTIONS if not a.startswith(("Roemer", "TOAs referred"))]
