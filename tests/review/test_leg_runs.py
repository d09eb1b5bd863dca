"""The leg table's run over the ground: each step between fixes belongs to one leg only.

A leg's run is the sum of the steps onto the counted fixes after the passage of its first
waypoint (for the first leg sailed, from its first fix), up to and including the step onto
the passage of its last waypoint when it is completed; its time runs over the same fixes. So
the leg runs of a voyage add up to its track. The expected steps are geodesics computed by
geographiclib's own Geodesic.WGS84.Inverse (Karney 2013), outside the engine.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from passagelog.review import reconcile
from passagelog.review.results import UNDER_WAY

sys.path.insert(0, str(Path(__file__).parent))
import review_synth as syn  # noqa: E402
from test_voyage import _revision_case  # noqa: E402

RUN_TOL_M = 1e-6  # the same geodesics summed in another order
POINTS = [(50.0, -4.0), (49.0, -6.0), (47.0, -6.0), (46.0, -3.0)]


def _steps(cols) -> np.ndarray:
    """steps[j]: geodesic from fix j-1 to fix j (geographiclib); steps[0] = 0."""
    lat, lon = cols["lat"], cols["lon"]
    out = [0.0] + [Geodesic.WGS84.Inverse(lat[j - 1], lon[j - 1], lat[j], lon[j])["s12"]
                   for j in range(1, len(lat))]
    return np.array(out)


def _run(steps, first: int, last: int) -> float:
    """The steps onto fixes first..last (inclusive)."""
    return float(steps[first:last + 1].sum())


def _counted_track(rv) -> float:
    """The engine's own steps over the counted fixes, and the step onto the arrival."""
    fr = rv.fixes
    counted = (~fr.suspect) & (fr.phase == UNDER_WAY)
    track = float(np.nansum(fr.dist_prev_m[counted]))
    last = rv.passages[-1] if rv.passages else None
    if last is not None and fr.phase[last.fix] != UNDER_WAY:
        track += float(fr.dist_prev_m[last.fix])
    return track


def _voyage(plan, route=None):
    route = route or syn.route(POINTS, xtl_m=1000.0)
    legs = syn.legs_of(route)
    cols = syn.sail(legs, plan)
    return legs, cols, reconcile(route, cols)


def test_leg_runs_add_up_to_the_track_over_several_legs():
    legs = syn.legs_of(syn.route(POINTS))
    L = [lg.distance_m for lg in legs]
    plan = [(0, s, x) for s, x in zip(np.linspace(0, L[0] - 4000, 7),
                                      [0, 300, -600, 1200, 800, -200, 50])]
    plan += [(1, s, x) for s, x in zip(np.linspace(2500, L[1] - 3000, 5),
                                       [100, -400, 0, 250, -50])]
    plan += [(2, s, x) for s, x in zip(np.linspace(1500, L[2] - 2500, 6),
                                       [-20, 600, 0, -900, 30, 0])]
    plan += [(2, L[2] + 800, 0.0), (2, L[2] + 900, 0.0)]  # passing the last waypoint, then on
    _, cols, rv = _voyage(plan)
    steps = _steps(cols)
    p2, p3, p4 = (p.fix for p in rv.passages)
    assert [p.waypoint for p in rv.passages] == [2, 3, 4] and p4 == len(plan) - 2
    t = cols["time_s"]
    expected = [(_run(steps, 1, p2), t[p2] - t[0]), (_run(steps, p2 + 1, p3), t[p3] - t[p2]),
                (_run(steps, p3 + 1, p4), t[p4] - t[p3])]
    got = [(lg.run_m, lg.actual_time_s) for lg in rv.legs]
    for (run, time), (want_run, want_time) in zip(got, expected):
        assert run == pytest.approx(want_run, abs=RUN_TOL_M)
        assert time == want_time
    # the legs share out the track: fix 0 to the arrival, nothing twice, nothing dropped
    total = sum(lg.run_m for lg in rv.legs)
    assert total == pytest.approx(_run(steps, 1, p4), abs=RUN_TOL_M)
    assert total == pytest.approx(_counted_track(rv), abs=RUN_TOL_M)


def test_a_leg_of_one_fix_that_ends_the_track_ran_nothing_in_no_time():
    legs = syn.legs_of(syn.route(POINTS))
    L = [lg.distance_m for lg in legs]
    plan = [(0, s, 0.0) for s in np.linspace(0, L[0] - 3000, 5)]
    plan += [(1, s, 0.0) for s in np.linspace(2000, L[1] - 3000, 4)]
    plan += [(2, 2500.0, 0.0)]  # the passage of waypoint 3, and the last fix
    _, cols, rv = _voyage(plan)
    steps = _steps(cols)
    last = rv.legs[-1]
    assert (last.leg, last.fixes, last.completed) == (3, 1, False)
    assert last.actual_time_s == 0.0
    assert last.run_m == 0.0  # the old figure: the step onto waypoint 3's passage, again
    p3 = rv.passages[-1].fix
    assert rv.legs[1].run_m == pytest.approx(_run(steps, rv.passages[0].fix + 1, p3),
                                             abs=RUN_TOL_M)
    assert sum(lg.run_m for lg in rv.legs) == pytest.approx(_run(steps, 1, len(plan) - 1),
                                                            abs=RUN_TOL_M)


