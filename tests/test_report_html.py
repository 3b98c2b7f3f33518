"""The HTML report (cage.report) checked with outside references:

- structure parsed with the standard library's html.parser; elements without end tags are the
  void elements of the WHATWG HTML Living Standard (sec. 13.1.2);
- embedded images are data URLs (RFC 2397) in base64 (RFC 4648, decoded by the standard
  library) holding PNG data, recognised by the PNG signature (RFC 2083 / ISO/IEC 15948);
- escaping compared with html.escape (standard library).
"""
from __future__ import annotations

import base64
import html
import subprocess
import sys
from html.parser import HTMLParser

import pytest

from cage.errors import InputError
from cage.report import build_report

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
# WHATWG HTML, sec. 13.1.2 "Elements": void elements have no end tag.
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source",
        "track", "wbr"}
HOSTILE = '<script>alert("x")</script>'


class Collector(HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack, self.tags, self.errors, self.attrs, self.text = [], [], [], [], []
        self.decl = []
        self.headings = []

    def handle_decl(self, decl):
        self.decl.append(decl)

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs.append((tag, dict(attrs)))
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs.append((tag, dict(attrs)))

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unexpected </{tag}> with open {self.stack[-3:]}")
        else:
            self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)
        if self.stack and self.stack[-1] == "h2":
            self.headings.append(data.strip())


def parse(doc: str) -> Collector:
    c = Collector()
    c.feed(doc)
    c.close()
    return c


def fake_png(tag: bytes) -> bytes:
    # A PNG signature followed by arbitrary bytes: build_report only embeds, never decodes.
    return PNG_SIGNATURE + b"\x00\x00\x00\x0dIHDR" + tag


FIELD = {
    "model": "IGRF-14", "date": "2026-12-01", "lat_deg": 52.1, "lon_deg": -0.5, "alt_m": 60.0,
    "north_nT": 19012.34, "east_nT": -123.46, "down_nT": 44987.61, "horizontal_nT": 19012.74,
    "total_nT": 48840.25, "declination_deg": -0.372, "inclination_deg": 67.094,
    "heading_deg": 15.0, "cage_frame_nT": {"x": 18330.21, "y": -5040.33, "z": 44987.61},
    "measured_cage_frame_nT": {"x": 18100.0, "y": -5300.0, "z": 45200.0},
}


def design_doc():
    axes = {}
    for a, side in zip("xyz", (2.0, 1.9, 1.8)):
        axes[a] = {"shape": "square", "side_m": side, "spacing_m": 0.5445 * side, "turns": 40,
                   "wire": "AWG 14", "resistance_20C_ohm": 2.1, "resistance_hot_ohm": 2.4,
                   "inductance_H": 0.021, "time_constant_s": 0.00875, "copper_mass_kg": 6.3,
                   "field_per_amp_nT": 21000.5, "max_current_A": 4.2,
                   "winding_temperature_C": 41.3, "current_density_A_per_mm2": 2.02}
    return {"format": "cage-design", "version": 1, "axes": axes, "envelope_m": [1.94, 2.04, 2.04],
            "requirement": {"test_volume_m": [0.3, 0.3, 0.3], "uniformity": 0.001}}


def setpoints_doc(site="bench lab"):
    lim = {a: {"max_current_A": 5.0, "max_voltage_V": 30.0, "bipolar": True} for a in "xyz"}
    lim["z"]["resolution_A"] = 0.0005
    rows = []
    for label, cur, ok in (("null", (0.9, -0.05, -2.4), True), ("strong z", (0.9, -0.05, 5.6), False)):
        c = dict(zip("xyz", cur))
        rows.append({"label": label, "target_cage_nT": [0.0, 0.0, 0.0], "current_A": c,
                     "setpoint_A": c, "voltage_V": {a: 3.1 * v for a, v in c.items()},
                     "power_W": {a: 3.1 * v * v for a, v in c.items()},
                     "total_power_W": sum(3.1 * v * v for v in cur), "within_limits": ok})
    return {"format": "cage-setpoints", "version": 1, "site": site, "date": "2026-12-01",
            "source": "IGRF-14", "ambient_cage_nT": [18330.2, -5040.3, 44987.6],
            "supply_limits": lim, "rows": rows}


@pytest.fixture(scope="module")
def full():
    figures = {"Uniformity maps": fake_png(b"one"), "Axis lines": fake_png(b"two"),
               "Cage in the room": fake_png(b"three")}
    doc = build_report(field=FIELD, design=design_doc(), setpoints=setpoints_doc(), figures=figures,
                       notes=["planned for the December campaign"])
    return doc, figures


def test_structure_is_balanced(full):
    doc, _ = full
    c = parse(doc)
    assert c.decl and c.decl[0].lower() == "doctype html"
    assert c.errors == [] and c.stack == []
    for tag in ("html", "head", "body", "title", "style"):
        assert c.tags.count(tag) == 1, tag
    assert c.tags.index("head") < c.tags.index("body")
    charset = [a for t, a in c.attrs if t == "meta" and "charset" in a]
    assert charset and charset[0]["charset"].lower() == "utf-8"


