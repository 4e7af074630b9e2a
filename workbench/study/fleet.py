"""Run a fleet's logger data: every vehicle through the pipeline, on one machine or a cluster.

:func:`run_fleet` finds the vehicles of a source (folder, glob, file or Parquet dataset), runs
each one — read in batches, cleaned into trips (``workbench.models.logs``), through the fused
kernel in chunks with histograms built in the loop — and sums the class
(``workbench.models.fleet.aggregate``). Memory per vehicle is bounded by the batch and buffer
sizes, not by the log's length. A vehicle whose file is bad is reported and left out.

Engines (same numbers on each; vehicles are summed in id order):

* ``"serial"``: in this process;
* ``"process"`` (default): a local pool of processes, BLAS pinned to one thread in each
  (``OPENBLAS_NUM_THREADS=1`` and friends in the environment of the fresh server process the
  workers are forked from — ``forkserver``, or ``spawn`` where there is none — so it holds
  before numpy is imported there; two processes with default BLAS threads ran slower than one);
* a dask scheduler address (``"tcp://host:8786"``) or a ``distributed.Client``: the vehicles
  are mapped over the cluster (dask's nanny already starts workers with these variables at 1).
"""

from __future__ import annotations

import multiprocessing
import os
from collections.abc import Callable, Iterator
from concurrent.futures import ProcessPoolExecutor, as_completed
from contextlib import contextmanager
from contextvars import ContextVar
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from workbench.core.constants import RPM
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel
from workbench.io.logs import (
    CSV_CHUNK_ROWS,
    FleetSource,
    VehicleLog,
    list_vehicles,
    read_batches,
)
from workbench.models.calibration import Calibration, FuelRecords, calibrate, observed_use
from workbench.models.combustion import FuelSheet
from workbench.models.duty import DutySettings
from workbench.models.engine import (
    NOX_SPEED_BINS,
    DutyRun,
    EngineMap,
    energy_from_sums,
    fuel_per_distance_for,
)
from workbench.models.fleet import (
    ClassAggregate,
    VehicleSummary,
    aggregate,
    tukey_outliers,
    vehicle_table,
)
from workbench.models.fused import histogram_edges, trace_sums
from workbench.models.logs import LogRules, LogTally, clean_log
from workbench.models.vehicle import Vehicle

#: Environment variables that pin BLAS and OpenMP pools to one thread in worker processes.
SINGLE_THREAD_ENV = {v: "1" for v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS",
                                      "MKL_NUM_THREADS", "NUMBA_NUM_THREADS")}

#: Progress of a fleet run: called with (vehicles done, vehicles in all) as each vehicle
#: finishes; the terminal prints it (``workbench fleet run``, ``study run``), the panels draw
#: it as a bar (``workbench.interfaces.panels.app.FleetProgress``).
Progress = Callable[[int, int], None]

#: The progress the fleet runs of a study report to (:func:`reporting`).
_REPORT: ContextVar[Progress | None] = ContextVar("fleet_progress", default=None)


@contextmanager
def reporting(progress: Progress | None) -> Iterator[None]:
    """Inside the block, every fleet run of a study (:func:`fleet_duty`) reports its vehicles
    to ``progress``; the study's physics cache stays keyed by the physics alone.

    Parameters
    ----------
    progress : callable or None
        ``progress(done, total)`` [vehicles]; None reports nothing.
    """
    token = _REPORT.set(progress)
    try:
        yield
    finally:
        _REPORT.reset(token)


@dataclass(frozen=True)
class VehicleJob:
    """Everything one vehicle's run needs; small and picklable (the worker reads the file).

    Attributes
    ----------
    log : VehicleLog
    vehicle : Vehicle
    engine_map : EngineMap
    settings : DutySettings
    rules : LogRules
    batch_rows : int
        Rows read at a time.
    chunk : int
        Intervals per kernel call.
    """

    log: VehicleLog
    vehicle: Vehicle
    engine_map: EngineMap
    settings: DutySettings
    rules: LogRules
    batch_rows: int = CSV_CHUNK_ROWS
    chunk: int = 262_144


