"""Benchmark conditions: the machine as it is, and with one core kept busy by another program.

``conditions()`` yields ("idle", None) and then ("one core busy", process): a
second Python process spinning ``while True: pass`` pinned to the last core,
started before and killed after the measurements of that condition.  "idle"
means no extra load from the benchmark itself; the machine may still be shared.
"""
from __future__ import annotations

import contextlib
import os
import statistics
import subprocess
import sys
import time

SPIN = "while True: pass"


@contextlib.contextmanager
def one_core_busy():
    """Another CPU-bound program on the last core for the length of the block."""
    cores = sorted(os.sched_getaffinity(0))
    last = cores[-1]

    def pin():
        os.sched_setaffinity(0, {last})

    spinner = subprocess.Popen([sys.executable, "-c", SPIN], preexec_fn=pin)
    time.sleep(0.2)  # let it reach full speed
    try:
        yield spinner
    finally:
        spinner.kill()
        spinner.wait()


def timed(fn, repeat: int):
    """(median seconds of ``repeat`` calls of ``fn``, the last call's answer)."""
    times, out = [], None
    for _ in range(repeat):
        start = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times), out


def conditions(which=("idle", "busy")):
    """Yield each condition's label while it holds."""
    for name in which:
        if name == "idle":
            yield "idle"
        else:
            with one_core_busy():
                yield "one core busy"


def add_argument(parser) -> None:
    """The common --conditions option."""
    parser.add_argument("--conditions", nargs="+", choices=["idle", "busy"], default=["idle", "busy"],
                        help="run idle, with one core kept busy by another program, or both (default)")
