"""``passagelog review`` and ``passagelog status``: the fixes against the plan.

Both work on a voyage of the logbook (``VOYAGE``, default the latest) or straight from files
(``--plan FILE --fixes FILE``). ``review --table fixes --format csv`` is part of the stable
scripting contract (docs/cli.md).
"""

from __future__ import annotations

import csv
import json
import math
from datetime import datetime, timezone
from typing import Callable, Iterable

import click

from passagelog.cli.common import TABLE_FORMATS, db_path_from, options, write_csv
from passagelog.errors import InputError
from passagelog.report.display import span_text
from passagelog.review.status import SUSPECT_WHY

TABLE_CHOICES = ("fixes", "legs", "passages", "episodes", "noon", "gaps", "suspects")
NM_M = 1852.0

#: Columns shown to people (table and md) for the wide fixes table; csv/json carry all.
PEOPLE_FIX_COLUMNS = (
    "time_utc", "lat", "lon", "leg", "xte_m", "side", "inside_xtl", "along_m", "leg_to_go_m",
    "route_to_go_m", "dtw_m", "btw", "smg_window_kn", "eta_dest_plan_utc", "delay_s", "phase",
)
PEOPLE_COLUMNS = {
    "fixes": PEOPLE_FIX_COLUMNS,
    "legs": ("leg", "from_wp", "to_wp", "sailing", "planned_distance_m", "planned_speed_kn",
             "planned_time_s", "actual_time_s", "completed", "run_m", "smg_kn", "max_abs_xte_m",
             "rms_xte_m", "share_outside", "time_outside_s", "set", "drift_kn"),
    "passages": ("waypoint", "name", "time_utc", "how", "xte_m", "closest_m", "planned_utc",
                 "delay_s", "skipped"),
    "noon": ("ship_date", "noon_utc", "zone", "day_hours", "lat", "lon", "run_m", "dmg_m",
             "avg_speed_kn", "smg_kn", "route_to_go_m", "eta_dest_plan_utc"),
}


# ------------------------------------------------------------------------------- inputs


def _route_fmt(name: str | None) -> str | None:
    return {"csv": "route-csv"}.get(name, name) if name else None


def _fix_fmt(name: str | None) -> str | None:
    return {"csv": "fix-csv"}.get(name, name) if name else None


def _time(text: str | None, what: str):
    if not text:
        return None
    from passagelog.nav.zonetime import parse_time_utc

    try:
        return parse_time_utc(text)
    except InputError as exc:
        raise InputError(f"{what}: {exc}") from None


def _clock_changes(items: tuple[str, ...]):
    from passagelog.model import LogEntry
    from passagelog.nav.zonetime import parse_zd

    out = []
    for item in items:
        when, sep, zd = item.rpartition("=")
        if not sep or not when.strip():
            raise InputError(f"clock change {item!r} must be TIME=ZD, e.g. "
                             "2026-03-02T03:00Z=+3")
        out.append(LogEntry(_time(when.strip(), f"clock change {item!r}"), "clock-change",
                            zd_minutes=parse_zd(zd.strip())))
    return out


