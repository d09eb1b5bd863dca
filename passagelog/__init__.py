"""passagelog: passage planning, fix logging, cross-track monitoring and voyage review.

A planning and record-keeping aid, not a certified navigation system.
"""

__version__ = "0.1.0"

CAUTION = (
    "passagelog is a planning and record-keeping aid, not a certified navigation system. "
    "Verify every figure against official charts and publications, the ship's or aircraft's "
    "approved navigation systems and the judgement of the licensed officer; local regulations "
    "prevail."
)
