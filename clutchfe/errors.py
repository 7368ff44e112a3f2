"""Every error a user can cause, and the exit status the command line gives it.

One small module (no imports from the rest of the package) so that every stage can
raise these and the command line maps them to exit codes in one place.

Exit status: 0 ok; 1 a bug (anything not listed here); 2 invalid input, one line per
problem naming the key, the value and the allowed range; 3 valid input whose physics
cannot be solved as asked (the reason is given); 130 interrupted.
"""
from __future__ import annotations

EXIT_OK = 0
EXIT_BUG = 1
EXIT_INPUT = 2
EXIT_PHYSICS = 3
EXIT_INTERRUPTED = 130


class ClutchfeError(Exception):
    """Base of the errors a user can cause; ``exit_status`` is what the command returns."""

    exit_status = EXIT_BUG


class CaseError(ClutchfeError):
    """Invalid input: ``problems`` holds one message per problem (key, value, allowed range)."""

    exit_status = EXIT_INPUT

    def __init__(self, problems: list[str]):
        problems = capped(list(problems))
        super().__init__("\n".join(problems))
        self.problems = problems


class OutputFolderError(CaseError):
    """The chosen results folder cannot be used without destroying something (exit 2)."""


class PhysicsError(ClutchfeError):
    """The case is valid input but cannot be solved as asked (exit 3)."""

    exit_status = EXIT_PHYSICS


MAX_PROBLEMS_SHOWN = 50       # past this many lines a user reads the first ones and fixes those


def capped(problems: list[str], limit: int = MAX_PROBLEMS_SHOWN) -> list[str]:
    """The first ``limit`` problems and one line saying how many more there are."""
    if len(problems) <= limit:
        return problems
    return [*problems[:limit], f"… and {len(problems) - limit} more problems (fix these first)"]


def exit_status(exc: BaseException) -> int:
    """The command's exit status for an exception that reached it."""
    if isinstance(exc, KeyboardInterrupt):
        return EXIT_INTERRUPTED
    return getattr(exc, "exit_status", EXIT_BUG) if isinstance(exc, ClutchfeError) else EXIT_BUG


__all__ = ["EXIT_BUG", "EXIT_INPUT", "EXIT_INTERRUPTED", "EXIT_OK", "EXIT_PHYSICS", "CaseError",
           "ClutchfeError", "MAX_PROBLEMS_SHOWN", "OutputFolderError", "PhysicsError", "capped", "exit_status"]