@dataclass(frozen=True)
class FleetRun:
    """A class's vehicles run from their logs.

    Attributes
    ----------
    summaries : tuple of VehicleSummary
        The vehicles used, sorted by id.
    problems : tuple of str
        One line per file or vehicle left out (``where: message``).
    aggregate : ClassAggregate
        Their km-weighted sum.
    found : int
        Vehicles found in the source (used plus left out).
    """

    summaries: tuple[VehicleSummary, ...]
    problems: tuple[str, ...]
    aggregate: ClassAggregate
    found: int = field(default=0)

    def table(self) -> pd.DataFrame:
        """One row per vehicle used (``workbench.models.fleet.vehicle_table``)."""
        return vehicle_table(self.summaries)


def summarise_vehicle(job: VehicleJob) -> VehicleSummary | str:
    """Run one vehicle's log; a bad file or trace comes back as a one-line problem.

    Parameters
    ----------
    job : VehicleJob

    Returns
    -------
    VehicleSummary or str
        The summary, or ``"<file> vehicle <id>: <message>"`` when the vehicle is left out.
    """
    log = job.log
    name = f"{log.path} vehicle {log.vehicle}" if log.shared else log.path
    tally = LogTally()
    try:
        trips = clean_log(read_batches(log, batch_rows=job.batch_rows), job.rules, tally,
                          name=name)
        pieces = (c for trip in trips for c in trip.chunks(job.chunk))
        run = trace_sums(pieces, job.vehicle, job.engine_map, settings=job.settings,
                         edges=histogram_edges(job.engine_map))
        if run.sums["distance"] <= 0.0:
            raise InputError(name, "no driving left after cleaning "
                                   f"({tally.samples_read} samples read)")
        energy = energy_from_sums(run.sums, job.engine_map, job.settings)
    except InputError as exc:
        return str(exc) if log.path in str(exc) else f"{name}: {exc}"
    except Exception as exc:  # a corrupt file deep in pyarrow or pandas
        return f"{name}: cannot read ({exc.__class__.__name__}: {str(exc)[:80]})"
    return VehicleSummary(vehicle=log.vehicle, energy=energy, seconds=run.seconds,
                          fuel=run.fuel, tally=tally.as_dict())


@contextmanager
def _single_thread_env() -> Iterator[None]:
    """Set :data:`SINGLE_THREAD_ENV` for processes started inside the block."""
    saved = {k: os.environ.get(k) for k in SINGLE_THREAD_ENV}
    os.environ.update(SINGLE_THREAD_ENV)
    try:
        yield
    finally:
        for k, v in saved.items():
            if v is None:
                os.environ.pop(k, None)
            else:
                os.environ[k] = v


def _serial(jobs: list[VehicleJob], progress: Progress | None) -> list[VehicleSummary | str]:
    out = []
    for i, job in enumerate(jobs, start=1):
        out.append(summarise_vehicle(job))
        if progress:
            progress(i, len(jobs))
    return out


def _context() -> multiprocessing.context.BaseContext:
    """Workers forked from a server process that started afresh with one BLAS thread and
    imported this module once (POSIX); spawned processes elsewhere."""
    if "forkserver" not in multiprocessing.get_all_start_methods():
        return multiprocessing.get_context("spawn")
    ctx = multiprocessing.get_context("forkserver")
    ctx.set_forkserver_preload(["workbench.study.fleet"])
    return ctx


def _largest_first(jobs: list[VehicleJob]) -> list[int]:
    """The jobs' indices, biggest file first: the longest jobs start first and the short
    ones fill in at the end, so the workers finish together (longest-processing-time-first
    scheduling; R. L. Graham, SIAM J. Appl. Math. 17, 1969, from memory)."""
    def size(i: int) -> int:
        try:
            return os.stat(jobs[i].log.path).st_size
        except OSError:  # read and reported by the worker
            return 0

    return sorted(range(len(jobs)), key=lambda i: -size(i))


