"""The fuel library: fuels from ``fuels/*.toml`` and blends of them.

The shipped library is package data (``workbench/data/fuels``, which the checkout's top-level
``fuels/`` holds); the user's own folders (``--fuels DIR``, ``WORKBENCH_FUELS``) are searched
first. A fuel is one of three kinds of file (the format is documented in ``fuels/README.md``,
shipped as ``workbench docs fuels``):

- ``[species]``: a mixture of species from Cantera's databases, by mole or mass fraction;
- ``[blend]``: a mixture of other library fuels, by mole, mass or liquid-volume fraction;
- ``[pseudo]``: a pseudo-component (diesel, gasoline) given by element mass fractions, a
  measured LHV and a representative molar mass; it becomes one Cantera species whose
  enthalpy reproduces that LHV.

Whatever its kind, a loaded :class:`Fuel` is a mole-fraction mixture of species, so a blend is
usable everywhere a library fuel is.
"""

from __future__ import annotations

import hashlib
import os
import re
from collections.abc import Iterable, Iterator, Mapping
from contextlib import contextmanager
from contextvars import ContextVar
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

from workbench.core import thermo
from workbench.core.cache import memoize
from workbench.core.constants import T_STANDARD, ZERO_CELSIUS
from workbench.core.errors import InputError
from workbench.core.paths import DATA
from workbench.core.textfiles import check_file_name, parse_toml
from workbench.core.values import read_number

#: Folder of the shipped fuel library, inside the package (the checkout's ``fuels/`` is it).
LIBRARY = DATA / "fuels"
#: Environment variable naming the user's fuel folders, searched before the shipped library.
FUELS_ENV = "WORKBENCH_FUELS"
#: Folders given by :func:`use_fuel_folders` (the CLI's ``--fuels``), searched first.
_USER_FOLDERS: tuple[Path, ...] = ()
#: Fractions must sum to 1 within this tolerance before they are normalised.
SUM_TOLERANCE = 1e-3
#: Elements a pseudo-component may carry, with their TOML keys.
PSEUDO_ELEMENTS = {"carbon": "C", "hydrogen": "H", "oxygen": "O", "nitrogen": "N", "sulfur": "S"}
#: Heat capacity of a pseudo-component when the file gives none [J/kg/K]: of the order of a
#: middle-distillate vapour at 400–600 K (typical value, example).
DEFAULT_PSEUDO_CP_MASS = 2.0e3
StorageKind = Literal["liquid", "liquefied", "compressed", "cryogenic"]
Basis = Literal["mole", "mass", "liquid_volume"]
STORAGE_KINDS: tuple[str, ...] = ("liquid", "liquefied", "compressed", "cryogenic")
BASES: tuple[str, ...] = ("mole", "mass", "liquid_volume")
# Ends of the physical ranges a fuel file's numbers must lie in (well beyond any real fuel).
#: Liquid density [kg/m3] (water 1000; no hydrocarbon fuel is above 1000).
MAX_LIQUID_DENSITY = 2000.0
#: Storage pressure [bar] (compressed hydrogen is stored at 700 bar).
MAX_STORAGE_BAR = 1000.0
#: Storage temperature [°C].
MAX_STORAGE_C = 200.0
#: Lower heating value [MJ/kg] (hydrogen, the highest of any fuel, is 120).
MAX_LHV_MJ_PER_KG = 150.0
#: Molar mass of a pseudo-component [kg/kmol] (heavy fuel oil is a few hundred).
MAX_MOLAR_MASS = 1000.0
#: Specific heat of a pseudo-component [kJ/(kg K)] (hydrogen gas, the highest, is 14.3).
MAX_CP_KJ_PER_KG_K = 50.0
#: Size of a pathway's well-to-tank CO2e [g/MJ], either sign (a manure credit is negative;
#: the fossil comparator of EU RED II is 94 g/MJ well-to-wheel).
MAX_PATHWAY_G_PER_MJ = 1000.0
#: Keys of a fuel file's ``[origin]`` table.
ORIGIN_KEYS = ("biogenic_carbon_share", "source")
#: Keys of one entry of a fuel file's ``[pathways]`` table.
PATHWAY_KEYS = ("wtt_co2e_g_per_mj", "source")


@dataclass(frozen=True)
class StorageSpec:
    """How a fuel is carried on board.

    Attributes
    ----------
    kind : {"liquid", "liquefied", "compressed", "cryogenic"}
        Liquid at ambient pressure, liquefied under its own vapour pressure, compressed gas,
        or cryogenic liquid.
    pressure : float or None
        Nominal storage pressure of a compressed gas [Pa]; None otherwise.
    temperature : float
        Temperature the stored state is quoted at [K].
    source : str
        Where the numbers come from.
    """

    kind: StorageKind
    pressure: float | None = None
    temperature: float = T_STANDARD
    source: str = ""


