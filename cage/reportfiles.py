"""The files of a plan folder's report: figures, build sheet CSV and connection figures, report.html.

Pictures layer: documents in (the JSON objects of field.json, design.json, setpoints.json),
{file name: bytes or text} out; writing them is the command's (cage.outputs, cage.atomicfile).
"""
from __future__ import annotations

from typing import Optional

FIGURES = {
    "uniformity.png": "Uniformity maps: relative deviation in the mid-planes, each axis driven alone",
    "axis_lines.png": "Field along the lines through the centre, each axis driven alone",
    "cage_in_room.png": "The cage in the room: top, front and side views",
    "setpoints.png": "Setpoints: currents and power per axis against the supply limits",
}


def make_figures(design_obj, design_doc: dict, setpoints_doc: Optional[dict]) -> dict:
    """The report's figures as {file name: PNG bytes}."""
    from cage import plots
    from cage.workflow import design_context, number_or

    volume, tol, frame, room = design_context(design_doc)
    # A cage of pairs is drawn as pairs; any other system with every coil (cage.coilaxis.AxisCage).
    cage = design_obj.cage if design_obj.all_pairs else design_obj.axis_cage
    figs = {
        "uniformity.png": plots.uniformity_maps_figure(cage, volume, tol),
        "axis_lines.png": plots.axis_lines_figure(cage, volume, tol),
        "cage_in_room.png": plots.cage_in_room_figure(cage, frame, room, volume,
                                                      number_or((design_doc.get("site") or {}).get("heading_true_deg"),
                                                                None)),
    }
    if setpoints_doc is not None:
        figs["setpoints.png"] = plots.setpoints_figure(setpoints_doc)
    notes = provenance_notes(design_doc)
    return {name: plots.png_bytes(fig, notes=notes) for name, fig in figs.items()}


def provenance_notes(doc) -> list[str]:
    """The provenance of a document (design, setpoints) as plain lines for a figure's PNG text."""
    prov = doc.get("provenance") if isinstance(doc, dict) else None
    if not isinstance(prov, dict):
        return []
    from cage.provenance import header_lines

    return header_lines(prov, prefix="")


def report_html(field_doc, design_doc, setpoints_doc, pngs: dict, build_doc=None, build_pngs=None) -> str:
    """The stand-alone report.html text, with the provenance of its documents as notes."""
    from cage.report import build_report

    title = "Coil cage report"
    if isinstance(field_doc, dict) and field_doc.get("site"):
        title += f": {field_doc['site']}"
    notes = [f"{name}: {line}" for name, doc in (("field", field_doc), ("design", design_doc),
                                                  ("setpoints", setpoints_doc)) for line in provenance_notes(doc)]
    return build_report(field=field_doc, design=design_doc, setpoints=setpoints_doc,
                        figures={FIGURES[name]: data for name, data in pngs.items()}, title=title, notes=notes,
                        build=build_doc, build_figures=build_pngs)


def report_build(design_doc: dict, name: str = "design.json"):
    """(sheet, its JSON document, connection PNGs) for the report of a plan folder."""
    from cage.buildsheetfile import sheet_to_dict
    from cage.connectionfigure import connection_pngs
    from cage.designfile import design_from_dict
    from cage.workflow import sheet_for_design

    sheet = sheet_for_design(design_from_dict(design_doc, name))
    return sheet, sheet_to_dict(sheet, name), connection_pngs(sheet, provenance_notes(design_doc))


def report_files(field_doc, design_doc, setpoints_doc, pngs: dict) -> dict:
    """The report's files (name -> bytes or text): figures, build sheet CSV and figures, report.html."""
    from cage.buildsheetfile import bom_csv

    sheet, build_doc, build_pngs = report_build(design_doc)
    html = report_html(field_doc, design_doc, setpoints_doc, pngs, build_doc, build_pngs)
    return {**pngs, **build_pngs, "build.csv": bom_csv(sheet), "report.html": html}
