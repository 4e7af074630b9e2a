"""Duty profiles: what the vehicle is asked to do.

A duty is either a speed–time trace (with optional road grade and payload per sample) or a
time-at-mode table (engine speed, torque, time) for engines whose load is known directly. The
settings that are not in the trace (accessory power, engine-off at stops, extra idling) live in
:class:`DutySettings`.

The profile files are read in :mod:`workbench.io.profiles` (format in ``docs/duty.md``); here
are only the objects, made from arrays. Everything is SI: seconds, metres per second, grade as
rise over run, kilograms, radians per second, N m. A trace or table is identified by its
content (:attr:`DutyTrace.digest`): two with the same numbers are equal and hash alike, so the
caches key on what a profile contains, not on the file it came from.

Conventions
-----------
A trace of ``N`` samples has ``N - 1`` intervals. Interval ``i`` runs from sample ``i`` to
``i + 1``; its distance is the trapezoid ``dt * (v[i] + v[i+1]) / 2`` and its acceleration is
``(v[i+1] - v[i]) / dt`` (constant acceleration between samples). Grade and payload are held
from the interval's first sample. An interval whose mean speed is below :data:`STOP_SPEED` is a
stop.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from workbench.core.cache import content_digest
from workbench.core.errors import InputError

#: Mean interval speed below which the vehicle counts as stopped [m/s] (0.36 km/h).
STOP_SPEED = 0.1

#: Largest road grade accepted, as rise over run [-]; steeper values are almost always a unit slip.
MAX_GRADE = 0.3

def _readonly(a: np.ndarray) -> np.ndarray:
    a = np.ascontiguousarray(a, dtype=float)
    a.setflags(write=False)
    return a


def _seconds(name: str, attr: str, value: object) -> np.ndarray:
    """``value`` as float seconds: datetime64 from the Unix epoch, timedelta64 as a duration.

    A pandas ``DatetimeIndex`` or ``TimedeltaIndex`` arrives here as datetime64 / timedelta64;
    a plain float conversion would read its nanosecond integers as seconds.
    """
    a = np.asarray(value)
    if a.dtype.kind == "M":
        return (a.astype("datetime64[ns]").astype(np.int64) / 1e9).ravel()
    if a.dtype.kind == "m":
        return (a.astype("timedelta64[ns]").astype(np.int64) / 1e9).ravel()
    if a.dtype.kind in "OUS":
        raise InputError(name, f"{attr} must be numbers of seconds or datetime64/timedelta64, "
                               f"not {a.dtype.name} values (a time-zone-aware index: "
                               "pass index.tz_convert(None))")
    return a.astype(float).ravel()


def _label(name: str, rows: Sequence[int] | None, offset: int, i: int) -> str:
    if rows is not None:
        return f"{name} row {int(rows[i])}"
    return f"{name} sample {offset + i}"


@dataclass(frozen=True, eq=False)
class DutyTrace:
    """A speed–time trace, validated on construction.

    Parameters
    ----------
    time : numpy.ndarray
        Sample times, strictly increasing [s]. ``datetime64`` values (a pandas
        ``DatetimeIndex``) become seconds since the Unix epoch and ``timedelta64`` values
        seconds; text or objects are refused.
    speed : numpy.ndarray
        Vehicle speed at each sample, finite and >= 0 [m/s].
    grade : numpy.ndarray, optional
        Road grade as rise over run [-] (0.05 = 5 %); flat when omitted.
    payload : numpy.ndarray, optional
        Payload carried at each sample [kg]; the vehicle's default payload when omitted.
    name : str
        What error messages call the trace (usually the file path).
    rows : numpy.ndarray or range, optional
        File line number of each sample, for error messages.
    offset : int
        Index of the first sample in the whole trace (set on chunks).

    Raises
    ------
    InputError
        Fewer than two samples, time not increasing, negative or missing speed, grade steeper
        than :data:`MAX_GRADE`, negative payload.

    Notes
    -----
    Equality and hashing go by :attr:`digest` (the samples), not by name or row numbers.
    """

    time: np.ndarray
    speed: np.ndarray
    grade: np.ndarray | None = None
    payload: np.ndarray | None = None
    name: str = "trace"
    rows: Sequence[int] | None = field(default=None, repr=False)
    offset: int = 0

    def __post_init__(self) -> None:
        for attr in ("time", "speed", "grade", "payload"):
            value = getattr(self, attr)
            if value is not None:
                value = _readonly(_seconds(self.name, attr, value) if attr == "time"
                                  else np.asarray(value, dtype=float).ravel())
                object.__setattr__(self, attr, value)
        n = self.time.size
        if n < 2:
            raise InputError(self.name, "a trace needs at least two samples")
        for attr in ("speed", "grade", "payload"):
            value = getattr(self, attr)
            if value is not None and value.size != n:
                raise InputError(self.name, f"{attr} has {value.size} samples, time has {n}")
        self._check(~np.isfinite(self.time), "time is missing or not a number")
        self._check(np.diff(self.time) <= 0.0, "time is not increasing; sort the rows by time",
                    shift=1)
        self._check(~np.isfinite(self.speed), "speed is missing or not a number")
        self._check(self.speed < 0.0, "speed is negative; speeds must be >= 0")
        if self.grade is not None:
            self._check(~np.isfinite(self.grade), "grade is missing or not a number")
            self._check(np.abs(self.grade) > MAX_GRADE,
                        f"grade is steeper than {MAX_GRADE:.0%}; check the grade unit")
        if self.payload is not None:
            self._check(~np.isfinite(self.payload) | (self.payload < 0.0),
                        "payload is missing or negative")

    @cached_property
    def digest(self) -> str:
        """SHA-256 of the samples (time, speed, grade, payload): the trace's identity."""
        return content_digest("trace", self.time, self.speed, self.grade, self.payload)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, DutyTrace) and self.digest == other.digest

    def __hash__(self) -> int:
        return hash(self.digest)

    def _check(self, bad: np.ndarray, message: str, *, shift: int = 0) -> None:
        if bad.any():
            i = int(np.argmax(bad)) + shift
            raise InputError(_label(self.name, self.rows, self.offset, i), message)

    def where(self, i: int) -> str:
        """Name sample ``i`` of this trace for an error message (file row or sample index)."""
        return _label(self.name, self.rows, self.offset, i)

    def chunks(self, size: int) -> Iterator[DutyTrace]:
        """Split into traces of at most ``size`` intervals that share their end samples.

        Parameters
        ----------
        size : int
            Intervals per chunk (>= 1).

        Yields
        ------
        DutyTrace
            Consecutive pieces; their intervals together are exactly this trace's intervals.
        """
        n = self.time.size
        for start in range(0, n - 1, size):
            stop = min(start + size + 1, n)
            yield DutyTrace(
                time=self.time[start:stop],
                speed=self.speed[start:stop],
                grade=None if self.grade is None else self.grade[start:stop],
                payload=None if self.payload is None else self.payload[start:stop],
                name=self.name,
                rows=None if self.rows is None else self.rows[start:stop],
                offset=self.offset + start,
            )


