"""House rules over the repository's text: no tracker references, invented sites away from observatories.

- A reader of the repository has no tracker: code, tests, scripts and docs name the behaviour, never an issue
  number, "the issue" or unshipped "design notes" (project rule, no source).
- Invented telescope sites (``site_longitude``/``site_latitude`` keys, ``EarthLocation.from_geodetic`` and
  ``TOAReference("site", ...)`` calls, ``lon``/``lat`` site dicts) lie more than 100 km from every observatory in
  the list below.  Coordinates are rounded to ~0.1 deg and from memory (observatory web pages and the IAU/MPC
  list of observatory codes); 100 km is far above that rounding (~10 km).
"""

import math
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
HERE = Path(__file__).name

# ---------------------------------------------------------------------------------------------- trackers
_WORD = "iss" + "ue"  # spelled in two parts so that this file does not match its own patterns
TRACKER_PATTERNS = [
    re.compile(r"\b" + _WORD + r"s?\s*#?\s*\d+", re.I),                  # the word and a number
    re.compile(r"\bthe " + _WORD + r"(?:'s|s)?\b", re.I),                  # the word after "the"
    re.compile(r"\b(?:ages|timing|tracing|trace|design|house) " + _WORD + r"\b", re.I),
    re.compile(r"\b" + _WORD + r" (?:requirement|asks|list)\b", re.I),
    re.compile(r"\bdesign " + "notes", re.I),
    re.compile(r"\btrack" + r"er\b", re.I),
]


def _text_files():
    files = []
    for folder, exts in (("kinage", (".py",)), ("tests", (".py",)), ("scripts", (".py",)),
                         ("docs", (".rst", ".md", ".py")), ("data_demo", (".md", ".toml"))):
        files += [p for p in sorted((ROOT / folder).rglob("*")) if p.suffix in exts and p.is_file()]
    return files + [ROOT / "README.md", ROOT / "DEVELOPERS.md"]


def test_no_tracker_references():
    hits = []
    for path in _text_files():
        if path.name == HERE:
            continue
        for i, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            if any(rx.search(line) for rx in TRACKER_PATTERNS):
                hits.append(f"{path.relative_to(ROOT)}:{i}: {line.strip()}")
    assert not hits, "tracker references (name the behaviour instead):\n" + "\n".join(hits)


def test_no_file_named_after_an_issue():
    names = [p.relative_to(ROOT).as_posix() for p in ROOT.rglob("*" + _WORD + "*")
             if ".git" not in p.parts and "__pycache__" not in p.parts and not any(x.startswith(".") for x in p.parts)]
    assert not names


@pytest.mark.parametrize("text", ["see WORD 10", "CAP #15, item 4", "the WORD's list", "keys named by the ages WORD",
                                  "as the design " + "notes say"])
def test_tracker_patterns_catch_the_usual_forms(text):
    text = text.replace("WORD", _WORD).replace("CAP", _WORD.capitalize())
    assert any(rx.search(text) for rx in TRACKER_PATTERNS)


# ------------------------------------------------------------------------------------------ observatories
# (name, east longitude deg, latitude deg), values from memory to ~0.1 deg
OBSERVATORIES = [
    ("Arecibo", -66.75, 18.34), ("Green Bank", -79.84, 38.43), ("VLA", -107.62, 34.08), ("Owens Valley", -118.28, 37.23),
    ("Goldstone", -116.89, 35.43), ("Haystack", -71.49, 42.62), ("Kitt Peak", -111.60, 31.96),
    ("Mt Graham", -109.89, 32.70), ("Palomar", -116.86, 33.36), ("Lick", -121.64, 37.34), ("McDonald", -104.02, 30.67),
    ("Apache Point", -105.82, 32.78), ("Mauna Kea", -155.47, 19.82), ("Large Millimeter Telescope", -97.31, 18.99),
    ("ALMA", -67.75, -23.03), ("Paranal", -70.40, -24.63), ("La Silla", -70.73, -29.26),
    ("Cerro Tololo / Pachon", -70.81, -30.17), ("Las Campanas", -70.69, -29.01), ("IAR Argentina", -58.14, -34.87),
    ("CASLEO", -69.30, -31.80), ("Parkes", 148.26, -33.00), ("Narrabri ATCA", 149.55, -30.31),
    ("Mopra", 149.10, -31.27), ("Siding Spring", 149.06, -31.27), ("Molonglo", 149.42, -35.37),
    ("Tidbinbilla", 148.98, -35.40), ("Murchison (ASKAP, MWA)", 116.64, -26.70), ("Ceduna", 133.81, -31.87),
    ("Hobart Mt Pleasant", 147.44, -42.80), ("Katherine", 132.15, -14.38), ("Yarragadee", 115.35, -29.05),
    ("Warkworth", 174.66, -36.43), ("MeerKAT / SKA-Mid", 21.44, -30.71), ("SAAO Sutherland", 20.81, -32.38),
    ("Hartebeesthoek", 27.69, -25.89), ("HESS", 16.50, -23.27), ("FAST", 106.86, 25.65), ("Miyun", 116.98, 40.56),
    ("Xinglong", 117.57, 40.39), ("Urumqi Nanshan", 87.18, 43.47), ("Tianma Shanghai", 121.14, 31.09),
    ("Kunming", 102.80, 25.03), ("Nobeyama", 138.47, 35.94), ("Usuda", 138.36, 36.13), ("Mizusawa", 141.13, 39.13),
    ("Kashima", 140.66, 35.95), ("GMRT", 74.05, 19.09), ("Ooty", 76.67, 11.38), ("Hanle", 78.96, 32.78),
    ("Effelsberg", 6.88, 50.52), ("Westerbork / LOFAR core", 6.60, 52.91), ("Jodrell Bank", -2.31, 53.24),
    ("Nancay", 2.20, 47.37), ("Pic du Midi", 0.14, 42.94), ("Calar Alto", -2.55, 37.22), ("Yebes", -3.09, 40.52),
    ("Madrid Robledo", -4.25, 40.43), ("Javalambre", -1.02, 40.04), ("La Palma", -17.88, 28.76),
    ("Teide", -16.51, 28.30), ("Santa Maria Azores", -25.13, 36.99), ("Sardinia", 9.25, 39.49),
    ("Medicina", 11.65, 44.52), ("Noto", 14.99, 36.88), ("Onsala", 11.92, 57.40), ("Wettzell", 12.88, 49.14),
    ("Torun", 18.56, 53.10), ("Irbene", 21.85, 57.55), ("Metsahovi", 24.39, 60.22), ("Svetloe", 29.78, 60.53),
    ("Pushchino", 37.63, 54.82), ("Zelenchukskaya", 41.44, 43.65), ("Badary", 102.23, 51.77),
]

