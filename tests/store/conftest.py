"""Temp-file logbooks for the store tests."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from passagelog.model import Craft, Route, Voyage, Waypoint
from passagelog.store import Logbook

T0 = datetime(2026, 3, 1, 12, 0, tzinfo=timezone.utc)


class Clock:
    """A clock for record stamps that advances one second per reading."""

    def __init__(self, start: datetime = datetime(2026, 3, 2, 8, 0, tzinfo=timezone.utc)):
        self.now = start

    def __call__(self) -> datetime:
        self.now += timedelta(seconds=1)
        return self.now


@pytest.fixture
def book(tmp_path):
    with Logbook.open(tmp_path / "log.sqlite", clock=Clock()) as b:
        yield b


@pytest.fixture
def voyage(book):
    craft = book.add_craft(Craft("Kestrel", max_speed_kn=12.0, usual_speed_kn=8.0))
    return book.add_voyage(Voyage("Solent run", craft_id=craft.craft_id, from_place="Cowes",
                                  to_place="Poole", zd_minutes=0))


@pytest.fixture
def route():
    return Route("Solent", (Waypoint("Cowes", 50.77, -1.30), Waypoint("Needles", 50.66, -1.60),
                            Waypoint("Poole", 50.68, -1.94)))


@pytest.fixture
def row_counts():
    """A function giving the row count of every table of a logbook."""
    def counts(book: Logbook) -> dict[str, int]:
        tables = [t for (t,) in book._q("SELECT name FROM sqlite_master WHERE type = 'table'")]
        return {t: book._q(f"SELECT count(*) FROM {t}")[0][0] for t in tables}
    return counts
