"""``passagelog plan``: passage plans with revisions.

Every edit saves a new revision of the plan with a change note (given with ``--note`` or
written for you from the edit); earlier revisions stay as they were. Waypoint and leg numbers
are 1-based: leg k runs from waypoint k to waypoint k+1. Distances and radii in NM, speeds kn.
"""

from __future__ import annotations

from typing import Callable

import click

from passagelog.cli.common import (
    NM_M, emit, emit_one, iso, nm, options, output_options,
)
from passagelog.cli.logbook import number, open_book, pos_text, position, whole
from passagelog.errors import InputError


def route_record(plan_info, route) -> dict:
    """The stable JSON form of one plan revision (docs/cli.md)."""
    from passagelog.nav.geodesic import inverse
    from passagelog.nav.rhumb import rhumb_inverse

    wps = [{"index": i + 1, "name": w.name, "lat": w.lat, "lon": w.lon,
            "arrival_radius_nm": nm(w.arrival_radius_m)} for i, w in enumerate(route.waypoints)]
    legs = []
    for k, lg in enumerate(route.legs):
        a, b = route.waypoints[k], route.waypoints[k + 1]
        if lg.sailing == "rhumb":
            dist_m, course = rhumb_inverse(a.lat, a.lon, b.lat, b.lon)
        else:
            dist_m, course, _ = inverse(a.lat, a.lon, b.lat, b.lon)
        dist = dist_m / NM_M
        if dist_m == 0.0:
            course = None  # a zero-length leg has no course
        legs.append({"leg": k + 1, "from": a.name, "to": b.name, "sailing": lg.sailing,
                     "distance_nm": dist, "initial_course": course, "speed_kn": lg.speed_kn,
                     "xtl_port_nm": nm(lg.xtl_port_m), "xtl_stbd_nm": nm(lg.xtl_stbd_m),
                     "turn_radius_nm": nm(lg.turn_radius_m), "notes": lg.notes})
    return {"plan_id": plan_info.plan_id, "plan": plan_info.name, "revision": route.revision,
            "note": route.note, "route_name": route.name,
            "total_distance_nm": sum(x["distance_nm"] for x in legs),
            "waypoints": wps, "legs": legs}


ROUTE_CSV = ["name", "lat", "lon", "sailing", "speed_kn", "xtl_port_nm", "xtl_stbd_nm",
             "arrival_radius_nm", "turn_radius_nm", "notes"]


@click.group()
def plan() -> None:
    """Passage plans: waypoints and legs, every edit a new revision with a change note."""


def _leg_from_options(sailing, speed, xtl, xtl_port, xtl_stbd, turn_radius, notes, base=None):
    from passagelog.model import LegPlan

    changes = {}
    if sailing is not None:
        changes["sailing"] = sailing
    if speed is not None:
        changes["speed_kn"] = number("leg", "planned speed (kn)", speed)
    both = number("leg", "cross-track limit (NM)", xtl, scale=NM_M)
    if both is not None:
        changes["xtl_port_m"] = changes["xtl_stbd_m"] = both
    if xtl_port is not None:
        changes["xtl_port_m"] = number("leg", "port cross-track limit (NM)", xtl_port,
                                       scale=NM_M)
    if xtl_stbd is not None:
        changes["xtl_stbd_m"] = number("leg", "starboard cross-track limit (NM)", xtl_stbd,
                                       scale=NM_M)
    if turn_radius is not None:
        changes["turn_radius_m"] = number("leg", "turn radius (NM)", turn_radius, scale=NM_M)
    if notes is not None:
        changes["notes"] = notes
    if base is None:
        return LegPlan(**changes)
    return changes


_leg_options = options(
    click.option("--sailing", metavar="great-circle|rhumb", help="How the leg is sailed."),
    click.option("--speed", metavar="KN", help="Planned speed, knots."),
    click.option("--xtl", metavar="NM", help="Cross-track limit on both sides, NM."),
    click.option("--xtl-port", metavar="NM", help="Port cross-track limit, NM."),
    click.option("--xtl-stbd", metavar="NM", help="Starboard cross-track limit, NM."),
    click.option("--turn-radius", metavar="NM", help="Turn radius at the leg's end, NM."),
    click.option("--notes", help="Leg notes."),
)


def _note_option(func: Callable) -> Callable:
    return click.option("--note", help="Change note for the new revision (default: says what "
                                       "changed).")(func)


def _saved(book, plan_name, route, note) -> None:
    rev = book.save_revision(plan_name, route, note)
    click.echo(f"plan {book.plan(plan_name).name} revision {rev}: {note}")


