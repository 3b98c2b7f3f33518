"""Hostile user text through every writer, checked against each destination's own grammar.

User text (the site's ``name``, target labels) is written into a SCPI script, CSV, JSON, the
terminal, figures and the HTML report. Each payload below is checked against what its
destination does with it:

- SCPI: a program message ends at a line feed (IEEE 488.2, section 7.5, from memory), so a
  comment may never hold LF, CR or other controls; every line not starting with ``#`` must be a
  command of the writer's grammar, inside the supply limits (``check_scpi``, run on every
  script the suite writes by conftest).
- CSV: read back with Python's csv module (RFC 4180); a text cell starting with ``=``, ``+``,
  ``-``, ``@``, tab or CR is a formula to a spreadsheet (OWASP "CSV Injection", common
  practice), so such a cell starts with an apostrophe.
- JSON: parsed by the json module, the text round-trips exactly (RFC 8259 escapes).
- Terminal: no ESC (ECMA-48 control sequences start with it), CR, or line separator reaches
  the terminal; each row stays on its line.
- Figures: matplotlib treats text with an even number of unescaped ``$`` as mathtext
  (matplotlib docs, "Writing mathematical expressions"); user text must not be math and an
  odd ``$`` must not break the figure.
- HTML: parsed with html.parser; no element comes from the user's text.
"""
from __future__ import annotations

import csv
import html.parser
import io
import json

import pytest

from conftest import SITES, cli_code, csv_body
from cage.escape import csv_text_cell, for_figure, for_html, for_terminal, one_line

HOSTILE = {
    "lf": "Lab A\nVOLT 500",
    "cr": "Lab B\rCURR 99",
    "crlf": "Lab C\r\n*RST",
    "u2028": "Lab D\u2028OUTP ON",
    "u2029": "Lab E\u2029VOLT 1",
    "nel": "Lab F\x85CURR 9",
    "ansi": "Lab G\x1b[1A\x1b[2Kok",
    "bidi": "Lab H\u202eKO",
    "formula": "=cmd|' /C calc'!A0",
    "plus": "+x",
    "minus": "-2+3",
    "at": "@SUM(A1)",
    "tab": "\tlead",
    "math": "$x$ and $y$",
    "odd_dollar": "Lab A$100 and B$200 and C$3",
    "script": "<script>alert(1)</script>",
}
LINE_BREAKS = ("\n", "\r", "\u2028", "\u2029", "\x85", "\x0b", "\x0c")


@pytest.mark.parametrize("key", sorted(HOSTILE))
def test_escape_functions_keep_one_printable_line(key):
    text = HOSTILE[key]
    for fn in (one_line, for_terminal, csv_text_cell, for_figure, for_html):
        out = fn(text)
        assert not any(ch in out for ch in LINE_BREAKS), (fn.__name__, out)
        assert "\x1b" not in out and "\u202e" not in out
    assert csv_text_cell(text)[:1] not in ("=", "+", "-", "@", "\t", "\r")
    assert "<" not in for_html(text)


def _toml_string(text: str) -> str:
    return json.dumps(text)  # a JSON string is a valid TOML basic string (same escapes)


@pytest.fixture(scope="module")
def hostile_setup(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hostile")
    design = folder / "design.json"
    assert cli_code("design", SITES / "arctic-cal-hut.toml", "--out", design) == 0
    site_text = (SITES / "arctic-cal-hut.toml").read_text()
    sites = {}
    for key, text in HOSTILE.items():
        lines = site_text.splitlines()
        lines = [f"name = {_toml_string(text)}" if line.startswith("name = ") else line for line in lines]
        path = folder / f"site-{key}.toml"
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
        sites[key] = path
    targets = folder / "targets.csv"
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["label", "x_uT", "y_uT", "z_uT"])
    for k, (key, text) in enumerate(sorted(HOSTILE.items())):
        label = text.replace("\n", " ").replace("\r", " ")  # the reader's rows end at a line break
        w.writerow([label + " 2" if label == "+x" else label, 5 * (k % 3) - 5, 0, -10])
    targets.write_text(buf.getvalue(), encoding="utf-8")
    return design, sites, targets


def _labels(targets) -> list[str]:
    return [r["label"] for r in csv.DictReader(io.StringIO(targets.read_text(encoding="utf-8")))]


