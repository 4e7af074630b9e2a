"""Result tables as a person reads them: names instead of ids, labels with units, rounded.

The tables of :class:`~workbench.study.results.StudyResult` keep glossary column names and
machine ids for CSV, JSON and tests. The report and the panels show them through this module:
ids become the study's names (``workbench.study.naming``), columns get a label with their unit
and the study currency, internal columns (colours, baseline flags) are dropped, and numbers are
rounded to three significant figures with thousands separators, shares as percentages, and
"n/a" where a figure does not apply.
"""

from __future__ import annotations

import math
import re

import pandas as pd

from workbench.study.results import StudyResult, missing_reason

#: Columns that only drive charts or code; never shown to a reader.
HIDDEN = frozenset({"colour", "is_baseline", "input", "draw"})
#: Labels of columns whose name alone reads badly; ``{cur}`` is the study currency.
LABELS = {
    "candidate": "option", "vehicle_class": "vehicle class", "label": "input", "unit": "unit",
    "name": "option", "npv_vs_baseline": "NPV vs baseline [{cur}]",
    "npv_p10": "NPV P10 [{cur}]", "npv_p50": "NPV P50 [{cur}]", "npv_p90": "NPV P90 [{cur}]",
    "p_npv_positive": "chance NPV > 0 [%]",
    "p_discounted_payback_within_horizon": "chance of discounted payback within the horizon "
                                           "[%]",
    "co2e_avoided_t": "CO2e avoided over the programme [t]", "raises_co2e": "raises CO2e",
    "nox_avoided_kg": "NOx avoided over the programme [kg]", "raises_nox": "raises NOx",
    "payback_years": "simple payback [years]",
    "discounted_payback_years": "discounted payback [years]",
    "cost_per_t_co2e_avoided": "cost per t CO2e avoided [{cur}/t]",
    "cost_per_kg_nox_avoided": "cost per kg NOx avoided [{cur}/kg]",
    "levelised_cost_per_km": "levelised cost [{cur}/km]",
    "cost_per_km": "cost per km in year 1, conversion annualised [{cur}/km]",
    "cost_fuel_per_km": "fuel and carbon [{cur}/km]",
    "cost_upkeep_per_km": "upkeep [{cur}/km]",
    "cost_capital_per_km": "conversion capital [{cur}/km]",
    "co2_ttw_g_per_km": "CO2 tank-to-wheel [g/km]",
    "co2e_wtw_g_per_km": "CO2e well-to-wheel [g/km]",
    "nox_g_per_km": "NOx tailpipe [g/km]",
    "nox_engine_out_g_per_km": "NOx engine-out [g/km]",
    "pm_mg_per_km": "particulate mass [mg/km]", "co_g_per_km": "CO [g/km]",
    "thc_g_per_km": "hydrocarbons incl. methane [g/km]",
    "role": "burnt as", "energy_share": "share of the fuel energy [%]",
    "ch4_g_per_km": "methane slipped [g/km]",
    "co2e_ttw_g_per_km": "CO2e tailpipe, CO2 and methane [g/km]",
    "in_best_mix": "in the best mix", "quantity": "quantity", "source": "source",
    "fuel_energy_mj_per_km": "fuel energy [MJ/km]",
    "fuel_l_per_100km": "fuel [L/100 km]",
    "fuel_kg_per_100km": "fuel [kg/100 km]",
    "share_out_of_map": "time outside the map [%]",
    "share_full_load": "time at full load [%]",
    "year": "year", "cash_flow": "cash flow [{cur}]",
    "cash_flow_vs_baseline": "cash flow vs baseline [{cur}]",
    "discounted_vs_baseline": "discounted vs baseline [{cur}]",
    "cumulative_discounted_vs_baseline": "cumulative discounted vs baseline [{cur}]",
    "fuel_energy_gj": "fuel energy [GJ]", "co2_ttw_t": "CO2 tank-to-wheel [t]",
    "co2e_wtw_t": "CO2e well-to-wheel [t]", "nox_t": "NOx [t]",
    "catalyst_replacements": "catalyst replacements", "cost_total": "costs [{cur}]",
    "month": "month", "catalyst_efficiency": "catalyst efficiency [%]",
    "replaced": "catalyst replaced",
    "energy_density_mj_per_kg": "fuel energy per kg [MJ/kg]",
    "energy_density_mj_per_l": "fuel energy per litre [MJ/L]",
    "system_energy_density_mj_per_kg": "tank system energy per kg [MJ/kg]",
    "system_energy_density_mj_per_l": "tank system energy per litre [MJ/L]",
    "tank_volume_l": "tank volume [L]", "tank_system_mass_kg": "tank system mass [kg]",
    "range_km": "range [km]", "low_value": "low value", "high_value": "high value",
    "stack_kw": "fuel-cell system power [kW]", "fuel_cell_mass_kg": "fuel-cell system mass [kg]",
    "rated_system_efficiency": "system efficiency at rated power [%]",
    "mean_system_efficiency": "system efficiency over the duty [%]",
    "h2_kg_per_100km": "hydrogen [kg/100 km]", "tank_pressure_bar": "tank pressure [bar]",
    "tank": "tank type", "tank_h2_kg": "usable hydrogen [kg]",
    "tank_mass_kg": "empty tank mass [kg]", "buffer_kwh": "buffer battery [kWh]",
    "buffer_mass_kg": "buffer battery mass [kg]",
    "buffer_fits": "buffer holds the duty's swing", "pathway": "hydrogen pathway",
    "h2_co2e_kg_per_kg": "CO2e of making the hydrogen [kg/kg]",
    "npv_at_low": "NPV at low [{cur}]", "npv_at_high": "NPV at high [{cur}]",
    "swing": "swing [{cur}]", "nominal_value": "value now",
    "breakeven_value": "value where the NPV is zero",
    "engine_speed_rpm": "engine speed [rpm]", "torque_nm": "torque [N·m]", "hours": "hours [h]",
    "brake_efficiency": "brake efficiency [%]", "phi": "equivalence ratio phi",
    "flame_temperature_k": "flame temperature [K]", "no_ppm": "thermal NO [ppm]",
    "profile": "duty profile", "distance_km": "distance per pass [km]",
    "duration_h": "time per pass [h]", "mean_speed_km_per_h": "mean speed, stops included [km/h]",
    "max_speed_km_per_h": "top speed [km/h]", "idle_share": "time standing [%]",
    "stops_per_km": "stops per km",
    "device": "aftertreatment", "replacements": "replacements",
    "replacement_cost": "replacement cost [{cur}]", "reductant_cost": "reductant cost [{cur}]",
    "best_interval_months": "best replacement interval [months]",
    "best_total_cost": "upkeep + NOx damage at best interval [{cur}]",
    "vehicle": "vehicle", "distance_logged_km": "distance logged [km]",
    "share_idle": "time idling [%]", "outlier": "outlier (Tukey's fences)",
    "applied": "applied to the run", "calibration_factor": "calibration factor [-]",
    "calibration_factor_se": "its standard error [-]", "vehicles": "vehicles in the fit",
    "fills": "fuel-card fills", "card_km": "distance on the cards [km]",
    "observed_mj_per_km": "observed fuel energy [MJ/km]",
    "modelled_mj_per_km": "modelled fuel energy [MJ/km]",
    "residual_mj_per_km": "residual, observed − calibrated model [MJ/km]",
    "rms_residual_mj_per_km": "RMS residual per vehicle [MJ/km]",
    "energy_kwh_per_km": "energy bought [kWh/km]",
    "capacity_kwh": "battery capacity, new [kWh]", "pack_mass_kg": "battery mass [kg]",
    "added_mass_kg": "mass added, battery less powertrain saved [kg]",
    "payload_loss_kg": "payload lost to the battery [kg]",
    "payload_kg": "payload of the vehicle file [kg]",
    "battery_kwh_per_km": "energy from the battery [kWh/km]",
    "regen_share_of_braking": "braking energy regenerated [%]",
    "peak_power_kw": "peak battery power [kW]", "charging_power_kw": "charging power [kW]",
    "charging_hours": "time to recharge the range [h]",
    "charging_window_h": "charging window [h]", "charging_fits": "recharge fits the window",
    "charging_message": "charging note",
    "capital": "capital [{cur}]", "grants": "grants [{cur}]",
    "financing": "financing, repayments less borrowing [{cur}]",
    "loan_balance": "loan balance settled [{cur}]", "fuel_tax": "fuel tax paid [{cur}]",
    "fuel_tax_vs_baseline": "fuel tax vs baseline [{cur}]",
    "converted_share": "share converted that year [%]",
    "vehicles_converted": "vehicles converted that year",
    "running_converted_share": "share running converted [%]",
    "loan_share": "share borrowed [%]", "loan_rate": "loan rate [%]",
    "loan_term_years": "loan term [years]",
    "loan_balance_at_horizon": "loan balance settled at the horizon [{cur}]",
    "fuel_tax_paid": "fuel tax paid over the programme [{cur}]",
    "fuel_tax_change_pv": "tax revenue change vs baseline, present value [{cur}]",
    "kind": "station", "location": "where", "classes": "serves",
    "daily_fuel_kg": "fuel a day [kg]", "daily_fuel_l": "fuel a day [L]",
    "fills_per_day": "fills a day", "window_h": "refuelling window [h]",
    "compressor_kg_per_h": "compressor [kg/h]", "compressor_sm3_per_h": "compressor [Sm3/h]",
    "buffer_m3": "buffer storage, water volume [m3]", "tank_m3": "tank, water volume [m3]",
    "dispensers": "dispensers", "upkeep_per_year": "upkeep per year [{cur}]",
    "lost_hours_per_year": "vehicle hours lost a year [h]",
    "lost_time_cost_per_year": "cost of the hours lost a year [{cur}]",
}
#: Words for a station's kind and location.
STATION_WORDS = {"cng": "compressed gas (CNG)", "lpg": "liquefied gas (LPG)",
                 "depot": "at the depot", "off-depot": "off the depot"}
