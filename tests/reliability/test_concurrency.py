"""The feed, an import and a reader on one logbook at once (scripts/concurrency_test.py):
no lock error reaches the user, no fix is lost or doubled. 6 s here; 60 s slow-marked."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "scripts"))
import concurrency_test  # noqa: E402


def _check(outcome) -> None:
    assert not outcome.lock_errors, outcome.lock_errors
    assert not outcome.problems, outcome.problems
    assert outcome.lost == 0 and outcome.doubled == 0, outcome
    assert outcome.sent == outcome.stored
    assert outcome.imports >= 1 and outcome.imports_whole == outcome.imports, outcome
    assert outcome.reviews >= 1 and outcome.reviews_ok == outcome.reviews, outcome
    assert outcome.feed_exit == 130
    # the feed's write waits are measured (figures for docs/reliability.md, not asserted)
    assert outcome.wait_max_s is not None and outcome.wait_median_s is not None


def test_feed_import_and_review_together(tmp_path):
    outcome = concurrency_test.run(tmp_path, seconds=6.0, rate=10.0, import_lines=10_000,
                                   log=lambda _t: None)
    _check(outcome)
    assert outcome.sent >= 45  # 10 a second for 6 s, give or take start-up


@pytest.mark.slow
def test_feed_import_and_review_together_for_a_minute(tmp_path):
    outcome = concurrency_test.run(tmp_path, seconds=60.0, rate=10.0, import_lines=20_000,
                                   log=print)
    print(f"\n{outcome}")
    _check(outcome)
