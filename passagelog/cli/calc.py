"""``passagelog calc``: the navigation calculator (one subcommand per problem)."""

from __future__ import annotations

import click

from passagelog.cli import LazyGroup

#: subcommand -> "module:attribute" inside passagelog.cli
CALC_COMMANDS: dict[str, str] = {
    # legs and offsets (scripting contract: docs/cli.md)
    "leg": "calc_legs:leg",
    "offset": "calc_legs:offset",
    "track": "calc_legs:track",
    "composite": "calc_legs:composite",
    # notations, units and zone time
    "position": "calc_misc:position",
    "convert": "calc_misc:convert",
    "zone": "calc_misc:zone",
    # dead reckoning, triangles and fixes
    "dr": "calc_nav:dr",
    "ep": "calc_nav:ep",
    "set-drift": "calc_nav:set_drift",
    "steer": "calc_nav:steer",
    "wind": "calc_nav:wind",
    "heading": "calc_nav:heading",
    "from-mark": "calc_nav:from_mark",
    "bearings": "calc_nav:bearings",
    "ranges": "calc_nav:ranges",
    "alteration": "calc_nav:alteration",
}


@click.group(cls=LazyGroup, lazy=CALC_COMMANDS, package="passagelog.cli")
def calc() -> None:
    """Navigation calculator: legs, offsets, dead reckoning, triangles, fixes, units.

    Positions may be written in any usual notation, e.g. "47°36.512'N 122°20.107'W",
    "47 36.512N 122 20.107W" or "47.6085, -122.3351". WGS84 unless --earth sphere.
    """