@dataclass(frozen=True)
class Pathway:
    """One way a fuel is made and brought to the tank, with its well-to-tank CO2e.

    Attributes
    ----------
    name : str
        Pathway name, unique within its fuel (``"sugar-beet"``).
    wtt_co2e_per_energy : float
        CO2e emitted from the well (or field) to the tank, per unit of the fuel's LHV
        [kg/J]; for a biofuel the life-cycle value without the (biogenic) combustion CO2.
    source : str
        Where the number comes from.
    """

    name: str
    wtt_co2e_per_energy: float
    source: str


@dataclass(frozen=True)
class Fuel:
    """A fuel as a mixture of species.

    Attributes
    ----------
    id : str
        Library id (the file stem) or a generated blend id.
    name : str
        Human-readable name.
    composition : tuple of (str, float)
        Species names and mole fractions, summing to 1, sorted by name.
    is_gas : bool
        Gaseous at 15 °C and 1 atm.
    pseudo : tuple of PseudoSpecies
        Definitions of the pseudo-component species in ``composition``.
    liquid_density : float or None
        Density of the liquid at 15 °C [kg/m3] (saturated liquid for liquefied gases).
    storage : StorageSpec or None
        On-board storage.
    biogenic_carbon_share : float
        Share of the fuel's carbon that is biogenic (from biomass grown recently) [-]; 0 for a
        fossil fuel. A blend's is its parts' carbon-weighted share.
    pathways : tuple of Pathway
        Production pathways with their well-to-tank CO2e, by name.
    sources : tuple of (str, str)
        Source of each section's numbers, by section name.
    path : str or None
        File the fuel was read from.
    """

    id: str
    name: str
    composition: tuple[tuple[str, float], ...]
    is_gas: bool
    pseudo: tuple[thermo.PseudoSpecies, ...] = ()
    liquid_density: float | None = None
    storage: StorageSpec | None = None
    biogenic_carbon_share: float = 0.0
    pathways: tuple[Pathway, ...] = field(default=(), compare=False)
    sources: tuple[tuple[str, str], ...] = field(default=(), compare=False)
    path: str | None = field(default=None, compare=False)

    @property
    def mole_fractions(self) -> dict[str, float]:
        """Species mole fractions [-]."""
        return dict(self.composition)

    @property
    def key(self) -> tuple[Any, ...]:
        """Hashable identity of the fuel's chemistry, for caches."""
        return (self.composition, self.pseudo)

    @property
    def database_species(self) -> tuple[str, ...]:
        """Names of the fuel's species beyond GRI-Mech 3.0, sorted (SO2 added for sulfur)."""
        pseudo_names = {p.name for p in self.pseudo}
        base = {sp.name for sp in thermo.base_species()}
        names = {n for n, _ in self.composition if n not in pseudo_names and n not in base}
        if any(dict(p.elements).get("S", 0.0) > 0 for p in self.pseudo):
            names.add("SO2")
        return tuple(sorted(names))

    def gas_phase(self):  # -> cantera.Solution (kept out of the signature to spare imports)
        """The shared Cantera phase holding this fuel's species (do not keep state on it)."""
        return thermo.phase(self.database_species, self.pseudo)

    def elements_per_mole(self) -> dict[str, float]:
        """Atoms of each element per mole of fuel mixture [kmol/kmol]."""
        gas = self.gas_phase()
        out: dict[str, float] = {}
        for name, x in self.composition:
            for el, n in gas.species(name).composition.items():
                out[el] = out.get(el, 0.0) + x * n
        return out

    def molar_mass(self) -> float:
        """Mean molar mass of the fuel [kg/kmol]."""
        return thermo.molar_mass(self.elements_per_mole())

    def pathway(self, name: str, where: str = "pathway") -> Pathway:
        """The production pathway of this name.

        Parameters
        ----------
        name : str
            Pathway name.
        where : str
            Label that the error message names.

        Returns
        -------
        Pathway

        Raises
        ------
        InputError
            The fuel has no pathway of that name.
        """
        for p in self.pathways:
            if p.name == name:
                return p
        known = ", ".join(p.name for p in self.pathways)
        hint = f"pick one of {known}" if known else ("it lists none; give its upstream "
                                                   "in [upstream] instead")
        raise InputError(where, f"{self.id} has no pathway {name!r}; {hint}")


# ----------------------------------------------------------------------------- loading


