"""Square and round coils, coil pairs and the three-axis cage (cage frame, SI units).

A coil pair for cage axis ``a`` is two equal coils centred on the a-axis at
a = +spacing/2 and a = -spacing/2, normals along a, wound series-aiding so that a
positive current gives a field along +a at the centre. Square coils have their sides
parallel to the other two cage axes.
"""
from __future__ import annotations

from dataclasses import dataclass

AXES = ("x", "y", "z")
SHAPES = ("square", "round")

# Spacing / side of a square pair whose on-axis second derivative vanishes at the centre:
# Firester, Rev. Sci. Instrum. 37, 1264 (1966).
SQUARE_FLAT_SPACING_PER_SIDE = 0.5445


@dataclass(frozen=True)
class CoilPair:
    """One axis of the cage.

    axis: "x", "y" or "z" (cage frame).
    shape: "square" or "round".
    size_m: square, side of the winding centreline; round, radius of the centreline.
    spacing_m: distance between the two coil planes.
    turns: turns per coil.
    """

    axis: str
    shape: str
    size_m: float
    spacing_m: float
    turns: int

    @property
    def side_m(self) -> float:
        if self.shape != "square":
            raise AttributeError("a round coil has a radius, not a side")
        return self.size_m

    @property
    def radius_m(self) -> float:
        if self.shape != "round":
            raise AttributeError("a square coil has a side, not a radius")
        return self.size_m

    @property
    def half_width_m(self) -> float:
        """Half the extent of the centreline across the axis (half side, or radius)."""
        return self.size_m / 2 if self.shape == "square" else self.size_m

    @property
    def perimeter_m(self) -> float:
        """Length of one turn along the centreline."""
        import math

        return 4 * self.size_m if self.shape == "square" else 2 * math.pi * self.size_m


def flat_spacing_m(shape: str, size_m: float) -> float:
    """Spacing at which the on-axis field of a pair is flattest at the centre.

    Round: spacing = radius (Helmholtz). Square: 0.5445 x side (Firester 1966).
    """
    if shape == "round":
        return float(size_m)
    if shape == "square":
        return SQUARE_FLAT_SPACING_PER_SIDE * float(size_m)
    raise ValueError(f"unknown coil shape {shape!r}; expected one of {SHAPES}")


@dataclass(frozen=True)
class CoilCage:
    """Three pairs, one per cage axis."""

    x: CoilPair
    y: CoilPair
    z: CoilPair

    @property
    def pairs(self) -> tuple[CoilPair, CoilPair, CoilPair]:
        return (self.x, self.y, self.z)
