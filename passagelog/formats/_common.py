"""Shared pieces of the readers: sources, places in files, the read summary."""

from __future__ import annotations

import io
import os
from collections import Counter
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path
from typing import IO, Iterator, Union

from passagelog.errors import FormatError

#: How many places (line numbers or element paths) a summary keeps per reason.
FIRST_PLACES = 5

#: Bytes read from the start of a file to tell its format.
HEAD_BYTES = 8192

Source = Union[str, "os.PathLike[str]", IO[str]]


def source_name(source: Source) -> str:
    """A short name for messages: the file name, or the stream's name, or ``<stdin>``."""
    if isinstance(source, (str, os.PathLike)):
        return "<stdin>" if str(source) == "-" else Path(source).name
    name = getattr(source, "name", None)
    if isinstance(name, str) and name and not name.startswith("<"):
        return Path(name).name
    return "<stdin>" if name in (None, "<stdin>", 0) else str(name)


def where(name: str, line: int | None = None, element: str | None = None) -> str:
    """``name, line N`` or ``name, element PATH``."""
    if line is not None:
        return f"{name}, line {line}"
    if element is not None:
        return f"{name}, element {element}"
    return name


def read_head(source: Source) -> str:
    """The first few kilobytes of ``source`` as text (latin-1, never fails), for detection.

    A stream is not consumed: only paths are read here; for a stream the caller passes the
    text it peeked.
    """
    with open(source, "rb") as fh:  # type: ignore[arg-type]
        return fh.read(HEAD_BYTES).decode("latin-1")


def open_text(source: Source, *, encoding: str, newline: str | None) -> tuple[IO[str], bool]:
    """An open text stream on ``source`` and whether the caller must close it."""
    if isinstance(source, (str, os.PathLike)):
        try:
            return open(source, "r", encoding=encoding, newline=newline), True
        except OSError as exc:
            raise FormatError(f"cannot open the file: {exc.strerror}",
                              where=source_name(source)) from None
    return source, False


def peek_stream(stream: IO[str]) -> tuple[str, IO[str]]:
    """Peek at the head of a text stream; returns the head and a stream that replays it."""
    head = stream.read(HEAD_BYTES)
    if len(head) == HEAD_BYTES:
        head += stream.readline()  # finish the line so no line is split in two
    replay = _Chained(head, stream)
    return head, replay  # type: ignore[return-value]


class _Chained(io.TextIOBase):
    """A text stream: ``head`` first, then the rest of ``stream`` (line iteration only)."""

    def __init__(self, head: str, stream: IO[str]):
        self._head = io.StringIO(head, newline="")
        self._stream = stream
        self.name = getattr(stream, "name", "<stdin>")

    def readable(self) -> bool:
        return True

    def read(self, size: int | None = -1) -> str:
        text = self._head.read()
        return text + self._stream.read()

    def __iter__(self) -> Iterator[str]:
        pending = ""
        for line in self._head:
            if line.endswith("\n"):
                yield line
            else:
                pending = line
        for line in self._stream:
            if pending:
                line, pending = pending + line, ""
            yield line
        if pending:
            yield pending


@dataclass
class ReadSummary:
    """What a reader did with its input, filled in as it goes.

    ``rejected`` counts lines (or elements) that could not be used, by reason; ``dropped``
    counts good data not kept (the same epoch from another talker, thinning, ...);
    ``ignored`` counts sentence types that carry nothing for a fix (GSV, GSA, ...).
    ``rejected_at`` keeps the first few places (line numbers, or element paths) per reason.
    """

    source: str
    lines_read: int = 0
    lines_used: int = 0
    blank_lines: int = 0
    fixes_kept: int = 0
    rejected: Counter = field(default_factory=Counter)
    rejected_at: dict[str, list] = field(default_factory=dict)
    dropped: Counter = field(default_factory=Counter)
    ignored: Counter = field(default_factory=Counter)
    first_time_utc: datetime | None = None
    last_time_utc: datetime | None = None

    def reject(self, reason: str, place: int | str, count: int = 1) -> None:
        self.rejected[reason] += count
        places = self.rejected_at.setdefault(reason, [])
        if len(places) < FIRST_PLACES:
            places.append(place)

    @property
    def lines_rejected(self) -> int:
        return sum(self.rejected.values())

    def as_dict(self) -> dict:
        def iso(t: datetime | None) -> str | None:
            return None if t is None else t.astimezone(timezone.utc).isoformat().replace(
                "+00:00", "Z")

        return {
            "source": self.source,
            "lines_read": self.lines_read,
            "lines_used": self.lines_used,
            "blank_lines": self.blank_lines,
            "fixes_kept": self.fixes_kept,
            "rejected": {r: {"count": n, "first": list(self.rejected_at.get(r, []))}
                         for r, n in sorted(self.rejected.items())},
            "dropped": dict(sorted(self.dropped.items())),
            "ignored": dict(sorted(self.ignored.items())),
            "first_time_utc": iso(self.first_time_utc),
            "last_time_utc": iso(self.last_time_utc),
        }

    def report_lines(self) -> list[str]:
        """The summary as a few plain lines for a terminal."""
        out = [f"{self.source}: {self.lines_read} lines read, {self.fixes_kept} fixes kept"]
        for reason, count in sorted(self.rejected.items(), key=lambda kv: (-kv[1], kv[0])):
            places = self.rejected_at.get(reason, [])
            kind = "line" if places and isinstance(places[0], int) else "at"
            shown = ", ".join(str(p) for p in places)
            more = ", ..." if count > len(places) else ""
            label = "lines" if kind == "line" and len(places) > 1 else kind
            out.append(f"  rejected {count}: {reason} ({label} {shown}{more})")
        for reason, count in sorted(self.dropped.items()):
            out.append(f"  not kept {count}: {reason}")
        if self.ignored:
            kinds = ", ".join(f"{k} {n}" for k, n in sorted(self.ignored.items()))
            out.append(f"  ignored: {kinds}")
        return out


def decimal_text(value: float) -> str:
    """The shortest text that reads back as exactly ``value``, without an exponent.

    ``repr`` writes tiny or huge numbers as ``1e-07``; GPX and RTZ number attributes are
    ``xs:decimal`` (no exponent allowed) and the CSV position cells are read as positions,
    so those are spelt out in positional notation, still exact.
    """
    text = repr(float(value))
    if "e" in text or "E" in text:
        from decimal import Decimal

        text = format(Decimal(text), "f")
        if "." not in text:
            text += ".0"
    return text
