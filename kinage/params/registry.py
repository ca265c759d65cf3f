"""Read-only, named, cited parameter sets.

Physical defaults that people argue about (where the Sun is and how it moves,
the Galactic potential, the velocity distribution of neutron stars, the
distance prior, the cooling model) live here, one registry per kind.  Each set
has a name, its values, and its references; results record the names and
references of every set they used.

Users may register their own sets::

    from kinage.params import ParameterSet, register
    register(ParameterSet("velocity_prior", "my-maxwellian",
                          {"components": ((1.0, 200.0),)},
                          references=("my notes",)))
"""

from dataclasses import dataclass, field
from types import MappingProxyType

from ..errors import InputError

__all__ = ["ParameterSet", "register", "get", "available", "KINDS", "galaxy_pair", "galaxy_mismatch",
           "R0_TOLERANCE_KPC", "VC_TOLERANCE_KMS", "SOLAR_PECULIAR_V_KMS", "DEFAULT_SOLAR_PARAMETERS"]

#: a Sun whose R0 differs from the potential's by more than this is inconsistent with it, kpc
#: (common practice, no source: ~ the spread of modern R0 measurements)
R0_TOLERANCE_KPC = 0.05
#: ... or whose circular speed (v_sun_y - V_pec) differs from the potential's by more than this, km/s
VC_TOLERANCE_KMS = 2.0
#: the Sun's peculiar motion towards Galactic rotation (Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829), km/s
SOLAR_PECULIAR_V_KMS = 12.24
#: Sun used with a potential set that names none
DEFAULT_SOLAR_PARAMETERS = "astropy-v4.0"

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


def get(kind, name, where=None):
    """Look up a parameter set by kind and name (case-insensitive).

    Raises
    ------
    InputError
        Naming the allowed choices when the name is unknown.
    """
    _load_builtins()
    if kind not in _REGISTRY:
        raise InputError("parameter set kind", f"expected one of {', '.join(KINDS)} (got {kind!r})")
    try:
        return _REGISTRY[kind][str(name).lower()]
    except KeyError:
        choices = ", ".join(sorted(p.name for p in _REGISTRY[kind].values()))
        raise InputError(where or kind, f"unknown {kind.replace('_', ' ')} {name!r}; choose one of: {choices}") from None


def available(kind):
    """Names of the registered sets of one kind."""
    _load_builtins()
    return sorted({p.name for p in _REGISTRY[kind].values()})  # a set listed under an old name appears once


def galaxy_mismatch(potential, solar):
    """Why a potential set and a solar parameter set do not describe the same Galaxy (None when they do).

    A potential with forces fixes the Sun's distance from the centre (its
    ``ro_kpc``) and the circular speed there (its ``vo_kms``, the speed at
    ``ro`` in galpy's natural units; Bovy 2015, ApJS 216, 29).  The solar set
    is consistent with it when its ``r0_kpc`` agrees within
    :data:`R0_TOLERANCE_KPC` and its circular speed ``v_sun_y - 12.24 km/s``
    (Schoenrich et al. 2010 peculiar V) within :data:`VC_TOLERANCE_KMS`.
    The force-free potential ('none') goes with any Sun.

    Parameters
    ----------
    potential, solar : ParameterSet

    Returns
    -------
    str or None
        One sentence naming both sets and the numbers that differ.
    """
    v = potential.values
    if v.get("galpy") is None and v.get("object") is None:
        return None
    if "ro_kpc" not in v or "vo_kms" not in v:
        return None
    ro, vo = float(v["ro_kpc"]), float(v["vo_kms"])
    r0 = float(solar["r0_kpc"])
    vc = float(solar["v_sun_kms"][1]) - SOLAR_PECULIAR_V_KMS
    if abs(r0 - ro) <= R0_TOLERANCE_KPC and abs(vc - vo) <= VC_TOLERANCE_KMS:
        return None
    own = v.get("solar_parameters")
    hint = f"; the set that goes with it is '{own}'" if own else ""
    return (f"solar parameters '{solar.name}' (R0 = {r0:.3f} kpc, circular speed {vc:.1f} km/s) do not match "
            f"potential '{potential.name}' (R0 = {ro:.3f} kpc, circular speed {vo:.1f} km/s){hint}, so the "
            "Sun does not move on a circular orbit of that potential")


def galaxy_pair(potential_name, solar_name=None, *, where_potential="[trace] potential",
                where_solar="[trace] solar_parameters"):
    """The potential set and the solar parameter set of one consistent Galaxy.

    Parameters
    ----------
    potential_name : str
    solar_name : str or None
        None: the solar set the potential names (``values['solar_parameters']``;
        galpy's defaults R0 = 8 kpc, vc = 220 km/s and the Schoenrich et al.
        2010 solar motion for MWPotential2014, McMillan 2017's R0 = 8.21 kpc,
        vc = 233.1 km/s for McMillan17), else :data:`DEFAULT_SOLAR_PARAMETERS`.

    Returns
    -------
    potential, solar : ParameterSet
    mismatch : str or None
        :func:`galaxy_mismatch` of an explicitly chosen pair (None for the
        potential's own Sun).  A potential set naming no Sun gets the default
        Sun and the check.
    """
    pot = potential_name if isinstance(potential_name, ParameterSet) else get("potential", potential_name,
                                                                                 where=where_potential)
    if solar_name is None:
        own = pot.values.get("solar_parameters")
        solar = get("solar_parameters", own or DEFAULT_SOLAR_PARAMETERS, where=where_solar)
        return pot, solar, None if own else galaxy_mismatch(pot, solar)
    solar = get("solar_parameters", solar_name, where=where_solar)
    return pot, solar, galaxy_mismatch(pot, solar)


_LOADED = False


def _load_builtins():
    global _LOADED
    if _LOADED:
        return
    _LOADED = True
    from . import builtin  # noqa: F401  (registers on import)
