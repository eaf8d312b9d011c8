"""One error hierarchy for the whole tool.

Every error a user can cause (a bad table, an unknown liquid, a value out of
range, fractions that do not sum) is a :class:`SolvselError`.  Each subclass
also inherits the matching builtin, so ``except KeyError`` still works for
library users, and each carries a short ``title``.

An error caused by one input names it in structured fields, not in its
wording: ``param`` is the field of the request (``"temp_C"``, ``"dose"``),
``value`` what was given, ``expected`` what would have been accepted, and
``path`` / ``row`` / ``column`` the place in a file.  The message itself is
worded for any front end; each front end names the input its own way
(:meth:`SolvselError.describe`): the command line by its option
(``--temp``), the terminal UI by its field label, a notebook user by the
request field.  The command line prints the result as one paragraph (exit
code 2), or with ``--json`` as one JSON document (:meth:`SolvselError.as_json`),
the UI in a dialog.  Anything else that escapes is a bug (exit 1).

Something a user should know about an input that is not an error (a file
read in a fallback encoding) is a :class:`SolvselNote` warning: the command
line prints it on stderr as a note, a notebook shows it as a warning.

>>> e = InputError("expected a number of C, got 'warm'", param="temp_C", value="warm")
>>> str(e)
"temp_C: expected a number of C, got 'warm'"
>>> e.describe({"temp_C": "--temp"})
"--temp: expected a number of C, got 'warm'"
>>> e.as_json({"temp_C": "--temp"})["param"]
'--temp'
"""

from __future__ import annotations

import re
from typing import Any, Callable, Mapping

#: Control characters (a user's text echoed in a message may hold them): shown escaped, so a message
#: stays one paragraph on one line.
_CONTROL = re.compile(r"[\x00-\x08\x0a-\x1f\x7f\x85\u2028\u2029]")

__all__ = [
    "SolvselError",
    "InputError",
    "TableError",
    "UnknownNameError",
    "OutOfRangeError",
    "FileError",
    "MissingDataError",
    "MissingExtraError",
    "SolvselNote",
]


class SolvselError(Exception):
    """Base of every error a user's input can cause.

    Parameters
    ----------
    message : str
        What is wrong, worded for any front end (no option or field names).
    param : str, optional
        The request field the bad input came from (e.g. ``"temp_C"``); front
        ends map it to their own name for it.
    value : optional
        The value given.
    expected : str, optional
        What would have been accepted (e.g. ``"a temperature in C, -80 to 200"``).
    path, row, column : optional
        Where in a file (row 1 is the header).
    """

    title = "solvsel error"
    #: What went wrong, as one stable word for scripts (``error.kind`` of the JSON error document).
    error_kind = "error"

    def __init__(
        self,
        message: str = "",
        *,
        param: str | None = None,
        value: Any = None,
        expected: str | None = None,
        path: str | None = None,
        row: int | None = None,
        column: str | None = None,
    ) -> None:
        self.message = str(message)
        self.param = param
        self.value = value
        self.expected = expected
        self.path = None if path is None else str(path)
        self.row = row
        self.column = column
        super().__init__(self.message)

    def where(self) -> str:
        """``"FILE, row R, column 'C'"`` for an error in a file, else ``""`` (a very long path shortened)."""
        if self.path is None:
            return ""
        out = self.path if len(self.path) <= 120 else f"{self.path[:60]}...{self.path[-40:]}"
        if self.row is not None:
            out += f", row {self.row}"
        if self.column is not None:
            out += f", column '{self.column}'"
        return out

    def describe(self, names: Mapping[str, str] | Callable[[str], str] | None = None) -> str:
        """The message as one paragraph, the input named the way a front end names it (control
        characters of a user's text shown escaped, ``\\n`` for a line break).

        ``names`` maps a request field to the front end's name for it (an
        option such as ``--temp``, a field label); fields it does not know keep
        their request name.
        """
        text = self.message or self.title
        place = self.where()
        if place:
            text = f"{place}: {text}"
        if self.param:
            if callable(names):
                label = names(self.param)
            else:
                label = (names or {}).get(self.param, self.param)
            if label:
                text = f"{label}: {text}"
        return _CONTROL.sub(lambda m: repr(m.group())[1:-1], text)  # one paragraph: a user's newline shown as \\n

    def fields(self) -> dict[str, Any]:
        """The structured fields (for JSON error output and tests)."""
        return {
            "title": self.title, "message": self.message, "param": self.param,
            "value": None if self.value is None else str(self.value), "expected": self.expected,
            "path": self.path, "row": self.row, "column": self.column,
        }

    def as_json(self, names: Mapping[str, str] | Callable[[str], str] | None = None) -> dict[str, Any]:
        """The error as the JSON document's ``error`` object: ``kind``, ``message`` (the paragraph of
        :meth:`describe`) and, where they apply, ``param`` (named by ``names`` as in :meth:`describe`),
        ``value``, ``expected``, ``file``, ``row``, ``column``."""
        param = self.param
        if param:
            param = names(param) if callable(names) else (names or {}).get(param, param)
        out: dict[str, Any] = {"kind": self.error_kind, "param": param or None,
                               "value": None if self.value is None else _plain(self.value),
                               "expected": self.expected, "file": self.path, "row": self.row,
                               "column": self.column, "message": self.describe(names)}
        return {k: v for k, v in out.items() if v is not None}

    def __str__(self) -> str:
        return self.describe()


