"""Keeping a voyage from the command line: craft, voyages, fixes, log entries, verify.

Plans are in :mod:`passagelog.cli.plan`. Every read command prints a plain table, or with
``--json`` / ``--csv`` the stable forms documented in docs/cli.md. Values are checked before
anything is written; a bad one stops the command with one line on stderr and exit 1.
Distances at this edge are NM, speeds knots.
"""

from __future__ import annotations

import json
import math
from datetime import datetime, timezone
from typing import Callable

import click

from passagelog.cli.common import (  # noqa: F401  (NM_M, emit, iso, nm: for cli.plan)
    NM_M, db_path_from, emit, emit_one, iso, nm, one_form, options, output_options,
    show_record,
)
from passagelog.errors import InputError, IntegrityError


# ---------------------------------------------------------------------------------------------
# shared helpers (also used by cli.plan)


def open_book(ctx: click.Context, *, create: bool = True):
    """The logbook chosen by --db / PASSAGELOG_DB / the default."""
    from passagelog.store import Logbook

    return Logbook.open(db_path_from(ctx), create=create)


def number(thing: str, field: str, text: str | None, *, scale: float = 1.0) -> float | None:
    """A number given on the command line (``None`` when not given); NaN and infinity are
    refused."""
    if text is None:
        return None
    try:
        value = float(text)
    except ValueError:
        raise InputError(f"{thing} {field} {text!r} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{thing} {field} {text!r} must be a finite number")
    return value * scale


def whole(thing: str, field: str, text: str | None) -> int | None:
    if text is None:
        return None
    try:
        return int(text)
    except ValueError:
        raise InputError(f"{thing} {field} {text!r} is not a whole number") from None


def position(thing: str, text: str) -> tuple[float, float]:
    from passagelog.nav.position import parse_position

    try:
        return parse_position(text)
    except InputError as exc:
        raise InputError(f"{thing} position: {exc}") from None


def zone(thing: str, text: str | None) -> int | None:
    from passagelog.nav.zonetime import parse_zd

    if text is None:
        return None
    try:
        return parse_zd(text)
    except InputError as exc:
        raise InputError(f"{thing} zone description: {exc}") from None


def utc_time(thing: str, text: str | None, zone_minutes: int | None = None,
             *, default_now: bool = False) -> datetime | None:
    """A time from text with its zone (Z, an offset, or ``ZD+3`` ship's time); a time written
    without one is read in ``zone_minutes`` if given, else refused."""
    from passagelog.nav.zonetime import parse_time_utc

    if text is None:
        if default_now:
            return datetime.now(timezone.utc).replace(microsecond=0)
        return None
    try:
        return parse_time_utc(text, zone_minutes)
    except InputError as exc:
        raise InputError(f"{thing} time: {exc}") from None


def pos_text(lat: float | None, lon: float | None) -> str | None:
    from passagelog.nav.position import format_position

    return None if lat is None else format_position(lat, lon)


# ---------------------------------------------------------------------------------------------
# records as JSON objects (the stable forms of docs/cli.md)


CRAFT_COLUMNS = ["craft_id", "name", "kind", "usual_speed_kn", "max_speed_kn"]


def craft_record(c) -> dict:
    return {"craft_id": c.craft_id, "name": c.name, "kind": c.kind,
            "usual_speed_kn": c.usual_speed_kn, "max_speed_kn": c.max_speed_kn}


def voyage_record(book, v) -> dict:
    craft = book.craft(v.craft_id).name if v.craft_id is not None else None
    plan = book.plan(v.plan_id).name if v.plan_id is not None else None
    return {"voyage_id": v.voyage_id, "name": v.name, "craft_id": v.craft_id, "craft": craft,
            "from_place": v.from_place, "to_place": v.to_place,
            "departure_utc": iso(v.departure_utc), "zd_minutes": v.zd_minutes,
            "plan_id": v.plan_id, "plan": plan}


