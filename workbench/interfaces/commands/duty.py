"""``workbench duty``: duty-profile statistics and fuel per km on a duty.

PROFILE, ``--vehicle`` and ``--map`` take the name of a shipped demo (``taxi-shift``, ``taxi``,
``taxi-si-1.8l``, ...) or a file path.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from workbench.core.errors import InputError
from workbench.core.paths import DATA
from workbench.interfaces.cli import add_fuels_option, finite_float
from workbench.io.profiles import read_profile
from workbench.models.duty import DutySettings, DutyTrace, duty_stats

#: Demo kind -> (data sub-directory, file suffix).
_DEMOS = {"profile": ("profiles", ".csv"), "vehicle": ("vehicles", ".toml"),
          "map": ("maps", ".csv")}


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``duty`` command group to the top-level parser."""
    group = sub.add_parser("duty", help="duty profiles: statistics and fuel per km")
    dsub = group.add_subparsers(dest="duty_command", required=True, parser_class=type(group))

    p = dsub.add_parser("stats", help="summary statistics of a speed trace")
    p.add_argument("profile", metavar="PROFILE",
                   help=f"demo profile ({', '.join(demo_names('profile'))}) or a CSV path")
    p.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(func=_stats)

    p = dsub.add_parser("fuel", help="fuel, energy and CO2 per km of one or more fuels on a duty")
    p.add_argument("profile", metavar="PROFILE", help="demo profile or a trace/mode-table CSV")
    p.add_argument("--vehicle", metavar="V",
                   help=f"demo vehicle ({', '.join(demo_names('vehicle'))}) or a TOML path; "
                        "needed for a speed trace")
    p.add_argument("--map", required=True, metavar="M",
                   help=f"demo map ({', '.join(demo_names('map'))}) or a map CSV path")
    p.add_argument("--fuel", required=True, action="append", metavar="F",
                   help="fuel id or fuel TOML; repeat for candidates. The first is the engine's "
                        "original fuel; --derate and --efficiency-offset apply to the others")
    p.add_argument("--derate", type=finite_float, default=0.0, metavar="X",
                   help="share of full-load power lost on the candidate fuels (default 0)")
    p.add_argument("--efficiency-offset", type=finite_float, default=0.0, metavar="X",
                   help="added to the map's brake efficiency on the candidate fuels, e.g. -0.01")
    p.add_argument("--accessory-kw", type=finite_float, default=0.0, metavar="KW",
                   help="accessory power while the engine runs, kW (default 0)")
    p.add_argument("--engine-off-at-stops", action="store_true",
                   help="stop the engine at every stop")
    p.add_argument("--extra-idle-share", type=finite_float, default=0.0, metavar="X",
                   help="share of time idling beyond the trace, e.g. waiting at a rank")
    p.add_argument("--json", action="store_true", help="print JSON")
    add_fuels_option(p)
    p.set_defaults(func=_fuel)


def demo_names(kind: str) -> list[str]:
    """Names of the shipped demo files of one kind ("profile", "vehicle" or "map")."""
    folder, suffix = _DEMOS[kind]
    return sorted(p.name.removesuffix(suffix) for p in (DATA / folder).glob(f"*{suffix}"))


def resolve(ref: str, kind: str, option: str) -> Path:
    """A demo name or a file path -> an existing file.

    Parameters
    ----------
    ref : str
        Demo name or path.
    kind : str
        "profile", "vehicle" or "map".
    option : str
        How the user gave it (``PROFILE``, ``--map``), for the error message.

    Returns
    -------
    pathlib.Path
    """
    folder, suffix = _DEMOS[kind]
    demo = DATA / folder / f"{ref}{suffix}"
    if demo.is_file():
        return demo
    path = Path(ref)
    if path.is_file():
        return path
    raise InputError(option, f"'{ref}' is neither a demo {kind} "
                             f"({', '.join(demo_names(kind))}) nor an existing file")


