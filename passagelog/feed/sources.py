"""Where live NMEA 0183 text comes from: UDP, TCP, a serial device or a text stream.

Each source is an iterator of text lines that stops when its ``stop`` event is set (checked
at least every ``poll_s`` seconds, so Ctrl-C and a clean shutdown never wait on a silent
port). Bytes that are not text are decoded with replacement characters and left for the
NMEA reader to reject and count; a source never raises on bad data, only on a port it cannot
open (:class:`passagelog.errors.InputError` naming the address).
"""

from __future__ import annotations

import socket
import threading
from typing import IO, Iterator

from passagelog.errors import InputError

DEFAULT_UDP_HOST = "127.0.0.1"
DEFAULT_UDP_PORT = 10110  # the port IANA registered for NMEA 0183 over IP ("nmea-0183")
MAX_LINE_BYTES = 4096     # a line longer than this is cut and counted as garbage by the reader


def parse_address(text: str, *, default_host: str | None, what: str) -> tuple[str, int]:
    """``[HOST:]PORT`` as (host, port); ``default_host`` when the host is left out."""
    t = text.strip()
    host, sep, port_text = t.rpartition(":")
    if not sep:
        host, port_text = "", t
    host = host.strip("[]")  # [::1]:10110
    if not host:
        if default_host is None:
            raise InputError(f"{what} address {text!r} needs a host: give HOST:PORT")
        host = default_host
    try:
        port = int(port_text)
    except ValueError:
        raise InputError(f"{what} address {text!r}: port {port_text!r} is not a number "
                         "(give [HOST:]PORT, port 1-65535)") from None
    if not 1 <= port <= 65535:
        raise InputError(f"{what} address {text!r}: port {port} is outside 1-65535")
    return host, port


def _split(buffer: bytearray) -> Iterator[str]:
    """Whole lines out of ``buffer`` (consumed), CR LF or LF terminated."""
    while True:
        nl = buffer.find(b"\n")
        if nl < 0:
            if len(buffer) > MAX_LINE_BYTES:
                chunk = bytes(buffer)
                buffer.clear()
                yield chunk.decode("ascii", "replace")
            return
        chunk = bytes(buffer[:nl + 1])
        del buffer[:nl + 1]
        yield chunk.decode("ascii", "replace")


def udp_lines(host: str, port: int, stop: threading.Event, *, poll_s: float = 0.2,
              ready: threading.Event | None = None) -> Iterator[str]:
    """Lines from UDP datagrams sent to host:port (a datagram may hold several lines)."""
    family = socket.AF_INET6 if ":" in host else socket.AF_INET
    sock = socket.socket(family, socket.SOCK_DGRAM)
    try:
        sock.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
        try:
            sock.bind((host, port))
        except OSError as exc:
            raise InputError(f"UDP address {host}:{port} cannot be opened: {exc.strerror}") \
                from None
        sock.settimeout(poll_s)
        if ready is not None:
            ready.set()
        while not stop.is_set():
            try:
                data, _peer = sock.recvfrom(65535)
            except socket.timeout:
                continue
            buffer = bytearray(data)
            if not buffer.endswith(b"\n"):
                buffer += b"\n"  # a datagram is a whole message even without its CR LF
            yield from _split(buffer)
    finally:
        sock.close()


def tcp_lines(host: str, port: int, stop: threading.Event, *, poll_s: float = 0.2,
              ready: threading.Event | None = None) -> Iterator[str]:
    """Lines from a TCP server that streams NMEA (a multiplexer, a receiver's LAN port)."""
    try:
        sock = socket.create_connection((host, port), timeout=5.0)
    except OSError as exc:
        raise InputError(f"TCP address {host}:{port} cannot be reached: "
                         f"{exc.strerror or exc}") from None
    try:
        sock.settimeout(poll_s)
        if ready is not None:
            ready.set()
        buffer = bytearray()
        while not stop.is_set():
            try:
                data = sock.recv(65536)
            except socket.timeout:
                continue
            if not data:
                break  # the server closed the stream
            buffer += data
            yield from _split(buffer)
        if buffer:
            yield bytes(buffer).decode("ascii", "replace")
    finally:
        sock.close()


def serial_lines(device: str, baud: int, stop: threading.Event, *, poll_s: float = 0.2,
                 ready: threading.Event | None = None) -> Iterator[str]:
    """Lines from a serial device (NMEA 0183 is 4800 baud, 38400 for high-speed talkers)."""
    import serial  # pyserial, imported only for this source

    try:
        port = serial.Serial(device, baudrate=baud, timeout=poll_s)
    except (serial.SerialException, ValueError, OSError) as exc:
        raise InputError(f"serial device {device!r} at {baud} baud cannot be opened: {exc}") \
            from None
    try:
        if ready is not None:
            ready.set()
        buffer = bytearray()
        while not stop.is_set():
            data = port.read(port.in_waiting or 1)
            if data:
                buffer += data
                yield from _split(buffer)
    finally:
        port.close()


def stream_lines(stream: IO[str], stop: threading.Event) -> Iterator[str]:
    """Lines of a text stream (standard input, a pipe from another program)."""
    for line in stream:
        if stop.is_set():
            break
        yield line
