"""The one exception family of heatloom.

Every error a user can cause or meet derives from :class:`HeatloomError` and from the builtin it
refines, so ``except ValueError`` keeps working for callers who do not know this package.  The
command line turns them into one line on stderr and an exit code (see ``heatloom.cli``):

=========================  ============================  =========
exception                  raised for                    exit code
=========================  ============================  =========
:class:`InputError`        bad data, file or option      2
:class:`InfeasibleError`   a problem with no solution    3
:class:`SolverError`       a solver failed or is absent  1
=========================  ============================  =========
"""

from __future__ import annotations

__all__ = [
    "HeatloomError",
    "InputError",
    "TemperatureCrossError",
    "InfeasibleError",
    "SolverError",
    "SolverUnavailableError",
]


class HeatloomError(Exception):
    """Base class of every error raised on purpose by heatloom."""


class InputError(HeatloomError, ValueError):
    """Bad input: a file, a table cell, an option or an argument.

    Parameters
    ----------
    message : str
        What is wrong, naming the value and the allowed range or set.
    file : str, optional
        The file the value came from.
    row : int, optional
        The row as the user sees it in a spreadsheet (1-based, header included).
    column : str, optional
        The column header as the user wrote it.

    Examples
    --------
    >>> str(InputError("CP must be > 0, got -2", file="s.csv", row=3, column="CP"))
    "s.csv, row 3, column 'CP': CP must be > 0, got -2"
    """

    def __init__(self, message: str, *, file: str | None = None, row: int | None = None,
                 column: str | None = None) -> None:
        self.message = message
        self.file = file
        self.row = row
        self.column = column
        super().__init__(self.__str__())

    def located(self, *, file: str | None = None, row: int | None = None,
                column: str | None = None) -> InputError:
        """Return a copy of this error with the missing location parts filled in."""
        return type(self)(self.message, file=self.file or file,
                          row=self.row if self.row is not None else row,
                          column=self.column or column)

    def __str__(self) -> str:
        where = []
        if self.file:
            where.append(str(self.file))
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.column:
            where.append(f"column '{self.column}'")
        return f"{', '.join(where)}: {self.message}" if where else self.message

    def __reduce__(self):  # keep pickling (process pools) working with keyword-only arguments
        return (_rebuild_input_error, (type(self), self.message, self.file, self.row, self.column))


def _rebuild_input_error(cls, message, file, row, column):
    return cls(message, file=file, row=row, column=column)


class TemperatureCrossError(InputError):
    """A heat exchange asked for across a temperature cross (no driving force at one end)."""


class InfeasibleError(HeatloomError, RuntimeError):
    """The problem as posed has no solution (for example no utility hot enough)."""


class SolverError(HeatloomError, RuntimeError):
    """An optimisation solver failed, stopped without a solution, or returned nonsense."""


class SolverUnavailableError(SolverError, ImportError):
    """The solver asked for is not installed."""