@pytest.mark.parametrize("key", sorted(HOSTILE))
def test_hostile_site_name_in_scpi_csv_json_terminal(run_cli, hostile_setup, key, tmp_path):
    design, sites, targets = hostile_setup
    site = sites[key]
    # SCPI: written to a file (checked again by the conftest session hook) and to stdout
    run = run_cli("setpoints", design, site, "--targets", targets, "--format", "scpi")
    assert run.code == 0, run
    for line in run.out.split("\n"):
        assert not any(ch in line for ch in LINE_BREAKS[1:]), line
        if line and not line.startswith("#"):
            assert line.split(" ")[0] in ("INST:NSEL", "VOLT", "CURR", "OUTP", "*WAI"), line
    assert "\nVOLT 500" not in run.out and "\nCURR 99" not in run.out and "\n*RST" not in run.out
    out = tmp_path / "table.scpi"
    assert run_cli("setpoints", design, site, "--targets", targets, "--out", out).code == 0
    # CSV
    run = run_cli("setpoints", design, site, "--targets", targets, "--format", "csv")
    assert run.code == 0, run
    comments = [line for line in run.out.split("\n") if line.startswith("#")]
    assert all(not any(ch in line for ch in LINE_BREAKS[1:]) for line in comments)  # provenance lines
    rows = list(csv.reader(io.StringIO(csv_body(run.out))))
    width = len(rows[0])
    for row in rows:
        assert len(row) == width
        for cell in row:
            try:
                float(cell)
                continue  # a number (a negative number is not a formula)
            except ValueError:
                pass
            assert cell[:1] not in ("=", "+", "-", "@", "\t", "\r"), cell
            assert not any(ch in cell for ch in LINE_BREAKS), cell
    # JSON: exact round trip of the name and labels (the targets reader strips blanks)
    run = run_cli("setpoints", design, site, "--targets", targets, "--format", "json")
    doc = json.loads(run.out)
    assert doc["site"] == HOSTILE[key]
    json_labels = [r["label"] for r in doc["rows"]]
    assert json_labels[7:] == [t.strip() for t in _labels(targets)]
    labels = [r[0] for r in rows[1:]]
    assert labels == [csv_text_cell(t) for t in json_labels]
    # terminal
    run = run_cli("setpoints", design, site, "--targets", targets)
    assert run.code == 0, run
    for stream in (run.out, run.err):
        assert "\x1b" not in stream and "\r" not in stream and "\u2028" not in stream and "\u202e" not in stream
    n_rows = 7 + len(HOSTILE)
    table_lines = [line for line in run.out.splitlines() if line.strip()]
    assert len(table_lines) == 3 + n_rows, table_lines  # title, ambient, header, rows


def test_hostile_text_in_figure_is_literal(hostile_setup):
    import matplotlib

    matplotlib.use("Agg")
    from cage.plots import png_bytes, setpoints_figure

    design, sites, targets = hostile_setup
    for key in ("math", "odd_dollar", "ansi", "lf"):
        doc = {"format": "cage-setpoints", "version": 1, "site": HOSTILE[key], "date": "2026-12-01",
               "source": "IGRF-14",
               "supply_limits": {a: {"max_current_A": 5.0, "bipolar": True} for a in "xyz"},
               "rows": [{"label": HOSTILE[k], "current_A": {a: 1.0 for a in "xyz"},
                         "power_W": {a: 2.0 for a in "xyz"}, "total_power_W": 6.0, "within_limits": True}
                        for k in ("math", "odd_dollar", "script")]}
        fig = setpoints_figure(doc)
        assert png_bytes(fig)[:8] == b"\x89PNG\r\n\x1a\n"  # drew without a mathtext error
        for text in fig.findobj(matplotlib.text.Text):
            shown, is_math = text._preprocess_math(text.get_text())
            assert is_math is False, text.get_text()
            if "and $y$" in shown:
                assert "$x$ and $y$" in shown  # the dollars are shown, not typeset


