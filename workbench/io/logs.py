"""Readers of vehicle logger exports: CSV or Parquet, one file per vehicle or one long file.

A fleet's logs are named by one *source*: a file, a folder, a glob pattern or a Parquet
dataset (a folder of Parquet files, optionally partitioned ``vehicle=<id>/``).
:func:`list_vehicles` finds the vehicles in it as small picklable :class:`VehicleLog`
descriptions (so worker processes read their own vehicle); :func:`read_batches` streams one
vehicle's raw samples in SI as :class:`~workbench.models.logs.LogBatch` es for
:func:`~workbench.models.logs.clean_log`. Column names and units: ``docs/fleet-logs.md``.

Columns are found by name (case, spaces and brackets do not matter: ``Speed (km/h)`` is
``speed_km_per_h``); units come from the name or from a side file ``<stem>.units.toml``
(``[units] speed = "mph"``). Other columns, text or not, are ignored. CSV files may start with
a byte-order mark, separate fields by ``,``, ``;`` or tabs (with ``;`` the decimal mark is a
comma), quote fields, and carry ``#`` comment lines.
"""

from __future__ import annotations

import csv
import glob
import itertools
import mmap
import re
from collections.abc import Iterator
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from workbench.core.errors import InputError
from workbench.io.csvtext import read_file_bytes
from workbench.io.profiles import _side_units as _profile_units
from workbench.models.logs import LogBatch

try:
    import numba
except ImportError:  # pragma: no cover - numba is a dependency; the fallback is for odd installs
    numba = None

#: Speed units: token -> factor to m/s (mph exact: NIST Handbook 44, Appendix C).
SPEED_UNITS = {"km_per_h": 1.0 / 3.6, "kmh": 1.0 / 3.6, "kph": 1.0 / 3.6,
               "m_per_s": 1.0, "mps": 1.0, "mph": 0.44704}
#: Elapsed-time units: token -> seconds.
ELAPSED_UNITS = {"s": 1.0, "min": 60.0, "h": 3600.0}
#: Epoch-time units: token -> seconds (counted from 1970-01-01T00:00Z).
EPOCH_UNITS = {"epoch_s": 1.0, "unix_s": 1.0, "epoch_ms": 1e-3, "unix_ms": 1e-3}
#: Text timestamps (ISO 8601; without a zone they are read as UTC).
ISO_UNITS = ("iso",)
#: Other quantities: name -> {unit: factor to SI}; altitude in metres or feet (exact).
OTHER_UNITS = {
    "altitude": {"m": 1.0, "ft": 0.3048},
    "grade": {"percent": 0.01, "fraction": 1.0},
    "payload": {"kg": 1.0, "t": 1000.0},
}
#: Names of the vehicle column (long files).
VEHICLE_NAMES = ("vehicle", "vehicle_id")
_TIME_NAMES = ("timestamp", "datetime", "time", "elapsed")
#: Rows read at a time from one CSV file per vehicle.
CSV_CHUNK_ROWS = 1_000_000
#: A CSV file of at most this many bytes per row of a batch is read at once (a logger row
#: is 20 to 40 bytes).
WHOLE_FILE_BYTES_PER_ROW = 64
_SUFFIXES = (".csv", ".txt", ".parquet", ".pq")


def normalise(name: str) -> str:
    """A column name as a key: lower case, ``/`` as ``_per_``, brackets and spaces as ``_``.

    Parameters
    ----------
    name : str
        Column name as written in the file.

    Returns
    -------
    str
        E.g. ``"Speed (km/h)"`` -> ``"speed_km_per_h"``.
    """
    s = name.strip().lower().replace("/", "_per_")
    s = re.sub(r"[\s\[\]\(\)\-\.]+", "_", s)
    return re.sub(r"_+", "_", s).strip("_")


@dataclass(frozen=True)
class Columns:
    """Which raw column holds what, and its unit.

    Attributes
    ----------
    time, speed : tuple of (str, str)
        (raw column name, unit token).
    extras : dict of str to tuple of (str, str)
        ``altitude``, ``grade``, ``payload`` when present.
    vehicle : str or None
        Raw name of the vehicle column.
    """

    time: tuple[str, str]
    speed: tuple[str, str]
    extras: dict[str, tuple[str, str]]
    vehicle: str | None

    @property
    def names(self) -> list[str]:
        """Raw names of every column used."""
        out = [self.time[0], self.speed[0], *(c for c, _ in self.extras.values())]
        return out + ([self.vehicle] if self.vehicle else [])


def _side_units(path: Path) -> dict[str, str]:
    """``<stem>.units.toml`` beside ``path`` (the profiles' format), names and units
    normalised; empty when there is none."""
    side = path.with_name(path.stem + ".units.toml")
    if not side.is_file():
        return {}
    try:
        text = read_file_bytes(side).decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(str(side), "is not UTF-8 text; save it as UTF-8") from None
    return {normalise(k): normalise(v) for k, v in _profile_units(str(path), text).items()}


