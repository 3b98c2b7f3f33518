"""Small input checks shared by the computational modules; each raises InputError in one line."""
from __future__ import annotations

import math

from cage.errors import InputError


def positive_number(value, what: str) -> float:
    """``value`` as a float if it is a finite number above zero; else InputError naming ``what``."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {value!r}") from None
    if not math.isfinite(v) or v <= 0.0:
        raise InputError(f"{what} must be a positive number, got {value!r}")
    return v
