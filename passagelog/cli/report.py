"""``passagelog report``: leg tables, the air navigation log and the voyage review report."""

from __future__ import annotations

from pathlib import Path

import click

from passagelog.cli.common import TABLE_FORMATS, emit_records, refuse_nul, unwritable

FORMATS = TABLE_FORMATS + ("html",)


def _write(text: str, output: str | None) -> None:
    if output in (None, "-"):
        click.echo(text, nl=not text.endswith("\n"))
    else:
        refuse_nul(output)
        try:
            Path(output).write_text(text, encoding="utf-8")
        except OSError as exc:  # a directory, no such folder, no permission, name too long
            raise unwritable(output, exc) from exc
        click.echo(f"wrote {output}", err=True)


def _departure(text: str | None):
    if not text:
        return None
    from passagelog.nav.zonetime import parse_time_utc

    return parse_time_utc(text)


def _load_plan(plan_file: str | None, voyage: str | None, ctx: click.Context):
    """(route, departure_utc, provenance fields) from a plan file or a logbook voyage."""
    if plan_file:
        from passagelog.formats import read_route

        return read_route(plan_file), None, {"source": plan_file}
    if voyage is None:
        raise click.UsageError("give --plan FILE, or a VOYAGE from the logbook")
    from passagelog.cli.common import db_path_from
    from passagelog.store import Logbook

    path = db_path_from(ctx)
    with Logbook.open(path, create=False) as book:
        v = book.voyage(voyage)
        schedule = book.plan_schedule(v)
        if not schedule:
            raise click.UsageError(f"voyage {v.name!r} has no plan assigned")
        route = schedule[-1][1]
    return route, v.departure_utc, {
        "source": str(path), "voyage": v.name,
        "plan": f"{route.name}, revision {route.revision}" if route.revision else route.name,
    }


@click.group()
def report() -> None:
    """Leg tables and reports for the record (CSV, Markdown, HTML, JSON).

    Every report for people carries the safety caution and its provenance.
    """


@report.command("legs")
@click.argument("voyage", required=False)
@click.option("--plan", "plan_file", metavar="FILE", help="Plan file (CSV, GPX or RTZ).")
@click.option("--departure", metavar="TIME",
              help="Planned departure (UTC, or ship's time with ZD), for ETD/ETA columns.")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="table", show_default=True)
@click.option("-o", "--output", metavar="FILE", help="Write to FILE instead of stdout.")
@click.pass_context
def legs(ctx, voyage, plan_file, departure, fmt, output):
    """The plan's leg table: courses, distances, times, ETAs, limits, wheel-over."""
    from passagelog.report.legtable import (
        LEG_TABLE_COLUMNS, leg_table_records, plan_leg_table)
    from passagelog.report.render import Provenance, html_document, html_table

    route, dep, prov_fields = _load_plan(plan_file, voyage, ctx)
    dep = _departure(departure) or dep
    records = leg_table_records(plan_leg_table(route, departure_utc=dep))
    columns = list(LEG_TABLE_COLUMNS)
    title = f"Leg table: {route.name}"
    prov = Provenance(**prov_fields)
    if fmt == "html":
        body = html_table(records, columns, text_columns=("from", "to", "sailing", "notes",
                                                          "etd_utc", "eta_utc", "eta_ship"))
        _write(html_document(title, [("Legs", body)], provenance=prov), output)
        return
    if output not in (None, "-"):
        import io

        buf = io.StringIO()
        emit_records(records, columns, fmt, title=title, provenance=prov, stream=buf)
        _write(buf.getvalue(), output)
        return
    emit_records(records, columns, fmt, title=title, provenance=prov)


@report.command("navlog")
@click.argument("voyage", required=False)
@click.option("--plan", "plan_file", metavar="FILE", help="Plan file (CSV, GPX or RTZ).")
@click.option("--tas", "tas_kn", type=float, help="True airspeed, knots (default: each "
              "leg's planned speed).")
@click.option("--wind", metavar="DIR/KN", default="0/0", show_default=True,
              help="Wind FROM direction (degrees true) and speed (knots), e.g. 250/24.")
@click.option("--variation", default="0", show_default=True,
              help="Magnetic variation, e.g. 3.5E or 4W.")
@click.option("--deviation", default="0", show_default=True,
              help="Compass deviation, e.g. 1W.")
