"""Shared test helpers."""

from __future__ import annotations

import pytest

from workbench.interfaces.cli import main


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
