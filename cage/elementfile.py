"""Reader of two-line element set files (the open TLE format), with one-line errors.

The format (fixed columns, 69 characters a line) is the one the US Space Force publishes
element sets in; its column layout and checksum are documented in Hoots & Roehrich,
"Spacetrack Report No. 3" (1980) and Vallado et al., "Revisiting Spacetrack Report #3",
AIAA 2006-6753. Checksum: the sum of all digits of columns 1-68 plus 1 for every minus
sign, modulo 10, must equal the digit in column 69.

A file holds one element set: optionally a title line (the satellite's name, up to 69
characters, an optional leading ``0 `` dropped), then line 1 and line 2. Blank lines and
trailing spaces are ignored. The file is read through :mod:`cage.textfile` and refused
above :data:`MAX_FILE_BYTES`.
"""
from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from cage.errors import InputError

MAX_FILE_BYTES = 64 * 1024
LINE_LENGTH = 69

# (first column, last column) 1-based inclusive, field name, kind: "int", "float", "implied"
# (a decimal fraction with the point assumed in front), "exp" (implied point and an exponent).
LINE1_FIELDS = (
    (3, 7, "satellite number", "satnum"),
    (19, 20, "epoch year", "int"),
    (21, 32, "epoch day of year", "float"),
    (34, 43, "first derivative of mean motion", "float"),
    (45, 52, "second derivative of mean motion", "exp"),
    (54, 61, "drag term (B*)", "exp"),
)
LINE2_FIELDS = (
    (3, 7, "satellite number", "satnum"),
    (9, 16, "inclination", "float"),
    (18, 25, "right ascension of the ascending node", "float"),
    (27, 33, "eccentricity", "implied"),
    (35, 42, "argument of perigee", "float"),
    (44, 51, "mean anomaly", "float"),
    (53, 63, "mean motion", "float"),
)
# Columns that hold a space in a well-formed line (1-based).
LINE1_SPACES = (2, 9, 18, 33, 44, 53, 62, 64)
LINE2_SPACES = (2, 8, 17, 26, 34, 43, 52)


@dataclass(frozen=True)
class ElementSet:
    """One two-line element set, checked; ``name`` is the raw title line ('' if none).

    ``name`` came from a file: escape it before showing it anywhere.
    """

    name: str
    line1: str
    line2: str
    satellite_number: str
    source: str


def tle_checksum(line: str) -> int:
    """The TLE checksum of columns 1-68: digits summed, each '-' counts 1, modulo 10."""
    total = 0
    for ch in line[:68]:
        if ch.isdigit():
            total += int(ch)
        elif ch == "-":
            total += 1
    return total % 10


def _check_field(where: str, line: str, first: int, last: int, what: str, kind: str) -> None:
    cell = line[first - 1:last]
    text = cell.strip()
    bad = f"{where}, columns {first}-{last} ({what}): {text!r} is not "
    if kind == "satnum":
        # Five digits, or the alpha-5 form: a capital letter (not I or O) and four digits.
        ok = (text.isdigit() and len(text) <= 5) or (
            len(text) == 5 and text[0].isalpha() and text[0].isupper() and text[0] not in "IO"
            and text[1:].isdigit())
        if not ok:
            raise InputError(bad + "a satellite number")
        return
    if not text:
        raise InputError(f"{where}, columns {first}-{last} ({what}) is empty")
    if kind == "int":
        if not text.isdigit():
            raise InputError(bad + "a whole number")
        return
    if kind == "implied":
        if not text.isdigit():
            raise InputError(bad + "digits (decimal point assumed in front)")
        return
    if kind == "exp":
        # e.g. " 12345-3", "-12345-3", "00000+0", "00000-0"
        body = text.lstrip("+-")
        if len(body) < 3 or body[-2] not in "+-" or not body[-1].isdigit() or not body[:-2].isdigit():
            raise InputError(bad + "a number in the form 12345-3 (decimal point assumed in front)")
        return
    try:
        value = float(text)
    except ValueError:
        raise InputError(bad + "a number") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise InputError(bad + "a finite number")