def load_inputs(ctx: click.Context, voyage: str | None, plan_file: str | None,
                plan_format: str | None, fixes_file: str | None, fixes_format: str | None,
                departure: str | None, zd: str | None, clock_changes: tuple[str, ...]) -> dict:
    """What reconcile needs, from the logbook or from files, plus provenance fields."""
    if plan_file or fixes_file:
        if voyage:
            raise click.UsageError("give either a VOYAGE or --plan/--fixes files, not both")
        if not (plan_file and fixes_file):
            raise click.UsageError("the file form needs both --plan FILE and --fixes FILE")
        from passagelog.formats import read_fixes, read_route
        from passagelog.nav.zonetime import parse_zd, zd_from_lon

        route = read_route(plan_file, fmt=_route_fmt(plan_format))
        fixes, summary = read_fixes(fixes_file, fmt=_fix_fmt(fixes_format))
        if summary.rejected:  # what was left out, and where, as import says it
            for line in summary.report_lines():
                click.echo(line, err=True)
        zd_minutes = parse_zd(zd) if zd else 60 * zd_from_lon(route.waypoints[0].lon)
        return {
            "plan": route, "fixes": fixes, "entries": _clock_changes(clock_changes),
            "zd_minutes": zd_minutes, "departure_utc": _time(departure, "--departure"),
            "planned_departure_utc": None, "voyage": "", "source": f"{plan_file}, {fixes_file}",
            "plan_name": route.name, "plan_labels": [route.name],
        }
    from passagelog.store import Logbook

    path = db_path_from(ctx)
    with Logbook.open(path, create=False) as book:
        if voyage is None:
            voyages = book.list_voyages()
            if not voyages:
                raise click.UsageError(
                    f"the logbook {str(path)!r} has no voyage; give --plan FILE --fixes FILE")
            v = voyages[-1]
        else:
            v = book.voyage(voyage)
        plan = book.plan_schedule(v)
        if not plan:
            raise InputError(f"voyage {v.name!r} has no plan assigned; put one in force with "
                             f"'passagelog voyage assign-plan VOYAGE PLAN'")
        fixes = book.fix_arrays(v)
        entries = list(book.entries(v)) + _clock_changes(clock_changes)
        labels = plan_labels(book.plan_assignments(v), plan)
    dep = _time(departure, "--departure")
    if dep is None and not any(e.kind == "departure" for e in entries):
        dep = v.departure_utc
    from passagelog.nav.zonetime import parse_zd

    return {
        "plan": plan, "fixes": fixes, "entries": entries,
        "zd_minutes": parse_zd(zd) if zd else v.zd_minutes, "departure_utc": dep,
        "planned_departure_utc": v.departure_utc, "voyage": v.name, "source": str(path),
        "plan_name": labels[-1], "plan_labels": labels,
    }


def plan_labels(assignments, schedule) -> list[str]:
    """A label for each plan revision in force over a voyage (in the order of
    ``Logbook.plan_schedule``, which these follow: by the time from which each is in force,
    of two from the same time the one recorded later): the plan's name as the logbook's plan
    commands give it, its revision, and the route's own name when that differs (an imported
    route keeps the one in its file): ``Coastal, revision 2 (route 'Skellan Sound')``."""
    chosen = {}
    for a in assignments:
        chosen[a.from_utc] = a
    ordered = sorted(chosen.values(), key=lambda a: (
        a.from_utc is not None, a.from_utc.timestamp() if a.from_utc else 0.0))
    if len(ordered) != len(schedule):  # not as expected: fall back on the routes' names
        ordered = [None] * len(schedule)
    out = []
    for a, (_, route) in zip(ordered, schedule):
        name = route.name if a is None else a.plan_name
        out.append(name + (f", revision {route.revision}" if route.revision else "")
                   + (f" (route {route.name!r})" if route.name != name else ""))
    return out


def run_review(inputs: dict, window_h: float, gap_min: float, include_suspect: bool,
               max_speed: float | None, arrival_radius: float | None, *,
               latest_only: bool = False):
    """The review (or, with ``latest_only``, the watch summary of the latest fix)."""
    from passagelog.review import reconcile, watch

    return (watch if latest_only else reconcile)(
        inputs["plan"], inputs["fixes"], departure_utc=inputs["departure_utc"],
        planned_departure_utc=inputs["planned_departure_utc"],
        zd_minutes=inputs["zd_minutes"], entries=inputs["entries"],
        window_s=window_h * 3600.0, gap_s=gap_min * 60.0, include_suspect=include_suspect,
        max_speed_kn=max_speed,
        arrival_radius_m=None if arrival_radius is None else arrival_radius * NM_M,
    )


