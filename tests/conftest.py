"""Shared test helpers: run the command line in-process and capture its exit code."""
from __future__ import annotations

import os
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
SITES = ROOT / "sites"

os.environ.setdefault("MPLBACKEND", "Agg")


class Run:
    def __init__(self, code: int, out: str, err: str):
        self.code, self.out, self.err = code, out, err

    def __repr__(self):
        return f"Run(code={self.code}, err={self.err!r}, out={self.out[:200]!r})"


@pytest.fixture
def run_cli(capsys):
    """Call ``cage`` with a list of arguments; return exit code, stdout and stderr."""
    from cage.cli import main

    def _run(*args) -> Run:
        try:
            main([str(a) for a in args])
            code = 0
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        captured = capsys.readouterr()
        return Run(code, captured.out, captured.err)

    return _run


def cli_code(*args) -> int:
    """Run ``cage`` in-process outside a fixture; return its exit code."""
    from cage.cli import main

    try:
        main([str(a) for a in args])
    except SystemExit as exc:
        return exc.code if isinstance(exc.code, int) else 1
    return 0


def assert_one_line_error(run: Run, *fragments: str, code: int = 2) -> None:
    """A user error: the given exit code, one plain line on stderr, no traceback."""
    assert run.code == code, run
    assert "Traceback" not in run.err and "Traceback" not in run.out, run
    lines = [line for line in run.err.splitlines() if line.strip()]
    assert len(lines) == 1, run
    for fragment in fragments:
        assert fragment in lines[0], (fragment, lines[0])


def csv_body(text: str) -> str:
    """A CSV file's text without its leading ``#`` provenance comment lines (cage.provenance)."""
    lines = text.splitlines(keepends=True)
    while lines and lines[0].startswith("#"):
        lines.pop(0)
    return "".join(lines)