def _pool(jobs: list[VehicleJob], workers: int, progress: Progress | None
          ) -> list[VehicleSummary | str]:
    out: list[VehicleSummary | str | None] = [None] * len(jobs)
    with _single_thread_env(), ProcessPoolExecutor(max_workers=workers,
                                                   mp_context=_context()) as pool:
        futures = {pool.submit(summarise_vehicle, jobs[i]): i for i in _largest_first(jobs)}
        for done, fut in enumerate(as_completed(futures), start=1):
            out[futures[fut]] = fut.result()
            if progress:
                progress(done, len(jobs))
    return out  # type: ignore[return-value]


def _dask(jobs: list[VehicleJob], scheduler: Any, progress: Progress | None
          ) -> list[VehicleSummary | str]:
    try:
        from distributed import Client
        from distributed import as_completed as dask_completed
    except ImportError:
        raise InputError("scheduler", "dask is not installed; pip install "
                                      "'fuelswitch-workbench[cluster]'") from None
    own = not isinstance(scheduler, Client)
    try:
        client = Client(scheduler) if own else scheduler
    except (OSError, TimeoutError) as exc:
        raise InputError("scheduler", f"cannot reach the dask scheduler {scheduler!r} "
                                      f"({exc.__class__.__name__}); check the address") from None
    try:
        order = _largest_first(jobs)
        futures = client.map(summarise_vehicle, [jobs[i] for i in order], pure=False)
        index = {f.key: i for i, f in zip(order, futures, strict=True)}
        out: list[VehicleSummary | str | None] = [None] * len(jobs)
        for done, fut in enumerate(dask_completed(futures), start=1):
            out[index[fut.key]] = fut.result()
            if progress:
                progress(done, len(jobs))
        return out  # type: ignore[return-value]
    finally:
        if own:
            client.close()


def run_fleet(
    source: str | Path | FleetSource,
    vehicle: Vehicle,
    engine_map: EngineMap,
    *,
    settings: DutySettings | None = None,
    rules: LogRules | None = None,
    engine: str | Any = "process",
    workers: int | None = None,
    progress: Progress | None = None,
    batch_rows: int = CSV_CHUNK_ROWS,
) -> FleetRun:
    """Run every vehicle of a fleet's logs and sum the class.

    Parameters
    ----------
    source : str or pathlib.Path or FleetSource
        Logger file, folder, glob pattern or Parquet dataset (``docs/fleet-logs.md``), or
        its vehicles as listed by :func:`workbench.io.logs.list_vehicles`.
    vehicle : Vehicle
        The class's vehicle.
    engine_map : EngineMap
        Its engine map, adjusted for the fuel.
    settings : DutySettings, optional
        Accessories, engine-off at stops, extra idling.
    rules : LogRules, optional
        Cleaning rules; the defaults of :class:`LogRules` when omitted.
    engine : str or distributed.Client
        ``"serial"``, ``"process"`` (local pool) or a dask scheduler address / client.
    workers : int, optional
        Processes of the local pool; the machine's cores when omitted.
    progress : callable, optional
        Called with (vehicles done, vehicles in all) as each vehicle finishes.
    batch_rows : int
        Rows read at a time from each file.

    Returns
    -------
    FleetRun

    Raises
    ------
    InputError
        The source names nothing readable, or no vehicle could be used.
    """
    found = source if isinstance(source, FleetSource) else list_vehicles(source)
    jobs = [VehicleJob(log, vehicle, engine_map, settings or DutySettings(),
                       rules or LogRules(), batch_rows) for log in found.vehicles]
    workers = workers or os.cpu_count() or 1
    if engine == "serial" or (engine == "process" and (workers == 1 or len(jobs) == 1)):
        results = _serial(jobs, progress)
    elif engine == "process":
        results = _pool(jobs, workers, progress)
    else:
        results = _dask(jobs, engine, progress)
    summaries = tuple(r for r in results if isinstance(r, VehicleSummary))
    problems = found.problems + tuple(r for r in results if isinstance(r, str))
    if not summaries:
        raise InputError(str(source), "no vehicle could be used: " + "; ".join(problems[:3]))
    return FleetRun(summaries, problems, aggregate(summaries),
                    found=len(found.vehicles) + len(found.problems))


