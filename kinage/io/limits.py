"""Resource caps estimated from a scenario before any stage runs.

Single keys have their own ranges in :mod:`kinage.io.schema`; this module
checks what only their product reveals: memory for draws x time steps (the
orbit integration holds one chunk of star draws and every association's
draws on the time grid), and the number of orbits the tracing integrates.
Each message names the limit and the keys that set the estimate.
"""

import os

from ..errors import InputError

__all__ = ["memory_limit_bytes", "cgroup_memory_bytes", "host_memory_bytes", "fit_memory_bytes", "max_toa_rows",
           "trace_memory_bytes", "trace_seconds", "check_resources", "check_samples",
           "MAX_TRACE_MINUTES"]

#: longest tracing run (estimated) a scenario may ask for
MAX_TRACE_MINUTES = 60
# Cost per orbit: ~120 us for integration and closest-approach search on the default grid (DEVELOPERS.md:
# 100,000 draws x 30 associations over 10 Myr in 12 s) plus ~1 us per Myr integrated (measured 2026-12-02:
# 4,280 orbits over 13 Gyr in 40 s of CPU time on the 2-core development machine).
_S_PER_ORBIT = 1.2e-4
_S_PER_ORBIT_MYR = 1.0e-6
_BYTES_PER_POINT = 6 * 8 * 4  # 6 phase-space floats, float64, ~4 working copies (integration, frames, search)


#: cgroup files holding a container's memory limit (cgroup v2, then v1)
CGROUP_MEMORY_FILES = ("/sys/fs/cgroup/memory.max", "/sys/fs/cgroup/memory/memory.limit_in_bytes")


def cgroup_memory_bytes(files=None):
    """The container's memory limit from its cgroup, bytes (None when there is none: 'max' or absurdly large).

    ``files``: the cgroup files to read (default :data:`CGROUP_MEMORY_FILES`).
    """
    for f in (CGROUP_MEMORY_FILES if files is None else files):
        try:
            with open(f, encoding="ascii") as fh:
                text = fh.read().strip()
        except (OSError, UnicodeDecodeError):
            continue
        if text.isdigit() and 0 < int(text) < 2**60:  # cgroup v1 writes ~2**63 for "no limit"
            return float(text)
    return None


def host_memory_bytes():
    """The machine's RAM, bytes."""
    try:
        return float(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):  # pragma: no cover - not POSIX
        return 8e9


def memory_limit_bytes():
    """Memory a run may plan to use: half of the smaller of the machine's RAM and the container's cgroup limit,
    at most 16 GB (``KINAGE_MAX_MEMORY_GB`` overrides)."""
    env = os.environ.get("KINAGE_MAX_MEMORY_GB")
    if env:
        try:
            return float(env) * 1e9
        except ValueError:
            pass
    ram = host_memory_bytes()
    cgroup = cgroup_memory_bytes()
    if cgroup is not None:
        ram = min(ram, cgroup)
    return min(16e9, 0.5 * ram)


def _limit_words():
    if os.environ.get("KINAGE_MAX_MEMORY_GB"):
        return "set by KINAGE_MAX_MEMORY_GB"
    cgroup = cgroup_memory_bytes()
    if cgroup is not None and cgroup < host_memory_bytes():
        return "half this container's memory limit, at most 16 GB"
    return "half this machine's RAM, at most 16 GB"


#: peak memory of a timing fit per TOA, bytes: a fit of 6,000,000 TOAs peaked at 8.9 GB in the project's fault
#: trial (2026-12), i.e. ~1.5 kB per TOA (times in double-double, observer geometry, design matrix, residuals)
FIT_BYTES_PER_TOA = 1500


def fit_memory_bytes(n_toas):
    """Estimated peak memory of fitting ``n_toas`` TOAs, bytes."""
    return int(n_toas) * FIT_BYTES_PER_TOA


