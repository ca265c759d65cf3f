"""TOA tables: read, validate and write.

Format
------
ECSV (preferred) or CSV with one row per TOA:

``mjd``
    Arrival time at the geocentre, MJD in TDB (another scale may be named in
    the table meta as ``time_scale``: 'utc', 'tt', 'tai', 'tcb', 'tdb').
    kinage writes it as an astropy Time column whose ECSV form is the full
    decimal string of the MJD (``out_subfmt='str'``), exact to about 1 ns,
    because a float64 MJD rounds to ~0.6 us.  On reading, a text column is
    parsed at full precision; a float column is accepted (float64 precision).
``error``
    TOA uncertainty; with a unit in ECSV, else seconds.
``exposure`` (optional)
    Exposure of the visit; with a unit in ECSV, else seconds.
``frequency`` (optional)
    Observing frequency; with a unit in ECSV, else MHz (at least 5 MHz).
    Enables the dispersion delay (:mod:`kinage.timing.delays`).

The metadata may carry the TOA reference keys (``toa_reference``,
``site_longitude``, ... : :mod:`kinage.timing.reference`).  For
``toa_reference = 'site'`` the times are at the site; a scale other than TDB
is converted with the site's location (:func:`site_times`).

Rows may come in any order (they are sorted by time); duplicate times, NaN, missing values,
errors below 1 ns, exposures that are not positive (NaN: unknown), MJDs outside 1965-2100 (MJD
39000-88069, the range of the built-in ephemeris) and frequencies that are not positive are rejected with
an :class:`~kinage.errors.InputError` naming the row (1-based, data rows)
and the column.  A fit also needs more TOAs than parameters spread over more
than a day (:func:`check_fit_table`).
"""

from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.table import Table
from astropy.time import Time

from ..errors import InputError
from ..io.results import atomic_path

__all__ = ["read_toas", "write_toas", "validate_toas", "check_fit_table", "check_errors_against_period",
           "frequency_column", "site_times", "MJD_RANGE", "MIN_FREQUENCY_MHZ"]

#: plausible TOA dates: 1965 (before the first pulsar) to 2100 (end of the built-in ephemeris)
MJD_RANGE = (39000.0, 88069.0)

#: smallest TOA error accepted, s: below any measured arrival time (the best are ~10 ns; value from memory) and
#: below the ~1 ns to which the times are kept
MIN_ERROR_S = 1e-9

#: lowest observing frequency accepted: the ionosphere reflects radio waves below its plasma frequency of a few
#: MHz (value from memory), so no ground-based pulsar timing happens there; catches a column in GHz
MIN_FREQUENCY_MHZ = 5.0

_SCALES = ("tdb", "tt", "utc", "tai", "tcb", "tcg")


def read_toas(path):
    """Read and validate a TOA table.

    Parameters
    ----------
    path : str or Path
        ECSV (``.ecsv``) or CSV file.

    Returns
    -------
    astropy.table.Table
        ``mjd`` as a Time column (TDB, format mjd), ``error`` (Quantity, s),
        ``exposure`` (Quantity, s) when present; meta ``time_scale='tdb'``.
    """
    from ..io.limits import max_toa_rows
    from ..io.readonce import read_input, table_source

    path = Path(path)
    where = str(path)
    if not path.is_file():
        raise InputError(where, "TOA file not found")
    # read once, rows counted while reading against the memory a fit of that many TOAs needs; hash recorded
    rows_cap, why = max_toa_rows()
    data = read_input(path, where, max_rows=rows_cap, what=f"TOAs ({why})")
    try:
        if path.suffix.lower() == ".ecsv":
            tab = Table.read(table_source(data), format="ascii.ecsv")
        else:
            from astropy.io import ascii

            tab = Table.read(table_source(data), format="ascii.csv",
                             converters={"mjd": [ascii.convert_numpy(str)]})
    except InputError:
        raise
    except Exception as exc:  # noqa: BLE001 - any parse failure is an input problem
        if path.suffix.lower() == ".ecsv":
            _locate_ecsv_problem(data, where)  # a row and column when the data lines show one
        from ..io.readonce import parse_problem

        raise InputError(where, f"could not read the TOA table ({parse_problem(exc)})") from None
    return validate_toas(tab, where)


