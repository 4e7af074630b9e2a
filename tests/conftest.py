"""Shared test helpers, and the one hypothesis settings profile of the fuzz tests."""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, settings

from workbench.interfaces.cli import main

#: The fuzz tests' settings: the same examples on every run (derandomised, no example
#: database), a bounded number of them so the whole fuzz set stays well under a minute on a
#: CI core, and a per-example deadline that turns a slow path into a failure.
settings.register_profile(
    "workbench-fuzz",
    derandomize=True,
    database=None,
    max_examples=1000,
    # [ms] per example: a whole study parses in about 5 ms, a CLI call in about 10 ms; 5 s
    # leaves room for a loaded CI machine and still fails a hang (pint took minutes)
    deadline=5000,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                           HealthCheck.filter_too_much],
    print_blob=False,
)
settings.load_profile("workbench-fuzz")


@pytest.fixture
def run_cli(capsys):
    """Run ``workbench`` in-process; return (exit status, stdout, stderr)."""

    def _run(*argv: str) -> tuple[int, str, str]:
        try:
            code = main(list(argv))
        except SystemExit as exc:  # argparse usage errors
            code = int(exc.code or 0)
        out = capsys.readouterr()
        return code, out.out, out.err

    return _run
