"""Cooling-age benchmark: wall time of ``kinage ages`` with a temperature and the share spent solving curves.

Runs ``kinage ages`` in this process on an invented star (kT = 63 eV +- 6 eV, a kinematic age) with the
default model ranges (masses 1.2, 1.4, 1.6 Msun; iron and accreted envelopes), then again with three
light-element envelopes (``[ages] light_element_mass = [-14, -11, -8]``), then with the structured model
``npe-SLy`` and its pairing sets (default, none, the strong triplet).  Each run starts with an empty curve
cache (the npe runs also with empty TOV and paired-table caches: the cold cost); a repeat of the second run shows
the cached cost.  The time inside the cooling-curve solver (``kinage.ages.cooling._solve``, which includes
building the paired-core tables) is measured by wrapping it; also reports the TOV solutions of the EOS sets
(``kinage.ages.structure``).

    python scripts/bench_cooling.py
"""

import tempfile
import time
from pathlib import Path


def _scenario(path, light=None, model=None, pairing=None):
    text = ('[star]\nname = "Tessaly-4"\nspin_period = "0.4718 s"\nspin_period_derivative = 3.9e-14\n'
            'temperature = "63 eV"\ntemperature_error = "6 eV"\n\n[ages]\nkinematic_age = "120 kyr"\n'
            'kinematic_age_error = "30 kyr"\n')
    if light:
        text += f"light_element_mass = {list(light)}\n"
    if model:
        text += f'cooling_model = "{model}"\n'
    if pairing:
        text += f'pairing = "{pairing}"\n'
    path.write_text(text)
    return path


def _clear_structure_caches():
    import kinage.ages.star_cooling as sc
    import kinage.ages.structure as st

    for f in (sc._paired, sc._coefficients, sc.core_profile, st._for_mass, st._max_mass, st._eos):
        f.cache_clear()


def main():
    import kinage.ages.cooling as cooling
    from kinage.cli import main as cli

    solve = cooling._solve
    spent = {"t": 0.0, "n": 0}

    def timed(*a, **k):
        t0 = time.perf_counter()
        try:
            return solve(*a, **k)
        finally:
            spent["t"] += time.perf_counter() - t0
            spent["n"] += 1

    cooling._solve = timed
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        runs = [("defaults (2 envelopes x 3 masses)", None, True, None, None),
                ("+ light_element_mass [-14, -11, -8]", (-14, -11, -8), True, None, None),
                ("same again, curves cached", (-14, -11, -8), False, None, None),
                ("npe-SLy, default pairing, cold", None, "all", "npe-SLy", None),
                ("npe-SLy, pairing none", None, True, "npe-SLy", "none"),
                ("npe-SLy, pairing SFB-TToa-CCDK", None, True, "npe-SLy", "SFB-TToa-CCDK")]
        print("kinage ages, in-process wall time")
        for label, light, clear, model, pairing in runs:
            if clear:
                cooling._cached.cache_clear()
            if clear == "all":
                _clear_structure_caches()
            spent.update(t=0.0, n=0)
            scn = _scenario(tmp / "star.toml", light, model, pairing)
            t0 = time.perf_counter()
            status = cli(["ages", str(scn), "--out", str(tmp / "out"), "--json", str(tmp / "ages.json"), "--quiet"])
            wall = time.perf_counter() - t0
            print(f"  {label:38s} {wall:6.2f} s  (exit {status}); solving {spent['n']:2d} curves: "
                  f"{spent['t']:5.2f} s = {100 * spent['t'] / wall:4.1f} %")
    from kinage.ages.structure import max_mass, structure_for_mass

    for eos in ("SLy", "APR4"):
        t0 = time.perf_counter()
        mmax = max_mass(eos)[0]
        radii = [structure_for_mass(eos, m).radius_km for m in (1.2, 1.4, 1.6)]
        print(f"  TOV {eos}: Mmax {mmax:.3f} Msun, R(1.2, 1.4, 1.6) = {', '.join(f'{r:.2f}' for r in radii)} km "
              f"in {time.perf_counter() - t0:.2f} s")
    print("  target: a few seconds for the default model ranges")


if __name__ == "__main__":
    main()