#: Titles of the result tables for a reader.
TABLE_TITLES = {
    "candidates": "Options over the whole programme", "per_km": "Options per vehicle class",
    "fuel_use": "Each fuel an option burns",
    "cash_flows": "Cash flows by year", "fleet_years": "Fleet totals by year",
    "nox_monthly": "Tailpipe NOx by month as catalysts age", "storage": "Storage and range",
    "monte_carlo": "Monte Carlo draws of the NPV", "tornado": "One input at a time",
    "breakeven": "Values at which the NPV is zero",
    "operating_points": "Engine operating points", "flame": "Flame temperature and thermal NO",
    "catalyst": "Catalysts and their replacement", "inputs": "Inputs as written",
    "duty": "Duty profiles per class",
    "defaults": "Defaults the run applied", "notices": "Warnings",
    "class_decisions": "Each class converted on its own", "best_mix": "Best mix by class",
    "vehicles": "Each vehicle of a class run from its logs",
    "calibration": "The model against the fuel cards",
    "battery": "Battery-electric options: pack, payload and charging",
    "fuel_cell": "Fuel-cell drives: stack, hydrogen and tank",
    "programme_years": "Capital, grants, financing and fuel tax by year",
    "phasing": "Conversions by year", "funding": "Grants, loans and fuel tax",
    "stations": "Refuelling stations",
}
_PERCENT = re.compile(r"^(p_|share_)|_share$|efficiency$|^loan_rate$")
_WHOLE = frozenset({"year", "month", "replacements", "catalyst_replacements", "draw",
                    "vehicles", "fills", "dispensers", "loan_term_years"})


