"""``passagelog calc leg``, ``calc offset``, ``calc track`` and ``calc composite``.

``leg`` and ``offset`` follow the scripting contract of docs/cli.md exactly (DESIGN.md):
human output by default, ``--json`` for one object, ``--batch FILE`` (``-`` = stdin) for CSV
in and JSON Lines out. A bad batch row stops the run with its line number and exit 1 before
anything is printed.
"""

from __future__ import annotations

import csv
import io
import math
import sys

import click

from passagelog.cli.common import emit_json, json_option
from passagelog.errors import InputError, PassagelogError
from passagelog.nav.earth import EARTHS, get_earth
from passagelog.nav.legs import SAILINGS, check_sailing, make_leg
from passagelog.nav.units import NM_M

# Negative decimal positions ("-33.9, 151.2") are values here, not options.
_VALUES_MAY_BE_NEGATIVE = {"ignore_unknown_options": True}

LEG_KEYS = ("distance_m", "distance_nm", "initial_course", "final_course", "sailing")
OFFSET_KEYS = ("xte_m", "xte_nm", "along_m", "along_nm", "to_go_m", "to_go_nm")
LEG_COLUMNS = ("from_lat", "from_lon", "to_lat", "to_lon")
POSITION_COLUMNS = ("lat", "lon")


def _sailing_option(func):
    return click.option("--sailing", type=click.Choice(SAILINGS), default="great-circle",
                        show_default=True, help="Great circle (geodesic) or rhumb line.")(func)


def _earth_option(func):
    return click.option("--earth", "earth_name", type=click.Choice(list(EARTHS)),
                        default="wgs84", show_default=True,
                        help="wgs84 ellipsoid, or a sphere: 'sphere' (mean radius "
                             "6371008.8 m) or 'sphere-nm' (1' of arc = 1 NM).")(func)


def _batch_option(func):
    return click.option("--batch", "batch", type=click.File("r", encoding="utf-8"),
                        default=None, metavar="FILE",
                        help="CSV with a header row (- = stdin); JSON Lines out.")(func)


def _position(text: str, what: str) -> tuple[float, float]:
    from passagelog.nav.position import parse_position

    try:
        return parse_position(text)
    except InputError as exc:
        raise exc.at(what) from None


def _check_option_like(args: tuple[str, ...]) -> None:
    for word in args:
        if word.startswith("--"):
            raise click.UsageError(f"no such option: {word}")


# --------------------------------------------------------------------------- computation
def _leg_record(lg) -> dict:
    return {
        "distance_m": float(lg.distance_m),
        "distance_nm": float(lg.distance_m) / NM_M,
        "initial_course": float(lg.initial_course),
        "final_course": float(lg.final_course),
        "sailing": lg.sailing,
    }


def _offset_record(distance_m: float, xte_m: float, along_m: float) -> dict:
    to_go = distance_m - along_m
    return {
        "xte_m": float(xte_m),
        "xte_nm": float(xte_m) / NM_M,
        "along_m": float(along_m),
        "along_nm": float(along_m) / NM_M,
        "to_go_m": float(to_go),
        "to_go_nm": float(to_go) / NM_M,
    }


