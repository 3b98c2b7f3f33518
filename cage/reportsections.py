"""Report sections in words and units: requirement, layout, supplies, validity, build sheet.

HTML fragments for ``cage.report.build_report``; every value from a document is escaped
through the report's own helpers. Keys this module does not know are still shown, with the
key's words (underscores as spaces) and the value as it stands.
"""
from __future__ import annotations

from collections.abc import Mapping

from cage.reporthtml import AXES, DASH, NBSP, _auto, _esc, _fmt, _number, _section, _table, figure_html

# key -> (label, kind, decimals, unit, scale); kind: "number", "per_axis", "text", "list", "size3", "flag"
_REQUIREMENT = {
    "test_volume_m": ("test volume, x × y × z (centred in the cage)", "size3", 3, "m", 1.0),
    "uniformity": ("uniformity tolerance, largest |B(p) − B(0)| / |B(0)| over the test volume", "number", 3, "%",
                   100.0),
    "extra_field_nT": ("field each axis adds beyond nulling, both signs", "per_axis", 1, "µT", 1e-3),
    "needed_field_nT": ("full-range field (ambient component plus the extra field)", "per_axis", 1, "µT", 1e-3),
    "shapes": ("coil shapes allowed", "list", 0, "", 1.0),
    "wires": ("magnet wires allowed", "list", 0, "", 1.0),
    "minimise": ("the planner minimised", "text", 0, "", 1.0),
    "spacing": ("coil spacing rule", "text", 0, "", 1.0),
    "max_winding_temperature_C": ("highest winding temperature allowed", "number", 0, "°C", 1.0),
    "ambient_temperature_C": ("room temperature", "number", 0, "°C", 1.0),
}
_LAYOUT = {
    "order_outermost_first": ("axes from the outermost pair inward", "list", 0, "", 1.0),
    "min_centreline_distance_m": ("closest centrelines of coils of different axes", "number", 1, "mm", 1e3),
    "frame_clearance_m": ("free gap between frames where they come closest", "number", 1, "mm", 1e3),
    "closest_axes": ("axes whose frames come closest", "list", 0, "", 1.0),
    "frame_width_m": ("frame channel width, along the coil axis", "number", 0, "mm", 1e3),
    "frame_depth_m": ("frame channel depth, radial", "number", 0, "mm", 1e3),
    "frame_gap_m": ("least gap kept between frames of different axes", "number", 0, "mm", 1e3),
    "fits_room": ("fits the room less its clearance", "flag", 0, "", 1.0),
    "room_inner_m": ("room less its clearance, x × y × z", "size3", 2, "m", 1.0),
    "total_power_W": ("power at full range, all axes", "number", 1, "W", 1.0),
    "copper_mass_kg": ("copper, all windings", "number", 1, "kg", 1.0),
    "uniformity_reached": ("uniformity reached over the test volume", "per_axis", 4, "%", 100.0),
    "full_range_voltage_V": ("supply voltage at full range", "per_axis", 2, "V", 1.0),
    "full_range_power_W": ("power at full range", "per_axis", 1, "W", 1.0),
    "field_step_nT": ("field step of one supply current step", "per_axis", 1, "nT", 1.0),
    "winding_pack_centre_difference": ("winding pack against one filament: centre field differs by", "per_axis", 0,
                                       "ppm", 1e6),
    "winding_pack_box_difference": ("winding pack against one filament: largest difference over the test volume",
                                    "per_axis", 0, "ppm", 1e6),
    "winding_pack_uniformity": ("uniformity with the real winding pack", "per_axis", 4, "%", 100.0),
}
_WORDS = {"power": "power at full range", "mass": "copper mass", "size": "envelope volume",
          "flat": "each pair at its flat-field spacing", "free": "spacing chosen for the test volume"}