@plan.command("new")
@click.argument("name")
@click.option("--wp", "wps", nargs=2, multiple=True, metavar="NAME POSITION", required=True,
              help="A waypoint, in order (give at least two).")
@click.option("--radius", metavar="NM", help="Arrival radius of every waypoint, NM.")
@_leg_options
@_note_option
@click.pass_context
def plan_new(ctx, name, wps, radius, sailing, speed, xtl, xtl_port, xtl_stbd, turn_radius,
             notes, note) -> None:
    """Create plan NAME from --wp NAME POSITION ... (every leg gets the leg options)."""
    from passagelog.model import Route, Waypoint

    r = number("waypoint", "arrival radius (NM)", radius, scale=NM_M)
    points = []
    for wname, wpos in wps:
        lat, lon = position(f"waypoint {wname!r}", wpos)
        points.append(Waypoint(wname, lat, lon, r))
    leg = _leg_from_options(sailing, speed, xtl, xtl_port, xtl_stbd, turn_radius, notes)
    route = Route(name, tuple(points), tuple(leg for _ in points[1:]))
    note = note or f"created with {len(points)} waypoints"
    with open_book(ctx) as book:
        pid, rev = book.create_plan(route, note)
    click.echo(f"plan {name} revision {rev}: {note}")


@plan.command("list")
@output_options
@click.pass_context
def plan_list(ctx, as_json, as_csv) -> None:
    """List the plans in the logbook."""
    with open_book(ctx, create=False) as book:
        records = [{"plan_id": p.plan_id, "name": p.name, "latest_revision": p.latest_revision,
                    "created_utc": iso(p.created_utc)} for p in book.list_plans()]
    emit(records, ["plan_id", "name", "latest_revision", "created_utc"], as_json, as_csv,
         [("ID", lambda r: r["plan_id"]), ("NAME", lambda r: r["name"]),
          ("REVISION", lambda r: r["latest_revision"]), ("CREATED", lambda r: r["created_utc"])])


@plan.command("show")
@click.argument("name")
@click.option("--revision", metavar="N", help="Revision to show (default: the latest).")
@output_options
@click.pass_context
def plan_show(ctx, name, revision, as_json, as_csv) -> None:
    """Show a plan revision: waypoints and legs (CSV: the route CSV of docs/cli.md)."""
    rev = whole("plan", "revision", revision)
    with open_book(ctx, create=False) as book:
        info = book.plan(name)
        route = book.route(info.plan_id, rev)
    rec = route_record(info, route)
    if as_json:
        emit_one(rec, True)
        return
    if as_csv:
        rows = []
        for i, w in enumerate(rec["waypoints"]):
            lg = rec["legs"][i - 1] if i else {}
            rows.append({"name": w["name"], "lat": w["lat"], "lon": w["lon"],
                         "sailing": lg.get("sailing"), "speed_kn": lg.get("speed_kn"),
                         "xtl_port_nm": lg.get("xtl_port_nm"),
                         "xtl_stbd_nm": lg.get("xtl_stbd_nm"),
                         "arrival_radius_nm": w["arrival_radius_nm"],
                         "turn_radius_nm": lg.get("turn_radius_nm"), "notes": lg.get("notes")})
        emit(rows, ROUTE_CSV, False, True)
        return
    click.echo(f"plan {rec['plan']} revision {rec['revision']}{_route_named(rec)}: "
               f"{rec['note']}")
    emit(rec["waypoints"], [], False, False, [
        ("WP", lambda r: r["index"]), ("NAME", lambda r: r["name"]),
        ("POSITION", lambda r: pos_text(r["lat"], r["lon"])),
        ("RADIUS NM", lambda r: _fmt2(r["arrival_radius_nm"]))])
    click.echo("")
    emit(rec["legs"], [], False, False, [
        ("LEG", lambda r: r["leg"]), ("FROM", lambda r: r["from"]), ("TO", lambda r: r["to"]),
        ("SAILING", lambda r: r["sailing"]), ("DIST NM", lambda r: _fmt2(r["distance_nm"])),
        ("COURSE", lambda r: None if r["initial_course"] is None
         else f"{r['initial_course']:05.1f}"),
        ("SPEED KN", lambda r: r["speed_kn"]),
        ("XTL P/S NM", lambda r: None if r["xtl_port_nm"] is None and r["xtl_stbd_nm"] is None
         else f"{_fmt2(r['xtl_port_nm']) or '-'}/{_fmt2(r['xtl_stbd_nm']) or '-'}"),
        ("NOTES", lambda r: r["notes"] or None)])
    click.echo(f"total {rec['total_distance_nm']:.2f} NM")


