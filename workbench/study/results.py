"""The study's results: tidy pandas tables with fixed columns.

Charts, the report, CSV export, the JSON output and the tests all read these tables, so each
column name is a glossary name with its unit in it. Money columns are in the study's currency
(its code is :attr:`StudyResult.currency`); "vs baseline" means candidate minus baseline, so a
positive NPV means the candidate saves money.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import pandas as pd

from workbench.study.naming import Names

if TYPE_CHECKING:
    from workbench.models.engine import EngineMap

#: Columns of each table, in order. Every table is long ("tidy"): one row per candidate and
#: whatever else the row is about.
COLUMNS: dict[str, tuple[str, ...]] = {
    # one row per candidate (the baseline included, with is_baseline true)
    "candidates": (
        "candidate", "name", "fuel", "is_baseline", "colour",
        "fuel_energy_mj_per_km", "co2_ttw_g_per_km", "co2e_wtw_g_per_km", "nox_g_per_km",
        "cost_per_km", "levelised_cost_per_km", "npv_vs_baseline", "payback_years",
        "discounted_payback_years", "co2e_avoided_t", "raises_co2e", "cost_per_t_co2e_avoided",
        "nox_avoided_kg", "raises_nox", "cost_per_kg_nox_avoided", "p_npv_positive",
        "p_discounted_payback_within_horizon", "npv_p10", "npv_p50", "npv_p90",
    ),
    # one row per candidate x vehicle class: the duty-level figures
    "per_km": (
        "candidate", "vehicle_class", "fuel", "fuel_energy_mj_per_km", "energy_kwh_per_km",
        "fuel_l_per_100km", "fuel_kg_per_100km", "co2_ttw_g_per_km", "co2e_wtw_g_per_km",
        "nox_engine_out_g_per_km", "nox_g_per_km", "pm_mg_per_km", "co_g_per_km",
        "thc_g_per_km", "cost_fuel_per_km", "cost_upkeep_per_km", "cost_capital_per_km",
        "cost_per_km", "share_out_of_map", "share_full_load",
    ),
    # one row per candidate x vehicle class x fuel it burns (a dual-fuel engine: gas, pilot)
    "fuel_use": (
        "candidate", "vehicle_class", "fuel", "role", "energy_share", "fuel_energy_mj_per_km",
        "fuel_l_per_100km", "fuel_kg_per_100km", "co2_ttw_g_per_km", "ch4_g_per_km",
        "co2e_ttw_g_per_km", "co2e_wtw_g_per_km",
    ),
    # one row per candidate x year of the programme (year 0 = conversion year)
    "cash_flows": (
        "candidate", "year", "cash_flow", "cash_flow_vs_baseline", "discounted_vs_baseline",
        "cumulative_discounted_vs_baseline",
    ),
    # one row per candidate x year: fleet totals
    "fleet_years": (
        "candidate", "year", "fuel_energy_gj", "co2_ttw_t", "co2e_wtw_t", "nox_t",
        "catalyst_replacements", "cost_total",
    ),
    # one row per candidate x year: capital (net of nothing), grants, financing's net outflow,
    # the loan balance settled at the horizon, fuel tax paid and its change on the baseline
    "programme_years": (
        "candidate", "year", "capital", "grants", "financing", "loan_balance", "fuel_tax",
        "fuel_tax_vs_baseline",
    ),
    # one row per candidate x class it converts x year: the share converted that year
    "phasing": (
        "candidate", "vehicle_class", "year", "converted_share", "vehicles_converted",
        "running_converted_share",
    ),
    # one row per candidate: its capital, grants, loan and the fuel tax it pays (the public
    # client's revenue change as a present value)
    "funding": (
        "candidate", "capital", "grants", "loan_share", "loan_rate", "loan_term_years",
        "loan_balance_at_horizon", "fuel_tax_paid", "fuel_tax_change_pv", "npv_vs_baseline",
    ),
    # one row per candidate with a refuelling station: its size, money and the time lost
    "stations": (
        "candidate", "fuel", "kind", "location", "classes", "daily_fuel_kg", "daily_fuel_l",
        "fills_per_day", "window_h", "compressor_kg_per_h", "compressor_sm3_per_h",
        "buffer_m3", "tank_m3", "dispensers", "capital", "upkeep_per_year",
        "lost_hours_per_year", "lost_time_cost_per_year",
    ),
    # one row per candidate x vehicle class x month: tailpipe NOx as catalysts age
    "nox_monthly": (
        "candidate", "vehicle_class", "month", "catalyst_efficiency", "nox_g_per_km",
        "replaced",
    ),
    # one row per candidate x vehicle class: storage and range of its fuel
    "storage": (
        "candidate", "vehicle_class", "fuel", "energy_density_mj_per_kg", "energy_density_mj_per_l",
        "system_energy_density_mj_per_kg", "system_energy_density_mj_per_l",
        "tank_volume_l", "tank_system_mass_kg", "range_km",
    ),
    # one row per battery-electric candidate x vehicle class: the pack sized for the range,
    # its mass against the vehicle's payload, and whether a recharge fits the window
    "battery": (
        "candidate", "vehicle_class", "range_km", "capacity_kwh", "pack_mass_kg",
        "added_mass_kg", "payload_loss_kg", "payload_kg", "battery_kwh_per_km",
        "energy_kwh_per_km", "regen_share_of_braking", "peak_power_kw", "charging_power_kw",
        "charging_hours", "charging_window_h", "charging_fits", "charging_message",
    ),
    # one row per fuel-cell candidate x vehicle class: the stack, its efficiency, the buffer,
    # the hydrogen tank for the range and the mass the vehicle carries
    "fuel_cell": (
        "candidate", "vehicle_class", "stack_kw", "fuel_cell_mass_kg",
        "rated_system_efficiency", "mean_system_efficiency", "h2_kg_per_100km", "range_km",
        "tank_pressure_bar", "tank", "tank_h2_kg", "tank_volume_l", "tank_mass_kg",
        "tank_system_mass_kg", "buffer_kwh", "buffer_mass_kg", "buffer_fits", "added_mass_kg",
        "payload_loss_kg", "payload_kg", "pathway", "h2_co2e_kg_per_kg",
    ),
    # one row per candidate x Monte Carlo draw
    "monte_carlo": ("candidate", "draw", "npv_vs_baseline"),
    # one row per candidate x uncertain input: one-at-a-time sensitivity of NPV
    "tornado": (
        "candidate", "input", "label", "unit", "low_value", "high_value", "npv_at_low",
        "npv_at_high", "swing",
    ),
    # one row per vehicle class: the statistics of its duty profile (a speed trace)
    "duty": ("vehicle_class", "profile", "distance_km", "duration_h", "mean_speed_km_per_h",
             "max_speed_km_per_h", "idle_share", "stops_per_km"),
    # one row per input of the study file, as written (for a reviewer to rebuild it)
    "inputs": ("section", "input", "value"),
    # one row per candidate x input: the value at which the NPV vs baseline crosses zero
    "breakeven": ("candidate", "input", "label", "unit", "nominal_value", "breakeven_value"),
    # one row per candidate x vehicle class x operating point (time-weighted)
    "operating_points": (
        "candidate", "vehicle_class", "engine_speed_rpm", "torque_nm", "hours",
        "brake_efficiency",
    ),
    # one row per fuel x phi: flame temperature and thermal NO at the candidate's engine
    "flame": ("candidate", "fuel", "phi", "flame_temperature_k", "no_ppm"),
    # one row per candidate x vehicle class: the catalyst's programme and best interval
    "catalyst": (
        "candidate", "vehicle_class", "device", "replacements", "replacement_cost",
        "reductant_cost", "best_interval_months", "best_total_cost",
    ),
    # one row per option x vehicle class x value a run took that the study did not give
    "defaults": ("candidate", "vehicle_class", "quantity", "value", "unit", "source"),
    # one row per line to show beside the results: a fuel on a map of another regime
    "notices": ("candidate", "vehicle_class", "message"),
    # one row per candidate x class it converts: that class's conversion alone (no programme
    # costs) against the baseline
    "class_decisions": (
        "candidate", "vehicle_class", "npv_vs_baseline", "discounted_payback_years",
        "co2e_avoided_t", "nox_avoided_kg", "npv_p10", "npv_p50", "npv_p90", "p_npv_positive",
        "in_best_mix",
    ),
    # one row per class: the option the best mix gives it, and the mix's own figures (with
    # the programme costs of each candidate it uses)
    "best_mix": (
        "vehicle_class", "candidate", "npv_vs_baseline", "discounted_payback_years",
        "co2e_avoided_t", "nox_avoided_kg", "npv_p10", "npv_p50", "npv_p90", "p_npv_positive",
    ),
    # one row per vehicle of a class run from its logs, on the baseline's fuel (empty when no
    # class is): the distribution across vehicles, outliers by Tukey's fences, and each
    # vehicle's fuel cards against the model (NaN without cards)
    "vehicles": (
        "vehicle_class", "vehicle", "fuel", "distance_logged_km", "fuel_energy_mj_per_km",
        "fuel_l_per_100km", "share_idle", "outlier", "observed_mj_per_km", "residual_mj_per_km",
    ),
    # one row per class with fuel cards: the factor fitted to them (baseline fuel) and the fit
    "calibration": (
        "vehicle_class", "fuel", "applied", "calibration_factor", "calibration_factor_se",
        "vehicles", "fills", "card_km", "observed_mj_per_km", "modelled_mj_per_km",
        "rms_residual_mj_per_km",
    ),
}


@dataclass(frozen=True)
class RunMap:
    """One map a vehicle class runs on in a study, and the options that run on it.

    Attributes
    ----------
    vehicle_class : str
        Class id.
    options : tuple of str
        Ids of the options that run the class on this map, in study order.
    engine_map : EngineMap
        The map (``workbench.study.runner.option_map``).
    """

    vehicle_class: str
    options: tuple[str, ...]
    engine_map: EngineMap


@dataclass(frozen=True)
class StudyResult:
    """What a study run returns.

    Attributes
    ----------
    title : str
        Study title.
    currency : str
        Currency code or label of every money column.
    candidates, per_km, cash_flows, fleet_years, nox_monthly, storage, monte_carlo, tornado,
    operating_points, flame, catalyst, breakeven, inputs, duty, defaults, notices :
    pandas.DataFrame
        The tables of :data:`COLUMNS`. ``defaults`` lists every value the run took that the
        study did not give (conversion kind, engine setting, engine-out NOx, catalyst, lambda,
        methane slip, derate, efficiency, pollutant factors) with its source; ``notices`` the
        one-line warnings (a fuel on a map made for another combustion regime);
        ``class_decisions`` each class's conversion on its own and ``best_mix`` the best
        choice per class (``workbench.study.decisions``); ``vehicles`` each vehicle of a class
        run from its logs (``workbench.study.fleet.vehicle_rows``); ``calibration`` each class's
        factor fitted to its fuel cards and whether the run applied it
        (``workbench.study.runner.calibration_rows``); ``fuel_use`` each fuel an option burns
        on a class (a dual-fuel engine's gas and pilot apart: energy share, fuel per 100 km,
        CO2e; grid electricity of a battery-electric drive); ``battery`` each battery-electric
        option's pack on a class (capacity, mass, payload loss, charging check); ``fuel_cell``
        each fuel-cell option on a class (stack, efficiency, buffer, hydrogen tank, mass);
        ``programme_years`` each candidate's capital, grants, financing and fuel tax by year,
        ``phasing`` the share of each class converted each year, ``funding`` each candidate's
        grants, loan and fuel-tax change, ``stations`` its refuelling station
        (``workbench.study.refuelling``).
    assumptions : dict
        Flat record of the inputs that shaped the result (for the report), values as text.
    fictional : bool
        The study says its data are invented (a demo); the report says so at the top.
    names : Names
        Display names of the option, class and fuel ids (``workbench.study.naming``).
    sources : dict
        Where reference data came from, by item.
    """

    title: str
    currency: str
    candidates: pd.DataFrame
    per_km: pd.DataFrame
    cash_flows: pd.DataFrame
    fleet_years: pd.DataFrame
    nox_monthly: pd.DataFrame
    storage: pd.DataFrame
    monte_carlo: pd.DataFrame
    tornado: pd.DataFrame
    operating_points: pd.DataFrame
    flame: pd.DataFrame
    catalyst: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["catalyst"])))
    breakeven: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["breakeven"])))
    inputs: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["inputs"])))
    duty: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["duty"])))
    fictional: bool = False
    names: Names = field(default_factory=Names)
    defaults: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["defaults"])))
    notices: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["notices"])))
    class_decisions: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["class_decisions"])))
    best_mix: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["best_mix"])))
    vehicles: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["vehicles"])))
    calibration: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["calibration"])))
    fuel_use: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["fuel_use"])))
    battery: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["battery"])))
    fuel_cell: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["fuel_cell"])))
    programme_years: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["programme_years"])))
    phasing: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["phasing"])))
    funding: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["funding"])))
    stations: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=list(COLUMNS["stations"])))
    assumptions: dict[str, str] = field(default_factory=dict)
    sources: dict[str, str] = field(default_factory=dict)

    def tables(self) -> dict[str, pd.DataFrame]:
        """The tables by name, in :data:`COLUMNS` order."""
        return {name: getattr(self, name) for name in COLUMNS}

    def colours(self) -> dict[str, str]:
        """Colour of each candidate, the same in every chart."""
        return dict(zip(self.candidates["candidate"], self.candidates["colour"], strict=True))


def notice_lines(notices: pd.DataFrame | list[dict]) -> list[str]:
    """One line per row of a ``notices`` table (or its rows): ``warning: option/class:
    message``."""
    table = pd.DataFrame(notices, columns=list(COLUMNS["notices"]))
    return [f"warning: {r.candidate}/{r.vehicle_class}: {r.message}"
            for r in table.itertuples(index=False)]


def default_lines(defaults: pd.DataFrame | list[dict]) -> list[str]:
    """One line per row of a ``defaults`` table (or its rows): ``default: option/class:
    quantity = value unit (source)``."""
    table = pd.DataFrame(defaults, columns=list(COLUMNS["defaults"]))
    return [f"default: {r.candidate}/{r.vehicle_class}: {r.quantity} = "
            f"{' '.join(str(x) for x in (r.value, r.unit) if x)} ({r.source})"
            for r in table.itertuples(index=False)]


def check_columns(result: StudyResult) -> None:
    """Raise AssertionError when a table's columns differ from :data:`COLUMNS`."""
    for name, table in result.tables().items():
        got = tuple(table.columns)
        if got != COLUMNS[name]:
            raise AssertionError(f"table {name}: columns {got} != {COLUMNS[name]}")


