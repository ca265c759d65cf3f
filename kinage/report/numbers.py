"""Pick and format the numbers a report shows for each stage.

Values are read from the stage's JSON dictionary, so every number in the
report is the one stored in ``results.json``.
"""

__all__ = ["stage_rows", "fmt", "fmt_interval"]


def fmt(x, digits=3):
    """A number with ``digits`` significant figures; None as 'n/a'."""
    if x is None:
        return "n/a"
    if isinstance(x, bool):
        return "yes" if x else "no"
    if isinstance(x, int):
        return str(x)
    if isinstance(x, float):
        if x == 0:
            return "0"
        if 99.5 <= abs(x) < 1e5:
            return f"{x:.0f}"
        if 1e-3 <= abs(x) < 99.5:
            return f"{x:.{digits}g}"
        return f"{x:.{digits - 1}e}"
    return str(x)


def fmt_interval(d):
    """``median [lo68, hi68]`` from an interval dictionary."""
    if not isinstance(d, dict) or d.get("median") is None:
        return "n/a"
    return f"{fmt(d['median'])} [68%: {fmt(d.get('lo68'))} to {fmt(d.get('hi68'))}]"


def _is_interval(v):
    return isinstance(v, dict) and "median" in v


def _label(key):
    return key.replace("_", " ")


def stage_rows(stage, data):
    """(label, text) rows of a stage's headline numbers.

    Scalars and intervals at the top level, the entries of ``sigma`` and
    ``values`` dictionaries, and for tracing one row per association.
    """
    rows = []
    for key, val in data.items():
        if key in ("associations", "provenance", "warnings", "verdicts", "failed_draws", "covariance"):
            continue
        if _is_interval(val):
            rows.append((_label(key), fmt_interval(val)))
        elif isinstance(val, (int, float, bool)) or val is None:
            rows.append((_label(key), fmt(val)))
        elif isinstance(val, str) and len(val) < 80:
            rows.append((_label(key), val))
        elif key in ("sigma", "values") and isinstance(val, dict):
            for k, v in val.items():
                if isinstance(v, (int, float)) or v is None:
                    rows.append((f"{key}: {_label(k)}", fmt(v)))
    for a in data.get("associations", [])[:8] if isinstance(data.get("associations"), list) else []:
        txt = (f"encounters {fmt(a.get('encounter_fraction'))}, chance {fmt(a.get('chance_fraction'))}, "
               f"age {fmt_interval(a.get('age_yr'))} yr, d_min {fmt_interval(a.get('dmin_pc'))} pc")
        rows.append((f"association {a.get('name')}", txt))
    for v in data.get("verdicts", []) if isinstance(data.get("verdicts"), list) else []:
        if isinstance(v, dict):
            rows.append((str(v.get("pair", "verdict")), str(v.get("text", ""))))
    for w in data.get("warnings", []) if isinstance(data.get("warnings"), list) else []:
        rows.append(("warning", str(w)))
    return rows
