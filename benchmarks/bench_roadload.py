"""Road-load throughput on a year of 1 Hz data for one vehicle (31.5 million samples).

The year is the demo taxi shift repeated, generated a chunk at a time so that memory stays
bounded. For every chunk the same arrays go through
``workbench.models.vehicle.road_load`` and through
a plain numpy expression of the same formula; the ratio of their rates is the figure (target
>= 0.3). The full fuel pipeline (road load, gears, map lookup, sums: the fused kernel of
``workbench.models.fused``) is timed on the same chunks, its rate a ratio of that road-load
floor (target >= 0.25); ``duty_energy`` on the whole year end to end (making the chunks
included), and the peak resident memory are printed.

Run: ``python benchmarks/bench_roadload.py [--chunk N] [--samples N]``
"""

from __future__ import annotations

import argparse
import resource
import time
from collections.abc import Iterator

import numpy as np

from workbench.core.constants import STANDARD_GRAVITY as G
from workbench.core.paths import DATA
from workbench.io.maps import read_map
from workbench.io.profiles import read_trace
from workbench.io.vehicles import read_vehicle
from workbench.models.duty import DutySettings, DutyTrace
from workbench.models.engine import duty_energy
from workbench.models.fused import trace_sums
from workbench.models.vehicle import Vehicle, road_load

YEAR = 365 * 24 * 3600


def year_chunks(base: DutyTrace, samples: int, chunk: int) -> Iterator[DutyTrace]:
    """Consecutive pieces (sharing end samples) of ``base`` repeated to ``samples`` samples."""
    n = base.time.size
    for start in range(0, samples - 1, chunk):
        idx = np.arange(start, min(start + chunk + 1, samples))
        wrap = idx % n
        yield DutyTrace(time=idx.astype(float), speed=base.speed[wrap], grade=base.grade[wrap],
                        payload=base.payload[wrap], name="year", offset=start)


def reference(v: Vehicle, t: np.ndarray, s: np.ndarray, gr: np.ndarray,
              pl: np.ndarray) -> np.ndarray:
    """The road-load formula written as one plain numpy expression."""
    dt = t[1:] - t[:-1]
    vm = 0.5 * (s[1:] + s[:-1])
    g = gr[:-1]
    return ((v.mass + pl[:-1]) * (v.rotating_mass_factor * (s[1:] - s[:-1]) / dt
                                  + G / np.sqrt(1.0 + g * g) * (v.rolling_resistance + g))
            + 0.5 * v.air_density * v.drag_coefficient * v.frontal_area * vm * vm) * vm


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--chunk", type=int, default=262_144, help="intervals per chunk")
    parser.add_argument("--samples", type=int, default=YEAR, help="samples (default: a year)")
    args = parser.parse_args()

    base = read_trace(DATA / "profiles" / "taxi-shift.csv")
    vehicle = read_vehicle(DATA / "vehicles" / "taxi.toml")
    engine_map = read_map(DATA / "maps" / "taxi-si-1.8l.csv")

    settings = DutySettings(accessory_power=1000.0)
    trace_sums([next(year_chunks(base, 1000, 1000))], vehicle, engine_map)  # compile once
    ours = ref = fused = 0.0
    worst = 0.0
    fuel = 0.0
    for k, piece in enumerate(year_chunks(base, args.samples, args.chunk)):
        arrays = (piece.time, piece.speed, piece.grade, piece.payload)
        order = (0, 1, 2) if k % 2 == 0 else (2, 1, 0)  # alternate the order
        for which in order:
            t0 = time.perf_counter()
            if which == 0:
                power = road_load(vehicle, piece).wheel_power
                ours += time.perf_counter() - t0
            elif which == 1:
                expected = reference(vehicle, *arrays)
                ref += time.perf_counter() - t0
            else:
                fuel += trace_sums([piece], vehicle, engine_map, settings=settings
                                   ).sums["fuel_energy"]
                fused += time.perf_counter() - t0
        worst = max(worst, float(np.max(np.abs(power - expected) / (np.abs(expected) + 1.0))))

    t0 = time.perf_counter()
    energy = duty_energy(year_chunks(base, args.samples, args.chunk), vehicle, engine_map,
                         settings=settings)
    pipeline = time.perf_counter() - t0
    assert abs(energy.fuel_energy / fuel - 1.0) < 1e-9
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0

    n = args.samples
    print(f"samples                         {n:,} (chunks of {args.chunk:,} intervals)")
    print(f"road_load                       {n / ours / 1e6:8.1f} M samples/s  ({ours:.2f} s)")
    print(f"plain numpy, same formula       {n / ref / 1e6:8.1f} M samples/s  ({ref:.2f} s)")
    print(f"ratio road_load / numpy         {ref / ours:8.2f}   (target >= 0.3)")
    print(f"largest relative difference     {worst:8.1e}")
    print(f"fused fuel pipeline (trace_sums){n / fused / 1e6:8.1f} M samples/s  ({fused:.2f} s:"
          " road load, gears, operating points, map, histograms)")
    print(f"ratio pipeline / road-load floor{ref / fused:8.2f}   (target >= 0.25)")
    print(f"duty_energy end to end          {n / pipeline / 1e6:8.1f} M samples/s  "
          f"({pipeline:.1f} s with making the chunks, {energy.distance / 1e3:,.0f} km)")
    print(f"peak resident memory            {peak_mb:8.0f} MB")


if __name__ == "__main__":
    main()