def _value(value, kind: str, decimals: int, unit: str, scale: float) -> str:
    if kind == "flag":
        return DASH if value is None else ("yes" if value else "no")
    if kind == "text":
        return _esc(_WORDS.get(value, value)) if isinstance(value, str) else _auto(value)
    if kind == "list":
        return ", ".join(_esc(v) for v in value) if isinstance(value, (list, tuple)) else _auto(value)
    if kind in ("per_axis", "size3") and isinstance(value, (list, tuple)) and len(value) == 3 \
            and all(_number(v) is not None for v in value):
        nums = [_number(v) * scale for v in value]
        if kind == "size3":
            return " × ".join(_fmt(v, decimals) for v in nums) + NBSP + _esc(unit)
        return ", ".join(f"{_esc(a)}{NBSP}{_fmt(v, decimals, unit)}" for a, v in zip(AXES, nums))
    if kind == "size3" and _number(value) is not None:
        return _fmt(_number(value) * scale, decimals, unit) + " cube"
    v = _number(value)
    if v is None:
        return _auto(value)
    return _fmt(v * scale, decimals, unit)


def _readable_table(obj: Mapping, known: Mapping, skip=()) -> str:
    rows = []
    for key, value in obj.items():
        if key in skip:
            continue
        if key in known:
            label, kind, dec, unit, scale = known[key]
            rows.append((_esc(label), _value(value, kind, dec, unit, scale)))
        else:
            rows.append((_esc(str(key).replace("_", " ")), _auto(value)))
    return _table(("", "value"), rows, numeric_from=2)


def _supplies_table(supplies: Mapping) -> str:
    rows = []
    for a in AXES:
        s = supplies.get(a) if isinstance(supplies.get(a), Mapping) else {}
        bip = s.get("bipolar")
        rows.append([_esc(a), _esc(s.get("name") or DASH), _fmt(s.get("max_voltage_V"), 1, "V"),
                     _fmt(s.get("max_current_A"), 2, "A"), _fmt(s.get("resolution_A"), 4, "A"),
                     DASH if bip is None else ("bipolar" if bip else "unipolar: polarity switch")])
    return _table(("axis", "supply", "max voltage", "max current", "current step", "polarity"), rows, numeric_from=2)


def requirement_and_layout(design: Mapping) -> str:
    """The requirement (with one row per supply) and the layout, in words and units."""
    parts = []
    req = design.get("requirement")
    if isinstance(req, Mapping) and req:
        parts.append("<h3>Requirement</h3>")
        parts.append(_readable_table(req, _REQUIREMENT, skip=("supplies",)))
        if isinstance(req.get("supplies"), Mapping):
            parts.append("<h3>Supplies</h3>")
            parts.append(_supplies_table(req["supplies"]))
    lay = design.get("layout")
    if isinstance(lay, Mapping) and lay:
        parts.append("<h3>Layout</h3>")
        parts.append(_readable_table(lay, _LAYOUT))
    return "\n".join(parts)


def validity_paragraph(field: Mapping | None, threshold_nT: float = 10.0) -> str:
    """'Valid until': the date by which the model's secular variation moves the null by threshold_nT."""
    import datetime as dt

    from cage.setpoints import days_until_drift, valid_until

    if not isinstance(field, Mapping):
        return ""
    sv = field.get("secular_variation_cage_nT_per_year")
    try:
        date = dt.date.fromisoformat(str(field.get("date")))
        rates = [float(sv[a]) for a in AXES]
    except (TypeError, ValueError, KeyError):
        return ""
    until = valid_until(date, rates, threshold_nT)
    days = days_until_drift(rates, threshold_nT)
    if until is None:
        text = f"The setpoints stay valid: the model's secular variation does not move the null by {threshold_nT:g} nT."
    else:
        text = (f"Valid until {until.isoformat()}: the model's secular variation moves the null by "
                f"{threshold_nT:g} nT in about {days:.0f} days; make new setpoints by then (cage setpoints).")
    return f'<p class="valid-until"><strong>{_esc(text)}</strong></p>'