def _read_batch(stream, with_position: bool, default_sailing: str) -> list[tuple]:
    """Rows of the batch CSV as (line, from_lat, from_lon, to_lat, to_lon, lat, lon, sailing).

    Every row is read and checked before anything is computed or printed."""
    name = getattr(stream, "name", "-")
    name = "stdin" if name in ("-", "<stdin>") else name
    try:
        text = stream.read()
    except UnicodeDecodeError as exc:
        raise InputError(f"the batch file is not UTF-8 text ({exc.reason})", where=name) \
            from None
    reader = csv.reader(io.StringIO(text, newline=""))
    try:
        header = next(reader)
    except StopIteration:
        raise InputError("the batch file is empty; a header row is required",
                         where=f"{name}, line 1") from None
    header = [h.strip().lower() for h in header]
    if header and header[0].startswith("\ufeff"):
        header[0] = header[0][1:]
    required = LEG_COLUMNS + (POSITION_COLUMNS if with_position else ())
    allowed = LEG_COLUMNS + POSITION_COLUMNS + ("sailing",)
    missing = [c for c in required if c not in header]
    unknown = [c for c in header if c not in allowed]
    if missing or unknown or len(set(header)) != len(header):
        what = []
        if missing:
            what.append("missing " + ", ".join(missing))
        if unknown:
            what.append("unknown " + ", ".join(repr(c) for c in unknown))
        if len(set(header)) != len(header):
            what.append("a column named twice")
        raise InputError(
            f"header has {'; '.join(what)}; columns are {','.join(LEG_COLUMNS)}"
            "[,lat,lon][,sailing] in decimal degrees", where=f"{name}, line 1")
    index = {c: i for i, c in enumerate(header)}
    rows = []
    for fields in reader:
        line = reader.line_num
        where = f"{name}, line {line}"
        if not fields or all(not f.strip() for f in fields):
            continue
        if len(fields) != len(header):
            raise InputError(f"row has {len(fields)} fields; the header has {len(header)}",
                             where=where)
        values = {}
        for col in required:
            raw = fields[index[col]].strip()
            try:
                v = float(raw)
            except ValueError:
                raise InputError(f"column {col} {raw!r} is not a decimal number of degrees",
                                 where=where) from None
            if not math.isfinite(v):
                raise InputError(f"column {col} {raw!r} must be a finite number",
                                 where=where)
            limit = 90.0 if col.endswith("lat") else 180.0
            if not -limit <= v <= limit:
                raise InputError(f"column {col} {raw!r} is out of range; allowed "
                                 f"-{limit:g} to {limit:g}", where=where)
            values[col] = v
        sailing = default_sailing
        if "sailing" in index and fields[index["sailing"]].strip():
            sailing = fields[index["sailing"]].strip()
            try:
                check_sailing(sailing)
            except InputError as exc:
                raise exc.at(f"{where}, column sailing") from None
        rows.append((where, values["from_lat"], values["from_lon"], values["to_lat"],
                     values["to_lon"], values.get("lat"), values.get("lon"), sailing))
    return rows


def _batch_results(rows: list[tuple], with_position: bool, earth) -> list[dict]:
    """Compute every row (offsets grouped by leg, batch API); raise at the first bad row."""
    import numpy as np

    legs: dict[tuple, object] = {}
    for where, la1, lo1, la2, lo2, _, _, sailing in rows:
        key = (la1, lo1, la2, lo2, sailing)
        if key not in legs:
            try:
                legs[key] = make_leg(la1, lo1, la2, lo2, sailing, earth)
            except PassagelogError as exc:
                raise InputError(str(exc), where=where) from None
    if not with_position:
        return [_leg_record(legs[(r[1], r[2], r[3], r[4], r[7])]) for r in rows]
    groups: dict[tuple, list[int]] = {}
    for i, r in enumerate(rows):
        groups.setdefault((r[1], r[2], r[3], r[4], r[7]), []).append(i)
    out: list[dict | None] = [None] * len(rows)
    for key, idx in groups.items():
        lg = legs[key]
        lats = np.array([rows[i][5] for i in idx])
        lons = np.array([rows[i][6] for i in idx])
        try:
            xte, along = lg.offsets_np(lats, lons)
        except PassagelogError:
            # find the row at fault, in file order, with the scalar API
            for i in idx:
                try:
                    lg.offset(rows[i][5], rows[i][6])
                except PassagelogError as exc:
                    raise InputError(str(exc), where=rows[i][0]) from None
            raise
        for k, i in enumerate(idx):
            out[i] = _offset_record(lg.distance_m, xte[k], along[k])
    return out  # type: ignore[return-value]


