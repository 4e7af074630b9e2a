"""``workbench duty``: duty-profile statistics and fuel per km on a duty.

PROFILE, ``--vehicle`` and ``--map`` take the name of a shipped demo (``taxi-shift``, ``taxi``,
``taxi-si-1.8l``, ...) or a file path.
"""

from __future__ import annotations

import argparse
from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING

from workbench.core.errors import InputError
from workbench.core.paths import DATA
from workbench.interfaces.cli import STDIO, LazyChoices, add_fuels_option, command, finite_float

if TYPE_CHECKING:
    from workbench.core.fuels import Fuel
    from workbench.models.duty import DutySettings, DutyTrace, ModeTable
    from workbench.models.engine import FuelPerDistance

#: Demo kind -> (data sub-directory, file suffix).
_DEMOS = {"profile": ("profiles", ".csv"), "vehicle": ("vehicles", ".toml"),
          "map": ("maps", ".csv")}


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``duty`` command group to the top-level parser."""
    group = command(sub, "duty", help="duty profiles: statistics and fuel per km",
                    description="A fleet's duty as a speed trace or a time-at-mode table: its "
                    "statistics, and the fuel, energy and CO2 per km of fuels on it.",
                    example=["workbench duty stats taxi-shift",
                             "workbench duty fuel taxi-shift --vehicle taxi --map taxi-si-1.8l "
                             "--fuel gasoline --fuel lpg"])
    dsub = group.add_subparsers(dest="duty_command", required=True, parser_class=type(group),
                                metavar="COMMAND")

    p = command(dsub, "stats", help="summary statistics of a speed trace",
                description="Distance, duration, mean and top speed, idle share, stops per km "
                "and positive kinetic energy of a speed trace.",
                example=["workbench duty stats taxi-shift",
                         "workbench duty stats my-day.csv --json",
                         "workbench duty stats - < my-day.csv"])
    p.add_argument("profile", metavar="PROFILE",
                   help=f"demo profile ({', '.join(demo_names('profile'))}), a CSV path, or "
                        f"'{STDIO}' for standard input")
    p.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(func=_stats)

    p = command(dsub, "fuel", help="fuel, energy and CO2 per km of one or more fuels on a duty",
                description="Run a duty through a vehicle's road load and an engine's "
                "efficiency map: fuel, energy and CO2 per km of each fuel, the first being the "
                "engine's original fuel.",
                example="workbench duty fuel taxi-shift --vehicle taxi --map taxi-si-1.8l "
                        "--fuel gasoline --fuel lpg --derate 0.05")
    p.add_argument("profile", metavar="PROFILE",
                   help=f"demo profile, a trace/mode-table CSV, or '{STDIO}' for standard input")
    p.add_argument("--vehicle", metavar="V",
                   help=f"demo vehicle ({', '.join(demo_names('vehicle'))}) or a TOML path; "
                        "needed for a speed trace")
    p.add_argument("--map", required=True, metavar="M",
                   help=f"demo map ({', '.join(demo_names('map'))}) or a map CSV path")
    p.add_argument("--fuel", required=True, action="append", metavar="F",
                   help="fuel id or fuel TOML; repeat for candidates. The first is the engine's "
                        "original fuel; --conversion, --derate and --efficiency-offset apply "
                        "to the others")
    p.add_argument("--conversion", choices=LazyChoices(_kinds), metavar="KIND",
                   help="how the engine is converted for the other fuels (%(choices)s); "
                        "default: inferred from the fuels (a gas on a diesel map: "
                        "dedicated-si; on a gasoline map: bi-fuel-si)")
    p.add_argument("--derate", type=finite_float, metavar="X",
                   help="share of full-load power lost on the candidate fuels (default: the "
                        "conversion's)")
    p.add_argument("--efficiency-offset", type=finite_float, metavar="X",
                   help="added to the map's brake efficiency on the candidate fuels, e.g. -0.01 "
                        "(default: the conversion's)")
    add_settings_options(p)
    p.add_argument("--json", action="store_true", help="print JSON")
    add_fuels_option(p)
    p.set_defaults(func=_fuel)


def add_settings_options(p: argparse.ArgumentParser) -> None:
    """Add the duty settings (accessories, engine-off at stops, extra idling) to a command;
    :func:`settings_from` reads them back."""
    p.add_argument("--accessory-kw", type=finite_float, default=0.0, metavar="KW",
                   help="accessory power while the engine runs, kW (default 0)")
    p.add_argument("--engine-off-at-stops", action="store_true",
                   help="stop the engine at every stop")
    p.add_argument("--extra-idle-share", type=finite_float, default=0.0, metavar="X",
                   help="share of time idling beyond the trace, e.g. waiting at a rank")


def _kinds() -> list[str]:
    from workbench.models.conversion import KINDS

    return list(KINDS)


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


def _profile(ref: str) -> DutyTrace | ModeTable:
    """PROFILE: a demo name, a file, or ``-`` for a CSV on standard input."""
    from workbench.io.profiles import parse_profile, read_profile

    if ref == STDIO:
        from workbench.interfaces.cli import read_bytes_arg

        return parse_profile(read_bytes_arg(ref, "PROFILE"), "<stdin>")
    return read_profile(resolve(ref, "profile", "PROFILE"))


def _stats(args: argparse.Namespace) -> None:
    from workbench.interfaces.cli import print_json
    from workbench.models.duty import DutyTrace, duty_stats

    trace = _profile(args.profile)
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


def settings_from(args: argparse.Namespace) -> DutySettings:
    """The duty settings of :func:`add_settings_options`, checked (errors name the option)."""
    from workbench.models.duty import DutySettings

    options = {"accessory_power": "--accessory-kw", "extra_idle_share": "--extra-idle-share"}
    try:
        return DutySettings(accessory_power=args.accessory_kw * 1e3,
                            engine_off_at_stops=args.engine_off_at_stops,
                            extra_idle_share=args.extra_idle_share)
    except InputError as exc:
        raise InputError(options.get(exc.where, exc.where), exc.message) from None


def _tailpipe(use: FuelPerDistance, fuel: Fuel, ch4_per_m: float) -> dict[str, float]:
    """A fuel's JSON keys per km: its use, slipped methane, and CO2 split into fossil and
    biogenic (``workbench.models.emissions.split_co2``; the biogenic part is reported apart)."""
    from workbench.models.emissions import split_co2

    fossil, biogenic = split_co2(use.co2_ttw_per_m, fuel.biogenic_carbon_share)
    return use.trade_units() | {"co2_ttw_fossil_g_per_km": fossil * 1e6,
                                "co2_ttw_biogenic_g_per_km": biogenic * 1e6,
                                "ch4_g_per_km": ch4_per_m * 1e6}


def _fuel(args: argparse.Namespace) -> None:
    from workbench.core.fuels import load_fuel
    from workbench.interfaces.cli import print_json
    from workbench.io.maps import read_map
    from workbench.io.vehicles import read_vehicle
    from workbench.models.combustion import fuel_sheet
    from workbench.models.conversion import (
        KINDS,
        REGIME_SLIP,
        convert,
        fuel_regime,
        histogram_gas_share,
        infer_kind,
        kind_derate,
        regime_mismatch,
        slipped,
    )
    from workbench.models.duty import DutyTrace
    from workbench.models.engine import fuel_per_distance_for, run_duty

    settings = settings_from(args)
    profile = _profile(args.profile)
    base_map = read_map(resolve(args.map, "map", "--map"))
    vehicle = None
    if isinstance(profile, DutyTrace):
        if args.vehicle is None:
            raise InputError("--vehicle", "a speed trace needs a vehicle (demo name or TOML)")
        vehicle = read_vehicle(resolve(args.vehicle, "vehicle", "--vehicle"))
    fuels = [load_fuel(f) for f in args.fuel]
    regime = fuel_regime(fuels[0])
    reference = fuel_sheet(fuels[0])
    rows, notices, defaults = [], [], []
    first = None
    for k, fuel in enumerate(fuels):
        sheet = fuel_sheet(fuel)
        name = args.conversion or infer_kind(fuel, regime, fuels[0])
        kind = KINDS["none"] if k == 0 else KINDS[name]
        if k and args.conversion is None and kind.name != "none":
            defaults.append(f"default: {fuel.id}: conversion = {kind.name} (inferred: "
                            f"{fuel.id} on a {regime} map; --conversion none keeps the map)")
        derate = args.derate if k and args.derate is not None else (
            kind_derate(kind, sheet, reference) if k else 0.0)
        offset = args.efficiency_offset if k and args.efficiency_offset is not None else (
            kind.efficiency_offset if k else 0.0)
        for key, value, given in (("derate", derate, args.derate),
                                  ("efficiency_offset", offset, args.efficiency_offset)):
            if k and given is None and value:
                defaults.append(f"default: {fuel.id}: {key} = {value:.3g} "
                                f"({kind.sources.get(key, kind.source)})")
        mismatch = regime_mismatch(fuel, kind, regime)
        if mismatch:
            notices.append(f"warning: {fuel.id}: {mismatch}")
        derived = kind.name in ("dedicated-si", "dual-fuel-ci")
        try:
            engine = convert(base_map, kind if derived else KINDS["none"], sheet, reference,
                             derate=derate, efficiency_offset=offset)
        except InputError as exc:
            option = {"derate": "--derate", "efficiency_offset": "--efficiency-offset"}
            raise InputError(option.get(exc.where, exc.where), exc.message) from None
        phys = run_duty(profile, vehicle, engine.engine_map, settings=settings)
        for key, (value, unit, source) in engine.parameters.items():
            defaults.append(f"default: {fuel.id}: {key} = {value:.4g} {unit} ({source})")
        first = first or phys
        record = {"fuel": fuel.id, "conversion": kind.name, "derate": derate,
                  "efficiency_offset": offset}
        # the kind's methane slip, or the regime's for a fuel burnt as made for (as a study)
        slip = kind.methane_slip if kind.name != "none" else REGIME_SLIP[fuel_regime(fuel)]
        if kind.name == "dual-fuel-ci":
            share = histogram_gas_share(phys, engine.engine_map)
            record["gas_energy_share"] = share
            total = phys.energy.fuel_energy
            gas, ch4 = slipped(fuel_per_distance_for(
                replace(phys.energy, fuel_energy=total * share), fuel, sheet), fuel, slip)
            pilot = fuel_per_distance_for(replace(phys.energy, fuel_energy=total * (1 - share)),
                                          fuels[0], reference)
            rows.append(record | _tailpipe(gas, fuel, ch4))
            rows.append({"fuel": f"{fuels[0].id} pilot", "conversion": kind.name,
                         "derate": derate, "efficiency_offset": offset,
                         "gas_energy_share": share} | _tailpipe(pilot, fuels[0], 0.0))
        else:
            use, ch4 = slipped(fuel_per_distance_for(phys.energy, fuel, sheet), fuel, slip)
            rows.append(record | _tailpipe(use, fuel, ch4))
    energy = first.energy
    record = {
        "profile": args.profile,
        "vehicle": args.vehicle,
        "map": args.map,
        "map_regime": regime,
        "distance_km": energy.distance / 1e3,
        "duration_h": energy.duration / 3600.0,
        "wheel_energy_mj_per_km": energy.wheel_energy / energy.distance * 1e-3,
        "fuels": rows,
        "notices": notices,
        "defaults": defaults,
    }
    if args.json:
        print_json(record)
        return
    head = {k: v for k, v in record.items() if k not in ("fuels", "notices", "defaults")}
    lines = [f"{k:34s} {_fmt(v)}" for k, v in head.items()]
    lines.append(f"{'':34s} " + " ".join(f"{r['fuel']:>14s}" for r in rows))
    keys = list(dict.fromkeys(k for r in rows for k in r))
    for key in keys:
        if key != "fuel":
            lines.append(f"{key:34s} " + " ".join(f"{_fmt(r.get(key)):>14s}" for r in rows))
    print("\n".join(lines + notices + defaults))


def _fmt(value: object) -> str:
    if isinstance(value, float):
        return "n/a" if value != value else f"{value:.4g}"
    return "-" if value is None else str(value)
