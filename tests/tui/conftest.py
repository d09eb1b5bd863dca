"""Shared pieces of the TUI tests: a fixed clock and a fixed voyage."""

from __future__ import annotations

from datetime import datetime, timezone
from pathlib import Path

import pytest

from passagelog.model import LegPlan, Route, Voyage, Waypoint

FIXED_NOW = datetime(2026, 5, 2, 12, 0, tzinfo=timezone.utc)


def fixed_clock() -> datetime:
    return FIXED_NOW


def sample_route() -> Route:
    return Route(
        "Channel to Azores",
        (Waypoint("Start", 49.9, -5.5), Waypoint("Ushant W", 48.5, -8.0),
         Waypoint("Mid", 43.0, -18.0), Waypoint("Ponta", 37.8, -25.6)),
        (LegPlan("rhumb", 12.0, 1852.0, 1852.0, 926.0),
         LegPlan("great-circle", 12.0, 3704.0, 3704.0, 1852.0),
         LegPlan("great-circle", 11.0, 3704.0, 3704.0, None)),
        revision=1,
    )


class MemorySession:
    """A stand-in for :class:`passagelog.tui.session.Session` that keeps everything in memory."""

    def __init__(self, route: Route | None = None):
        self.db_path = Path("memory.sqlite")
        self.clock = fixed_clock
        self.voyage = Voyage("Trial passage", departure_utc=datetime(2026, 5, 1, 6, 0,
                                                                     tzinfo=timezone.utc),
                             zd_minutes=60, plan_id=1, voyage_id=1)
        self.route = route or sample_route()
        self.revisions: list[tuple[Route, str]] = []
        self.counter = 0

    @property
    def zd_minutes(self) -> int:
        return self.voyage.zd_minutes

    def now(self) -> datetime:
        return self.clock()

    def save_revision(self, route: Route, note: str) -> Route:
        rev = (self.route.revision or 0) + 1
        self.route = route.with_changes(revision=rev, note=note)
        self.revisions.append((self.route, note))
        self.counter += 1
        return self.route


@pytest.fixture
def memory_session() -> MemorySession:
    return MemorySession()