def user_fuel_folders() -> tuple[Path, ...]:
    """The user's fuel folders, searched before the shipped library, first match wins.

    Those given to :func:`use_fuel_folders` (the CLI's ``--fuels DIR``) come first, then those
    named in the environment variable ``WORKBENCH_FUELS`` (separated by ``os.pathsep``).

    Returns
    -------
    tuple of pathlib.Path

    Raises
    ------
    InputError
        A folder named in ``WORKBENCH_FUELS`` does not exist.
    """
    env = [Path(p) for p in os.environ.get(FUELS_ENV, "").split(os.pathsep) if p.strip()]
    for folder in env:
        if not _is_dir(folder):
            raise InputError(FUELS_ENV, f"{str(folder)[:80]} is no folder; name folders of "
                             f"fuel .toml files, separated by {os.pathsep!r}")
    return (*_USER_FOLDERS, *env)


def use_fuel_folders(folders: Iterable[str | Path]) -> tuple[Path, ...]:
    """Search these folders for fuel ids before ``WORKBENCH_FUELS`` and the shipped library.

    Parameters
    ----------
    folders : iterable of str or pathlib.Path
        Folders of ``*.toml`` fuel files, first match wins; an empty iterable forgets them.

    Returns
    -------
    tuple of pathlib.Path
        The folders used before the call (to restore them).

    Raises
    ------
    InputError
        A folder does not exist.
    """
    global _USER_FOLDERS
    new = tuple(Path(check_file_name(str(f), "--fuels", what="a folder of fuel .toml files"))
                for f in folders)
    for folder in new:
        if not _is_dir(folder):
            raise InputError(f"--fuels {folder}", "no such folder; give a folder of fuel .toml "
                             "files")
    old, _USER_FOLDERS = _USER_FOLDERS, new
    return old


def fuel_folders(folder: Path | None = None) -> tuple[Path, ...]:
    """Every folder searched for a fuel id, in order: ``folder``, the user's, the shipped one.

    Parameters
    ----------
    folder : pathlib.Path, optional
        Searched first (a blend file's own folder).

    Returns
    -------
    tuple of pathlib.Path
    """
    return (*(() if folder is None else (folder,)), *user_fuel_folders(), LIBRARY)


def list_fuels(library: Path | None = None) -> list[str]:
    """Ids of the fuels in a library folder, or of every folder searched, sorted.

    Parameters
    ----------
    library : pathlib.Path, optional
        Folder of ``*.toml`` fuel files; by default every folder of :func:`fuel_folders`.

    Returns
    -------
    list of str
        File stems, each once.
    """
    folders = fuel_folders() if library is None else (library,)
    return sorted({p.stem for f in folders for p in f.glob("*.toml")})


def find_fuel(fuel_id: str, *, folder: Path | None = None) -> Path | None:
    """The file a fuel id names: the first ``<id>.toml`` of :func:`fuel_folders`.

    Parameters
    ----------
    fuel_id : str
        Library id (file stem).
    folder : pathlib.Path, optional
        Searched first (a blend file's own folder).

    Returns
    -------
    pathlib.Path or None
        None when no folder holds it.
    """
    for f in fuel_folders(folder):
        path = f / f"{fuel_id}.toml"
        if _is_file(path):
            return path
    return None


def load_fuel(ref: str | Path | Fuel, *, folder: Path | None = None) -> Fuel:
    """Load a fuel by library id or file path.

    Ids are looked up in ``folder``, then in the user's fuel folders (:func:`use_fuel_folders`,
    ``WORKBENCH_FUELS``), then in the shipped library. The file is read on every call and its
    parse cached by the file's bytes, so an edited file is never served stale.

    Parameters
    ----------
    ref : str, pathlib.Path or Fuel
        A library id (``"propane"``), a path to a fuel TOML file, or a Fuel (returned as is).
    folder : pathlib.Path, optional
        Folder searched first for an id, and for a relative path before the working folder
        (a blend file's own folder, for its parts).

    Returns
    -------
    Fuel

    Raises
    ------
    InputError
        Unknown id, unreadable or malformed file, a blend that contains itself, or a field
        that fails validation.
    """
    if isinstance(ref, Fuel):
        return ref
    return _load_path(_fuel_path(ref, folder))


def _fuel_path(ref: str | Path, folder: Path | None = None) -> Path:
    """A library id or a path -> the absolute path of the fuel file (see :func:`load_fuel`)."""
    text = check_file_name(str(ref) if isinstance(ref, Path) else ref, "fuel",
                           what="a library fuel id or a fuel .toml file")
    if text.endswith(".toml") or "/" in text or "\\" in text:
        path = Path(text)
        if folder is not None and not path.is_absolute() and _is_file(folder / path):
            path = folder / path
        return Path(os.path.abspath(path))
    found = find_fuel(text, folder=folder)
    if found is None:
        known = ", ".join(list_fuels()) or "none"
        searched = ", ".join(str(f) for f in fuel_folders(folder))
        raise InputError(text, f"unknown fuel id; pick one of {known} (searched {searched}), "
                         "or give a .toml path")
    return Path(os.path.abspath(found))


