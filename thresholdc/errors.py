"""Error types raised by every layer of thresholdc.

User mistakes raise a :class:`ThresholdcError` (or a subclass) that carries the file, and where
there is one, the line, column and source line; the command line prints it with
:meth:`ThresholdcError.render` and exits 2.  Broken internal invariants are assertions or an
:class:`InternalError` (not a ThresholdcError, so no handler of user errors swallows one): the
command line reports them as a bug in thresholdc and exits 3.

>>> err = RuleError("unknown name 'b'", file="x.rules", line=2, column=5, source_line="y = a or b")
>>> print(err.render())
thresholdc: error: x.rules:2:5: unknown name 'b'
y = a or b
    ^
"""

from __future__ import annotations

from dataclasses import dataclass

from .textlines import split_lines
from .version import __version__

__all__ = [
    "Span",
    "ThresholdcError",
    "RuleError",
    "NetworkFileError",
    "DataError",
    "UsageError",
    "VerificationUndecided",
    "InternalError",
    "internal_message",
]


@dataclass(frozen=True, slots=True)
class Span:
    """A position in a source text: 1-based line and column of the first character."""

    line: int
    column: int
    end_line: int | None = None
    end_column: int | None = None

    def __repr__(self) -> str:
        return f"{self.line}:{self.column}"


class ThresholdcError(Exception):
    """Base of every user-facing error; carries an optional source position.

    ``exit_code`` is what the command line exits with (2: bad input or usage).
    """

    exit_code = 2

    def __init__(
        self,
        message: str,
        *,
        file: str | None = None,
        line: int | None = None,
        column: int | None = None,
        source_line: str | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.file = file
        self.line = line
        self.column = column
        self.source_line = source_line

    def with_file(self, file: str, text: str | None = None) -> ThresholdcError:
        """Return this error with its file name (and source line, taken from ``text``) set."""
        self.file = file
        if text is not None and self.line is not None and self.source_line is None:
            lines = split_lines(text)
            if 1 <= self.line <= len(lines):
                self.source_line = lines[self.line - 1]
        return self

    def location(self) -> str:
        """``FILE:LINE:COL``, ``FILE:LINE`` or ``FILE`` (whatever is known)."""
        parts = [self.file or "<input>"]
        if self.line is not None:
            parts.append(str(self.line))
            if self.column is not None:
                parts.append(str(self.column))
        return ":".join(parts)

    def render(self) -> str:
        """The text printed on stderr: one line, plus source line and caret where known."""
        if self.file is None and self.line is None:
            return f"thresholdc: error: {self.message}"
        head = f"thresholdc: error: {self.location()}: {self.message}"
        if self.line is None or self.column is None or self.source_line is None:
            return head
        src = self.source_line.rstrip("\r\n")
        # Keep the line exactly; the caret line copies its tabs so it lines up at any width.
        pad = "".join("\t" if ch == "\t" else " " for ch in src[: self.column - 1])
        return f"{head}\n{src}\n{pad}^"

    def __str__(self) -> str:
        if self.file is None and self.line is None:
            return self.message  # nothing to point at (e.g. an option given to the API)
        return f"{self.location()}: {self.message}"


class RuleError(ThresholdcError):
    """A mistake in a rule file or netlist (syntax, names, cycles, ranges)."""


class NetworkFileError(ThresholdcError):
    """A network file that cannot be read: not JSON, wrong format, inconsistent contents."""


class DataError(ThresholdcError):
    """A data file that cannot be used: missing column, unknown category, bad value."""


class UsageError(ThresholdcError):
    """Options or arguments that do not fit together (exit code 2)."""


class VerificationUndecided(ThresholdcError):
    """No available verification method could decide within its bounds (exit code 2)."""


def internal_message(message: str) -> str:
    """The one line printed for a bug in thresholdc, with the version to report.

    >>> internal_message("x").startswith("thresholdc: internal error: x (thresholdc ")
    True
    """
    return f"thresholdc: internal error: {message} (thresholdc {__version__}; please report)"


class InternalError(Exception):
    """A broken invariant of thresholdc itself (a bug, never bad input): exit code 3.

    >>> print(InternalError("neuron 'n' has layer 2").render())  # doctest: +ELLIPSIS
    thresholdc: internal error: neuron 'n' has layer 2 (thresholdc ...; please report)
    """

    exit_code = 3

    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message

    def render(self) -> str:
        """The line printed on stderr."""
        return internal_message(self.message)