_input_options = options(
    click.argument("voyage", required=False),
    click.option("--plan", "plan_file", metavar="FILE",
                 help="Plan file (route CSV, GPX or RTZ) instead of a logbook voyage."),
    click.option("--plan-format", type=click.Choice(("csv", "gpx", "rtz")),
                 help="Format of --plan (default: told from the content)."),
    click.option("--fixes", "fixes_file", metavar="FILE",
                 help="Fix file (NMEA 0183, GPX or fix CSV) to go with --plan."),
    click.option("--fixes-format", type=click.Choice(("nmea", "gpx", "csv")),
                 help="Format of --fixes (default: told from the content)."),
    click.option("--departure", metavar="TIME",
                 help="Departure time (UTC, or ship's time with its ZD). Default: the "
                      "logbook's departure entry or planned departure; the first fix."),
    click.option("--zd", metavar="ZD",
                 help="Ship's zone description at departure (e.g. +3). Default: the "
                      "voyage's; for files, the zone of the first waypoint's longitude."),
    click.option("--clock-change", "clock_changes", metavar="TIME=ZD", multiple=True,
                 help="A clock change (new ZD from TIME); repeat as needed."),
    click.option("--window-h", type=click.FloatRange(min=0.01), default=3.0,
                 show_default=True, help="Window of the SMG behind the ETA by progress."),
    click.option("--gap-min", type=click.FloatRange(min=0.01), default=60.0,
                 show_default=True, help="A longer interval without a fix is a gap."),
    click.option("--include-suspect", is_flag=True,
                 help="Let suspect fixes count in the statistics and passages."),
    click.option("--max-speed", type=click.FloatRange(min=0.01), metavar="KN",
                 help="Also flag fixes implying more than KN from the previous good fix."),
    click.option("--arrival-radius", type=click.FloatRange(min=0.0), metavar="NM",
                 help="Arrival circle for waypoints that have none."),
)


# ------------------------------------------------------------------------------- output


def _csv_text(value: str) -> str:
    if any(ch in value for ch in ',"\r\n'):
        return '"' + value.replace('"', '""') + '"'
    return value


def _csv_column(values: list) -> list[str]:
    """One column of cells, formatted as :func:`passagelog.cli.common.csv_cell` would (but
    a column at a time: the list's own repr formats numbers in C)."""
    if not values:
        return []
    sample = next((v for v in values if v is not None), None)
    if sample is None:
        return [""] * len(values)
    if isinstance(sample, bool):
        return ["" if v is None else ("true" if v else "false") for v in values]
    if isinstance(sample, (int, float)):
        cells = repr(values)[1:-1].split(", ")
        return ["" if c == "None" else c for c in cells] if None in values else cells
    distinct = set(values)
    distinct.discard(None)
    if any(ch in "".join(distinct) for ch in ',"\r\n'):
        return ["" if v is None else _csv_text(v) for v in values]
    return ["" if v is None else v for v in values]


def write_fix_csv(review, columns: tuple[str, ...], out) -> None:
    """The fixes table as CSV, a block of columns at a time (a million rows in seconds)."""
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(columns)
    for cols in review.fix_blocks():
        cells = [_csv_column(cols[c]) for c in columns]
        out.write("".join(",".join(row) + "\n" for row in zip(*cells)))


def write_json(rows: Iterable[dict], out) -> None:
    out.write("[")
    first = True
    for row in rows:
        out.write("\n " if first else ",\n ")
        out.write(json.dumps(row, ensure_ascii=False, allow_nan=False))
        first = False
    out.write("\n]\n" if not first else "]\n")


def emit_table(review, table: str, fmt: str, *, title: str, provenance) -> None:
    from passagelog.review import TABLE_COLUMNS

    out = click.get_text_stream("stdout")
    columns = TABLE_COLUMNS[table]
    if fmt == "csv" and table == "fixes":
        write_fix_csv(review, columns, out)
        return
    rows = review.iter_rows(table)
    if fmt == "csv":
        write_csv(rows, columns, out)
        return
    if fmt == "json":
        write_json(rows, out)
        return
    from passagelog.cli.common import emit_records
    from passagelog.report.display import display_records

    records, shown = display_records(rows, PEOPLE_COLUMNS.get(table, columns))
    emit_records(records, shown, fmt, title=title, provenance=provenance)


def _provenance(inputs: dict):
    from passagelog.report.render import Provenance

    return Provenance(source=inputs["source"], voyage=inputs["voyage"],
                      plan=inputs["plan_name"])


# ------------------------------------------------------------------------------ review


@click.command("review")
@_input_options
@click.option("--table", type=click.Choice(TABLE_CHOICES), default="legs", show_default=True,
              help="Which table to print.")
@click.option("--format", "fmt", type=click.Choice(TABLE_FORMATS), default="table",
              show_default=True, help="table and md are for people; csv and json for scripts.")
