"""The Textual terminal UI: Plan, Log, Watch and Review views over one logbook.

Textual is imported only inside this package (and only when the UI opens), so the command
line starts fast. Open it with :func:`run_app`.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from datetime import datetime, timedelta
from pathlib import Path

#: How long after the voyage's latest fix the demo's clock starts.
DEMO_CLOCK_AFTER = timedelta(minutes=3)


def run_app(db_path: str | Path, *, voyage: str | int | None = None,
            voyage_clock: bool = False) -> None:
    """Open the terminal UI on the logbook at ``db_path`` (blocks until the user quits);
    when the user opens another voyage (Ctrl+O), the app starts again on it.

    With ``voyage_clock`` (the demo) the UI's clock is not this computer's: it starts
    :data:`DEMO_CLOCK_AFTER` after the open voyage's latest fix and runs on from there, so
    that a finished voyage dated in the past or the future reads as one just logged (the
    age of the latest fix, a fix logged "now"); the header says so.
    """
    from passagelog.tui.app import OpenVoyage, PassagelogApp

    while True:
        clock, note = (voyage_clock_for(db_path, voyage) if voyage_clock
                       else (None, ""))
        kwargs = {"clock": clock, "clock_note": note} if clock is not None else {}
        result = PassagelogApp(db_path, voyage=voyage, **kwargs).run()
        if not isinstance(result, OpenVoyage):
            return
        voyage = result.voyage_id


def voyage_clock_for(db_path: str | Path, voyage: str | int | None
                     ) -> tuple[Callable[[], datetime] | None, str]:
    """A clock that starts :data:`DEMO_CLOCK_AFTER` after the latest fix of ``voyage`` and
    runs at the pace of this computer's, and the note the header shows; ``(None, "")``
    when the voyage has no fix."""
    from passagelog.tui.session import Session

    session = Session(db_path, voyage=voyage)
    try:
        latest = session.fix_records_before(None, limit=1) if session.voyage else []
    finally:
        session.close()
    if not latest:
        return None, ""
    start = latest[0].time_utc + DEMO_CLOCK_AFTER
    began = time.monotonic()

    def clock() -> datetime:
        return start + timedelta(seconds=time.monotonic() - began)

    return clock, "demo clock"
