"""`cage plan` and `cage report` end to end: every output is written, parses back, and the
report is one self-contained HTML file (checked with the standard library's html.parser)."""
from __future__ import annotations

import csv
import io
import json
from html.parser import HTMLParser

from conftest import SITES, assert_one_line_error, csv_body

OUTPUTS = ["field.json", "design.json", "setpoints.csv", "setpoints.json", "setpoints.scpi", "uniformity.png",
           "axis_lines.png", "cage_in_room.png", "setpoints.png", "report.html"]
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


class _Collector(HTMLParser):
    def __init__(self):
        super().__init__()
        self.images, self.links = [], []

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "img":
            self.images.append(attrs.get("src", ""))
        for key in ("href", "src"):
            if key in attrs:
                self.links.append(attrs[key])


def test_plan_writes_everything(tmp_path, run_cli):
    out = tmp_path / "plan"
    run = run_cli("plan", SITES / "equatorial-hall.toml", "--out", out)
    assert run.code == 0, run
    for name in OUTPUTS:
        assert (out / name).is_file(), name
    assert not list(out.glob(".*.tmp"))
    for name in ("uniformity.png", "axis_lines.png", "cage_in_room.png", "setpoints.png"):
        assert (out / name).read_bytes()[:8] == PNG_SIGNATURE
    field = json.loads((out / "field.json").read_text())
    assert field["model"] == "IGRF-14"
    design = json.loads((out / "design.json").read_text())
    assert design["format"] == "cage-design" and set(design["axes"]) == {"x", "y", "z"}
    rows = list(csv.DictReader(io.StringIO(csv_body((out / "setpoints.csv").read_text()))))
    # text cells starting with + or - carry a leading apostrophe (read as text, not a formula)
    assert [r["label"] for r in rows] == ["null", "'+x", "'-x", "'+y", "'-y", "'+z", "'-z"]
    parser = _Collector()
    parser.feed((out / "report.html").read_text())
    assert len(parser.images) == 4 + 3 and all(src.startswith("data:image/png;base64,") for src in parser.images)
    assert all(link.startswith(("data:", "#")) for link in parser.links)
    html = (out / "report.html").read_text().lower()
    assert "implant" in html and "electrical code" in html
    assert "id=\"build\"" in html and "valid until" in html  # the build sheet and the date to renew setpoints


def test_report_regenerates(tmp_path, run_cli):
    out = tmp_path / "plan"
    assert run_cli("plan", SITES / "smallsat-lab.toml", "--out", out).code == 0
    (out / "report.html").unlink()
    run = run_cli("report", out)
    assert run.code == 0, run
    assert (out / "report.html").is_file()


def test_report_of_empty_folder(tmp_path, run_cli):
    assert_one_line_error(run_cli("report", tmp_path), "design.json")


def test_plan_into_a_file_path(tmp_path, run_cli):
    target = tmp_path / "file.txt"
    target.write_text("x")
    assert_one_line_error(run_cli("plan", SITES / "smallsat-lab.toml", "--out", target), "not a folder")


def test_design_edited_to_nonsense_is_refused(tmp_path, run_cli):
    # A y pair shrunk to 1 cm cannot carry its 40 mm frame; an x pair grown into the y
    # pair's frames collides with them (the rule of the README: centreline distance at
    # least sqrt(w^2 + d^2) + gap).
    design_path = tmp_path / "design.json"
    assert run_cli("design", SITES / "smallsat-lab.toml", "--system", "pair", "--out", design_path).code == 0
    doc = json.loads(design_path.read_text())
    for edit, fragment in ((("y", "side_m", 0.01), "smaller than its"),
                           (("x", "side_m", doc["axes"]["y"]["side_m"]), "collide"),
                           (("z", "side_m", 0.2), "test volume")):
        bad = json.loads(design_path.read_text())
        axis, key, value = edit
        bad["axes"][axis][key] = value
        if axis == "z":
            bad["axes"]["z"]["spacing_m"] = 0.1  # a 0.2 m coil pair inside the 0.25 m test cube
        path = tmp_path / f"bad-{axis}-{key}.json"
        path.write_text(json.dumps(bad))
        out = tmp_path / "t.csv"
        assert_one_line_error(run_cli("setpoints", path, SITES / "smallsat-lab.toml", "--out", out),
                              str(path), fragment)
        assert not out.exists()
