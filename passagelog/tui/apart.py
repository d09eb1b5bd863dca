"""Long work in a process of its own, so that the UI stays quick while it runs.

Reconciling a long voyage keeps two cores busy for seconds, much of it in numpy code that
holds Python's global interpreter lock: run in a thread of the app, it slows every key and
repaint of the UI meanwhile (and its arrays, hundreds of MB for a million fixes, stay in the
app's memory). :func:`call_apart` runs a module-level function in a new Python interpreter
instead (``python -c``, nothing of the app's own start-up run again) and hands back its
result; the process ends with the call and gives its memory back. The call and its result go
through the process's standard input and output as pickles (between this program and a
copy of itself only); what it writes to standard error is caught, never shown on the
terminal the app draws on. :func:`stop_all` ends the running ones when the app quits.
"""

from __future__ import annotations

import pickle
import subprocess
import sys
import threading
from typing import Any, Callable

from passagelog.errors import PassagelogError

_running: set[subprocess.Popen] = set()
_lock = threading.Lock()

_SERVE = "from passagelog.tui.apart import _serve; _serve()"


class ApartError(PassagelogError):
    """The work failed in its process, or the process ended without an answer."""


def _serve() -> None:
    """The process's side: read ``(fn, args)``, write ``(True, result)`` or ``(False,
    message)``."""
    fn, args = pickle.load(sys.stdin.buffer)
    try:
        answer = (True, fn(*args))
    except BaseException as exc:  # noqa: BLE001 - sent back as text, raised in the app
        answer = (False, str(exc) or type(exc).__name__)
    pickle.dump(answer, sys.stdout.buffer, protocol=pickle.HIGHEST_PROTOCOL)
    sys.stdout.buffer.flush()


def call_apart(fn: Callable[..., Any], *args: Any) -> Any:
    """``fn(*args)`` in a new process; its result (picklable), or :class:`ApartError` with
    the message of what it raised. ``fn`` must be a module-level function of passagelog.
    Blocks: call it from a worker thread."""
    request = pickle.dumps((fn, args), protocol=pickle.HIGHEST_PROTOCOL)
    with _lock:
        proc = subprocess.Popen([sys.executable, "-c", _SERVE], stdin=subprocess.PIPE,
                                stdout=subprocess.PIPE, stderr=subprocess.PIPE)
        _running.add(proc)
    try:
        out, err = proc.communicate(request)
    finally:
        with _lock:
            _running.discard(proc)
    try:
        ok, value = pickle.loads(out)
    except Exception:  # noqa: BLE001 - no answer: say how the process ended
        lines = err.decode("utf-8", "replace").strip().splitlines()
        why = f": {lines[-1]}" if lines else ""
        raise ApartError(f"the work stopped before it was done (its process ended with code "
                         f"{proc.returncode}){why}") from None
    if ok:
        return value
    raise ApartError(value)


def stop_all() -> None:
    """End every process :func:`call_apart` is waiting on (their callers get ApartError)."""
    with _lock:
        running = list(_running)
    for proc in running:
        if proc.poll() is None:
            proc.kill()
