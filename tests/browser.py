"""Shared set-up of the real-browser tests: Debian chromium driven by Playwright."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest

#: Debian's chromium, installed by .ci/run (never a browser download of a test tool's own).
CHROMIUM = Path("/usr/bin/chromium")
#: Screenshots for a person to look at (not committed).
ARTIFACTS = Path(__file__).resolve().parents[1] / "artifacts"
#: Flags for a headless run as root on a closed network.
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync"]

needs_chromium = pytest.mark.skipif(
    not CHROMIUM.exists(),
    reason="needs Debian chromium at /usr/bin/chromium (apt install chromium)")


def launch(playwright: Any) -> Any:
    """Start headless Debian chromium through Playwright's sync API."""
    return playwright.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