@click.option("--fuel-flow", type=float, help="Fuel flow per hour (any unit).")
@click.option("--fuel", type=float, help="Fuel on board at departure (same unit).")
@click.option("--departure", metavar="TIME", help="Departure (UTC, or with ZD).")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="table", show_default=True)
@click.option("-o", "--output", metavar="FILE")
@click.pass_context
def navlog(ctx, voyage, plan_file, tas_kn, wind, variation, deviation, fuel_flow, fuel,
           departure, fmt, output):
    """Air navigation log: TC, WCA, TH, variation, MH, deviation, CH, GS, ETE, ETA, fuel."""
    from passagelog.errors import InputError
    from passagelog.nav.triangles import parse_ew
    from passagelog.report.navlog import NAV_LOG_COLUMNS, air_nav_log, nav_log_records
    from passagelog.report.render import Provenance, html_document, html_table

    try:
        wdir, wkn = (float(x) for x in wind.split("/"))
    except ValueError:
        raise InputError(f"wind {wind!r} is not DIRECTION/SPEED, e.g. 250/24") from None
    route, dep, prov_fields = _load_plan(plan_file, voyage, ctx)
    dep = _departure(departure) or dep
    rows = air_nav_log(route, tas_kn=tas_kn, wind_from=wdir, wind_kn=wkn,
                       variation_e=parse_ew(variation, "variation"),
                       deviation_e=parse_ew(deviation, "deviation"), departure_utc=dep,
                       fuel_flow_per_h=fuel_flow, fuel_start=fuel)
    records = nav_log_records(rows)
    columns = list(NAV_LOG_COLUMNS)
    title = f"Navigation log: {route.name}"
    prov = Provenance(**prov_fields)
    if fmt == "html":
        body = html_table(records, columns, text_columns=("from", "to", "eta_utc"))
        _write(html_document(title, [("Legs", body)], provenance=prov), output)
        return
    emit_records(records, columns, fmt, title=title, provenance=prov)


def _verify_text(ctx: click.Context) -> str:
    """The logbook's integrity check, in one line, for a report's provenance."""
    from passagelog.cli.common import db_path_from
    from passagelog.store import Logbook

    with Logbook.open(db_path_from(ctx), create=False) as book:
        rep = book.verify()
    count = sum(rep.records.values())
    if rep.ok:
        return f"verify ok ({count} records in the chain)"
    return f"VERIFY FAILED: {rep.first.message}"


def _voyage_command():
    from passagelog.cli.review import _input_options

    @report.command("voyage")
    @_input_options
    @click.option("--center", "center_wp", type=click.IntRange(min=1), metavar="N",
                  help="Waypoint number to centre the range view on (default: the last).")
    @click.option("-o", "--output", metavar="FILE", default="-", show_default=True,
                  help="HTML file to write ('-' for stdout).")
    @click.pass_context
    def voyage(ctx, voyage, plan_file, plan_format, fixes_file, fixes_format, departure, zd,
               clock_changes, window_h, gap_min, include_suspect, max_speed, arrival_radius,
               center_wp, output):
        """The voyage review report: one self-contained HTML file (prints well to PDF).

        Header and provenance, the plan's leg table, per-leg deviation statistics, waypoint
        passages, deviation episodes, noon figures, gaps and suspect fixes, and figures:
        track against the plan (Mercator, corridors drawn), XTE and speed over time, and a
        range view around a waypoint.

        \b
        passagelog report voyage "Velasca to Port Amberly" -o review.html
        passagelog report voyage --plan route.rtz --fixes track.nmea -o review.html
        """
        from passagelog.cli.review import load_inputs, run_review
        from passagelog.report.render import Provenance
        from passagelog.report.voyage import VoyageHeader, voyage_report_html

        inputs = load_inputs(ctx, voyage, plan_file, plan_format, fixes_file, fixes_format,
                             departure, zd, clock_changes)
        rv = run_review(inputs, window_h, gap_min, include_suspect, max_speed,
                        arrival_radius)
        craft = from_place = to_place = ""
        verify = ""
        if inputs["voyage"]:
            from passagelog.cli.common import db_path_from
            from passagelog.store import Logbook

            with Logbook.open(db_path_from(ctx), create=False) as book:
                v = book.voyage(inputs["voyage"])
                from_place, to_place = v.from_place, v.to_place
                if v.craft_id is not None:
                    craft = book.craft(v.craft_id).name
            verify = _verify_text(ctx)
        header = VoyageHeader(
            name=inputs["voyage"] or inputs["plan_name"], craft=craft, from_place=from_place,
            to_place=to_place,
            departure_utc=inputs["departure_utc"] or inputs["planned_departure_utc"])
        prov = Provenance(source=inputs["source"], voyage=inputs["voyage"],
                          plan=inputs["plan_name"], verify=verify)
        _write(voyage_report_html(rv, header, prov, center_waypoint=center_wp), output)

    return voyage


_voyage_command()
