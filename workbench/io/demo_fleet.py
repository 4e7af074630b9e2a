"""An INVENTED fleet's logger exports and fuel cards, to show the whole path from raw logs.

Nothing here is measured. Each vehicle of the fictional Kestrel Bay taxi fleet drives seeded
synthetic shifts (``workbench.io.demo_profiles.taxi_shift``); the logger then does what real
loggers do: irregular sampling (about 1 sample in 6 skipped, timestamps jittered), GPS speed
noise of 1 km/h, a few spikes, a few signal dropouts of 5–20 minutes, repeated rows, an
altitude column and a text column. Vehicle 7's logger reports mph with ``;`` separators and
decimal commas; vehicle 13's file is broken (a row of text where the speed should be). Fuel
cards record a fill every few days: litres and the odometer, from an invented consumption.

``python -m workbench.io.demo_fleet DIR [--vehicles 40] [--days 14] [--parquet]`` writes a
fleet; :func:`write_demo_fleet` with ``small=True`` wrote the example shipped in
``workbench/data/fleet/``.
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from workbench.io.demo_profiles import taxi_shift
from workbench.models.duty import DutyTrace

DATA = Path(__file__).resolve().parents[1] / "data" / "fleet"
#: First day of the invented logs (UTC).
START = pd.Timestamp("2026-03-02T00:00:00")
#: The vehicle whose logger reports mph (semicolons, decimal commas) and the broken one.
MPH_VEHICLE, BROKEN_VEHICLE = 7, 13
#: Invented fuel use of the fleet's taxis, litres of gasoline per 100 km (mean, spread).
INVENTED_L_PER_100KM = (6.6, 0.5)
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
    """

    logs: Path
    fuel_cards: Path


def _vehicle_log(rng: np.random.Generator, days: int, shift_hours: float,
                 pool: list[DutyTrace]) -> pd.DataFrame:
    """One vehicle's raw samples: times [s from START], speed [m/s], altitude [m]."""
    parts = []
    for day in range(days):
        trace = (pool[int(rng.integers(len(pool)))] if pool else
                 taxi_shift(seed=int(rng.integers(1 << 30)), hours=shift_hours))
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
    return pd.concat(parts, ignore_index=True)


def _fills(rng: np.random.Generator, vid: str, km_per_day: float, days: int
           ) -> list[dict[str, object]]:
    mean, sd = INVENTED_L_PER_100KM
    rate = rng.normal(mean, sd)
    odometer = float(rng.uniform(40_000, 160_000))
    rows = []
    day = 0.0
    while day < days:
        gap = rng.uniform(2.0, 4.0)
        km = km_per_day * gap * rng.uniform(0.85, 1.15)
        day += gap
        odometer += km
        rows.append({"date": (START + pd.Timedelta(days=day)).strftime("%Y-%m-%d"),
                     "vehicle": vid, "litres": round(km * rate / 100.0, 2),
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
    pool = [taxi_shift(seed=seed * 1000 + i, hours=shift_hours) for i in range(shift_pool)]
    cards: list[dict[str, object]] = []
    for k in range(1, vehicles + 1):
        vid = f"KB-T{k:02d}"
        raw = _vehicle_log(rng, days, shift_hours, pool)
        stamps = START + pd.to_timedelta(raw["t"], unit="s")
        km_per_day = float(np.sum(np.diff(raw["t"]).clip(0, 60)
                                  * raw["v"].to_numpy()[1:])) / days / 1e3
        cards += _fills(rng, vid, km_per_day, card_days or days)
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
    return DemoFleet(logs=logs, fuel_cards=cards_path)


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