def _locate_ecsv_problem(data, where):
    """An ECSV table astropy cannot build (e.g. an 'mjd' Time column with 'nan', text or no rows): its data
    lines read as plain text and validated, so that the InputError names the row and column; returns
    quietly when they show nothing."""
    from ..io.readonce import table_source

    try:
        plain = Table.read(table_source(data), format="ascii.basic", guess=False)
    except Exception:  # noqa: BLE001 - no better message to give
        return
    plain.meta = {}
    validate_toas(plain, where)


def validate_toas(tab, where="TOA table"):
    """Validate a TOA table and return it in canonical form (see :func:`read_toas`)."""
    for col in ("mjd", "error"):
        if col not in tab.colnames:
            from ..io.readonce import shown_columns

            raise InputError(where, f"missing column '{col}' (columns found: {shown_columns(tab.colnames)})")
    if len(tab) == 0:
        raise InputError(where, "the table has no rows")
    scale = str(tab.meta.get("time_scale", "tdb")).lower()
    if scale not in _SCALES:
        raise InputError(f"{where} meta time_scale", f"expected one of {', '.join(_SCALES)} (got {scale!r})")
    times = _parse_times(tab["mjd"], scale, where)
    _check_range(times, where)
    err = _column_seconds(tab, "error", where)
    bad = np.flatnonzero(~(err > 0))
    if bad.size:
        raise InputError(f"{where} row {bad[0] + 1}, column 'error'", f"must be positive (got {err[bad[0]]!r} s)")
    out = Table()
    out["mjd"] = times
    out["error"] = err * u.s
    small = np.flatnonzero(err < MIN_ERROR_S)
    if small.size:
        i = small[0]
        raise InputError(f"{where} row {i + 1}, column 'error'",
                         f"{err[i]:.3g} s is below {MIN_ERROR_S:g} s: no arrival time is measured to better than "
                         "~10 ns (times are kept to ~1 ns); errors without a unit are in seconds")
    if "exposure" in tab.colnames:
        exposure = _column_seconds(tab, "exposure", where, allow_nan=True)
        bad = np.flatnonzero(np.isfinite(exposure) & ~(exposure > 0))
        if bad.size:
            raise InputError(f"{where} row {bad[0] + 1}, column 'exposure'",
                             f"must be positive (got {exposure[bad[0]]!r} s; NaN means unknown)")
        out["exposure"] = exposure * u.s
    for name in tab.colnames:
        if name not in out.colnames:
            out[name] = tab[name]
    out.meta.update({k: v for k, v in tab.meta.items() if k != "__serialized_columns__"})
    # the scale the times were given in: a Time column's own scale (a UTC Time column is converted to TDB at a
    # site with the site's location by site_times, as a text column with meta time_scale = 'utc' is)
    col = tab["mjd"]
    given = str(col.scale) if isinstance(col, Time) and str(col.scale) in _SCALES else scale
    out.meta.setdefault("time_scale_input", given)
    out.meta["time_scale"] = "tdb"
    if "frequency" in tab.colnames:
        out["frequency"] = frequency_column(tab, where) * u.MHz
    order = _time_order(out["mjd"], where)
    return out if order is None else out[order]


def _check_range(times, where):
    mjd = times.to_value("mjd", "float")
    bad = np.flatnonzero((mjd < MJD_RANGE[0]) | (mjd > MJD_RANGE[1]))
    if bad.size:
        i = bad[0]
        raise InputError(f"{where} row {i + 1}, column 'mjd'",
                         f"MJD {mjd[i]:.6f} is outside the plausible range {MJD_RANGE[0]:.0f}-{MJD_RANGE[1]:.0f} "
                         "(1965-2100); is the column a Julian date, or in seconds?")


