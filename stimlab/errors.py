"""The one error type that stimlab raises for bad input from a person: a file, a form, an option.

Colour maths raises plain :class:`ValueError` naming the argument and its range; readers of files and the
protocol compiler raise :class:`InputError`, which also knows *where* the problem is (file, row, column or JSON
path) so that the command line, the web pages and the API can all say it in one line.
"""

from __future__ import annotations


class InputError(ValueError):
    """Bad input, with where it is and how to fix it.

    Parameters
    ----------
    message
        What is wrong and what to do, in plain words.
    file
        The file it came from, if any.
    row
        1-based row of a CSV file (the header is row 1), if any.
    field
        Column name, option name or JSON path (``stimuli[2].colour.dkl[1]``), if any.
    """

    def __init__(self, message: str, *, file: str | None = None, row: int | None = None,
                 field: str | None = None):
        super().__init__(message)
        self.message = message
        self.file = file
        self.row = row
        self.field = field

    def where(self) -> str:
        """The location as one short phrase.

        Examples
        --------
        >>> InputError("x", file="spectra.csv", row=7, field="red").where()
        "spectra.csv row 7, column 'red'"
        >>> InputError("x", file="p.json", field="stimuli[2].colour.dkl[1]").where()
        'p.json, at stimuli[2].colour.dkl[1]'
        >>> InputError("x", field="--background").where()
        'option --background'
        """
        if self.row is not None:
            place = f"row {self.row}" + (f", column '{self.field}'" if self.field else "")
        elif self.field:
            place = f"option {self.field}" if self.field.startswith("-") else f"at {self.field}"
        else:
            place = ""
        if self.file and place:
            return f"{self.file} {place}" if self.row is not None else f"{self.file}, {place}"
        return self.file or place

    def __str__(self) -> str:
        where = self.where()
        return f"{where}: {self.message}" if where else self.message


class NotFoundError(InputError):
    """Something asked for by number or name (a session, a display, a protocol) does not exist."""


class ConflictError(InputError):
    """The request clashes with what is stored (a file changed on disk, a batch key with other content)."""