def column_label(column: str, currency: str) -> str:
    """Label of a result column for a reader, with its unit and the study currency.

    Parameters
    ----------
    column : str
        Glossary column name.
    currency : str
        Study currency.

    Returns
    -------
    str
    """
    return LABELS.get(column, column.replace("_", " ")).replace("{cur}", currency)


def significant(value: float, digits: int = 3) -> str:
    """A number rounded to ``digits`` significant figures, with thousands separators.

    Parameters
    ----------
    value : float
        The number; NaN gives "n/a".
    digits : int, optional
        Significant figures.

    Returns
    -------
    str
        E.g. ``11555425.8 -> "11,600,000"``, ``0.19745 -> "0.197"``, ``-3.2 -> "-3.20"``.
    """
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    decimals = max(digits - 1 - exponent, 0)
    rounded = round(value, digits - 1 - exponent)
    return f"{rounded:,.{decimals}f}"


def money(value: float, currency: str = "", *, signed: bool = False) -> str:
    """Money as a reader wants it: millions as ``11.6 M``, three significant figures.

    Parameters
    ----------
    value : float
        Amount [currency]; NaN gives "n/a".
    currency : str, optional
        Appended after a space when given.
    signed : bool, optional
        Show a plus sign on positive amounts.

    Returns
    -------
    str
    """
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    sign = "+" if signed and value > 0 else ""
    text = (f"{significant(value / 1e6)} M" if abs(value) >= 1e6 else significant(value))
    return f"{sign}{text}{' ' + currency if currency else ''}"