def frequency_column(tab, where="TOA table"):
    """Observing frequencies in MHz (None without a ``frequency`` column); zeros, NaN, negatives rejected."""
    if "frequency" not in tab.colnames:
        return None
    col = tab["frequency"]
    if getattr(col, "mask", None) is not None and np.any(col.mask):
        i = int(np.flatnonzero(col.mask)[0])
        raise InputError(f"{where} row {i + 1}, column 'frequency'", "missing value (observing frequency in MHz)")
    try:
        x = np.asarray(col, float)
    except (TypeError, ValueError):
        raise InputError(f"{where} column 'frequency'", "expected numbers (observing frequency in MHz)") from None
    unit = getattr(col, "unit", None)
    if unit not in (None, ""):
        try:
            x = (x * u.Unit(unit)).to_value(u.MHz, equivalencies=u.spectral())
        except (u.UnitConversionError, ValueError):
            raise InputError(f"{where} column 'frequency'", f"expected a frequency unit such as MHz (got {unit})") from None
    bad = np.flatnonzero(~(np.isfinite(x) & (x > 0)))
    if bad.size:
        i = bad[0]
        raise InputError(f"{where} row {i + 1}, column 'frequency'",
                         f"must be a positive observing frequency in MHz (got {x[i]!r})")
    low = np.flatnonzero(x < MIN_FREQUENCY_MHZ)
    if low.size:
        i = low[0]
        raise InputError(f"{where} row {i + 1}, column 'frequency'",
                         f"{x[i]:g} MHz is below {MIN_FREQUENCY_MHZ:g} MHz, where the ionosphere stops radio waves; "
                         "frequencies without a unit are in MHz (is the column in GHz?)")
    return x


def check_fit_table(tab, where, n_parameters):
    """Checks a fit needs beyond :func:`validate_toas`: enough TOAs, over more than one day."""
    n = len(tab)
    if n <= n_parameters:
        raise InputError(where, f"need more TOAs than fitted parameters ({n} TOAs for {n_parameters} parameters)")
    t = tab["mjd"]
    span_d = (t[-1] - t[0]).to_value(u.d)
    if span_d < 1.0:
        raise InputError(f"{where} column 'mjd'",
                         f"all {n} TOAs fall within one day ({span_d * 24:.2g} h): position, proper motion and "
                         "parallax need TOAs spread over months to years")


def check_errors_against_period(tab, period, where):
    """TOA errors of half the spin period or more leave no pulse phase to fit: most often a unit mistake."""
    err = u.Quantity(tab["error"]).to_value(u.s)
    bad = np.flatnonzero(err >= 0.5 * period)
    if bad.size:
        i = int(bad[0])
        mjd = tab["mjd"][i].tdb.to_value("mjd", "float")
        raise InputError(f"{where} column 'error'",
                         f"{err[i]:.3g} s (at MJD {mjd:.4f}) is at least half the spin period ({_period_text(period)}), so "
                         "the TOA fixes no pulse phase; errors must be well below the period (a column without "
                         "a unit is in seconds: were these microseconds?)")


def _period_text(period):
    """A spin period in the unit people use: ms below a second."""
    return f"{period * 1e3:.4g} ms" if period < 1.0 else f"{period:.4g} s"


def site_times(tab, reference):
    """TDB arrival times at the site: a non-TDB input scale is converted with the site's location (astropy)."""
    t = tab["mjd"]
    scale = str(tab.meta.get("time_scale_input", "tdb")).lower()
    if scale == "tdb":
        return t.tdb
    import warnings

    from .geometry import iers_offline

    given = getattr(t.tdb, scale)  # back to the scale the table was written in (exact round trip)
    with iers_offline(), warnings.catch_warnings():
        warnings.filterwarnings("ignore", module="erfa")
        return Time(given.jd1, given.jd2, format="jd", scale=scale, location=reference.location()).tdb


