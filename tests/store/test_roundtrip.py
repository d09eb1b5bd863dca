"""Hypothesis: every record type comes back from the logbook exactly as it went in, and the
chain still verifies."""

from __future__ import annotations

from datetime import datetime, timezone

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from passagelog.model import (
    CRAFT_KINDS, ENTRY_KINDS, FIX_METHODS, SAILINGS, Craft, Fix, LegPlan, LogEntry, Route,
    ScheduleItem, Voyage, Waypoint,
)
from passagelog.store import Logbook

SETTINGS = settings(max_examples=40, deadline=None,
                    suppress_health_check=[HealthCheck.function_scoped_fixture])

text = st.text(st.characters(blacklist_categories=("Cs",)), max_size=30)
name = text.filter(lambda s: s.strip())
times = st.datetimes(min_value=datetime(1970, 1, 2), max_value=datetime(2200, 1, 1),
                     timezones=st.just(timezone.utc))
lat = st.floats(-90, 90, allow_nan=False)
lon = st.floats(-180, 180, allow_nan=False, exclude_max=True)
nonneg = st.none() | st.floats(0, 1e6, allow_nan=False)
course = st.none() | st.floats(0, 360, allow_nan=False, exclude_max=True)
zd = st.integers(-14 * 60, 12 * 60)

fixes = st.builds(
    Fix, time_utc=times, lat=lat, lon=lon, method=st.sampled_from(FIX_METHODS), hdop=nonneg,
    satellites=st.none() | st.integers(0, 64), fix_mode=st.none() | text, cog=course,
    sog_kn=nonneg, heading=course, stw_kn=nonneg, remarks=text, source=st.none() | text)


@st.composite
def entries(draw):
    kind = draw(st.sampled_from(ENTRY_KINDS))
    z = draw(zd) if kind == "clock-change" else draw(st.none() | zd)
    pos = draw(st.none() | st.tuples(lat, lon))
    return LogEntry(draw(times), kind, draw(text), z, pos[0] if pos else None,
                    pos[1] if pos else None)


extras = st.lists(st.tuples(text, text), max_size=2).map(tuple)
waypoints = st.builds(Waypoint, name=text, lat=lat, lon=lon, arrival_radius_m=nonneg,
                      rtz_id=st.none() | st.integers(0, 10**6),
                      revision=st.none() | st.integers(0, 100), extras=extras)
legs = st.builds(LegPlan, sailing=st.sampled_from(SAILINGS), speed_kn=nonneg,
                 xtl_port_m=nonneg, xtl_stbd_m=nonneg, turn_radius_m=nonneg, notes=text,
                 speed_min_kn=nonneg, speed_max_kn=nonneg, extras=extras)


@st.composite
def routes(draw):
    wps = draw(st.lists(waypoints, min_size=2, max_size=6))
    lgs = draw(st.lists(legs, min_size=len(wps) - 1, max_size=len(wps) - 1))
    sched = draw(st.lists(st.builds(
        ScheduleItem, waypoint_index=st.integers(0, len(wps) - 1),
        eta_utc=st.none() | times, etd_utc=st.none() | times,
        kind=st.sampled_from(("manual", "calculated")), schedule_name=text), max_size=3))
    return Route(draw(name), tuple(wps), tuple(lgs), tuple(sched), extras=draw(extras))


@pytest.fixture(scope="module")
def shared(tmp_path_factory):
    with Logbook.open(tmp_path_factory.mktemp("rt") / "log.sqlite") as book:
        book.add_voyage(Voyage("RT"))
        yield book


@SETTINGS
@given(fix=fixes)
def test_fix_round_trip(shared, fix):
    stored = shared.add_fix("RT", fix)
    assert stored == shared.fix(stored.fix_id)
    expected = fix.__class__(**{**fix.__dict__, "fix_id": stored.fix_id,
                                "suspect": stored.suspect,
                                "implied_speed_kn": stored.implied_speed_kn})
    assert stored == expected
    arr = shared.fix_arrays("RT")
    i = int(np.flatnonzero(arr.fix_id == stored.fix_id)[0])
    assert (arr.lat[i], arr.lon[i], arr.time_s[i]) == (fix.lat, fix.lon,
                                                      fix.time_utc.timestamp())


@SETTINGS
@given(entry=entries())
def test_entry_round_trip(shared, entry):
    stored = shared.add_entry("RT", entry)
    assert stored == entry.__class__(**{**entry.__dict__, "entry_id": stored.entry_id})
    assert shared.entry(stored.entry_id) == stored


@SETTINGS
@given(route=routes(), note=name)
def test_route_round_trip(shared, route, note):
    plan_name = f"plan {shared.latest_fix_id()} {len(shared.list_plans())}"
    pid, rev = shared.create_plan(route, note, name=plan_name)
    assert shared.route(pid, rev) == route.with_changes(revision=rev, note=note)


@SETTINGS
@given(craft=st.builds(Craft, name=name, kind=st.sampled_from(CRAFT_KINDS),
                       usual_speed_kn=nonneg, max_speed_kn=nonneg),
       voyage_name=name, frm=text, to=text, dep=st.none() | times, z=zd)
def test_craft_and_voyage_round_trip(shared, craft, voyage_name, frm, to, dep, z):
    n = len(shared.list_craft())
    craft = Craft(f"{n} {craft.name}", craft.kind, craft.usual_speed_kn, craft.max_speed_kn)
    c = shared.add_craft(craft)
    assert shared.craft(c.craft_id) == c == Craft(**{**craft.__dict__, "craft_id": c.craft_id})
    v = Voyage(f"{n} {voyage_name}", c.craft_id, frm, to, dep, z)
    sv = shared.add_voyage(v)
    assert shared.voyage(sv.voyage_id) == sv == Voyage(**{**v.__dict__,
                                                          "voyage_id": sv.voyage_id})




@SETTINGS
@given(from_utc=st.none() | times, use_rev=st.booleans())
def test_plan_assignment_round_trip(shared, from_utc, use_rev):
    if not shared.list_plans():
        shared.create_plan(Route("A", (Waypoint("a", 1, 1), Waypoint("b", 2, 2))), "n",
                           name="assign")
    plan = shared.list_plans()[0]
    a = shared.assign_plan("RT", plan.plan_id, plan.latest_revision if use_rev else None,
                           from_utc)
    stored = [x for x in shared.plan_assignments("RT") if x.assignment_id == a.assignment_id]
    assert stored == [a]
    assert (a.from_utc, a.revision) == (from_utc, plan.latest_revision)


@SETTINGS
@given(digest=st.binary(min_size=32, max_size=32), source=name, kind=name,
       counts=st.dictionaries(name, st.integers(0, 10**9), max_size=3))
def test_import_record_round_trip(shared, digest, source, kind, counts):
    sha = digest.hex()
    if shared.has_import(sha):
        return
    shared.record_import(sha.upper(), source, kind, counts)
    assert shared.has_import(sha)
    info = [i for i in shared.imports() if i.sha256 == sha]
    assert [(i.source_name, i.kind, i.counts) for i in info] == [(source, kind, counts)]


def test_everything_written_by_the_properties_verifies(shared):
    assert shared.verify().ok
