"""Fuzz the logger readers (``workbench.io.logs``) and the fuel-card reader.

The demo fleet's files, cut to their first rows, plus a long file with a vehicle column and a
``;``-separated export with decimal commas, are mutated (a cell replaced by a nasty token, a
line dropped, doubled or cut, a header renamed, bytes inserted) or replaced by random bytes.
Listing the vehicles, streaming and cleaning every one's log, or reading the fuel cards either
gives trips and fills whose numbers are all finite, or ends in one ``InputError`` naming the
file (and row). Common practice, no source.

Plain files (``,``, numbers and stamps of the forms the compiled plain reader takes, now and
then a cell it leaves to pandas) are read both ways: the same numbers bit for bit, or the same
message.

Each test runs 300 examples (the suite's profile has 1000): a log is listed, read and cleaned
per example, about ten times a profile's cost, and the module stays near 15 s.
"""

from __future__ import annotations

import datetime as dt

import pytest
from fuzzing import (
    assert_finite,
    fresh_file,
    head,
    mutated_csv,
    only_input_errors,
    scratch_folder,
)
from hypothesis import given, settings
from hypothesis import strategies as st
from test_logs import _assert_same, _read_both

from workbench.io import demo_fleet
from workbench.io.fuelcards import read_fuel_cards
from workbench.io.logs import list_vehicles, read_batches
from workbench.models.logs import LogRules, LogTally, clean_log

pytestmark = pytest.mark.timeout(60)

TMP = scratch_folder("workbench-fuzz-logs-")
FEW = settings(max_examples=300)

LOGS = {p.stem: head(p, 30) for p in sorted((demo_fleet.DATA / "logs").glob("*.csv"))[:2]}
LOGS["long"] = ("vehicle,time_s,speed_km_per_h,grade_percent\n"
                + "".join(f"V{i % 2},{i // 2},{3.6 * (i % 7)},{i % 3 - 1}\n" for i in range(24)))
LOGS["semicolons"] = ("# decimal commas\nTime (s);Speed (mph);Payload (t)\n"
                      + "".join(f"{i};{i % 5},5;1,2\n" for i in range(20)))
LOG_HEADERS = ("timestamp", "time_s", "time_min", "epoch_ms", "time", "speed_km_per_h",
               "speed_mph", "Speed (km/h)", "speed_furlong", "vehicle", "vehicle_id",
               "altitude_ft", "grade_percent", "payload_t", "", "x")
CARDS = {"demo": head(demo_fleet.DATA / "fuel-cards.csv", 30),
         "kg": "date,vehicle_id,fuel_kg,odometer_mi\n"
               + "".join(f"2026-03-{d:02d}T08:00:00Z,B{d % 2},{d}.5,{1000 + 7 * d}\n"
                         for d in range(1, 15))}
CARD_HEADERS = ("date", "vehicle", "vehicle_id", "litres", "kg", "fuel_l", "odometer_km",
                "odometer_mi", "Odometer (km)", "", "x")


def _cleaned(path) -> list:
    """Every trip of every vehicle the file holds."""
    trips = []
    for log in list_vehicles(path).vehicles:
        trips += clean_log(read_batches(log, batch_rows=16), LogRules(), LogTally(),
                           name=f"{log.path} {log.vehicle}")
    return trips


def _check_log(data: bytes, suffix: str = ".csv") -> None:
    trips = only_input_errors(lambda: _cleaned(fresh_file(TMP, f"van-1{suffix}", data)))
    for trip in trips or ():
        assert_finite(trip, trip.name)


def _check_cards(data: bytes) -> None:
    cards = only_input_errors(lambda: read_fuel_cards(fresh_file(TMP, "cards.csv", data)))
    if cards is not None:
        assert_finite(cards, "fuel cards")
        assert all(v.strip() for v in cards.vehicle), "a fill without a vehicle"


@FEW
@given(mutated_csv(LOGS, LOG_HEADERS))
def test_logs_clean_or_say_where(data):
    _check_log(data)


@FEW
@given(mutated_csv(CARDS, CARD_HEADERS))
def test_fuel_cards_load_or_say_where(data):
    _check_cards(data)


@FEW
@given(st.binary(max_size=300), st.sampled_from([".csv", ".parquet"]))
def test_log_random_bytes(data, suffix):
    _check_log(data, suffix)


@FEW
@given(st.binary(max_size=300))
def test_fuel_card_random_bytes(data):
    _check_cards(data)


#: Cells of a plain file: numbers of the plain reader's forms, and a few it leaves to pandas.
PLAIN_NUMBERS = st.one_of(
    st.from_regex(r"\A[+-]?[0-9]{1,9}(\.[0-9]{0,10})?\Z"),
    st.from_regex(r"\A-?\.[0-9]{1,17}\Z"),
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
    st.sampled_from(["", "nan", "1e5", "-", ".", "1.5e-3", "99999999999999999999", " 1"]),
)
PLAIN_STAMPS = st.one_of(
    st.datetimes(min_value=dt.datetime(1700, 1, 1), max_value=dt.datetime(2250, 1, 1)).map(
        lambda t: t.isoformat() + "Z"),
    st.datetimes().map(lambda t: t.strftime("%Y-%m-%d %H:%M:%S")),
    st.sampled_from(["2026-03-01T08:00Z", "2026-02-30T08:00:00Z", "x", ""]),
)


@st.composite
def plain_files(draw) -> tuple[bytes, int]:
    """A plain logger CSV (header, rows, maybe a text column) and a batch size."""
    time = draw(st.sampled_from(["timestamp", "time_s", "epoch_ms", "time_min"]))
    names = [time, "speed_mph", *draw(st.lists(st.sampled_from(["altitude_ft", "note"]),
                                               unique=True))]
    order = draw(st.permutations(names))
    rows = draw(st.lists(st.fixed_dictionaries({
        n: PLAIN_STAMPS if n == "timestamp" else st.sampled_from(["a", "b-c", ""])
        if n == "note" else PLAIN_NUMBERS for n in names}), min_size=1, max_size=30))
    text = ",".join(order) + "\n" + "".join(",".join(r[n] for n in order) + "\n"
                                           for r in rows)
    return text.encode(), draw(st.sampled_from([7, 1000]))


@FEW
@given(plain_files())
def test_plain_files_read_alike_both_ways(case):
    data, batch_rows = case
    _assert_same(*_read_both(fresh_file(TMP, "plain.csv", data), batch_rows))