FIX_COLUMNS = ["time_utc", "lat", "lon", "method", "sog_kn", "cog", "heading", "remarks",
               "fix_id", "stw_kn", "hdop", "satellites", "fix_mode", "source", "suspect",
               "implied_speed_kn", "supersedes", "reason", "recorded_utc"]


def fix_record(book, f) -> dict:
    return {"fix_id": f.fix_id, "time_utc": iso(f.time_utc), "lat": f.lat, "lon": f.lon,
            "method": f.method, "sog_kn": f.sog_kn, "cog": f.cog, "heading": f.heading,
            "stw_kn": f.stw_kn, "hdop": f.hdop, "satellites": f.satellites,
            "fix_mode": f.fix_mode, "remarks": f.remarks, "source": f.source,
            "suspect": f.suspect, "implied_speed_kn": f.implied_speed_kn,
            "supersedes": f.supersedes, "reason": f.reason,
            "recorded_utc": iso(book.fix_recorded_utc(f.fix_id))}


ENTRY_COLUMNS = ["entry_id", "time_utc", "kind", "text", "zd_minutes", "lat", "lon",
                 "supersedes", "reason", "recorded_utc"]


def entry_record(book, e) -> dict:
    return {"entry_id": e.entry_id, "time_utc": iso(e.time_utc), "kind": e.kind,
            "text": e.text, "zd_minutes": e.zd_minutes, "lat": e.lat, "lon": e.lon,
            "supersedes": e.supersedes, "reason": e.reason,
            "recorded_utc": iso(book.entry_recorded_utc(e.entry_id))}


# ---------------------------------------------------------------------------------------------
# craft


@click.group()
def craft() -> None:
    """Ships and aircraft: their usual and maximum speeds (kn)."""


@craft.command("add")
@click.argument("name")
@click.option("--kind", default="ship", show_default=True, metavar="ship|aircraft",
              help="Ship or aircraft.")
@click.option("--usual-speed", metavar="KN", help="Usual speed, knots.")
@click.option("--max-speed", metavar="KN",
              help="Maximum speed, knots: a fix implying more is flagged suspect.")
@output_options
@click.pass_context
def craft_add(ctx, name, kind, usual_speed, max_speed, as_json, as_csv) -> None:
    """Record a new craft NAME."""
    from passagelog.model import Craft

    c = Craft(name, kind, number("craft", "usual speed (kn)", usual_speed),
              number("craft", "maximum speed (kn)", max_speed))
    with open_book(ctx) as book:
        c = book.add_craft(c)
    _emit_crafts([c], as_json, as_csv, one=True)


def _emit_crafts(items, as_json, as_csv, one=False) -> None:
    emit([craft_record(c) for c in items], CRAFT_COLUMNS, as_json, as_csv, one=one, human=[
        ("ID", lambda r: r["craft_id"]), ("NAME", lambda r: r["name"]),
        ("KIND", lambda r: r["kind"]), ("USUAL KN", lambda r: r["usual_speed_kn"]),
        ("MAX KN", lambda r: r["max_speed_kn"])])


@craft.command("show")
@click.argument("name")
@output_options
@click.pass_context
def craft_show(ctx, name, as_json, as_csv) -> None:
    """Show one craft (by name or id)."""
    with open_book(ctx, create=False) as book:
        rec = craft_record(book.craft(name))
    show_record(rec, CRAFT_COLUMNS, as_json, as_csv)


@craft.command("list")
@output_options
@click.pass_context
def craft_list(ctx, as_json, as_csv) -> None:
    """List the craft in the logbook."""
    with open_book(ctx, create=False) as book:
        _emit_crafts(book.list_craft(), as_json, as_csv)


# ---------------------------------------------------------------------------------------------
# voyages


@click.group()
def voyage() -> None:
    """Voyages: a craft from one place to another, sailed by a plan."""


