"""Duty profiles: what the vehicle is asked to do.

A duty is either a speed–time trace (with optional road grade and payload per sample) or a
time-at-mode table (engine speed, torque, time) for engines whose load is known directly. The
settings that are not in the trace (accessory power, engine-off at stops, extra idling) live in
:class:`DutySettings`.

Readers (:func:`read_trace`, :func:`read_mode_table`, :func:`read_profile`) take CSV files whose
column names carry their units (``time_s,speed_km_per_h,grade_percent,payload_kg``) or whose
units are given in a side file ``<stem>.units.toml``; see ``docs/duty.md``. Everything inside is
SI: seconds, metres per second, grade as rise over run, kilograms, radians per second, N m.

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
import re
import tomllib
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from workbench.core.constants import RPM
from workbench.core.errors import InputError

#: Mean interval speed below which the vehicle counts as stopped [m/s] (0.36 km/h).
STOP_SPEED = 0.1

#: Largest road grade accepted, as rise over run [-]; steeper values are almost always a unit slip.
MAX_GRADE = 0.3

_TIME_UNITS = {"s": 1.0, "min": 60.0, "h": 3600.0}

#: Known trace columns: quantity -> {unit token: factor to SI}.
TRACE_COLUMNS: dict[str, dict[str, float]] = {
    "time": _TIME_UNITS,
    "speed": {"km_per_h": 1.0 / 3.6, "m_per_s": 1.0, "mph": 0.44704},
    "grade": {"percent": 0.01, "fraction": 1.0},
    "payload": {"kg": 1.0, "t": 1000.0},
}

#: Known time-at-mode columns: quantity -> {unit token: factor to SI}.
MODE_COLUMNS: dict[str, dict[str, float]] = {
    "engine_speed": {"rpm": RPM, "rad_per_s": 1.0},
    "torque": {"n_m": 1.0, "kn_m": 1000.0},
    "time": _TIME_UNITS,
}

_META_LINE = re.compile(r"^#\s*(distance_km)\s*:\s*(.*)$")


def _readonly(a: np.ndarray) -> np.ndarray:
    a = np.ascontiguousarray(a, dtype=float)
    a.setflags(write=False)
    return a


def _label(name: str, rows: np.ndarray | None, offset: int, i: int) -> str:
    if rows is not None:
        return f"{name} row {int(rows[i])}"
    return f"{name} sample {offset + i}"


@dataclass(frozen=True, eq=False)
class DutyTrace:
    """A speed–time trace, validated on construction.

    Parameters
    ----------
    time : numpy.ndarray
        Sample times, strictly increasing [s].
    speed : numpy.ndarray
        Vehicle speed at each sample, finite and >= 0 [m/s].
    grade : numpy.ndarray, optional
        Road grade as rise over run [-] (0.05 = 5 %); flat when omitted.
    payload : numpy.ndarray, optional
        Payload carried at each sample [kg]; the vehicle's default payload when omitted.
    name : str
        What error messages call the trace (usually the file path).
    rows : numpy.ndarray, optional
        File line number of each sample, for error messages.
    offset : int
        Index of the first sample in the whole trace (set on chunks).

    Raises
    ------
    InputError
        Fewer than two samples, time not increasing, negative or missing speed, grade steeper
        than :data:`MAX_GRADE`, negative payload.
    """

    time: np.ndarray
    speed: np.ndarray
    grade: np.ndarray | None = None
    payload: np.ndarray | None = None
    name: str = "trace"
    rows: np.ndarray | None = field(default=None, repr=False)
    offset: int = 0

    def __post_init__(self) -> None:
        for attr in ("time", "speed", "grade", "payload"):
            value = getattr(self, attr)
            if value is not None:
                value = _readonly(np.asarray(value, dtype=float).ravel())
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


# ----------------------------------------------------------------------------- readers


@dataclass(frozen=True)
class _Table:
    header: list[str]
    columns: dict[str, np.ndarray]  # raw column name -> values (NaN = missing)
    rows: np.ndarray  # file line numbers
    distance_km: float | None


def _read_table(path: Path) -> _Table:
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(str(path), "file not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(str(path), f"cannot read the file ({exc.__class__.__name__})") from None
    header: list[str] | None = None
    cells: list[list[str]] = []
    rows: list[int] = []
    distance_km = None
    for lineno, line in enumerate(text.splitlines(), start=1):
        stripped = line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            meta = _META_LINE.match(stripped)
            if meta:
                try:
                    distance_km = float(meta.group(2))
                except ValueError:
                    raise InputError(f"{path} row {lineno}",
                                     "distance_km must be a number, e.g. '# distance_km: 412'"
                                     ) from None
            continue
        parts = [c.strip() for c in stripped.split(",")]
        if header is None:
            header = [c.lower() for c in parts]
            continue
        if len(parts) != len(header):
            raise InputError(f"{path} row {lineno}",
                             f"has {len(parts)} fields, the header has {len(header)}")
        cells.append(parts)
        rows.append(lineno)
    if header is None or not cells:
        raise InputError(str(path), "no header and data rows found")
    columns = {}
    for j, name in enumerate(header):
        raw = np.array([r[j] for r in cells])
        values = np.full(raw.size, np.nan)
        filled = raw != ""
        try:
            values[filled] = raw[filled].astype(float)
        except ValueError:
            for k in np.flatnonzero(filled):
                try:
                    float(raw[k])
                except ValueError:
                    raise InputError(f"{path} row {rows[k]}",
                                     f"{name} '{raw[k]}' is not a number") from None
        columns[name] = values
    return _Table(header=header, columns=columns, rows=np.array(rows), distance_km=distance_km)


def _side_units(path: Path) -> dict[str, str]:
    side = path.with_name(path.stem + ".units.toml")
    if not side.exists():
        return {}
    try:
        data = tomllib.loads(side.read_text(encoding="utf-8"))
    except (OSError, tomllib.TOMLDecodeError) as exc:
        raise InputError(str(side), f"not valid TOML ({exc})") from None
    units = data.get("units")
    if not isinstance(units, dict) or not all(isinstance(u, str) for u in units.values()):
        raise InputError(str(side), "needs a [units] table of column = \"unit\" strings")
    return {k.lower(): v for k, v in units.items()}


def _resolve(path: Path, table: _Table, spec: dict[str, dict[str, float]],
             required: tuple[str, ...]) -> dict[str, np.ndarray]:
    """Map the table's columns to SI arrays keyed by quantity, checking units."""
    side = _side_units(path)
    found: dict[str, np.ndarray] = {}
    # longest quantity names first so that "engine_speed" wins over "speed"
    quantities = sorted(spec, key=len, reverse=True)
    for col in table.header:
        for q in quantities:
            if col == q:
                unit = side.get(col)
                if unit is None:
                    raise InputError(
                        f"{path} column {col}",
                        f"no unit: name it like {q}_{next(iter(spec[q]))} or give "
                        f"{path.stem}.units.toml with [units] {col} = \"...\"")
            elif col.startswith(q + "_"):
                unit = col[len(q) + 1:]
            else:
                continue
            if unit not in spec[q]:
                raise InputError(f"{path} column {col}",
                                 f"unknown unit '{unit}' for {q}; use one of "
                                 f"{', '.join(spec[q])}")
            if q in found:
                raise InputError(f"{path} column {col}", f"{q} is given twice")
            found[q] = table.columns[col] * spec[q][unit]
            break
    missing = [q for q in required if q not in found]
    if missing:
        raise InputError(str(path), f"missing column {missing[0]} (e.g. "
                                    f"{missing[0]}_{next(iter(spec[missing[0]]))})")
    return found