def _route_named(rec: dict) -> str:
    """`` (route 'X')`` when the route keeps a name other than the plan's (an imported route
    keeps the name in its file), else nothing."""
    route_name = rec.get("route_name")
    return f" (route {route_name!r})" if route_name and route_name != rec["plan"] else ""


def _fmt2(value):
    return None if value is None else f"{value:.2f}"


@plan.command("history")
@click.argument("name")
@output_options
@click.pass_context
def plan_history(ctx, name, as_json, as_csv) -> None:
    """List every revision of a plan with its change note."""
    with open_book(ctx, create=False) as book:
        records = [{"revision": h.revision, "note": h.note, "recorded_utc": iso(h.recorded_utc),
                    "route_name": h.route_name, "waypoint_count": h.waypoint_count}
                   for h in book.plan_history(name)]
    emit(records, ["revision", "note", "recorded_utc", "route_name", "waypoint_count"],
         as_json, as_csv, [("REVISION", lambda r: r["revision"]),
                           ("RECORDED", lambda r: r["recorded_utc"]),
                           ("WAYPOINTS", lambda r: r["waypoint_count"]),
                           ("NOTE", lambda r: r["note"])])


@plan.group("waypoint")
def plan_waypoint() -> None:
    """Add, insert, move, change or delete a waypoint (each a new revision)."""


def _latest(book, plan_name: str):
    """The plan's own name (as ``plan list`` shows it) and its latest route. The route keeps
    the name it was created or imported with, which may differ: messages name the plan."""
    info = book.plan(plan_name)
    return info.name, book.route(info.plan_id)


def _index(route, text: str, *, plan: str, allow_end: bool = False) -> int:
    n = whole("waypoint", "number", text)
    top = len(route.waypoints) + (1 if allow_end else 0)
    if not 1 <= n <= top:
        raise InputError(f"plan {plan!r} waypoint number {n} does not exist; it has "
                         f"waypoints 1 to {len(route.waypoints)}")
    return n - 1


def _waypoint(name: str, pos: str, radius: str | None):
    from passagelog.model import Waypoint

    lat, lon = position(f"waypoint {name!r}", pos)
    return Waypoint(name, lat, lon,
                    number("waypoint", "arrival radius (NM)", radius, scale=NM_M))


#: NAME POSITION [--radius NM] [--note TEXT] of a waypoint added or inserted.
_new_waypoint = options(
    click.argument("name"), click.argument("pos", metavar="POSITION"),
    click.option("--radius", metavar="NM", help="Arrival radius, NM."),
    _note_option, click.pass_context,
)


@plan_waypoint.command("add")
@click.argument("plan_name", metavar="PLAN")
@_new_waypoint
def wp_add(ctx, plan_name, name, pos, radius, note) -> None:
    """Append waypoint NAME at POSITION (the new last leg copies the one before it)."""
    wp = _waypoint(name, pos, radius)
    with open_book(ctx) as book:
        route = book.route(plan_name).add_waypoint(wp)
        _saved(book, plan_name, route,
               note or f"waypoint {len(route.waypoints)} {name} added at the end")


@plan_waypoint.command("insert")
@click.argument("plan_name", metavar="PLAN")
@click.argument("number_text", metavar="N")
@_new_waypoint
def wp_insert(ctx, plan_name, number_text, name, pos, radius, note) -> None:
    """Insert waypoint NAME at POSITION so that it becomes waypoint N."""
    wp = _waypoint(name, pos, radius)
    with open_book(ctx) as book:
        name_, route = _latest(book, plan_name)
        k = _index(route, number_text, plan=name_, allow_end=True)
        _saved(book, plan_name, route.insert_waypoint(k, wp),
               note or f"waypoint {name} inserted as waypoint {k + 1}")


@plan_waypoint.command("move")
@click.argument("plan_name", metavar="PLAN")
@click.argument("number_text", metavar="N")
@click.argument("pos", metavar="POSITION")
@_note_option
@click.pass_context
def wp_move(ctx, plan_name, number_text, pos, note) -> None:
    """Move waypoint N to POSITION."""
    lat, lon = position("waypoint", pos)
    with open_book(ctx) as book:
        name_, route = _latest(book, plan_name)
        k = _index(route, number_text, plan=name_)
        old = route.waypoints[k]
        _saved(book, plan_name, route.move_waypoint(k, lat, lon),
               note or f"waypoint {k + 1} {old.name} moved from {pos_text(old.lat, old.lon)} "
                       f"to {pos_text(lat, lon)}")