@voyage.command("add")
@click.argument("name")
@click.option("--craft", "craft_name", metavar="CRAFT", help="The craft (name or id).")
@click.option("--from", "from_place", default="", help="Where the voyage starts.")
@click.option("--to", "to_place", default="", help="Where it ends.")
@click.option("--departure", metavar="TIME",
              help="Planned departure: 2026-03-01T08:00Z, 2026-03-01T09:00+01:00 or "
                   "2026-03-01T09:00 ZD-1.")
@click.option("--zd", "zd_text", default="0", show_default=True, metavar="ZD",
              help="Ship's zone description at the start (ZT + ZD = UTC; + west).")
@click.option("--plan", "plan_name", metavar="PLAN",
              help="Sail by this plan's latest revision from the start.")
@output_options
@click.pass_context
def voyage_add(ctx, name, craft_name, from_place, to_place, departure, zd_text, plan_name,
               as_json, as_csv) -> None:
    """Record a new voyage NAME."""
    from passagelog.model import Voyage

    zd = zone("voyage", zd_text)
    dep = utc_time("voyage planned departure", departure, zd)
    with open_book(ctx) as book:
        craft_id = book.craft(craft_name).craft_id if craft_name is not None else None
        plan_id = book.plan(plan_name).plan_id if plan_name is not None else None
        v = book.add_voyage(Voyage(name, craft_id, from_place, to_place, dep, zd, plan_id))
        _emit_voyages(book, [v], as_json, as_csv, one=True)


VOYAGE_COLUMNS = ["voyage_id", "name", "craft_id", "craft", "from_place", "to_place",
                  "departure_utc", "zd_minutes", "plan_id", "plan"]


def _emit_voyages(book, items, as_json, as_csv, one=False) -> None:
    from passagelog.nav.zonetime import format_zd

    emit([voyage_record(book, v) for v in items], VOYAGE_COLUMNS, as_json, as_csv, one=one,
         human=[
        ("ID", lambda r: r["voyage_id"]), ("NAME", lambda r: r["name"]),
        ("CRAFT", lambda r: r["craft"]), ("FROM", lambda r: r["from_place"] or None),
        ("TO", lambda r: r["to_place"] or None), ("DEPARTURE", lambda r: r["departure_utc"]),
        ("ZD", lambda r: format_zd(r["zd_minutes"])), ("PLAN", lambda r: r["plan"])])


@voyage.command("list")
@output_options
@click.pass_context
def voyage_list(ctx, as_json, as_csv) -> None:
    """List the voyages in the logbook."""
    with open_book(ctx, create=False) as book:
        _emit_voyages(book, book.list_voyages(), as_json, as_csv)


@voyage.command("show")
@click.argument("name")
@output_options
@click.pass_context
def voyage_show(ctx, name, as_json, as_csv) -> None:
    """Show a voyage: its craft, plan revisions in force, record counts and latest fix."""
    from passagelog.nav.zonetime import format_zd

    with open_book(ctx, create=False) as book:
        v = book.voyage(name)
        rec = voyage_record(book, v)
        rec["counts"] = book.counts(v)
        rec["plans"] = [{"plan_id": a.plan_id, "plan": a.plan_name, "revision": a.revision,
                         "from_utc": iso(a.from_utc), "recorded_utc": iso(a.recorded_utc)}
                        for a in book.plan_assignments(v)]
        last = book.latest_fix(v)
        rec["latest_fix"] = fix_record(book, last) if last else None
    lines = [("voyage", f"{rec['voyage_id']} {rec['name']}"), ("craft", rec["craft"]),
             ("from", rec["from_place"] or None), ("to", rec["to_place"] or None),
             ("departure", rec["departure_utc"]), ("zone", format_zd(rec["zd_minutes"]))]
    plans = rec["plans"]
    for k, p in enumerate(plans):
        # of two assignments from the same time the one recorded later is in force
        replaced = any(q["from_utc"] == p["from_utc"] for q in plans[k + 1:])
        lines.append(("plan", f"{p['plan']} revision {p['revision']} from "
                              f"{p['from_utc'] or 'the start'}"
                              + (" (replaced by a later assignment)" if replaced else "")))
    c = rec["counts"]
    lines.append(("fixes", f"{c['fixes_current']} current ({_records(c['fixes'])}, "
                           f"{c['suspect']} suspect)"))
    lines.append(("entries", f"{c['entries_current']} current ({_records(c['entries'])})"))
    if last:
        lines.append(("latest fix", f"{rec['latest_fix']['time_utc']} "
                                    f"{pos_text(last.lat, last.lon)}"))
    show_record(rec, VOYAGE_COLUMNS, as_json, as_csv, lines)


