"""One thread per native maths library, for the command line, the window's background process and the API.

numpy's and scipy's BLAS (OpenBLAS) start one busy-waiting thread per core.
The engine's work is sparse and small-block, so those threads gain little even
on an idle machine; on a laptop where another program keeps a core busy they
fight it for the core and everything slows down many times (a `tune` on a
13.7k-match season: 509 s with the default threads, 60 s with one).  So every
entry point limits them to one, with threadpoolctl, which also covers the
libraries loaded before the limit was set.
"""
from __future__ import annotations

import contextlib
import os

NATIVE_THREADS = 1
_VARIABLES = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


def limit_native_threads() -> None:
    """Limit every loaded (and, through the environment, every later) native thread pool, for good."""
    for name in _VARIABLES:  # for libraries loaded later and for processes started from here
        os.environ.setdefault(name, str(NATIVE_THREADS))
    _load_maths()
    from threadpoolctl import threadpool_limits

    threadpool_limits(limits=NATIVE_THREADS)


@contextlib.contextmanager
def native_threads_limited():
    """The same limit for the length of a ``with`` block (the API: the caller's process is not ours)."""
    _load_maths()
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=NATIVE_THREADS):
        yield


def _load_maths() -> None:
    """Load scipy's own BLAS too, so that the limit reaches it (its wheels bundle a second OpenBLAS)."""
    import scipy.linalg  # noqa: F401
    import scipy.sparse.linalg  # noqa: F401
