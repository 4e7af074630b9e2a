"""Numbers a user typed, checked: finite, of the right type, within bounds.

Light on purpose (no numpy, no pint): the command line's parser and the fuel library use it.
"""

from __future__ import annotations

import math

from workbench.core.errors import InputError


def show(text: str) -> str:
    """``text`` quoted for an error line, cut to 60 characters."""
    return repr(text) if len(text) <= 60 else repr(text[:60]) + "…"


def read_number(raw: object, where: str, *, low: float | None = None,
                high: float | None = None, what: str = "a number") -> float:
    """Check a number a user wrote (a TOML or JSON value, a widget value) and return it.

    Parameters
    ----------
    raw : object
        The value as read; ``int`` or ``float`` (``bool`` is refused).
    where : str
        Key path, file or field named in the error.
    low, high : float, optional
        Inclusive bounds [unit of the value].
    what : str
        What the value is, for the error ("a number of g CO2e per MJ").

    Returns
    -------
    float

    Raises
    ------
    InputError
        A value of another type (text, list, table), NaN or infinity, or outside the bounds.
    """
    if isinstance(raw, bool) or not isinstance(raw, int | float):
        raise InputError(where, f"must be {what}, got {show(repr(raw))}")
    try:
        value = float(raw)
    except OverflowError:  # an integer beyond the float range
        value = math.inf if raw > 0 else -math.inf
    if not math.isfinite(value):
        raise InputError(where, f"must be a finite number, got {show(repr(raw))}")
    if low is not None and value < low:
        raise InputError(where, f"must be at least {low:g}, got {value:g}")
    if high is not None and value > high:
        raise InputError(where, f"must be at most {high:g}, got {value:g}")
    return value