def _records(n: int) -> str:
    return f"{n} record" + ("" if n == 1 else "s")


@voyage.command("assign-plan")
@click.argument("name")
@click.argument("plan_name", metavar="PLAN")
@click.option("--revision", metavar="N", help="Plan revision (default: the latest).")
@click.option("--from", "from_text", metavar="TIME",
              help="In force from this time (default: from the start of the voyage).")
@click.option("--zone", "zone_text", metavar="ZD", help="Zone of a --from time without one.")
@click.pass_context
def voyage_assign_plan(ctx, name, plan_name, revision, from_text, zone_text) -> None:
    """Put a revision of PLAN in force on voyage NAME from a time on."""
    rev = whole("plan assignment", "revision", revision)
    when = utc_time("plan assignment from", from_text, zone("plan assignment", zone_text))
    with open_book(ctx) as book:
        a = book.assign_plan(name, plan_name, rev, when)
    click.echo(f"voyage {name}: plan {a.plan_name} revision {a.revision} in force from "
               f"{iso(a.from_utc) or 'the start'}")


# ---------------------------------------------------------------------------------------------
# fixes


@click.group()
def fix() -> None:
    """Fixes: positions at times, append-only; a correction supersedes a fix."""


#: ``--zone`` of the commands that take a ``--time``.
ZONE_OPTION = click.option("--zone", "zone_text", metavar="ZD",
                           help="Zone description of a --time written without one.")

_fix_options = options(
    click.option("--time", "time_text", metavar="TIME",
                 help="UTC (2026-03-01T12:00Z) or ship's time with its zone "
                      "(2026-03-01T13:00 ZD-1, or an offset)."),
    ZONE_OPTION,
    click.option("--method", metavar="|".join(("gnss", "radar", "visual", "celestial",
                                               "dr", "ep", "other"))),
    click.option("--sog", metavar="KN", help="Speed over ground, knots."),
    click.option("--cog", metavar="DEG", help="Course over ground, degrees true."),
    click.option("--heading", metavar="DEG", help="Heading, degrees true."),
    click.option("--stw", metavar="KN", help="Speed through the water (an aircraft: true airspeed), knots."),
    click.option("--hdop", metavar="N", help="Horizontal dilution of precision."),
    click.option("--satellites", metavar="N", help="Satellites used."),
    click.option("--remarks", help="Free text."),
)


def _build_fix(base, pos_text_, time_text, zone_text, method, sog, cog, heading, stw, hdop,
               satellites, remarks):
    from passagelog.model import Fix

    lat, lon = position("fix", pos_text_) if pos_text_ is not None else (
        (base.lat, base.lon) if base else (None, None))
    zd = zone("fix", zone_text)
    when = utc_time("fix", time_text, zd, default_now=base is None)
    if when is None:
        when = base.time_utc

    def pick(new, old):
        return old if new is None else new

    return Fix(
        time_utc=when, lat=lat, lon=lon,
        method=pick(method, base.method if base else "gnss"),
        sog_kn=pick(number("fix", "SOG (kn)", sog), base.sog_kn if base else None),
        cog=pick(number("fix", "COG", cog), base.cog if base else None),
        heading=pick(number("fix", "heading", heading), base.heading if base else None),
        stw_kn=pick(number("fix", "speed through the water (kn)", stw),
                    base.stw_kn if base else None),
        hdop=pick(number("fix", "HDOP", hdop), base.hdop if base else None),
        satellites=pick(whole("fix", "satellites", satellites),
                        base.satellites if base else None),
        fix_mode=base.fix_mode if base else None,
        remarks=pick(remarks, base.remarks if base else ""),
        source=None,  # a correction typed in does not come from the original's raw text
    )