def calibrate_fleet(run: FleetRun, records: FuelRecords, *, energy_per_amount: float
                    ) -> tuple[Calibration, tuple[str, ...]]:
    """Fit the class's calibration factor to the fuel its vehicles bought.

    Parameters
    ----------
    run : FleetRun
        The class's vehicles run from their logs.
    records : FuelRecords
        Their fuel-card fills (``workbench.io.fuelcards.read_fuel_cards``).
    energy_per_amount : float
        Fuel energy (LHV) per unit of the cards' amount [J/m3 for litres, J/kg for kg].

    Returns
    -------
    Calibration
    tuple of str
        Vehicles left out of the fit (too few fills, not in the logs, not on the cards).
    """
    observed, notes = observed_use(records)
    modelled = {s.vehicle: s.energy_per_m for s in run.summaries}
    notes += [f"{records.name}: vehicle {v} is not in the logs" for v in sorted(
        set(observed) - set(modelled))]
    notes += [f"vehicle {v} has logs but no usable fuel cards" for v in sorted(
        set(modelled) - set(observed))]
    return calibrate(observed, modelled, energy_per_amount=energy_per_amount), tuple(notes)


def card_energy_per_amount(fuel: Fuel, lhv_mass: float, basis: str, where: str) -> float:
    """Fuel energy per unit a fuel card counts: per litre bought or per kg.

    Parameters
    ----------
    fuel : Fuel
        The fuel the cards bought (its ``liquid_density`` turns litres into mass).
    lhv_mass : float
        Its lower heating value [J/kg].
    basis : {"volume", "mass"}
        What the cards count (``FuelRecords.basis``).
    where : str
        Named in the error.

    Returns
    -------
    float
        [J/m3] for volume cards, [J/kg] for mass cards.

    Raises
    ------
    InputError
        Volume cards and a fuel with no liquid density.
    """
    if basis == "mass":
        return lhv_mass
    if not fuel.liquid_density:
        raise InputError(where, f"{fuel.id} has no liquid density; fuel cards in litres need "
                                "one (use kg cards for gases)")
    return lhv_mass * fuel.liquid_density


def class_tables(agg: ClassAggregate, engine_map: EngineMap, bins: int
                 ) -> tuple[np.ndarray, np.ndarray, pd.DataFrame]:
    """NOx weighting bins and the operating-point table of a class from its histograms.

    Parameters
    ----------
    agg : ClassAggregate
        The class's summed histograms (edges of
        :func:`workbench.models.fused.histogram_edges`).
    engine_map : EngineMap
        The map the histograms were built on.
    bins : int
        Engine-speed groups for the NOx weighting.

    Returns
    -------
    numpy.ndarray
        Fuel-weighted mean engine speed of each group [rev/min].
    numpy.ndarray
        Fuel energy of each group [J].
    pandas.DataFrame
        ``engine_speed_rpm``, ``torque_nm``, ``seconds``, ``brake_efficiency`` of each
        occupied cell (bin centres).

    Notes
    -----
    The speed bins holding fuel are split into ``bins`` runs of neighbouring bins; a trace
    profile bins the speeds of its own points instead (same count, edges from its range).
    """
    s_edges, t_edges = histogram_edges(engine_map)
    s_mid = (s_edges[:-1] + s_edges[1:]) / 2
    t_mid = (t_edges[:-1] + t_edges[1:]) / 2
    fuel_by_speed = agg.fuel.sum(axis=1)
    used = np.flatnonzero(fuel_by_speed > 0)
    groups = [g for g in np.array_split(used, min(bins, used.size)) if g.size]
    weights = np.array([fuel_by_speed[g].sum() for g in groups])
    speeds = np.array([np.average(s_mid[g], weights=fuel_by_speed[g]) for g in groups])
    sc, tc = np.meshgrid(s_mid, t_mid, indexing="ij")
    mask = agg.seconds > 0
    eff = engine_map.efficiency_at(sc[mask] * RPM, tc[mask])
    points = pd.DataFrame({"engine_speed_rpm": sc[mask], "torque_nm": tc[mask],
                           "seconds": agg.seconds[mask], "brake_efficiency": eff})
    return speeds, weights, points


