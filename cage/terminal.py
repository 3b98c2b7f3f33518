"""What the command line prints: escaped lines on stdout, one-line warnings on stderr, JSON.

Command-line layer. Every text shown passes :func:`cage.escape.for_terminal` line by line.
"""
from __future__ import annotations

import json

import typer

from cage.escape import for_terminal


def visible(text) -> str:
    """Text for the terminal: each line's control characters made visible (cage.escape)."""
    return "\n".join(for_terminal(line) for line in str(text).split("\n"))


def say(text: str = "") -> None:
    """Print escaped text on stdout."""
    typer.echo(visible(text))


def warn(text: str) -> None:
    """One plain line on stderr: "caution: ..." for safety cautions, else "warning: ..."."""
    line = " ".join(visible(text or "").split())
    if not line:
        return
    for prefix in ("warning:", "caution:"):
        if line.lower().startswith(prefix):
            typer.echo(f"{prefix} {line[len(prefix):].lstrip()}", err=True)
            return
    typer.echo(f"warning: {line}", err=True)


def dump_json(obj) -> str:
    """One JSON document, indented, NaN refused, newline-terminated."""
    return json.dumps(obj, indent=2, allow_nan=False) + "\n"


def emit_table(out, text: str, kind: str, rows: int) -> None:
    """A current table to its --out file (atomically, then one line saying so) or to stdout."""
    if out is not None:
        from cage.atomicfile import write_text

        write_text(out, text)
        say(f"Wrote {for_terminal(out)} ({kind}, {rows} rows)")
    else:
        typer.echo(text, nl=False)