@dataclass(frozen=True, eq=False)
class ModeTable:
    """Time spent at engine operating points, for engines whose load is known directly.

    Parameters
    ----------
    engine_speed : numpy.ndarray
        Engine speed of each mode [rad/s].
    torque : numpy.ndarray
        Brake torque of each mode [N m]; 0 at idle.
    duration : numpy.ndarray
        Time spent in each mode [s].
    distance : float, optional
        Distance covered over the whole table [m]; needed for per-km results.
    name : str
        What error messages call the table.

    Notes
    -----
    Equality and hashing go by :attr:`digest` (the modes and distance), not by name.
    """

    engine_speed: np.ndarray
    torque: np.ndarray
    duration: np.ndarray
    distance: float | None = None
    name: str = "mode table"

    def __post_init__(self) -> None:
        for attr in ("engine_speed", "torque", "duration"):
            object.__setattr__(self, attr, _readonly(np.asarray(getattr(self, attr)).ravel()))
        n = self.engine_speed.size
        if n == 0 or self.torque.size != n or self.duration.size != n:
            raise InputError(self.name, "engine_speed, torque and time need one value per mode")
        for attr, values, ok in (
            ("engine_speed", self.engine_speed, self.engine_speed > 0.0),
            ("torque", self.torque, self.torque >= 0.0),
            ("time", self.duration, self.duration >= 0.0),
        ):
            bad = ~(np.isfinite(values) & ok)
            if bad.any():
                raise InputError(f"{self.name} mode {int(np.argmax(bad)) + 1}",
                                 f"{attr} is missing or out of range (speed > 0, torque and "
                                 "time >= 0)")
        if self.distance is not None and not (math.isfinite(self.distance)
                                              and self.distance > 0.0):
            raise InputError(self.name, "distance must be a positive number of km")

    @cached_property
    def digest(self) -> str:
        """SHA-256 of the modes and distance: the table's identity."""
        return content_digest("modes", self.engine_speed, self.torque, self.duration,
                              self.distance)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, ModeTable) and self.digest == other.digest

    def __hash__(self) -> int:
        return hash(self.digest)


