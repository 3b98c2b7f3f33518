"""The ``cage`` command line (typer): the application, its commands, the entry point.

Each command lives in its own module ``cage/cmd_<name>.py`` exposing ``register(app)``: it
parses options, reads its inputs through the file readers, calls the workflow
(:mod:`cage.workflow`) and prints (:mod:`cage.terminal`, the ``*text`` modules) or writes the
result. User errors from the core (:class:`cage.errors.CageError`) end in one line on stderr
and the error's exit code; see the README for the codes. Heavy modules (ppigrf,
scipy.optimize, matplotlib) are imported inside the commands.
"""
from __future__ import annotations

import os
import sys
from typing import Optional

# Every linear-algebra problem here is tiny (3 x 3 couplings, 12-parameter fits): a BLAS thread
# pool only adds start-up and hand-off costs. One thread unless the user asked for more; set
# before numpy is first imported (threadpoolctl would do it later, but is not a dependency).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import typer  # noqa: E402

from cage.errors import EXIT_UNEXPECTED, CageError, InputError  # noqa: E402
from cage.terminal import visible as _visible  # noqa: E402

app = typer.Typer(
    add_completion=False,
    no_args_is_help=False,  # "cage" alone: the callback prints the help and exits 0
    pretty_exceptions_enable=False,
    rich_markup_mode=None,  # help texts hold [room], [[supply]]: plain text, not markup
    context_settings={"help_option_names": ["-h", "--help"]},
    help="Plan, drive and correct three-axis magnetic coil cages.",
)


def _show_version(value: bool) -> None:
    if value:
        from cage import __version__

        typer.echo(f"cage {__version__}")
        raise typer.Exit()


@app.callback(invoke_without_command=True)
def _root(
    ctx: typer.Context,
    version: bool = typer.Option(False, "--version", callback=_show_version, is_eager=True,
                                 help="Print the program's version and exit."),
) -> None:
    """Plan, drive and correct three-axis magnetic coil cages (see the README)."""
    if ctx.invoked_subcommand is None:
        typer.echo(ctx.get_help())
        raise typer.Exit()


# ----------------------------------------------------------------------------- commands, each in its own module

from cage import cmd_build, cmd_calibrate, cmd_design, cmd_field, cmd_orbit, cmd_sequence, cmd_setpoints  # noqa: E402
from cage import cmd_tolerance  # noqa: E402

for _module in (cmd_field, cmd_design, cmd_setpoints, cmd_calibrate, cmd_sequence, cmd_build, cmd_tolerance,
                cmd_orbit):
    _module.register(app)


# ----------------------------------------------------------------------------- entry point

def _short_lived_gc() -> None:
    """Fewer cyclic garbage collections for a one-shot command.

    The default thresholds (700 allocations per young collection) make the collector walk
    matplotlib's and numpy's many young objects hundreds of times per ``cage plan``: about
    0.1-0.2 s of CPU (measured with ``gc.callbacks``). A command runs once and exits, and its
    cyclic garbage (figures, mostly) is small, so the young generation is collected after
    50,000 net allocations instead. Only the entry point does this, not an import of the package.
    """
    import gc

    gc.set_threshold(50_000, 20, 20)


# The command-line parser's own error class (click's ClickException, bundled with typer or not),
# found from typer's public BadParameter.
_PARSER_ERROR = next(c for c in typer.BadParameter.__mro__ if c.__name__ == "ClickException")


def _parser_message(exc) -> str:
    """A parser error in one line: the command, what is wrong, where to look (no usage block)."""
    ctx = getattr(exc, "ctx", None)
    command = ctx.command_path if ctx is not None else "cage"
    text = " ".join(_visible(exc.format_message()).split()).rstrip(".")
    sub = command.partition(" ")[2]
    return f"{sub + ': ' if sub else ''}{text}; see {command} --help"


def main(argv: Optional[list[str]] = None) -> None:
    """Run the command line; user errors end in one line on stderr and a non-zero exit."""
    _short_lived_gc()
    try:
        from cage.outputs import trailing_slash_problem

        problem = trailing_slash_problem(sys.argv[1:] if argv is None else argv)
        if problem:
            raise InputError(problem)
        code = app(args=argv, prog_name="cage", standalone_mode=False)
        # a command's own typer.Exit(code), else done: exit as the parser's standalone mode does
        sys.exit(code if isinstance(code, int) else 0)
    except _PARSER_ERROR as exc:  # the parser's: unknown option, bad value, missing argument
        typer.echo(f"cage: {_parser_message(exc)}", err=True)
        sys.exit(exc.exit_code)
    except typer.Abort:
        typer.echo("cage: aborted", err=True)
        sys.exit(1)
    except CageError as exc:
        typer.echo(f"cage: {_visible(exc)}".replace("\n", " "), err=True)
        sys.exit(exc.exit_code)
    except KeyboardInterrupt:
        typer.echo("cage: interrupted", err=True)
        sys.exit(130)
    except BrokenPipeError:
        sys.exit(0)
    except Exception as exc:  # an unexpected failure: one line, the traceback only on request
        if os.environ.get("CAGE_DEBUG"):
            raise
        typer.echo(f"cage: unexpected failure ({type(exc).__name__}: {_visible(exc)}); set CAGE_DEBUG=1 for details",
                   err=True)
        sys.exit(EXIT_UNEXPECTED)
