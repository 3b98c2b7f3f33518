"""Provenance: where and when an output file was made, from what, and the warnings that applied.

Every output file (field summary, design, setpoints in CSV/JSON/SCPI, calibration, sequence,
report) carries one :class:`Provenance` record: the site (name, geodetic position), the model
date, the cage's true azimuth (and how it was fixed), the field model and the library that
evaluated it, this tool's version, what the file was derived from (the design's content hash,
the site file, a calibration, a survey) and the warnings in force when it was written.

JSON files hold it as a ``"provenance"`` object (:meth:`Provenance.as_dict`); CSV and SCPI
files as ``#`` comment lines at the top (:func:`header_lines`, the one place that writes them).

The design's identity is :func:`design_id`: a SHA-256 over the canonical JSON of the design's
axes (shape, size, spacing, turns, wire, frame): the built cage, not its notes or the site it
was planned for, so a re-saved or annotated design keeps its identity.
"""
from __future__ import annotations

import functools
import hashlib
import json
from dataclasses import dataclass, field

from cage.errors import InputError
from cage.numberformat import latitude_text, longitude_text

#: Version of the provenance object inside the files.
PROVENANCE_VERSION = 1


@functools.lru_cache(maxsize=1)
def model_library() -> str:
    """The library that evaluates the field model, with its version (e.g. ``ppigrf 2.1.0``)."""
    from importlib import metadata

    try:
        return f"ppigrf {metadata.version('ppigrf')}"
    except metadata.PackageNotFoundError:  # pragma: no cover - ppigrf is a runtime dependency
        return "ppigrf (version unknown)"


def tool_version() -> str:
    from cage import __version__

    return f"cage {__version__}"


def content_hash(obj) -> str:
    """``sha256:`` + the first 16 hex digits of SHA-256 over the canonical JSON of ``obj``."""
    text = json.dumps(obj, sort_keys=True, separators=(",", ":"), allow_nan=False)
    return "sha256:" + hashlib.sha256(text.encode("utf-8")).hexdigest()[:16]


def file_identity(name: str, data: bytes) -> str:
    """A file as named and by content: ``name sha256:`` + the first 16 hex digits of SHA-256 over
    its bytes (e.g. the series a sequence replays), so a file changed under the same name shows."""
    return f"{_one_line(name)} sha256:{hashlib.sha256(data).hexdigest()[:16]}"


def with_derived(prov: Provenance, **entries) -> Provenance:
    """The record with more ``derived_from`` entries (empty ones left out)."""
    return _replace(prov, derived_from={**prov.derived_from, **{k: v for k, v in entries.items() if v}})


def design_id(design) -> str:
    """The identity of a design: the content hash of its axes (the cage as built)."""
    from cage.design import design_to_dict

    return content_hash(design_to_dict(design)["axes"])


@dataclass(frozen=True)
class Provenance:
    """Where, when and from what an output was made.

    site_name: as given; latitude_deg, longitude_deg (geodetic WGS84), altitude_m.
    model_date: ISO date the field model was evaluated for. heading_true_deg: true azimuth of
    cage +x (clockwise from true north, degrees); heading_note: how it was fixed.
    model: field model name; model_library: library and version. tool: this program and
    version. derived_from: what the output came from, e.g. {"design": "sha256:...",
    "site_file": "lab.toml", "calibration": "cal.json", "survey_date": "2026-03-01"}.
    warnings: the warnings that applied, one line each.
    """

    site_name: str
    latitude_deg: float
    longitude_deg: float
    altitude_m: float
    model_date: str
    heading_true_deg: float | None
    heading_note: str = ""
    model: str = "IGRF-14"
    model_library: str = ""
    tool: str = ""
    derived_from: dict = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    def as_dict(self) -> dict:
        return {
            "version": PROVENANCE_VERSION,
            "site": {"name": self.site_name, "latitude_deg": self.latitude_deg,
                     "longitude_deg": self.longitude_deg, "altitude_m": self.altitude_m},
            "model_date": self.model_date,
            "heading_true_deg": self.heading_true_deg,
            "heading_note": self.heading_note,
            "model": self.model,
            "model_library": self.model_library,
            "tool": self.tool,
            "derived_from": dict(self.derived_from),
            "warnings": list(self.warnings),
        }

    def with_warnings(self, warnings) -> "Provenance":
        seen, out = set(), []
        for w in tuple(self.warnings) + tuple(warnings):
            if w and w not in seen:
                seen.add(w)
                out.append(w)
        return _replace(self, warnings=tuple(out))


def _replace(p: Provenance, **changes) -> Provenance:
    import dataclasses

    return dataclasses.replace(p, **changes)