def read_trace(path: str | Path) -> DutyTrace:
    """Read a speed–time trace from CSV.

    Parameters
    ----------
    path : str or pathlib.Path
        CSV with a header naming each column and its unit (``time_s,speed_km_per_h`` and
        optionally ``grade_percent``, ``payload_kg``); lines starting with ``#`` are comments.

    Returns
    -------
    DutyTrace
        The trace in SI units, named after the file.

    Raises
    ------
    InputError
        Missing file or columns, unknown units, bad numbers, time not increasing, negative
        speeds; the message names the file and row.
    """
    path = Path(path)
    table = _read_table(path)
    cols = _resolve(path, table, TRACE_COLUMNS, ("time", "speed"))
    return DutyTrace(time=cols["time"], speed=cols["speed"], grade=cols.get("grade"),
                     payload=cols.get("payload"), name=str(path), rows=table.rows)


def read_mode_table(path: str | Path) -> ModeTable:
    """Read a time-at-mode table from CSV.

    Parameters
    ----------
    path : str or pathlib.Path
        CSV with columns like ``engine_speed_rpm,torque_n_m,time_h``; a comment line
        ``# distance_km: 412`` gives the distance covered while the table was recorded.

    Returns
    -------
    ModeTable
        The modes in SI units.

    Raises
    ------
    InputError
        Missing file or columns, unknown units, bad numbers.
    """
    path = Path(path)
    table = _read_table(path)
    cols = _resolve(path, table, MODE_COLUMNS, ("engine_speed", "torque", "time"))
    for q, values in cols.items():
        bad = ~np.isfinite(values)
        if bad.any():
            raise InputError(f"{path} row {table.rows[np.argmax(bad)]}", f"{q} is missing")
    distance = None if table.distance_km is None else table.distance_km * 1000.0
    return ModeTable(engine_speed=cols["engine_speed"], torque=cols["torque"],
                     duration=cols["time"], distance=distance, name=str(path))


def read_profile(path: str | Path) -> DutyTrace | ModeTable:
    """Read a duty profile: a time-at-mode table if it has an engine-speed column, else a trace.

    Parameters
    ----------
    path : str or pathlib.Path
        A trace CSV or a time-at-mode CSV.

    Returns
    -------
    DutyTrace or ModeTable
    """
    path = Path(path)
    table = _read_table(path)
    if any(c.startswith("engine_speed") for c in table.header):
        return read_mode_table(path)
    return read_trace(path)


def format_trace_csv(trace: DutyTrace, *, comments: tuple[str, ...] = ()) -> str:
    """Render a trace as CSV text in the shipped format (km/h, percent, kg).

    Parameters
    ----------
    trace : DutyTrace
        The trace.
    comments : tuple of str
        Lines written first, each prefixed with ``# ``.

    Returns
    -------
    str
        CSV text with header ``time_s,speed_km_per_h[,grade_percent][,payload_kg]``.
    """
    cols = [np.char.mod("%.10g", trace.time), np.char.mod("%.2f", trace.speed * 3.6)]
    header = ["time_s", "speed_km_per_h"]
    if trace.grade is not None:
        cols.append(np.char.mod("%.2f", trace.grade * 100.0))
        header.append("grade_percent")
    if trace.payload is not None:
        cols.append(np.char.mod("%.0f", trace.payload))
        header.append("payload_kg")
    body = [",".join(fields) for fields in zip(*cols, strict=True)]
    lines = [f"# {c}" for c in comments] + [",".join(header), *body]
    return "\n".join(lines) + "\n"
