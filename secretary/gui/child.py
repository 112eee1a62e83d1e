"""The background process that runs the window's long jobs: ``python -m secretary.gui.child``.

Why a process and not only a thread: Python runs one thread at a time, and a
large league's update spends long stretches in code that never lets the
window's thread in (full garbage collections, whole-sheet regular expressions,
the spreadsheet library's sorts) - measured freezes of up to 1.8 s on a
100,000-row league.  A separate process never blocks the window.

Protocol, both ways pickled and length-prefixed: the window sends
``("job", name, args)`` or ``("cancel",)``; this process answers
``("progress", stage, fraction)`` then ``("done", result)`` (its long tuples
sent ahead as ``("piece", field, items)``: ``worker.send_result``) or
``("failed", Failure)`` (its problems sent ahead the same way).  Closing its input ends it.
"""
from __future__ import annotations

import os
import queue
import sys
import threading

from secretary.gui.jobs import JOBS
from secretary.gui.worker import failure_of, receive, send, send_result
from secretary.threads import limit_native_threads


def main() -> int:
    limit_native_threads()
    # The protocol owns the real standard output; anything printed by a library goes to stderr instead.
    out = os.fdopen(os.dup(sys.stdout.fileno()), "wb")
    os.dup2(sys.stderr.fileno(), sys.stdout.fileno())
    requests: queue.Queue = queue.Queue()
    cancel = threading.Event()

    def listen() -> None:
        while True:
            message = receive(sys.stdin.buffer)
            if message is None:
                requests.put(None)
                return
            if message[0] == "cancel":
                cancel.set()
            else:
                cancel.clear()  # here, in message order, so that a cancel sent right after its job counts
                requests.put(message)

    threading.Thread(target=listen, daemon=True).start()
    while True:
        request = requests.get()
        if request is None:
            return 0
        _, name, args = request
        try:
            result = JOBS[name](*args, lambda stage, fraction: send(out, ("progress", stage, fraction)), cancel)
        except BaseException as exc:  # every failure goes back to the window in plain words
            send_result(out, failure_of(exc, f"window: {name}"), "failed")
        else:
            send_result(out, result)


if __name__ == "__main__":
    sys.exit(main())
