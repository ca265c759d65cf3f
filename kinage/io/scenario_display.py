"""How a Scenario shows itself: a one-line ``repr`` and a small HTML table of the keys given (Jupyter)."""

__all__ = ["scenario_repr", "scenario_html"]


def _given_text(raw):
    """A value as the user wrote it (a unit string or a scalar Quantity), else None."""
    import astropy.units as u

    from .quantities import format_quantity

    if isinstance(raw, u.Quantity) and raw.isscalar and type(raw) is u.Quantity and raw.unit != u.one:
        return format_quantity(raw)
    if isinstance(raw, str) and any(c.isdigit() for c in raw) and any(c.isalpha() or c == ":" for c in raw):
        return raw.strip()  # "63 eV", "17:42:05.6"
    return None


def _scenario_rows(s):
    """(table, 'key=value, ...') rows of the keys given in each table.

    A quantity given with a unit is shown as it was given ("63 eV", "30 pc"), the others as kinage holds them.
    """
    from .quantities import format_quantity

    rows = []
    for name in ("star", "campaign", "trace", "ages"):
        sec = getattr(s, name)
        if sec is None:
            continue
        raw = (s.raw or {}).get(name) if isinstance(s.raw, dict) else None
        raw = raw if isinstance(raw, dict) else {}
        parts = []
        for key, value in sec.to_dict().items():
            v = getattr(sec, key, value)
            shown = format_quantity(v) if hasattr(v, "unit") and getattr(v, "isscalar", False) else value
            if key in ("ra", "dec") and hasattr(v, "unit") and getattr(v, "isscalar", False):
                given = raw.get(key) if isinstance(raw.get(key), str) else None
                shown = _given_text(given) or f"{v.to_value('deg'):.6f} deg"  # 6 significant digits: 3.6 arcsec
            elif hasattr(v, "unit"):
                shown = _given_text(raw.get(key)) or shown
            if isinstance(shown, dict):  # an in-memory table
                shown = f"<table of {len(shown.get('associations', []))} rows>"
            parts.append(f"{key}={shown}")
        rows.append((f"[{name}]", ", ".join(parts)))
    return rows


def scenario_repr(s):
    """A short one-line repr of a Scenario: star name, tables present and where it came from."""
    tables = [t for t in ("star", "campaign", "trace", "ages") if getattr(s, t) is not None]
    name = s.star.get("name") if s.star is not None else None
    src = f" from {s.path.name}" if s.path is not None else ""
    return f"<Scenario {name!r}{src}: tables {', '.join(f'[{t}]' for t in tables)}>"


def scenario_html(s):
    """The scenario's given keys as a small HTML table (Jupyter)."""
    from html import escape

    rows = "".join(f"<tr><th style='text-align:left'>{escape(t)}</th><td style='text-align:left'>{escape(v)}</td>"
                   "</tr>" for t, v in _scenario_rows(s))
    return f"<div><strong>{escape(scenario_repr(s))}</strong><table>{rows}</table></div>"
