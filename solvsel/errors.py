"""One error hierarchy for the whole tool.

Every error a user can cause (a bad table, an unknown liquid, a value out of
range, fractions that do not sum) is a :class:`SolvselError`.  Each subclass
also inherits the matching builtin, so ``except KeyError`` still works for
library users, and each carries a short ``title`` that the command line prints
as one paragraph (exit code 2) and the terminal UI shows in a dialog.  Anything
else that escapes is a bug (exit code 1).
"""

from __future__ import annotations

from dataclasses import dataclass, field

__all__ = [
    "SolvselError",
    "InputError",
    "TableError",
    "UnknownNameError",
    "OutOfRangeError",
    "MissingDataError",
]


class SolvselError(Exception):
    """Base of every error a user's input can cause."""

    title = "solvsel error"

    def __str__(self) -> str:  # keep the message one paragraph
        return " ".join(str(a) for a in self.args) if self.args else self.title


class InputError(SolvselError, ValueError):
    """An argument or a value given by the user is malformed or inconsistent."""

    title = "Bad input"


class OutOfRangeError(InputError):
    """A number is outside the range in which the method is valid."""

    title = "Value out of range"


class MissingDataError(SolvselError, LookupError):
    """The data needed for a computation are not known for this substance."""

    title = "Data missing"


class TableError(SolvselError, ValueError):
    """A data table (bundled or the user's own) is malformed.

    The message always names the file, and the row (1-based, header is row 1)
    and column where they apply, and what was expected.
    """

    title = "Bad table"

    def __init__(self, path, message: str, row: int | None = None, column: str | None = None):
        self.path = str(path)
        self.row = row
        self.column = column
        self.message = message
        where = self.path
        if row is not None:
            where += f", row {row}"
        if column is not None:
            where += f", column '{column}'"
        super().__init__(f"{where}: {message}")


class UnknownNameError(SolvselError, KeyError):
    """A substance name, synonym or CAS number is not known.

    ``suggestions`` holds the closest known names, best first.
    """

    title = "Unknown name"

    def __init__(self, name: str, kind: str = "substance", suggestions: tuple[str, ...] = ()):
        self.name = name
        self.kind = kind
        self.suggestions = tuple(suggestions)
        msg = f"no {kind} named '{name}'"
        if self.suggestions:
            msg += "; closest: " + ", ".join(f"'{s}'" for s in self.suggestions)
        super().__init__(msg)
