"""Shared test helpers: run the command line in-process and capture its exit code."""
from __future__ import annotations

import os
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
SITES = ROOT / "sites"

os.environ.setdefault("MPLBACKEND", "Agg")

# The arctic hut's field-step limit: with it no cage of pairs fits the hut (the few turns the
# limit allows sit on their channel floors, too far in for the uniformity in the hut's height).
ARCTIC_STEP_LINE = "max_field_step_nT = 50\n"


def pair_demo_site(name: str, folder: Path) -> Path:
    """A copy of demo site ``name`` (in ``folder``) for the pair planner: ``systems = ["pair"]``,
    and the arctic hut without its field-step limit -- the demo sites as the pair planner's
    tests were written for them."""
    text = (SITES / f"{name}.toml").read_text(encoding="utf-8")
    if name == "arctic-cal-hut":
        assert ARCTIC_STEP_LINE in text
        text = text.replace(ARCTIC_STEP_LINE, "")
    if "\nsystems = " not in text:
        text = text.replace("[requirement]\n", '[requirement]\nsystems = ["pair"]\n', 1)
    path = folder / f"{name}-pairs.toml"
    path.write_text(text, encoding="utf-8")
    return path


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
        if captured.out.startswith("# cage current table"):
            _check_scpi_text(captured.out, "stdout")
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


@pytest.fixture(scope="session")
def smallsat_design(tmp_path_factory) -> Path:
    """The smallsat lab's default design (``cage design``), made once for the tests that only read it."""
    path = tmp_path_factory.mktemp("smallsat-design") / "design.json"
    assert cli_code("design", SITES / "smallsat-lab.toml", "--out", path) == 0
    return path


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


def _check_scpi_text(text: str, where: str) -> None:
    """The SCPI self-check (command forms and supply limits read from the script's own
    header) on a script a test made; a failure fails the test run."""
    from cage.setpointfile import check_scpi

    try:
        check_scpi(text)
    except Exception as exc:  # noqa: BLE001 - any failure is a defect of the writer
        raise AssertionError(f"{where}: SCPI self-check failed: {exc}") from None


def pytest_sessionfinish(session, exitstatus):
    """Every SCPI script the test suite wrote under pytest's temporary folders passes the
    self-check (cage.setpointfile.check_scpi)."""
    factory = getattr(session.config, "_tmp_path_factory", None)
    if factory is None:
        return
    try:
        base = factory.getbasetemp()
    except Exception:  # noqa: BLE001 - no temporary folder was made
        return
    failures = []
    for path in sorted(Path(base).rglob("*.scpi")):
        try:
            _check_scpi_text(path.read_text(encoding="utf-8"), str(path))
        except AssertionError as exc:
            failures.append(str(exc))
    if failures:
        print("\n" + "\n".join(failures))
        session.exitstatus = pytest.ExitCode.TESTS_FAILED
