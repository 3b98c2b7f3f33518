"""Errors a user can cause, and the exit codes the command line gives them.

Every module raises one of these with a single plain line that says what is wrong
and where (file, key, row); ``cage/cli.py`` prints that line on stderr and exits
with the class's code. Nothing else in the package prints or exits.
"""

EXIT_OK = 0
EXIT_UNEXPECTED = 1
EXIT_BAD_INPUT = 2
EXIT_INFEASIBLE = 3


class CageError(Exception):
    """Base class: a one-line message meant for the user."""

    exit_code = EXIT_UNEXPECTED


class InputError(CageError, ValueError):
    """Bad input: unreadable or malformed file, unknown key, out-of-range value."""

    exit_code = EXIT_BAD_INPUT


class InfeasibleError(CageError):
    """The requirement cannot be met; the message names the binding constraint in numbers."""

    exit_code = EXIT_INFEASIBLE