def _say_fix(book, voyage_name, f, as_json) -> None:
    rec = fix_record(book, f)
    if f.suspect:
        craft = book.voyage(voyage_name)
        top = book.craft(craft.craft_id).max_speed_kn if craft.craft_id else None
        speed = (f"{f.implied_speed_kn:.1f} kn" if f.implied_speed_kn is not None
                 else "a jump at the same time")
        click.echo(f"passagelog: warning: fix {f.fix_id} is suspect: implied speed {speed} "
                   f"from the previous fix exceeds the craft's maximum {top:g} kn", err=True)
    _say_new(rec, as_json, f"fix {f.fix_id}  {rec['time_utc']}  {pos_text(f.lat, f.lon)}"
             + (f"  supersedes fix {f.supersedes}" if f.supersedes else ""))


def _say_new(rec: dict, as_json: bool, line: str) -> None:
    """A record just written: its JSON object, or one line for people."""
    if as_json:
        emit_one(rec, True)
    else:
        click.echo(line)


@fix.command("add")
@click.argument("voyage_name", metavar="VOYAGE")
@click.argument("pos", metavar="POSITION")
@_fix_options
@click.option("--json", "as_json", is_flag=True, help="Print the new fix as JSON.")
@click.pass_context
def fix_add(ctx, voyage_name, pos, time_text, zone_text, method, sog, cog, heading, stw, hdop,
            satellites, remarks, as_json) -> None:
    """Record a fix at POSITION (any usual notation; quote it). Time defaults to now (UTC)."""
    f = _build_fix(None, pos, time_text, zone_text, method, sog, cog, heading, stw, hdop,
                   satellites, remarks)
    with open_book(ctx) as book:
        stored = book.add_fix(voyage_name, f)
        _say_fix(book, voyage_name, stored, as_json)


@fix.command("correct")
@click.argument("voyage_name", metavar="VOYAGE")
@click.argument("fix_id", metavar="FIX_ID")
@click.option("--reason", required=True, help="Why the fix is corrected (kept with it).")
@click.option("--position", "pos", metavar="POSITION", help="The corrected position.")
@_fix_options
@click.option("--json", "as_json", is_flag=True, help="Print the new fix as JSON.")
@click.pass_context
def fix_correct(ctx, voyage_name, fix_id, reason, pos, time_text, zone_text, method, sog, cog,
                heading, stw, hdop, satellites, remarks, as_json) -> None:
    """Correct fix FIX_ID: a new fix that supersedes it (fields not given are kept)."""
    fid = whole("fix correction", "fix id", fix_id)
    with open_book(ctx) as book:
        base = book.fix(fid)
        f = _build_fix(base, pos, time_text, zone_text, method, sog, cog, heading, stw, hdop,
                       satellites, remarks)
        stored = book.correct_fix(voyage_name, fid, f, reason)
        _say_fix(book, voyage_name, stored, as_json)


@fix.command("list")
@click.argument("voyage_name", metavar="VOYAGE")
@click.option("--history", is_flag=True, help="Every record, superseded ones included.")
@output_options
@click.pass_context
def fix_list(ctx, voyage_name, history, as_json, as_csv) -> None:
    """List a voyage's fixes in time order (current view), or every record with --history."""
    with open_book(ctx, create=False) as book:
        records = [fix_record(book, f) for f in book.fixes(voyage_name, history=history)]
    emit(records, FIX_COLUMNS, as_json, as_csv, [
        ("ID", lambda r: r["fix_id"]), ("TIME UTC", lambda r: r["time_utc"]),
        ("POSITION", lambda r: pos_text(r["lat"], r["lon"])),
        ("METHOD", lambda r: r["method"]), ("SOG", lambda r: r["sog_kn"]),
        ("COG", lambda r: r["cog"]),
        ("NOTE", lambda r: _fix_note(r))])