@dataclass(frozen=True)
class FuelEntry:
    """What a fuel file says of itself, checked, without its chemistry (for listings).

    Attributes
    ----------
    id : str
        Library id (the file stem).
    name : str
        Human-readable name.
    is_gas : bool
        Gaseous at 15 °C and 1 atm.
    storage : StorageSpec or None
        On-board storage.
    """

    id: str
    name: str
    is_gas: bool
    storage: StorageSpec | None


def fuel_entry(ref: str | Path, *, folder: Path | None = None) -> FuelEntry:
    """Read a fuel file's name, state and storage without Cantera (fast; for listings).

    Parameters
    ----------
    ref : str or pathlib.Path
        A library id (searched as by :func:`load_fuel`) or a path to a fuel TOML file.
    folder : pathlib.Path, optional
        Folder searched first, as for :func:`load_fuel`.

    Returns
    -------
    FuelEntry

    Raises
    ------
    InputError
        As :func:`load_fuel` for these fields; the chemistry is checked when the fuel loads.
    """
    path = _fuel_path(ref, folder)
    with _opened(path) as (_, data):
        for part in _part_refs(data):  # a blend's parts must be there, and no cycle
            fuel_entry(part, folder=path.parent)
        _, name, state, storage = _entry(data, path.stem, str(path))
    return FuelEntry(id=path.stem, name=name, is_gas=state == "gas", storage=storage)


def _entry(data: Mapping[str, Any], fuel_id: str, where: str
           ) -> tuple[str, str, str, StorageSpec | None]:
    """Kind, name, state and storage of a fuel file's contents, checked."""
    kinds = [k for k in ("species", "blend", "pseudo") if k in data]
    if len(kinds) != 1:
        raise InputError(where, "needs exactly one of the tables [species], [blend], [pseudo]")
    name = data.get("name", fuel_id)
    if not isinstance(name, str):
        raise InputError(f"{where}: name", "must be a string")
    state = data.get("state")
    if state not in ("gas", "liquid"):
        raise InputError(f"{where}: state", 'must be "gas" or "liquid" (phase at 15 °C, 1 atm)')
    storage = None
    if "storage" in data:
        storage = _storage(_table(data, "storage", where), f"{where}: [storage]", state)
    return kinds[0], name, state, storage


#: Fuel files being loaded in this context, outermost first, as (device, inode) and path:
#: to refuse blend cycles, however each file was named.
_LOADING: ContextVar[tuple[tuple[tuple[int, int], Path], ...]] = ContextVar(
    "workbench_fuels_loading", default=())


@contextmanager
def _opened(path: Path) -> Iterator[tuple[bytes, dict[str, Any]]]:
    """A fuel file's digest and parsed contents, the file counted as being loaded meanwhile
    (a blend that reaches it again is a cycle, refused)."""
    try:
        with path.open("rb") as fh:
            stat = os.fstat(fh.fileno())
            raw = fh.read()
    except OSError:
        raise InputError(str(path), "no such fuel file; check the path") from None
    chain = _LOADING.get()
    ids = [file_id for file_id, _ in chain]
    file_id = (stat.st_dev, stat.st_ino)
    if file_id in ids:
        names = [p.name for _, p in chain[ids.index(file_id):]]
        raise InputError(str(path), f"blend cycle {' -> '.join([*names, path.name])}: a blend "
                         "cannot contain itself; name other fuels as its parts")
    token = _LOADING.set((*chain, (file_id, path)))
    try:
        digest = hashlib.sha256(raw).digest()
        yield digest, _parse_fuel_file(digest, raw, str(path))
    finally:
        _LOADING.reset(token)


def _part_refs(data: Mapping[str, Any]) -> list[str]:
    """The fuels a blend file names as its parts (none for another kind of file)."""
    table = data.get("blend")
    return [ref for ref in table if ref not in ("basis", "source")] if isinstance(
        table, Mapping) else []


def _load_path(path: Path) -> Fuel:
    with _opened(path) as (digest, data):
        parts = tuple(load_fuel(ref, folder=path.parent) for ref in _part_refs(data))
        return _fuel_of_file(digest, str(path), parts, data)