def _parse_times(col, scale, where):
    if isinstance(col, Time):
        t = col
    else:
        if getattr(col, "mask", None) is not None and np.any(col.mask):
            i = int(np.flatnonzero(col.mask)[0])
            raise InputError(f"{where} row {i + 1}, column 'mjd'", "missing value")
        vals = np.asarray(col)
        if vals.dtype.kind in "US":
            for i, v in enumerate(vals):
                try:
                    x = float(v)
                except ValueError:
                    raise InputError(f"{where} row {i + 1}, column 'mjd'", f"expected an MJD number (got {v!r})") from None
                if not np.isfinite(x):
                    raise InputError(f"{where} row {i + 1}, column 'mjd'", f"must be finite (got {v!r})")
            t = Time(vals.astype(str), format="mjd", scale=scale)
        else:
            x = np.asarray(vals, float)
            bad = np.flatnonzero(~np.isfinite(x))
            if bad.size:
                raise InputError(f"{where} row {bad[0] + 1}, column 'mjd'", f"must be finite (got {x[bad[0]]!r})")
            if isinstance(col, u.Quantity) or getattr(col, "unit", None) not in (None, ""):
                unit = u.Unit(col.unit)
                try:
                    x = (x * unit).to_value(u.d)
                except u.UnitConversionError:
                    raise InputError(f"{where} column 'mjd'", f"expected MJD in days (a time unit or none; got "
                                                              f"{unit.to_string()})") from None
            t = Time(x, format="mjd", scale=scale)
    mjd = t.to_value("mjd", "float")
    bad = np.flatnonzero(~np.isfinite(mjd))
    if bad.size:
        raise InputError(f"{where} row {bad[0] + 1}, column 'mjd'", "must be finite")
    import warnings

    from .geometry import iers_offline

    with iers_offline(), warnings.catch_warnings():  # leap seconds from astropy's bundled table, no download
        warnings.filterwarnings("ignore", module="erfa")
        t = t.tdb
    t.format = "mjd"
    t.out_subfmt = "*"  # full precision stays in the two-part Time; .mjd gives floats (write_toas writes text)
    return t


def _column_seconds(tab, name, where, allow_nan=False):
    col = tab[name]
    if getattr(col, "mask", None) is not None and np.any(col.mask):
        i = int(np.flatnonzero(col.mask)[0])
        raise InputError(f"{where} row {i + 1}, column '{name}'", "missing value")
    unit = getattr(col, "unit", None)
    try:
        x = np.asarray(col, float)
    except (TypeError, ValueError):
        raise InputError(f"{where} column '{name}'", "expected numbers") from None
    if unit not in (None, ""):
        try:
            x = (x * u.Unit(unit)).to_value(u.s)
        except u.UnitConversionError:
            raise InputError(f"{where} column '{name}'", f"expected a time unit (got {unit})") from None
    if not allow_nan:
        bad = np.flatnonzero(~np.isfinite(x))
        if bad.size:
            raise InputError(f"{where} row {bad[0] + 1}, column '{name}'", f"must be finite (got {x[bad[0]]!r})")
    return x


def _time_order(times, where):
    """Row order by time (None when already sorted); duplicate times are rejected naming both input rows.

    TOAs merged from several telescopes or receivers come in any order, and the order carries no information
    in a fit, so an unsorted table is sorted (stably) rather than refused.
    """
    if len(times) < 2:
        return None
    ref = times[0]
    sec = ((times.jd1 - ref.jd1) + (times.jd2 - ref.jd2)) * 86400.0
    order = np.argsort(sec, kind="stable")
    d = np.diff(sec[order])
    dup = np.flatnonzero(d == 0)
    if dup.size:
        i, j = sorted((int(order[dup[0]]), int(order[dup[0] + 1])))
        raise InputError(f"{where} row {j + 1}, column 'mjd'", f"duplicate time (same as row {i + 1})")
    return None if np.all(order == np.arange(order.size)) else order


def write_toas(tab, path):
    """Write a TOA table as ECSV atomically (mjd as full-precision decimal text).

    Returns
    -------
    Path
    """
    path = Path(path)
    out = tab.copy(copy_data=True)
    t = out["mjd"]
    if isinstance(t, Time):
        t = t.tdb
        t.format = "mjd"
        t.out_subfmt = "str"
        out["mjd"] = t
    out.meta["time_scale"] = "tdb"
    with atomic_path(path) as tmp:
        out.write(tmp, format="ascii.ecsv", overwrite=True)
    return path
