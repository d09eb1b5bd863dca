"""``passagelog demo``: the bundled demo voyages, for a first look."""

from __future__ import annotations

from pathlib import Path

import click

import passagelog


def demo_dir() -> Path:
    """Where the demo voyages are: inside the installed package, else the source tree."""
    here = Path(passagelog.__file__).resolve().parent
    for candidate in (here / "_demo_voyages", here.parent / "demo_voyages"):
        if (candidate / "ocean" / "route.csv").is_file():
            return candidate
    raise click.ClickException("the demo voyages are not installed with this copy")


@click.command()
@click.option("--scenario", type=click.Choice(["ocean", "coastal", "air"]), default="ocean",
              show_default=True, help="Which demo voyage.")
@click.option("--no-tui", is_flag=True, help="Print the demo passage instead of opening the UI.")
@click.pass_context
def demo(ctx: click.Context, scenario: str, no_tui: bool) -> None:
    """Show a demo passage (invented vessel, ports and passage).

    Prints the plan's leg table of the chosen scenario.
    """
    from passagelog.cli.common import emit_records
    from passagelog.formats import read_route
    from passagelog.report.legtable import leg_table_records, plan_leg_table

    route = read_route(demo_dir() / scenario / "route.csv")
    records = leg_table_records(plan_leg_table(route))
    columns = ["leg", "from", "to", "sailing", "initial_course", "distance_nm",
               "cumulative_nm", "speed_kn", "time_h", "xtl_port_nm", "xtl_stbd_nm",
               "wheel_over_nm", "gc_saving_nm"]
    emit_records(records, columns, "table", title=f"Demo passage: {route.name}")
