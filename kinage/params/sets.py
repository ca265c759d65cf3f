"""The parameter-set record and the registry's storage (see :mod:`.registry` for lookup and the built-in sets).

Kept apart from :mod:`.registry` so the modules defining built-in sets (:mod:`.builtin`, :mod:`.cooling`)
import only this, and the registry loads them on first use without an import circle.
"""

from dataclasses import dataclass, field
from types import MappingProxyType

from ..errors import InputError

__all__ = ["ParameterSet", "register", "KINDS"]

KINDS = ("solar_parameters", "potential", "velocity_prior", "distance_prior", "cooling_model", "eos", "pairing")

_REGISTRY = {kind: {} for kind in KINDS}


@dataclass(frozen=True)
class ParameterSet:
    """A named, read-only set of parameter values with references.

    Attributes
    ----------
    kind : str
        One of :data:`KINDS`.
    name : str
        Name used in scenario files (case-insensitive lookup).
    values : Mapping
        The parameters (read-only), plain floats in units stated by the kind's
        module.
    references : tuple of str
        Publications the values come from.
    description : str
        One line for listings and reports.
    """

    kind: str
    name: str
    values: object
    references: tuple = ()
    description: str = ""
    version: str = "1"
    _frozen: bool = field(default=False, repr=False, compare=False)

    def __post_init__(self):
        if self.kind not in KINDS:
            raise InputError("parameter set kind", f"expected one of {', '.join(KINDS)} (got {self.kind!r})")
        object.__setattr__(self, "values", MappingProxyType(dict(self.values)))
        object.__setattr__(self, "references", tuple(self.references))

    def __getitem__(self, key):
        return self.values[key]

    def summary(self):
        """JSON-friendly record: kind, name, version, references."""
        return {"kind": self.kind, "name": self.name, "version": self.version,
                "description": self.description, "references": list(self.references)}


def register(pset, *, overwrite=False):
    """Add a parameter set to the registry.

    Parameters
    ----------
    pset : ParameterSet
    overwrite : bool
        Replace an existing set of the same kind and name.  Built-in sets are
        never replaced.
    """
    table = _REGISTRY[pset.kind]
    key = pset.name.lower()
    if key in table and (not overwrite or table[key]._frozen):
        raise InputError(f"{pset.kind} '{pset.name}'", "a parameter set of this name exists already")
    table[key] = pset
    return pset


def _builtin(pset):
    object.__setattr__(pset, "_frozen", True)
    _REGISTRY[pset.kind][pset.name.lower()] = pset
    return pset
