"""The progress of a run on standard error: a bar on a terminal, log lines otherwise."""

from __future__ import annotations

import sys
import time

__all__ = ["Progress", "Quiet"]


class Progress:
    """A progress line on standard error: a bar with count, rate and ETA on a
    terminal, plain log lines otherwise.

    Parameters
    ----------
    total : int
        Parts in the run.
    stream : file, optional
        Where to write (standard error by default).
    tty : bool, optional
        Draw a bar (default: whether `stream` is a terminal).
    interval : float
        Seconds between plain log lines (bar redraws are 10 per second).
    label : str
        The command the log lines name.
    """

    def __init__(self, total: int, stream=None, tty: bool | None = None, interval: float = 5.0,
                 label: str = "zfit batch"):
        self.label = label
        self.total = int(total)
        self.stream = sys.stderr if stream is None else stream
        self.tty = bool(getattr(self.stream, "isatty", lambda: False)()) if tty is None else tty
        self.interval = interval
        self.done = 0
        self.skipped = 0
        self.errors = 0
        self.t0 = time.monotonic()
        self._last = -1e9
        self._drawn = False

    def _status(self) -> str:
        elapsed = time.monotonic() - self.t0
        # Parts reused from an earlier run take no time: they do not count in the rate.
        rate = (self.done - self.skipped) / elapsed if elapsed > 0 else 0.0
        left = self.total - self.done
        eta = left / rate if rate > 0 else None
        eta_text = "--:--" if eta is None else time.strftime("%H:%M:%S" if eta >= 3600 else "%M:%S", time.gmtime(eta))
        err = f", {self.errors} error" if self.errors else ""
        return f"{self.done}/{self.total} parts, {rate:.1f}/s, ETA {eta_text}{err}"

    def _write(self, text: str):
        try:
            self.stream.write(text)
            self.stream.flush()
        except (OSError, ValueError):
            pass

    def update(self, n: int = 1, errors: int = 0, force: bool = False):
        """Count `n` more parts done (`errors` of them bad) and redraw when due.

        Parameters
        ----------
        n : int
            Parts finished since the last call.
        errors : int
            How many of them failed to give a result.
        force : bool
            Redraw now, whatever the interval.
        """
        self.done += n
        self.errors += errors
        now = time.monotonic()
        if self.tty:
            if force or now - self._last >= 0.1 or self.done == self.total:
                self._last = now
                width = 28
                filled = int(round(width * self.done / self.total)) if self.total else width
                pct = 100.0 * self.done / self.total if self.total else 100.0
                self._write(f"\r[{'#' * filled}{'.' * (width - filled)}] {pct:3.0f}% {self._status()}\x1b[K")
                self._drawn = True
        elif force or now - self._last >= self.interval or self.done == self.total:
            self._last = now
            self._write(f"{self.label}: {self._status()}\n")

    def skip(self, n: int):
        """Count `n` parts whose earlier result is reused.

        Parameters
        ----------
        n : int
            How many.
        """
        self.skipped += n
        self.update(n)

    def message(self, text: str):
        """Print a line (a bad part, say) without breaking the bar.

        Parameters
        ----------
        text : str
            The line.
        """
        if self.tty and self._drawn:
            self._write("\r\x1b[K" + text + "\n")
            self._last = -1e9
            self.update(0)
        else:
            self._write(text + "\n")

    def close(self):
        """Finish the bar's line."""
        if self.tty and self._drawn:
            self._write("\n")
            self._drawn = False


class Quiet:
    """No progress display (the same methods as `Progress`, doing nothing)."""

    def update(self, n=1, errors=0, force=False):
        pass

    def skip(self, n):
        pass

    def message(self, text):
        pass

    def close(self):
        pass