def _split_unit(key: str, prefixes: tuple[str, ...]) -> tuple[str, str] | None:
    for p in prefixes:
        if key == p:
            return p, ""
        if key.startswith(p + "_"):
            return p, key[len(p) + 1:]
    return None


def resolve_columns(path: Path, header: list[str], *, text_time: bool | None = None
                    ) -> Columns:
    """Find the time, speed, optional and vehicle columns of a header and their units.

    Parameters
    ----------
    path : pathlib.Path
        The file (for messages and its side units file).
    header : list of str
        Raw column names.
    text_time : bool, optional
        Whether the time column holds text; a unitless time column of text is ISO 8601.

    Returns
    -------
    Columns

    Raises
    ------
    InputError
        No time or speed column, a unit missing or unknown; the message names the column.
    """
    side = _side_units(path)
    time = speed = None
    extras: dict[str, tuple[str, str]] = {}
    vehicle = None
    for raw in header:
        key = normalise(raw)
        if key in VEHICLE_NAMES and vehicle is None:
            vehicle = raw
            continue
        unit_of = side.get(key)
        if speed is None and (hit := _split_unit(key, ("speed",))):
            unit = unit_of or hit[1]
            if unit not in SPEED_UNITS:
                raise InputError(f"{path} column {raw}", _unit_hint(path, raw, unit, SPEED_UNITS))
            speed = (raw, unit)
        elif time is None and (hit := _split_unit(key, _TIME_NAMES)):
            unit = unit_of or hit[1]
            if not unit and (text_time or hit[0] in ("timestamp", "datetime")):
                unit = "iso"
            known = (*ELAPSED_UNITS, *EPOCH_UNITS, *ISO_UNITS)
            if unit not in known:
                raise InputError(f"{path} column {raw}", _unit_hint(path, raw, unit, known))
            time = (raw, unit)
        else:
            for q, units in OTHER_UNITS.items():
                if q not in extras and (hit := _split_unit(key, (q,))):
                    unit = unit_of or hit[1]
                    if unit not in units:
                        raise InputError(f"{path} column {raw}",
                                         _unit_hint(path, raw, unit, units))
                    extras[q] = (raw, unit)
                    break
    if time is None or speed is None:
        missing = "time" if time is None else "speed"
        example = "time_s, timestamp" if time is None else "speed_km_per_h, speed_mph"
        raise InputError(str(path), f"no {missing} column (e.g. {example}); columns are "
                                    f"{', '.join(header)}")
    if "grade" in extras and "altitude" in extras:
        del extras["altitude"]  # a measured grade wins over one derived from altitude
    return Columns(time=time, speed=speed, extras=extras, vehicle=vehicle)


def _unit_hint(path: Path, raw: str, unit: str, known: object) -> str:
    what = f"unknown unit '{unit}'" if unit else "no unit"
    return (f"{what}; use one of {', '.join(known)} in the name (e.g. {normalise(raw)}_"  # type: ignore[arg-type]
            f"{next(iter(known))}) or in {path.stem}.units.toml [units]")  # type: ignore[call-overload]


# ----------------------------------------------------------------------------- CSV


@dataclass(frozen=True)
class _Dialect:
    sep: str
    decimal: str
    header: list[str]
    header_line: int  # 1-based line of the header


def _dialect(path: Path) -> _Dialect:
    try:
        with path.open(encoding="utf-8-sig", newline="") as fh:
            lineno = 0
            for line in fh:
                lineno += 1
                stripped = line.strip()
                if stripped and not stripped.startswith("#"):
                    break
            else:
                raise InputError(str(path), "no header row found")
    except FileNotFoundError:
        raise InputError(str(path), "file not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(str(path), f"cannot read the file as UTF-8 text ({exc.__class__.__name__})"
                         ) from None
    counts = {s: stripped.count(s) for s in (",", ";", "\t")}
    sep = max(counts, key=lambda s: counts[s])
    header = next(csv.reader([stripped], delimiter=sep))
    return _Dialect(sep=sep, decimal="," if sep == ";" else ".", header=header,
                    header_line=lineno)


@dataclass(frozen=True)
class _Body:
    """What the data rows of a CSV file hold, from one scan (:func:`_body`)."""

    comments: bool = True  # a ``#``: pandas looks for comments
    spaces: bool = True  # a space: pandas skips spaces after separators


def _body(path: Path, d: _Dialect) -> _Body:
    """Whether the file has comments (lines before the header, or a ``#`` after it) and the
    rows after the header a space (two scans of the mapped file for one byte each); without
    them pandas' reader runs a third faster."""
    try:
        with path.open("rb") as fh, mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
            start = 0
            for _ in range(d.header_line):
                start = mm.find(b"\n", start) + 1
            if start == 0:
                return _Body()
            return _Body(comments=d.header_line > 1 or mm.find(b"#", start) >= 0,
                         spaces=mm.find(b" ", start) >= 0)
    except (OSError, ValueError):  # an empty file cannot be mapped
        return _Body()


