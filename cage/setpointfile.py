"""Writers (and one reader) for current tables: CSV, JSON and a SCPI script.

CSV: provenance as ``#`` comment lines (cage.provenance), then one row per table row, units in every column name, rounded for people (nT to 0.1,
currents to the supply's resolution, V to 0.001, W to 0.01); empty cells for numbers that do
not exist (an unreachable axis); text cells written so that spreadsheets read them as text
(:func:`cage.escape.csv_text_cell`). JSON (``cage-setpoints``, version 1) keeps full
precision, ``null`` for numbers that do not exist. SCPI: plain text, one block per row,
standard SCPI commands for a power-supply channel (``INST:NSEL``, ``VOLT``, ``CURR``,
``OUTP``) and the IEEE 488.2 ``*WAI``; x, y and z are channels 1, 2 and 3. Rows outside a
supply's limits are written commented out, with the reason, never clipped to the limit.

Every SCPI script is checked before it is returned (:func:`check_scpi`): each line that is
not a comment is one of the command forms written here, with numbers inside the supply
limits; otherwise nothing is written and the command exits 1 with one line.
"""
from __future__ import annotations

import json
import math
import re

import numpy as np

from cage.coils import AXES
from cage.errors import CageError, InputError
from cage.escape import csv_text_cell, one_line
from cage.setpoints import SetpointTable, table_to_dict

CHANNELS = {"x": 1, "y": 2, "z": 3}
SCPI_COMMANDS = ("INST:NSEL", "VOLT", "CURR", "OUTP", "*WAI")
VOLTAGE_DECIMALS = 3


def _decimals(resolution_A: float) -> int:
    """Decimals that show a multiple of the resolution exactly (1 mA -> 3, 0.5 mA -> 4)."""
    for d in range(0, 10):
        if abs(round(resolution_A, d) - resolution_A) < 1e-12:
            return d
    return 9


def _csv_cell(text) -> str:
    s = csv_text_cell(text)
    if any(c in s for c in ',"') or s != s.strip():
        return '"' + s.replace('"', '""') + '"'
    return s


def csv_header() -> list[str]:
    cols = ["label", "t_s", "dwell_s", "target_x_nT", "target_y_nT", "target_z_nT"]
    for a in AXES:
        cols += [f"current_{a}_A", f"setpoint_{a}_A", f"supply_setpoint_{a}_A", f"polarity_{a}",
                 f"rounding_error_{a}_nT", f"voltage_{a}_V", f"power_{a}_W",
                 f"current_headroom_{a}_A", f"voltage_headroom_{a}_V", f"winding_temperature_{a}_C"]
    return cols + ["total_power_W", "field_error_nT", "within_limits", "problems"]


def _provenance_comments(table: SetpointTable) -> str:
    """The table's provenance as ``#`` comment lines (cage.provenance), or ''."""
    from cage.provenance import header_lines

    prov = table.provenance_record()
    return "" if prov is None else "\n".join(header_lines(prov)) + "\n"


def _csv_cells(texts) -> list[str]:
    """CSV cells of user texts; one pass over the joined column when nothing needs escaping."""
    texts = list(texts)
    joined = "\x1f".join(texts)
    if (not _NEEDS_CSV_CARE.search(joined.replace("\x1f", "")) and '"' not in joined and "," not in joined
            and not any(t[:1] in "=+-@ " or t[-1:] == " " for t in texts)):
        return texts
    return [_csv_cell(t) for t in texts]


_NEEDS_CSV_CARE = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069"
                             "\ud800-\udfff]")