@plan_waypoint.command("set")
@click.argument("plan_name", metavar="PLAN")
@click.argument("number_text", metavar="N")
@click.option("--name", help="New name.")
@click.option("--radius", metavar="NM", help="New arrival radius, NM.")
@_note_option
@click.pass_context
def wp_set(ctx, plan_name, number_text, name, radius, note) -> None:
    """Rename waypoint N or change its arrival radius."""
    from dataclasses import replace

    r = number("waypoint", "arrival radius (NM)", radius, scale=NM_M)
    with open_book(ctx) as book:
        name_, route = _latest(book, plan_name)
        k = _index(route, number_text, plan=name_)
        old = route.waypoints[k]
        changes = {}
        if name is not None:
            changes["name"] = name
        if r is not None:
            changes["arrival_radius_m"] = r
        if not changes:
            raise click.UsageError("nothing to change: give --name or --radius")
        _saved(book, plan_name, route.replace_waypoint(k, replace(old, **changes)),
               note or f"waypoint {k + 1} {old.name} changed: "
                       + ", ".join(f"{key} {val!r}" for key, val in changes.items()))


@plan_waypoint.command("delete")
@click.argument("plan_name", metavar="PLAN")
@click.argument("number_text", metavar="N")
@_note_option
@click.pass_context
def wp_delete(ctx, plan_name, number_text, note) -> None:
    """Delete waypoint N (an inner one joins its two legs)."""
    with open_book(ctx) as book:
        name_, route = _latest(book, plan_name)
        k = _index(route, number_text, plan=name_)
        _saved(book, plan_name, route.delete_waypoint(k),
               note or f"waypoint {k + 1} {route.waypoints[k].name} deleted")


@plan.group("leg")
def plan_leg() -> None:
    """Change a leg's attributes (a new revision)."""


@plan_leg.command("set")
@click.argument("plan_name", metavar="PLAN")
@click.argument("number_text", metavar="N")
@_leg_options
@_note_option
@click.pass_context
def leg_set(ctx, plan_name, number_text, sailing, speed, xtl, xtl_port, xtl_stbd, turn_radius,
            notes, note) -> None:
    """Set attributes of leg N (from waypoint N to N+1)."""
    changes = _leg_from_options(sailing, speed, xtl, xtl_port, xtl_stbd, turn_radius, notes,
                                base=True)
    if not changes:
        raise click.UsageError("nothing to change: give at least one leg option")
    n = whole("leg", "number", number_text)
    with open_book(ctx) as book:
        name_, route = _latest(book, plan_name)
        if not 1 <= n <= len(route.legs):
            raise InputError(f"plan {name_!r} leg {n} does not exist; it has legs 1 to "
                             f"{len(route.legs)}")
        shown = {k: (v / NM_M if k.endswith("_m") else v) for k, v in changes.items()}
        desc = ", ".join(f"{k.replace('_m', '_nm') if k.endswith('_m') else k} {v:g}"
                         if isinstance(v, float) else f"{k} {v}" for k, v in shown.items())
        _saved(book, plan_name, route.set_leg(n - 1, **changes), note or f"leg {n}: {desc}")


@plan.command("reverse")
@click.argument("plan_name", metavar="PLAN")
@_note_option
@click.pass_context
def plan_reverse(ctx, plan_name, note) -> None:
    """Reverse the plan (new revision): waypoints the other way, port and starboard limits
    swapped, turn radii kept with their waypoints, schedule dropped."""
    with open_book(ctx) as book:
        route = book.route(plan_name)
        _saved(book, plan_name, route.reversed(), note or "reversed")


@plan.command("copy")
@click.argument("plan_name", metavar="PLAN")
@click.argument("new_name", metavar="NEW_NAME")
@click.option("--revision", metavar="N", help="Revision to copy (default: the latest).")
@_note_option
@click.pass_context
def plan_copy(ctx, plan_name, new_name, revision, note) -> None:
    """Copy a plan revision into a new plan NEW_NAME."""
    rev = whole("plan", "revision", revision)
    with open_book(ctx) as book:
        info = book.plan(plan_name)
        route = book.route(info.plan_id, rev)
        note = note or f"copied from plan {info.name} revision {route.revision}"
        _, new_rev = book.create_plan(route.copy(new_name), note)
    click.echo(f"plan {new_name} revision {new_rev}: {note}")
