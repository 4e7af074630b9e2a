"""Observed fuel from fuel-card fills, and a per-class calibration of the model against it.

Observed consumption uses the full-to-full method: with fills sorted by date, the fuel bought
after the first fill covers the distance between the first and last odometer readings (the
first fill only tops up what was used before the records start). Every fill is assumed to fill
the tank; partial fills even out over many fills.

The calibration factor ``k`` multiplies the modelled fuel energy per km so that the model
matches the fuel bought: with ``F_i`` the observed fuel energy of vehicle ``i`` over its card
distance ``d_i`` and ``M_i = m_i d_i`` the model's (``m_i`` its modelled energy per km from its
logs), ``k = sum F_i / sum M_i`` (a ratio estimator; it weights each vehicle by its fuel).
Its standard error is the ratio estimator's,
``se(k) = sqrt(sum (F_i - k M_i)^2 / (n (n - 1))) / mean(M)`` (W. G. Cochran, *Sampling
Techniques*, 3rd ed., Wiley 1977, ch. 6, without the finite-population correction; from
memory). The residual of each vehicle is its observed energy per km minus ``k m_i``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from workbench.core.errors import InputError


@dataclass(frozen=True, eq=False)
class FuelRecords:
    """Fuel-card fills, SI.

    Attributes
    ----------
    vehicle : numpy.ndarray
        Vehicle id of each fill (str).
    time : numpy.ndarray
        Fill time, seconds since the Unix epoch [s].
    amount : numpy.ndarray
        Fuel bought [m3] (``basis="volume"``) or [kg] (``basis="mass"``).
    odometer : numpy.ndarray
        Odometer reading at the fill [m].
    basis : {"volume", "mass"}
    rows : numpy.ndarray
        File line of each fill, for messages.
    name : str
        File name, for messages.
    """

    vehicle: np.ndarray
    time: np.ndarray
    amount: np.ndarray
    odometer: np.ndarray
    basis: str
    rows: np.ndarray
    name: str = "fuel cards"


@dataclass(frozen=True)
class ObservedUse:
    """A vehicle's fuel bought over a distance (full-to-full).

    Attributes
    ----------
    vehicle : str
    distance : float
        Odometer distance from the first to the last fill [m].
    amount : float
        Fuel bought after the first fill [m3 or kg].
    fills : int
    """

    vehicle: str
    distance: float
    amount: float
    fills: int

    @property
    def amount_per_m(self) -> float:
        """Fuel per distance [m3/m or kg/m]."""
        return self.amount / self.distance


def observed_use(records: FuelRecords) -> tuple[dict[str, ObservedUse], list[str]]:
    """Fuel bought per distance for each vehicle of the records.

    Parameters
    ----------
    records : FuelRecords

    Returns
    -------
    dict of str to ObservedUse
        Vehicles with at least two fills and a positive distance.
    list of str
        One line per vehicle left out and why.

    Raises
    ------
    InputError
        An odometer that goes backwards between two fills (names the row).
    """
    out: dict[str, ObservedUse] = {}
    notes: list[str] = []
    for vid in sorted(set(records.vehicle.tolist())):
        idx = np.flatnonzero(records.vehicle == vid)
        idx = idx[np.lexsort((records.odometer[idx], records.time[idx]))]
        odo = records.odometer[idx]
        back = np.flatnonzero(np.diff(odo) < 0.0)
        if back.size:
            row = records.rows[idx[back[0] + 1]]
            raise InputError(f"{records.name} row {row}",
                             f"odometer of {vid} goes backwards from the fill before; check "
                             "the reading or the date")
        distance = float(odo[-1] - odo[0])
        if idx.size < 2 or distance <= 0.0:
            notes.append(f"{records.name}: vehicle {vid} has {idx.size} fill(s) over "
                         f"{distance / 1e3:.0f} km; needs two fills and some distance")
            continue
        out[vid] = ObservedUse(vid, distance, float(records.amount[idx[1:]].sum()),
                               int(idx.size))
    return out, notes


@dataclass(frozen=True, eq=False)
class Calibration:
    """A class's model against the fuel it bought.

    Attributes
    ----------
    factor : float
        Multiplies the modelled fuel energy per km [-].
    factor_se : float
        Standard error of ``factor`` [-]; NaN with one vehicle.
    vehicles : int
        Vehicles in the fit.
    observed_per_m : float
        Class's observed fuel energy per distance, total over total [J/m].
    modelled_per_m : float
        The model's over the same vehicles and distances [J/m].
    residuals : pandas.DataFrame
        Per vehicle: ``vehicle``, ``card_km``, ``observed_mj_per_km``, ``modelled_mj_per_km``,
        ``calibrated_mj_per_km``, ``residual_mj_per_km``.
    rms_residual_per_m : float
        Root-mean-square of the residuals [J/m].
    """

    factor: float
    factor_se: float
    vehicles: int
    observed_per_m: float
    modelled_per_m: float
    residuals: pd.DataFrame
    rms_residual_per_m: float

    def per_vehicle(self, vehicles: Sequence[str]) -> pd.DataFrame:
        """Observed fuel energy per km and residual of the given vehicles, in their order.

        Parameters
        ----------
        vehicles : sequence of str
            Vehicle ids (e.g. the rows of a per-vehicle table).

        Returns
        -------
        pandas.DataFrame
            ``observed_mj_per_km`` and ``residual_mj_per_km`` (observed minus the calibrated
            model, ``k m_i``) [MJ/km], one row per id; NaN for a vehicle not in the fit.
        """
        cols = ["observed_mj_per_km", "residual_mj_per_km"]
        return (self.residuals.set_index("vehicle")[cols]
                .reindex(pd.Index(list(vehicles), dtype=object)).reset_index(drop=True))


def calibrate(observed: Mapping[str, ObservedUse], modelled_per_m: Mapping[str, float], *,
              energy_per_amount: float) -> Calibration:
    """Fit the per-class factor between modelled and observed fuel energy.

    Parameters
    ----------
    observed : mapping of str to ObservedUse
        From :func:`observed_use`.
    modelled_per_m : mapping of str to float
        Modelled fuel energy per distance of each vehicle [J/m].
    energy_per_amount : float
        Fuel energy (LHV) per unit of the cards' amount [J/m3 or J/kg].

    Returns
    -------
    Calibration

    Raises
    ------
    InputError
        No vehicle is both in the cards and in the logs.
    """
    ids = sorted(set(observed) & set(modelled_per_m))
    if not ids:
        raise InputError("fuel cards", "no vehicle id is both in the fuel cards and in the "
                                       "logs; check the vehicle column")
    d = np.array([observed[v].distance for v in ids])
    fuel = np.array([observed[v].amount for v in ids]) * energy_per_amount  # F_i [J]
    m = np.array([modelled_per_m[v] for v in ids])
    model = m * d  # M_i [J]
    k = float(fuel.sum() / model.sum())
    n = len(ids)
    se = (math.sqrt(float(np.sum((fuel - k * model) ** 2)) / (n * (n - 1))) / float(model.mean())
          if n > 1 else math.nan)
    obs_per_m = fuel / d
    resid = obs_per_m - k * m
    table = pd.DataFrame({"vehicle": ids, "card_km": d / 1e3,
                          "observed_mj_per_km": obs_per_m / 1e3,
                          "modelled_mj_per_km": m / 1e3,
                          "calibrated_mj_per_km": k * m / 1e3,
                          "residual_mj_per_km": resid / 1e3})
    return Calibration(factor=k, factor_se=se, vehicles=n,
                       observed_per_m=float(fuel.sum() / d.sum()),
                       modelled_per_m=float(model.sum() / d.sum()), residuals=table,
                       rms_residual_per_m=float(np.sqrt(np.mean(resid**2))))