@memoize(maxsize=512, key=lambda digest, raw, where: digest)
def _parse_fuel_file(digest: bytes, raw: bytes, where: str) -> dict[str, Any]:
    """The parsed TOML of a fuel file's bytes, cached by their digest (do not mutate it)."""
    return parse_toml(raw, where)


def _is_dir(path: Path) -> bool:
    try:
        return path.is_dir()
    except OSError:  # a name too long for the system
        return False


def _is_file(path: Path) -> bool:
    try:
        return path.is_file()
    except OSError:  # a name too long for the system once joined to the folder
        return False


@memoize(maxsize=512, key=lambda digest, where, parts, data: (digest, where, parts))
def _fuel_of_file(digest: bytes, where: str, parts: tuple[Fuel, ...],
                  data: Mapping[str, Any]) -> Fuel:
    """The fuel of a file, cached by its bytes' digest and, for a blend, by its parts."""
    path = Path(where)
    return fuel_from_dict(data, fuel_id=path.stem, where=where, folder=path.parent)


def fuel_from_dict(data: Mapping[str, Any], *, fuel_id: str, where: str,
                   folder: Path | None = None) -> Fuel:
    """Build a fuel from the parsed contents of a fuel file.

    Parameters
    ----------
    data : mapping
        Parsed TOML (see ``fuels/README.md``).
    fuel_id : str
        Id to give the fuel.
    where : str
        File name (or other label) that error messages name.
    folder : pathlib.Path, optional
        Folder searched first for a blend's parts (the file's own folder).

    Returns
    -------
    Fuel
    """
    kind, name, state, storage = _entry(data, fuel_id, where)
    table = _table(data, kind, where)
    sources = [(kind, _source(table, f"{where}: [{kind}]"))]
    liquid = None
    if "liquid" in data:
        ltable = _table(data, "liquid", where)
        liquid = _positive(ltable, "density_kg_per_m3", f"{where}: [liquid]",
                           MAX_LIQUID_DENSITY)
        sources.append(("liquid", _source(ltable, f"{where}: [liquid]")))
    if storage is not None:
        sources.append(("storage", storage.source))
    share, origin_source = _origin(data, kind, where)
    if origin_source:
        sources.append(("origin", origin_source))
    common = dict(name=name, liquid_density=liquid, storage=storage,
                  pathways=_pathways(data, where))
    if kind == "blend":
        basis = _basis(table, f"{where}: [blend]")
        parts = _fractions(table, f"{where}: [blend]")
        fuel = blend(parts, basis, id=fuel_id, name=name, where=f"{where}: [blend]",
                     folder=folder)
        if fuel.is_gas != (state == "gas"):
            raise InputError(f"{where}: state", f'must be "{_state(fuel.is_gas)}" for these parts')
        if liquid is None:
            common["liquid_density"] = fuel.liquid_density
        return Fuel(
            id=fuel_id,
            composition=fuel.composition,
            is_gas=fuel.is_gas,
            pseudo=fuel.pseudo,
            biogenic_carbon_share=fuel.biogenic_carbon_share,
            sources=tuple(sources),
            path=where,
            **common,
        )
    if kind == "species":
        basis = _basis(table, f"{where}: [species]")
        if basis == "liquid_volume":
            raise InputError(f"{where}: [species].basis", 'use "mole" or "mass" for species')
        fractions = _fractions(table, f"{where}: [species]")
        for sp in fractions:
            if thermo.find_species(sp) is None:
                raise InputError(
                    f"{where}: [species].{sp}",
                    "unknown species; use a name from gri30.yaml, nasa_gas.yaml or "
                    'nDodecane_Reitz.yaml (e.g. "C3H8", "C4H10,n-butane")',
                )
        if basis == "mass":
            fractions = _mass_to_mole(
                {s: thermo.molar_mass(dict(thermo.find_species(s).composition)) for s in fractions},
                fractions,
            )
        composition = tuple(sorted(fractions.items()))
        pseudo: tuple[thermo.PseudoSpecies, ...] = ()
    else:
        species = _pseudo_species(table, fuel_id, f"{where}: [pseudo]")
        composition = ((species.name, 1.0),)
        pseudo = (species,)
    return Fuel(
        id=fuel_id,
        composition=composition,
        is_gas=state == "gas",
        pseudo=pseudo,
        biogenic_carbon_share=share,
        sources=tuple(sources),
        path=where,
        **common,
    )


def _origin(data: Mapping[str, Any], kind: str, where: str) -> tuple[float, str]:
    """A fuel file's biogenic carbon share [-] and its source ("" when no ``[origin]``)."""
    if "origin" not in data:
        return 0.0, ""
    w = f"{where}: [origin]"
    if kind == "blend":
        raise InputError(w, "a blend's origin comes from its parts; leave [origin] out and "
                         "give each part its own")
    table = _table(data, "origin", where)
    _known(table, ORIGIN_KEYS, w)
    share = _number(table, "biogenic_carbon_share", w, low=0.0, high=1.0)
    return share, _source(table, w)


