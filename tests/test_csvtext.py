"""The commented-CSV tokenizer (workbench.io.csvtext) and the readers built on it."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose, assert_array_equal

from workbench.core.errors import InputError
from workbench.io import csvtext
from workbench.io.csvtext import parse_csv
from workbench.io.maps import read_map
from workbench.io.profiles import read_profile, read_trace

#: The UTF-8 encoding of U+FEFF, the byte-order mark (RFC 3629, section 6).
BOM = b"\xef\xbb\xbf"


def every_column(header: tuple[str, ...]) -> range:
    return range(len(header))


def write(tmp_path: Path, data: bytes, name: str = "p.csv") -> Path:
    path = tmp_path / name
    path.write_bytes(data)
    return path


@pytest.mark.parametrize("text", [
    BOM + b"time_s,speed_km_per_h\n0,0\n1,36\n",
    BOM + b"# exported by a spreadsheet\ntime_s,speed_km_per_h\n0,0\n1,36\n",
])
def test_byte_order_mark_is_read(tmp_path, text):
    # A "CSV UTF-8" spreadsheet export starts with the BOM; it is not part of the first cell
    # (Unicode Standard, sect. 23.8, from memory). 36 km/h = 10 m/s exactly.
    trace = read_trace(write(tmp_path, text))
    assert_allclose(trace.speed, [0.0, 10.0], rtol=1e-15)


def test_header_is_normalised_and_text_columns_ignored(tmp_path):
    # Quoted fields may hold commas (RFC 4180, sect. 2, rule 6): the note column is text.
    text = (b" Time_S , Speed_KM_per_h ,note\n0,0,depot\n1,36,\"Main St, north\"\n"
            b"2,72,\n")
    trace = read_trace(write(tmp_path, text))
    assert_allclose(trace.speed, [0.0, 10.0, 20.0], rtol=1e-15)
    assert list(trace.rows) == [2, 3, 4]


def test_comments_blank_lines_and_crlf_keep_row_numbers(tmp_path):
    text = (b"# distance_km: 7.5\r\nengine_speed_rpm,torque_n_m,time_h\r\n800,0,0.5\r\n"
            b"\r\n# a note between rows\r\n1500,,1.5\r\n")
    with pytest.raises(InputError, match=r"p.csv row 6: torque is missing"):
        read_profile(write(tmp_path, text))
    table = read_profile(write(tmp_path, text.replace(b"1500,,", b"1500,100,")))
    assert table.distance == 7500.0
    assert_allclose(table.duration, [1800.0, 5400.0], rtol=1e-15)


def test_metadata_after_the_header_is_found():
    table = parse_csv(b"a,b\n1,2\n# distance_km: 3\n4,5\n", "t.csv", every_column)
    assert table.metadata({"distance_km"}) == {"distance_km": (3, "3")}
    assert list(table.rows) == [2, 4]


def test_fast_and_slow_passes_agree():
    # The row-by-row pass is what names bad rows; on a good file it must give the same table.
    rng = np.random.default_rng(3)
    values = rng.normal(size=(500, 3))
    lines = ["# made up", "x,y,z"] + [",".join(f"{v:.17g}" for v in row) for row in values]
    lines.insert(100, "# comment in the middle")
    lines.insert(300, "")
    data = ("\n".join(lines) + "\n").encode()
    fast = parse_csv(data, "t.csv", every_column)
    body = data[data.index(b"x,y,z") + 6:]
    columns, rows, _ = csvtext._slow(body, "t.csv", fast.header, [0, 1, 2], 3)
    assert_array_equal(rows, fast.rows)
    for j in range(3):
        assert_array_equal(columns[j], fast.columns[j])
        assert_allclose(fast.columns[j], values[:, j], rtol=1e-15)


def test_bad_row_is_found_after_the_fast_parse_fails(tmp_path):
    lines = ["time_s,speed_km_per_h"] + [f"{i},{i % 50}" for i in range(20_000)]
    lines[12_345] = "12344,fast"
    path = write(tmp_path, ("\n".join(lines) + "\n").encode())
    with pytest.raises(InputError, match=r"p.csv row 12346 column 2: speed_km_per_h 'fast' is "
                                         r"not a number") as info:
        read_trace(path)
    assert "\n" not in str(info.value)


@pytest.mark.parametrize(("data", "match"), [
    (b"a,b\n1,2\n3,\xff\n", r"t.csv row 3: is not UTF-8"),
    (b"a,b\n1,2\n3\n", r"t.csv row 3: has 1 fields, the header has 2"),
    (b"a,b\n1,2\n3,4,5\n", r"t.csv row 3: has 3 fields, the header has 2"),
    (b"# nothing but a comment\n", r"t.csv: no header and data rows"),
    (b"a,b\n", r"t.csv: no header and data rows"),
    (b"", r"t.csv: no header and data rows"),
])
def test_bad_files_raise_one_line(data, match):
    with pytest.raises(InputError, match=match) as info:
        parse_csv(data, "t.csv", every_column)
    assert "\n" not in str(info.value)


def test_map_with_bom_and_crlf(tmp_path):
    text = (b"# value: brake_efficiency\r\n# idle_speed_rpm: 800\r\n# idle_fuel_power_kw: 3\r\n"
            b"torque_n_m/speed_rpm,800,2000\r\nfull_load,200,250\r\n20,0.15,0.16\r\n"
            b"200,0.33,0.35\r\n")
    m = read_map(write(tmp_path, BOM + text, "m.csv"))
    assert_allclose(m.efficiency, [[0.15, 0.16], [0.33, 0.35]], rtol=1e-15)


def test_same_bytes_are_parsed_once(tmp_path, monkeypatch):
    calls = []
    real = csvtext.parse_csv

    def counting(*args, **kwargs):
        calls.append(args[1])
        return real(*args, **kwargs)

    monkeypatch.setattr("workbench.io.profiles.parse_csv", counting)
    path = write(tmp_path, b"time_s,speed_km_per_h\n0,0\n1,36\n", "once.csv")
    first = read_trace(path)
    assert read_trace(path) is first
    path.write_bytes(b"time_s,speed_km_per_h\n0,0\n1,72\n")
    assert_allclose(read_trace(path).speed, [0.0, 20.0], rtol=1e-15)
    assert calls == [str(path), str(path)]


def test_a_row_wider_than_the_header_is_named_not_cut(tmp_path):
    # pandas would drop the extra cell with a ParserWarning; the reader names the row instead
    import warnings

    p = tmp_path / "wide.csv"
    p.write_text("time_s,speed_km_per_h\n0,0\n1,5,7\n2,10\n", encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(InputError, match="row 3: has 3 fields, the header has 2"):
            read_profile(p)