def _fix_note(r: dict) -> str | None:
    notes = []
    if r["suspect"]:
        notes.append("suspect " + (f"{r['implied_speed_kn']:.1f} kn"
                                   if r["implied_speed_kn"] is not None else "jump"))
    if r["supersedes"]:
        notes.append(f"corrects {r['supersedes']}: {r['reason']}")
    if r["remarks"]:
        notes.append(r["remarks"])
    return "; ".join(notes) or None


@fix.command("show")
@click.argument("fix_id", metavar="FIX_ID")
@output_options
@click.pass_context
def fix_show(ctx, fix_id, as_json, as_csv) -> None:
    """Show one fix record (current or superseded)."""
    fid = whole("fix", "id", fix_id)
    with open_book(ctx, create=False) as book:
        rec = fix_record(book, book.fix(fid))
    show_record(rec, FIX_COLUMNS, as_json, as_csv,
          [(k, rec[k]) for k in ["fix_id", "time_utc"]]
          + [("position", pos_text(rec["lat"], rec["lon"]))]
          + [(k, rec[k]) for k in FIX_COLUMNS if k not in ("fix_id", "time_utc", "lat", "lon")])


# ---------------------------------------------------------------------------------------------
# log entries


@click.group()
def entry() -> None:
    """Log entries: departure, arrival, clock change, course alteration, event, remark."""


_entry_options = options(
    click.option("--time", "time_text", metavar="TIME",
                 help="UTC or ship's time with its zone (default: now, UTC)."),
    ZONE_OPTION,
    click.option("--new-zd", "new_zd", metavar="ZD",
                 help="For a clock change: the new zone description."),
    click.option("--position", "pos", metavar="POSITION", help="Where (optional)."),
)


def _build_entry(base, kind, text, time_text, zone_text, new_zd, pos):
    from passagelog.model import LogEntry

    zd = zone("log entry", zone_text)
    when = utc_time("log entry", time_text, zd, default_now=base is None) or base.time_utc
    lat, lon = position("log entry", pos) if pos else (
        (base.lat, base.lon) if base else (None, None))
    new = zone("log entry new", new_zd)
    return LogEntry(when, kind if kind is not None else base.kind,
                    text if text is not None else (base.text if base else ""),
                    new if new is not None else (base.zd_minutes if base else None), lat, lon)


def _say_entry(book, e, as_json) -> None:
    rec = entry_record(book, e)
    _say_new(rec, as_json, f"entry {e.entry_id}  {rec['time_utc']}  {e.kind}"
             + (f"  supersedes entry {e.supersedes}" if e.supersedes else ""))


@entry.command("add")
@click.argument("voyage_name", metavar="VOYAGE")
@click.argument("kind", metavar="KIND")
@click.argument("text", required=False, default="")
@_entry_options
@click.option("--json", "as_json", is_flag=True, help="Print the new entry as JSON.")
@click.pass_context
def entry_add(ctx, voyage_name, kind, text, time_text, zone_text, new_zd, pos,
              as_json) -> None:
    """Record a log entry of KIND (departure, arrival, clock-change, course-alteration, event,
    remark) with optional TEXT."""
    e = _build_entry(None, kind, text, time_text, zone_text, new_zd, pos)
    with open_book(ctx) as book:
        _say_entry(book, book.add_entry(voyage_name, e), as_json)