def _read_csv(path: Path, d: _Dialect, usecols: list[str] | None, chunksize: int | None,
              body: _Body = _Body()) -> Iterator[pd.DataFrame]:
    """The named columns, in chunks (types inferred: forcing text columns to ``str`` made
    pandas' C parser five times slower); ``body``: what pandas must look for."""
    try:
        reader = pd.read_csv(path, sep=d.sep, decimal=d.decimal,
                             comment="#" if body.comments else None, encoding="utf-8",
                             usecols=usecols, skip_blank_lines=True,
                             skipinitialspace=body.spaces, chunksize=chunksize, engine="c")
        if chunksize is None:
            yield reader
        else:
            with reader:
                yield from reader
    except (pd.errors.ParserError, ValueError, UnicodeDecodeError) as exc:
        line = re.search(r"line (\d+)", str(exc))
        where = f"{path} row {line.group(1)}" if line else str(path)
        raise InputError(where, f"not a readable CSV row ({str(exc).splitlines()[0][:80]})"
                         ) from None


def _row(rows: int | np.ndarray, k: int) -> int:
    """File row of value ``k``: ``rows`` is the row of the first value (the others follow),
    or the row of each value (a vehicle's rows of a long file)."""
    return int(rows[k]) if isinstance(rows, np.ndarray) else rows + k


def _numbers(values: pd.Series, where: str, first_row: int | np.ndarray, name: str
             ) -> np.ndarray:
    """A column as floats; text with a decimal comma is read, other text named by row
    (``first_row``: see :func:`_row`)."""
    if values.dtype.kind in "fiu":
        return values.to_numpy(dtype=float)
    text = values.astype("string").str.strip()
    out = pd.to_numeric(text.str.replace(",", ".", regex=False), errors="coerce")
    bad = out.isna() & text.notna() & (text != "")
    if bad.any():
        k = int(np.argmax(bad.to_numpy()))
        raise InputError(f"{where} row {_row(first_row, k)}",
                         f"{name} '{text.iloc[k]}' is not a number")
    return out.to_numpy(dtype=float, na_value=np.nan)


def _digits(data: np.ndarray, at: int, n: int) -> int:  # pragma: no cover - compiled by numba
    """The decimal number of the ``n`` bytes at ``data[at:]``, or -1 if one is not a digit."""
    x = 0
    for j in range(at, at + n):
        c = np.int64(data[j]) - 48
        if c < 0 or c > 9:
            return -1
        x = 10 * x + c
    return x


