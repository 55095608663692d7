"""Errors for user mistakes, each carrying the file and the place in it.

One exception type per kind of mistake; the edge (CLI, window) turns each into one message.
"""

from __future__ import annotations


class SwatheInputError(ValueError):
    """Bad input: names the file, the place in it and what was expected.

    Parameters
    ----------
    file : str
        The file the input came from (or a description such as ``"<inline>"``).
    place : str
        Where in the file: a key path such as ``chassis.track_m`` or ``line 3, column 7``.
    expected : str
        What was expected there, in words a user understands.
    """

    def __init__(self, file: str, place: str, expected: str) -> None:
        self.file = str(file)
        self.place = str(place)
        self.expected = str(expected)
        super().__init__(self.message)

    @property
    def message(self) -> str:
        """``file: place: expected`` on one line that any terminal can print: line breaks
        become spaces and text UTF-8 cannot encode (lone surrogates) becomes escapes."""
        where = f"{self.file}: {self.place}" if self.place else self.file
        text = f"{where}: {self.expected}".encode("utf-8", "backslashreplace").decode("utf-8")
        return " ".join(text.splitlines()) if ("\n" in text or "\r" in text) else text


class FileReadError(SwatheInputError):
    """The file is missing, unreadable, or not valid JSON / DXF / SVG."""


class ValidationError(SwatheInputError):
    """The file parses but a value is missing, of the wrong type or out of range."""


class GeometryError(SwatheInputError):
    """A shape is not usable: a self-intersecting footprint, a degenerate polygon, ..."""
