"""``passagelog report``: leg tables, the air navigation log and the voyage review report."""

from __future__ import annotations

from pathlib import Path

import click

from passagelog.cli.common import TABLE_FORMATS, emit_records

FORMATS = TABLE_FORMATS + ("html",)


def _write(text: str, output: str | None) -> None:
    if output in (None, "-"):
        click.echo(text, nl=not text.endswith("\n"))
    else:
        Path(output).write_text(text, encoding="utf-8")
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