def _pathways(data: Mapping[str, Any], where: str) -> tuple[Pathway, ...]:
    """A fuel file's ``[pathways.<name>]`` entries, checked."""
    if "pathways" not in data:
        return ()
    table = _table(data, "pathways", where)
    out = []
    for name, entry in table.items():
        w = f"{where}: [pathways.{name}]"
        if not re.fullmatch(r"[a-z0-9][a-z0-9-]*", name):
            raise InputError(w, "name a pathway with lower-case letters, digits and -")
        if not isinstance(entry, Mapping):
            raise InputError(w, "must be a table: { wtt_co2e_g_per_mj = …, source = \"…\" }")
        _known(entry, PATHWAY_KEYS, w)
        value = _number(entry, "wtt_co2e_g_per_mj", w, low=-MAX_PATHWAY_G_PER_MJ,
                        high=MAX_PATHWAY_G_PER_MJ)
        out.append(Pathway(name, value * 1e-9, _source(entry, w)))
    return tuple(out)


def _known(table: Mapping[str, Any], keys: tuple[str, ...], where: str) -> None:
    for key in table:
        if key not in keys:
            raise InputError(f"{where}.{key}", f"unknown key; use {', '.join(keys)}")


def _state(is_gas: bool) -> str:
    return "gas" if is_gas else "liquid"


def _table(data: Mapping[str, Any], key: str, where: str) -> Mapping[str, Any]:
    table = data[key]
    if not isinstance(table, Mapping):
        raise InputError(f"{where}: {key}", f"must be a table [{key}]")
    return table


def _source(table: Mapping[str, Any], where: str) -> str:
    src = table.get("source")
    if not isinstance(src, str) or not src.strip():
        raise InputError(f"{where}.source", 'is required: say where the numbers come from, or '
                         '"typical value, example"')
    return src


def _number(table: Mapping[str, Any], key: str, where: str, *, low: float | None = None,
            high: float | None = None) -> float:
    if key not in table:
        raise InputError(f"{where}.{key}", "is required")
    return read_number(table[key], f"{where}.{key}", low=low, high=high)


def _positive(table: Mapping[str, Any], key: str, where: str, high: float) -> float:
    """A number above zero and at most ``high``, the end of its physical range."""
    value = _number(table, key, where, high=high)
    if not value > 0:
        raise InputError(f"{where}.{key}", f"must be above zero, got {value:g}")
    return value


def _basis(table: Mapping[str, Any], where: str) -> Basis:
    basis = table.get("basis", "mole")
    if basis not in BASES:
        raise InputError(f"{where}.basis", f"must be one of {', '.join(BASES)}, got {basis!r}")
    return basis


def _fractions(table: Mapping[str, Any], where: str) -> dict[str, float]:
    parts = {k: v for k, v in table.items() if k not in ("basis", "source")}
    if not parts:
        raise InputError(where, "lists no parts; give name = fraction lines")
    out = {k: _number(parts, k, where) for k in parts}
    return check_fractions(out, where)


def check_fractions(fractions: Mapping[str, float], where: str) -> dict[str, float]:
    """Validate and normalise fractions.

    Parameters
    ----------
    fractions : mapping of str to float
        Part name to fraction [-].
    where : str
        Label that error messages name.

    Returns
    -------
    dict of str to float
        Fractions scaled to sum to exactly 1.

    Raises
    ------
    InputError
        A negative fraction, or a sum further than :data:`SUM_TOLERANCE` from 1.
    """
    for k, v in fractions.items():
        if not v >= 0:
            raise InputError(f"{where}.{k}", f"fraction must be zero or more, got {v:g}")
    total = sum(fractions.values())
    if abs(total - 1.0) > SUM_TOLERANCE:
        raise InputError(
            where, f"fractions sum to {total:.6g}; they must sum to 1 within {SUM_TOLERANCE:g}"
        )
    return {k: v / total for k, v in fractions.items() if v > 0}


def _mass_to_mole(molar_masses: Mapping[str, float], y: Mapping[str, float]) -> dict[str, float]:
    moles = {k: y[k] / molar_masses[k] for k in y}
    total = sum(moles.values())
    return {k: n / total for k, n in moles.items()}