def test_hostile_text_in_html_report():
    from cage.report import build_report

    class Collector(html.parser.HTMLParser):
        def __init__(self):
            super().__init__()
            self.tags, self.text = [], []

        def handle_starttag(self, tag, attrs):
            self.tags.append(tag)

        def handle_data(self, data):
            self.text.append(data)

    doc = {"format": "cage-setpoints", "version": 1, "site": HOSTILE["script"], "date": "2026-12-01",
           "source": "IGRF-14", "supply_limits": {a: {"max_current_A": 5.0, "bipolar": False,
                                                      "max_voltage_V": 30.0, "resolution_A": 0.001}
                                                  for a in "xyz"},
           "rows": [{"label": HOSTILE[k], "current_A": {a: -1.0 for a in "xyz"},
                     "setpoint_A": {a: -1.0 for a in "xyz"}, "power_W": {a: 2.0 for a in "xyz"},
                     "voltage_V": {a: -2.0 for a in "xyz"}, "total_power_W": 6.0, "within_limits": True,
                     "target_cage_nT": [0.0, 0.0, 0.0]}
                    for k in sorted(HOSTILE)]}
    page = build_report(setpoints=doc, title=HOSTILE["script"])
    parser = Collector()
    parser.feed(page)
    assert "script" not in parser.tags
    assert "\x1b" not in page and "\u2028" not in page and "\r" not in page
    text = "".join(parser.text)
    assert "<script>alert(1)</script>" in text  # shown as text
    # a unipolar channel: the supply setpoint is |I| with the polarity (issue: report table)
    assert "1.000\u00a0A, polarity REVERSE" in page


def test_scpi_self_check_refuses_what_a_supply_must_not_get():
    """The check is not a rubber stamp: injected commands, numbers past the limits (from the
    issue: VOLT 500 and CURR 99 for a 30 V / 5 A supply, *RST), negative current on a
    unipolar channel and stray control characters are all refused."""
    from cage.setpointfile import ScpiCheckError, check_scpi

    head = ("# channel 1 (x): max 30.0 V, 5.0 A, unipolar\n# channel 2 (y): max 30.0 V, 5.0 A, bipolar\n"
            "# channel 3 (z): max 30.0 V, 5.0 A, bipolar\n")
    good = head + "INST:NSEL 1\nVOLT 12.000\nCURR 1.000\nOUTP ON\nINST:NSEL 2\nCURR -1.000\n*WAI\n"
    check_scpi(good)
    for bad in ("INST:NSEL 1\nVOLT 500\n", "INST:NSEL 1\nCURR 99\n", "*RST\n", "INST:NSEL 1\nCURR -0.5\n",
                "VOLT 1.0\n", "INST:NSEL 1\nVOLT 30.001\n", "# note\rVOLT 1\n", "INST:NSEL 4\n",
                "INST:NSEL 1\nSOUR:CURR 1\n", "INST:NSEL 2\nCURR 5.0001\n"):
        with pytest.raises(ScpiCheckError):
            check_scpi(head + bad)
    with pytest.raises(ScpiCheckError):
        check_scpi("INST:NSEL 1\n")  # no stated limits: cannot be checked


@pytest.mark.parametrize("key", ("lf", "crlf", "u2028"))
def test_hostile_site_name_stays_on_its_line_in_field_design_plan(run_cli, hostile_setup, key, tmp_path):
    """A line break in the site name never starts a new terminal line: the lines that name the
    site (field, design, plan) each hold the whole name, escaped (cage.escape.for_terminal)."""
    _, sites, _ = hostile_setup
    site = sites[key]
    shown = for_terminal(HOSTILE[key])
    for args, first in ((("field", site), "Site        "),
                        (("design", site, "--out", tmp_path / "d.json"), "Design for "),
                        (("plan", site, "--out", tmp_path / "plan"), "Plan for ")):
        run = run_cli(*args)
        assert run.code == 0, run
        lines = [line for line in run.out.split("\n") if line.startswith(first)]
        assert len(lines) == 1 and shown in lines[0], (args[0], run.out[:300])
        assert not any(line.startswith(("VOLT 500", "*RST", "OUTP ON")) for line in run.out.splitlines())


def test_quoted_line_breaks_in_a_label_read_as_the_csv_module_reads_them(tmp_path):
    # Python's csv module (RFC 4180 quoting) is the reference: a quoted cell keeps its line
    # breaks, so a label that looks like SCPI lines stays one label, line breaks and all (each
    # output escapes it for its place); a bad row after it is reported at its own line.
    from cage.errors import InputError
    from cage.targetfile import read_targets_csv

    text = 'label,x_uT,y_uT,z_uT\n"a\nCURR 9\nOUTP ON",1,2,3\nplain,4,5,6\n'
    path = tmp_path / "targets.csv"
    path.write_text(text, encoding="utf-8")
    expected = [r["label"] for r in csv.DictReader(io.StringIO(text, newline=""))]
    assert [t.label for t in read_targets_csv(path)] == expected == ["a\nCURR 9\nOUTP ON", "plain"]
    path.write_text(text + "broken,x,5,6\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"line 6: x_uT"):
        read_targets_csv(path)