def _plain(value: Any) -> Any:
    """``value`` as a JSON number, string or list of them."""
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, int):
        return value
    if isinstance(value, float):
        return value if value == value and abs(value) != float("inf") else str(value)
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return str(value)


class SolvselNote(UserWarning):
    """A note about an input that is not an error (e.g. a file read as Windows-1252, not UTF-8)."""


class InputError(SolvselError, ValueError):
    """An argument or a value given by the user is malformed or inconsistent."""

    title = "Bad input"
    error_kind = "input"


class OutOfRangeError(InputError):
    """A number is outside the range in which the method is valid."""

    title = "Value out of range"
    error_kind = "out_of_range"


class FileError(InputError):
    """A file cannot be used: missing, a folder or a device, unreadable, not text, too large, or it
    cannot be written (a read-only folder, a full disk).  ``path`` names the file."""

    title = "File problem"
    error_kind = "file"


class MissingDataError(SolvselError, LookupError):
    """The data needed for a computation are not known for this substance."""

    title = "Data missing"
    error_kind = "missing_data"


class MissingExtraError(SolvselError, ImportError):
    """A part of solvsel needs an optional dependency that is not installed.

    The message names the extra to install (``pip install 'solvsel[structure]'``).
    """

    title = "Optional part not installed"
    error_kind = "missing_extra"

    def __init__(self, extra: str, what: str, module: str) -> None:
        self.extra = extra
        self.module = module
        super().__init__(
            f"{what} needs the package '{module}', which is not installed; install the extra with "
            f"pip install 'solvsel[{extra}]'"
        )


class TableError(SolvselError, ValueError):
    """A data table (bundled or the user's own) is malformed.

    The message always names the file, and the row (1-based, header is row 1)
    and column where they apply, and what was expected.
    """

    title = "Bad table"
    error_kind = "table"

    def __init__(self, path, message: str, row: int | None = None, column: str | None = None,
                 *, param: str | None = None, expected: str | None = None):
        super().__init__(message, param=param, expected=expected, path=str(path), row=row, column=column)


class UnknownNameError(SolvselError, KeyError):
    """A substance name, synonym or CAS number is not known.

    ``suggestions`` holds the closest known names, best first.
    """

    title = "Unknown name"
    error_kind = "unknown_name"

    def __init__(self, name: str, kind: str = "substance", suggestions: tuple[str, ...] = (),
                 *, param: str | None = None):
        self.name = name
        self.kind = kind
        self.suggestions = tuple(suggestions)
        msg = f"no {kind} named '{name}'"
        if self.suggestions:
            msg += "; closest: " + ", ".join(f"'{s}'" for s in self.suggestions)
        super().__init__(msg, param=param, value=name,
                         expected=f"a known {kind}" + (f" such as '{self.suggestions[0]}'" if self.suggestions else ""))

    def as_json(self, names=None) -> dict[str, Any]:
        """As :meth:`SolvselError.as_json`, with the closest known names as ``suggestions``."""
        out = super().as_json(names)
        if self.suggestions:
            out["suggestions"] = list(self.suggestions)
        return out