def max_toa_rows():
    """Most TOAs a fit may read within :func:`memory_limit_bytes`; returns ``(rows, reason in words)``."""
    limit = memory_limit_bytes()
    rows = int(limit // FIT_BYTES_PER_TOA)
    return rows, (f"a fit needs about {FIT_BYTES_PER_TOA / 1e3:g} kB per TOA and the memory limit is "
                  f"{limit / 1e9:.3g} GB, {_limit_words()}")


def trace_memory_bytes(samples, chunk_size, time_steps, n_associations, association_samples):
    """Estimated peak memory of the tracing stage, bytes.

    One chunk of star draws and all association draws on the output grid,
    each point 6 float64 phase-space values with a few working copies.
    """
    star = min(samples, chunk_size) * time_steps * _BYTES_PER_POINT
    assoc = n_associations * association_samples * time_steps * _BYTES_PER_POINT
    return star + assoc


def trace_seconds(orbits, time_steps, max_age_myr):
    """Rough run time of a trace, s: orbits x (fixed cost on a grid of ``time_steps`` + cost per Myr integrated)."""
    return orbits * (_S_PER_ORBIT * max(1.0, time_steps / 401) + _S_PER_ORBIT_MYR * max_age_myr)


def check_resources(scenario, samples=None, n_associations=None, samples_name="--samples"):
    """Raise InputError when the scenario would need more than the limits allow.

    Parameters
    ----------
    scenario : Scenario
    samples : int, optional
        Command-line override of ``[trace] samples``.
    n_associations : int, optional
        Rows of the association table (default 30 when not yet read).
    samples_name : str
        How a message names ``samples`` (the option, or a front door's argument).
    """
    t = scenario.trace
    if t is None:
        return
    n = int(samples if samples is not None else (t.get("samples") or 2000))
    n_assoc = int(n_associations or 30)
    steps, chunk = int(t.get("time_steps") or 401), int(t.get("chunk_size") or 20000)
    a_samples, controls = int(t.get("association_samples") or 200), int(t.get("control_runs") or 0)
    mem = trace_memory_bytes(n, chunk, steps, n_assoc, a_samples)
    limit = memory_limit_bytes()
    if mem > limit:
        raise InputError("[trace] time_steps",
                         f"the tracing would need about {mem / 1e9:.3g} GB (min(samples, chunk_size) = "
                         f"{min(n, chunk):,} star draws and {n_assoc} x {a_samples:,} association "
                         f"draws on {steps:,} time steps), above the memory limit of {limit / 1e9:.3g} GB "
                         f"({_limit_words()}); lower time_steps, chunk_size or "
                         "association_samples")
    orbits = n * (1 + controls) + n_assoc * a_samples
    max_age = float(t.max_age.to_value("Myr"))
    minutes = trace_seconds(orbits, steps, max_age) / 60
    if minutes > MAX_TRACE_MINUTES:
        key = "[trace] max_age" if max_age > 100 else (samples_name if samples is not None else "[trace] samples")
        raise InputError(key, f"{n:,} draws x (1 + {controls} control runs) + {n_assoc} x "
                              f"{a_samples:,} association draws = {orbits:,} orbits over {max_age:g} Myr "
                              f"on {steps:,} time steps would take about {minutes:.3g} minutes, above the "
                              f"limit of {MAX_TRACE_MINUTES} minutes per trace; lower max_age, samples or control_runs")


def check_samples(samples, where="samples"):
    """A draw count given to a front door (``samples=``): a whole number from 1 to the ``[trace] samples`` cap.

    Returns it as an int (None stays None); raises InputError naming ``where`` for anything else
    (2.5, "abc", 0, True, 1e9).
    """
    import numbers

    if samples is None:
        return None
    from .schema import SCHEMA

    key = SCHEMA["trace"]["samples"]
    cap = int(key.upper or 10**6)
    whole = isinstance(samples, numbers.Integral) or (isinstance(samples, numbers.Real) and float(samples).is_integer())
    if isinstance(samples, bool) or not whole or not 1 <= samples <= cap:
        from .quantities import shown

        raise InputError(where, f"must be a whole number from 1 to {cap:,} ({key.reason}; got {shown(samples)})")
    return int(samples)