_NUM = r"(-?[0-9]+(?:\.[0-9]*)?)"
_SITE_PATTERNS = [
    # site_longitude = 12.3 / "site_longitude": "12.3 deg" / site_longitude=12.3 ... site_latitude (within ~2 lines)
    re.compile(r"""site_longitude["']?\s*[:=]\s*["']?""" + _NUM + r"""[\s\S]{0,200}?site_latitude["']?\s*[:=]\s*["']?"""
               + _NUM),
    re.compile(r"""\blon(?:gitude_deg)?["']?\s*[:=]\s*""" + _NUM + r""",\s*["']?lat(?:itude_deg)?["']?\s*[:=]\s*"""
               + _NUM),
    re.compile(r"from_geodetic\(\s*" + _NUM + r"\s*\*\s*u\.deg,\s*" + _NUM),
    re.compile(r"""TOAReference\(\s*["']site["'],\s*""" + _NUM + r",\s*" + _NUM),
]


def _distance_km(lon1, lat1, lon2, lat2):
    # great-circle distance on a 6371 km sphere (haversine)
    p1, p2 = math.radians(lat1), math.radians(lat2)
    dlat, dlon = p2 - p1, math.radians(lon2 - lon1)
    a = math.sin(dlat / 2) ** 2 + math.cos(p1) * math.cos(p2) * math.sin(dlon / 2) ** 2
    return 2 * 6371.0 * math.asin(math.sqrt(a))


def written_sites():
    """[(file, line, lon, lat)] of the telescope sites written in tests, scripts, docs and the demo data."""
    files = [p for p in _text_files() if not p.parts[-2:-1] == ("kinage",) and "kinage" not in
             p.relative_to(ROOT).parts[:1]]
    files += sorted((ROOT / "data_demo").rglob("*.ecsv"))
    out = []
    for path in files:
        if path.name == HERE:
            continue
        text = path.read_text(encoding="utf-8")
        for rx in _SITE_PATTERNS:
            for m in rx.finditer(text):
                lon, lat = float(m.group(1)), float(m.group(2))
                if -90 <= lat <= 90 and -180 <= lon <= 360 and (lon, lat) != (0.0, 0.0):
                    out.append((path.relative_to(ROOT).as_posix(), text.count("\n", 0, m.start()) + 1, lon, lat))
    return out


def test_the_site_scan_finds_the_invented_sites():
    files = {f for f, *_ in written_sites()}
    assert {"scripts/make_demo.py", "data_demo/radio/scenario.toml", "tests/timing/test_delays.py",
            "tests/timing/test_fit_user_cases.py", "tests/timing/test_fit_converge.py"} <= files


def test_distance_formula():
    # one degree of a great circle on a 6371 km sphere is 111.19 km
    assert _distance_km(10.0, 0.0, 11.0, 0.0) == pytest.approx(111.19, abs=0.01)


@pytest.mark.parametrize("where, line, lon, lat", written_sites(), ids=lambda v: str(v))
def test_invented_site_is_far_from_every_observatory(where, line, lon, lat):
    lon = (lon + 180.0) % 360.0 - 180.0
    near = [(name, round(_distance_km(lon, lat, olon, olat))) for name, olon, olat in OBSERVATORIES
            if _distance_km(lon, lat, olon, olat) < 100.0]
    assert not near, f"{where}:{line}: site ({lon}, {lat}) is within 100 km of {near}"
