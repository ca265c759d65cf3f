"""Invented stars stay at least 3% from the spin period of every well-known neutron star.

Every spin period written for an invented star (``spin_period`` keys and arguments in tests, scripts, docs and the
demo scenarios, the ``spin_period`` column of the demo population, and the spin periods quoted in the demo
README) is compared with the list below.  A test that checks kinage against a real star's published values may
use that star's period; such lines name their source and are listed in ``PUBLISHED``.

Periods, in seconds, rounded to three or four figures.  Values from memory, checked against nothing here; their
sources are the catalogues named: magnetars from the McGill online magnetar catalogue (Olausen & Kaspi 2014,
ApJS 212, 6); the seven nearby thermally emitting isolated neutron stars from Haberl 2007 (Ap&SS 308, 181) and
Kaplan & van Kerkwijk 2009; central compact objects from De Luca 2017 (J. Phys. Conf. Ser. 932, 012006); radio
and millisecond pulsars from the ATNF pulsar catalogue (Manchester et al. 2005, AJ 129, 1993).
"""

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]

KNOWN_PERIODS_S = {
    # magnetars
    "CXOU J010043.1-721134": 8.02, "4U 0142+61": 8.69, "SGR 0418+5729": 9.08, "SGR 0501+4516": 5.76,
    "SGR 0526-66": 8.05, "1E 1048.1-5937": 6.46, "1E 1547.0-5408": 2.07, "PSR J1622-4950": 4.33,
    "SGR 1627-41": 2.59, "CXOU J164710.2-455216": 10.61, "1RXS J170849.0-400910": 11.00,
    "CXOU J171405.7-381031": 3.83, "SGR J1745-2900": 3.76, "SGR 1806-20": 7.55, "XTE J1810-197": 5.54,
    "Swift J1818.0-1607": 1.36, "Swift J1822.3-1606": 8.44, "SGR 1833-0832": 7.57, "Swift J1834.9-0846": 2.48,
    "1E 1841-045": 11.79, "3XMM J185246.6+003317": 11.56, "SGR 1900+14": 5.20, "SGR 1935+2154": 3.25,
    "1E 2259+586": 6.98, "AX J1845.0-0258": 6.97, "Swift J1555.2-5402": 3.86, "PSR J1846-0258": 0.3266,
    "PSR J1119-6127": 0.408,
    # the seven nearby thermally emitting isolated neutron stars
    "RX J1856.5-3754": 7.06, "RX J0720.4-3125": 8.39, "RX J1605.3+3249": 3.39, "RX J0806.4-4123": 11.37,
    "RX J1308.6+2127": 10.31, "RX J2143.0+0654": 9.43, "RX J0420.0-5022": 3.45,
    # central compact objects
    "PSR J0821-4300": 0.112, "1E 1207.4-5209": 0.424, "PSR J1852+0040": 0.105,
    # well-known radio pulsars
    "Crab": 0.0334, "Vela": 0.0893, "Geminga": 0.2371, "PSR B0656+14": 0.3849, "PSR B1055-52": 0.1971,
    "PSR B0950+08": 0.2531, "PSR B1929+10": 0.2265, "PSR B0919+06": 0.4306, "PSR B1508+55": 0.7397,
    "PSR B1133+16": 1.188, "PSR B0329+54": 0.7145, "PSR B1919+21": 1.3373, "PSR B0809+74": 1.2922,
    "PSR B0834+06": 1.2738, "PSR B1237+25": 1.3824, "PSR B0628-28": 1.2444, "PSR B2016+28": 0.5580,
    "PSR B2020+28": 0.3434, "PSR B1933+16": 0.3587, "PSR B0823+26": 0.5307, "PSR B2021+51": 0.5292,
    "PSR B2217+47": 0.5385, "PSR B0525+21": 3.7455, "PSR J2144-3933": 8.51, "PSR J0250+5854": 23.5,
    "PSR B0943+10": 1.0977, "PSR B1706-44": 0.1025, "PSR B1509-58": 0.1507, "PSR B0540-69": 0.0505,
    "PSR B0355+54": 0.1564, "PSR B1913+16": 0.05903, "PSR J0737-3039A": 0.02270, "PSR J0737-3039B": 2.773,
    "PSR B1534+12": 0.03790, "PSR B1951+32": 0.03953, "PSR B1800-21": 0.1336, "PSR B1818-04": 0.5981,
    # well-known millisecond pulsars
    "PSR B1937+21": 0.001558, "PSR J1748-2446ad": 0.001396, "PSR J0437-4715": 0.005757,
    "PSR J0030+0451": 0.004865, "PSR J0740+6620": 0.002886, "PSR J1614-2230": 0.003151,
    "PSR B1821-24": 0.003054, "PSR J1713+0747": 0.004570, "PSR B1855+09": 0.005362, "PSR B1257+12": 0.006219,
    "PSR J1909-3744": 0.002947, "PSR J0751+1807": 0.003479, "PSR J2317+1439": 0.003445,
    "PSR J1744-1134": 0.004075, "PSR J2051-0827": 0.004509, "PSR J1012+5307": 0.005256,
    "PSR J1959+2048": 0.001607, "PSR J1023+0038": 0.001688, "PSR J0034-0534": 0.001877,
}

