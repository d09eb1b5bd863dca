"""Work run in a process of its own (passagelog.tui.apart): its answer, its error, and
stopping it when the app quits."""

from __future__ import annotations

import threading
import time

import pytest

from passagelog.nav.geodesic import inverse
from passagelog.nav.position import parse_position
from passagelog.tui import apart


def test_the_answer_comes_back_from_the_other_process():
    # the same function in this process is the reference: the call must not change it
    assert apart.call_apart(inverse, 50.0, -4.0, 40.0, -30.0) == inverse(50.0, -4.0, 40.0,
                                                                          -30.0)


def test_an_error_in_the_other_process_comes_back_as_its_message():
    from passagelog.errors import PassagelogError

    with pytest.raises(PassagelogError) as here:
        parse_position("91 00N 004 00W")
    with pytest.raises(apart.ApartError) as there:
        apart.call_apart(parse_position, "91 00N 004 00W")
    assert str(there.value) == str(here.value)


def test_stop_all_ends_a_running_call_at_once():
    out = {}

    def call():
        t0 = time.perf_counter()
        try:
            apart.call_apart(time.sleep, 30.0)
        except apart.ApartError as exc:
            out["error"] = str(exc)
        out["s"] = time.perf_counter() - t0

    th = threading.Thread(target=call)
    th.start()
    for _ in range(200):
        if apart._running:
            break
        time.sleep(0.01)
    time.sleep(0.2)
    apart.stop_all()
    th.join(10.0)
    assert not th.is_alive() and out["s"] < 10.0
    assert "stopped before it was done" in out["error"]
    assert not apart._running