@click.pass_context
def review(ctx, voyage, plan_file, plan_format, fixes_file, fixes_format, departure, zd,
           clock_changes, window_h, gap_min, include_suspect, max_speed, arrival_radius,
           table, fmt):
    """Reconcile the voyage's fixes with its plan and print one table.

    Tables: fixes (one row per valid fix in time order), legs (planned against actual),
    passages (waypoints passed), episodes (spells outside the cross-track limit), noon
    (noon to noon in ship's time), gaps (no fix for longer than --gap-min), suspects.

    \b
    passagelog review "Kestrel 12" --table passages
    passagelog review --plan route.rtz --fixes track.nmea --table fixes --format csv
    """
    inputs = load_inputs(ctx, voyage, plan_file, plan_format, fixes_file, fixes_format,
                         departure, zd, clock_changes)
    rv = run_review(inputs, window_h, gap_min, include_suspect, max_speed, arrival_radius)
    name = inputs["voyage"] or inputs["plan_name"]
    emit_table(rv, table, fmt, title=f"{name}: {table}",
               provenance=_provenance(inputs))


# ------------------------------------------------------------------------------ status


def _nm(m: float | None, digits: int = 2) -> str:
    return "-" if m is None or not math.isfinite(m) else f"{m / NM_M:.{digits}f} NM"


def _deg(value: float | None) -> str:
    return "-" if value is None else f"{value:05.1f}°T"


def _when(t_s: float | None, zd_minutes: int, *, seconds: bool = False) -> str:
    """A time in UTC and in ship's time with its zone: ``2026-03-01 10:40Z  ship
    2026-03-01 07:40 ZD+3`` (to the minute unless ``seconds``); ``-`` when unknown."""
    if t_s is None or not math.isfinite(t_s):
        return "-"
    from passagelog.nav.zonetime import format_zd, ship_time

    step = 1.0 if seconds else 60.0
    dt = datetime.fromtimestamp(round(t_s / step) * step, tz=timezone.utc)
    fmt = "%Y-%m-%d %H:%M:%S" if seconds else "%Y-%m-%d %H:%M"
    return (f"{dt:{fmt}}Z  ship {ship_time(dt, zd_minutes):{fmt}} "
            f"ZD{format_zd(zd_minutes)}")


#: Width of the label column of the watch summary.
LABEL = 13


def _line(label: str, text: str) -> str:
    return f"{label:<{LABEL}}{text}".rstrip()


def status_lines(st, *, zd_at: Callable[[float], int], now_s: float | None, voyage: str,
                 plan: str) -> list[str]:
    """The watch summary as lines of text: a label column, then the value with its unit;
    times in UTC and in ship's time with the zone in force; ``-`` for what is not known."""
    from passagelog.nav.position import format_position

    lines = [_line("Voyage", voyage)] if voyage else []
    lines.append(_line("Plan", plan))
    age = ""
    if now_s is not None:
        age = (f"  ({span_text(now_s - st.time_s)} ago)" if now_s >= st.time_s
               else f"  ({span_text(st.time_s - now_s)} later than this computer's clock)")
    lines.append(_line("Fix", _when(st.time_s, zd_at(st.time_s), seconds=True) + age))
    lines.append(_line("Position", format_position(st.lat, st.lon)
                       + (f"  SUSPECT fix ({SUSPECT_WHY.get(st.suspect_reason, 'marked')})"
                          if st.suspect else "")))
    if st.phase != "under-way":
        lines.append(_line("Phase", st.phase))
    lines.append(_line("Leg", f"{st.leg} of {st.legs}: {st.from_wp} -> {st.to_wp}"))
    side = st.side or "on track"
    limit = "no limit set" if st.xtl_m is None else (
        f"limit {_nm(st.xtl_m)} {st.side or ''}".rstrip()
        + (": inside" if st.inside_xtl else ": OUTSIDE"))
    if math.isfinite(st.xte_m):
        lines.append(_line("XTE", f"{_nm(abs(st.xte_m))} {side} ({st.xte_m:+.1f} m), {limit}"))
    else:
        lines.append(_line("XTE", "-  (no cross-track foot on this leg: the fix is at the pole "
                                  "of the leg's great circle or far off the line)"))
    lines.append(_line("Along track", f"{_nm(st.along_m)} from {st.from_wp}, "
                                      f"leg to go {_nm(st.leg_to_go_m)}"))
    lines.append(_line("Next WP", f"{st.to_wp}: DTW {_nm(st.dtw_m)}, BTW {_deg(st.btw)}"))
    lines.append(_line("DTG", f"{_nm(st.route_to_go_m)} to {st.destination} along the plan"))
    window = span_text(st.window_s)
    if st.smg_window_kn is None:
        lines.append(_line("Made good", f"-  (no progress measured over the last {window})"))
    else:
        used = window if st.window_used_s is None else span_text(st.window_used_s)
        lines.append(_line("Made good", f"CMG {_deg(st.cmg_window)}, SMG "
                                        f"{st.smg_window_kn:.1f} kn over the last {used}"))
    etas = [("ETA next WP", st.to_wp, st.eta_wp_plan_s, st.eta_wp_smg_s)]
    if st.to_wp != st.destination or st.leg != st.legs:
        etas.append(("ETA dest", st.destination, st.eta_dest_plan_s, st.eta_dest_smg_s))
    else:
        etas[0] = ("ETA dest", st.destination, st.eta_dest_plan_s, st.eta_dest_smg_s)
    for label, wp, by_plan, by_smg in etas:
        lines.append(_line(label, wp))
        for how, t_s in (("by plan", by_plan), ("by SMG", by_smg)):
            lines.append(_line(f"  {how}", _when(t_s, zd_at(t_s) if t_s is not None else 0)))
    if st.delay_s is None:
        lines.append(_line("Schedule", "-"))
    elif abs(st.delay_s) < 30.0:
        lines.append(_line("Schedule", "on the plan's time"))
    else:
        word = "behind" if st.delay_s > 0 else "ahead of"
        lines.append(_line("Schedule", f"{span_text(st.delay_s)} {word} the plan"))
    if st.drift_kn is None:
        lines.append(_line("Set/drift", "-  (heading and speed through the water not logged)"))
    else:
        lines.append(_line("Set/drift", f"set {_deg(st.set)}, drift {st.drift_kn:.1f} kn "
                                        f"over the last {window}"))
    return lines


