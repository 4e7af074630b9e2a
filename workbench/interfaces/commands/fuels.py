"""``workbench fuels``: the library, fuel sheets, blends and side-by-side comparison."""

from __future__ import annotations

import argparse
import json
from pathlib import Path

from workbench.core.constants import ZERO_CELSIUS
from workbench.core.errors import InputError
from workbench.core.fuels import (
    BASES,
    LIBRARY,
    find_fuel,
    fuel_entry,
    fuel_folders,
    list_fuels,
    load_fuel,
)
from workbench.interfaces.cli import STDIO, add_fuels_option, command, finite_float
from workbench.io.files import write_text_atomic


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``fuels`` command group to the top-level parser."""
    group = command(sub, "fuels", help="fuel library, sheets, blends and comparisons",
                    description="The fuel library (fuels/*.toml, format in fuels/README.md): "
                    "list it, show a fuel's property sheet, compare fuels, mix blends, and "
                    "size a fuel's on-board storage.",
                    example=["workbench fuels list", "workbench fuels compare lpg diesel"])
    fsub = group.add_subparsers(dest="fuels_command", required=True,
                                parser_class=type(group), metavar="COMMAND")

    from workbench.interfaces.commands.storage import register_storage

    register_storage(fsub)

    p = command(fsub, "list", help="list the fuels: your folders (--fuels, WORKBENCH_FUELS), "
                "then the shipped library",
                description="Id, state at 15 °C, storage kind and name of every fuel in your "
                "folders (--fuels, WORKBENCH_FUELS), then in the shipped library; read from "
                "the files' headers, no chemistry.",
                example=["workbench fuels list", "workbench fuels list --fuels my-fuels --json"])
    p.add_argument("--json", action="store_true", help="print JSON")
    add_fuels_option(p)
    p.set_defaults(func=_list)

    p = command(fsub, "show", help="the property sheet of one fuel",
                description="Heating values, stoichiometry, CO2 per MJ, Wobbe index, "
                "adiabatic flame and storage figures of one fuel.",
                example=["workbench fuels show lpg", "workbench fuels show my-fuel.toml --phi 0.9"])
    p.add_argument("fuel", help="library id or path to a fuel .toml file")
    _flame_options(p)
    p.set_defaults(func=_show)

    p = command(fsub, "compare", help="the sheets of several fuels side by side",
                description="The property sheets of several fuels as one table, a column "
                "per fuel.", example="workbench fuels compare gasoline lpg natural-gas")
    p.add_argument("fuels", nargs="+", metavar="FUEL", help="library ids or .toml paths")
    _flame_options(p)
    p.set_defaults(func=_compare)

    p = command(fsub, "blend", help="the sheet of a blend; optionally write it as a fuel file",
                description="Mix library fuels by mole, mass or liquid-volume fraction and "
                "show the blend's sheet; --write saves it as a [blend] fuel file.",
                example=["workbench fuels blend propane=0.6 n-butane=0.4 --basis liquid-volume",
                         "workbench fuels blend propane=0.3 n-butane=0.7 --write winter.toml"])
    p.add_argument("parts", nargs="+", metavar="FUEL=FRACTION",
                   help="parts of the blend, e.g. propane=0.6 n-butane=0.4")
    p.add_argument("--basis", choices=[b.replace("_", "-") for b in BASES], default="mole",
                   help="what the fractions measure (default: mole)")
    p.add_argument("--id", dest="blend_id", help="id of the blend (the file stem when written)")
    p.add_argument("--name", help="name of the blend")
    p.add_argument("--write", metavar="PATH",
                   help=f"write the blend as a fuel .toml file ('{STDIO}': print the file "
                        "instead of the sheet)")
    _flame_options(p)
    p.set_defaults(func=_blend)


def _flame_options(p: argparse.ArgumentParser) -> None:
    add_fuels_option(p)
    p.add_argument("--phi", type=finite_float, default=1.0,
                   help="fuel-air equivalence ratio of the flame (default 1)")
    p.add_argument("--t-unburnt", type=finite_float, default=25.0, metavar="C",
                   help="unburnt mixture temperature in °C (default 25)")
    p.add_argument("--pressure", type=finite_float, default=1.01325, metavar="BAR",
                   help="flame pressure in bar absolute (default 1.01325)")
    p.add_argument("--air", choices=["21/79", "dry"], default="21/79",
                   help="air model: 21/79 O2/N2 (default) or standard dry air")
    p.add_argument("--json", action="store_true", help="print JSON")


#: Storage figures added to a sheet: record key -> key of ``storage.storage_summary``.
STORED_FIELDS = {
    "storage_kind": "storage_kind",
    "storage_pressure_bar": "pressure_bar",
    "stored_density_kg_per_l": "density_kg_per_l",
    "energy_density_mj_per_l": "energy_density_mj_per_l",
    "vapour_pressure_bar": "vapour_pressure_bar",
    "compressibility_factor": "compressibility_factor",
}
STORED_UNITS = {
    "storage_kind": "", "storage_pressure_bar": "bar abs", "stored_density_kg_per_l": "kg/L",
    "energy_density_mj_per_l": "MJ/L as stored (LHV)", "vapour_pressure_bar": "bar abs",
    "compressibility_factor": "-",
}


def _records(fuels: list, args: argparse.Namespace) -> list[dict]:
    from workbench.interfaces.sheets import fuel_record
    from workbench.models.storage import storage_summary

    if args.pressure <= 0:
        raise InputError("--pressure", f"must be above zero bar, got {args.pressure:g}")
    if not -73.15 <= args.t_unburnt <= 1226.85:  # the flame model's 200-1500 K
        raise InputError("--t-unburnt", f"must be -73 to 1226 °C, got {args.t_unburnt:g}")
    records = []
    for f in fuels:
        record = fuel_record(f, phi=args.phi, t_unburnt=args.t_unburnt + ZERO_CELSIUS,
                             p=args.pressure * 1e5, air=args.air)
        stored = storage_summary(f)
        record.update({k: stored.get(src) for k, src in STORED_FIELDS.items()})
        records.append(record)
    return records


def _emit(records: list[dict], args: argparse.Namespace, *, many: bool) -> None:
    from workbench.interfaces.cli import print_json
    from workbench.interfaces.sheets import SHEET_FIELDS, format_table

    if args.json:
        print_json(records if many else records[0])
    else:
        print(format_table(records, SHEET_FIELDS | STORED_UNITS))


def _list(args: argparse.Namespace) -> None:
    from workbench.interfaces.cli import print_json

    rows = []
    for fid in list_fuels():
        path = find_fuel(fid)
        try:
            entry = fuel_entry(fid)
        except InputError as exc:  # one bad file of the user's does not hide the others
            rows.append({"id": fid, "name": None, "state": None, "storage": None,
                         "path": str(path), "error": str(exc)})
            continue
        rows.append({"id": fid, "name": entry.name, "state": "gas" if entry.is_gas else "liquid",
                     "storage": entry.storage.kind if entry.storage else None,
                     "path": str(path), "error": None})
    if args.json:
        print_json(rows)
        return
    if not rows:
        searched = ", ".join(str(f) for f in fuel_folders())
        raise InputError("fuels list", f"no fuel files found in {searched}; reinstall the "
                         "package or give --fuels DIR")
    w = max(len(r["id"]) for r in rows)
    for r in rows:
        folder = Path(r["path"]).parent
        where = "" if folder == LIBRARY else f"  ({folder})"
        if r["error"]:
            print(f"{r['id'].ljust(w)}  error: {r['error']}")
        else:
            print(f"{r['id'].ljust(w)}  {r['state']:<6}  {r['storage'] or '—':<10}  "
                  f"{r['name']}{where}")


def _show(args: argparse.Namespace) -> None:
    _emit(_records([load_fuel(args.fuel)], args), args, many=False)


def _compare(args: argparse.Namespace) -> None:
    _emit(_records([load_fuel(f) for f in args.fuels], args), args, many=True)


def _blend(args: argparse.Namespace) -> None:
    from workbench.core.fuels import blend

    parts: dict[str, float] = {}
    for text in args.parts:
        ref, sep, frac = text.rpartition("=")
        if not sep or not ref:
            raise InputError(text, "write each part as FUEL=FRACTION, e.g. propane=0.6")
        try:
            parts[ref] = float(frac)
        except ValueError:
            raise InputError(text, f"fraction {frac!r} is not a number") from None
    basis = args.basis.replace("-", "_")
    fuel = blend(parts, basis, id=args.blend_id, name=args.name, where="blend")
    records = _records([fuel], args)
    if args.write == STDIO:
        print(blend_file_text(parts, basis, name=fuel.name), end="")
        return
    if args.write:
        write_blend_file(Path(args.write), parts, basis, name=fuel.name)
    _emit(records, args, many=False)


def write_blend_file(path: Path, parts: dict[str, float], basis: str, *, name: str) -> None:
    """Write a ``[blend]`` fuel file, whole or not at all.

    Parameters
    ----------
    path : pathlib.Path
        Destination ``.toml`` file; its stem becomes the fuel id.
    parts : dict of str to float
        Library ids (or paths) and fractions [-].
    basis : str
        ``"mole"``, ``"mass"`` or ``"liquid_volume"``.
    name : str
        Name written into the file.
    """
    write_text_atomic(path, blend_file_text(parts, basis, name=name), suffix=".toml",
                      option="--write")


def blend_file_text(parts: dict[str, float], basis: str, *, name: str) -> str:
    """The text of a ``[blend]`` fuel file (see :func:`write_blend_file`)."""
    state = "gas" if fuel_entry(next(iter(parts))).is_gas else "liquid"
    lines = [
        f"name = {json.dumps(name, ensure_ascii=False)}",
        f'state = "{state}"',
        "",
        "[blend]",
        f'basis = "{basis}"',
        'source = "user blend written by workbench fuels blend"',
    ]
    lines += [f"{json.dumps(ref, ensure_ascii=False)} = {frac!r}" for ref, frac in parts.items()]
    return "\n".join(lines) + "\n"