def make_provenance(site, ambient, *, derived_from=None, warnings=(), heading_note: str = "") -> Provenance:
    """The record for an output made at ``site`` (a :class:`cage.sitefile.Site`) with ``ambient``."""
    loc = site.location
    return Provenance(
        site_name=str(site.name), latitude_deg=float(loc.latitude_deg), longitude_deg=float(loc.longitude_deg),
        altitude_m=float(loc.altitude_m), model_date=site.date.isoformat(),
        heading_true_deg=None if ambient is None else float(ambient.heading_true_deg),
        heading_note=heading_note or ("" if ambient is None else heading_text(ambient)),
        model=ambient.earth.model if ambient is not None else "IGRF-14",
        model_library=model_library(), tool=tool_version(),
        derived_from={k: v for k, v in (derived_from or {}).items() if v},
        warnings=tuple(w for w in warnings if w))


def heading_text(ambient) -> str:
    """How the cage's true azimuth was fixed, in words."""
    from cage.numberformat import azimuth_text

    true = azimuth_text(ambient.heading_true_deg)  # 0-360 clockwise from north, as everywhere shown
    if ambient.heading_reference == "magnetic":
        return (f"{true} deg true, fixed from {azimuth_text(ambient.heading_deg_given)} deg magnetic "
                f"with the declination of {ambient.earth.date.isoformat()} "
                f"({ambient.earth.declination_deg:+.2f} deg)")
    return f"{true} deg true"


def provenance_of(doc) -> dict | None:
    """The provenance object of a parsed JSON document, or None for files made before it existed."""
    if not isinstance(doc, dict):
        return None
    p = doc.get("provenance")
    return p if isinstance(p, dict) else None


def site_of(prov: dict) -> tuple[str, float, float, float] | None:
    """(name, lat, lon, alt) of a provenance object, or None when it is malformed."""
    s = prov.get("site") if isinstance(prov, dict) else None
    if not isinstance(s, dict):
        return None
    try:
        return (str(s.get("name", "")), float(s["latitude_deg"]), float(s["longitude_deg"]),
                float(s.get("altitude_m", 0.0)))
    except (KeyError, TypeError, ValueError):
        return None


def check_provenance_object(value, where: str) -> dict:
    """A provenance object read from a file: an object whose site position is numbers."""
    if not isinstance(value, dict):
        raise InputError(f"{where}: provenance must be an object")
    if "site" in value and site_of(value) is None:
        raise InputError(f"{where}: provenance.site must hold name, latitude_deg, longitude_deg, altitude_m")
    return value


def stamp_design(design, prov: Provenance):
    """The design with its provenance, and the note on how its true azimuth was fixed."""
    import dataclasses

    site = dict(design.site or {})
    if prov.heading_true_deg is not None:
        site["heading_true_deg"] = prov.heading_true_deg
        site["heading_note"] = prov.heading_note
    return dataclasses.replace(design, site=site or None, provenance=prov.as_dict())


# ----------------------------------------------------------------------------- header comments

def _one_line(text) -> str:
    """User text made safe for one comment line (the single switch point for escaping)."""
    from cage.escape import one_line

    return one_line(str(text))


def header_lines(prov: Provenance | dict, prefix: str = "# ") -> list[str]:
    """The provenance as comment lines for CSV and SCPI files; every user text on one line."""
    d = prov.as_dict() if isinstance(prov, Provenance) else dict(prov)
    s = d.get("site") or {}
    lines = [
        f"site: {_one_line(s.get('name', ''))} at {latitude_text(float(s.get('latitude_deg', 0.0)), 5)}, "
        f"{longitude_text(float(s.get('longitude_deg', 0.0)), 5)}, {float(s.get('altitude_m', 0.0)):.0f} m (WGS84)",
        f"model: {_one_line(d.get('model', ''))} for {_one_line(d.get('model_date', ''))} "
        f"({_one_line(d.get('model_library', ''))}); written by {_one_line(d.get('tool', ''))}",
    ]
    heading = d.get("heading_true_deg")
    if heading is not None:
        note = d.get("heading_note") or f"{float(heading):.2f} deg true"
        lines.append(f"cage +x azimuth: {_one_line(note)}")
    derived = d.get("derived_from") or {}
    if derived:
        lines.append("derived from: " + "; ".join(f"{_one_line(k)} {_one_line(v)}" for k, v in derived.items()))
    for w in d.get("warnings") or ():
        lines.append(f"warning: {_one_line(w)}" if not str(w).startswith("warning") else _one_line(w))
    return [prefix + line for line in lines]
