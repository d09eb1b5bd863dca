"""The tables of the UI: a DataTable that repaints all of itself once it has measured its
rows.

A DataTable sizes its columns for new rows only when its message queue is idle. On a busy
machine it can paint before that, with the columns as wide as their labels; when the
measuring leaves the table's size as it was, only the rows that change again (the cursor's)
were painted anew, so a list could stay half in narrow columns until the next key. Here every
line is painted again after each measuring (this uses private parts of Textual's
DataTable, which is pinned; tests/tui/test_table.py tells when it is no longer needed).
"""

from __future__ import annotations

from textual import events
from textual.widgets import DataTable


class Table(DataTable):
    """A :class:`~textual.widgets.DataTable` whose lines are all painted again once new rows
    or changed cells have been measured."""

    async def _on_idle(self, event: events.Idle) -> None:
        measuring = self._require_update_dimensions or bool(self._updated_cells)
        await super()._on_idle(event)
        if measuring:
            self._update_count += 1  # the key of its line caches: paint anew, not from them
            self.refresh()
