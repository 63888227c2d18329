"""Exceptions raised by the library.

One root exception, :class:`MastplanError`; one subclass per kind of problem.
Each message is one line that names the field and the fix, so the command
line can print it as it is.
"""

__all__ = ["MastplanError", "SiteFileError", "OutputError", "TerrainError", "printable"]


def printable(text: str) -> str:
    """Text fit for a one-line message: control and other unprintable characters as escapes."""
    if text.isprintable():
        return text
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode("ascii") for c in text)


class MastplanError(Exception):
    """Root of every error the library raises on purpose."""


class SiteFileError(MastplanError, ValueError):
    """A site file that cannot be read, or a value in it that is not allowed.

    Parameters
    ----------
    field : str
        Dotted name of the offending field, e.g. ``"runway.width"``; empty
        when the problem is the file as a whole.
    problem : str
        What is wrong, and what is allowed.
    source : str, optional
        The file name, put in front of the message.
    """

    def __init__(self, field: str, problem: str, source: str = ""):
        self.field = printable(field)
        self.problem = " ".join(problem.split())
        self.source = source
        parts = [p for p in (source, self.field) if p]
        super().__init__(": ".join([*parts, self.problem]))

    def with_source(self, source: str) -> "SiteFileError":
        """Return the same error with the file name in front."""
        return SiteFileError(self.field, self.problem, source)


class TerrainError(MastplanError, ValueError):
    """A terrain model that cannot serve the study (off the site, holes, ...)."""


class OutputError(MastplanError, OSError):
    """An output folder that cannot be written as asked."""