def _civil_days(y: int, mo: int, d: int) -> int:  # pragma: no cover - compiled by numba
    """Days since 1970-01-01 of a date (proleptic Gregorian), -2**62 when it is no date or
    outside the years 1678-2261 that int64 nanoseconds hold. H. Hinnant, "chrono-compatible
    low-level date algorithms", days_from_civil (exact in integers)."""
    leap = y % 4 == 0 and (y % 100 != 0 or y % 400 == 0)
    month_days = 29 if mo == 2 and leap else (28 if mo == 2 else 30 + ((mo + mo // 8) % 2))
    if not (1678 <= y <= 2261 and 1 <= mo <= 12 and 1 <= d <= month_days):
        return -(1 << 62)
    yy = y - (mo <= 2)
    era = yy // 400
    yoe = yy - era * 400
    doy = (153 * (mo - 3 if mo > 2 else mo + 9) + 2) // 5 + d - 1
    return era * 146097 + yoe * 365 + yoe // 4 - yoe // 100 + doy - 719468


def _iso_stamp(data: np.ndarray, a: int, b: int, prev: int, base: int
               ) -> tuple[float, int, int]:  # pragma: no cover - compiled by numba
    """Seconds since the epoch of the ISO 8601 text ``data[a:b]`` (float of the integer
    nanoseconds over 1e9, as the general parsers' results): ``YYYY-MM-DDTHH:MM:SS`` (``T`` or
    a space), up to nine decimals, then ``Z``, ``+HH:MM``, ``-HH:MM`` or nothing (UTC).
    ``prev``: start of an earlier text whose minute ``base`` [s] holds, or -1; a text that
    starts as that one, to the minute, only has its seconds parsed. Returns (seconds, start
    of the text whose minute the returned base holds, base), the start -2 when the text is of
    another form (the general parsers then take over)."""
    if b - a < 19:
        return 0.0, -2, base
    same = prev >= 0
    if same:
        for j in range(16, -1, -1):  # the minute changes first
            if data[a + j] != data[prev + j]:
                same = False
                break
    if not same:
        t = data[a + 10]
        if data[a + 4] != 45 or data[a + 7] != 45 or data[a + 13] != 58 \
                or data[a + 16] != 58 or not (t == 84 or t == 32):
            return 0.0, -2, base
        days = _civil_days(_digits(data, a, 4), _digits(data, a + 5, 2),
                           _digits(data, a + 8, 2))
        h = _digits(data, a + 11, 2)
        mi = _digits(data, a + 14, 2)
        if days == -(1 << 62) or not (0 <= h <= 23 and 0 <= mi <= 59):
            return 0.0, -2, base
        base = days * 86400 + h * 3600 + mi * 60
        prev = a
    sec = _digits(data, a + 17, 2)
    if not 0 <= sec <= 59:
        return 0.0, -2, base
    p = a + 19
    frac = 0
    if p < b and data[p] == 46:  # decimals
        p += 1
        scale = 100_000_000
        while p < b and 48 <= data[p] <= 57 and scale > 0:
            frac += (np.int64(data[p]) - 48) * scale
            scale //= 10
            p += 1
        if p == a + 20 or (p < b and 48 <= data[p] <= 57):
            return 0.0, -2, base  # a point without decimals, or more than nine
    zone = 0
    if p < b:
        z = data[p]
        if z == 90 and p + 1 == b:  # Z
            p = b
        elif (z == 43 or z == 45) and b - p == 6 and data[p + 3] == 58:
            zh = _digits(data, p + 1, 2)
            zm = _digits(data, p + 4, 2)
            if not (0 <= zh <= 23 and 0 <= zm <= 59):
                return 0.0, -2, base
            zone = (zh * 60 + zm) * 60 * (1 if z == 43 else -1)
        else:
            return 0.0, -2, base
    return float((base + sec - zone) * 1_000_000_000 + frac) / 1e9, prev, base


def _iso_seconds(data: np.ndarray, offsets: np.ndarray,
                 out: np.ndarray) -> int:  # pragma: no cover - compiled by numba
    """Seconds since the epoch of ISO 8601 texts into ``out`` (:func:`_iso_stamp`), text
    ``i`` being the bytes ``data[offsets[i]:offsets[i + 1]]`` (Arrow's string layout).
    Returns -1, or the first text of another form (the general parsers then take over)."""
    prev = -1
    base = 0
    for i in range(out.size):
        out[i], prev, base = _iso_stamp(data, offsets[i], offsets[i + 1], prev, base)
        if prev == -2:
            return i
    return -1


if numba is not None:
    _digits = numba.njit(cache=True, error_model="numpy")(_digits)
    _civil_days = numba.njit(cache=True, error_model="numpy")(_civil_days)
    _iso_stamp = numba.njit(cache=True, error_model="numpy")(_iso_stamp)
    _iso_seconds = numba.njit(cache=True, error_model="numpy")(_iso_seconds)


def _fixed_iso_seconds(values: pd.Series) -> np.ndarray | None:
    """ISO 8601 text as epoch seconds by the compiled fixed-format pass over Arrow's string
    buffers (:func:`_iso_seconds`; a logger's stamps in a fraction of Arrow's general parser's
    time), or None when numba is missing, the column is not Arrow strings, has empty cells,
    or a text is of another form."""
    import pyarrow as pa

    if numba is None:
        return None  # pragma: no cover - numba is a dependency
    try:
        arr = pa.array(values, from_pandas=True)  # pandas' own Arrow strings: no copy
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        return None
    chunks = arr.chunks if isinstance(arr, pa.ChunkedArray) else [arr]
    out = np.empty(len(values))
    at = 0
    for c in chunks:
        if not (pa.types.is_string(c.type) or pa.types.is_large_string(c.type)) \
                or c.null_count:
            return None
        if len(c) == 0:
            continue
        _, off_buf, data_buf = c.buffers()
        offsets = np.frombuffer(off_buf, dtype=np.int32 if pa.types.is_string(c.type)
                                else np.int64)[c.offset:c.offset + len(c) + 1]
        data = np.frombuffer(data_buf, dtype=np.uint8)
        if offsets[-1] > data.size or _iso_seconds(data, offsets, out[at:at + len(c)]) >= 0:
            return None
        at += len(c)
    return out


def _arrow_seconds(values: pd.Series) -> np.ndarray | None:
    """ISO 8601 text as epoch seconds through Arrow's parser (three times pandas' speed), or
    None when Arrow cannot read every cell (dates only, spaces for ``T``, bad cells): pandas
    then parses and names the bad row."""
    import pyarrow as pa
    import pyarrow.compute as pc

    try:
        arr = pa.array(values, from_pandas=True)  # pandas' own Arrow strings: no copy
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        return None
    if not (pa.types.is_string(arr.type) or pa.types.is_large_string(arr.type)):
        return None
    for kind in (pa.timestamp("ns", tz="UTC"), pa.timestamp("ns")):
        try:
            ns = pc.cast(pc.cast(arr, kind), pa.int64())
        except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
            continue
        return ns.to_numpy(zero_copy_only=False).astype(float) / 1e9
    return None


def _seconds(values: pd.Series, unit: str, where: str, first_row: int | np.ndarray, name: str
             ) -> np.ndarray:
    """A time column as float seconds (elapsed or since the epoch; ``first_row``: see
    :func:`_row`)."""
    if unit in ISO_UNITS or values.dtype.kind == "M":
        if values.dtype.kind == "M":
            stamps = values
        else:
            fast = _fixed_iso_seconds(values)
            if fast is None:
                fast = _arrow_seconds(values)
            if fast is not None:
                return fast
            stamps = pd.to_datetime(values, errors="coerce", utc=True, format="ISO8601")
            bad = stamps.isna() & values.notna()
            if bad.any():
                k = int(np.argmax(bad.to_numpy()))
                raise InputError(f"{where} row {_row(first_row, k)}",
                                 f"{name} '{values.iloc[k]}' is not an ISO 8601 time "
                                 "(e.g. 2026-03-01T08:00:00Z)")
        if getattr(stamps.dt, "tz", None) is not None:
            stamps = stamps.dt.tz_convert("UTC").dt.tz_localize(None)
        ns = stamps.to_numpy(dtype="datetime64[ns]").astype(np.int64).astype(float)
        ns[stamps.isna().to_numpy()] = np.nan
        return ns / 1e9
    factor = ELAPSED_UNITS.get(unit) or EPOCH_UNITS[unit]
    return _numbers(values, where, first_row, name) * factor


def _batch(frame: pd.DataFrame, cols: Columns, where: str, rows: int | np.ndarray
           ) -> LogBatch:
    """A frame's columns in SI (``rows``: file rows, see :func:`_row`)."""
    t = _seconds(frame[cols.time[0]], cols.time[1], where, rows, cols.time[0])
    v = _numbers(frame[cols.speed[0]], where, rows, cols.speed[0]) * SPEED_UNITS[
        cols.speed[1]]
    extras = {q: _numbers(frame[raw], where, rows, raw) * OTHER_UNITS[q][unit]
              for q, (raw, unit) in cols.extras.items()}
    return LogBatch(time=t, speed=v, extras=extras)


#: Exact powers of ten as floats (10**22 is the largest: 5**22 < 2**53).
_POW10 = np.array([10.0 ** k for k in range(23)])


def _count_lines(data: np.ndarray, a: int, b: int) -> int:  # pragma: no cover - compiled
    """Lines of ``data[a:b]`` (a last one without its newline counted)."""
    piece = data[a:b]  # from 0: no negative index to wrap, the loop vectorises
    n = np.int64(0)
    for i in range(piece.size):
        n += np.int64(piece[i] == 10)
    return n + (b > a and data[b - 1] != 10)


def _skip_lines(data: np.ndarray, a: int, b: int, n: int) -> int:  # pragma: no cover
    """Where the ``n`` lines from ``data[a]`` end (``b`` at the latest)."""
    for i in range(a, b):
        if data[i] == 10:
            n -= 1
            if n == 0:
                return i + 1
    return b


def _plain_rows(data: np.ndarray, a: int, b: int, role: np.ndarray, iso: int, pow10: np.ndarray,
                out: np.ndarray, row0: int) -> int:  # pragma: no cover - compiled by numba
    """Parse the lines of ``data[a:b]`` (a plain CSV body: ``,`` between fields, one line a
    row, ``\\n`` at the ends) into ``out[role[c], row0 + i]``; column ``c`` is skipped when
    ``role[c] < 0`` and read as ISO 8601 (:func:`_iso_stamp`) when ``c == iso``. A number is
    ``[+-]digits[.digits]`` of at most 19 digits: mantissa ``m`` < 2**53 and ``k`` <= 22
    decimals give ``m / 10**k`` correctly rounded, both being exact floats (W. D. Clinger,
    "How to read floating point numbers accurately", PLDI 1990, the fast path). Returns the
    rows read, or -1 at anything else (an exponent, more digits, an empty cell, text, a
    byte outside printable ASCII in a skipped cell, another field count): the general reader
    then takes the file."""
    ncols = role.size
    i = a
    r = row0
    prev = -1
    base = 0
    while i < b:
        for c in range(ncols):
            s = i
            dest = role[c]
            if dest < 0:
                while i < b and data[i] != 44 and data[i] != 10:
                    if data[i] < 32 or data[i] > 126 or data[i] == 34 or data[i] == 35:
                        return -1  # a control or non-ASCII byte, a quote, a comment
                    i += 1
            elif c == iso:
                while i < b and data[i] != 44 and data[i] != 10:
                    i += 1
                v, prev, base = _iso_stamp(data, s, i, prev, base)
                if prev == -2:
                    return -1
                out[dest, r] = v
            else:
                neg = False
                if i < b and (data[i] == 45 or data[i] == 43):
                    neg = data[i] == 45
                    i += 1
                m = np.int64(0)
                nd = 0
                k = 0
                while i < b and 48 <= data[i] <= 57:
                    m = 10 * m + (np.int64(data[i]) - 48)
                    nd += 1
                    i += 1
                point = i < b and data[i] == 46
                if point:
                    i += 1
                    while i < b and 48 <= data[i] <= 57:
                        m = 10 * m + (np.int64(data[i]) - 48)
                        nd += 1
                        k += 1
                        i += 1
                if nd == 0 or nd > 19 or m >= 9007199254740992 or k > 22 \
                        or (neg and m == 0 and not point):
                    return -1  # "-0" is 0.0 in a column of integers, -0.0 among decimals
                v = float(m) / pow10[k]
                out[dest, r] = -v if neg else v
            if c < ncols - 1:
                if i >= b or data[i] != 44:
                    return -1
                i += 1
        if i < b:
            if data[i] != 10:
                return -1
            i += 1
        r += 1
    return r - row0


if numba is not None:
    _count_lines = numba.njit(cache=True, nogil=True)(_count_lines)
    _skip_lines = numba.njit(cache=True, nogil=True)(_skip_lines)
    _plain_rows = numba.njit(cache=True, nogil=True, error_model="numpy")(_plain_rows)


def _plain_body(path: Path, d: _Dialect, cols: Columns) -> tuple[np.ndarray, int] | None:
    """The mapped bytes of a CSV file that may be plain (``,`` separator, unique header
    names, no vehicle column; :func:`_plain_rows` finds what else is not) and where its rows
    start; None for any other file (read by pandas)."""
    if numba is None or d.sep != "," or cols.vehicle or len(set(d.header)) != len(d.header):
        return None
    try:
        with path.open("rb") as fh:
            mm = mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ)
    except (OSError, ValueError):  # an empty file cannot be mapped
        return None
    start = 0
    for _ in range(d.header_line):
        start = mm.find(b"\n", start) + 1
        if start == 0:
            break
    if not 0 < start < mm.size():  # no rows: pandas' empty frame
        mm.close()
        return None
    return np.frombuffer(mm, dtype=np.uint8), start  # the array holds the map open


def _plain_batches(path: Path, d: _Dialect, cols: Columns, data: np.ndarray, start: int,
                   batch_rows: int | None) -> Iterator[tuple[int, LogBatch | None]]:
    """Batches of a plain file (:func:`_plain_body`) by the compiled reader, the file's
    pieces on threads; ``(rows read, batch)``, the batch None when the reader cannot take the
    rest (from there the general reader reads)."""
    names = [cols.time[0], cols.speed[0], *(raw for raw, _ in cols.extras.values())]
    role = np.array([names.index(h) if h in names else -1 for h in d.header], dtype=np.int64)
    iso = d.header.index(cols.time[0]) if cols.time[1] in ISO_UNITS else -1
    workers = numba.config.NUMBA_NUM_THREADS  # one per core; 1 in a fleet's workers
    at = start
    while at < data.size:
        end = data.size if batch_rows is None else _skip_lines(data, at, data.size, batch_rows)
        cuts = [at]
        for k in range(1, workers if end - at > 1 << 20 else 1):
            cut = _skip_lines(data, max(at + (end - at) * k // workers, cuts[-1]), end, 1)
            if cut < end:
                cuts.append(cut)
        cuts.append(end)
        pieces = list(itertools.pairwise(cuts))
        with ThreadPoolExecutor(len(pieces)) as pool:
            counts = [f.result() for f in [pool.submit(_count_lines, data, a, b)
                                           for a, b in pieces]]
            out = np.empty((len(names), sum(counts)))
            rows = np.cumsum([0, *counts])
            got = [f.result() for f in [pool.submit(_plain_rows, data, a, b, role, iso, _POW10,
                                                    out, r0)
                                        for (a, b), r0 in zip(pieces, rows, strict=False)]]
        if got != counts:
            yield 0, None
            return
        t = out[0] * (1.0 if iso >= 0 else ELAPSED_UNITS.get(cols.time[1])
                      or EPOCH_UNITS[cols.time[1]])
        extras = {q: out[2 + j] * OTHER_UNITS[q][unit]
                  for j, (q, (_, unit)) in enumerate(cols.extras.items())}
        yield rows[-1], LogBatch(time=t, speed=out[1] * SPEED_UNITS[cols.speed[1]],
                                 extras=extras)
        at = end


def _csv_batches(path: Path, log: VehicleLog, batch_rows: int) -> Iterator[LogBatch]:
    """One vehicle's batches of a CSV file; row numbers count within the file (all
    vehicles' rows). A plain file (:func:`_plain_body`) is read by the compiled reader
    (:func:`_plain_rows`); any other, or the rest of one it cannot read, by pandas."""
    d = _dialect(path)
    cols = resolve_columns(path, d.header)
    # a file of up to WHOLE_FILE_BYTES_PER_ROW * batch_rows bytes is read at once
    whole = path.stat().st_size <= WHOLE_FILE_BYTES_PER_ROW * batch_rows
    done = 0  # rows read by the compiled reader
    plain = _plain_body(path, d, cols)
    if plain is not None:
        for n, batch in _plain_batches(path, d, cols, *plain, None if whole else batch_rows):
            if batch is None:
                break
            done += n
            yield batch
        else:
            return
    row = d.header_line + 1
    # pandas reads a whole file on two threads, by chunks or only some columns on one: all
    # the columns when the file has no others
    usecols = None if sorted(cols.names) == sorted(d.header) else cols.names
    for frame in _read_csv(path, d, usecols, None if whole else batch_rows, _body(path, d)):
        n = len(frame)
        if done >= n:  # read already
            done -= n
            row += n
            continue
        if done:
            frame, row, done = frame.iloc[done:], row + done, 0
        if cols.vehicle:
            keep = (frame[cols.vehicle].astype("string").str.strip() == log.vehicle).to_numpy(
                dtype=bool, na_value=False)
            yield _batch(frame[keep], cols, str(path), row + np.flatnonzero(keep))
        else:
            yield _batch(frame, cols, str(path), row)
        row += len(frame)


# ----------------------------------------------------------------------------- sources


@dataclass(frozen=True)
class VehicleLog:
    """Where one vehicle's samples are: a file, and its id in the vehicle column if shared.

    Attributes
    ----------
    vehicle : str
        Vehicle id (the vehicle column's value, else the file stem).
    path : str
        File, or Parquet dataset folder.
    kind : {"csv", "parquet", "dataset"}
    shared : bool
        The file holds several vehicles (rows filtered by the vehicle column).
    """

    vehicle: str
    path: str
    kind: str
    shared: bool = False


@dataclass(frozen=True)
class FleetSource:
    """The vehicles found in a source and the files that could not be read.

    Attributes
    ----------
    vehicles : tuple of VehicleLog
    problems : tuple of str
        One line per file left out (``file: message``).
    source : str
        What was listed.
    files : tuple
        :func:`fingerprint` of the source when listed: equal listings of unchanged files are
        equal (and hash alike), so runs cached on them see edited files.
    """

    vehicles: tuple[VehicleLog, ...]
    problems: tuple[str, ...]
    source: str = ""
    files: tuple[tuple[str, int, int], ...] = ()


def _kind(path: Path) -> str:
    return "parquet" if path.suffix.lower() in (".parquet", ".pq") else "csv"


def _files(source: str | Path) -> list[Path]:
    text = str(source)
    if any(ch in text for ch in "*?["):
        return sorted(Path(p) for p in glob.glob(text, recursive=True)
                      if Path(p).suffix.lower() in _SUFFIXES)
    path = Path(source)
    if path.is_dir():
        return sorted(p for p in path.iterdir() if p.suffix.lower() in _SUFFIXES)
    if path.exists():
        return [path]
    raise InputError(text, "no such file, folder or pattern; give a logger file, a folder of "
                           "them, a glob like 'logs/*.csv' or a Parquet dataset folder")


def _parquet_names(path: Path) -> list[str]:
    import pyarrow.parquet as pq

    return list(pq.read_schema(path).names)


def _dataset(path: Path):  # -> pyarrow.dataset.Dataset
    import pyarrow.dataset as ds

    return ds.dataset(path, format="parquet", partitioning="hive")


def _vehicles_in(path: Path, kind: str) -> list[VehicleLog]:
    if kind == "dataset":
        data = _dataset(path)
        cols = resolve_columns(path, list(data.schema.names))
        if cols.vehicle is None:
            raise InputError(str(path), "a Parquet dataset needs a vehicle column or "
                                        "vehicle=<id> folders")
        ids = data.to_table(columns=[cols.vehicle]).column(0).unique().to_pylist()
        return [VehicleLog(str(v), str(path), kind, True) for v in sorted(map(str, ids))]
    if kind == "parquet":
        cols = resolve_columns(path, _parquet_names(path))
    else:
        d = _dialect(path)
        cols = resolve_columns(path, d.header)
    if cols.vehicle is None:
        return [VehicleLog(path.stem, str(path), kind)]
    if kind == "parquet":
        import pyarrow.parquet as pq

        ids = pq.read_table(path, columns=[cols.vehicle]).column(0).unique().to_pylist()
    else:
        frame = next(_read_csv(path, d, [cols.vehicle], None))
        ids = frame[cols.vehicle].dropna().unique().tolist()
    ids = sorted(str(v).strip() for v in ids)
    return [VehicleLog(v, str(path), kind, len(ids) > 1) for v in ids]


def fleet_source(raw: str, base_dir: Path) -> Path | None:
    """The logs a study's ``profile`` names, when it names logs rather than one profile CSV.

    Parameters
    ----------
    raw : str
        The ``profile`` value: a folder, a glob pattern or a Parquet file or dataset, relative
        to the study file's folder unless absolute.
    base_dir : pathlib.Path
        The study file's folder.

    Returns
    -------
    pathlib.Path or None
        The resolved source (a pattern stays a pattern), or None for anything else.
    """
    path = base_dir / raw
    if any(ch in raw for ch in "*?["):
        return path
    if path.is_dir() or (path.is_file() and path.suffix.lower() in (".parquet", ".pq")):
        return path.resolve()
    return None


def fingerprint(source: str | Path) -> tuple[tuple[str, int, int], ...]:
    """Name, size and modification time of every file of a source, to key cached runs.

    Returns
    -------
    tuple
        ``(path, bytes, mtime_ns)`` per file, sorted; empty when nothing matches.
    """
    path = Path(source)
    if path.is_dir():
        files = sorted(p for p in path.rglob("*") if p.is_file())
    else:
        files = sorted(Path(p) for p in glob.glob(str(source), recursive=True))
    return tuple((str(f), f.stat().st_size, f.stat().st_mtime_ns) for f in files)


def list_vehicles(source: str | Path) -> FleetSource:
    """The vehicles of a fleet's logs; files that cannot be read are reported, not raised.

    Parameters
    ----------
    source : str or pathlib.Path
        A logger file, a folder of them, a glob pattern, or a Parquet dataset folder.

    Returns
    -------
    FleetSource
        Vehicles sorted by id, and one line per file left out.

    Raises
    ------
    InputError
        The source names nothing, or nothing in it could be read.
    """
    path = Path(source)
    if path.is_dir() and any(p.is_dir() and "=" in p.name for p in path.iterdir()):
        return FleetSource(tuple(_vehicles_in(path, "dataset")), (), str(source),
                           fingerprint(source))
    vehicles: list[VehicleLog] = []
    problems: list[str] = []
    for f in _files(source):
        try:
            vehicles += _vehicles_in(f, _kind(f))
        except InputError as exc:
            problems.append(str(exc))
        except Exception as exc:  # a corrupt Parquet file: any pyarrow error
            problems.append(f"{f}: cannot read ({exc.__class__.__name__}: {str(exc)[:80]})")
    seen: dict[str, str] = {}
    unique = []
    for v in vehicles:
        if v.vehicle in seen:
            problems.append(f"{v.path}: vehicle {v.vehicle} is also in {seen[v.vehicle]}; "
                            "left out here (one vehicle, one file or one id)")
            continue
        seen[v.vehicle] = v.path
        unique.append(v)
    if not unique:
        raise InputError(str(source), "no readable vehicle log: "
                         + ("; ".join(problems[:3]) or "no .csv or .parquet files"))
    return FleetSource(tuple(sorted(unique, key=lambda v: v.vehicle)), tuple(problems),
                       str(source), fingerprint(source))


def read_batches(log: VehicleLog, *, batch_rows: int = CSV_CHUNK_ROWS) -> Iterator[LogBatch]:
    """Stream one vehicle's raw samples in SI, a batch of rows at a time.

    Parameters
    ----------
    log : VehicleLog
        From :func:`list_vehicles`.
    batch_rows : int
        Rows per batch (memory grows with it).

    Yields
    ------
    LogBatch

    Raises
    ------
    InputError
        Unreadable file or a bad value; names the file and row.
    """
    path = Path(log.path)
    if log.kind == "csv":
        yield from _csv_batches(path, log, batch_rows)
        return
    import pyarrow.compute as pc
    import pyarrow.parquet as pq

    if log.kind == "dataset":
        data = _dataset(path)
        cols = resolve_columns(path, list(data.schema.names))
        batches = data.to_batches(columns=cols.names, batch_size=batch_rows,
                                  filter=pc.field(cols.vehicle).cast("string") == log.vehicle)
    else:
        cols = resolve_columns(path, _parquet_names(path))
        batches = pq.ParquetFile(path).iter_batches(batch_size=batch_rows, columns=cols.names)
    row = 1
    for b in batches:
        frame = b.to_pandas()
        if log.kind == "parquet" and log.shared:
            keep = (frame[cols.vehicle].astype("string") == log.vehicle).to_numpy(
                dtype=bool, na_value=False)
            yield _batch(frame[keep], cols, str(path), row + np.flatnonzero(keep))
        else:
            yield _batch(frame, cols, str(path), row)
        row += b.num_rows
