"""Invented demo duties and engine maps for a FICTIONAL city fleet.

Nothing here is measured: the traces are synthetic, made from seeded random micro-trips
(stop, accelerate, cruise with small speed changes, brake) on a gently rolling synthetic
terrain, and the maps are Willans-line models with typical parameters. They exist to show the
workbench on a plausible duty; a real study should use the fleet's own logged traces.

``python -m workbench.io.demo_profiles [DIR]`` rewrites the shipped files in
``workbench/data/profiles`` and ``workbench/data/maps`` (or in ``DIR``); the same seed gives
the same files.
"""

from __future__ import annotations

import math
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from workbench.core.constants import RPM
from workbench.core.paths import DATA
from workbench.io.maps import format_map_csv
from workbench.io.profiles import format_trace_csv
from workbench.models.duty import DutyTrace
from workbench.models.engine import willans_map, willans_parameters

_KMH = 1.0 / 3.6

_INVENTED = (
    "INVENTED demo data for a fictional city fleet; not measured, not from any real vehicle.",
    "Made by workbench.io.demo_profiles (seeded); see docs/duty.md.",
)


@dataclass(frozen=True)
class _Style:
    """How a driver drives one kind of duty (all speeds [m/s], accelerations [m/s²])."""

    cruise: tuple[float, float]  # range of cruise speeds
    accel: float  # acceleration limit
    decel: float  # braking limit
    legs: tuple[int, int]  # speed changes between two stops
    leg_time: tuple[float, float]  # seconds per cruise leg
    light: tuple[float, float]  # seconds at a traffic-light stop


TAXI = _Style(cruise=(20 * _KMH, 60 * _KMH), accel=1.6, decel=2.2, legs=(1, 4),
              leg_time=(10.0, 60.0), light=(10.0, 60.0))
SHUTTLE = _Style(cruise=(25 * _KMH, 50 * _KMH), accel=0.9, decel=1.2, legs=(1, 2),
                 leg_time=(10.0, 35.0), light=(10.0, 45.0))
VAN = _Style(cruise=(30 * _KMH, 70 * _KMH), accel=1.2, decel=1.8, legs=(1, 4),
             leg_time=(15.0, 80.0), light=(10.0, 50.0))


def _follow(rng: np.random.Generator, targets: list[tuple[float, float]], style: _Style
            ) -> np.ndarray:
    """Speeds at 1 Hz that ramp to each (target speed, hold seconds) within the style's limits."""
    out: list[float] = []
    v = 0.0
    wobble = 0.0
    for target, hold in targets:
        while abs(v - target) > 1e-9:
            v += min(max(target - v, -style.decel), style.accel * (1.0 - 0.4 * v / 25.0))
            out.append(v)
        for _ in range(round(hold)):
            if target > 0.0:
                wobble = 0.85 * wobble + rng.normal(0.0, 0.12)
                out.append(max(target + wobble, 0.5))
            else:
                out.append(0.0)
        v = out[-1]
    return np.asarray(out)


def _trip(rng: np.random.Generator, style: _Style, *, stops: int, last_dwell: float
          ) -> list[tuple[float, float]]:
    """Targets for one trip: ``stops`` traffic-light stops, then a stop of ``last_dwell`` s."""
    targets: list[tuple[float, float]] = []
    for k in range(stops + 1):
        for _ in range(rng.integers(style.legs[0], style.legs[1] + 1)):
            targets.append((rng.uniform(*style.cruise), rng.uniform(*style.leg_time)))
        dwell = last_dwell if k == stops else rng.uniform(*style.light)
        targets.append((0.0, dwell))
    return targets


def _terrain(speed: np.ndarray, rng: np.random.Generator, amplitude: float) -> np.ndarray:
    """Grade [-] along the distance driven: a few sines with wavelengths of 0.4-3 km."""
    x = np.concatenate([[0.0], np.cumsum(0.5 * (speed[1:] + speed[:-1]))])
    grade = np.zeros_like(x)
    for wavelength in rng.uniform(400.0, 3000.0, size=4):
        grade += np.sin(2.0 * math.pi * x / wavelength + rng.uniform(0, 2 * math.pi))
    return amplitude * grade / 4.0


def _assemble(rng: np.random.Generator, pieces: list[tuple[list[tuple[float, float]], float]],
              style: _Style, *, grade_amplitude: float, name: str) -> DutyTrace:
    speeds, payloads = [], []
    for targets, payload in pieces:
        v = _follow(rng, targets, style)
        speeds.append(v)
        payloads.append(np.full(v.size, payload))
    speed = np.concatenate([[0.0], *speeds])
    payload = np.concatenate([[payloads[0][0]], *payloads])
    speed = np.round(speed * 3.6, 2) / 3.6  # as written to the CSV
    grade = np.round(_terrain(speed, rng, grade_amplitude) * 100.0, 2) / 100.0
    return DutyTrace(time=np.arange(speed.size, dtype=float), speed=speed, grade=grade,
                     payload=payload, name=name)


