"""Stopping a batch run cleanly: while a run is on, Ctrl-C and SIGTERM only ask it to stop, and
the run stops between two records, so no write is cut short."""

from __future__ import annotations

import signal
import threading


class Stopped(Exception):
    """A stop was asked for (raised by ``StopSignals.check`` between two records)."""


class StopSignals:
    """While a run is on, SIGINT (Ctrl-C) and SIGTERM only ask it to stop; the run stops
    between two records, so no write is cut short. A second Ctrl-C stops at once (a torn
    line is then cut away by the next run)."""

    def __init__(self):
        self.requested = False
        self._previous: dict = {}

    def __enter__(self):
        if threading.current_thread() is threading.main_thread():
            for sig in (signal.SIGINT, signal.SIGTERM):
                self._previous[sig] = signal.signal(sig, self._handle)
        return self

    def __exit__(self, *exc):
        for sig, handler in self._previous.items():
            signal.signal(sig, handler)
        self._previous.clear()

    def _handle(self, signum, _frame):
        if self.requested and signum == signal.SIGINT:
            raise KeyboardInterrupt
        self.requested = True

    def check(self) -> None:
        if self.requested:
            raise Stopped()
