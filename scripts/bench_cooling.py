"""Cooling-age benchmark: wall time of ``kinage ages`` with a temperature and the share spent solving curves.

Runs ``kinage ages`` in this process on an invented star (kT = 63 eV +- 6 eV, a kinematic age) with the
default model ranges (masses 1.2, 1.4, 1.6 Msun; iron and accreted envelopes), then again with three
light-element envelopes (``[ages] light_element_mass = [-14, -11, -8]``).  Each run starts with an empty curve
cache; a repeat of the second run shows the cached cost.  The time inside the cooling-curve solver
(``kinage.ages.cooling._solve``) is measured by wrapping it; also reports the TOV solutions of the EOS sets
(``kinage.ages.structure``), which the cooling models do not use yet.

    python scripts/bench_cooling.py
"""

import tempfile
import time
from pathlib import Path


def _scenario(path, light=None):
    text = ('[star]\nname = "Tessaly-4"\nspin_period = "0.4718 s"\nspin_period_derivative = 3.9e-14\n'
            'temperature = "63 eV"\ntemperature_error = "6 eV"\n\n[ages]\nkinematic_age = "120 kyr"\n'
            'kinematic_age_error = "30 kyr"\n')
    if light:
        text += f"light_element_mass = {list(light)}\n"
    path.write_text(text)
    return path


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
        runs = [("defaults (2 envelopes x 3 masses)", None, True),
                ("+ light_element_mass [-14, -11, -8]", (-14, -11, -8), True),
                ("same again, curves cached", (-14, -11, -8), False)]
        print("kinage ages, in-process wall time")
        for label, light, clear in runs:
            if clear:
                cooling._cached.cache_clear()
            spent.update(t=0.0, n=0)
            scn = _scenario(tmp / "star.toml", light)
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