@dataclass(frozen=True)
class DutySettings:
    """Settings of a duty that the trace does not carry.

    Parameters
    ----------
    accessory_power : float
        Mechanical power drawn from the engine by accessories (air-conditioning compressor,
        alternator for lights and electronics) whenever the engine runs [W].
    engine_off_at_stops : bool
        Stop the engine at every stop (start-stop system or driver habit): no idle fuel there.
    extra_idle_share : float
        Share of the total operating time spent idling *in addition to* the trace, e.g. a taxi
        waiting at a rank with the engine running [-], in [0, 0.9].
    """

    accessory_power: float = 0.0
    engine_off_at_stops: bool = False
    extra_idle_share: float = 0.0

    def __post_init__(self) -> None:
        if not (math.isfinite(self.accessory_power) and 0.0 <= self.accessory_power <= 1.0e5):
            raise InputError("accessory_power", "must be between 0 and 100 kW")
        if not (math.isfinite(self.extra_idle_share) and 0.0 <= self.extra_idle_share <= 0.9):
            raise InputError("extra_idle_share", "must be a share between 0 and 0.9")


@dataclass(frozen=True)
class DutyStats:
    """Summary of a speed trace.

    Attributes
    ----------
    distance : float
        Distance covered [m].
    duration : float
        Time covered [s].
    mean_speed : float
        Distance over duration, stops included [m/s].
    max_speed : float
        Highest sample speed [m/s].
    idle_share : float
        Share of the time spent stopped [-].
    stops_per_m : float
        Number of stops (moving -> standing transitions, a trace that starts standing counts
        one) per metre driven [1/m] (the interfaces show it per km).
    positive_kinetic_energy : float
        Sum of positive changes of v² divided by distance [m/s²].
    """

    distance: float
    duration: float
    mean_speed: float
    max_speed: float
    idle_share: float
    stops_per_m: float
    positive_kinetic_energy: float


def duty_stats(trace: DutyTrace) -> DutyStats:
    """Summary statistics of a speed trace.

    Parameters
    ----------
    trace : DutyTrace
        The trace.

    Returns
    -------
    DutyStats
        Distance, duration, mean and maximum speed, idle share, stops per metre and positive
        kinetic energy.

    Notes
    -----
    Positive kinetic energy, ``PKE = sum(max(v[i+1]**2 - v[i]**2, 0)) / distance`` [m/s²], is
    the usual measure of how aggressive a drive cycle is; it is twice the kinetic energy added
    per unit mass and distance.
    """
    t, v = trace.time, trace.speed
    dt = np.diff(t)
    v_mean = 0.5 * (v[1:] + v[:-1])
    distance = float(np.sum(dt * v_mean))
    duration = float(t[-1] - t[0])
    stopped = v_mean < STOP_SPEED
    stops = int(np.count_nonzero(stopped[1:] & ~stopped[:-1]) + int(stopped[0]))
    dv2 = np.diff(v * v)
    pke = float(np.sum(dv2[dv2 > 0.0]))
    return DutyStats(
        distance=distance,
        duration=duration,
        mean_speed=distance / duration,
        max_speed=float(v.max()),
        idle_share=float(np.sum(dt[stopped])) / duration,
        stops_per_m=stops / distance if distance > 0.0 else math.nan,
        positive_kinetic_energy=pke / distance if distance > 0.0 else math.nan,
    )
