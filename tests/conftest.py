"""Shared test settings.

Hypothesis draws the same examples on every run of the normal suite (``derandomize``), so a
run that passed passes again and CI does not turn red on a draw; a property that fails names
its example, which then becomes a regression test. To explore new examples, run with
``HYPOTHESIS_PROFILE=explore`` (random draws, more of them).
"""

from __future__ import annotations

import os

from hypothesis import settings

settings.register_profile("repeatable", derandomize=True, deadline=None)
settings.register_profile("explore", max_examples=500, deadline=None)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "repeatable"))