@dataclass(frozen=True, eq=False)
class FleetDutyRun(DutyRun):
    """A class's duty from its vehicles' logs: the km-weighted :class:`DutyRun`, and the run.

    Attributes
    ----------
    fleet : FleetRun
        The vehicles used and left out, their summaries and spread.
    """

    fleet: FleetRun


def fleet_duty(logs: FleetSource, vehicle: Vehicle, engine_map: EngineMap, *,
               settings: DutySettings | None = None, engine: str | Any = "process"
               ) -> FleetDutyRun:
    """The study's duty of a class from its vehicles' logs.

    Parameters
    ----------
    logs : FleetSource
        The vehicles, listed when the study was checked.
    vehicle : Vehicle
    engine_map : EngineMap
        Adjusted for the option's fuel.
    settings : DutySettings, optional
    engine : str or distributed.Client
        As :func:`run_fleet`.

    Returns
    -------
    FleetDutyRun
        Energy of the class (its vehicles reported to the progress of :func:`reporting`
        as they finish), NOx weighting over :data:`NOX_SPEED_BINS` groups of its
        histogram's speed bins, its operating points, and the run.
    """
    run = run_fleet(logs, vehicle, engine_map, settings=settings, engine=engine,
                    progress=_REPORT.get())
    speeds, weights, points = class_tables(run.aggregate, engine_map, NOX_SPEED_BINS)
    return FleetDutyRun(run.aggregate.energy, speeds, weights, points, run)


def vehicle_rows(vehicle_class: str, duty: DutyRun, fuel: Fuel, sheet: FuelSheet,
                 calibration: Calibration | None = None) -> list[dict[str, Any]]:
    """Rows of the study's ``vehicles`` table for one class: each vehicle on the given fuel.

    Parameters
    ----------
    vehicle_class : str
        Class id.
    duty : DutyRun
        The class's duty; a :class:`FleetDutyRun` gives one row per vehicle used, any other
        duty none.
    fuel : Fuel
        The fuel the figures are on (the study passes the baseline's).
    sheet : FuelSheet
        Its property sheet.
    calibration : Calibration, optional
        The class's fit against its fuel cards (on the baseline).

    Returns
    -------
    list of dict
        ``vehicle_class``, ``vehicle``, ``fuel``, ``distance_logged_km``,
        ``fuel_energy_mj_per_km`` (modelled, before calibration), ``fuel_l_per_100km`` (NaN
        for a fuel not sold as a liquid), ``share_idle``, ``outlier`` (outside Tukey's fences
        of the class's L/100 km, or of its MJ/km when the fuel has no litres;
        :func:`workbench.models.fleet.tukey_outliers`), and from the fuel cards
        ``observed_mj_per_km`` and ``residual_mj_per_km`` (observed minus the calibrated
        model; :meth:`Calibration.per_vehicle`), NaN without cards or for a vehicle not in
        the fit.
    """
    if not isinstance(duty, FleetDutyRun):
        return []
    per_m = [fuel_per_distance_for(s.energy, fuel, sheet) for s in duty.fleet.summaries]
    litres = np.array([p.fuel_volume_per_m * 1e8 for p in per_m])
    energy = np.array([p.fuel_energy_per_m * 1e-3 for p in per_m])
    outlier = tukey_outliers(litres if np.isfinite(litres).all() else energy)
    ids = [s.vehicle for s in duty.fleet.summaries]
    cards = (calibration.per_vehicle(ids) if calibration is not None else
             pd.DataFrame(np.nan, index=range(len(ids)),
                          columns=["observed_mj_per_km", "residual_mj_per_km"]))
    return [{"vehicle_class": vehicle_class, "vehicle": s.vehicle, "fuel": fuel.id,
             "distance_logged_km": s.energy.distance / 1e3, "fuel_energy_mj_per_km": energy[i],
             "fuel_l_per_100km": litres[i], "share_idle": s.energy.share_idle,
             "outlier": bool(outlier[i]),
             "observed_mj_per_km": float(cards["observed_mj_per_km"].iloc[i]),
             "residual_mj_per_km": float(cards["residual_mj_per_km"].iloc[i])}
            for i, s in enumerate(duty.fleet.summaries)]