def test_a_leg_of_one_fix_completed_ran_the_step_onto_the_next_passage():
    legs = syn.legs_of(syn.route(POINTS))
    L = [lg.distance_m for lg in legs]
    plan = [(0, s, 0.0) for s in np.linspace(0, L[0] - 3000, 5)]
    plan += [(1, 2500.0, 0.0)]  # the passage of waypoint 2: leg 2's only fix
    plan += [(2, 2500.0, 0.0)]  # already past waypoint 3
    plan += [(2, s, 0.0) for s in np.linspace(20000, L[2] + 500, 4)]
    _, cols, rv = _voyage(plan)
    steps = _steps(cols)
    p2, p3 = rv.passages[0].fix, rv.passages[1].fix
    assert p3 == p2 + 1
    leg2 = rv.legs[1]
    assert (leg2.leg, leg2.fixes, leg2.completed) == (2, 1, True)
    assert leg2.actual_time_s == cols["time_s"][p3] - cols["time_s"][p2]
    assert leg2.run_m == pytest.approx(steps[p3], abs=RUN_TOL_M)
    total = sum(lg.run_m for lg in rv.legs)
    assert total == pytest.approx(_run(steps, 1, rv.passages[-1].fix), abs=RUN_TOL_M)
    assert total == pytest.approx(_counted_track(rv), abs=RUN_TOL_M)


def test_two_waypoints_passed_at_one_fix_leave_the_leg_between_them_empty():
    legs = syn.legs_of(syn.route(POINTS))
    L = [lg.distance_m for lg in legs]
    plan = [(0, s, 0.0) for s in np.linspace(0, L[0] - 3000, 5)]
    plan += [(2, 3000.0, 0.0)]  # after a gap: past waypoints 2 and 3 at once
    plan += [(2, s, 0.0) for s in np.linspace(30000, L[2] + 500, 4)]
    _, cols, rv = _voyage(plan)
    steps = _steps(cols)
    p2, p3, p4 = (p.fix for p in rv.passages)
    assert p2 == p3 == 5
    leg1, leg2, leg3 = rv.legs
    assert leg1.run_m == pytest.approx(_run(steps, 1, p2), abs=RUN_TOL_M)  # the step: here
    assert (leg2.fixes, leg2.completed, leg2.run_m, leg2.actual_time_s) == (0, True, 0.0, 0.0)
    assert leg3.run_m == pytest.approx(_run(steps, p3 + 1, p4), abs=RUN_TOL_M)
    assert sum(lg.run_m for lg in rv.legs) == pytest.approx(_run(steps, 1, p4),
                                                            abs=RUN_TOL_M)


@pytest.mark.parametrize("one_fix_after_b", [False, True])
@pytest.mark.parametrize("matched", [True, False])
def test_leg_runs_over_a_plan_revision_add_up_to_the_track(matched, one_fix_after_b):
    r0, r1, plan, cols, n0, plan1 = _revision_case(matched)
    if one_fix_after_b:  # the revision comes in just after the passage of B
        keep = np.r_[0:n0 - 1, n0:len(cols["time_s"])]
        cols = {k: v[keep] for k, v in cols.items()}
        n0 -= 1
    rv = reconcile(plan, cols)
    steps = _steps(cols)
    pb, px, py = (p.fix for p in rv.passages)
    assert [(p.revision, p.name) for p in rv.passages] == [(0, "B"), (1, "X"), (1, "Y")]
    assert py == len(cols["time_s"]) - 1
    runs = {(lg.revision, lg.leg): lg.run_m for lg in rv.legs}
    assert runs[(0, 1)] == pytest.approx(_run(steps, 1, pb), abs=RUN_TOL_M)
    # under the first plan after B: the fixes after the passage (none when B's was the last)
    assert runs[(0, 2)] == pytest.approx(_run(steps, pb + 1, n0 - 1), abs=RUN_TOL_M)
    if one_fix_after_b:
        assert runs[(0, 2)] == 0.0
    # the step across the revision's start is the new plan's, once
    assert runs[(1, 1)] == pytest.approx(_run(steps, n0, px), abs=RUN_TOL_M)
    assert runs[(1, 2)] == pytest.approx(_run(steps, px + 1, py), abs=RUN_TOL_M)
    total = sum(runs.values())
    assert total == pytest.approx(_run(steps, 1, py), abs=RUN_TOL_M)
    assert total == pytest.approx(_counted_track(rv), abs=RUN_TOL_M)
