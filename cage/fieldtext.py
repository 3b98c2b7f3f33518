"""The table of ``cage field``: the site's field in the geographic and the cage frame. Command-line layer."""
from __future__ import annotations

from cage.escape import for_terminal


def fmt(value: float, digits: int = 1) -> str:
    text = f"{value:,.{digits}f}"
    return text[1:] if text.startswith("-") and float(text.replace(",", "")) == 0.0 else text  # no "-0.0"


def field_table(site, amb) -> str:
    from cage.numberformat import azimuth_text, latitude_text, longitude_text

    e = amb.earth
    lines = [
        f"Site        {for_terminal(site.name)}",
        f"Position    {latitude_text(e.latitude_deg)}, {longitude_text(e.longitude_deg)}, "
        f"{fmt(e.altitude_m, 0)} m (WGS84)",
        f"Date        {e.date.isoformat()}{'' if site.date_given else ' (today, UTC)'}   model {e.model}",
        "",
        "Geographic frame (NED)         field          secular variation",
        f"  north                {fmt(e.north_nT):>12} nT   {fmt(e.sv_north_nT_per_year):>8} nT/yr",
        f"  east                 {fmt(e.east_nT):>12} nT   {fmt(e.sv_east_nT_per_year):>8} nT/yr",
        f"  down                 {fmt(e.down_nT):>12} nT   {fmt(e.sv_down_nT_per_year):>8} nT/yr",
        f"  horizontal           {fmt(e.horizontal_nT):>12} nT",
        f"  total                {fmt(e.total_nT):>12} nT",
        f"  declination          {e.declination_deg:>12.2f} deg (east positive)",
        f"  inclination          {e.inclination_deg:>12.2f} deg (down positive)",
        "",
    ]
    ref = amb.heading_reference
    head = f"Cage frame   +x at {azimuth_text(amb.heading_true_deg)} deg true"
    if ref == "magnetic":
        head += f" ({azimuth_text(amb.heading_deg_given)} deg magnetic + declination)"
    lines.append(head + ", +y 90 deg clockwise of +x, +z down")
    if amb.measured_cage_nT is None:
        for axis, v in zip("xyz", amb.model_cage_nT):
            lines.append(f"  {axis}                    {fmt(v):>12} nT")
        lines.append("  (model field: indoors, steel can shift it by microtesla; survey and add [measured])")
    else:
        lines.append("                        measured (in force)        model    local share")
        for axis, m, v, d in zip("xyz", amb.measured_cage_nT, amb.model_cage_nT, amb.local_share_cage_nT):
            lines.append(f"  {axis}              {fmt(m):>12} nT  {fmt(v):>12} nT  {fmt(d):>10} nT")
        if amb.measured_note:
            lines.append(f"  survey: {amb.measured_note}")
    return "\n".join(lines)