def percent(share: float, *, signed: bool = False) -> str:
    """A share [-] as a percentage with at most one decimal ("n/a" for NaN)."""
    if share is None or (isinstance(share, float) and math.isnan(share)):
        return "n/a"
    value = 100.0 * share
    text = f"{value:+.1f}" if signed else f"{value:.1f}"
    text = text[:-2] if text.endswith(".0") else text
    return f"{text} %"


def _cell(column: str, value: object) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int | float) and not isinstance(value, bool):
        v = float(value)
        if math.isnan(v):
            return "n/a"
        if column in _WHOLE:
            return f"{round(v)}"
        if _PERCENT.search(column):
            return percent(v).removesuffix(" %")
        return significant(v)
    return str(value)


def reader_table(name: str, result: StudyResult, table: pd.DataFrame | None = None
                 ) -> pd.DataFrame:
    """One result table as text for a reader: names, labelled columns, rounded values.

    Parameters
    ----------
    name : str
        Table name (a key of ``StudyResult.tables()``).
    result : StudyResult
        The result (its names and currency).
    table : pandas.DataFrame, optional
        Rows to show (default: the whole table).

    Returns
    -------
    pandas.DataFrame
        String cells, columns labelled; ids replaced by names.
    """
    t = (result.tables()[name] if table is None else table).copy()
    names = result.names
    if "candidate" in t and "name" in t:
        t = t.drop(columns=["candidate"])
    elif "candidate" in t:
        t["candidate"] = t["candidate"].map(names.candidate)
    if "vehicle_class" in t:
        t["vehicle_class"] = t["vehicle_class"].map(names.vehicle_class)
    if "fuel" in t:
        t["fuel"] = t["fuel"].map(lambda f: " / ".join(names.fuel(x) for x in str(f).split("/")))
    if "pathway" in t:  # a hydrogen pathway's id, or "study file" for a figure given
        from workbench.models.fuelcell import HYDROGEN_PATHWAYS  # Cantera: only when needed

        t["pathway"] = t["pathway"].map(
            lambda p: HYDROGEN_PATHWAYS[p].name if p in HYDROGEN_PATHWAYS else p)
    if name == "stations":
        t["classes"] = t["classes"].map(
            lambda ids: ", ".join(names.vehicle_class(x) for x in str(ids).split(", ")))
        for column in ("kind", "location"):
            t[column] = t[column].map(lambda w: STATION_WORDS.get(w, w))
    records = t.to_dict("records")
    shown = [c for c in t.columns if c not in HIDDEN]
    return pd.DataFrame({column_label(c, result.currency):
                         [(missing_reason(r, c) if name == "candidates" else None)
                          or _cell(c, r[c]) for r in records] for c in shown})


def side_by_side(result: StudyResult, name: str = "candidates",
                 vehicle_class: str | None = None) -> pd.DataFrame:
    """A result table turned so that the options stand side by side as columns.

    Parameters
    ----------
    result : StudyResult
        The result.
    name : {"candidates", "per_km", "storage"}, optional
        Table with one row per option (or per option and class).
    vehicle_class : str, optional
        For a per-class table, the class to show.

    Returns
    -------
    pandas.DataFrame
        One row per figure (labelled with its unit), one column per option name.
    """
    t = result.tables()[name]
    if vehicle_class is not None:
        t = t[t["vehicle_class"] == vehicle_class].drop(columns=["vehicle_class"])
    shown = reader_table(name, result, t)
    options = [result.names.candidate(c) for c in t["candidate"]]
    first = column_label("name" if "name" in t else "candidate", result.currency)
    shown = shown.drop(columns=[first])
    out = shown.T
    out.columns = options
    out.insert(0, "figure", out.index)
    return out.reset_index(drop=True)