# (file, period) pairs that are real stars in tests checking published values; each names its source there
PUBLISHED = {("tests/ages/test_ages_compare.py", 0.03339),  # Crab, Lyne, Pritchard & Graham-Smith 1993
             ("tests/ages/test_ages_spindown.py", 0.0334)}  # Crab, Lorimer & Kramer 2005

_NUMBER = r"([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)"
# spin_period = 1.2 | "spin_period": "1.2 s" | spin_period=1.2 * u.s | period_s=1.2 | PERIOD = 1.2 | "1873 ms"
_KEY = re.compile(r"""(?:(?<=\\n)|\b)(?:spin_period|period_s|PERIOD)["']?\s*[:=]\s*["']?""" + _NUMBER
                  + r"""\s*(?:\*\s*u\.)?(ms|s)?\b""")
# prose: "spin period(s) (4.793 s, 0.4671 s)", "a 0.4671 s radio pulsar" after "spin period"
_PROSE = re.compile(r"spin periods?\b([^\n]{0,60})")
_PROSE_VALUE = re.compile(r"(?<![\w.\-])" + _NUMBER + r"\s*(ms|s)\b")


def _sources():
    files = sorted((ROOT / "tests").rglob("*.py")) + sorted((ROOT / "scripts").glob("*.py"))
    files += sorted(p for p in (ROOT / "data_demo").rglob("*") if p.suffix in (".toml", ".md"))
    files += sorted(p for p in (ROOT / "docs").rglob("*") if p.suffix in (".rst", ".md", ".py", ".toml"))
    files += [ROOT / "README.md", ROOT / "DEVELOPERS.md"]
    return [p for p in files if p.is_file() and p.name != Path(__file__).name]


def written_periods():
    """[(file, line, period s)] of every invented spin period written in the repository's text files."""
    out = []
    for path in _sources():
        rel = path.relative_to(ROOT).as_posix()
        for i, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            found = [(m.group(1), m.group(2)) for m in _KEY.finditer(line)]
            for m in _PROSE.finditer(line):
                found += [(v.group(1), v.group(2)) for v in _PROSE_VALUE.finditer(m.group(1))]
            for value, unit in found:
                p = float(value) / (1000.0 if unit == "ms" else 1.0)
                if p > 0 and (rel, p) not in PUBLISHED:
                    out.append((rel, i, p))
    return out


def demo_population_periods():
    from astropy.table import Table

    tab = Table.read(ROOT / "data_demo" / "population.ecsv")
    return [(f"data_demo/population.ecsv {name}", 0, float(p))
            for name, p in zip(tab["name"], tab["spin_period"].to("s").value)]


def _near(period):
    return [(name, p) for name, p in KNOWN_PERIODS_S.items() if abs(period / p - 1) < 0.03]


def test_the_scan_finds_the_periods_it_should():
    # the scanner sees the demo scenarios, the tests' stars and the demo README's quotes (else it guards nothing)
    files = {f for f, _, _ in written_periods()}
    assert {"data_demo/scenario.toml", "data_demo/radio/scenario.toml", "data_demo/README.md",
            "tests/ages/test_ages_compare.py", "scripts/make_demo.py"} <= files
    assert len(demo_population_periods()) >= 10


@pytest.mark.parametrize("where, line, period", written_periods() + demo_population_periods(),
                         ids=lambda v: str(v) if not isinstance(v, float) else f"{v:g}s")
def test_invented_period_is_3_percent_from_every_known_neutron_star(where, line, period):
    assert not _near(period), f"{where}:{line}: {period:g} s is within 3% of {_near(period)}"