def _check_line(where: str, line: str, number: str) -> None:
    if len(line) != LINE_LENGTH:
        raise InputError(f"{where}: has {len(line)} characters; a line of an element set has {LINE_LENGTH}")
    if not line.isascii() or not line.isprintable():
        raise InputError(f"{where}: holds characters that are not printable ASCII")
    if line[0] != number:
        raise InputError(f"{where}: starts with {line[0]!r}; line {number} of an element set starts with {number}")
    for col in (LINE1_SPACES if number == "1" else LINE2_SPACES):
        if line[col - 1] != " ":
            raise InputError(f"{where}, column {col}: {line[col - 1]!r} where the format has a space")
    if not line[68].isdigit():
        raise InputError(f"{where}, column 69: {line[68]!r} is not a checksum digit")
    for first, last, what, kind in (LINE1_FIELDS if number == "1" else LINE2_FIELDS):
        _check_field(where, line, first, last, what, kind)
    want = tle_checksum(line)
    if int(line[68]) != want:
        raise InputError(f"{where}: checksum digit is {line[68]} but the line's checksum is {want}")


def parse_element_set(text: str, where: str = "element set") -> ElementSet:
    """Check the text of one element set (title line optional) and return it.

    Raises InputError with one line naming ``where``, the line and the columns at fault.
    """
    numbered = [(n, line.rstrip()) for n, line in enumerate(text.splitlines(), start=1) if line.strip()]
    starts = [n for n, line in numbered if line[:2] in ("1 ", "2 ")]
    if len(numbered) not in (2, 3):
        if len(numbered) > 3 and len(starts) > 2:
            raise InputError(f"{where}: holds {len(numbered)} non-blank lines; give one element set "
                             f"(an optional title line, then lines 1 and 2)")
        raise InputError(f"{where}: holds {len(numbered)} non-blank line{'s' if len(numbered) != 1 else ''}; "
                         f"an element set is an optional title line, then lines 1 and 2")
    name = ""
    if len(numbered) == 3:
        n0, title = numbered[0]
        if len(title) > LINE_LENGTH:
            raise InputError(f"{where}: line {n0}: the title line is longer than {LINE_LENGTH} characters")
        if title.startswith("0 "):
            title = title[2:]
        name = title.strip()
        numbered = numbered[1:]
    (n1, line1), (n2, line2) = numbered
    _check_line(f"{where}: line {n1}", line1, "1")
    _check_line(f"{where}: line {n2}", line2, "2")
    if line1[2:7] != line2[2:7]:
        raise InputError(f"{where}: satellite number {line1[2:7].strip()!r} on line {n1} differs from "
                         f"{line2[2:7].strip()!r} on line {n2}")
    ecc = float("0." + line2[26:33].strip())
    if not 0.0 <= ecc < 1.0:
        raise InputError(f"{where}: line {n2}: eccentricity {ecc:g} is outside 0..1")
    mean_motion = float(line2[52:63])
    if not 0.0 < mean_motion < 20.0:
        raise InputError(f"{where}: line {n2}, columns 53-63: mean motion {mean_motion:g} rev/day is outside 0..20")
    incl = float(line2[8:16])
    if not 0.0 <= incl <= 180.0:
        raise InputError(f"{where}: line {n2}, columns 9-16: inclination {incl:g} deg is outside 0..180")
    day = float(line1[20:32])
    if not 1.0 <= day < 367.0:
        raise InputError(f"{where}: line {n1}, columns 21-32: epoch day {day:g} is outside 1..366")
    return ElementSet(name=name, line1=line1, line2=line2, satellite_number=line1[2:7].strip(), source=where)


def read_element_file(path: str | os.PathLike) -> ElementSet:
    """Read and check a two-line element set file (see the module docstring)."""
    from cage.textfile import read_text

    p = Path(path)
    try:
        size = p.stat().st_size
    except OSError:
        size = 0  # read_text reports a missing or unreadable file in its own words
    if size > MAX_FILE_BYTES:
        raise InputError(f"{p}: {size} bytes; an element set file is at most {MAX_FILE_BYTES} bytes")
    text = read_text(p, "element set file")
    return parse_element_set(text, str(p))


def satrec_of(elements: ElementSet):
    """The sgp4 ``Satrec`` of a checked element set (WGS72 constants, as the format intends)."""
    from sgp4.api import SGP4_ERRORS, WGS72, Satrec

    try:
        sat = Satrec.twoline2rv(elements.line1, elements.line2, WGS72)
    except (ValueError, IndexError) as exc:
        raise InputError(f"{elements.source}: the element set cannot be read ({exc})") from None
    if sat.error:
        raise InputError(f"{elements.source}: the element set cannot be propagated "
                         f"({SGP4_ERRORS.get(sat.error, sat.error)})")
    return sat