def test_every_figure_embedded_as_png_data_url(full):
    doc, figures = full
    c = parse(doc)
    srcs = [a["src"] for t, a in c.attrs if t == "img"]
    prefix = "data:image/png;base64,"
    assert len(srcs) == len(figures) and all(s.startswith(prefix) for s in srcs)
    decoded = [base64.b64decode(s[len(prefix):], validate=True) for s in srcs]
    assert all(d.startswith(PNG_SIGNATURE) for d in decoded)
    assert decoded == list(figures.values())  # in the order given
    captions = [a.get("alt") for t, a in c.attrs if t == "img"]
    assert captions == list(figures)


def test_no_outside_references(full):
    doc, _ = full
    c = parse(doc)
    assert "link" not in c.tags and "script" not in c.tags and "iframe" not in c.tags
    for tag, attrs in c.attrs:
        for key in ("src", "href"):
            if key in attrs:
                assert attrs[key].startswith(("data:", "#")), (tag, attrs[key][:40])
    assert "://" not in doc and "@import" not in doc and "url(" not in doc


def test_sections_and_cautions(full):
    doc, _ = full
    c = parse(doc)
    text = " ".join(c.text)
    assert c.headings == ["Cautions", "Site and field", "Design", "Electrical and thermal budget",
                          "Setpoints", "Figures", "Notes", "Assumptions and what the model leaves out"]
    # Cautions: heating, supply voltages and inductive kick, implanted devices and tools, codes.
    for phrase in ("hot", "inductance", "voltage spike", "pacemakers", "implanted medical devices",
                   "Magnetised tools", "local electrical codes", "licensed practice"):
        assert phrase in text, phrase
    # Assumptions: filament model, IGRF-14 limits, building fields, daily variation, storms, survey.
    for phrase in ("filaments", "IGRF", "several microtesla", "tens of nT over a day",
                   "magnetic storms", "magnetometer"):
        assert phrase in text, phrase
    assert "@media print" in doc and "break-before: page" in doc


def test_numbers_carry_units_and_are_rounded(full):
    doc, _ = full
    text = html.unescape(doc).replace("\u00a0", " ")
    assert "19012.3 nT" in text and "-123.5 nT" in text          # nT to 0.1
    assert "18330.2 nT" in text and "18100.0 nT" in text         # model and measured, cage frame
    assert "0.900 A" in text and "-0.050 A" in text              # A to 3 decimals (x, y)
    assert "5.6000 A" in text and "-2.4000 A" in text            # z supply resolution 0.0005 A
    assert "2.79 V" in text and "30.00 V" in text                # V to 0.01
    assert "17.9 W" in text                                      # W to 0.1: 3.1 x 2.4^2 = 17.856
    # Derived budget: 4.2 A x 2.4 ohm = 10.08 V; 4.2^2 x 2.4 = 42.336 W; three axes 127.0 W.
    assert "10.08 V" in text and "42.3 W" in text and "127.0 W" in text
    assert "21.00 mH" in text and "8.8 ms" in text and "18.90 kg" in text


def test_rows_outside_limits_are_flagged(full):
    doc, _ = full
    c = parse(doc)
    outside = [a for t, a in c.attrs if t == "tr" and "outside" in a.get("class", "")]
    assert len(outside) == 3  # one row of three axes
    assert "NO: outside limits" in doc and "1 row(s) outside the supply limits" in doc


def test_hostile_text_is_escaped():
    doc = build_report(field=dict(FIELD, site=HOSTILE), design=None,
                       setpoints=setpoints_doc(site=HOSTILE), figures={HOSTILE: fake_png(b"x")},
                       notes=[HOSTILE], title=HOSTILE)
    c = parse(doc)
    assert "script" not in c.tags
    assert HOSTILE not in doc
    assert html.escape(HOSTILE) in doc
    assert c.errors == [] and c.stack == []
    # The parsed text gives the site name back as written.
    assert HOSTILE in "".join(c.text)


def test_missing_sections_are_left_out():
    doc = build_report(field=FIELD, design=None, setpoints=None, figures={})
    c = parse(doc)
    assert c.headings == ["Cautions", "Site and field", "Assumptions and what the model leaves out"]
    assert "img" not in c.tags
    assert c.errors == [] and c.stack == []
    bare = parse(build_report(field=None, design=None, setpoints=None, figures={}))
    assert bare.headings == ["Cautions", "Assumptions and what the model leaves out"]
    only_design = parse(build_report(design=design_doc()))
    assert only_design.headings[1:3] == ["Design", "Electrical and thermal budget"]


def test_bad_input_is_a_user_error():
    with pytest.raises(InputError, match="not PNG"):
        build_report(field=None, design=None, setpoints=None, figures={"f": b"GIF89a...."})
    with pytest.raises(InputError, match="design"):
        build_report(field=None, design=[1, 2], setpoints=None, figures={})


def test_report_module_imports_without_matplotlib():
    code = ("import sys; import cage.report; "
            "assert not any(m.startswith('matplotlib') for m in sys.modules), 'matplotlib imported'")
    subprocess.run([sys.executable, "-c", code], check=True)
