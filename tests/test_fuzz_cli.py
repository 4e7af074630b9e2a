"""Fuzz the command line with random invocations built from its own words and bad values.

Whatever the arguments, ``workbench`` ends with status 0, or with status 2 and one line on
standard error, never a traceback. The slow commands (``study run``, ``study report``, ``demo``,
``nox``: seconds of chemistry each) are left to tests/test_cli_bad_input.py.
Common practice, no source.
"""

from __future__ import annotations

import contextlib
import io

import pytest
from fuzzing import scratch_folder
from hypothesis import event, given
from hypothesis import strategies as st

from workbench.interfaces.cli import main

pytestmark = pytest.mark.timeout(120)

TMP = scratch_folder("workbench-fuzz-cli-")
(TMP / "latin.toml").write_bytes("name = 'Café'".encode("latin-1"))
(TMP / "random.csv").write_bytes(bytes(range(256)))
(TMP / "folder.toml").mkdir()
FILES = [str(TMP / n) for n in ("latin.toml", "random.csv", "folder.toml", "missing.toml",
                                "out.toml", "out.txt", "none/out.toml")]

COMMANDS = st.sampled_from([
    ["fuels", "list"], ["fuels", "show"], ["fuels", "compare"], ["fuels", "blend"],
    ["fuels", "storage"], ["study", "check"], ["duty", "stats"], ["duty", "fuel"], [],
    ["fuels"], ["study"], ["nope"], ["docs"], ["fleet", "run"],
])
WORDS = st.sampled_from([
    "study-file", "glossary", "--path", "propane", "lpg", "diesel", "natural-gas", "methane",
    "hydrogen", "gasoline", "unknown-fuel",
    "demo", "taxi-shift", "van-day", "taxi", "taxi-si-1.8l", "propane=0.6", "n-butane=0.4",
    "propane=nan", "propane=inf", "propane=-1", "x=1", "=", "propane=", "=0.5",
    "--phi", "--t-unburnt", "--pressure", "--air", "dry", "--json", "--basis", "mass",
    "liquid-volume", "--id", "--name", "--write", "--kind", "compressed", "--temperature",
    "--range", "--tank-volume", "--energy-per-km", "--feed-pressure", "--tank", "--vehicle",
    "--map", "--fuel", "--derate", "--efficiency-offset", "--accessory-kw", "--extra-idle-share",
    "--engine-off-at-stops", "--csv", "-o", "--draws", "--fuels", str(TMP), "x" * 300,
    "nan", "inf", "-inf", "1e999", "-1", "0", "0.5", "1", "3", "25", "200", "1e308", "1e-320",
    "10000000000000000000000", "a\x00b", "x" * 5000, "é", "\ufeff", " ", "",
    *FILES,
])
with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
    # warm the imports and the library's fuel sheets before any deadline runs
    main(["fuels", "compare", "propane", "lpg", "diesel", "natural-gas", "methane", "hydrogen",
          "gasoline"])
    main(["duty", "stats", "taxi-shift"])
ARGV = st.tuples(COMMANDS, st.lists(WORDS, max_size=6)).map(lambda t: [*t[0], *t[1]])


@given(ARGV)
def test_any_invocation_ends_cleanly(argv):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = main(argv)
        except SystemExit as exc:  # argparse: usage errors (2) and --help (0)
            code = int(exc.code or 0)
    assert "Traceback" not in err.getvalue() + out.getvalue()
    assert code in (0, 2), (argv, code, err.getvalue())
    event(f"exit {code}")
    if code == 2:
        lines = [line for line in err.getvalue().splitlines() if line.strip()]
        usage = [line for line in lines if not line.startswith("usage:")
                 and not line.startswith(" ")]  # argparse prints its usage block first
        assert len(usage) == 1, (argv, err.getvalue())