def _storage(table: Mapping[str, Any], where: str, state: str) -> StorageSpec:
    kind = table.get("kind")
    if kind not in STORAGE_KINDS:
        raise InputError(f"{where}.kind", f"must be one of {', '.join(STORAGE_KINDS)}")
    if kind in ("liquefied", "compressed", "cryogenic") and state != "gas":
        raise InputError(f"{where}.kind", f'"{kind}" is for gaseous fuels; use "liquid"')
    if kind == "liquid" and state != "liquid":
        raise InputError(f"{where}.kind", '"liquid" is for liquid fuels')
    pressure = None
    if kind == "compressed":
        pressure = _positive(table, "pressure_bar", where, MAX_STORAGE_BAR) * 1e5
    temperature = T_STANDARD
    if "temperature_c" in table:
        temperature = _number(table, "temperature_c", where, high=MAX_STORAGE_C) + ZERO_CELSIUS
        if temperature <= 0:
            raise InputError(f"{where}.temperature_c", "must be above -273.15")
    return StorageSpec(kind=kind, pressure=pressure, temperature=temperature,
                       source=_source(table, where))


def _pseudo_species(table: Mapping[str, Any], fuel_id: str, where: str) -> thermo.PseudoSpecies:
    mass_fractions = {}
    for key, el in PSEUDO_ELEMENTS.items():
        if key in table:
            mass_fractions[el] = _number(table, key, where)
    if "C" not in mass_fractions or "H" not in mass_fractions:
        raise InputError(where, "a pseudo-component needs carbon and hydrogen mass fractions")
    named = {k: v for k, v in table.items() if k in PSEUDO_ELEMENTS}
    check_fractions({k: float(v) for k, v in named.items()}, where)
    if "lhv_mj_per_kg" not in table:
        raise InputError(f"{where}.lhv_mj_per_kg", "is required for a pseudo-component "
                         "(its measured lower heating value)")
    lhv = _positive(table, "lhv_mj_per_kg", where, MAX_LHV_MJ_PER_KG) * 1e6
    mw = _positive(table, "molar_mass_kg_per_kmol", where, MAX_MOLAR_MASS)
    cp_mass = DEFAULT_PSEUDO_CP_MASS
    if "cp_kj_per_kg_k" in table:
        cp_mass = _positive(table, "cp_kj_per_kg_k", where, MAX_CP_KJ_PER_KG_K) * 1e3
    total = sum(mass_fractions.values())
    atoms = {el: y / total * mw / thermo.atomic_weight(el) for el, y in mass_fractions.items()
             if y > 0}
    return pseudo_species(fuel_id.upper().replace("-", "_"), atoms, lhv, cp_mass * mw)


def pseudo_species(
    name: str, atoms: Mapping[str, float], lhv_mass: float, cp_mole: float
) -> thermo.PseudoSpecies:
    """Make the species whose complete combustion releases a given LHV.

    Parameters
    ----------
    name : str
        Species name.
    atoms : mapping of str to float
        Atoms of each element per molecule.
    lhv_mass : float
        Measured lower heating value of the fuel as delivered [J/kg].
    cp_mole : float
        Molar heat capacity [J/kmol/K].

    Returns
    -------
    PseudoSpecies

    Notes
    -----
    With :math:`n_i` moles of product :math:`i` per mole of fuel and
    :math:`n_{O_2}` the stoichiometric oxygen,

    .. math:: h_f = M \\, LHV + \\sum_i n_i h_i(298.15) - n_{O_2} h_{O_2}(298.15),

    products being CO2, H2O (vapour), SO2 and N2.
    """
    gas = thermo.phase(("SO2",))
    products = complete_products(atoms)
    names = [*products, "O2"]
    h = thermo.standard_enthalpies(gas, names)
    n = [*products.values(), -oxygen_demand(atoms)]
    h_products = float(sum(ni * hi for ni, hi in zip(n, h, strict=True)))
    mw = thermo.molar_mass(dict(atoms))
    return thermo.PseudoSpecies(
        name=name,
        elements=tuple(sorted((k, float(v)) for k, v in atoms.items())),
        enthalpy_formation=mw * lhv_mass + h_products,
        cp_mole=cp_mole,
    )


def oxygen_demand(atoms: Mapping[str, float]) -> float:
    """O2 needed to burn one mole of fuel completely [kmol/kmol].

    Parameters
    ----------
    atoms : mapping of str to float
        Atoms of each element per molecule (C, H, O, N, S).

    Returns
    -------
    float
        :math:`C + H/4 + S - O/2`.
    """
    return atoms.get("C", 0.0) + atoms.get("H", 0.0) / 4 + atoms.get("S", 0.0) \
        - atoms.get("O", 0.0) / 2


