"""Errors raised for user mistakes.

Every function that takes user input raises :class:`FloodInputError` with a one-line message that
names the field, the bad value and the valid range. The command line and the dashboard show only
these errors as messages; anything else is a bug and surfaces in the tests.
"""

from __future__ import annotations


class FloodInputError(ValueError):
    """A user input is out of range, of the wrong type, or physically inconsistent.

    Parameters
    ----------
    field : str
        Dotted path of the offending input, e.g. ``"saturations.swi"``.
    value : object
        The value that was given.
    expected : str
        The valid range or form, in words, e.g. ``"0 < porosity <= 1"``.
    reason : str, optional
        A short physical explanation ("no movable oil").
    """

    def __init__(self, field: str, value: object, expected: str, reason: str = ""):
        self.field = field
        self.value = value
        self.expected = expected
        self.reason = reason
        text = f"{field} = {_short(value)}: {expected}"
        if reason:
            text += f" ({reason})"
        super().__init__(text)


def _short(value: object, limit: int = 60) -> str:
    """Return a one-line, length-capped representation of ``value``."""
    text = repr(value) if not isinstance(value, str) else repr(value)
    text = " ".join(text.split())
    return text if len(text) <= limit else text[: limit - 3] + "..."
