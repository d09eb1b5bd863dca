"""Shared pieces of the TUI tests: a fixed clock and a fixed voyage."""

from __future__ import annotations

from datetime import datetime, timezone

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
        (LegPlan("great-circle", 12.0, 1852.0, 1852.0, 926.0),
         LegPlan("great-circle", 12.0, 3704.0, 3704.0, 1852.0),
         LegPlan("great-circle", 11.0, 3704.0, 3704.0, None)),
        revision=1,
    )


@pytest.fixture
def logbook_path(tmp_path):
    """A temp-file logbook with a craft, a voyage and the sample plan (revision 1)."""
    pytest.importorskip("passagelog.store.logbook")
    import passagelog.store as store
    from passagelog.model import Craft

    path = tmp_path / "logbook.sqlite"
    book = store.Logbook.open(path)
    craft = book.add_craft(Craft("Kestrel", max_speed_kn=20.0))
    plan_id, _ = book.create_plan(sample_route(), "created")
    book.add_voyage(Voyage("Trial passage", craft_id=craft.craft_id,
                           departure_utc=datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc),
                           zd_minutes=60, plan_id=plan_id))
    book.close()
    return path


@pytest.fixture
def session(logbook_path):
    from passagelog.tui.session import Session

    return Session(logbook_path, clock=fixed_clock)


@pytest.fixture
def sample_plan() -> Route:
    return sample_route()
