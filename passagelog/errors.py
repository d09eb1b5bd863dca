"""Errors raised by passagelog's library layers.

Library code raises these and never prints or exits; the front ends map them to one plain
line on stderr and an exit code. Every message names the thing, the field, the value and
what is allowed, and, for files, where (file and line, or XML element).
"""

from __future__ import annotations


class PassagelogError(Exception):
    """Base of every error passagelog raises on purpose."""

    exit_code = 1


class InputError(PassagelogError, ValueError):
    """A value or a document that cannot be accepted.

    ``where`` is a human-readable place such as ``"route.csv, line 12"`` or
    ``"fixes.nmea, line 5000, field 3"``; it is put in front of the message.
    """

    def __init__(self, message: str, *, where: str | None = None):
        self.reason = message
        self.where = where
        super().__init__(f"{where}: {message}" if where else message)

    def at(self, where: str) -> "InputError":
        """The same error placed at ``where`` (outermost place first)."""
        place = f"{where}, {self.where}" if self.where else where
        err = type(self).__new__(type(self))
        InputError.__init__(err, self.reason, where=place)
        return err


class PositionError(InputError):
    """A latitude, longitude or position that cannot be read or is out of range."""


class FormatError(InputError):
    """A file that is not valid in the format it claims (NMEA 0183, GPX, RTZ, CSV)."""


class GeometryError(PassagelogError, ValueError):
    """A navigation problem with no defined answer (for example a zero-length leg's course)."""


class StoreError(PassagelogError):
    """The logbook refused an operation."""


class BusyError(StoreError):
    """The logbook stayed locked by another writer for longer than the busy timeout."""


class NotFoundError(StoreError, LookupError):
    """A craft, voyage, plan, fix or entry that is not in the logbook."""


class IntegrityError(StoreError):
    """The logbook's record chain does not verify."""