@entry.command("correct")
@click.argument("voyage_name", metavar="VOYAGE")
@click.argument("entry_id", metavar="ENTRY_ID")
@click.option("--reason", required=True, help="Why the entry is corrected (kept with it).")
@click.option("--kind", metavar="KIND", help="The corrected kind.")
@click.option("--text", help="The corrected text.")
@_entry_options
@click.option("--json", "as_json", is_flag=True, help="Print the new entry as JSON.")
@click.pass_context
def entry_correct(ctx, voyage_name, entry_id, reason, kind, text, time_text, zone_text,
                  new_zd, pos, as_json) -> None:
    """Correct entry ENTRY_ID: a new entry that supersedes it (fields not given are kept)."""
    eid = whole("log entry correction", "entry id", entry_id)
    with open_book(ctx) as book:
        base = book.entry(eid)
        e = _build_entry(base, kind, text, time_text, zone_text, new_zd, pos)
        _say_entry(book, book.correct_entry(voyage_name, eid, e, reason), as_json)


@entry.command("list")
@click.argument("voyage_name", metavar="VOYAGE")
@click.option("--history", is_flag=True, help="Every record, superseded ones included.")
@output_options
@click.pass_context
def entry_list(ctx, voyage_name, history, as_json, as_csv) -> None:
    """List a voyage's log entries in time order, or every record with --history."""
    from passagelog.nav.zonetime import format_zd

    from passagelog.nav.zonetime import format_ship_time

    with open_book(ctx, create=False) as book:
        items = book.entries(voyage_name, history=history)
        records = [entry_record(book, e) for e in items]
        ship = {e.entry_id: format_ship_time(e.time_utc, book.zone_at(voyage_name, e.time_utc))
                for e in items} if not (as_json or as_csv) else {}
    emit(records, ENTRY_COLUMNS, as_json, as_csv, [
        ("ID", lambda r: r["entry_id"]), ("TIME UTC", lambda r: r["time_utc"]),
        ("SHIP TIME", lambda r: ship[r["entry_id"]]),
        ("KIND", lambda r: r["kind"]),
        ("ZD", lambda r: None if r["zd_minutes"] is None else format_zd(r["zd_minutes"])),
        ("TEXT", lambda r: "; ".join(x for x in (
            r["text"], f"corrects {r['supersedes']}: {r['reason']}" if r["supersedes"]
            else "") if x) or None)])


@entry.command("show")
@click.argument("entry_id", metavar="ENTRY_ID")
@output_options
@click.pass_context
def entry_show(ctx, entry_id, as_json, as_csv) -> None:
    """Show one log entry record (current or superseded)."""
    eid = whole("log entry", "id", entry_id)
    with open_book(ctx, create=False) as book:
        rec = entry_record(book, book.entry(eid))
    lines = [(k, rec[k]) for k in ENTRY_COLUMNS if k not in ("lat", "lon")]
    lines.insert(5, ("position", pos_text(rec["lat"], rec["lon"])))
    show_record(rec, ENTRY_COLUMNS, as_json, as_csv, lines)


# ---------------------------------------------------------------------------------------------
# verify


@click.command()
@click.option("--json", "as_json", is_flag=True, help="Print the report as JSON.")
@click.option("--rebuild-cache", is_flag=True,
              help="Rebuild the fast-loading copy of the fixes from the records "
                   "and drop kept review results first.")
@click.pass_context
def verify(ctx, as_json, rebuild_cache) -> None:
    """Walk the logbook's record chains; exit 1 naming the first record edited, deleted or
    inserted behind the logbook's back."""
    with open_book(ctx, create=False) as book:
        if rebuild_cache:
            book.rebuild_cache()
        report = book.verify()
    if as_json:
        click.echo(json.dumps({
            "ok": report.ok, "records": report.records,
            "heads": {c: {"record_id": i, "hash": h} for c, (i, h) in report.heads.items()},
            "findings": [{"kind": f.kind, "chain": f.chain, "record_id": f.record_id,
                          "message": f.message} for f in report.findings]},
            ensure_ascii=False, indent=1))
    else:
        total = sum(report.records.values())
        for f in report.findings:
            click.echo(f"{f.kind}: {f.message}")
        click.echo(f"{total} records checked: "
                   + ("the chains verify" if report.ok
                      else f"{len(report.findings)} problem(s) found"))
    if not report.ok:
        first = report.first
        raise IntegrityError(f"the logbook does not verify: {first.message}")
