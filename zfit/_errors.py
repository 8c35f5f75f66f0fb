"""Exceptions and warnings of zfit.

Errors subclass the built-ins so that callers can catch them either way.
Every input error carries the file and, where known, the line it concerns,
so that the command line can print one line that points at the problem.
"""

from __future__ import annotations

__all__ = [
    "ZfitError",
    "ZfitInputError",
    "OutputExistsError",
    "FitError",
    "MeasurementWarning",
]


class ZfitError(Exception):
    """Base class of every error zfit raises on purpose."""


class ZfitInputError(ZfitError, ValueError):
    """Bad input: a file, a column, an option value.

    Parameters
    ----------
    message : str
        What is wrong, in plain language.
    path : str or os.PathLike, optional
        The file concerned.
    line : int, optional
        The 1-based line number in that file.
    """

    def __init__(self, message: str, path=None, line: int | None = None):
        self.message = message
        self.path = None if path is None else str(path)
        self.line = line
        super().__init__(self.one_line())

    def one_line(self) -> str:
        """Return ``file:line: message`` (the parts that are known)."""
        where = ""
        if self.path is not None:
            where = self.path + (f":{self.line}" if self.line is not None else "") + ": "
        elif self.line is not None:
            where = f"line {self.line}: "
        return where + self.message


class OutputExistsError(ZfitInputError):
    """An output file exists and ``force`` was not given."""

    def __init__(self, path):
        super().__init__("exists already; give --force to overwrite it", path=path)


class FitError(ZfitError, ValueError):
    """A fit cannot be done as asked (too few points for the unknowns, say)."""


class MeasurementWarning(UserWarning):
    """Something about the measurement the user should know (poor conditioning,
    resonance outside the band, points dropped)."""
