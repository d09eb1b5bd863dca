"""``passagelog feed``: log fixes from a live NMEA 0183 source into the logbook."""

from __future__ import annotations

import signal
import sys
import threading

import click

from passagelog.cli.common import db_path_from


@click.command("feed")
@click.option("--udp", "udp", metavar="[HOST:]PORT",
              help="Listen for UDP datagrams (default 127.0.0.1:10110; give 0.0.0.0:PORT to "
                   "listen on every interface).")
@click.option("--tcp", "tcp", metavar="HOST:PORT", help="Read from a TCP server.")
@click.option("--serial", "serial_dev", metavar="DEV", help="Read a serial device.")
@click.option("--baud", type=click.IntRange(110, 4_000_000), default=4800, show_default=True,
              help="Serial speed (NMEA 0183: 4800; high-speed talkers 38400).")
@click.option("--stdin", "use_stdin", is_flag=True, help="Read NMEA text from standard input.")
@click.option("--every", "every_min", type=click.FloatRange(0.0, 1440.0, min_open=True),
              default=10.0, show_default=True, metavar="MINUTES",
              help="Log a fix every MINUTES of fix time.")
@click.option("--course-change", "course_deg", type=click.FloatRange(0.0, 180.0),
              default=30.0, show_default=True, metavar="DEG",
              help="Also log a fix when COG has changed by DEG since the last one logged "
                   "(0 turns this off).")
@click.option("--max-rate", type=click.FloatRange(1.0, 100_000.0), default=200.0,
              show_default=True, metavar="LINES/S",
              help="Lines per second above which a burst is dropped and counted.")
@click.option("--voyage", required=True, metavar="VOYAGE", help="Voyage (name or id).")
@click.option("--quiet", "-q", is_flag=True, help="Print only the summary at the end.")
@click.pass_context
def feed(ctx: click.Context, udp: str | None, tcp: str | None, serial_dev: str | None,
         baud: int, use_stdin: bool, every_min: float, course_deg: float, max_rate: float,
         voyage: str, quiet: bool) -> None:
    """Log fixes from live NMEA 0183 (RMC, GGA, GLL, VTG, HDT, ZDA) into the logbook.

    A fix is logged at the first good position, every --every minutes, on a course change
    of --course-change degrees, and on demand: send the process SIGUSR1
    (``kill -USR1 PID``), or press Enter in its terminal when the NMEA does not come on
    standard input. UDP on 127.0.0.1:10110 unless another source is given. Garbage, bad
    checksums and bursts are counted, never fatal. Ctrl-C stops it (exit 130) with a
    summary on stderr. The terminal UI shows each logged fix within a second.
    """
    from passagelog.feed.logger import Feed, LogPolicy
    from passagelog.feed import sources
    from passagelog.errors import BusyError
    from passagelog.store import Logbook

    chosen = [name for name, on in (("--udp", udp), ("--tcp", tcp), ("--serial", serial_dev),
                                    ("--stdin", use_stdin)) if on]
    if len(chosen) > 1:
        raise click.UsageError(f"give one source, not {' and '.join(chosen)}")
    stop = threading.Event()
    if tcp:
        host, port = sources.parse_address(tcp, default_host=None, what="TCP")
        lines, where = sources.tcp_lines(host, port, stop), f"TCP {host}:{port}"
    elif serial_dev:
        lines, where = sources.serial_lines(serial_dev, baud, stop), f"{serial_dev} {baud} baud"
    elif use_stdin:
        lines, where = sources.stream_lines(sys.stdin, stop), "standard input"
    else:
        host, port = sources.parse_address(udp or str(sources.DEFAULT_UDP_PORT),
                                           default_host=sources.DEFAULT_UDP_HOST, what="UDP")
        lines, where = sources.udp_lines(host, port, stop), f"UDP {host}:{port}"

    book = Logbook.open(db_path_from(ctx))
    target = book.voyage(voyage)  # NotFoundError names the voyage: exit 1

    def say(text: str) -> None:
        if not quiet:
            click.echo(f"feed: {text}", err=True)

    def write(fix):
        while True:  # another program's long write (an import) holds the lock: wait it out
            try:
                return book.add_fix(target.voyage_id, fix)
            except BusyError:
                say("the logbook is busy (another program is writing); waiting to log the fix")

    runner = Feed(lines, write,
                  LogPolicy(every_s=every_min * 60.0,
                            course_change_deg=course_deg if course_deg > 0 else None),
                  max_lines_per_s=max_rate, on_event=say)
    previous = None
    if hasattr(signal, "SIGUSR1"):
        def on_usr1(_signum, _frame):
            runner.request_fix()
        previous = signal.signal(signal.SIGUSR1, on_usr1)
    enter = not use_stdin and sys.stdin is not None and sys.stdin.isatty()
    if enter:
        def keys() -> None:
            for _line in sys.stdin:
                runner.request_fix()
                say("fix requested: the next good position will be logged")
        threading.Thread(target=keys, name="feed-keys", daemon=True).start()
    say(f"reading {where} for voyage {target.name!r}; logging every {every_min:g} min"
        + (f" and on a course change of {course_deg:g}°" if course_deg > 0 else "")
        + ("; Enter or SIGUSR1 logs a fix now" if enter else "; SIGUSR1 logs a fix now")
        + "; Ctrl-C stops")
    interrupted = False
    try:
        runner.run()
    except KeyboardInterrupt:
        interrupted = True
    finally:
        stop.set()
        if previous is not None:
            signal.signal(signal.SIGUSR1, previous)
        book.close()
        for line in runner.stats.lines_text():
            click.echo(f"feed: {line}", err=True)
    if interrupted:
        raise KeyboardInterrupt
