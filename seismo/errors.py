"""Exceptions raised by seismo for unusable input and impossible options.

Two failure channels (see docs/guide.md): exceptions for input that cannot be
analysed at all, flags in the result for measurements that fail. Everything
here is the first channel.

Every error carries ``path`` (the file concerned, or ``None``) and ``hint``
(what the user can do about it); ``str(err)`` is a single line suitable for
the command line.
"""

from __future__ import annotations

__all__ = [
    "SeismoError",
    "InputError",
    "MissingFileError",
    "UnreadableFileError",
    "ColumnError",
    "NoFiniteDataError",
    "TooFewPointsError",
    "BaselineTooShortError",
    "TimeUnitError",
    "ConstantFluxError",
    "OptionError",
]


class SeismoError(Exception):
    """Base class of every error seismo raises on purpose.

    Parameters
    ----------
    message : str
        What was wrong, in one sentence.
    path : str or None
        The input file concerned, if any.
    hint : str or None
        What the user can do about it.
    """

    def __init__(self, message: str, *, path: str | None = None, hint: str | None = None):
        self.message = message
        self.path = None if path is None else str(path)
        self.hint = hint
        super().__init__(self.one_line())

    def one_line(self) -> str:
        """Return ``"<path>: <message>; <hint>"`` on a single line."""
        text = self.message
        if self.path:
            text = f"{self.path}: {text}"
        if self.hint:
            text = f"{text}; {self.hint}"
        return " ".join(text.split())

    def with_path(self, path: str) -> SeismoError:
        """Attach a file path to an error raised before the path was known."""
        if self.path is None:
            self.path = str(path)
            self.args = (self.one_line(),)
        return self


class InputError(SeismoError, ValueError):
    """The input cannot be analysed (base of all bad-input errors)."""


class MissingFileError(InputError):
    """The named file does not exist or is not a regular file."""


class UnreadableFileError(InputError):
    """The file exists but is not a light curve in a format seismo reads."""


class ColumnError(InputError):
    """No time or flux column could be identified, or the choice is ambiguous."""


class NoFiniteDataError(InputError):
    """Every time or flux value is NaN or infinite (or every row is flagged)."""


class TooFewPointsError(InputError):
    """Fewer valid points remain than the analysis needs."""


class BaselineTooShortError(InputError):
    """The time span of the valid data is too short."""


class TimeUnitError(InputError):
    """The times do not look like days (implausible cadence or baseline)."""


class ConstantFluxError(InputError):
    """The flux does not vary: there is nothing to analyse."""


class OptionError(SeismoError, ValueError):
    """An option or argument has an impossible value."""
