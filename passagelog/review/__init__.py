"""The reconciliation engine: fixes against the plan, per fix and per leg.

>>> review = reconcile(route, fixes, departure_utc=..., zd_minutes=...)   # doctest: +SKIP
>>> review.fixes.xte_m          # numpy column, one value per valid fix in time order
>>> review.rows("legs")         # table rows (dicts with stable keys)
>>> review.status()             # the latest fix, as a watch officer wants it
>>> watch(route, fixes)         # the same, quicker on a long voyage

Imports only the navigation core and the domain model: no SQL, no files.
"""

from passagelog.review.engine import DEFAULT_GAP_S, DEFAULT_WINDOW_S, reconcile, watch
from passagelog.review.inputs import FixArrays, as_fix_arrays, clocks_from, from_fixes
from passagelog.review.noon import ship_noons
from passagelog.review.results import (
    PHASES,
    TABLE_COLUMNS,
    TABLES,
    Episode,
    FixResults,
    Gap,
    LegStats,
    NoonFigures,
    Passage,
    Review,
    SuspectFix,
    zone_text,
)
from passagelog.review.status import Status

__all__ = [
    "reconcile", "watch", "DEFAULT_WINDOW_S", "DEFAULT_GAP_S", "FixArrays", "as_fix_arrays",
    "from_fixes", "clocks_from", "ship_noons", "PHASES", "TABLES", "TABLE_COLUMNS",
    "Review", "FixResults", "Passage", "Episode", "LegStats", "NoonFigures", "Gap",
    "SuspectFix", "Status", "zone_text",
]
