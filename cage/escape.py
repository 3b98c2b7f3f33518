"""Make text that came from a file or the command line safe for where it goes.

Every name, note, label and path a user supplies is hostile until escaped for its
destination. One pure function per destination:

- :func:`one_line`: the base of all the others. Carriage return, line feed, tab, every
  other C0 and C1 control character (U+0085 NEL included), DEL, the Unicode line and
  paragraph separators (U+2028, U+2029), the bidirectional embedding / override /
  isolate / mark characters and lone surrogates are replaced by visible backslash
  escapes (``\\r``, ``\\n``, ``\\t``, ``\\x1b``, ``\\u2028`` ...). The result is always one
  printable line: it can go into a comment of a SCPI script, a CSV cell or a terminal
  line without starting a new line, moving the cursor or reordering what follows.
- :func:`for_terminal`: text printed on the terminal (ANSI escapes made visible).
- :func:`csv_text_cell`: a text cell of a CSV file; a cell that a spreadsheet would take
  for a formula (first character ``=``, ``+``, ``-``, ``@``, tab or CR) gets a leading
  apostrophe, so spreadsheets read it as text (the usual guard against CSV injection,
  common practice).
- :func:`for_figure`: literal text for a matplotlib figure: ``$`` is escaped, so user
  text is never typeset as mathtext (and an odd ``$`` never breaks a figure).
- :func:`for_html`: text inside HTML elements or attribute values.

Backslashes already in the text are kept as they are (Windows paths stay readable).
"""
from __future__ import annotations

import html as _html
import re

__all__ = ["one_line", "for_terminal", "csv_text_cell", "for_figure", "for_html"]

# Bidirectional formatting characters (Unicode Standard Annex #9): marks, embeddings,
# overrides and isolates. Shown as escapes so they cannot reorder the rest of a line.
_BIDI = frozenset(
    [0x061C, 0x200E, 0x200F, 0x202A, 0x202B, 0x202C, 0x202D, 0x202E,
     0x2066, 0x2067, 0x2068, 0x2069]
)
_NAMED = {"\r": "\\r", "\n": "\\n", "\t": "\\t"}
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def _escape_char(ch: str) -> str:
    code = ord(ch)
    if ch in _NAMED:
        return _NAMED[ch]
    if code < 0x20 or 0x7F <= code <= 0x9F:
        return f"\\x{code:02x}"
    if code in (0x2028, 0x2029) or code in _BIDI or 0xD800 <= code <= 0xDFFF:
        return f"\\u{code:04x}"
    return ch


# Every character _escape_char changes, as one pattern (the common case, nothing to escape,
# is then one regex search).
_UNSAFE = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069"
                     "\ud800-\udfff]")


def one_line(text) -> str:
    """Return ``text`` (any object, via ``str``) as one printable line.

    Control and line-breaking characters become backslash escapes; everything else is
    kept. ``one_line("a\\nVOLT 500")`` is ``"a\\\\nVOLT 500"`` (no line break).
    """
    s = "" if text is None else str(text)
    if _UNSAFE.search(s) is None:
        return s
    return _UNSAFE.sub(lambda m: _escape_char(m.group()), s)


def for_terminal(text) -> str:
    """Return ``text`` safe to print on a terminal: one line, escapes made visible."""
    return one_line(text)


def csv_text_cell(text) -> str:
    """Return ``text`` as the content of a CSV text cell that spreadsheets read as text.

    The cell is one line; if the original text or the escaped one starts with ``=``,
    ``+``, ``-``, ``@``, tab or CR, a leading apostrophe is added (the spreadsheet then
    shows the text, not a formula's result). Quoting of commas is the CSV writer's job.
    """
    raw = "" if text is None else str(text)
    s = one_line(raw)
    if raw.startswith(_FORMULA_START) or s.startswith(_FORMULA_START):
        return "'" + s
    return s


def for_figure(text) -> str:
    """Return ``text`` for a matplotlib text element, shown literally (no mathtext).

    Every ``$`` becomes ``\\$``: matplotlib then finds no math and shows a dollar sign.
    """
    return one_line(text).replace("$", "\\$")


def for_html(text) -> str:
    """Return ``text`` for HTML element content or a quoted attribute value."""
    return _html.escape(one_line(text), quote=True)
