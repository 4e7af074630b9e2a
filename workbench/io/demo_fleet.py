"""An INVENTED fleet's logger exports and fuel cards, to show the whole path from raw logs.

Nothing here is measured. Each vehicle of the fictional Kestrel Bay taxi fleet drives seeded
synthetic shifts (``workbench.io.demo_profiles.taxi_shift``); the logger then does what real
loggers do: irregular sampling (about 1 sample in 6 skipped, timestamps jittered), GPS speed
noise of 1 km/h, a few spikes, a few signal dropouts of 5–20 minutes, repeated rows, an
altitude column and a text column. Vehicle 7's logger reports mph with ``;`` separators and
decimal commas; vehicle 13's file is broken (a row of text where the speed should be). Fuel
cards record a fill every few days: litres and the odometer. The litres are the model's own
consumption of each vehicle's clean shifts (the demo study's taxi: its vehicle, map, fuel and
settings, :data:`MODEL`) times an invented factor, :data:`INVENTED_CARD_FACTOR`, with invented
scatter per vehicle and per fill — so the demo's fuel-card calibration should find about that
factor.

``python -m workbench.io.demo_fleet DIR [--vehicles 40] [--days 14] [--parquet]`` writes a
fleet; :func:`write_demo_fleet` with ``small=True`` wrote the example shipped in
``workbench/data/fleet/``.
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from workbench.io.demo_profiles import taxi_shift
from workbench.models.duty import DutySettings, DutyTrace

DATA = Path(__file__).resolve().parents[1] / "data" / "fleet"
#: First day of the invented logs (UTC).
START = pd.Timestamp("2026-03-02T00:00:00")
#: The vehicle whose logger reports mph (semicolons, decimal commas) and the broken one.
MPH_VEHICLE, BROKEN_VEHICLE = 7, 13
#: Invented ratio of the fuel the demo taxis buy to what the model says they burn [-].
INVENTED_CARD_FACTOR = 1.04
#: Invented scatter of the cards, relative standard deviations [-]: each vehicle's own
#: deviation from the model (driver, tyres), and each fill's (tank not topped up exactly).
INVENTED_VEHICLE_SD, INVENTED_FILL_SD = 0.03, 0.05
#: The model the cards are made from: vehicle, map and fuel names of the demo study's taxi
#: class (``workbench/data/studies/kestrel-bay.toml``) ...
MODEL = ("taxi", "taxi-si-1.8l", "gasoline")
#: ... and its duty settings there (accessory_power 1.5 kW, extra_idle_share 0.15).
MODEL_SETTINGS = DutySettings(accessory_power=1500.0, extra_idle_share=0.15)
_NOTE = ("# INVENTED demo logger export of the fictional Kestrel Bay taxi fleet; not measured.\n"
         "# Made by workbench.io.demo_fleet (seeded); see docs/fleet-logs.md.\n")


@dataclass(frozen=True)
class DemoFleet:
    """Where the demo fleet was written.

    Attributes
    ----------
    logs : pathlib.Path
        Folder of logger files, one per vehicle.
    fuel_cards : pathlib.Path
        Fuel-card CSV of all vehicles.
    model_l_per_km : dict of str to float
        By vehicle id, the model's fuel on its clean shifts (before the logger's noise, gaps
        and spikes) that its fills were made from, before the invented factor [L/km].
    """

    logs: Path
    fuel_cards: Path
    model_l_per_km: dict[str, float] = field(default_factory=dict)


def _vehicle_log(rng: np.random.Generator, days: int, shift_hours: float,
                 pool: list[DutyTrace]) -> tuple[pd.DataFrame, list[DutyTrace]]:
    """One vehicle's raw samples (times [s from START], speed [m/s], altitude [m]) and the
    clean shifts they were made from."""
    parts, shifts = [], []
    for day in range(days):
        trace = (pool[int(rng.integers(len(pool)))] if pool else
                 taxi_shift(seed=int(rng.integers(1 << 30)), hours=shift_hours))
        shifts.append(trace)
        start = day * 86400.0 + 3600.0 * rng.uniform(5.0, 9.0)
        t = start + trace.time
        dist = np.concatenate(([0.0], np.cumsum(np.diff(trace.time) * 0.5
                                                * (trace.speed[1:] + trace.speed[:-1]))))
        rise = np.concatenate(([0.0], np.cumsum(np.diff(dist) * trace.grade[:-1])))
        alt = 20.0 + rise
        keep = rng.random(t.size) > 1.0 / 6.0
        for _ in range(int(rng.integers(0, 3))):  # signal dropouts of 5-20 min
            a = rng.uniform(t[0], t[-1])
            keep &= ~((t > a) & (t < a + rng.uniform(300.0, 1200.0)))
        t, v, alt = t[keep], trace.speed[keep].copy(), alt[keep]
        t = t + rng.uniform(-0.2, 0.2, t.size)
        t = np.maximum.accumulate(t)
        v = np.maximum(v + rng.normal(0.0, 1.0 / 3.6, v.size), 0.0)
        spikes = rng.integers(1, v.size - 1, 3)
        v[spikes] += 30.0  # GPS spikes: +108 km/h for one sample
        alt = alt + rng.normal(0.0, 0.5, alt.size)
        dup = rng.integers(0, t.size, 5)
        order = np.sort(np.concatenate((np.arange(t.size), dup)))
        parts.append(pd.DataFrame({"t": t[order], "v": v[order], "alt": alt[order]}))
    return pd.concat(parts, ignore_index=True), shifts


class _Model:
    """The demo study's taxi model (:data:`MODEL`, :data:`MODEL_SETTINGS`): litres of fuel
    per km of a vehicle's clean shifts, each shift run once."""

    def __init__(self) -> None:
        from workbench.core.fuels import load_fuel
        from workbench.io.demo_profiles import DATA as SHIPPED
        from workbench.io.maps import read_map
        from workbench.io.vehicles import read_vehicle
        from workbench.models.combustion import fuel_sheet

        vehicle, engine_map, fuel = MODEL
        self.vehicle = read_vehicle(SHIPPED / "vehicles" / f"{vehicle}.toml")
        self.engine_map = read_map(SHIPPED / "maps" / f"{engine_map}.csv")
        gas = load_fuel(fuel)
        self.joules_per_litre = fuel_sheet(gas).lhv_mass * gas.liquid_density * 1e-3
        self._runs: dict[int, tuple[float, float]] = {}

    def litres_per_km(self, shifts: list[DutyTrace]) -> float:
        """Model fuel over model distance of the shifts [L/km]."""
        from workbench.models.engine import run_duty

        fuel = distance = 0.0
        for trace in shifts:
            if id(trace) not in self._runs:
                e = run_duty(trace, self.vehicle, self.engine_map,
                             settings=MODEL_SETTINGS).energy
                self._runs[id(trace)] = (e.fuel_energy, e.distance)
            fuel += self._runs[id(trace)][0]
            distance += self._runs[id(trace)][1]
        return fuel / self.joules_per_litre / (distance / 1e3)


