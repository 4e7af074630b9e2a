"""``workbench fleet``: a vehicle class run from its vehicles' logger files (and fuel cards).

``workbench fleet run SOURCE --vehicle V --map M --fuel F`` lists each vehicle's km, fuel per
100 km, idle share and what cleaning dropped, the class's km-weighted figure and the P10–P90
between vehicles, and the files left out; with ``--fuel-cards`` also the observed consumption,
the calibration factor and each vehicle's residual. Formats: ``docs/fleet-logs.md``.
"""

from __future__ import annotations

import argparse
import math

from workbench.core.errors import InputError
from workbench.interfaces.cli import add_quiet, command, print_vehicles
from workbench.interfaces.commands.duty import (
    add_settings_options,
    demo_names,
    resolve,
    settings_from,
)


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``fleet`` command group to the top-level parser."""
    group = command(sub, "fleet", help="a vehicle class from its vehicles' logger files",
                    description="Run a whole class of vehicles from their own data-logger "
                    "files: each vehicle's trips through the vehicle and its engine map, "
                    "summed for the class, and compared with its fuel cards.",
                    example="workbench fleet run logs/ --vehicle taxi --map taxi-si-1.8l "
                            "--fuel gasoline")
    fsub = group.add_subparsers(dest="fleet_command", required=True, parser_class=type(group),
                                metavar="COMMAND")
    p = command(fsub, "run", help="run every vehicle's logs and sum the class",
                description="Fuel per km of every vehicle whose logs are found (trips, gaps, "
                "spikes and duplicates reported), the class's figure and its spread between "
                "vehicles; with --fuel-cards, the calibration factor against the fills.",
                example=["workbench fleet run 'logs/*.csv' --vehicle taxi --map taxi-si-1.8l "
                         "--fuel gasoline",
                         "workbench fleet run logs/ --vehicle taxi --map taxi-si-1.8l "
                         "--fuel gasoline --fuel-cards cards.csv --accessory-kw 1.5 "
                         "--extra-idle-share 0.15 --workers 2 --json"])
    p.add_argument("source", metavar="SOURCE",
                   help="logger file, folder, glob ('logs/*.csv') or Parquet dataset folder")
    p.add_argument("--vehicle", required=True, metavar="V",
                   help=f"demo vehicle ({', '.join(demo_names('vehicle'))}) or a TOML path")
    p.add_argument("--map", required=True, metavar="M",
                   help=f"demo map ({', '.join(demo_names('map'))}) or a map CSV path")
    p.add_argument("--fuel", required=True, metavar="F", help="the fuel the logs were driven on")
    p.add_argument("--fuel-cards", metavar="CSV", help="fuel-card fills to compare and calibrate")
    add_settings_options(p)
    p.add_argument("--workers", type=int, default=None, metavar="N",
                   help="local worker processes (default: one per core; 1 runs in process)")
    p.add_argument("--scheduler", metavar="ADDR",
                   help="dask scheduler address, e.g. tcp://10.0.0.5:8786 (needs the cluster "
                        "extra)")
    add_quiet(p)
    p.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(func=_run)


def _run(args: argparse.Namespace) -> None:
    from workbench.core.fuels import load_fuel
    from workbench.interfaces.cli import print_json
    from workbench.io.fuelcards import read_fuel_cards
    from workbench.io.maps import read_map
    from workbench.io.vehicles import read_vehicle
    from workbench.models.combustion import fuel_sheet
    from workbench.study.fleet import calibrate_fleet, card_energy_per_amount, run_fleet

    if args.workers is not None and args.workers < 1:
        raise InputError("--workers", "must be 1 or more")
    vehicle = read_vehicle(resolve(args.vehicle, "vehicle", "--vehicle"))
    engine_map = read_map(resolve(args.map, "map", "--map"))
    fuel = load_fuel(args.fuel)
    sheet = fuel_sheet(fuel)
    density = fuel.liquid_density or math.nan
    engine = args.scheduler or ("serial" if args.workers == 1 else "process")
    run = run_fleet(args.source, vehicle, engine_map, settings=settings_from(args),
                    engine=engine, workers=args.workers,
                    progress=None if args.quiet else print_vehicles)
    table = run.table()
    to_l100 = 1e8 / (sheet.lhv_mass * density)  # J/m -> L/100 km
    table["fuel_l_per_100km"] = table["fuel_energy_mj_per_km"] * 1e3 * to_l100
    agg = run.aggregate
    record: dict[str, object] = {
        "vehicles_found": run.found, "vehicles_used": len(run.summaries),
        "fuel_energy_mj_per_km": agg.energy_per_m / 1e3,
        "fuel_l_per_100km": agg.energy_per_m * to_l100,
        "fuel_l_per_100km_p10": agg.spread_per_m[0] * to_l100,
        "fuel_l_per_100km_p90": agg.spread_per_m[1] * to_l100,
        "distance_km": agg.energy.distance / 1e3, "share_idle": agg.energy.share_idle,
        "problems": list(run.problems),
    }
    cal = None
    cols = ["vehicle", "distance_km", "fuel_l_per_100km", "share_idle", "trips", "gaps",
            "spikes", "duplicates", "missing"]
    if args.fuel_cards:
        records = read_fuel_cards(args.fuel_cards)
        per_amount = card_energy_per_amount(fuel, sheet.lhv_mass, records.basis, "--fuel")
        cal, notes = calibrate_fleet(run, records, energy_per_amount=per_amount)
        cards = cal.per_vehicle(table["vehicle"])
        table = table.assign(**{k: cards[k].to_numpy() for k in cards})
        cols[3:3] = ["fuel_energy_mj_per_km", *cards]
        record["calibration"] = {"calibration_factor": cal.factor,
                                 "calibration_factor_se": cal.factor_se,
                                 "vehicles": cal.vehicles,
                                 "observed_mj_per_km": cal.observed_per_m / 1e3,
                                 "modelled_mj_per_km": cal.modelled_per_m / 1e3,
                                 "rms_residual_mj_per_km": cal.rms_residual_per_m / 1e3,
                                 "notes": list(notes),
                                 "residuals": cal.residuals.to_dict("records")}
    record["vehicles"] = table.to_dict("records")
    if args.json:
        print_json(record)
        return
    print(table[cols].to_string(index=False, float_format=lambda x: f"{x:.3g}"))
    print(f"\nclass: {record['fuel_l_per_100km']:.2f} L/100 km over "
          f"{record['distance_km']:,.0f} km, {len(run.summaries)} of {run.found} vehicles; "
          f"P10-P90 between vehicles {record['fuel_l_per_100km_p10']:.2f}-"
          f"{record['fuel_l_per_100km_p90']:.2f}")
    for line in run.problems:
        print(f"left out: {line}")
    if cal is not None:
        print(f"\nfuel cards: observed {cal.observed_per_m / 1e3:.3f} MJ/km, modelled "
              f"{cal.modelled_per_m / 1e3:.3f} MJ/km over {cal.vehicles} vehicles; "
              f"calibration factor {cal.factor:.3f} ± {cal.factor_se:.3f} (1 se), "
              f"RMS residual {cal.rms_residual_per_m / 1e3:.3f} MJ/km (each vehicle's "
              "observed and residual in the table above)")
