"""``workbench nox``: thermal-NO propensity of a fuel's flame at an engine setting."""

from __future__ import annotations

import argparse
from dataclasses import replace

from workbench.core.errors import InputError
from workbench.interfaces.cli import LazyChoices, add_fuels_option, command, finite_float

#: Keys of :meth:`workbench.models.nox.NOxPropensity.to_record` shown, with their units.
NOX_FIELDS: dict[str, str] = {
    "fuel": "",
    "baseline": "",
    "engine": "",
    "phi": "-",
    "dilution": "-",
    "t_unburnt_k": "K",
    "pressure_bar": "bar",
    "residence_time_ms": "ms",
    "flame_temperature_k": "K",
    "no_ppm": "ppm",
    "no_equilibrium_ppm": "ppm",
    "formation_time_ms": "ms",
    "no2_eq_g_per_mj": "g/MJ",
    "propensity_index": "-",
    "ppm_index": "-",
}

#: EngineConditions fields set from options, and the option that names them in errors.
_OPTIONS = {
    "compression_ratio": "--compression-ratio",
    "phi": "--phi",
    "dilution": "--dilution",
    "engine_speed_rpm": "--rpm",
    "residence_time": "--residence-time",
}


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``nox`` command to the top-level parser."""
    p = command(
        sub, "nox",
        help="thermal-NO propensity of a fuel's flame (Zeldovich chemistry, GRI-Mech 3.0)",
        description="Thermal NO formed in a fuel's burnt gas at an engine-like setting, and its "
        "index relative to a baseline fuel. A screening model: see `workbench docs nox`.",
        example=["workbench nox lpg --baseline gasoline",
                 "workbench nox natural-gas --engine lean-burn-gas --rpm 1800 --json"],
    )
    p.add_argument("fuel", help="library id or path to a fuel .toml file")
    p.add_argument("--baseline", help="fuel of index 1 (default: the fuel itself)")
    p.add_argument("--engine", choices=LazyChoices(_presets), default="spark-ignition",
                   metavar="PRESET",
                   help="engine setting preset: %(choices)s (default spark-ignition)")
    p.add_argument("--compression-ratio", type=finite_float, metavar="R",
                   help="compression ratio (default: the preset's)")
    p.add_argument("--phi", type=finite_float, metavar="X",
                   help="flame-zone equivalence ratio (default: the preset's)")
    p.add_argument("--dilution", type=finite_float, metavar="X",
                   help="burnt-gas (residual/EGR) mass fraction of the charge")
    p.add_argument("--rpm", dest="engine_speed_rpm", type=finite_float, metavar="N",
                   help="engine speed in rev/min, sets the residence time")
    p.add_argument("--residence-time", type=finite_float, metavar="MS",
                   help="residence time in ms (overrides the crank-angle window)")
    p.add_argument("--json", action="store_true", help="print JSON")
    add_fuels_option(p)
    p.set_defaults(func=_run)


def _presets() -> list[str]:
    from workbench.models.nox import ENGINE_PRESETS

    return sorted(ENGINE_PRESETS)


def _run(args: argparse.Namespace) -> None:
    from workbench.core.fuels import load_fuel
    from workbench.interfaces.cli import print_json
    from workbench.interfaces.sheets import format_table
    from workbench.models.nox import ENGINE_PRESETS, nox_propensity

    changes = {k: getattr(args, k) for k in _OPTIONS if getattr(args, k) is not None}
    if "residence_time" in changes:
        ms = changes["residence_time"]
        if not 1e-4 <= ms <= 1e4:  # the model's 1e-7 to 10 s, in the option's unit
            raise InputError("--residence-time", f"got {ms:g} ms; use 0.0001 to 10000 ms")
        changes["residence_time"] = ms * 1.0e-3
    try:
        conditions = replace(ENGINE_PRESETS[args.engine], name=args.engine, **changes)
    except InputError as exc:
        option = _OPTIONS.get(exc.where)
        if option is None:
            raise
        raise InputError(option, exc.message) from None
    fuel = load_fuel(args.fuel)
    baseline = None if args.baseline is None else load_fuel(args.baseline)
    record = nox_propensity(fuel, conditions, baseline=baseline).to_record()
    if args.json:
        print_json(record)
    else:
        print(format_table([record], NOX_FIELDS))