def table_to_csv(table: SetpointTable) -> str:
    """The CSV text; number columns formatted a whole column at a time (cage.columnformat)."""
    from cage.columnformat import join_columns, number_column, text_column

    m = len(table)
    none = np.full(m, np.nan)
    cols = [number_column(none if table.t_s is None else table.t_s, 6),
            number_column(none if table.dwell_s is None else table.dwell_s, 6)]
    cols += [number_column(table.target_cage_nT[:, c], 1) for c in range(3)]
    polarity = table.polarity_words()
    supply_sp = table.supply_setpoint_A
    for j, s in enumerate(table.supplies):
        d = _decimals(s.resolution_A)
        cols += [number_column(table.current_A[:, j], d + 1), number_column(table.setpoint_A[:, j], d),
                 number_column(supply_sp[:, j], d), text_column(polarity[:, j].tolist()),
                 number_column(table.rounding_error_nT[:, j], 1), number_column(table.voltage_V[:, j], 3),
                 number_column(table.power_W[:, j], 2), number_column(table.current_headroom_A[:, j], d),
                 number_column(table.voltage_headroom_V[:, j], 3),
                 number_column(table.winding_temperature_C[:, j], 1)]
    cols += [number_column(table.total_power_W, 2), number_column(table.field_error_nT, 1),
             text_column(np.where(table.within_limits, "yes", "no").tolist())]
    middle = join_columns(cols) if m else []
    problems = [""] * m
    for r in table.problems:
        problems[r] = _csv_cell("; ".join(table.row_problems(r)))
    labels = _csv_cells(table.labels)
    body = "".join(f"{lab},{mid},{prob}\n" for lab, mid, prob in zip(labels, middle, problems))
    return _provenance_comments(table) + ",".join(csv_text_cell(h) for h in csv_header()) + "\n" + body


def table_to_json(table: SetpointTable) -> str:
    """The JSON document, indented, with one row per line (json's fast encoder per row)."""
    doc = table_to_dict(table)
    head = json.dumps({k: v for k, v in doc.items() if k != "rows"}, indent=2, allow_nan=False)
    rows = ",\n".join("    " + json.dumps(r, allow_nan=False) for r in doc["rows"])
    return head[:-2] + ',\n  "rows": [\n' + rows + ("\n" if rows else "") + "  ]\n}\n"


def _voltage_limit(voltage, supply) -> float:
    """The VOLT setting: 1.2 |V| + 1 V, at most the supply's maximum, rounded DOWN to the
    written decimals so that the written number is never above ``max_voltage_V``."""
    limit = supply.max_voltage_V if not math.isfinite(voltage) else min(supply.max_voltage_V, 1.2 * abs(voltage) + 1.0)
    scale = 10 ** VOLTAGE_DECIMALS
    down = math.floor(limit * scale) / scale
    while down > supply.max_voltage_V:  # binary noise of limit * scale
        down -= 1.0 / scale
    return max(down, 0.0)


def _limits_comment(axis: str, supply) -> str:
    kind = "bipolar" if supply.bipolar else "unipolar"
    return (f"# channel {CHANNELS[axis]} ({axis}): max {supply.max_voltage_V!r} V, {supply.max_current_A!r} A, "
            f"{kind}")


