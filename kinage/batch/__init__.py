"""Many stars at once: one dask task per star, resumable, with a population summary."""

from .runner import plan_batch, run_batch, run_one_star
from .stars import read_star_rows, star_seed

__all__ = ["run_batch", "plan_batch", "run_one_star", "read_star_rows", "star_seed"]
