"""Named, read-only parameter sets with references (see :mod:`.registry`)."""

from .registry import KINDS, ParameterSet, available, get, register

__all__ = ["ParameterSet", "register", "get", "available", "KINDS"]
