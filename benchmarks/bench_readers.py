"""Profile read speed: ``workbench.io.profiles.read_profile`` against a bare ``pandas.read_csv``.

Two files: the shipped demo taxi shift (~14,000 rows) and a synthetic week of 1 Hz data
(604,800 rows, the taxi shift repeated, written once into a temporary folder). For each, the
median of several reads of the workbench reader (content cache cleared before each read, so
every read hashes, tokenises, checks and converts the file) is set against the median of
``pandas.read_csv(path, comment="#")`` on the same file, the two run in alternating order and
timed in CPU time of the process: the ratio pandas / ours is the figure (target >= 0.8).

Run: ``python benchmarks/bench_readers.py [--repeat N]``
"""

from __future__ import annotations

import argparse
import statistics
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd

from workbench.core.cache import clear_caches
from workbench.io.profiles import format_trace_csv, read_profile, read_trace
from workbench.models.duty import DutyTrace

DATA = Path(__file__).resolve().parent.parent / "workbench" / "data"
WEEK = 7 * 24 * 3600


def paired_medians(ours: Callable[[], object], bare: Callable[[], object], repeat: int
                   ) -> tuple[float, float]:
    """Median CPU times of ``ours()`` and ``bare()`` [s], run in alternating order; caches
    cleared before each run. CPU time of this process (both are single-threaded), so other
    jobs on a shared machine do not count."""
    times: tuple[list[float], list[float]] = ([], [])
    for k in range(repeat):
        for which in ((0, 1) if k % 2 == 0 else (1, 0)):
            clear_caches()
            t0 = time.process_time()
            (ours if which == 0 else bare)()
            times[which].append(time.process_time() - t0)
    return statistics.median(times[0]), statistics.median(times[1])


def week_file(folder: Path) -> Path:
    """The taxi shift repeated to a week at 1 Hz, in the shipped CSV format."""
    base = read_trace(DATA / "profiles" / "taxi-shift.csv")
    wrap = np.arange(WEEK + 1) % base.time.size
    trace = DutyTrace(time=np.arange(WEEK + 1, dtype=float), speed=base.speed[wrap],
                      grade=base.grade[wrap], payload=base.payload[wrap], name="week")
    path = folder / "week.csv"
    path.write_text(format_trace_csv(trace, comments=("INVENTED: the demo taxi shift "
                                                      "repeated for a week",)),
                    encoding="utf-8")
    return path


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=15, help="reads per file (median)")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        files = {"demo taxi shift": DATA / "profiles" / "taxi-shift.csv",
                 "1 week at 1 Hz": week_file(Path(tmp))}
        print(f"{'file':18s} {'rows':>9s} {'read_profile':>13s} {'pandas':>9s} "
              f"{'ratio pandas/ours':>18s}")
        for label, path in files.items():
            rows = sum(1 for _ in path.open(encoding="utf-8")) - 1
            read_profile(path)  # warm the imports
            t_ours, t_pandas = paired_medians(lambda p=path: read_profile(p),
                                              lambda p=path: pd.read_csv(p, comment="#"),
                                              args.repeat)
            print(f"{label:18s} {rows:9,d} {t_ours * 1e3:10.1f} ms {t_pandas * 1e3:6.1f} ms "
                  f"{t_pandas / t_ours:12.2f}   (target >= 0.8)")


if __name__ == "__main__":
    main()
