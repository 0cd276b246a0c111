"""Error types that carry enough position information for a person to act on.

Every problem with user input ends as a `ClaimError`, printed in the form
`path:line:col: field: message` that editors can jump to (lines and columns
1-based).  Parsing an expression raises `ExprError` with a 0-based offset into
the expression text; the claim loader turns it into a `ClaimError` at the right
place in the file.
"""

from __future__ import annotations


class CrosscheckError(Exception):
    """Base class of all errors raised deliberately by crosscheck."""


class ExprError(CrosscheckError):
    """An expression text was rejected by the safe parser.

    `column` is the 0-based character offset into the expression text where
    the problem starts, or None when the whole text is at fault (too long...).
    """

    def __init__(self, message: str, column: int | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.column = column


class ClaimError(CrosscheckError):
    """A claim file is malformed.  Positions are 1-based, as people count."""

    def __init__(self, path: str, line: int, column: int, field: str, message: str) -> None:
        self.path = path
        self.line = line
        self.column = column
        self.field = field
        self.message = message
        super().__init__(str(self))

    def __str__(self) -> str:
        where = f"{self.path}:{self.line}:{self.column}"
        return f"{where}: {self.field}: {self.message}" if self.field else f"{where}: {self.message}"


class CannotCompute(CrosscheckError):
    """A route cannot produce an observable for this problem (not an error).

    Raised by a route's symbolic or numeric side when, for instance, the
    horizon is only known as a numeric root and no closed form exists.  The
    runner records the reason and falls back to the other side.
    """


class DimensionError(CrosscheckError):
    """An expression adds or compares quantities of different dimensions."""