def _run_batch(stream, with_position: bool, sailing: str, earth) -> None:
    rows = _read_batch(stream, with_position, sailing)
    results = _batch_results(rows, with_position, earth)
    out = sys.stdout
    import json

    text = "".join(json.dumps(r, ensure_ascii=False, allow_nan=False) + "\n"
                   for r in results)
    click.echo(text, nl=False, file=out)


# ------------------------------------------------------------------------- human output
def _fmt_pos(lat: float, lon: float) -> str:
    from passagelog.nav.position import format_position

    return format_position(lat, lon)


def _fmt_nm(metres: float) -> str:
    return f"{metres / NM_M:.2f} NM"


def _fmt_course(c: float) -> str:
    c = round(c, 1)
    return f"{0.0 if c >= 360.0 else c:05.1f}°T"


def _earth_text(earth) -> str:
    return {"wgs84": "WGS84", "sphere": "sphere R 6371008.8 m",
            "sphere-nm": "sphere 1' = 1 NM"}.get(earth.name, earth.name)


def _leg_lines(lg, a, b, earth) -> list[str]:
    lines = [
        f"From      {_fmt_pos(*a)}",
        f"To        {_fmt_pos(*b)}",
        f"Sailing   {lg.sailing} ({_earth_text(earth)})",
        f"Distance  {_fmt_nm(lg.distance_m)} ({lg.distance_m:.1f} m)",
    ]
    if lg.sailing == "rhumb":
        lines.append(f"Course    {_fmt_course(lg.initial_course)}")
    else:
        lines.append(f"Course    {_fmt_course(lg.initial_course)} initial, "
                     f"{_fmt_course(lg.final_course)} final")
    return lines


def _positional(args: tuple[str, ...], names: tuple[str, ...], batch) -> list[str]:
    _check_option_like(args)
    if batch is not None:
        if args:
            raise click.UsageError(
                f"--batch reads {', '.join(names)} from the file; give no positions with it")
        return []
    if len(args) != len(names):
        raise click.UsageError(
            f"expected {len(names)} positions ({' '.join(names)}), got {len(args)}; quote "
            "each position, e.g. \"50°N 4°W\" (or use --batch FILE)")
    return list(args)


