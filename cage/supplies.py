"""Power-supply channels and what they can drive (one channel per cage axis)."""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Supply:
    """One supply channel, as given by a site file's ``[[supply]]`` table.

    axis: "x", "y", "z", or "any" (the model used on every axis without its own entry).
    max_voltage_V, max_current_A: the channel's limits.
    resolution_A: the smallest current step the channel can be set to.
    bipolar: True if the channel can source both signs; False needs a polarity switch.
    name: free text (model name or label), may be empty.
    """

    axis: str
    max_voltage_V: float
    max_current_A: float
    resolution_A: float
    bipolar: bool
    name: str = ""