def _stats(args: argparse.Namespace) -> None:
    from workbench.interfaces.cli import print_json

    trace = read_profile(resolve(args.profile, "profile", "PROFILE"))
    if not isinstance(trace, DutyTrace):
        raise InputError(args.profile, "is a time-at-mode table; stats need a speed trace")
    s = duty_stats(trace)
    record = {
        "profile": args.profile,
        "distance_km": s.distance / 1e3,
        "duration_h": s.duration / 3600.0,
        "mean_speed_km_per_h": s.mean_speed * 3.6,
        "max_speed_km_per_h": s.max_speed * 3.6,
        "idle_share": s.idle_share,
        "stops_per_km": s.stops_per_m * 1e3,
        "positive_kinetic_energy_m_per_s2": s.positive_kinetic_energy,
    }
    if args.json:
        print_json(record)
    else:
        print("\n".join(f"{k:34s} {_fmt(v)}" for k, v in record.items()))


def _settings(args: argparse.Namespace) -> DutySettings:
    options = {"accessory_power": "--accessory-kw", "extra_idle_share": "--extra-idle-share"}
    try:
        return DutySettings(accessory_power=args.accessory_kw * 1e3,
                            engine_off_at_stops=args.engine_off_at_stops,
                            extra_idle_share=args.extra_idle_share)
    except InputError as exc:
        raise InputError(options.get(exc.where, exc.where), exc.message) from None


def _fuel(args: argparse.Namespace) -> None:
    from workbench.core.fuels import load_fuel
    from workbench.interfaces.cli import print_json
    from workbench.io.maps import read_map
    from workbench.io.vehicles import read_vehicle
    from workbench.models.combustion import fuel_sheet
    from workbench.models.engine import fuel_per_distance_for, run_duty

    settings = _settings(args)
    profile = read_profile(resolve(args.profile, "profile", "PROFILE"))
    base_map = read_map(resolve(args.map, "map", "--map"))
    vehicle = None
    if isinstance(profile, DutyTrace):
        if args.vehicle is None:
            raise InputError("--vehicle", "a speed trace needs a vehicle (demo name or TOML)")
        vehicle = read_vehicle(resolve(args.vehicle, "vehicle", "--vehicle"))
    fuels = [load_fuel(f) for f in args.fuel]
    maps = [base_map]
    if (args.derate, args.efficiency_offset) != (0.0, 0.0):
        maps.append(base_map.adjusted(derate=args.derate,
                                      efficiency_offset=args.efficiency_offset))
    energies = [run_duty(profile, vehicle, m, settings=settings).energy for m in maps]
    rows = []
    for k, fuel in enumerate(fuels):
        energy = energies[min(k, len(maps) - 1)]
        result = fuel_per_distance_for(energy, fuel, fuel_sheet(fuel))
        rows.append({"fuel": fuel.id,
                     "derate": 0.0 if k == 0 else args.derate,
                     "efficiency_offset": 0.0 if k == 0 else args.efficiency_offset,
                     **result.trade_units()})
    energy = energies[0]
    record = {
        "profile": args.profile,
        "vehicle": args.vehicle,
        "map": args.map,
        "distance_km": energy.distance / 1e3,
        "duration_h": energy.duration / 3600.0,
        "wheel_energy_mj_per_km": energy.wheel_energy / energy.distance * 1e-3,
        "fuels": rows,
    }
    if args.json:
        print_json(record)
        return
    head = {k: v for k, v in record.items() if k != "fuels"}
    lines = [f"{k:34s} {_fmt(v)}" for k, v in head.items()]
    lines.append(f"{'':34s} " + " ".join(f"{r['fuel']:>12s}" for r in rows))
    for key in rows[0]:
        if key != "fuel":
            lines.append(f"{key:34s} " + " ".join(f"{_fmt(r[key]):>12s}" for r in rows))
    print("\n".join(lines))


def _fmt(value: object) -> str:
    if isinstance(value, float):
        return "n/a" if value != value else f"{value:.4g}"
    return "-" if value is None else str(value)