# ---------------------------------------------------------------------------- commands
@click.command("leg", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("positions", nargs=-1, metavar="FROM TO")
@_sailing_option
@_earth_option
@_batch_option
@json_option
def leg(positions, sailing, earth_name, batch, as_json):
    """Distance and courses of the leg FROM -> TO.

    Positions in any usual notation, each quoted: "50°N 4°W", "47 36.512N 122 20.107W",
    "47.6085, -122.3351". JSON keys: distance_m, distance_nm, initial_course,
    final_course (degrees true), sailing.

    --batch FILE: CSV with header from_lat,from_lon,to_lat,to_lon[,sailing] in decimal
    degrees; one JSON object per row (JSON Lines).
    """
    earth = get_earth(earth_name)
    args = _positional(positions, ("FROM", "TO"), batch)
    if batch is not None:
        _run_batch(batch, False, sailing, earth)
        return
    a = _position(args[0], "FROM")
    b = _position(args[1], "TO")
    lg = make_leg(*a, *b, sailing, earth)
    if as_json:
        emit_json(_leg_record(lg))
        return
    click.echo("\n".join(_leg_lines(lg, a, b, earth)))


@click.command("offset", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("positions", nargs=-1, metavar="FROM TO POSITION")
@_sailing_option
@_earth_option
@_batch_option
@json_option
def offset(positions, sailing, earth_name, batch, as_json):
    """Cross-track error, along-track distance and distance to go of POSITION against the
    leg FROM -> TO.

    XTE is + to the right (starboard) of the direction of travel; both are measured to the
    foot of the shortest geodesic from POSITION to the leg's line extended past its ends
    (along-track is negative before FROM). JSON keys: xte_m, xte_nm, along_m, along_nm,
    to_go_m, to_go_nm.

    --batch FILE: CSV with header from_lat,from_lon,to_lat,to_lon,lat,lon[,sailing] in
    decimal degrees; one JSON object per row (JSON Lines).
    """
    earth = get_earth(earth_name)
    args = _positional(positions, ("FROM", "TO", "POSITION"), batch)
    if batch is not None:
        _run_batch(batch, True, sailing, earth)
        return
    a = _position(args[0], "FROM")
    b = _position(args[1], "TO")
    p = _position(args[2], "POSITION")
    lg = make_leg(*a, *b, sailing, earth)
    xte, along = lg.offset(*p)
    rec = _offset_record(lg.distance_m, xte, along)
    if as_json:
        emit_json(rec)
        return
    side = "R" if xte > 0 else ("L" if xte < 0 else "-")
    lines = _leg_lines(lg, a, b, earth)
    lines[3:3] = [f"Position  {_fmt_pos(*p)}"]
    lines += [
        f"XTE       {abs(xte) / NM_M:.2f} NM {side} ({xte:+.1f} m)",
        f"Along     {_fmt_nm(along)} ({along:.1f} m)",
        f"To go     {_fmt_nm(rec['to_go_m'])} ({rec['to_go_m']:.1f} m)",
    ]
    click.echo("\n".join(lines))


@click.command("track", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("positions", nargs=-1, metavar="FROM TO")
@click.option("--every", "every_nm", type=float, default=None, metavar="NM",
              help="A point every NM nautical miles along the great circle.")
@click.option("--meridians", "step_deg", type=float, default=None, metavar="DEG",
              help="A point where the great circle crosses each DEG degrees of longitude "
                   "(5 is usual).")
@_earth_option
@json_option
def track(positions, every_nm, step_deg, earth_name, as_json):
    """Points along the great circle FROM -> TO, ends included, to sail it as a chain of
    rhumb lines: every N NM (--every N) or at each N° of longitude (--meridians N;
    the default is --meridians 5).

    Each line gives the point, its distance along the great circle, and the rhumb-line
    course and distance to the next point. JSON: {"points": [{lat, lon, along_m, along_nm,
    course_to_next, distance_to_next_m, distance_to_next_nm}], "great_circle_m",
    "rhumb_chain_m"} (the last point has no *_to_next keys).
    """
    if every_nm is not None and step_deg is not None:
        raise click.UsageError("give either --every or --meridians, not both")
    earth = get_earth(earth_name)
    args = _positional(positions, ("FROM", "TO"), None)
    a = _position(args[0], "FROM")
    b = _position(args[1], "TO")
    gc = make_leg(*a, *b, "great-circle", earth)
    if every_nm is not None:
        if not (math.isfinite(every_nm) and every_nm > 0):
            raise click.UsageError(f"--every {every_nm!r}: a positive number of NM is required")
        pts = gc.points_every(every_nm * NM_M)
    else:
        pts = gc.points_at_meridians(5.0 if step_deg is None else step_deg)
    from passagelog.nav.geodesic import inverse

    recs = []
    chain = 0.0
    rhumb_ok = True
    for k, (lat, lon) in enumerate(pts):
        along = 0.0 if k == 0 else inverse(a[0], a[1], lat, lon, earth)[0]
        rec = {"lat": lat, "lon": lon, "along_m": along, "along_nm": along / NM_M}
        if k + 1 < len(pts) and rhumb_ok:
            nxt = pts[k + 1]
            try:
                hop = make_leg(lat, lon, *nxt, "rhumb", earth)
            except ImportError:  # rhumb legs not in this build: points only
                rhumb_ok = False
                hop = None
        else:
            hop = None
        if hop is not None:
            rec.update(course_to_next=float(hop.initial_course),
                       distance_to_next_m=float(hop.distance_m),
                       distance_to_next_nm=float(hop.distance_m) / NM_M)
            chain += hop.distance_m
        recs.append(rec)
    if not rhumb_ok:
        for rec in recs:
            for key in ("course_to_next", "distance_to_next_m", "distance_to_next_nm"):
                rec.pop(key, None)
    if as_json:
        out = {"points": recs, "great_circle_m": gc.distance_m}
        if rhumb_ok:
            out["rhumb_chain_m"] = chain
        emit_json(out)
        return
    head = f"{'Point':>5}  {'Position':<27} {'Along':>10}"
    lines = [head + (f"  {'Rhumb to next':>20}" if rhumb_ok else "")]
    for k, r in enumerate(recs, start=1):
        nxt = (f"{_fmt_course(r['course_to_next'])} {r['distance_to_next_nm']:8.2f} NM"
               if "course_to_next" in r else "")
        lines.append(f"{k:>5}  {_fmt_pos(r['lat'], r['lon']):<27} "
                     f"{r['along_nm']:7.2f} NM  {nxt:>20}".rstrip())
    lines.append(f"Great circle {_fmt_nm(gc.distance_m)}"
                 + (f"; rhumb-line chain {_fmt_nm(chain)}" if rhumb_ok else "")
                 + f" ({_earth_text(earth)})")
    click.echo("\n".join(lines))


@click.command("composite", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("positions", nargs=-1, metavar="FROM TO")
@click.option("--limit", "limit_text", required=True, metavar="LAT",
              help="Limiting latitude, e.g. 50S or -50 or \"50°S\".")
@_earth_option
@json_option
def composite(positions, limit_text, earth_name, as_json):
    """Composite sailing FROM -> TO not going beyond the limiting latitude: a great circle
    to the parallel, along it, and a great circle from it to TO. When the great circle's
    vertex does not lie between the ends beyond the limit, the plain great circle is shown.

    JSON: {"composite": bool, "distance_m", "distance_nm", "limit_lat", "parts": [{kind,
    from_lat, from_lon, to_lat, to_lon, distance_m, distance_nm, initial_course,
    final_course}]}.
    """
    from passagelog.nav.greatcircle import composite as solve
    from passagelog.nav.position import parse_lat

    earth = get_earth(earth_name)
    args = _positional(positions, ("FROM", "TO"), None)
    a = _position(args[0], "FROM")
    b = _position(args[1], "TO")
    try:
        limit = parse_lat(limit_text)
    except InputError as exc:
        raise exc.at("--limit") from None
    cs = solve(*a, *b, limit, earth)
    parts = [{"kind": p.kind, "from_lat": p.lat1, "from_lon": p.lon1, "to_lat": p.lat2,
              "to_lon": p.lon2, "distance_m": p.distance_m,
              "distance_nm": p.distance_m / NM_M, "initial_course": p.initial_course,
              "final_course": p.final_course} for p in cs.parts]
    if as_json:
        emit_json({"composite": cs.composite, "distance_m": cs.distance_m,
                   "distance_nm": cs.distance_m / NM_M, "limit_lat": cs.limit_lat,
                   "parts": parts})
        return
    from passagelog.nav.position import format_lat

    head = (f"Composite sailing, limit {format_lat(limit, decimals=1)}"
            if cs.composite else
            f"Great circle (its vertex is not beyond {format_lat(limit, decimals=1)})")
    lines = [f"{head} ({_earth_text(earth)})"]
    for k, p in enumerate(parts, start=1):
        lines.append(f"{k}. {p['kind']:<12} {_fmt_pos(p['from_lat'], p['from_lon'])} -> "
                     f"{_fmt_pos(p['to_lat'], p['to_lon'])}  {p['distance_nm']:8.2f} NM  "
                     f"{_fmt_course(p['initial_course'])} -> {_fmt_course(p['final_course'])}")
    lines.append(f"Total {_fmt_nm(cs.distance_m)}")
    click.echo("\n".join(lines))
