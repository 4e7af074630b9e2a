"""Cantera species databases and the shared gas phases built from them.

Every fuel's chemistry runs in one ideal-gas phase: the 53 species of GRI-Mech 3.0
(``gri30.yaml``, which carry the nitrogen chemistry and every major product), plus the fuel's
own species taken from ``nasa_gas.yaml`` or ``nDodecane_Reitz.yaml``, plus one species per
pseudo-component. Phases are created once per species set and reused; callers never keep
state on them between calls.

References
----------
.. [1] G. P. Smith et al., GRI-Mech 3.0, http://combustion.berkeley.edu/gri-mech/ (1999).
.. [2] B. J. McBride, M. J. Zehe, S. Gordon, NASA Glenn coefficients for calculating
   thermodynamic properties of individual species, NASA/TP-2002-211556 (2002).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import cantera as ct
import numpy as np

from workbench.core.cache import memoize
from workbench.core.constants import GAS_CONSTANT, P_REF, T_REF

#: Species databases searched for a name, in order.
DATABASES = ("gri30.yaml", "nasa_gas.yaml", "nDodecane_Reitz.yaml")
#: Enthalpy of vaporisation of water at 298.15 K [J/kmol]: hf(H2O, g) - hf(H2O, l)
#: = -241.826 - (-285.830) kJ/mol, CODATA key values for thermodynamics (Cox, Wagman,
#: Medvedev, 1989), as tabulated in the NIST Chemistry WebBook.
H_VAP_WATER_298 = 44.004e6


@dataclass(frozen=True)
class PseudoSpecies:
    """A fuel species defined by its elements and heating value, not by a database.

    Attributes
    ----------
    name : str
        Species name in the Cantera phase (upper-case fuel id).
    elements : tuple of (str, float)
        Atoms of each element per molecule (may be non-integer).
    enthalpy_formation : float
        Molar enthalpy of the fuel as delivered at 298.15 K [J/kmol]; chosen so that
        complete combustion to CO2, H2O (vapour), SO2 and N2 releases the measured LHV.
    cp_mole : float
        Constant molar heat capacity used above 298.15 K [J/kmol/K].
    """

    name: str
    elements: tuple[tuple[str, float], ...]
    enthalpy_formation: float
    cp_mole: float

    def to_cantera(self) -> ct.Species:
        """The Cantera species with constant-cp thermo [NASA-free, 200–6000 K]."""
        sp = ct.Species(self.name, dict(self.elements))
        # Entropy only matters for equilibrium shares of the unburnt fuel, which are nil at
        # flame temperatures; 400 kJ/kmol/K is of the order of C8–C16 vapours.
        sp.thermo = ct.ConstantCp(
            200.0, 6000.0, P_REF, [T_REF, self.enthalpy_formation, 4.0e5, self.cp_mole]
        )
        return sp


@memoize(maxsize=None, kind="resource")
def _database(name: str) -> dict[str, ct.Species]:
    if name == "gri30.yaml":
        species = ct.Solution(name, transport_model=None).species()
    else:
        species = ct.Species.list_from_file(name)
    return {sp.name: sp for sp in species}


def find_species(name: str) -> ct.Species | None:
    """Look a species up in the shipped databases.

    Parameters
    ----------
    name : str
        Species name exactly as in the database (``"C3H8"``, ``"C4H10,n-butane"``).

    Returns
    -------
    cantera.Species or None
        The first match in :data:`DATABASES` order, or None.
    """
    for db in DATABASES:
        sp = _database(db).get(name)
        if sp is not None:
            return sp
    return None


def base_species() -> list[ct.Species]:
    """The species of GRI-Mech 3.0, present in every phase."""
    return list(_database("gri30.yaml").values())


@memoize(maxsize=None, kind="resource")
def phase(extra: tuple[str, ...] = (), pseudo: tuple[PseudoSpecies, ...] = ()) -> ct.Solution:
    """The shared ideal-gas phase for a set of fuel species.

    Parameters
    ----------
    extra : tuple of str
        Database species to add to GRI-Mech 3.0's (sorted, so that equal sets share a phase).
    pseudo : tuple of PseudoSpecies
        Pseudo-component species to add.

    Returns
    -------
    cantera.Solution
        A thermo-only phase (no kinetics). Set its state before each use.
    """
    species = base_species()
    species += [_database_species(n) for n in extra]
    species += [p.to_cantera() for p in pseudo]
    return ct.Solution(thermo="ideal-gas", species=species)


def _database_species(name: str) -> ct.Species:
    sp = find_species(name)
    if sp is None:  # callers validate names first; this guards the cache key
        raise KeyError(name)
    return sp


def atomic_weight(symbol: str) -> float:
    """Atomic weight of an element [kg/kmol]."""
    return ct.Element(symbol).weight


def molar_mass(elements: dict[str, float]) -> float:
    """Molar mass of a molecule given its atoms [kg/kmol]."""
    return float(sum(n * atomic_weight(e) for e, n in elements.items()))


def standard_enthalpies(gas: ct.Solution, names: Iterable[str]) -> np.ndarray:
    """Standard molar enthalpies at 298.15 K of the named species of ``gas`` [J/kmol]."""
    gas.TP = T_REF, P_REF
    h = gas.standard_enthalpies_RT * GAS_CONSTANT * T_REF
    return np.array([h[gas.species_index(n)] for n in names])