def table_to_scpi(table: SetpointTable) -> str:
    """The SCPI script; checked with :func:`check_scpi` before it is returned.

    Unipolar axes: the script starts with every polarity switch at FORWARD and all outputs
    off. Before a row that needs the other polarity on an axis, that channel is brought to
    ``CURR 0`` and ``OUTP OFF``, a comment says which switch to set and to what, and only then
    is the current set; the script ends with every channel at zero, off, and the switches
    back at FORWARD. Rows outside limits are commented out and change nothing.
    """
    unipolar = [not s.bipolar for s in table.supplies]
    lines = [
        f"# cage current table for {one_line(table.site)} ({one_line(table.source)} field, {table.date})",
        "# Channels: x = 1, y = 2, z = 3. Each block sets the voltage limit, then the current, then output on.",
        "# Rows outside limits are commented out. Lines starting with # are comments: never send them.",
    ]
    lines += _provenance_comments(table).splitlines()
    lines += [_limits_comment(ax, s) for ax, s in zip(AXES, table.supplies)]
    if any(unipolar):
        names = ", ".join(f"{ax} (channel {CHANNELS[ax]})" for ax, u in zip(AXES, unipolar) if u)
        lines.append(f"# Unipolar channels {names}: set their polarity switches to FORWARD before the first line;")
        lines.append("# a switch is operated only where a comment says so, after that channel's CURR 0 and OUTP OFF.")
    if table.dwell_s is not None:
        lines.append("# Sequence: after each row, '# wait T s' is the hold time; the sender pauses T seconds. "
                     "*WAI (IEEE 488.2) lets the supply finish the row first.")
    lines += [f"INST:NSEL {CHANNELS[ax]}\nOUTP OFF\nCURR 0" for ax in AXES]
    reverse_now = [False, False, False]
    within = table.within_limits
    polarity = table.polarity_reverse
    supply_sp = table.supply_setpoint_A
    decimals = [_decimals(s.resolution_A) for s in table.supplies]
    for r in range(len(table)):
        target = ", ".join(f"{a} {v:.1f} nT" for a, v in zip(AXES, table.target_cage_nT[r]))
        when = "" if table.t_s is None else f" at t = {table.t_s[r]:.3f} s"
        lines.append("")
        needs = ""
        if any(unipolar):
            needs = "; polarity " + ", ".join(f"{ax} {'REVERSE' if polarity[r, j] else 'forward'}"
                                              for j, ax in enumerate(AXES) if unipolar[j])
        lines.append(f"# row {one_line(table.labels[r])}{when}: target {target} (cage frame){needs}")
        prefix = ""
        if not within[r]:
            lines.append(f"# OUTSIDE LIMITS, not sent: {one_line('; '.join(table.row_problems(r)))}")
            prefix = "# "
        for j, (axis, s) in enumerate(zip(AXES, table.supplies)):
            ch = CHANNELS[axis]
            current = supply_sp[r, j]
            lines.append(f"{prefix}INST:NSEL {ch}")
            # a row that is not sent changes nothing, so it never asks for a switch
            if not prefix and unipolar[j] and current != 0.0 and polarity[r, j] != reverse_now[j]:
                want = "REVERSE" if polarity[r, j] else "FORWARD"
                lines.append("CURR 0")
                lines.append("OUTP OFF")
                lines.append(f"# {axis}: output is off at zero current: set the channel {ch} polarity switch to "
                             f"{want} now")
                reverse_now[j] = bool(polarity[r, j])
            lines.append(f"{prefix}VOLT {_voltage_limit(float(table.voltage_V[r, j]), s):.{VOLTAGE_DECIMALS}f}")
            lines.append(f"{prefix}CURR {current:.{decimals[j]}f}")
            lines.append(f"{prefix}OUTP ON")
        if table.dwell_s is not None:
            lines.append(f"# wait {table.dwell_s[r]:.3f} s")
            lines.append("*WAI")
    lines.append("")
    lines.append("# end: every channel to zero and off")
    for j, axis in enumerate(AXES):
        lines += [f"INST:NSEL {CHANNELS[axis]}", "CURR 0", "OUTP OFF"]
        if unipolar[j] and reverse_now[j]:
            lines.append(f"# {axis}: output is off at zero current: set the channel {CHANNELS[axis]} polarity "
                         "switch back to FORWARD now")
    text = "\n".join(lines) + "\n"
    check_scpi(text, table.supplies)
    return text


class ScpiCheckError(CageError):
    """A SCPI script failed the self-check (exit 1): nothing is written."""


_NUMBER = r"([0-9]+(?:\.[0-9]+)?)"
_FORMS = (
    ("INST:NSEL", re.compile(r"INST:NSEL ([123])")),
    ("VOLT", re.compile(r"VOLT " + _NUMBER)),
    ("CURR", re.compile(r"CURR (-?[0-9]+(?:\.[0-9]+)?)")),
    ("OUTP", re.compile(r"OUTP (ON|OFF)")),
    ("*WAI", re.compile(r"\*WAI")),
)
_LIMITS_LINE = re.compile(r"# channel ([123]) \([xyz]\): max (\S+) V, (\S+) A, (bipolar|unipolar)")


def _limits_from_header(text: str) -> dict:
    out = {}
    for line in text.splitlines():
        m = _LIMITS_LINE.fullmatch(line)
        if m:
            out[int(m.group(1))] = (float(m.group(2)), float(m.group(3)), m.group(4) == "bipolar")
    return out


