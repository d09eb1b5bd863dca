"""``passagelog calc position``, ``calc convert`` and ``calc zone``: notations, units, zone time."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import click

from passagelog.cli.common import emit_json, json_option
from passagelog.errors import InputError, PositionError
from passagelog.nav import position as pos
from passagelog.nav import units, zonetime

#: --decimals when not given, per style: 0.001' ~ 1.9 m, 0.01" ~ 0.3 m, 1e-6° ~ 0.1 m.
DEFAULT_DECIMALS = {"dm": 3, "dms": 2, "decimal": 6}

# Negative numbers ("-122.3351") are values here, not options.
_VALUES_MAY_BE_NEGATIVE = {"ignore_unknown_options": True}


def _join_words(words: tuple[str, ...], what: str) -> str:
    """The words of a value typed without quotes, joined; option-like words are refused."""
    for word in words:
        if word.startswith("-") and len(word) > 1 and not (word[1].isdigit() or word[1] in ".−"):
            raise click.UsageError(f"no such option: {word}")
    text = " ".join(words)
    if not words:
        raise click.UsageError(f"missing {what}")
    return text


def _number_text(value: float) -> str:
    return f"{value:.10g}"


@click.command("position", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("text", nargs=-1, required=True)
@click.option("--style", type=click.Choice(pos.STYLES), default="dm", show_default=True,
              help="dm: degrees and decimal minutes; dms: degrees, minutes, seconds; "
                   "decimal: signed decimal degrees.")
@click.option("--decimals", type=click.IntRange(0, 12), default=None, metavar="N",
              help="Decimals of the last component (default 3 for dm, 2 for dms, "
                   "6 for decimal).")
@click.option("--ascii", "ascii_", is_flag=True,
              help="Plain ASCII: spaces for the degree and minute signs (47 36.512N).")
@json_option
def position(text: tuple[str, ...], style: str, decimals: int | None, ascii_: bool,
             as_json: bool) -> None:
    """Read a position in any usual notation and print it in the chosen one.

    TEXT is latitude then longitude, e.g. "47°36.512'N 122°20.107'W", "47 36.512N 122
    20.107W", "N47°36.512' W122°20.107'", "47°36'30.7\\"N 122°20'06.4\\"W" or
    "47.6085, -122.3351". Quotes are optional.

    Printed degrees are zero-padded as on charts (two digits of latitude, three of
    longitude); rounding carries, so minutes never print as 60.

    JSON (--json): {"lat": degrees north, "lon": degrees east in [-180, 180),
    "text": the printed position}.
    """
    written = _join_words(text, "position")
    lat, lon = pos.parse_position(written)
    shown = pos.format_position(lat, lon, style,
                                DEFAULT_DECIMALS[style] if decimals is None else decimals,
                                ascii=ascii_)
    if as_json:
        emit_json({"lat": lat, "lon": lon, "text": shown})
    else:
        click.echo(shown)


@click.command("convert", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("value")
@click.argument("from_unit")
@click.argument("to_unit")
@json_option
def convert(value: str, from_unit: str, to_unit: str, as_json: bool) -> None:
    """Convert a distance or a speed: VALUE FROM_UNIT TO_UNIT.

    Distances: m, nm (1852 m exactly), km, sm (statute mile, 1609.344 m), ft.
    Speeds: kn, km/h, mph, m/s. Other spellings such as NM, knots, kt, kph, mi are read too.
    Prints the result with 10 significant digits and the unit.

    JSON (--json): {"value", "from_unit", "to_unit" (the unit names above), "result"
    (full precision), "quantity" ("distance" or "speed")}.
    """
    try:
        number = float(value.replace("−", "-"))
    except ValueError:
        raise InputError(f"value {value!r} to convert is not a number") from None
    result = units.convert(number, from_unit, to_unit)
    src, dst = units.canonical_unit(from_unit), units.canonical_unit(to_unit)
    if as_json:
        emit_json({"value": number, "from_unit": src, "to_unit": dst, "result": result,
                   "quantity": units.unit_kind(src)})
    else:
        click.echo(f"{_number_text(result)} {dst}")


def _read_lon(text: str) -> float:
    """A longitude, or the longitude of a whole position."""
    try:
        return pos.parse_lon(text)
    except PositionError as first:
        try:
            return pos.parse_position(text)[1]
        except PositionError:
            raise first from None


def _whole_second(dt: datetime) -> datetime:
    return dt.replace(microsecond=0) + timedelta(seconds=dt.microsecond >= 500_000)


@click.command("zone", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("lon", nargs=-1, required=True)
@click.option("--utc", "utc_text", metavar="TIME",
              help="Also show the ship's time at this UTC instant (ISO 8601; 'now' for now).")
@click.option("--ship-time", "ship_text", metavar="TIME",
              help="Give the UTC of this ship's time, e.g. 2026-03-01T11:30 (its zone from a "
                   "ZD+3 suffix, --zd, or else the zone of LON).")
@click.option("--zd", "zd_text", metavar="ZD",
              help="Zone description the ship's clock keeps (+3, -5:30, a zone letter); "
                   "default: the zone of LON.")
@json_option
def zone(lon: tuple[str, ...], utc_text: str | None, ship_text: str | None,
         zd_text: str | None, as_json: bool) -> None:
    """Zone description and zone letter of a longitude; ship's time <-> UTC.

    LON is a longitude (122°20.107'W, -122.3351) or a whole position. ZD = longitude / 15
    rounded, + in west longitude, zone 12 split at 180°; ZT + ZD = UTC.

    JSON (--json): {"lon", "zd" (text such as "+8"), "zd_minutes", "zone_letter"} and, with
    --utc or --ship-time, {"utc" (2026-03-01T14:30:00Z), "ship_time" (ISO 8601 with the
    offset -ZD), "ship_zd", "ship_zd_minutes"} for the ship's clock.
    """
    if utc_text is not None and ship_text is not None:
        raise click.UsageError("give --utc or --ship-time, not both")
    lon_deg = _read_lon(_join_words(lon, "longitude"))
    zd_hours = zonetime.zd_from_lon(lon_deg)
    out: dict = {"lon": lon_deg, "zd": zonetime.format_zd(zd_hours * 60),
                 "zd_minutes": zd_hours * 60, "zone_letter": zonetime.zone_letter(zd_hours)}
    clock_zd = zonetime.parse_zd(zd_text) if zd_text is not None else None
    utc = None
    if utc_text is not None:
        if utc_text.strip().lower() == "now":
            utc = datetime.now(timezone.utc)
        else:
            utc = zonetime.parse_time_utc(utc_text, 0)  # a bare time here is UTC
        if clock_zd is None:
            clock_zd = zd_hours * 60
    elif ship_text is not None:
        _, carried = zonetime.read_time(ship_text)
        if carried is not None and clock_zd is not None and carried != clock_zd:
            raise InputError(f"ship's time {ship_text!r} carries ZD "
                             f"{zonetime.format_zd(carried)} but --zd is "
                             f"{zonetime.format_zd(clock_zd)}")
        if carried is not None:
            clock_zd = carried
        elif clock_zd is None:
            clock_zd = zd_hours * 60
        utc = zonetime.parse_time_utc(ship_text, clock_zd)
    elif zd_text is not None:
        raise click.UsageError("--zd needs --utc or --ship-time")
    if utc is not None:
        utc = _whole_second(utc)
        out.update({
            "utc": zonetime.format_utc(utc),
            "ship_time": zonetime.ship_time(utc, clock_zd).replace(tzinfo=None).isoformat()
            + _iso_offset(clock_zd),
            "ship_zd": zonetime.format_zd(clock_zd),
            "ship_zd_minutes": clock_zd,
        })
    if as_json:
        emit_json(out)
        return
    rows = [("longitude", pos.format_lon(lon_deg)),
            ("ZD", f"{out['zd']} (zone {out['zone_letter']})")]
    if utc is not None:
        rows += [("UTC", out["utc"]),
                 ("ship's time", zonetime.format_ship_time(utc, clock_zd))]
    for key, value in rows:
        click.echo(f"{key:<12} {value}")


def _iso_offset(zd_minutes: int) -> str:
    offset = -zd_minutes
    sign = "+" if offset >= 0 else "-"
    hours, minutes = divmod(abs(offset), 60)
    return f"{sign}{hours:02d}:{minutes:02d}"
