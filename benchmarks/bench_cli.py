"""Benchmark: start-up of the ``workbench`` command line against Python itself.

Run ``python benchmarks/bench_cli.py``. Each command runs in a fresh interpreter (the same one
running this script, as ``python -m workbench ...``, so no launcher script adds its own
start-up), ``RUNS`` times; it prints the median wall time of

* ``python -c pass``: the interpreter alone, the floor;
* ``workbench --help``: the whole parser, every command group;
* ``workbench fuels list``: the fuel library's ids, names, states and storage kinds;

with the target of each (``TARGET_S``) and the ratio median / target (at or below 1 meets it).
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import time

#: Fresh interpreters started per command.
RUNS = 5
#: Goal of issue 10 for each workbench command: wall time from start to exit [s].
TARGET_S = 0.3
COMMANDS = {
    "python -c pass": ["-c", "pass"],
    "workbench --help": ["-m", "workbench", "--help"],
    "workbench fuels list": ["-m", "workbench", "fuels", "list"],
}


def _median_run(args: list[str]) -> float:
    times = []
    for _ in range(RUNS):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, *args], check=True, stdout=subprocess.DEVNULL)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> None:
    print(f"start-up, median of {RUNS} fresh interpreters ({sys.executable})")
    floor = None
    for label, args in COMMANDS.items():
        t = _median_run(args)
        if floor is None:
            floor = t
            print(f"  {label:24s} {t * 1e3:7.0f} ms   (the floor)")
            continue
        print(f"  {label:24s} {t * 1e3:7.0f} ms   target {TARGET_S * 1e3:.0f} ms, "
              f"ratio {t / TARGET_S:.2f}; {t / floor:.1f}x bare Python")


if __name__ == "__main__":
    main()
