"""The Textual terminal UI: Plan, Log, Watch and Review views over one logbook.

Textual is imported only inside this package (and only when the UI opens), so the command
line starts fast. Open it with :func:`run_app`.
"""

from __future__ import annotations

from pathlib import Path


def run_app(db_path: str | Path, *, voyage: str | int | None = None) -> None:
    """Open the terminal UI on the logbook at ``db_path`` (blocks until the user quits);
    when the user opens another voyage (Ctrl+O), the app starts again on it."""
    from passagelog.tui.app import OpenVoyage, PassagelogApp

    while True:
        result = PassagelogApp(db_path, voyage=voyage).run()
        if not isinstance(result, OpenVoyage):
            return
        voyage = result.voyage_id
