"""The layers of the package, lowest first: a module may import only from its own layer or lower.

This table is the one place the layering is written in code; DEVELOPERS.md ("Layers") shows
the same table and ``tests/test_import_layers.py`` checks both the import graph (imports
inside functions included) and that the two agree. A new module must be added here.
The package ``__init__`` (the lazy public API) stands outside the table.
"""
from __future__ import annotations

LAYERS: tuple[tuple[str, tuple[str, ...]], ...] = (
    ("physics", (
        "errors", "checks", "escape", "numberformat", "columnformat", "frames", "igrf", "geomag", "elliptic", "filamentkernels", "biot_savart",
        "samplepoints", "batchfield", "coils", "coilaxis", "coilsystems", "uniformity", "wires", "inductance", "thermal",
        "electrical", "supplies", "site", "orbit", "attitude", "fieldrate", "layers",
    )),
    ("planning", (
        "channel", "layout", "coillayout", "axissizing", "design", "planinputs", "uniformsize", "winding", "pairplan", "systemplan", "optimise", "compare", "tolerance", "buildyield", "circuitparts", "buildsheet",
    )),
    ("operation", (
        "ambient", "reuse", "provenance", "setpoints", "calibrate", "sequence", "errorbudget", "gradient",
    )),
    ("workflow", (
        "workflow",
    )),
    ("files", (
        "textfile", "outputs", "atomicfile", "sitefile", "designfile", "calibrationfile", "measurements",
        "targetfile", "elementfile", "setpointfile", "buildsheetfile", "pdfexport", "pngfile",
    )),
    ("pictures", (
        "figurestyle", "fieldfigures", "roomfigure", "comparefigure", "setpointfigures", "plots", "tolerance_plots", "orbitplots", "connectionfigure", "reporthtml", "reportsections", "report",
        "reportfiles",
    )),
    ("command line", (
        "terminal", "cliargs", "fieldtext", "designtext", "setpointtext", "calibrationtext", "cmd_field",
        "cmd_design", "cmd_setpoints", "cmd_calibrate", "cmd_sequence", "cmd_build", "cmd_orbit", "cmd_tolerance",
        "cli", "__main__",
    )),
)

OUTSIDE = ("__init__",)


def layer_of() -> dict[str, int]:
    """{module name: layer index (0 = lowest)}."""
    return {m: i for i, (_, mods) in enumerate(LAYERS) for m in mods}
