"""Tests of logger data: workbench.models.logs (cleaning rules) and workbench.io.logs (readers)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.io import demo_profiles, logs
from workbench.io.logs import list_vehicles, normalise, read_batches
from workbench.io.maps import read_map
from workbench.io.profiles import read_trace
from workbench.io.vehicles import read_vehicle
from workbench.models.duty import DutyTrace, duty_stats
from workbench.models.engine import duty_energy
from workbench.models.logs import LogBatch, LogRules, LogTally, clean_log, moving_average

DATA = demo_profiles.DATA


def clean(t, v, rules=None, **extras):
    tally = LogTally()
    traces = list(clean_log([LogBatch(np.asarray(t, float), np.asarray(v, float), extras)],
                            rules or LogRules(smoothing=0.0), tally, name="test"))
    return traces, tally


def distance(traces):
    return sum(duty_stats(t).distance for t in traces)


# ----------------------------------------------------------------------------- DutyTrace time


def test_datetime_index_is_seconds_not_microseconds():
    # 13 samples 1 s apart at 10 m/s: 12 s x 10 m/s = 120 m (hand-computed). Read as a plain
    # float array of nanoseconds it would be 1.2e11 m.
    t = pd.date_range("2026-03-01 08:00", periods=13, freq="s")
    trace = DutyTrace(time=t, speed=np.full(13, 10.0))
    assert_allclose(duty_stats(trace).distance, 120.0, rtol=1e-12)
    assert_allclose(trace.time[0], pd.Timestamp("2026-03-01 08:00").timestamp(), rtol=1e-15)


def test_timedelta_is_seconds_and_text_refused():
    trace = DutyTrace(time=pd.to_timedelta(np.arange(13), unit="s"), speed=np.full(13, 10.0))
    assert_allclose(duty_stats(trace).distance, 120.0, rtol=1e-12)  # as above, hand-computed
    with pytest.raises(InputError, match="time must be numbers of seconds"):
        DutyTrace(time=np.array(["0", "1"]), speed=[0.0, 1.0])
    with pytest.raises(InputError, match="tz_convert"):
        DutyTrace(time=pd.date_range("2026", periods=3, freq="s", tz="UTC"), speed=[0, 1, 2])


# ----------------------------------------------------------------------------- cleaning rules


def test_gap_splits_the_trip_and_invents_no_driving():
    # 50 km/h for 60 s, a 10-minute silence, 50 km/h for 60 s. Driving is 2 x 60 s x 13.89 m/s
    # = 1,667 m (hand-computed); a line through the gap would add 600 s x 13.89 = 8,333 m.
    v = 50 / 3.6
    t = np.concatenate((np.arange(61.0), 660.0 + np.arange(61.0)))
    traces, tally = clean(t, np.full(t.size, v))
    assert tally.gaps == 1 and tally.trips == 2
    assert_allclose(tally.gap_time, 600.0)
    assert_allclose(distance(traces), 2 * 60 * v, rtol=1e-12)
    joined = DutyTrace(time=t, speed=np.full(t.size, v))
    assert_allclose(duty_stats(joined).distance, 720 * v)  # what the old path invents


def test_irregular_sampling_resampled_on_the_line():
    # Constant acceleration 0.5 m/s2 sampled at irregular times: linear interpolation is exact
    # on a line, so the 1 s grid holds v = 0.5 t (closed form).
    t = np.array([0.0, 0.7, 1.9, 2.2, 3.8, 5.0, 6.1, 8.0])
    traces, _ = clean(t, 0.5 * t)
    (trace,) = traces
    assert_allclose(trace.time, np.arange(9.0))
    assert_allclose(trace.speed, 0.5 * trace.time, rtol=1e-12)
    assert trace.time[-1] == 8.0


def test_spike_flagged_and_clipped():
    # Cruise at 50 km/h with one sample at 200 km/h: +41.7 m/s2 then -41.7 m/s2, far beyond
    # 5 m/s2; clipped to the neighbours' line (50 km/h). A real brake from 50 to 0 at 4 m/s2 is
    # left alone.
    v = np.full(40, 50 / 3.6)
    v[10] = 200 / 3.6
    v[30:] = np.maximum(50 / 3.6 - 4.0 * np.arange(10), 0.0)
    traces, tally = clean(np.arange(40.0), v)
    assert tally.spikes == 1
    assert_allclose(traces[0].speed[10], 50 / 3.6)
    assert_allclose(traces[0].speed[30:], v[30:])


def test_duplicates_collapse_to_their_mean_and_late_samples_sort():
    t = [0.0, 1.0, 1.0, 3.0, 2.0]
    v = [0.0, 1.0, 3.0, 4.0, 3.0]
    traces, tally = clean(t, v)
    assert tally.duplicates == 1
    assert_allclose(traces[0].speed, [0.0, 2.0, 3.0, 4.0])  # mean of 1 and 3 at t = 1


def test_missing_values_dropped_and_counted():
    traces, tally = clean([0, 1, 2, 3], [0, np.nan, 2, 3])
    assert tally.missing == 1 and tally.samples_read == 4
    assert_allclose(traces[0].speed, [0, 1, 2, 3])  # the line through the rest


def test_moving_average_hand_computed():
    # Window 3 over [0, 3, 6, 3]: ends use the two samples they have. Hand-computed.
    assert_allclose(moving_average(np.array([0.0, 3.0, 6.0, 3.0]), 3), [1.5, 3.0, 4.0, 4.5])


def test_smoothing_takes_out_gps_noise():
    # Common practice, no source: GPS speed noise (1.5 km/h, white, 1 Hz) adds spurious
    # accelerations. On the demo taxi shift it raises fuel by ~28 % when run raw; through the
    # default cleaning rules the noisy trace is within 3 % of the clean one.
    trace = read_trace(DATA / "profiles" / "taxi-shift.csv")
    vehicle = read_vehicle(DATA / "vehicles" / "taxi.toml")
    emap = read_map(DATA / "maps" / "taxi-si-1.8l.csv")
    base = duty_energy(trace, vehicle, emap).fuel_energy
    rng = np.random.default_rng(7)
    noisy = np.maximum(trace.speed + rng.normal(0.0, 1.5 / 3.6, trace.speed.size), 0.0)
    raw = duty_energy(DutyTrace(time=trace.time, speed=noisy, grade=trace.grade,
                                payload=trace.payload), vehicle, emap).fuel_energy
    assert raw / base > 1.2
    tally = LogTally()
    trips = clean_log([LogBatch(trace.time, noisy, {"grade": trace.grade,
                                                    "payload": trace.payload})],
                      LogRules(), tally, name="noisy")
    cleaned = sum(duty_energy(t, vehicle, emap).fuel_energy for t in trips)
    assert abs(cleaned / base - 1.0) < 0.03


def test_altitude_becomes_grade():
    # A steady 2 % climb at 10 m/s: altitude rises 0.2 m per second; grade 0.02 (closed form).
    t = np.arange(100.0)
    traces, _ = clean(t, np.full(100, 10.0), altitude=0.2 * t)
    assert_allclose(traces[0].grade[5:-5], 0.02, rtol=1e-9)


def test_small_buffer_gives_the_same_distance():
    # A 20,000-sample trace with gaps, fed in 7 batches through a 1,000-sample buffer: the same
    # trips and the same distance up to the pieces' shared samples (< a step each).
    rng = np.random.default_rng(3)
    t = np.cumsum(rng.choice([1.0, 1.0, 2.0, 120.0], size=20_000, p=[0.6, 0.39, 0.009, 0.001]))
    v = np.abs(10 + 3 * np.sin(t / 50.0))
    whole, tally_whole = clean(t, v)
    tally = LogTally()
    parts = np.array_split(np.arange(t.size), 7)
    pieces = list(clean_log((LogBatch(t[p], v[p], {}) for p in parts),
                            LogRules(smoothing=0.0, buffer_samples=1000), tally, name="x"))
    assert tally.gaps == tally_whole.gaps
    assert tally.samples_read == t.size
    assert_allclose(distance(pieces), distance(whole), rtol=1e-3)


def test_extras_stay_with_their_samples_across_batches():
    # A steady 2 % climb at 10 m/s (altitude 0.2 m per second; grade 0.02, closed form) fed in
    # 9 batches, the first one overlapping the second: every trip keeps grade 0.02, as in one
    # batch. A first batch's extras once stayed doubled in the buffer, shifting them in time.
    t = np.arange(3000.0)
    parts = [np.arange(0, 400), *np.array_split(np.arange(350, 3000), 8)]
    trips = list(clean_log((LogBatch(t[p], np.full(p.size, 10.0), {"altitude": 0.2 * t[p]})
                            for p in parts), LogRules(smoothing=0.0, buffer_samples=1000),
                           LogTally(), name="x"))
    assert trips
    for trip in trips:
        assert_allclose(trip.grade[5:-5], 0.02, rtol=1e-9)


def test_rules_refuse_bad_values():
    with pytest.raises(InputError, match=r"logs\.max_gap"):
        LogRules(step=5.0, max_gap=1.0)


# ----------------------------------------------------------------------------- readers


def test_normalise_column_names():
    assert normalise("Speed (km/h)") == "speed_km_per_h"
    assert normalise(" Altitude [m] ") == "altitude_m"


def batches_of(path):
    src = list_vehicles(path)
    return src, {v.vehicle: list(read_batches(v)) for v in src.vehicles}


def test_csv_bom_semicolons_decimal_commas_quotes_and_text(tmp_path):
    path = tmp_path / "van-07.csv"
    path.write_bytes(
        "\ufeff# export of a logger\n"
        "Timestamp;Speed (km/h);Driver note;Altitude [m]\n"
        "2026-03-01T08:00:00Z;0,0;\"stop; waiting\";10,0\n"
        "2026-03-01T08:00:01Z;36,0;text;10,5\n".encode())
    _, got = batches_of(path)
    (b,) = got["van-07"]
    assert_allclose(b.speed, [0.0, 10.0])
    assert_allclose(b.extras["altitude"], [10.0, 10.5])
    assert_allclose(np.diff(b.time), [1.0])
    assert_allclose(b.time[0], pd.Timestamp("2026-03-01T08:00:00Z").timestamp())


def test_units_from_side_file_epoch_seconds_and_mph(tmp_path):
    (tmp_path / "taxi-3.csv").write_text("t,speed\n1772352000,0\n1772352001,10\n")
    (tmp_path / "taxi-3.units.toml").write_text('[units]\nt = "epoch_s"\nspeed = "mph"\n')
    with pytest.raises(InputError, match="no time column"):
        list_vehicles(tmp_path / "taxi-3.csv")
    (tmp_path / "taxi-3.csv").write_text("time,speed\n1772352000,0\n1772352001,10\n")
    (tmp_path / "taxi-3.units.toml").write_text('[units]\ntime = "epoch_s"\nspeed = "mph"\n')
    _, got = batches_of(tmp_path / "taxi-3.csv")
    # 10 mph = 4.4704 m/s exactly (NIST Handbook 44, Appendix C: 1 mile = 1609.344 m)
    assert_allclose(got["taxi-3"][0].speed, [0.0, 4.4704], rtol=1e-15)


def test_elapsed_minutes_and_unknown_unit(tmp_path):
    (tmp_path / "a.csv").write_text("time_min,speed_m_per_s\n0,1\n0.5,2\n")
    _, got = batches_of(tmp_path / "a.csv")
    assert_allclose(got["a"][0].time, [0.0, 30.0])
    (tmp_path / "a.csv").write_text("time_s,speed_furlong_per_h\n0,1\n")
    with pytest.raises(InputError, match=r"a.csv column speed_furlong_per_h.*unknown unit"):
        list_vehicles(tmp_path / "a.csv")


def test_long_file_with_vehicle_column(tmp_path):
    path = tmp_path / "fleet.csv"
    path.write_text("vehicle,time_s,speed_km_per_h\nA,0,0\nB,0,36\nA,1,3.6\nB,1,72\n")
    src, got = batches_of(path)
    assert [v.vehicle for v in src.vehicles] == ["A", "B"]
    assert_allclose(got["B"][0].speed, [10.0, 20.0])
    assert_allclose(got["A"][0].speed, [0.0, 1.0])


def test_parquet_file_and_dataset(tmp_path):
    frame = pd.DataFrame({"vehicle_id": ["A", "A", "B", "B"],
                          "timestamp": pd.to_datetime(["2026-03-01 08:00:00",
                                                       "2026-03-01 08:00:02"] * 2),
                          "speed_mph": [0.0, 10.0, 20.0, 30.0]})
    frame.to_parquet(tmp_path / "one.parquet")
    _, got = batches_of(tmp_path / "one.parquet")
    assert_allclose(got["B"][0].speed, [20 * 0.44704, 30 * 0.44704])
    assert_allclose(np.diff(got["A"][0].time), [2.0])
    ds = tmp_path / "ds"
    frame.rename(columns={"vehicle_id": "vehicle"}).to_parquet(ds, partition_cols=["vehicle"])
    src, got = batches_of(ds)
    assert [v.vehicle for v in src.vehicles] == ["A", "B"]
    assert_allclose(np.concatenate([b.speed for b in got["A"]]), [0.0, 10 * 0.44704])


def test_bad_file_reported_others_kept(tmp_path):
    (tmp_path / "good.csv").write_text("time_s,speed_km_per_h\n0,0\n1,3.6\n")
    (tmp_path / "nounit.csv").write_text("time_s,speed\n0,0\n")
    (tmp_path / "broken.parquet").write_bytes(b"not parquet at all")
    src = list_vehicles(tmp_path)
    assert [v.vehicle for v in src.vehicles] == ["good"]
    assert len(src.problems) == 2
    assert any("nounit.csv column speed" in p for p in src.problems)
    assert any("broken.parquet" in p for p in src.problems)
    assert [v.vehicle for v in list_vehicles(str(tmp_path / "g*.csv")).vehicles] == ["good"]


def test_bad_number_names_the_row(tmp_path):
    path = tmp_path / "x.csv"
    path.write_text("# one comment\ntime_s,speed_km_per_h\n0,0\n1,fast\n")
    (log,) = list_vehicles(path).vehicles
    with pytest.raises(InputError, match=r"x.csv row 4.*'fast' is not a number"):
        list(read_batches(log))


def test_bad_timestamp_names_the_row(tmp_path):
    path = tmp_path / "x.csv"
    path.write_text("timestamp,speed_km_per_h\n2026-03-01T08:00:00,0\nyesterday,1\n")
    (log,) = list_vehicles(path).vehicles
    with pytest.raises(InputError, match=r"x.csv row 3.*not an ISO 8601"):
        list(read_batches(log))


def test_bad_row_of_a_long_file_counts_within_the_file(tmp_path):
    # vehicle B's second row is the file's row 5 (header row 1), not B's row 2 or 3
    path = tmp_path / "fleet.csv"
    path.write_text("vehicle,time_s,speed_km_per_h\nA,0,0\nB,0,36\nA,1,3.6\nB,1,fast\n")
    logs = {v.vehicle: v for v in list_vehicles(path).vehicles}
    assert len(list(read_batches(logs["A"]))) == 1
    with pytest.raises(InputError, match=r"fleet.csv row 5: .*'fast' is not a number"):
        list(read_batches(logs["B"]))


def _long_log(rows: int, bad: int | None = None) -> str:
    lines = ["vehicle,timestamp,speed_km_per_h,altitude_m"]
    for i in range(rows):
        stamp = pd.Timestamp("2026-03-01T08:00:00Z") + pd.Timedelta(seconds=i // 2)
        speed = "fast" if i == bad else f"{(i * 7) % 90}.5"
        lines.append(f"V{i % 2},{stamp.isoformat().replace('+00:00', 'Z')},{speed},{i % 13}")
    return "\n".join(lines) + "\n"


def test_fast_and_general_reading_agree(tmp_path):
    # a plain file is read without looking for comments and spaces, and its stamps by the
    # fixed-format pass; a comment line, a space after a separator, a stamp of another form
    # (without seconds: the general parsers) take the other paths: same numbers
    text = _long_log(6000)
    (tmp_path / "plain.csv").write_text(text)
    (tmp_path / "commented.csv").write_text("# exported by a logger\n" + text)
    (tmp_path / "spaced.csv").write_text(text.replace(",V1,", ", V1,").replace("Z,", "Z, "))
    (tmp_path / "bom.csv").write_text("\ufeff" + text.replace(
        "2026-03-01T08:00:00Z", "2026-03-01T08:00Z", 1))
    got = {}
    for name in ("plain", "commented", "spaced", "bom"):
        for log in list_vehicles(tmp_path / f"{name}.csv").vehicles:
            b = list(read_batches(log, batch_rows=1000))
            got[name, log.vehicle] = (np.concatenate([x.time for x in b]),
                                      np.concatenate([x.speed for x in b]),
                                      np.concatenate([x.extras["altitude"] for x in b]))
    for v in ("V0", "V1"):
        for a, *others in zip(*(got[name, v] for name in ("plain", "commented", "spaced",
                                                          "bom")), strict=True):
            assert a.size == 3000
            for b in others:
                assert_allclose(b, a, rtol=0, atol=0)
    # 1 m/s = 3.6 km/h exactly (SI); epoch seconds of the first stamp from pandas
    assert_allclose(got["plain", "V0"][1][:2], [0.5 / 3.6, 14.5 / 3.6])
    assert got["plain", "V0"][0][0] == pd.Timestamp("2026-03-01T08:00:00Z").timestamp()


def test_bad_value_deep_in_a_plain_file_names_its_row(tmp_path):
    # the bad row is named in the file's count, in batches of 1000 rows
    path = tmp_path / "long.csv"
    path.write_text(_long_log(6000, bad=5001))
    logs = {v.vehicle: v for v in list_vehicles(path).vehicles}
    good = list(read_batches(logs["V0"], batch_rows=1000))
    assert sum(b.time.size for b in good) == 3000
    t = np.concatenate([b.time for b in good])
    assert np.all(np.diff(t) == 1.0)
    with pytest.raises(InputError, match=r"long.csv row 5003: .*'fast' is not a number"):
        list(read_batches(logs["V1"], batch_rows=1000))


def test_fixed_format_stamps_equal_pandas():
    # reference: pandas.to_datetime(format="ISO8601", utc=True); years from 1700 to 2250, all
    # the forms the fixed-format pass reads; other forms are left to the general parsers
    rng = np.random.default_rng(7)
    stamps = pd.to_datetime(rng.integers(pd.Timestamp("1700-01-01").value,
                                         pd.Timestamp("2250-12-31").value, 3000))
    forms = ("%Y-%m-%dT%H:%M:%S", "%Y-%m-%dT%H:%M:%S.%fZ", "%Y-%m-%d %H:%M:%S.%f+05:30",
             "%Y-%m-%dT%H:%M:%S-11:45")
    for form in forms:
        text = pd.Series(stamps.strftime(form), dtype="str")
        expected = pd.to_datetime(text, utc=True, format="ISO8601")
        seconds = expected.dt.tz_localize(None).to_numpy("datetime64[ns]").astype(
            np.int64) / 1e9
        assert np.array_equal(logs._fixed_iso_seconds(text), seconds), form
    assert logs._fixed_iso_seconds(pd.Series(["2024-02-29T00:00:00Z"], dtype="str")) == [
        pd.Timestamp("2024-02-29T00:00:00Z").timestamp()]  # a leap day (Gregorian rule)
    for other in ("2026-02-30T00:00:00", "1900-02-29T00:00:00", "2026-01-01T24:00:00",
                  "2026-01-01T00:00:00.", "2026-01-01T00:00:00.1234567890",
                  "2026-01-01T00:00:00+0100", "2026-01-01", "9999-01-01T00:00:00"):
        assert logs._fixed_iso_seconds(pd.Series([other], dtype="str")) is None, other


def test_timestamps_without_zone_are_utc(tmp_path):
    path = tmp_path / "naive.csv"
    path.write_text("timestamp,speed_km_per_h\n2026-03-01T08:00:00,0\n2026-03-01T08:00:01.5,36\n")
    (b,) = list(read_batches(list_vehicles(path).vehicles[0]))
    assert_allclose(b.time - pd.Timestamp("2026-03-01T08:00:00Z").timestamp(), [0.0, 1.5])


def test_missing_source():
    with pytest.raises(InputError, match="no such file, folder or pattern"):
        list_vehicles(Path("/nonexistent/logs/*.csv").parent)


def test_trips_stream_before_the_log_ends():
    # Memory bounded by the buffer: a trip ended by a gap is yielded while later batches are
    # still unread (a generator that records how far it was consumed).
    consumed = []

    def batches():
        for k in range(5):
            consumed.append(k)
            t = 1000.0 * k + np.arange(100.0)  # 100 s of driving, then a 900 s gap
            yield LogBatch(t, np.full(100, 10.0), {})

    stream = clean_log(batches(), LogRules(smoothing=0.0), LogTally(), name="x")
    next(stream)
    assert consumed == [0, 1]  # the first trip is out once the second batch shows the gap


def _read_both(path: Path, batch_rows: int = logs.CSV_CHUNK_ROWS, vehicle: str | None = None):
    """Batches of a file by the plain reader when it takes the file, and by pandas alone;
    each ('error', message) when reading raises."""
    log = logs.VehicleLog(vehicle or path.stem, str(path), "csv")

    def read():
        try:
            return list(read_batches(log, batch_rows=batch_rows))
        except InputError as exc:
            return ("error", str(exc))

    fast = read()
    plain, logs._plain_body = logs._plain_body, lambda *a: None
    try:
        general = read()
    finally:
        logs._plain_body = plain
    return fast, general


def _columns(batches) -> dict[str, np.ndarray]:
    out = {"time": np.concatenate([b.time for b in batches]),
           "speed": np.concatenate([b.speed for b in batches])}
    for q in batches[0].extras:
        out[q] = np.concatenate([b.extras[q] for b in batches])
    return out


def _assert_same(fast, general) -> None:
    if isinstance(general, tuple) or not general:
        assert fast == general
        return
    a, b = _columns(fast), _columns(general)
    assert a.keys() == b.keys()
    for k in a:  # bit for bit (NaN never: the plain reader leaves those files to pandas)
        assert a[k].tobytes() == b[k].tobytes(), k


def test_plain_reader_equals_pandas_on_the_shipped_example():
    # the shipped example (workbench/data/fleet): every file the plain reader takes (all but
    # the ';' one) gives pandas' numbers bit for bit; the broken vehicle the same message
    from workbench.io import demo_fleet

    taken = 0
    for path in sorted((demo_fleet.DATA / "logs").glob("*.csv")):
        d = logs._dialect(path)
        taken += logs._plain_body(path, d, logs.resolve_columns(path, d.header)) is not None
        _assert_same(*_read_both(path))
    assert taken == 12


def _plain_numbers(rng: np.random.Generator, n: int) -> list[str]:
    """Number texts of the forms the plain reader takes: signs, no or up to 17 decimals,
    leading zeros, a point without digits on one side, up to 19 digits."""
    out = []
    for _ in range(n):
        whole = str(rng.integers(0, 10 ** int(rng.integers(0, 10))))
        frac = "".join(map(str, rng.integers(0, 10, int(rng.integers(0, 18)))))
        sign = rng.choice(["", "", "-", "+"])
        form = rng.integers(0, 5)
        text = (whole if form == 0 else f"{whole}." if form == 1 else f".{frac or 0}"
                if form == 2 else f"0{whole}.{frac}" if form == 3 else f"{whole}.{frac}")
        digits = sum(ch.isdigit() for ch in text)
        out.append(sign + (text if digits <= 19 else text[:19]))
    return out


def test_plain_reader_numbers_correctly_rounded(tmp_path):
    # reference: Python's float(text), correctly rounded (IEEE 754-2008 clause 5.12.2;
    # David Gay's algorithm in CPython); the plain reader's m / 10**k is exact to the last
    # bit (W. D. Clinger, PLDI 1990, fast path). pandas' default ("high") parser gives the
    # same bits on these texts
    rng = np.random.default_rng(11)
    n = 40_000  # > 1 MB: the file is read in pieces on threads
    speed, alt = _plain_numbers(rng, n), _plain_numbers(rng, n)
    elapsed = np.cumsum(rng.integers(1, 2000, n)) / 1000
    path = tmp_path / "plain.csv"
    path.write_text("time_s,note,speed_m_per_s,altitude_ft\n" + "".join(
        f"{t:.3f},x{i % 7}-y,{s},{a}\n" for i, (t, s, a) in enumerate(
            zip(elapsed, speed, alt, strict=True))))
    assert path.stat().st_size > 1 << 20
    fast, general = _read_both(path)
    _assert_same(fast, general)
    got = _columns(fast)
    assert got["speed"].tobytes() == np.array([float(s) for s in speed]).tobytes()
    assert got["altitude"].tobytes() == (np.array([float(a) for a in alt]) * 0.3048).tobytes()


@pytest.mark.parametrize("edit", [
    lambda t, s: t.replace(",77.5,", ",7.75e1,"),  # an exponent
    lambda t, s: t.replace(",77.5,", ",,"),  # an empty cell
    lambda t, s: t.replace(",77.5,", ",NaN,"),  # NaN text
    lambda t, s: t.replace(",77.5,", ",fast,"),  # a bad number: pandas names its row
    lambda t, s: t.replace(",77.5,", ",12345678901234567890,"),  # 20 digits
    lambda t, s: t.replace(",77.5,", ",9007199254740993,"),  # above 2**53
    lambda t, s: t.replace(",77.5,", ",-0,"),  # minus zero without a point
    lambda t, s: t.replace(",77.5,", ",1.5,2,"),  # a field too many: pandas names its row
    lambda t, s: t.replace(",77.5,", ","),  # a field short
    lambda t, s: t.replace(",77.5,", ",77.5,\n"),  # a blank line
    lambda t, s: t.replace(",77.5,", ',"77.5",'),  # quotes
    lambda t, s: t.replace(",77.5,", ",77.5 ,"),  # a space
    lambda t, s: t.replace(",77.5,", ",77.5#,"),  # a comment
    lambda t, s: t.replace(",77.5,", ",7\u00e9,"),  # not ASCII
    lambda t, s: t.replace("\n", "\r\n"),  # carriage returns
    lambda t, s: t.replace(s, s.replace("T", " ")),  # a stamp of another form, read alike
    lambda t, s: t.replace(s, s[:-3] + "61Z"),  # a bad stamp: pandas names its row
    lambda t, s: t.replace(s, s[:-4] + "Z"),  # no seconds: the general parsers
    lambda t, s: t.rstrip("\n"),  # no newline at the end: read alike
    lambda t, s: t[:t.index("\n") + 1],  # the header alone
])
@pytest.mark.parametrize("at", [10, 2500])
def test_plain_reader_leaves_other_files_to_pandas(tmp_path, edit, at):
    # whatever the plain reader does not take, in the first batch or a later one, pandas
    # reads (from the first row not yet read), with its numbers and its messages naming the
    # row
    stamps = [f"2026-03-01T08:{i // 60:02d}:{i % 60:02d}Z" for i in range(3000)]
    text = "timestamp,speed_km_per_h,altitude_m\n" + "".join(
        f"{s},{77.5 if i == at else i % 50 + 0.5},{i % 9}.25\n" for i, s in enumerate(stamps))
    path = tmp_path / "edited.csv"
    path.write_text(edit(text, stamps[at]))
    for batch_rows in (logs.CSV_CHUNK_ROWS, 1000):
        _assert_same(*_read_both(path, batch_rows))


def test_plain_reader_batches_are_bounded(tmp_path):
    # a file above the whole-file limit is read in batches of at most batch_rows rows
    path = tmp_path / "long.csv"
    path.write_text("time_epoch_ms,speed_mph\n" + "".join(
        f"{1772352000000 + 1000 * i},{i % 80}.{i % 7}\n" for i in range(5000)))
    d = logs._dialect(path)
    assert logs._plain_body(path, d, logs.resolve_columns(path, d.header)) is not None
    fast, general = _read_both(path, batch_rows=700)
    assert [b.time.size for b in fast] == [700] * 7 + [100]
    _assert_same(fast, general)
