"""The stand-alone HTML report: site and field, design, budgets, setpoints, figures, cautions.

``build_report`` takes the parsed JSON documents that cage writes (the field, the design, the
setpoints; any may be None and its sections are then left out) and the figures as PNG bytes,
and returns ONE self-contained HTML document: figures embedded as ``data:image/png;base64``,
inline CSS only, no scripts, no outside links, fonts or style sheets, so the file can be
mailed, archived and printed as it is (A4, page breaks between sections).

Every piece of text that comes from a document is escaped (``cage.escape.for_html``: control characters made visible, then ``html.escape``); every number
is written with its unit and rounded for people (nT to 0.1, A to 3 decimals or the supply's
resolution, V to 0.01, W to 0.1).

Nothing here imports matplotlib, reads or writes files, or prints.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence

from cage.errors import InputError
from cage.reporthtml import (AXES, DASH, NBSP, _auto, _decimals_for, _esc, _fmt, _kv_table, _norm,  # noqa: F401
                             _number, _section, _table, _vector, figure_html)

__all__ = ["build_report", "CAUTIONS", "ASSUMPTIONS", "PNG_SIGNATURE"]

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG (ISO/IEC 15948, RFC 2083) file signature

CAUTIONS = (
    ("Coil heating",
     "Windings that carry amperes for hours get hot. Enamel and coil frames have temperature "
     "limits, and a hot winding's resistance rises by about 0.4 % per kelvin, so the voltage "
     "needed for the same current rises too. Watch the winding temperatures given here and "
     "measure them on the built coils."),
    ("Supply voltages and inductive kick",
     "Bench supplies and amplifiers can deliver dangerous currents. A coil's inductance gives a "
     "voltage spike when a current is broken: never open a live coil circuit; use fused, "
     "properly rated wiring, a freewheel or snubber path and an emergency stop."),
    ("Strong fields",
     "Keep people with pacemakers or other implanted medical devices away from energised "
     "coils. Magnetised tools and loose steel can be pulled in and disturb the test; keep them "
     "out of the cage."),
    ("Codes and licensed practice",
     "The numbers in this report are planning estimates. Wiring, protection and installation "
     "must follow local electrical codes and licensed practice; a qualified electrician signs "
     "off mains-connected work."),
)

ASSUMPTIONS = (
    ("Filament model",
     "Each coil's turns are modelled as filaments on the winding centreline (exact Biot-Savart "
     "fields of straight segments and circular loops). The real winding cross-section, leads, "
     "crossovers and frame tolerances shift the field slightly; uniformity figures are those "
     "of the ideal geometry."),
    ("Field model (IGRF-14)",
     "The site field comes from the International Geomagnetic Reference Field, 14th generation, "
     "which describes the Earth's core field only, smoothed to spherical-harmonic degree 13. "
     "It is accurate to roughly 10 to 100 nT, and past 2030 it is extrapolated with the last "
     "secular variation."),
    ("What the model leaves out",
     "Steel in floors, walls, benches and racks and the local crust shift the field indoors "
     "by hundreds of nT up to several microtesla, changing over a metre. Ionospheric currents "
     "move the field by tens of nT over a day (more at high latitude), and magnetic storms by "
     "hundreds of nT, up to thousands at high latitude, for hours to days."),
    ("What a magnetometer survey should confirm before use",
     "Before trusting a null, measure with a magnetometer: the field at the cage centre with the "
     "supplies off, and its change across the test volume; the cage's heading; each axis's field "
     "per ampere and its coupling into the other axes, driving one axis at a time; the residual "
     "field after nulling; and its drift over a day. Put the survey into the site file and fit "
     "the built cage with the calibration command; for the best nulls close the loop with a "
     "magnetometer in the cage."),
    ("Electrical budget",
     "Resistances are for copper at the winding temperature given; voltages and powers at the "
     "design current are I R and I\u00b2R of the coil pair alone unless the setpoints say "
     "otherwise (leads add their share). Setpoints are steady-state values: changing a current "
     "quickly needs extra voltage L dI/dt."),
)

_CSS = """
:root { color-scheme: light; }
body { font-family: "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; font-size: 10.5pt;
       line-height: 1.4; color: #111; background: #fff; margin: 0 auto; max-width: 190mm;
       padding: 8mm; }
