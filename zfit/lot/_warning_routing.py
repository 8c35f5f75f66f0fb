"""Measurement warnings routed to the part whose thread raised them.

Dask workers run several parts at once in threads, and
`warnings.catch_warnings` is not thread-safe (it swaps process-wide state):
instead, `warnings.showwarning` is replaced once by a router that appends a
warning to the list of the part running in the current thread.
"""

from __future__ import annotations

import threading
import warnings

__all__ = ["route_warnings", "collect_warnings"]

_sink = threading.local()
_route_lock = threading.Lock()


def _route(message, category, filename, lineno, file=None, line=None):
    parts = getattr(_sink, "parts", None)
    if parts is not None:
        parts.append(str(message))
    else:
        _route.fallback(message, category, filename, lineno, file, line)


_route.fallback = warnings.showwarning


def route_warnings() -> None:
    """Install the router (once per process) and let every warning through to it."""
    with _route_lock:
        if warnings.showwarning is not _route:
            _route.fallback = warnings.showwarning
            warnings.showwarning = _route
        first = warnings.filters[0] if warnings.filters else None
        if first is None or first[0] != "always" or first[2] is not Warning or first[1] is not None:
            warnings.simplefilter("always", Warning)


class collect_warnings:
    """Collect the warnings raised in this thread into a list (a context manager).

    The router keeps the list per thread, so parts identified at once in
    threads of one process never see each other's warnings.
    """

    def __enter__(self) -> list:
        route_warnings()
        self.caught: list[str] = []
        _sink.parts = self.caught
        return self.caught

    def __exit__(self, *exc) -> None:
        _sink.parts = None
