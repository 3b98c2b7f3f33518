"""Numbers as a person reads them: N/S latitudes, E/W longitudes, azimuths in 0-360, no "-0.0".

Pure text formatting; used by the terminal tables and the report.
"""
from __future__ import annotations

import math


def fixed(value: float, decimals: int) -> str:
    """``value`` with ``decimals`` decimals, never "-0.0" (a negative that rounds to zero loses its sign)."""
    text = f"{float(value):.{decimals}f}"
    if text.startswith("-") and float(text) == 0.0:
        text = text[1:]
    return text


def azimuth_deg(value: float) -> float:
    """An azimuth in degrees folded into [0, 360)."""
    v = math.fmod(float(value), 360.0)
    if v < 0:
        v += 360.0
    return 0.0 if v >= 360.0 else v


def azimuth_text(value: float, decimals: int = 2) -> str:
    """An azimuth in 0-360 degrees with ``decimals`` decimals ("360.00" shown as "0.00")."""
    text = fixed(azimuth_deg(value), decimals)
    return fixed(0.0, decimals) if float(text) >= 360.0 else text


def latitude_text(value: float, decimals: int = 4, degree: str = " deg") -> str:
    """A geodetic latitude as "52.2050 deg N" / "33.9000 deg S" (the equator without a letter)."""
    v = float(value)
    text = fixed(abs(v), decimals)
    if float(text) == 0.0:
        return f"{text}{degree}"
    return f"{text}{degree} {'N' if v > 0 else 'S'}"


def longitude_text(value: float, decimals: int = 4, degree: str = " deg") -> str:
    """A longitude (east positive, any turn) as "0.1190 deg E" / "70.5000 deg W", folded to -180..180."""
    v = math.fmod(float(value), 360.0)
    if v > 180.0:
        v -= 360.0
    elif v <= -180.0:
        v += 360.0
    text = fixed(abs(v), decimals)
    if float(text) == 0.0 or float(text) == 180.0:
        return f"{text}{degree}"
    return f"{text}{degree} {'E' if v > 0 else 'W'}"


def count_text(n: int, noun: str) -> str:
    """A count with its noun, singular for one: "1 day", "3 days" (a plain -s plural)."""
    return f"{n} {noun}{'' if n == 1 else 's'}"