h1 { font-size: 17pt; margin: 0 0 2mm 0; }
h2 { font-size: 13.5pt; border-bottom: 1.5pt solid #333; padding-bottom: 1mm; margin-top: 8mm; }
h3 { font-size: 11pt; margin: 5mm 0 1.5mm 0; }
p.sub { color: #444; margin: 0 0 4mm 0; }
nav ol { columns: 2; margin: 2mm 0 4mm 0; }
nav a { color: #1f4f9f; text-decoration: none; }
table { border-collapse: collapse; margin: 2mm 0 4mm 0; font-size: 9.5pt; }
th, td { border: 0.6pt solid #999; padding: 1mm 2mm; text-align: left; vertical-align: top; }
th { background: #eee; font-weight: bold; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr.outside td { background: #fde8e8; }
td.bad, span.bad { color: #a00018; font-weight: bold; }
td.ok { color: #116633; }
.note { color: #444; font-size: 9pt; }
section.cautions { border: 1.5pt solid #a00018; padding: 1mm 4mm 3mm 4mm; margin-top: 6mm; }
section.cautions h2 { border-bottom-color: #a00018; color: #a00018; }
dl dt { font-weight: bold; margin-top: 2mm; }
dl dd { margin: 0.5mm 0 0 5mm; }
figure { margin: 4mm 0; text-align: center; break-inside: avoid; page-break-inside: avoid; }
figure img { max-width: 100%; height: auto; border: 0.5pt solid #ccc; }
figcaption { font-size: 9.5pt; color: #333; margin-top: 1mm; }
@page { size: A4; margin: 14mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 10pt; }
  nav { display: none; }
  section.major { break-before: page; page-break-before: always; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  tr, figure { break-inside: avoid; page-break-inside: avoid; }
  thead { display: table-header-group; }
  a { color: inherit; text-decoration: none; }
}
"""


def _place(value, kind: str) -> str:
    """Latitude N/S, longitude E/W or an azimuth in 0-360 degrees (cage.numberformat), escaped."""
    from cage.numberformat import azimuth_text, latitude_text, longitude_text

    v = _number(value)
    if v is None:
        return _fmt(value, 4)
    if kind == "azimuth":
        return _esc(azimuth_text(v) + "°")
    return _esc((latitude_text if kind == "lat" else longitude_text)(v, 4, "°"))


def _field_section(field: Mapping) -> str:
    parts = []
    site = field.get("site") or field.get("name")
    pairs = []
    if site:
        pairs.append(("site", _esc(site)))
    pairs += [
        ("field model", _esc(field.get("model", DASH))),
        ("date", _esc(field.get("date", DASH))),
        ("latitude (geodetic)", _place(field.get("lat_deg"), "lat")),
        ("longitude", _place(field.get("lon_deg"), "lon")),
        ("altitude above the WGS84 ellipsoid", _fmt(field.get("alt_m"), 1, "m")),
        ("heading of cage +x (true azimuth, clockwise from north)", _place(field.get("heading_deg"), "azimuth")),
    ]
    parts.append("<h3>Site</h3>")
    parts.append(_kv_table(pairs))

    parts.append("<h3>Geomagnetic field at the site (model)</h3>")
    parts.append(_kv_table([
        ("north component", _fmt(field.get("north_nT"), 1, "nT")),
        ("east component", _fmt(field.get("east_nT"), 1, "nT")),
        ("down component", _fmt(field.get("down_nT"), 1, "nT")),
        ("horizontal intensity H", _fmt(field.get("horizontal_nT"), 1, "nT")),
        ("total intensity F", _fmt(field.get("total_nT"), 1, "nT")),
        ("declination D (east positive)", _fmt(field.get("declination_deg"), 2, "°")),
        ("inclination I (down positive)", _fmt(field.get("inclination_deg"), 2, "°")),
    ]))
    sv = field.get("secular_variation_nT_per_year")
    if isinstance(sv, Mapping):
        parts.append(_table(("secular variation", "north", "east", "down"),
                            [["per year"] + [_fmt(sv.get(k), 1, "nT/yr") for k in ("north", "east", "down")]]))

    rows = []
    for key, label in (("cage_frame_nT", "model (IGRF)"),
                       ("measured_cage_frame_nT", "measured (survey, in force)"),
                       ("local_share_cage_nT", "measured minus model (building and crust)")):
        if key in field and field[key] is not None:
            rows.append([_esc(label)] + _vector(field[key], 1, "nT") + [_fmt(_norm(field[key]), 1, "nT")])
    if rows:
        parts.append("<h3>Field in the cage frame (x heading, y 90° clockwise from x, z down)</h3>")
        parts.append(_table(("", "x", "y", "z", "magnitude"), rows))
    return _section("site", "Site and field", "\n".join(parts), major=False)


def _axis(design: Mapping, a: str) -> Mapping:
    axes = design.get("axes")
    if isinstance(axes, Mapping) and isinstance(axes.get(a), Mapping):
        return axes[a]
    return {}


def _design_section(design: Mapping) -> str:
    ax = {a: _axis(design, a) for a in AXES}
    parts = []

    def row(label, fn):
        return [_esc(label)] + [fn(ax[a]) for a in AXES]

    def size(d):
        if "side_m" in d:
            return _fmt(d.get("side_m"), 3, "m") + " side"
        if _number(d.get("radius_m")) is not None:  # sizes read as diameters, as in the build sheet
            return _fmt(2 * _number(d.get("radius_m")), 3, "m") + " diameter"
        return DASH

    def field_at_max(d):
        k, i = _number(d.get("field_per_amp_nT")), _number(d.get("max_current_A"))
        return _fmt(k * i / 1000.0, 1, "µT") if k is not None and i is not None else DASH

    rows = [
        row("coil shape", lambda d: _esc(d.get("shape", DASH))),
        row("size of the winding centreline", size),
        row("spacing of the two coils", lambda d: _fmt(d.get("spacing_m"), 3, "m")),
        row("turns per coil", lambda d: _fmt(d.get("turns"), 0)),
        row("wire", lambda d: _esc(d["wire"]) if d.get("wire") else DASH),
        row("frame channel (along the axis × radial)",
            lambda d: (_fmt(_mm(d.get("frame_width_m")), 0, "") + " × " + _fmt(_mm(d.get("frame_depth_m")), 0, "mm"))
            if d.get("frame_width_m") is not None else DASH),
        row("field at the centre per ampere", lambda d: _fmt(d.get("field_per_amp_nT"), 1, "nT/A")),
        row("design current", lambda d: _fmt(d.get("max_current_A"), 3, "A")),
        row("field at the design current", field_at_max),
    ]
    parts.append(_table(("per axis", "x", "y", "z"), rows))
    env = design.get("envelope_m")
    if isinstance(env, (list, tuple)) and len(env) == 3:
        parts.append(f"<p>Outer envelope of the frames (x × y × z): "
                     f"{' × '.join(_fmt(v, 3) for v in env)}{NBSP}m.</p>")
    from cage.reportsections import requirement_and_layout

    parts.append(requirement_and_layout(design))
    if design.get("notes"):
        parts.append(f"<p class=\"note\">{_esc(design['notes'])}</p>")
    return _section("design", "Design", "\n".join(parts))


def _mm(value):
    v = _number(value)
    return None if v is None else v * 1000.0


def _budget_section(design: Mapping) -> str | None:
    ax = {a: _axis(design, a) for a in AXES}
    keys = ("resistance_20C_ohm", "resistance_hot_ohm", "inductance_H", "time_constant_s",
            "copper_mass_kg", "winding_temperature_C", "current_density_A_per_mm2", "max_current_A")
    if not any(k in ax[a] for a in AXES for k in keys):
        return None

    def derived(d, what):
        i, r, lh = _number(d.get("max_current_A")), _number(d.get("resistance_hot_ohm")), _number(d.get("inductance_H"))
        if what == "V" and i is not None and r is not None:
            return i * r
        if what == "W" and i is not None and r is not None:
            return i * i * r
        if what == "J" and i is not None and lh is not None:
            return 0.5 * lh * i * i
        return None

    def total(fn):
        vals = [fn(ax[a]) for a in AXES]
        return None if any(v is None for v in vals) else sum(vals)

    def num(key, scale=1.0):
        def get(d):
            v = _number(d.get(key))
            return None if v is None else v * scale
        return get

    spec = [
        ("resistance at 20 °C (both coils)", num("resistance_20C_ohm"), 3, "Ω", False),
        ("resistance at the winding temperature", num("resistance_hot_ohm"), 3, "Ω", False),
        ("inductance (series pair)", num("inductance_H", 1000.0), 2, "mH", False),
        ("time constant L/R", num("time_constant_s", 1000.0), 1, "ms", False),
        ("design current", num("max_current_A"), 3, "A", False),
        ("current density at the design current", num("current_density_A_per_mm2"), 2, "A/mm²", False),
        ("steady winding temperature", num("winding_temperature_C"), 1, "°C", False),
        ("coil voltage at the design current, I R (leads excluded)", lambda d: derived(d, "V"), 2, "V", False),
        ("coil power at the design current, I² R (leads excluded)", lambda d: derived(d, "W"), 1, "W", True),
        ("stored energy at the design current, L I² / 2", lambda d: derived(d, "J"), 2, "J", True),
        ("copper mass (both coils)", num("copper_mass_kg"), 2, "kg", True),
    ]
    rows = []
    for label, fn, dec, unit, summed in spec:
        vals = [fn(ax[a]) for a in AXES]
        if all(v is None for v in vals):
            continue
        tot = total(fn) if summed else None
        rows.append([_esc(label)] + [_fmt(v, dec, unit) for v in vals] + [_fmt(tot, dec, unit) if summed else ""])
    body = _table(("per axis", "x", "y", "z", "all three"), rows)
    body += ("\n<p class=\"note\">Derived rows use the design current and the hot resistance; "
             "the supply must also cover the leads' resistance and, while a current changes, "
             "L dI/dt.</p>")
    return _section("budget", "Electrical and thermal budget", body)


def _setpoints_section(sp: Mapping) -> str:
    parts = []
    parts.append(_kv_table([
        ("site", _esc(sp.get("site", DASH))),
        ("date", _esc(sp.get("date", DASH))),
        ("ambient field from", _esc(sp.get("source", DASH))),
    ]))
    amb = sp.get("ambient_cage_nT")
    if amb is not None:
        parts.append(_table(("", "x", "y", "z", "magnitude"),
                            [[_esc("ambient field at the cage centre (cage frame)")] + _vector(amb, 1, "nT")
                             + [_fmt(_norm(amb), 1, "nT")]]))
    limits = sp.get("supply_limits") if isinstance(sp.get("supply_limits"), Mapping) else {}
    decimals = {}
    lim_rows = []
    for a in AXES:
        lim = limits.get(a) if isinstance(limits.get(a), Mapping) else {}
        decimals[a] = _decimals_for(lim.get("resolution_A"))
        bip = lim.get("bipolar")
        lim_rows.append([_esc(a), _fmt(lim.get("max_current_A"), decimals[a], "A"),
                         _fmt(lim.get("max_voltage_V"), 2, "V"),
                         DASH if bip is None else ("yes" if bip else "no (polarity switch for negative currents)"),
                         _fmt(lim.get("resolution_A"), decimals[a], "A") if "resolution_A" in lim else DASH])
    parts.append("<h3>Supply limits</h3>")
    parts.append(_table(("axis", "max current", "max voltage", "bipolar", "resolution"), lim_rows))

    rows = sp.get("rows") if isinstance(sp.get("rows"), list) else []
    parts.append("<h3>Setpoints</h3>")
    n_out = sum(1 for r in rows if isinstance(r, Mapping) and r.get("within_limits") is False)
    if n_out:
        parts.append(f'<p><span class="bad">{n_out} row(s) outside the supply limits</span>, '
                     f"marked below; do not drive them as they stand.</p>")
    html_rows = ["<table>", "<thead><tr>" + "".join(f"<th>{_esc(h)}</th>" for h in (
        "row", "axis", "target field", "coil current", "supply setpoint", "voltage", "power",
        "total power", "within limits")) + "</tr></thead>", "<tbody>"]
    for i, r in enumerate(rows):
        if not isinstance(r, Mapping):
            continue
        ok = r.get("within_limits")
        cls = ' class="outside"' if ok is False else ""
        verdict = ('<td rowspan="3" class="bad">NO: outside limits</td>' if ok is False else
                   ('<td rowspan="3" class="ok">yes</td>' if ok is True else f'<td rowspan="3">{DASH}</td>'))
        target = r.get("target_cage_nT")
        for j, a in enumerate(AXES):
            d = decimals[a]
            lim = limits.get(a) if isinstance(limits.get(a), Mapping) else {}
            cur = _get(r.get("current_A"), a, j)
            volt = _get(r.get("voltage_V"), a, j)
            imax, vmax = _number(lim.get("max_current_A")), _number(lim.get("max_voltage_V"))
            cur_bad = imax is not None and _number(cur) is not None and abs(_number(cur)) > imax * (1 + 1e-9)
            volt_bad = vmax is not None and _number(volt) is not None and abs(_number(volt)) > vmax * (1 + 1e-9)
            cells = []
            if j == 0:
                cells.append(f'<td rowspan="3">{_esc(r.get("label", f"row {i + 1}"))}</td>')
            cells.append(f"<td>{_esc(a)}</td>")
            cells.append(f'<td class="num">{_fmt(_get(target, a, j), 1, "nT")}</td>')
            cells.append(f'<td class="num{" bad" if cur_bad else ""}">{_fmt(cur, d, "A")}{" !" if cur_bad else ""}</td>')
            cells.append(f'<td class="num">{_supply_setpoint(r, lim, a, j, d)}</td>')
            cells.append(f'<td class="num{" bad" if volt_bad else ""}">{_fmt(volt, 2, "V")}{" !" if volt_bad else ""}</td>')
            cells.append(f'<td class="num">{_fmt(_get(r.get("power_W"), a, j), 1, "W")}</td>')
            if j == 0:
                cells.append(f'<td rowspan="3" class="num">{_fmt(r.get("total_power_W"), 1, "W")}</td>')
                cells.append(verdict)
            html_rows.append(f"<tr{cls}>" + "".join(cells) + "</tr>")
    html_rows.append("</tbody></table>")
    parts.append("\n".join(html_rows))
    parts.append("<p class=\"note\">Target fields in the cage frame; currents signed (positive gives a "
                 "field along +axis); the supply setpoint of a unipolar channel is |I| with the polarity its switch "
                 "needs; \"!\" marks a value beyond its supply limit.</p>")
    return _section("setpoints", "Setpoints", "\n".join(parts))


def _supply_setpoint(row: Mapping, lim: Mapping, axis: str, index: int, decimals: int) -> str:
    """The setpoint as the supply sees it: on a unipolar channel |I| and the polarity switch."""
    sp = _number(_get(row.get("setpoint_A"), axis, index))
    if lim.get("bipolar") is not False or sp is None:
        return _fmt(_get(row.get("setpoint_A"), axis, index), decimals, "A")
    reverse = sp < 0
    return _fmt(abs(sp), decimals, "A") + _esc(", polarity " + ("REVERSE" if reverse else "forward"))


def _get(values, axis: str, index: int):
    if isinstance(values, Mapping):
        return values.get(axis)
    if isinstance(values, (list, tuple)) and len(values) == 3:
        return values[index]
    return None


def _figures_section(figures: Mapping[str, bytes]) -> str:
    return _section("figures", "Figures", "\n".join(figure_html(t, d) for t, d in figures.items()))


def _dl(items) -> str:
    return "<dl>\n" + "\n".join(f"<dt>{_esc(t)}</dt><dd>{_esc(d)}</dd>" for t, d in items) + "\n</dl>"


# ---------------------------------------------------------------------------------------------
# The report
# ---------------------------------------------------------------------------------------------


def build_report(*, field: Mapping | None = None, design: Mapping | None = None,
                 setpoints: Mapping | None = None, figures: Mapping[str, bytes] | None = None,
                 notes: Sequence[str] = (), title: str = "Coil cage report",
                 build: Mapping | None = None, build_figures: Mapping[str, bytes] | None = None) -> str:
    """One self-contained HTML document (str) from the parsed documents and PNG figures.

    field: the object ``cage field --json`` prints (model, date, lat_deg, ..., cage_frame_nT);
    design: a ``cage-design`` v1 document; setpoints: a ``cage-setpoints`` v1 document;
    figures: title -> PNG bytes, embedded in the given order; notes: free text lines.
    build: a ``cage-build`` document (``cage build --json``) and build_figures its connection
    figures {"connection_x.png": PNG bytes, ...} (``cage.reportsections.build_section``).
    A document that is None leaves its sections out. Raises InputError when a figure is not
    PNG data or a document is not an object.
    """
    for name, doc in (("field", field), ("design", design), ("setpoints", setpoints)):
        if doc is not None and not isinstance(doc, Mapping):
            raise InputError(f"report: the {name} document must be a JSON object, got {type(doc).__name__}")
    figures = dict(figures or {})
    for fig_title, data in figures.items():
        if not isinstance(data, (bytes, bytearray, memoryview)) or not bytes(data[:8]) == PNG_SIGNATURE:
            raise InputError(f"report: figure {str(fig_title)!r} is not PNG image data")
    if isinstance(notes, str):
        notes = [notes]

    sections = []
    toc = []
    sections.append(_section("cautions", "Cautions", _dl(CAUTIONS), major=False, extra_class="cautions"))
    toc.append(("cautions", "Cautions"))
    if field is not None:
        sections.append(_field_section(field))
        toc.append(("site", "Site and field"))
    if design is not None:
        sections.append(_design_section(design))
        toc.append(("design", "Design"))
        budget = _budget_section(design)
        if budget:
            sections.append(budget)
            toc.append(("budget", "Electrical and thermal budget"))
    if build is not None:
        from cage.reportsections import build_section

        sections.append(build_section(build, build_figures or {}))
        toc.append(("build", "Build sheet"))
    if setpoints is not None:
        sections.append(_setpoints_section(setpoints))
        toc.append(("setpoints", "Setpoints"))
    if figures:
        sections.append(_figures_section(figures))
        toc.append(("figures", "Figures"))
    if notes:
        items = "\n".join(f"<li>{_esc(n)}</li>" for n in notes)
        sections.append(_section("notes", "Notes", f"<ul>\n{items}\n</ul>", major=False))
        toc.append(("notes", "Notes"))
    sections.append(_section("assumptions", "Assumptions and what the model leaves out", _dl(ASSUMPTIONS)))
    toc.append(("assumptions", "Assumptions"))

    subtitle_bits = []
    site = (setpoints or {}).get("site") or (field or {}).get("site") or (field or {}).get("name")
    if site:
        subtitle_bits.append(f"site: {site}")
    date = (field or {}).get("date") or (setpoints or {}).get("date")
    if date:
        subtitle_bits.append(f"date: {date}")
    model = (field or {}).get("model")
    if model:
        subtitle_bits.append(f"field model: {model}")
    from cage import __version__

    subtitle_bits.append(f"made by cage {__version__}")
    subtitle = f'<p class="sub">{_esc("; ".join(subtitle_bits))}</p>' if subtitle_bits else ""
    from cage.reportsections import validity_paragraph

    subtitle += validity_paragraph(field)
    nav = ("<nav><ol>" + "".join(f'<li><a href="#{a}">{_esc(t)}</a></li>' for a, t in toc)
           + "</ol></nav>")

    return "\n".join([
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{_esc(title)}</title>",
        f"<style>{_CSS}</style>",
        "</head>",
        "<body>",
        "<header>",
        f"<h1>{_esc(title)}</h1>",
        subtitle,
        nav,
        "</header>",
        "<main>",
        *sections,
        "</main>",
        "</body>",
        "</html>",
        "",
    ])
