"""Fuel sheets as flat records: the glossary's names and interface units.

The command line's JSON, the panels' tables and the report all read these records, so a
quantity has one name everywhere (see ``docs/glossary.md``).
"""

from __future__ import annotations

import math

from workbench.core.constants import P_REF, T_REF
from workbench.core.fuels import Fuel, load_fuel
from workbench.models.combustion import AirModel, flame_state, fuel_sheet

#: Record keys with their unit labels, in display order.
SHEET_FIELDS: dict[str, str] = {
    "id": "",
    "name": "",
    "state": "",
    "molar_mass_kg_per_kmol": "kg/kmol",
    "carbon_mass_fraction": "-",
    "hydrogen_mass_fraction": "-",
    "oxygen_mass_fraction": "-",
    "h_to_c_ratio": "mol/mol",
    "stoich_afr_mass": "kg/kg",
    "stoich_afr_mole": "mol/mol",
    "lhv_mj_per_kg": "MJ/kg",
    "hhv_mj_per_kg": "MJ/kg",
    "lhv_mj_per_kmol": "MJ/kmol",
    "hhv_mj_per_kmol": "MJ/kmol",
    "lhv_mj_per_m3": "MJ/m3 (15 °C, 101.325 kPa)",
    "hhv_mj_per_m3": "MJ/m3 (15 °C, 101.325 kPa)",
    "wobbe_index_mj_per_m3": "MJ/m3 (gross, 15 °C)",
    "liquid_density_kg_per_m3": "kg/m3 (15 °C)",
    "co2_kg_per_kg": "kg/kg",
    "co2_g_per_mj": "g/MJ (LHV)",
    "biogenic_carbon_share": "- (of its carbon)",
    "pathways": "g CO2e/MJ well-to-tank",
    "water_kg_per_kg": "kg/kg",
    "phi": "-",
    "t_unburnt_k": "K",
    "pressure_bar": "bar",
    "air_model": "",
    "flame_temperature_k": "K",
}


def fuel_record(
    fuel: Fuel | str,
    *,
    phi: float = 1.0,
    t_unburnt: float = T_REF,
    p: float = P_REF,
    air: AirModel = "21/79",
) -> dict[str, float | str | None]:
    """One fuel's sheet as a flat record in interface units.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel.
    phi : float
        Equivalence ratio of the flame [-].
    t_unburnt : float
        Unburnt temperature of the flame [K].
    p : float
        Flame pressure [Pa].
    air : {"21/79", "dry"}
        Air model.

    Returns
    -------
    dict
        Keys of :data:`SHEET_FIELDS`; values in the units listed there; None where a
        quantity does not apply (volume-based values of liquids).
    """
    fuel = load_fuel(fuel)
    s = fuel_sheet(fuel, air=air)
    flame = flame_state(fuel, phi, t_unburnt=t_unburnt, p=p, air=air)

    def opt(value: float | None, scale: float = 1.0) -> float | None:
        return None if value is None or math.isnan(value) else value * scale

    return {
        "id": fuel.id,
        "name": fuel.name,
        "state": "gas" if fuel.is_gas else "liquid",
        "molar_mass_kg_per_kmol": s.molar_mass,
        "carbon_mass_fraction": s.carbon_mass_fraction,
        "hydrogen_mass_fraction": s.hydrogen_mass_fraction,
        "oxygen_mass_fraction": s.oxygen_mass_fraction,
        "h_to_c_ratio": None if math.isinf(s.h_to_c_ratio) else s.h_to_c_ratio,
        "stoich_afr_mass": s.stoich_afr_mass,
        "stoich_afr_mole": s.stoich_afr_mole,
        "lhv_mj_per_kg": s.lhv_mass / 1e6,
        "hhv_mj_per_kg": s.hhv_mass / 1e6,
        "lhv_mj_per_kmol": s.lhv_mole / 1e6,
        "hhv_mj_per_kmol": s.hhv_mole / 1e6,
        "lhv_mj_per_m3": opt(s.lhv_volume, 1e-6),
        "hhv_mj_per_m3": opt(s.hhv_volume, 1e-6),
        "wobbe_index_mj_per_m3": opt(s.wobbe_index, 1e-6),
        "liquid_density_kg_per_m3": s.liquid_density,
        "co2_kg_per_kg": s.co2_mass,
        "co2_g_per_mj": s.co2_per_energy * 1e9,
        "biogenic_carbon_share": fuel.biogenic_carbon_share,
        "pathways": ", ".join(f"{p.name} {p.wtt_co2e_per_energy * 1e9:g}"
                              for p in fuel.pathways) or None,
        "water_kg_per_kg": s.water_mass,
        "phi": phi,
        "t_unburnt_k": t_unburnt,
        "pressure_bar": p / 1e5,
        "air_model": air,
        "flame_temperature_k": flame.temperature,
    }


def format_table(records: list[dict], units: dict[str, str]) -> str:
    """Lay records out side by side as text: one row per key, one column per record.

    Parameters
    ----------
    records : list of dict
        Records with the same keys.
    units : dict of str to str
        Unit label per key, shown after the key.

    Returns
    -------
    str
        The table, ready to print.
    """
    keys = [k for k in units if any(k in r for r in records)]
    label = {k: f"{k} [{units[k]}]" if units[k] else k for k in keys}
    width = max(len(v) for v in label.values())
    cols = [[format_cell(r.get(k)) for k in keys] for r in records]
    col_w = [max(len(c) for c in col) for col in cols]
    lines = []
    for i, k in enumerate(keys):
        cells = "  ".join(col[i].rjust(w) for col, w in zip(cols, col_w, strict=True))
        lines.append(f"{label[k].ljust(width)}  {cells}")
    return "\n".join(lines)


def format_cell(value: object) -> str:
    """A value as table text: None as a dash, big numbers with thousands separators.

    Parameters
    ----------
    value : object
        Number, flag, text or None.

    Returns
    -------
    str
    """
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        if 1e4 <= abs(value) < 1e15:
            return f"{value:,.0f}"
        if value == 0 or 1e-3 <= abs(value) < 1e4:
            return f"{value:.4g}" if abs(value) < 10 else f"{value:.5g}"
        return f"{value:.3e}"
    return str(value)
