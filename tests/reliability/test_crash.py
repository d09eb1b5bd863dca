"""SIGKILL during an import and during feed logging leaves a sound logbook (scripts/
crash_test.py; the long form is slow-marked: 20 kills of each kind, 200,000-line import)."""

from __future__ import annotations

import random
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "scripts"))
import crash_test  # noqa: E402


def _report(result) -> str:
    return f"{result.kind}: {result.problems}"


def test_kill_during_import_leaves_it_whole_or_absent(tmp_path):
    result = crash_test.crash_imports(tmp_path, kills=3, lines=10_000, rng=random.Random(7),
                                      log=lambda _t: None)
    assert result.kills == 3
    assert result.ok, _report(result)
    assert result.completed_before_kill + result.absent_after_kill == 3
    # every kill fell inside the import's write transaction (mid-import: absent) or, when
    # this run was quicker than the measured one, after its commit (whole)
    assert result.mid_run + result.completed_before_kill == 3, result
    assert result.calibration["begin_s"] < result.calibration["commit_s"]


def test_kill_during_feed_loses_at_most_the_fix_in_flight(tmp_path):
    result = crash_test.crash_feed(tmp_path, kills=2, rng=random.Random(7),
                                   log=lambda _t: None, max_fixes=60)
    assert result.kills == 2
    assert result.ok, _report(result)
    assert all(0 <= lost <= 2 for lost in result.lost_counts), result.lost_counts
    assert result.mid_run == 2  # both kills found the feed running and logging


@pytest.mark.slow
def test_twenty_kills_of_each_kind(tmp_path):
    rng = random.Random(1)
    imports = crash_test.crash_imports(tmp_path, kills=20, lines=200_000, rng=rng, log=print)
    feed = crash_test.crash_feed(tmp_path, kills=20, rng=rng, log=print)
    print(f"\nimport: {imports}\nfeed: {feed}")
    print(f"import kills mid-import {imports.mid_run} of {imports.kills}; feed kills "
          f"mid-feed {feed.mid_run} of {feed.kills}")
    assert imports.ok, _report(imports)
    assert feed.ok, _report(feed)