def complete_products(atoms: Mapping[str, float]) -> dict[str, float]:
    """Products of complete combustion of one mole of fuel [kmol/kmol].

    Parameters
    ----------
    atoms : mapping of str to float
        Atoms of each element per molecule.

    Returns
    -------
    dict of str to float
        Moles of CO2, H2O, SO2 and N2 (zero entries omitted); argon passes through.
    """
    out = {
        "CO2": atoms.get("C", 0.0),
        "H2O": atoms.get("H", 0.0) / 2,
        "SO2": atoms.get("S", 0.0),
        "N2": atoms.get("N", 0.0) / 2,
        "AR": atoms.get("Ar", 0.0),
    }
    return {k: v for k, v in out.items() if v > 0}


# ----------------------------------------------------------------------------- blends


def blend(
    parts: Mapping[str | Fuel, float],
    basis: Basis = "mole",
    *,
    id: str | None = None,
    name: str | None = None,
    where: str = "blend",
    folder: Path | None = None,
) -> Fuel:
    """Mix library fuels into a new fuel.

    Parameters
    ----------
    parts : mapping of (str or Fuel) to float
        Fuels (ids, paths or objects) and their fractions [-] on ``basis``; must sum to 1
        within :data:`SUM_TOLERANCE`.
    basis : {"mole", "mass", "liquid_volume"}
        What the fractions measure. Liquid volume uses each part's liquid density at 15 °C
        and assumes volumes add (ideal mixing).
    id, name : str, optional
        Id and name of the blend; generated from the parts when omitted.
    where : str
        Label that error messages name.
    folder : pathlib.Path, optional
        Folder searched first for the parts (see :func:`load_fuel`).

    Returns
    -------
    Fuel
        A mole-fraction mixture of the parts' species; gaseous if the parts are, with the
        ideal-mixing liquid density when every part has one.

    Examples
    --------
    >>> lpg = blend({"propane": 0.6, "n-butane": 0.4}, "liquid_volume")  # doctest: +SKIP
    """
    if basis not in BASES:
        raise InputError(f"{where}.basis", f"must be one of {', '.join(BASES)}, got {basis!r}")
    fuels = {}
    fractions = {}
    for ref, frac in parts.items():
        fuel = load_fuel(ref, folder=folder)
        fuels[fuel.id] = fuel
        fractions[fuel.id] = fractions.get(fuel.id, 0.0) + float(frac)
    fractions = check_fractions(fractions, where)
    fuels = {k: fuels[k] for k in fractions}
    auto = f"blend-{basis}(" + "+".join(f"{k}:{v:.4g}" for k, v in fractions.items()) + ")"
    states = {f.is_gas for f in fuels.values()}
    if len(states) > 1:
        raise InputError(where, "mixes gaseous and liquid fuels; blend fuels of one phase")
    densities = {k: f.liquid_density for k, f in fuels.items()}
    if basis == "liquid_volume":
        missing = [k for k, d in densities.items() if d is None]
        if missing:
            raise InputError(f"{where}.{missing[0]}", "has no [liquid] density, so it cannot be "
                             "blended by liquid volume; use mole or mass")
        fractions = {k: v * densities[k] for k, v in fractions.items()}  # -> mass, unnormalised
        basis = "mass"
    if basis == "mass":
        total = sum(fractions.values())
        fractions = _mass_to_mole(
            {k: f.molar_mass() for k, f in fuels.items()},
            {k: v / total for k, v in fractions.items()},
        )
    species: dict[str, float] = {}
    pseudo: dict[str, thermo.PseudoSpecies] = {}
    for k, x in fractions.items():
        for sp, xs in fuels[k].composition:
            species[sp] = species.get(sp, 0.0) + x * xs
        pseudo.update({p.name: p for p in fuels[k].pseudo})
    liquid_density = None
    if all(d is not None for d in densities.values()):
        mass = {k: x * fuels[k].molar_mass() for k, x in fractions.items()}
        liquid_density = sum(mass.values()) / sum(m / densities[k] for k, m in mass.items())
    carbon = {k: x * fuels[k].elements_per_mole().get("C", 0.0) for k, x in fractions.items()}
    total_carbon = sum(carbon.values())
    share = sum(c * fuels[k].biogenic_carbon_share for k, c in carbon.items()) / total_carbon \
        if total_carbon > 0 else 0.0
    return Fuel(
        id=id or auto,
        name=name or "Blend of " + ", ".join(fuels[k].name for k in fractions),
        composition=tuple(sorted(species.items())),
        is_gas=states.pop(),
        pseudo=tuple(sorted(pseudo.values(), key=lambda p: p.name)),
        liquid_density=liquid_density,
        biogenic_carbon_share=share,
        sources=(("blend", f"computed from {', '.join(fractions)}"),),
    )
