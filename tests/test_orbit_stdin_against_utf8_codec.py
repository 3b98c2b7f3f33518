"""`cage sequence --orbit -` reads the series from a pipe as bytes, checked against Python's own
UTF-8 codec (the offset of the first bad byte its strict decoder reports) and against the same
bytes given as a file, and the pipe's size cap against the byte count of the UTF-8 encoding.
"""
from __future__ import annotations

import io

from conftest import SITES, assert_one_line_error

BAD = b"t_s,x_nT,y_nT,z_nT\n0,1,2,3\n1,\xff,2,3\n"


def _pipe(monkeypatch, data: bytes) -> None:
    monkeypatch.setattr("sys.stdin", io.TextIOWrapper(io.BytesIO(data), encoding="utf-8",
                                                       errors="surrogateescape"))


def test_non_utf8_pipe_gives_the_codecs_offset_like_a_file(run_cli, smallsat_design, tmp_path, monkeypatch):
    try:
        BAD.decode("utf-8")
    except UnicodeDecodeError as exc:
        offset = exc.start
    site = SITES / "smallsat-lab.toml"
    _pipe(monkeypatch, BAD)
    piped = run_cli("sequence", smallsat_design, site, "--orbit", "-")
    assert_one_line_error(piped, "stdin", "not UTF-8", f"offset {offset}")
    path = tmp_path / "bad.csv"
    path.write_bytes(BAD)
    as_file = run_cli("sequence", smallsat_design, site, "--orbit", path)
    assert_one_line_error(as_file, "not UTF-8")
    assert piped.err.replace("stdin", str(path)) == as_file.err


def test_non_utf8_text_stream_gives_the_same_line(run_cli, smallsat_design, monkeypatch):
    """A text stdin without a byte buffer, its bad bytes kept as surrogates (the POSIX locale)."""
    site = SITES / "smallsat-lab.toml"
    monkeypatch.setattr("sys.stdin", io.StringIO(BAD.decode("utf-8", "surrogateescape")))
    run = run_cli("sequence", smallsat_design, site, "--orbit", "-")
    assert_one_line_error(run, "stdin", "not UTF-8", "offset 29")


def test_pipe_cap_counts_bytes_not_characters(run_cli, smallsat_design, monkeypatch):
    text = "t_s,x_nT,y_nT,z_nT\n0,1,2,3\n1,1,2,3\n# \u00b5T \u2192 nT\n"
    data = text.encode("utf-8")
    assert len(data) > len(text)
    monkeypatch.setattr("cage.cmd_orbit.MAX_STDIN_BYTES", len(text))
    _pipe(monkeypatch, data)
    run = run_cli("sequence", smallsat_design, SITES / "smallsat-lab.toml", "--orbit", "-")
    assert_one_line_error(run, "stdin", f"more than {len(text)} bytes")
    monkeypatch.setattr("cage.cmd_orbit.MAX_STDIN_BYTES", len(data))
    _pipe(monkeypatch, data)
    assert run_cli("sequence", smallsat_design, SITES / "smallsat-lab.toml", "--orbit", "-").code == 0