def _label_at(inputs: dict, revision: int) -> str:
    """The label of the plan revision in force at the fix (``revision`` indexes the
    schedule); for files, whose routes may be a sequence, the name of the last."""
    labels = inputs["plan_labels"]
    return labels[revision] if 0 <= revision < len(labels) else inputs["plan_name"]


@click.command("status")
@_input_options
@click.option("--json", "as_json", is_flag=True, help="Print JSON for scripts.")
@click.option("--now", metavar="TIME", hidden=True, help="Time taken as now (for the fix age).")
@click.pass_context
def status(ctx, voyage, plan_file, plan_format, fixes_file, fixes_format, departure, zd,
           clock_changes, window_h, gap_min, include_suspect, max_speed, arrival_radius,
           as_json, now):
    """The latest fix against the plan: leg, XTE and limit, DTW/BTW, DTG, SMG, ETAs by
    plan and by recent progress, schedule, set and drift.

    Times are shown in UTC and in ship's time with the zone in force, distances in NM,
    speeds in knots; '-' marks what is not known. Scripts read --json (keys in
    docs/cli.md); the text layout may change.
    """
    from passagelog import CAUTION
    from passagelog.review.inputs import clocks_from

    inputs = load_inputs(ctx, voyage, plan_file, plan_format, fixes_file, fixes_format,
                         departure, zd, clock_changes)
    if not len(inputs["fixes"]):  # one line that says what to do, before the engine
        raise InputError(
            f"voyage {inputs['voyage']!r} has no fixes yet: nothing to show against the plan "
            "(log one with 'passagelog fix add', or import a fix file)" if inputs["voyage"]
            else f"{fixes_file} holds no valid fix: nothing to show against the plan")
    st = run_review(inputs, window_h, gap_min, include_suspect, max_speed, arrival_radius,
                    latest_only=True)
    if as_json:
        click.echo(json.dumps(st.row(), ensure_ascii=False, allow_nan=False))
        return
    clocks = clocks_from(inputs["zd_minutes"], inputs["entries"])
    now_dt = _time(now, "--now") if now else datetime.now(timezone.utc)
    for line in status_lines(st, zd_at=clocks.zd_at, now_s=now_dt.timestamp(),
                             voyage=inputs["voyage"], plan=_label_at(inputs, st.revision)):
        click.echo(line)
    click.echo(f"Caution: {CAUTION}", err=True)
