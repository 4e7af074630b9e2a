"""Tests of workbench.core.text: the one HTML escape, SHA-256 digest and JSON cleaner."""

from __future__ import annotations

import json
import math

import numpy as np

from workbench.core.text import escape_html, json_safe, sha256_hex


def test_escape_html_with_and_without_quotes():
    # The five characters of HTML 5 §13.1 that markup gives meaning to (common practice).
    assert escape_html('<b a="1">&\'') == "&lt;b a=&quot;1&quot;&gt;&amp;&#x27;"
    assert escape_html('"x" <y>', quote=False) == '"x" &lt;y&gt;'
    assert escape_html(3.5) == "3.5"


def test_sha256_of_the_fips_example():
    # FIPS 180-2, Appendix B.1: SHA-256("abc").
    expected = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    assert sha256_hex("abc") == expected
    assert sha256_hex(b"abc") == expected


def test_json_safe_turns_non_finite_into_null_and_numpy_into_python():
    value = {"a": float("nan"), "b": [np.float64(1.5), (np.int64(2), math.inf)], 3: np.bool_(True)}
    clean = json_safe(value)
    assert clean == {"a": None, "b": [1.5, [2, None]], "3": True}
    # RFC 8259 has no NaN or Infinity: strict JSON accepts the result.
    assert json.loads(json.dumps(clean, allow_nan=False)) == clean