def check_scpi(text: str, supplies=None) -> None:
    """Raise :class:`ScpiCheckError` unless every non-comment line of ``text`` is a command
    form the writer emits, with numbers inside the limits of the selected channel.

    supplies: the three channels' :class:`cage.supplies.Supply` (x, y, z); None reads the
    limits from the script's ``# channel`` header lines (how tests check a written file).
    A ``VOLT``/``CURR`` before any ``INST:NSEL``, a negative current on a unipolar channel, or
    a carriage return, form feed or other control character anywhere also fail.
    """
    if supplies is not None:
        limits = {CHANNELS[ax]: (s.max_voltage_V, s.max_current_A, s.bipolar) for ax, s in zip(AXES, supplies)}
    else:
        limits = _limits_from_header(text)
        if set(limits) != {1, 2, 3}:
            raise ScpiCheckError("SCPI self-check: the script does not state the limits of channels 1, 2 and 3")
    bad_char = re.search(r"[\x00-\x09\x0b-\x1f\x7f-\x9f\u2028\u2029]", text)
    if bad_char:
        line_no = text.count("\n", 0, bad_char.start()) + 1
        raise ScpiCheckError(f"SCPI self-check: line {line_no} holds control character "
                             f"{one_line(bad_char.group())}; script not written")
    channel = None
    passed = set()  # (channel, line) already found good: long scripts repeat their lines
    for n, line in enumerate(text.split("\n"), start=1):
        if line == "" or line.startswith("#"):
            continue
        if (channel, line) in passed:
            continue
        for name, form in _FORMS:
            m = form.fullmatch(line)
            if m:
                break
        else:
            raise ScpiCheckError(f"SCPI self-check: line {n} {one_line(line)[:60]!r} is not a command the writer "
                                 "emits; script not written")
        if name == "INST:NSEL":
            channel = int(m.group(1))
            continue
        passed.add((channel, line))
        if name in ("VOLT", "CURR"):
            if channel is None:
                raise ScpiCheckError(f"SCPI self-check: line {n} sets {name} before any channel is selected")
            vmax, imax, bipolar = limits[channel]
            value = float(m.group(1))
            if name == "VOLT" and not 0.0 <= value <= vmax:
                raise ScpiCheckError(f"SCPI self-check: line {n} VOLT {value:g} is outside 0..{vmax:g} V of "
                                     f"channel {channel}; script not written")
            if name == "CURR" and (abs(value) > imax or (value < 0 and not bipolar)):
                span = f"-{imax:g}..{imax:g}" if bipolar else f"0..{imax:g}"
                raise ScpiCheckError(f"SCPI self-check: line {n} CURR {value:g} is outside {span} A of "
                                     f"channel {channel}; script not written")


FORMATS = {"csv": table_to_csv, "json": table_to_json, "scpi": table_to_scpi}


def render(table: SetpointTable, fmt: str) -> str:
    if fmt not in FORMATS:
        raise InputError(f"--format must be one of {', '.join(FORMATS)}, got {fmt!r}")
    return FORMATS[fmt](table)


def load_table_json(path) -> dict:
    """An earlier setpoints JSON document (for --previous), checked for its format, its null row
    and finite currents (null only for an axis a row could not reach, never in the null row)."""
    from cage.textfile import read_json_object

    doc = read_json_object(path, "setpoints file")
    if doc.get("format") != "cage-setpoints":
        raise InputError(f"{path}: not a cage-setpoints JSON file (write one with --format json)")
    if not isinstance(doc.get("rows"), list):
        raise InputError(f"{path}: rows must be a list")
    for k, row in enumerate(doc["rows"]):
        currents = row.get("current_A") if isinstance(row, dict) else None
        if not isinstance(currents, dict):
            continue
        label = row.get("label")
        where = f"{path}: row {k + 1}" + (f" ({one_line(label)[:40]})" if isinstance(label, str) else "")
        for a in AXES:
            v = currents.get(a)
            if v is None and label != "null":
                continue  # an axis the table could not reach
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                raise InputError(f"{where}: current_A {a} must be a finite number (A), got {json.dumps(v)[:40]}")
    if not any(isinstance(r, dict) and r.get("label") == "null" and isinstance(r.get("current_A"), dict)
               for r in doc["rows"]):
        raise InputError(f"{path}: no null row with current_A for x, y, z to compare with")
    return doc
