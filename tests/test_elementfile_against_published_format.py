"""The two-line element set reader against the published format and the sgp4 parser.

References: the TLE column layout and checksum rule (Hoots & Roehrich, "Spacetrack Report
No. 3", 1980; Vallado et al., AIAA 2006-6753): 69 columns; checksum = digits of columns 1-68
summed, each '-' counting 1, modulo 10, in column 69. sgp4's own ``twoline2rv`` reads the
same invented set to the same elements. Every bad file ends in one plain line (exit 2).
"""
from __future__ import annotations

import math

import pytest

from conftest import assert_one_line_error
from orbit_helpers import checksum, make_tle

from cage.elementfile import MAX_FILE_BYTES, parse_element_set, satrec_of, tle_checksum
from cage.errors import InputError

GOOD = make_tle(name="TEST SAT B", satnum=99921, incl=63.4, raan=250.25, ecc=0.0123, argp=270.5,
                mean_anomaly=12.75, altitude_km=800.0, bstar="-11606-4")


def test_checksum_rule_by_hand():
    # "1 2-3 A" padded: digits 1 + 2 + 3 = 6, one minus sign = 1, total 7 (rule above)
    assert tle_checksum("1 2-3 A".ljust(68)) == 7
    for line in GOOD.splitlines()[1:]:
        assert tle_checksum(line) == checksum(line[:68]) == int(line[68])


def test_reader_and_sgp4_agree_on_the_elements():
    es = parse_element_set(GOOD, "good.tle")
    assert es.name == "TEST SAT B" and es.satellite_number == "99921"
    sat = satrec_of(es)
    assert math.isclose(math.degrees(sat.inclo), 63.4, abs_tol=1e-9)
    assert math.isclose(math.degrees(sat.nodeo), 250.25, abs_tol=1e-9)
    assert math.isclose(sat.ecco, 0.0123, abs_tol=1e-12)
    assert math.isclose(sat.bstar, -0.11606e-4, rel_tol=1e-9)  # implied point, exponent -4


def test_title_line_is_optional_and_a_leading_zero_is_dropped():
    lines = GOOD.splitlines()
    assert parse_element_set("\n".join(lines[1:]), "x").name == ""
    assert parse_element_set("0 " + GOOD, "x").name == "TEST SAT B"


def _swap(line: str, col: int, ch: str) -> str:
    return line[:col - 1] + ch + line[col:]


def _bad_files():
    name, l1, l2 = GOOD.splitlines()
    wrong_sum = str((int(l2[68]) + 1) % 10)
    yield "bad checksum", f"{name}\n{l1}\n{l2[:68]}{wrong_sum}\n", "checksum digit is"
    # A digit changed in the inclination: the checksum no longer matches.
    yield "changed digit", f"{name}\n{l1}\n{_swap(l2, 10, str((int(l2[9]) + 1) % 10))}\n", "checksum"
    yield "short line", f"{name}\n{l1[:60]}\n{l2}\n", "has 60 characters"
    yield "long line", f"{name}\n{l1} 7\n{l2}\n", "has 71 characters"
    bad_field = _swap(_swap(l2, 20, "x"), 69, str(checksum(_swap(l2, 20, "x")[:68])))
    yield "letter in a number", f"{name}\n{l1}\n{bad_field}\n", "columns 18-25"
    yield "lines swapped", f"{name}\n{l2}\n{l1}\n", "starts with '2'"
    other = make_tle(satnum=99922).splitlines()[2]
    yield "two satellites", f"{name}\n{l1}\n{other}\n", "differs from"
    yield "one line", f"{l1}\n", "1 non-blank line"
    yield "two sets", GOOD + GOOD, "give one element set"
    no_space = _swap(l1, 9, "7")
    yield "missing space", f"{name}\n{no_space[:68]}{checksum(no_space[:68])}\n{l2}\n", "column 9"
    yield "control characters", f"{name}\n{_swap(l1, 64, chr(7))}\n{l2}\n", "printable"


@pytest.mark.parametrize("label,text,fragment", list(_bad_files()), ids=[c[0] for c in _bad_files()])
def test_bad_element_sets_end_in_one_plain_line(tmp_path, run_cli, label, text, fragment):
    path = tmp_path / "sat.tle"
    path.write_text(text)
    with pytest.raises(InputError) as exc:
        parse_element_set(text, str(path))
    assert fragment in str(exc.value) and "\n" not in str(exc.value)
    run = run_cli("orbit", path, "--start", "2027-03-01T00:00:00", "--duration-s", "60")
    assert_one_line_error(run, fragment, str(path))


def test_oversized_and_binary_files_are_refused(tmp_path, run_cli):
    big = tmp_path / "big.tle"
    big.write_text(GOOD + "\n" * MAX_FILE_BYTES)
    assert_one_line_error(run_cli("orbit", big, "--start", "2027-03-01", "--duration-s", "60"), "at most")
    binary = tmp_path / "bin.tle"
    binary.write_bytes(b"\x00\x01\x02" * 10)
    assert_one_line_error(run_cli("orbit", binary, "--start", "2027-03-01", "--duration-s", "60"))
    missing = tmp_path / "none.tle"
    assert_one_line_error(run_cli("orbit", missing, "--start", "2027-03-01", "--duration-s", "60"),
                          "no such file")
