"""Where the winding sits in its frame channel, and the frame line that carries it.

Frame: a channel ``frame_width_m`` wide (along the coil axis) and ``frame_depth_m`` deep
(radial). Its cross-section is centred on the *frame line*: a square of side
``frame_size_m`` (or a circle of that radius) in the coil's plane. The layout's frame solids
(``cage.layout``) are built on the frame line.

Winding (our model, common practice for square frames wound in a U channel): the wire is
wound on the channel floor, the channel's inner face toward the coil axis, layer on layer
outward; each layer's turns lie side by side across the channel width, centred on it. The
winding pack is ``layers x wire outer diameter`` deep, so its mean line -- where the
one-filament model of the coil puts its N turns, and the size a design file records as
``side_m`` / ``radius_m`` -- lies (frame_depth - pack_depth) / 2 inside the frame line. The
two coils' channels are centred on the coil planes, so the winding's spacing is the frames'.
"""
from __future__ import annotations

from functools import lru_cache

from cage.coils import CoilPair


def inset_m(shape: str, frame_depth_m: float, pack_depth_m: float) -> float:
    """How much smaller the winding's size (side or radius) is than its frame line's (m)."""
    drop = max(frame_depth_m - pack_depth_m, 0.0) / 2.0  # radial, half-width units
    return 2.0 * drop if shape == "square" else drop


def pack_depth_m(wire: str, turns: int, frame_width_m: float) -> float:
    """Radial depth of ``turns`` turns of ``wire`` wound across a channel ``frame_width_m`` wide."""
    return _pack_depth_cached(wire, int(turns), float(frame_width_m))


@lru_cache(maxsize=65536)
def _pack_depth_cached(wire: str, turns: int, frame_width_m: float) -> float:
    # the planner's size scans ask the same few (wire, turns) many times
    from cage.coils import FilamentPack
    from cage.wires import wire_from_name

    return FilamentPack(wire_from_name(wire).outer_diameter_m, frame_width_m).depth_m(turns)


def winding_pair(frame_pair: CoilPair, wire: str, turns: int, frame_width_m: float,
                 frame_depth_m: float) -> CoilPair:
    """The winding's mean-line pair (the field model) on a frame-line pair."""
    inset = inset_m(frame_pair.shape, frame_depth_m, pack_depth_m(wire, turns, frame_width_m))
    return CoilPair(frame_pair.axis, frame_pair.shape, frame_pair.size_m - inset, frame_pair.spacing_m, int(turns))


def frame_line_pair(pair: CoilPair, wire: str | None, frame_width_m: float, frame_depth_m: float) -> CoilPair:
    """The frame-line pair that carries a winding whose mean line is ``pair`` (unknown wire:
    the pack is taken as filling the channel, so the frame line is the winding's)."""
    depth = frame_depth_m if wire is None else pack_depth_m(wire, pair.turns, frame_width_m)
    inset = inset_m(pair.shape, frame_depth_m, depth)
    return CoilPair(pair.axis, pair.shape, pair.size_m + inset, pair.spacing_m, 1)
