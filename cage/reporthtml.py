"""Pieces of the HTML report: escaped text, numbers with their units, tables, sections, figures.

Pictures layer, below ``cage.report`` and ``cage.reportsections`` (both build on these).
Every text passes ``cage.escape.for_html``; a number that is missing or not finite shows a dash.
"""
from __future__ import annotations

import base64
import math
import numbers
from collections.abc import Mapping, Sequence

from cage.escape import for_html

AXES = ("x", "y", "z")
DASH = "\u2014"
NBSP = "\u00a0"


def _esc(value) -> str:
    return for_html(value)


def _number(value) -> float | None:
    """A finite float from an int or float (numpy scalars included), else None."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        return None
    v = float(value)
    return v if math.isfinite(v) else None


def _fmt(value, decimals: int, unit: str = "") -> str:
    """A number with ``decimals`` decimals and its unit, escaped; a dash when not a number."""
    v = _number(value)
    if v is None:
        return DASH if value is None else _esc(value)
    text = f"{v:.{decimals}f}"
    if text.startswith("-") and float(text) == 0.0:
        text = text[1:]
    return _esc(text + (NBSP + unit if unit else ""))


def _decimals_for(resolution) -> int:
    """Decimals needed to show steps of ``resolution`` (0.001 -> 3, 0.0005 -> 4, 0.01 -> 2)."""
    r = _number(resolution)
    if r is None or r <= 0:
        return 3
    for d in range(0, 10):
        if abs(round(r * 10 ** d) - r * 10 ** d) < 1e-6 * max(1.0, r * 10 ** d):
            return d
    return 9


def _auto(value) -> str:
    """A value of unknown kind (from a verbatim JSON object), escaped."""
    if value is None:
        return DASH
    if isinstance(value, bool):
        return "yes" if value else "no"
    v = _number(value)
    if v is not None:
        return _esc(f"{v:.6g}")
    if isinstance(value, Mapping):
        return "; ".join(f"{_esc(k)}: {_auto(x)}" for k, x in value.items())
    if isinstance(value, (list, tuple)):
        return ", ".join(_auto(x) for x in value)
    return _esc(value)


def _vector(values, decimals: int, unit: str) -> list[str]:
    """Three cells from a {x, y, z} mapping or a 3-list."""
    if isinstance(values, Mapping):
        items = [values.get(a) for a in AXES]
    elif isinstance(values, (list, tuple)) and len(values) == 3:
        items = list(values)
    else:
        items = [None, None, None]
    return [_fmt(v, decimals, unit) for v in items]


def _norm(values) -> float | None:
    if isinstance(values, Mapping):
        items = [values.get(a) for a in AXES]
    elif isinstance(values, (list, tuple)) and len(values) == 3:
        items = list(values)
    else:
        return None
    nums = [_number(v) for v in items]
    if any(n is None for n in nums):
        return None
    return math.hypot(*nums)  # no overflow for huge components


def _table(headers: Sequence[str], rows: Sequence[Sequence[str]], numeric_from: int = 1,
           row_classes: Sequence[str] | None = None, caption: str | None = None) -> str:
    """A table; headers are plain text (escaped here), cells are already-escaped HTML."""
    out = ["<table>"]
    if caption:
        out.append(f"<caption class=\"note\">{_esc(caption)}</caption>")
    out.append("<thead><tr>" + "".join(f"<th>{_esc(h)}</th>" for h in headers) + "</tr></thead>")
    out.append("<tbody>")
    for i, row in enumerate(rows):
        cls = row_classes[i] if row_classes else ""
        attr = f' class="{cls}"' if cls else ""
        cells = []
        for j, cell in enumerate(row):
            td_cls = "num" if j >= numeric_from else ""
            cells.append(f'<td class="{td_cls}">{cell}</td>' if td_cls else f"<td>{cell}</td>")
        out.append(f"<tr{attr}>" + "".join(cells) + "</tr>")
    out.append("</tbody></table>")
    return "\n".join(out)


def _kv_table(pairs: Sequence[tuple[str, str]]) -> str:
    return _table(("quantity", "value"), [(_esc(k), v) for k, v in pairs], numeric_from=2)


# ---------------------------------------------------------------------------------------------
# Sections
# ---------------------------------------------------------------------------------------------


def _section(anchor: str, title: str, body: str, major: bool = True, extra_class: str = "") -> str:
    classes = " ".join(c for c in ("major" if major else "", extra_class) if c)
    attr = f' class="{classes}"' if classes else ""
    return f'<section id="{anchor}"{attr}>\n<h2>{_esc(title)}</h2>\n{body}\n</section>'


def figure_html(title: str, data: bytes) -> str:
    """One embedded PNG figure with its caption."""
    b64 = base64.b64encode(bytes(data)).decode("ascii")
    return (f'<figure><img alt="{_esc(title)}" src="data:image/png;base64,{b64}">'
            f"<figcaption>{_esc(title)}</figcaption></figure>")