def _fills(rng: np.random.Generator, scatter: np.random.Generator, vid: str,
           km_per_day: float, days: int, litres_per_km: float) -> list[dict[str, object]]:
    """Fills every 2-4 days: the model's litres times the invented factor and scatter (the
    vehicle's from ``rng``, each fill's from ``scatter``, so the logs drawn after it from
    ``rng`` stay as they were)."""
    rate = litres_per_km * INVENTED_CARD_FACTOR * rng.normal(1.0, INVENTED_VEHICLE_SD)
    odometer = float(rng.uniform(40_000, 160_000))
    rows = []
    day = 0.0
    while day < days:
        gap = rng.uniform(2.0, 4.0)
        km = km_per_day * gap * rng.uniform(0.85, 1.15)
        day += gap
        odometer += km
        litres = km * rate * scatter.normal(1.0, INVENTED_FILL_SD)
        rows.append({"date": (START + pd.Timedelta(days=day)).strftime("%Y-%m-%d"),
                     "vehicle": vid, "litres": round(litres, 2),
                     "odometer_km": round(odometer)})
    return rows


def write_demo_fleet(directory: str | Path, *, vehicles: int = 40, days: int = 14,
                     shift_hours: float = 8.0, parquet: bool = False, seed: int = 11,
                     card_days: int | None = None, shift_pool: int = 0) -> DemoFleet:
    """Write an invented fleet's logger files (one per vehicle) and fuel cards.

    Parameters
    ----------
    directory : str or pathlib.Path
        Output folder; ``logs/`` and ``fuel-cards.csv`` go inside it.
    vehicles : int
        Number of vehicles (>= 13 includes the broken file, >= 7 the mph one).
    days : int
        Days logged per vehicle, one shift a day.
    shift_hours : float
        Approximate shift length [h].
    parquet : bool
        Write Parquet files (timestamps as Parquet timestamps) instead of CSV.
    seed : int
        Random seed; the same seed writes the same files.
    card_days : int, optional
        Days of fuel cards (``days`` when omitted), at the logged km per day.
    shift_pool : int
        When > 0, draw each day's shift from this many shifts made once (faster for big
        fleets; the logger's irregularities are still drawn afresh each day).

    Returns
    -------
    DemoFleet
    """
    out = Path(directory)
    logs = out / "logs"
    logs.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    scatter = np.random.default_rng([seed, 1])
    model = _Model()
    pool = [taxi_shift(seed=seed * 1000 + i, hours=shift_hours) for i in range(shift_pool)]
    cards: list[dict[str, object]] = []
    modelled: dict[str, float] = {}
    for k in range(1, vehicles + 1):
        vid = f"KB-T{k:02d}"
        raw, shifts = _vehicle_log(rng, days, shift_hours, pool)
        stamps = START + pd.to_timedelta(raw["t"], unit="s")
        km_per_day = float(np.sum(np.diff(raw["t"]).clip(0, 60)
                                  * raw["v"].to_numpy()[1:])) / days / 1e3
        modelled[vid] = model.litres_per_km(shifts)
        cards += _fills(rng, scatter, vid, km_per_day, card_days or days, modelled[vid])
        if parquet:
            frame = pd.DataFrame({"timestamp": stamps, "speed_km_per_h": raw["v"] * 3.6,
                                  "altitude_m": raw["alt"]})
            if k == BROKEN_VEHICLE:
                (logs / f"{vid}.parquet").write_bytes(b"PAR1 truncated by a failed upload")
                continue
            frame.to_parquet(logs / f"{vid}.parquet", index=False)
            continue
        iso = stamps.dt.strftime("%Y-%m-%dT%H:%M:%S.%f").str[:-5] + "Z"
        if k == MPH_VEHICLE:
            speed = (raw["v"] / 0.44704).map(lambda x: f"{x:.2f}".replace(".", ","))
            alt = raw["alt"].map(lambda x: f"{x:.1f}".replace(".", ","))
            body = "\n".join(f"{a};{b};{c};\"shift; day\"" for a, b, c in
                             zip(iso, speed, alt, strict=True))
            text = "Timestamp;Speed (mph);Altitude (m);Note\n" + body + "\n"
        else:
            body = "\n".join(f"{a},{b:.2f},{c:.1f},driver-{k % 5}" for a, b, c in
                             zip(iso, raw["v"] * 3.6, raw["alt"], strict=True))
            text = "timestamp,speed_km_per_h,altitude_m,driver\n" + body + "\n"
        if k == BROKEN_VEHICLE:
            lines = text.splitlines()
            cut = len(lines) // 2
            lines[cut] = lines[cut].split(",")[0] + ",SIGNAL LOST,,"
            text = "\n".join(lines) + "\n"
        (logs / f"{vid}.csv").write_text(_NOTE + text, encoding="utf-8")
    cards_path = out / "fuel-cards.csv"
    pd.DataFrame(cards).to_csv(cards_path, index=False)
    text = cards_path.read_text(encoding="utf-8")
    cards_path.write_text(_NOTE + text, encoding="utf-8")
    return DemoFleet(logs=logs, fuel_cards=cards_path, model_l_per_km=modelled)