def taxi_shift(*, seed: int = 1, hours: float = 4.0) -> DutyTrace:
    """An urban taxi shift: fares with 1-3 passengers, empty cruising, short waits at ranks.

    Parameters
    ----------
    seed : int
        Random seed.
    hours : float
        Approximate length [h].

    Returns
    -------
    DutyTrace
        1 Hz trace with grade and payload (passengers and luggage at 80 kg each, invented).
    """
    rng = np.random.default_rng(seed)
    pieces: list[tuple[list[tuple[float, float]], float]] = []
    seconds = 0.0
    while seconds < hours * 3600.0:
        fare = _trip(rng, TAXI, stops=int(rng.integers(3, 12)), last_dwell=rng.uniform(30, 90))
        empty = _trip(rng, TAXI, stops=int(rng.integers(1, 6)), last_dwell=rng.uniform(60, 400))
        pieces += [(fare, 80.0 * int(rng.integers(1, 4))), (empty, 0.0)]
        seconds += sum(h for _, h in fare + empty) * 1.3
    return _assemble(rng, pieces, TAXI, grade_amplitude=0.025, name="taxi-shift")


def shuttle_route(*, seed: int = 2, laps: int = 3) -> DutyTrace:
    """A shuttle-bus route: stops every few hundred metres, passengers on and off at each.

    Parameters
    ----------
    seed : int
        Random seed.
    laps : int
        Laps of a route of 18 bus stops.

    Returns
    -------
    DutyTrace
        1 Hz trace with grade and payload (passengers at 70 kg each, invented).
    """
    rng = np.random.default_rng(seed)
    pieces: list[tuple[list[tuple[float, float]], float]] = []
    passengers = 8
    for _ in range(laps):
        for _ in range(18):
            leg = _trip(rng, SHUTTLE, stops=int(rng.integers(0, 2)),
                        last_dwell=rng.uniform(15, 45))
            pieces.append((leg, 70.0 * passengers))
            passengers = int(np.clip(passengers + rng.integers(-6, 7), 2, 40))
        pieces.append(([(0.0, rng.uniform(180, 360))], 0.0))  # layover at the terminus
    return _assemble(rng, pieces, SHUTTLE, grade_amplitude=0.02, name="shuttle-route")


def van_day(*, seed: int = 3, drops: int = 30) -> DutyTrace:
    """A delivery-van day: depot run, then drops that unload the van a parcel batch at a time.

    Parameters
    ----------
    seed : int
        Random seed.
    drops : int
        Number of delivery stops.

    Returns
    -------
    DutyTrace
        1 Hz trace with grade and payload (load falling from 700 kg, invented).
    """
    rng = np.random.default_rng(seed)
    load = 700.0
    arterial = _Style(cruise=(55 * _KMH, 80 * _KMH), accel=1.0, decel=1.5, legs=(2, 5),
                      leg_time=(40.0, 120.0), light=(10.0, 40.0))
    pieces = [(_trip(rng, arterial, stops=4, last_dwell=60.0), load)]
    for _ in range(drops):
        leg = _trip(rng, VAN, stops=int(rng.integers(0, 4)), last_dwell=rng.uniform(90, 300))
        pieces.append((leg, load))
        load = max(load - rng.uniform(8.0, 25.0), 40.0)
    pieces.append((_trip(rng, arterial, stops=4, last_dwell=30.0), load))
    return _assemble(rng, pieces, VAN, grade_amplitude=0.03, name="van-day")


#: Demo engines: (file stem, ignition kind, displacement [m3], stroke [m], idle, rated [rpm]).
DEMO_ENGINES = (
    ("taxi-si-1.8l", "spark-ignition", 1.8e-3, 0.0864, 750.0, 6000.0),
    ("van-ci-2.3l", "compression-ignition", 2.3e-3, 0.0938, 800.0, 3800.0),
    ("bus-ci-4.5l", "compression-ignition", 4.5e-3, 0.1200, 650.0, 2600.0),
)


def write_demo_data(directory: Path = DATA) -> list[Path]:
    """Write the demo profile and map CSVs.

    Parameters
    ----------
    directory : pathlib.Path
        Data directory; files go to ``profiles/`` and ``maps/`` under it.

    Returns
    -------
    list of pathlib.Path
        The files written.
    """
    written = []
    (directory / "profiles").mkdir(parents=True, exist_ok=True)
    (directory / "maps").mkdir(parents=True, exist_ok=True)
    for make, what in ((taxi_shift, "urban taxi shift"), (shuttle_route, "shuttle-bus route"),
                       (van_day, "delivery-van day")):
        trace = make()
        path = directory / "profiles" / f"{trace.name}.csv"
        path.write_text(format_trace_csv(trace, comments=(f"Demo duty: {what}.", *_INVENTED)),
                        encoding="utf-8")
        written.append(path)
    for stem, kind, displacement, stroke, idle, rated in DEMO_ENGINES:
        params = willans_parameters(kind, displacement=displacement, stroke=stroke,  # type: ignore[arg-type]
                                    idle_speed=idle * RPM, rated_speed=rated * RPM)
        comments = (f"Demo efficiency map: {kind} {displacement * 1e3:.1f} L, Willans-line "
                    "model with typical parameters.", *_INVENTED)
        path = directory / "maps" / f"{stem}.csv"
        path.write_text(format_map_csv(willans_map(params, name=stem), comments=comments),
                        encoding="utf-8")
        written.append(path)
    return written


if __name__ == "__main__":
    for written_path in write_demo_data(Path(sys.argv[1]) if len(sys.argv) > 1 else DATA):
        print(written_path)
