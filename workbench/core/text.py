"""Small text helpers shared by every layer: HTML escaping, SHA-256 digests, JSON-safe values.

One home for each, so the report, the panels, the charts, the command line and the study
file escape, hash and clean values the same way.
"""

from __future__ import annotations

import hashlib
import html
import math
from typing import Any


def escape_html(text: object, *, quote: bool = True) -> str:
    """User text made safe to place in HTML.

    Parameters
    ----------
    text : object
        Anything; its ``str()`` is escaped.
    quote : bool, optional
        Also turn ``"`` and ``'`` into entities (True, for text inside attributes); Plotly
        strings want False, since Plotly shows ``&quot;`` literally.

    Returns
    -------
    str
        ``&``, ``<`` and ``>`` (and the quotes) as character entities.
    """
    return html.escape(str(text), quote=quote)


def sha256_hex(data: str | bytes) -> str:
    """SHA-256 of bytes, or of text encoded as UTF-8, as 64 hex digits.

    Parameters
    ----------
    data : str or bytes
        What to hash.

    Returns
    -------
    str
        The digest in lower-case hexadecimal.
    """
    raw = data.encode("utf-8") if isinstance(data, str) else data
    return hashlib.sha256(raw).hexdigest()


def json_safe(obj: Any) -> Any:
    """A value JSON can hold without NaN: non-finite floats become None, numpy scalars Python.

    Parameters
    ----------
    obj : object
        A float, numpy scalar, dict, list or tuple (nested), or anything else (kept).

    Returns
    -------
    object
        The same structure; dict keys as ``str``, tuples as lists.
    """
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {str(k): json_safe(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [json_safe(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalars
        return json_safe(obj.item())
    return obj