def write_shipped_example(directory: Path = DATA) -> DemoFleet:
    """The small example shipped in ``workbench/data/fleet``: 13 vehicles, one short shift
    each (vehicle 7 in mph, vehicle 13 broken), four weeks of fuel cards.

    Returns
    -------
    DemoFleet
    """
    return write_demo_fleet(directory, vehicles=13, days=1, shift_hours=0.4, seed=5,
                            card_days=28)


def main(argv: list[str] | None = None) -> None:
    """Command line: write a demo fleet to a folder."""
    parser = argparse.ArgumentParser(description="Write an INVENTED demo fleet of logger files.")
    parser.add_argument("directory", nargs="?", type=Path, default=None,
                        help="output folder (default: rewrite the shipped example)")
    parser.add_argument("--vehicles", type=int, default=40)
    parser.add_argument("--days", type=int, default=14)
    parser.add_argument("--shift-hours", type=float, default=8.0)
    parser.add_argument("--parquet", action="store_true")
    parser.add_argument("--seed", type=int, default=11)
    args = parser.parse_args(argv)
    if args.directory is None:
        fleet = write_shipped_example()
    else:
        fleet = write_demo_fleet(args.directory, vehicles=args.vehicles, days=args.days,
                                 shift_hours=args.shift_hours, parquet=args.parquet,
                                 seed=args.seed)
    print(fleet.logs)
    print(fleet.fuel_cards)


if __name__ == "__main__":
    main()