#: Candidates-table columns that compare an option with the baseline (none on its own row).
VS_BASELINE = ("npv_vs_baseline", "payback_years", "discounted_payback_years", "co2e_avoided_t",
               "cost_per_t_co2e_avoided", "nox_avoided_kg", "cost_per_kg_nox_avoided",
               "p_npv_positive", "p_discounted_payback_within_horizon", "npv_p10", "npv_p50",
               "npv_p90")
_DRAWN = ("p_npv_positive", "p_discounted_payback_within_horizon", "npv_p10", "npv_p50",
          "npv_p90")
_ABATEMENT = {"cost_per_t_co2e_avoided": ("co2e_avoided_t", "raises_co2e", "CO2e"),
              "cost_per_kg_nox_avoided": ("nox_avoided_kg", "raises_nox", "NOx")}


def missing_reason(row: Mapping[str, Any], column: str) -> str | None:
    """Why a candidates-table cell holds no number, in words; None when it holds one.

    Each reason has its own words, so "not applicable", "no payback" and "raises the
    emission" never look alike.

    Parameters
    ----------
    row : mapping
        A row of the candidates table (or its JSON record, with None for a missing number).
    column : str
        A column of that table.

    Returns
    -------
    str or None
        ``"n/a (baseline)"`` for a comparison on the baseline's own row; ``"not within
        horizon"`` for a payback that does not come; ``"raises CO2e"`` / ``"raises NOx"`` (or
        ``"none avoided"``) for an abatement cost with nothing avoided; ``"no draws"`` for a
        Monte Carlo figure of a run without draws; None when the cell has a number.
    """
    value = row.get(column)
    if value is not None and not (isinstance(value, float) and math.isnan(value)):
        return None
    if row.get("is_baseline") and column in VS_BASELINE:
        return "n/a (baseline)"
    if column in ("payback_years", "discounted_payback_years"):
        return "not within horizon"
    if column in _ABATEMENT:
        _, flag, what = _ABATEMENT[column]
        return f"raises {what}" if row.get(flag) else "none avoided"
    if column in _DRAWN:
        return "no draws"
    return "n/a"


#: Colour-blind-safe palette (Okabe & Ito, 2008, "Color Universal Design"), baseline first in
#: neutral grey; candidates take the next colours in order.
PALETTE = ("#666666", "#0072B2", "#E69F00", "#009E73", "#CC79A7", "#D55E00", "#56B4E9",
           "#F0E442", "#000000")
