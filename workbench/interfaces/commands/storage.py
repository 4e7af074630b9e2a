"""``workbench fuels storage``: a fuel as stored on board, its tank, and its cold-start limit.

Registered into the ``fuels`` group by :func:`register_storage`. Units at this interface:
°C, bar (absolute, except the gauge feed pressure), litres, kg, km, MJ.
"""

from __future__ import annotations

import argparse
from typing import Any

from workbench.core.constants import P_STANDARD, ZERO_CELSIUS
from workbench.core.errors import InputError
from workbench.core.fuels import STORAGE_KINDS
from workbench.interfaces.cli import add_fuels_option, command, finite_float

#: Model argument names and the options that set them, for error messages.
_OPTIONS = {
    "kind": "--kind",
    "temperature": "--temperature",
    "pressure": "--pressure",
    "tank": "--tank",
    "distance": "--range",
    "energy_per_distance": "--energy-per-km",
    "tank_volume": "--tank-volume",
    "feed_pressure": "--feed-pressure",
}


def register_storage(fuels_sub: argparse._SubParsersAction) -> None:
    """Add ``storage`` to the ``fuels`` command group.

    Parameters
    ----------
    fuels_sub : argparse._SubParsersAction
        The sub-parsers of ``workbench fuels``.
    """
    p = command(
        fuels_sub, "storage",
        help="density, energy per litre and kg, tank size for a range, LPG cold start",
        description="A fuel as stored on board at a temperature (and pressure for a "
        "compressed gas): density, energy density of the fuel and of the tank system, tank "
        "size for a range or range of a tank, and for liquefied gases the vapour pressure and "
        "the temperature below which the tank no longer feeds the engine. Pressurised "
        "storage is fitted by licensed installers; local codes decide.",
        example=["workbench fuels storage lpg --temperature -10",
                 "workbench fuels storage natural-gas --range 400 --energy-per-km 2.6"],
    )
    p.add_argument("fuel", metavar="FUEL", help="library id (lpg, natural-gas, ...) or .toml path")
    p.add_argument("--kind", choices=STORAGE_KINDS, help="storage model (default: the fuel's)")
    p.add_argument("--temperature", type=finite_float, metavar="C",
                   help="fuel temperature [°C] (default: declared storage, 15 °C)")
    p.add_argument("--pressure", type=finite_float, metavar="BAR",
                   help="absolute pressure of a compressed gas or cryogenic tank [bar]")
    p.add_argument("--tank", metavar="ID", help="tank type (default: by storage kind); "
                   "see `workbench docs storage`")
    p.add_argument("--range", type=finite_float, metavar="KM", dest="range_km",
                   help="size the tank for this range [km] (needs --energy-per-km)")
    p.add_argument("--tank-volume", type=finite_float, metavar="L",
                   help="range of a tank of this water volume [L] (needs --energy-per-km)")
    p.add_argument("--energy-per-km", type=finite_float, metavar="MJ",
                   help="fuel energy (LHV) used per km [MJ/km]")
    p.add_argument("--feed-pressure", type=finite_float, metavar="BAR",
                   help="gauge pressure the LPG feed system needs [bar] (default 1.5, typical)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    add_fuels_option(p)
    p.set_defaults(func=_run)


def _run(args: argparse.Namespace) -> None:
    try:
        result = storage_report(args)
    except InputError as exc:
        raise InputError(_OPTIONS.get(exc.where, exc.where), exc.message) from None
    if args.json:
        from workbench.interfaces.cli import print_json

        print_json(result)
    else:
        print(_table(result))


def storage_report(args: argparse.Namespace) -> dict[str, Any]:
    """Compute what ``workbench fuels storage`` prints, in interface units.

    Parameters
    ----------
    args : argparse.Namespace
        Parsed options (see :func:`register_storage`).

    Returns
    -------
    dict
        ``fuel``, ``name``, the stored state (:func:`workbench.models.storage.state_summary`),
        ``method``, the tank's system energy densities, sizing when ``--range`` or
        ``--tank-volume`` is given, and for liquefied gases ``cold_start_temperature_c`` and
        ``feeds_engine``.
    """
    from workbench.core.fuels import load_fuel
    from workbench.models import storage

    if args.range_km is not None and args.tank_volume is not None:
        raise InputError("--tank-volume", "give either --range or --tank-volume, not both")
    if (args.range_km is not None or args.tank_volume is not None) and args.energy_per_km is None:
        raise InputError("--energy-per-km", "is needed with --range or --tank-volume: give the "
                         "fuel energy used per km [MJ/km]")
    fuel = load_fuel(args.fuel)
    state = storage.stored_state(
        fuel,
        kind=args.kind,
        temperature=None if args.temperature is None else args.temperature + ZERO_CELSIUS,
        pressure=None if args.pressure is None else args.pressure * 1e5,
    )
    out: dict[str, Any] = {"fuel": fuel.id, "name": fuel.name, **storage.state_summary(state),
                           "method": state.method}
    if state.kind == "liquefied":
        feed = storage.DEFAULT_FEED_PRESSURE if args.feed_pressure is None \
            else args.feed_pressure * 1e5
        t_cold = storage.cold_start_temperature(fuel, feed_pressure=feed)
        out["feed_pressure_bar_gauge"] = feed / 1e5
        out["cold_start_temperature_c"] = t_cold - ZERO_CELSIUS
        out["feeds_engine"] = bool(state.vapour_pressure - P_STANDARD >= feed)
    energy = None if args.energy_per_km is None else args.energy_per_km * 1e3  # J/m
    if args.range_km is not None:
        system = storage.tank_for_range(state, args.range_km * 1e3, energy, tank=args.tank)
    else:
        volume = 1e-3 if args.tank_volume is None else args.tank_volume / 1e3
        system = storage.tank_of_volume(state, volume, energy, tank=args.tank)
    out.update({
        "tank": system.tank.id,
        "tank_name": system.tank.name,
        "fill_fraction": system.tank.fill_fraction,
        "system_energy_density_mj_per_kg": system.system_energy_per_mass / 1e6,
        "system_energy_density_mj_per_l": system.system_energy_per_volume / 1e9,
    })
    if energy is not None:
        out.update({
            "energy_per_km_mj": args.energy_per_km,
            "range_km": float(system.range) / 1e3,
            "usable_fuel_kg": float(system.usable_fuel_mass),
            "tank_volume_l": float(system.tank_volume) * 1e3,
            "envelope_volume_l": float(system.envelope_volume) * 1e3,
            "tank_mass_kg": float(system.tank_mass),
            "tank_system_mass_kg": float(system.system_mass),
        })
    return out


#: Human table rows: key, label, unit, format.
_ROWS = (
    ("storage_kind", "storage", "", "{}"),
    ("temperature_c", "temperature", "°C", "{:.1f}"),
    ("pressure_bar", "tank pressure (absolute)", "bar", "{:.4g}"),
    ("vapour_pressure_bar", "vapour pressure (absolute)", "bar", "{:.4g}"),
    ("compressibility_factor", "compressibility factor Z", "-", "{:.4f}"),
    ("density_kg_per_l", "density", "kg/L", "{:.4f}"),
    ("energy_density_mj_per_kg", "energy density, fuel (LHV)", "MJ/kg", "{:.2f}"),
    ("energy_density_mj_per_l", "energy density, fuel (LHV)", "MJ/L", "{:.2f}"),
    ("feed_pressure_bar_gauge", "feed pressure needed (gauge)", "bar", "{:.2f}"),
    ("cold_start_temperature_c", "feeds the engine down to", "°C", "{:.1f}"),
    ("feeds_engine", "feeds the engine at this temperature", "", "{}"),
    ("tank", "tank type", "", "{}"),
    ("fill_fraction", "usable fill of water volume", "-", "{:.2f}"),
    ("system_energy_density_mj_per_kg", "energy density, full tank system", "MJ/kg", "{:.2f}"),
    ("system_energy_density_mj_per_l", "energy density, installed tank", "MJ/L", "{:.2f}"),
    ("energy_per_km_mj", "energy use", "MJ/km", "{:.3g}"),
    ("range_km", "range", "km", "{:.0f}"),
    ("usable_fuel_kg", "usable fuel", "kg", "{:.1f}"),
    ("tank_volume_l", "tank water volume", "L", "{:.1f}"),
    ("envelope_volume_l", "installed tank envelope", "L", "{:.1f}"),
    ("tank_mass_kg", "empty tank mass", "kg", "{:.1f}"),
    ("tank_system_mass_kg", "tank + full load of fuel", "kg", "{:.1f}"),
    ("method", "property model", "", "{}"),
)


def _table(result: dict[str, Any]) -> str:
    rows = [(label, fmt.format(result[key]), unit) for key, label, unit, fmt in _ROWS
            if key in result]
    width = max(len(r[0]) for r in rows)
    vwidth = max(len(r[1]) for r in rows)
    lines = [f"{result['name']} [{result['fuel']}]"]
    lines += [f"  {label:<{width}}  {value:>{vwidth}}  {unit}".rstrip()
              for label, value, unit in rows]
    return "\n".join(lines)