def build_section(build: Mapping, figures: Mapping[str, bytes]) -> str:
    """The build sheet (``cage build --json`` document) with the per-axis connection figures."""
    axes = build.get("axes") if isinstance(build.get("axes"), Mapping) else {}
    parts = []
    for a in AXES:
        b = axes.get(a)
        if not isinstance(b, Mapping):
            continue
        coils = [c for c in b.get("coils") or [] if isinstance(c, Mapping)]
        kind = coils[0].get("size_kind", "size") if coils else "size"
        parts.append(f"<h3>Axis {_esc(a)}: {len(coils)} {_esc(b.get('shape', ''))} coils of {_esc(b.get('wire', ''))}"
                     "</h3>")
        rows = []
        for c in coils:
            layers = f"{c.get('layers')} × {c.get('turns_per_layer')}"
            rows.append([_esc(c.get("label")), _fmt(c.get("position_m"), 3, "m"),
                         _fmt(c.get("frame_inner_size_m"), 3, "m") + " – " + _fmt(c.get("frame_outer_size_m"), 3, "m"),
                         _fmt(c.get("winding_inner_size_m"), 3, "m") + " – "
                         + _fmt(c.get("winding_outer_size_m"), 3, "m"),
                         _fmt(c.get("turns"), 0), _esc(layers), _fmt(c.get("wire_length_m"), 1, "m"),
                         _fmt(c.get("copper_mass_kg"), 2, "kg"), _fmt(c.get("resistance_20C_ohm"), 3, "Ω")])
        parts.append(_table(("coil", "plane from centre", f"frame {kind}, inner – outer",
                             f"winding {kind}, inner – outer", "turns", "layers × per layer", "wire with link",
                             "copper", "resistance at 20 °C"), rows, numeric_from=1))
        spools = "; ".join(f"{_fmt(s.get('spool_mass_kg'), 0, 'kg')}: {_esc(s.get('spools_needed'))}"
                           for s in b.get("spools") or [] if isinstance(s, Mapping))
        p = b.get("protection") if isinstance(b.get("protection"), Mapping) else {}
        conn = b.get("connection") if isinstance(b.get("connection"), Mapping) else {}
        ins = b.get("insulation") if isinstance(b.get("insulation"), Mapping) else {}
        frame = b.get("frame") if isinstance(b.get("frame"), Mapping) else {}
        items = [
            ("wire", f"coils and links {_fmt(b.get('winding_wire_m'), 1, 'm')} + leads "
                     f"{_fmt(b.get('lead_length_m'), 1, 'm')} = {_fmt(b.get('total_wire_m'), 1, 'm')}; order "
                     f"{_fmt(b.get('order_wire_m'), 0, 'm')}; copper {_fmt(b.get('copper_mass_kg'), 2, 'kg')}; "
                     f"spools needed by mass: {spools}"),
            ("winding sense", _esc(conn.get("sense", DASH))),
            ("wiring", "<br>".join(_esc(s) for s in conn.get("steps") or [])),
            ("check after winding", "<br>".join(_esc(s) for s in conn.get("check") or [])),
            ("protection", f"fuse or breaker {_fmt(p.get('fuse_A'), 2, 'A')}; stored energy at full range "
                           f"{_fmt(p.get('stored_energy_J'), 3, 'J')}; {_esc(p.get('suppressor', ''))}; supply: "
                           f"{_esc(p.get('voltage_class', ''))}"),
        ]
        if p.get("polarity_switch"):
            items.append(("polarity switch", "<br>".join(_esc(s) for s in p["polarity_switch"])))
        if ins.get("hot_spot_C") is not None:
            items.append(("insulation", f"hot spot about {_fmt(ins.get('hot_spot_C'), 0, '°C')}: IEC 60085 class "
                                        f"{_esc(ins.get('class_needed'))} needed; class F wire run at class B leaves "
                                        f"{_fmt(ins.get('margin_class_B_K'), 0, 'K')}"))
        items.append(("metal frame", f"a closed aluminium frame would be a shorted turn with a time constant of "
                                     f"{_fmt((_number(frame.get('time_constant_s')) or 0) * 1e3, 1, 'ms')}: "
                                     f"give every metal frame an insulating break"))
        parts.append("<dl>" + "".join(f"<dt>{_esc(t)}</dt><dd>{d}</dd>" for t, d in items) + "</dl>")
        png = figures.get(f"connection_{a}.png")
        if png:
            parts.append(figure_html(f"Connection of axis {a}: winding sense and series-aiding wiring", png))
    for w in build.get("warnings") or []:
        parts.append(f'<p class="note">{_esc(w)}</p>')
    return _section("build", "Build sheet", "\n".join(parts))
