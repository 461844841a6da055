"""Worker processes that end when their parent ends, even when it is killed with SIGKILL.

A process pool's workers wait on a pipe whose other end they hold themselves, so they outlive
a killed parent for minutes. :func:`watch_parent` is the pools' initializer.
"""

from __future__ import annotations

import os
import signal
import sys
import threading
import time


def watch_parent(parent_pid: int, interval_s: float = 0.5) -> None:
    """Pool initializer: the worker exits when its parent is gone (even after SIGKILL).

    A daemon thread polls the parent's process id; when the worker has been re-parented (the
    parent died), it ends the worker at once with ``os._exit(1)``. On Linux the kernel is also
    asked to send SIGKILL when the parent dies (``prctl(PR_SET_PDEATHSIG)``). SIGTERM gets its
    default action back (the parent's handler would keep a worker alive that its broken pool
    is stopping), and SIGINT is ignored (the parent handles Ctrl-C for the whole group).

    Parameters
    ----------
    parent_pid : int
        The process id of the parent that made the pool (``os.getpid()`` there).
    interval_s : float, optional
        Polling interval [s] (default 0.5).
    """
    # A pool that breaks stops its workers with SIGTERM; the parent's handler, inherited
    # through fork, would turn that into KeyboardInterrupt in a worker blocked on writing its
    # result, and the parent would wait for it for ever.
    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGTERM, signal.SIG_DFL)
        # Ctrl-C reaches the whole process group: only the parent acts on it (it cancels
        # the work and stops its workers); a worker interrupted while it holds its pool's
        # queue lock left the others, and the parent, waiting for ever
        signal.signal(signal.SIGINT, signal.SIG_IGN)
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(1, signal.SIGKILL, 0, 0, 0)  # 1 = PR_SET_PDEATHSIG
        except (OSError, AttributeError):
            pass
    if os.getppid() != parent_pid:  # died before this worker started
        os._exit(1)

    def watch() -> None:
        while True:
            time.sleep(interval_s)
            if os.getppid() != parent_pid:
                os._exit(1)

    threading.Thread(target=watch, name="watch-parent", daemon=True).start()


def stop_pool(pool) -> None:
    """Stop a process pool at once: queued jobs cancelled, its workers ended (SIGTERM, which
    :func:`watch_parent` gave its default action), without waiting for running jobs.

    Parameters
    ----------
    pool : concurrent.futures.ProcessPoolExecutor
        A pool whose work is no longer wanted (the command was interrupted or failed).
    """
    processes = list(getattr(pool, "_processes", None) or {})  # the pool's own workers
    pool.shutdown(wait=False, cancel_futures=True)
    for pid in processes:
        try:
            os.kill(pid, signal.SIGTERM)
        except (ProcessLookupError, PermissionError):
            pass

