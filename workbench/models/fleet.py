"""A vehicle class as its vehicles: per-vehicle duty summaries and their km-weighted aggregate.

Each vehicle's cleaned trips run through the fused pipeline once; what is kept of it is a
:class:`VehicleSummary` (energy sums, operating-point histograms, what cleaning dropped). The
class is the sum of its vehicles (:func:`aggregate`): its fuel energy per km is total fuel over
total distance, which is the km-weighted mean of the vehicles' energy per km; its spread is
the P10–P90 of the vehicles' energy per km (each vehicle counted once), and the standard error
of the km-weighted mean is the ratio estimator's (:func:`weighted_mean_se`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, fields

import numpy as np
import pandas as pd

from workbench.core.errors import InputError
from workbench.models.engine import DutyEnergy

#: Quantiles of the between-vehicle spread [-].
SPREAD_QUANTILES = (0.10, 0.90)

#: Width of Tukey's fences in interquartile ranges [-] (Tukey, 1977, "Exploratory Data
#: Analysis"; 1.5 is common practice, no source).
TUKEY_K = 1.5


@dataclass(frozen=True, eq=False)
class VehicleSummary:
    """One vehicle's duty, summarised.

    Attributes
    ----------
    vehicle : str
        Vehicle id.
    energy : DutyEnergy
        Energy flows over all its trips (extra idling included).
    seconds : numpy.ndarray
        Time burning fuel per (engine speed, torque) bin [s].
    fuel : numpy.ndarray
        Fuel energy per bin [J].
    tally : dict of str to float
        What cleaning kept and dropped (:class:`~workbench.models.logs.LogTally`).
    """

    vehicle: str
    energy: DutyEnergy
    seconds: np.ndarray
    fuel: np.ndarray
    tally: dict[str, float]

    @property
    def energy_per_m(self) -> float:
        """Fuel energy per distance, LHV basis [J/m]."""
        return self.energy.fuel_energy / self.energy.distance


@dataclass(frozen=True, eq=False)
class ClassAggregate:
    """The km-weighted sum of a class's vehicles.

    Attributes
    ----------
    energy : DutyEnergy
        Sum of the vehicles' energy flows.
    energy_per_m : float
        Total fuel energy over total distance [J/m].
    spread_per_m : tuple of float
        P10 and P90 of the vehicles' energy per distance [J/m].
    seconds, fuel : numpy.ndarray
        Summed operating-point histograms [s], [J].
    vehicles : int
        Vehicles in the aggregate.
    mean_se_per_m : float
        Standard error of ``energy_per_m`` as an estimate of the class's mean [J/m]
        (:func:`weighted_mean_se`; NaN for one vehicle).
    effective_vehicles : float
        Kish's effective number of vehicles of the km weights, ``(sum d)^2 / sum d^2`` [-].
    """

    energy: DutyEnergy
    energy_per_m: float
    spread_per_m: tuple[float, float]
    seconds: np.ndarray
    fuel: np.ndarray
    vehicles: int
    mean_se_per_m: float = float("nan")
    effective_vehicles: float = float("nan")


def weighted_mean_se(values: Sequence[float] | np.ndarray,
                     weights: Sequence[float] | np.ndarray) -> tuple[float, float, float]:
    """Weighted mean, its standard error and the effective number of the weights.

    Parameters
    ----------
    values : sequence of float
        One figure per vehicle, e.g. fuel energy per distance ``r_i`` [any unit].
    weights : sequence of float
        Its weight, e.g. distance driven ``d_i`` [any unit, positive].

    Returns
    -------
    mean : float
        ``R = sum d_i r_i / sum d_i`` [unit of ``values``].
    se : float
        ``sqrt(n / (n - 1) * sum w_i^2 (r_i - R)^2)`` with ``w_i = d_i / sum d``
        [unit of ``values``]; NaN for one value.
    n_eff : float
        Kish's effective number, ``(sum d)^2 / sum d^2 = 1 / sum w_i^2`` [-].

    Notes
    -----
    ``R`` is the ratio estimator ``sum E_i / sum d_i`` (``E_i = d_i r_i``), and ``se`` its
    standard error, ``sqrt(sum (E_i - R d_i)^2 / (n (n - 1))) / mean(d)`` (W. G. Cochran,
    *Sampling Techniques*, 3rd ed., Wiley 1977, ch. 6, without the finite-population
    correction; from memory), the same estimator as the fuel-card calibration
    (``workbench.models.calibration``). With equal weights it is ``s / sqrt(n)``; when the
    deviations share one variance ``sigma^2`` it is about ``sigma / sqrt(n_eff)``.
    """
    r = np.asarray(values, dtype=float)
    d = np.asarray(weights, dtype=float)
    w = d / d.sum()
    mean = float(np.sum(w * r))
    n = r.size
    se = math.sqrt(n / (n - 1) * float(np.sum(w**2 * (r - mean) ** 2))) if n > 1 else math.nan
    return mean, se, float(1.0 / np.sum(w**2))


def aggregate(summaries: Sequence[VehicleSummary]) -> ClassAggregate:
    """Sum a class's vehicle summaries.

    Parameters
    ----------
    summaries : sequence of VehicleSummary
        One per vehicle, each with a positive distance.

    Returns
    -------
    ClassAggregate

    Notes
    -----
    ``sum(E_i) / sum(d_i) = sum(d_i * (E_i / d_i)) / sum(d_i)``: the class's energy per km is
    the distance-weighted mean of the vehicles' energy per km.
    """
    if not summaries:
        raise InputError("profile", "no vehicle could be used; see the problems listed")
    total = {f.name: sum(getattr(s.energy, f.name) for s in summaries)
             for f in fields(DutyEnergy)}
    energy = DutyEnergy(**total)
    per_m = np.array([s.energy_per_m for s in summaries])
    p10, p90 = np.quantile(per_m, SPREAD_QUANTILES)
    _, se, n_eff = weighted_mean_se(per_m, [s.energy.distance for s in summaries])
    return ClassAggregate(
        energy=energy,
        energy_per_m=energy.fuel_energy / energy.distance,
        spread_per_m=(float(p10), float(p90)),
        seconds=np.sum([s.seconds for s in summaries], axis=0),
        fuel=np.sum([s.fuel for s in summaries], axis=0),
        vehicles=len(summaries),
        mean_se_per_m=se,
        effective_vehicles=n_eff,
    )


def vehicle_table(summaries: Sequence[VehicleSummary]) -> pd.DataFrame:
    """One row per vehicle: distance, energy per km, idle share and what cleaning dropped.

    Returns
    -------
    pandas.DataFrame
        Columns ``vehicle``, ``distance_km``, ``hours``, ``fuel_energy_mj_per_km``,
        ``share_idle``, ``share_out_of_map`` and the tally's counts.
    """
    rows = []
    for s in summaries:
        e = s.energy
        rows.append({"vehicle": s.vehicle, "distance_km": e.distance / 1e3,
                     "hours": e.duration / 3600.0,
                     "fuel_energy_mj_per_km": s.energy_per_m / 1e3,
                     "share_idle": e.share_idle, "share_out_of_map": e.share_out_of_map,
                     **s.tally})
    return pd.DataFrame(rows)


def tukey_outliers(values: Sequence[float] | np.ndarray, k: float = TUKEY_K) -> np.ndarray:
    """Which values lie outside Tukey's fences.

    Parameters
    ----------
    values : sequence of float
        One figure per vehicle of a class (e.g. fuel per 100 km) [any unit].
    k : float
        Fence width in interquartile ranges [-].

    Returns
    -------
    numpy.ndarray of bool
        True where a value is below ``Q1 - k * IQR`` or above ``Q3 + k * IQR`` (quartiles by
        linear interpolation, numpy's default); all False for fewer than four values or where
        a value is NaN.
    """
    x = np.asarray(values, dtype=float)
    finite = np.isfinite(x)
    if finite.sum() < 4:
        return np.zeros(x.shape, dtype=bool)
    q1, q3 = np.quantile(x[finite], (0.25, 0.75))
    iqr = q3 - q1
    with np.errstate(invalid="ignore"):
        return finite & ((x < q1 - k * iqr) | (x > q3 + k * iqr))
